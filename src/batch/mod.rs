//! Batches: many layers, files or folders, cut into one output folder, with
//! a settings file, a manifest, and reruns that skip what did not change.
//!
//! [`plan`] turns a [`Request`] into [`Job`]s: a file given directly is one
//! job, written relative to the deepest folder common to all the files
//! given directly (files of one folder: flat, as `OUT/<stem>.*`;
//! `a/x/l.png` and `a/y/l.png`: `OUT/x/l.*` and `OUT/y/l.*`); a folder is
//! walked ([`walk`]) for
//! `*.png` and its layers are written with the folder's layout mirrored
//! (`in/town/houses.png` → `OUT/town/houses.mesh.json`). Each job's settings
//! are, lowest to highest: the built-in defaults, the settings file's
//! `defaults`, its matching `layers` entries in order ([`settings_file`]),
//! then the options given explicitly on the command line. [`run()`] cuts the
//! jobs on a pool of threads and returns a [`BatchReport`].
//!
//! Invariants:
//! - the output folder is never an input folder; inside one it is skipped
//!   by the walk; two jobs never write the same outputs (the later fails);
//! - an input that gives no layer (a folder without PNG files, or whose
//!   PNG files the patterns all leave out) is an error of the plan
//!   ([`Plan::empty`]), naming it;
//! - each layer's outputs are written together ([`crate::io::OutputFolder::commit`]), and its
//!   manifest entry ([`manifest`]) is recorded only after they are all in
//!   place; the manifest is written atomically after each finished layer
//!   (at most once a second) and at the end, keeping the entries of layers
//!   not in this run;
//! - a layer is skipped ("unchanged") when its input's hash, its effective
//!   settings and the underdraw version equal its entry's and every output
//!   recorded is there with its recorded hash;
//! - a bad file or a panic fails that layer only;
//! - one run at a time writes an output folder ([`lock`]): another waits
//!   for it or refuses, writing nothing;
//! - the same inputs and settings give the same output bytes (manifest
//!   included) whatever the number of threads: layers are cut
//!   deterministically and reported in plan order.
//!
//! ```
//! use underdraw::batch::{plan, run, Outputs, Request, RunOptions, Status};
//! let dir = std::env::temp_dir().join(format!("underdraw-doc-batch-{}", std::process::id()));
//! std::fs::create_dir_all(dir.join("in/ui")).unwrap();
//! let square = image::RgbaImage::from_pixel(8, 8, image::Rgba([9, 9, 9, 255]));
//! square.save(dir.join("in/ui/square.png")).unwrap();
//! let request = Request {
//!     inputs: vec![dir.join("in")],
//!     out: dir.join("out"),
//!     outputs: Outputs { json: true, ..Default::default() },
//!     ..Default::default()
//! };
//! let jobs = plan(&request).unwrap();
//! assert_eq!(jobs.jobs[0].key, "ui/square");
//! let first = run(&jobs, &RunOptions::default(), &|_| {}).unwrap();
//! assert_eq!(first.count(Status::Cut), 1);
//! assert!(dir.join("out/ui/square.mesh.json").is_file());
//! // nothing changed: the rerun skips it
//! let again = run(&jobs, &RunOptions::default(), &|_| {}).unwrap();
//! assert_eq!(again.count(Status::Unchanged), 1);
//! std::fs::remove_dir_all(&dir).unwrap();
//! ```

#![warn(missing_docs)]

pub mod layer;
pub mod lock;
pub mod manifest;
pub mod run;
pub mod settings_file;
pub mod walk;

pub use layer::catch_layer;
pub use run::{prepare_out, run, BatchReport, LayerReport, RunOptions, Status};
use serde::{Deserialize, Serialize};
use settings_file::SettingsFile;

use crate::error::{FileError, Setting};
use crate::settings::{CutSettings, PartialSettings};
use std::collections::HashMap;
use std::path::{Path, PathBuf};

/// What to write per layer.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct Outputs {
    /// `<stem>.mesh.json`.
    pub json: bool,
    /// `<stem>.gltf` + `<stem>.bin`.
    pub gltf: bool,
    /// `<stem>.glb`.
    pub glb: bool,
    /// `<stem>.preview.png`.
    pub preview: bool,
    /// How the glTF assets store their vertices (recorded only when not
    /// the default, so manifests of f32 runs keep their bytes).
    #[serde(default, skip_serializing_if = "is_f32")]
    pub vertex_format: crate::mesh::VertexFormat,
}

fn is_f32(f: &crate::mesh::VertexFormat) -> bool {
    *f == crate::mesh::VertexFormat::F32
}

/// A batch as asked for.
#[derive(Clone, Debug, Default)]
pub struct Request {
    /// PNG files and folders.
    pub inputs: Vec<PathBuf>,
    /// The output folder.
    pub out: PathBuf,
    /// Patterns of the folders' layers to take (all when empty).
    pub include: Vec<String>,
    /// Patterns of the folders' layers to leave out.
    pub exclude: Vec<String>,
    /// A settings file for every input, instead of each folder's own
    /// [`settings_file::FILE_NAME`].
    pub settings_file: Option<PathBuf>,
    /// The built-in defaults.
    pub base: CutSettings,
    /// The settings given explicitly on the command line.
    pub overrides: PartialSettings,
    /// What to write.
    pub outputs: Outputs,
    /// The shipped texture (KTX 2.0 or `.astc`) of the one layer given: the
    /// layer is cut so the meshes hold for both ([`crate::cut::cut_sampled`]).
    pub texture: Option<PathBuf>,
}

/// One layer to cut.
#[derive(Clone, Debug)]
pub struct Job {
    /// The layer's path, as given or as found in its folder.
    pub input: PathBuf,
    /// Its path relative to its input folder (a file given directly: its
    /// name), with `/`.
    pub relative: String,
    /// Its outputs' path in the output folder without extension (`town/houses`).
    pub key: String,
    /// Its outputs' file stem.
    pub stem: String,
    /// Its effective settings.
    pub settings: CutSettings,
    /// The settings file that applied, if any.
    pub settings_file: Option<PathBuf>,
    /// An earlier job of the plan with the same outputs: this one fails.
    pub clash: Option<PathBuf>,
    /// The shipped texture the layer is also cut against, if any.
    pub texture: Option<PathBuf>,
}

/// The jobs of a batch.
#[derive(Clone, Debug)]
pub struct Plan {
    /// The output folder.
    pub out: PathBuf,
    /// What to write per layer.
    pub outputs: Outputs,
    /// The layers, in order: inputs as given, each folder's in sorted order.
    pub jobs: Vec<Job>,
    /// One error per input that gave no layer, in the order given: a
    /// folder with no PNG file, or none that `--include`/`--exclude` take.
    /// The caller reports them as failures (the run is not a success).
    pub empty: Vec<FileError>,
}

/// `p` made absolute, with `.` and `..` resolved by name (links are not
/// followed), so a layout derived from it never climbs out of a folder.
fn lexical(p: &Path) -> Option<PathBuf> {
    use std::path::Component;
    let mut out = PathBuf::new();
    for c in std::path::absolute(p).ok()?.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                out.pop();
            }
            c => out.push(c.as_os_str()),
        }
    }
    Some(out)
}

/// The deepest folder holding all of `files` (made absolute, `.` and `..`
/// resolved by name, links not followed), or `None` when they share none
/// (other drives).
pub fn common_folder(files: &[&Path]) -> Option<PathBuf> {
    let mut common: Option<PathBuf> = None;
    for f in files {
        let abs = lexical(f)?;
        let parent = abs.parent()?.to_path_buf();
        common = Some(match common {
            None => parent,
            Some(c) => {
                let mut shared = PathBuf::new();
                for (a, b) in c.components().zip(parent.components()) {
                    if a != b {
                        break;
                    }
                    shared.push(a.as_os_str());
                }
                if shared.as_os_str().is_empty() {
                    return None;
                }
                shared
            }
        });
    }
    common
}

/// The error for an input folder that gave no layer: `pngs` PNG files were
/// found in it before the patterns chose.
fn empty_input(input: &Path, pngs: usize, req: &Request) -> FileError {
    let named_png = input
        .extension()
        .is_some_and(|x| x.to_string_lossy().eq_ignore_ascii_case("png"));
    let what = if named_png {
        "is a folder (its name ends in .png, but it is no PNG file)"
    } else {
        "is a folder"
    };
    let patterns = |setting: Setting, ps: &[String]| {
        ps.iter()
            .map(|p| setting.given(format!("'{p}'")))
            .collect::<Vec<_>>()
            .join(" ")
    };
    if pngs == 0 {
        FileError::new(
            input,
            format!("{what} with no layer: no *.png file in it or in its subfolders (any case of the extension)"),
            "check the path; give the folder that holds the PNG layers, or the PNG files themselves",
        )
    } else {
        let mut tried = patterns(Setting::Include, &req.include);
        let ex = patterns(Setting::Exclude, &req.exclude);
        if !ex.is_empty() {
            if !tried.is_empty() {
                tried.push(' ');
            }
            tried.push_str(&ex);
        }
        FileError::new(
            input,
            format!("{what} with {pngs} PNG file(s), but the patterns took none of them ({tried})"),
            format!("patterns match the path relative to this folder with `/`: `*` stays within a folder name, `**` crosses folders ({}); check the patterns or leave them out", Setting::Include.given("'**/sky*.png'")),
        )
    }
}

fn canonical(p: &Path) -> Option<PathBuf> {
    p.canonicalize().ok()
}

/// Finds the layers of `req` and their settings. Errors (nothing is cut):
/// the output folder is an input folder, a settings file or a pattern is
/// bad, a folder cannot be read.
pub fn plan(req: &Request) -> Result<Plan, FileError> {
    let out_canon = canonical(&req.out);
    let compile = |ps: &[String],
                   setting: Setting|
     -> Result<Vec<globset::GlobMatcher>, FileError> {
        ps.iter()
                .map(|p| {
                    settings_file::pattern(p).map_err(|e| {
                        FileError::new(
                            Path::new(&setting.to_string()),
                            e.to_string(),
                            "a pattern matches the path relative to the input folder with `/`: `*` stays within a folder name, `**` crosses folders (see the README, Batches)",
                        )
                    })
                })
                .collect()
    };
    let filter = walk::Filter {
        include: compile(&req.include, Setting::Include)?,
        exclude: compile(&req.exclude, Setting::Exclude)?,
    };
    let given = req
        .settings_file
        .as_deref()
        .map(SettingsFile::load)
        .transpose()?;
    let direct: Vec<&Path> = req
        .inputs
        .iter()
        .filter(|i| !i.is_dir())
        .map(PathBuf::as_path)
        .collect();
    let common = common_folder(&direct);
    let mut jobs = Vec::new();
    let mut empty = Vec::new();
    for input in &req.inputs {
        if !input.is_dir() {
            let name = input.file_name().map(|s| s.to_string_lossy().into_owned());
            let relative = name.clone().unwrap_or_else(|| input.display().to_string());
            let stem = input
                .file_stem()
                .map(|s| s.to_string_lossy().into_owned())
                .unwrap_or_else(|| "layer".into());
            // the folders below the common one, mirrored (none: flat)
            let sub = common
                .as_deref()
                .zip(lexical(input))
                .and_then(|(c, abs)| {
                    abs.parent()
                        .and_then(|p| p.strip_prefix(c).ok())
                        .map(|p| walk::relative(Path::new(""), p))
                })
                .unwrap_or_default();
            let key = if sub.is_empty() {
                stem.clone()
            } else {
                format!("{sub}/{stem}")
            };
            jobs.push(job(
                req,
                given.as_ref(),
                input.clone(),
                relative,
                stem,
                key,
            )?);
            continue;
        }
        if out_canon.is_some() && canonical(input) == out_canon {
            return Err(FileError::new(
                &req.out,
                "is an input folder: the outputs would be mixed with the layers",
                format!("choose another {} folder (a folder inside the input is fine: the walk skips it)", Setting::Out),
            ));
        }
        let own = input.join(settings_file::FILE_NAME);
        let found = match &given {
            Some(_) => None,
            None if own.is_file() => Some(SettingsFile::load(&own)?),
            None => None,
        };
        let file = given.as_ref().or(found.as_ref());
        let (paths, pngs) = walk::walk_counted(input, &filter, out_canon.as_deref())?;
        if paths.is_empty() {
            empty.push(empty_input(input, pngs, req));
        }
        for path in paths {
            let relative = walk::relative(input, &path);
            let stem = path
                .file_stem()
                .map(|s| s.to_string_lossy().into_owned())
                .unwrap_or_default();
            let key = match relative.rfind('/') {
                Some(i) => format!("{}/{stem}", &relative[..i]),
                None => stem.clone(),
            };
            jobs.push(job(req, file, path, relative, stem, key)?);
        }
    }
    if let Some(texture) = &req.texture {
        if jobs.len() != 1 {
            return Err(FileError::new(
                texture,
                format!(
                    "is one texture, but {} layers were given to cut against it",
                    jobs.len()
                ),
                format!("give {} with exactly one PNG layer", Setting::Texture),
            ));
        }
        jobs[0].texture = Some(texture.clone());
    }
    // two layers with one output path: the later ones fail
    let mut seen: HashMap<String, PathBuf> = HashMap::new();
    for j in &mut jobs {
        match seen.get(&j.key) {
            Some(first) => j.clash = Some(first.clone()),
            None => {
                seen.insert(j.key.clone(), j.input.clone());
            }
        }
    }
    Ok(Plan {
        out: req.out.clone(),
        outputs: req.outputs,
        jobs,
        empty,
    })
}

fn job(
    req: &Request,
    file: Option<&SettingsFile>,
    input: PathBuf,
    relative: String,
    stem: String,
    key: String,
) -> Result<Job, FileError> {
    let mut settings = req.base;
    if let Some(f) = file {
        f.apply(&relative, &mut settings);
    }
    req.overrides.apply(&mut settings);
    if let Err(e) = settings.validate() {
        let (at, hint) = match file {
            Some(f) => (
                f.path.clone(),
                format!("fix the settings for {relative} in this file"),
            ),
            None => (input.clone(), "fix the options".to_string()),
        };
        return Err(FileError::new(&at, format!("for {relative}: {e}"), hint));
    }
    Ok(Job {
        input,
        relative,
        key,
        stem,
        settings,
        settings_file: file.map(|f| f.path.clone()),
        clash: None,
        texture: None,
    })
}
