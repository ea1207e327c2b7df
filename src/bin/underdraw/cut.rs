//! `underdraw cut`: layers in, mesh files and glTF assets out.

use crate::{bar, error, same_file, CutOptions, Print};
use clap::{Args, ValueEnum};
use rayon::prelude::*;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use underdraw::cut::cut_layer;
use underdraw::error::FileError;
use underdraw::export::gltf::{glb_path, gltf_paths, relative_uri, write_glb, write_gltf};
use underdraw::io::{load_alpha, write_atomic};
use underdraw::settings::CutSettings;

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum FormatArg {
    /// `<stem>.mesh.json`, underdraw's own mesh file (what `check` reads).
    Json,
    /// A glTF 2.0 asset: `<stem>.gltf` + `<stem>.bin` (or `<stem>.glb` with `--glb`).
    Gltf,
    /// Both the mesh file and the glTF asset.
    All,
}

#[derive(Args)]
pub(crate) struct CutArgs {
    /// PNG layers to cut (RGBA; images without alpha count as fully opaque).
    #[arg(required = true)]
    images: Vec<PathBuf>,
    /// Folder for the output files (created if missing).
    #[arg(long, short)]
    out: PathBuf,
    /// What to write per layer. `gltf`: a glTF 2.0 asset for an engine, one
    /// mesh with two primitives over one vertex array: the opaque one with
    /// alphaMode OPAQUE (draw with blending off), the blended one with BLEND;
    /// the PNG as base colour texture by a URI relative to the output folder,
    /// with a sampler for --filter, --mip-levels and --wrap; positions in
    /// texels, glTF's y up: (x, y) becomes (x, -y, 0), triangles wound
    /// counter-clockwise.
    #[arg(long, value_enum, default_value = "json")]
    format: FormatArg,
    /// Write the glTF asset as one binary `<stem>.glb` (JSON and buffer in
    /// one file; the PNG stays outside it, by URI) instead of `<stem>.gltf`
    /// + `<stem>.bin`. Needs `--format gltf` or `all`.
    #[arg(long)]
    glb: bool,
    /// Also write `<OUT>/<stem>.preview.png`: the layer over a checkerboard
    /// with the opaque mesh tinted blue and the blended one orange, their
    /// edges, the regions' outlines dotted, and a caption (B budget, V
    /// vertices, C opaque capture, E excess); at most 1024 pixels wide.
    #[arg(long)]
    preview: bool,
    /// Most vertices per layer, both meshes together (a vertex they share
    /// counts once). At least 4.
    #[arg(long, default_value_t = 64, value_parser = clap::value_parser!(u32).range(4..))]
    budget: u32,
    #[command(flatten)]
    options: CutOptions,
}

impl CutArgs {
    fn settings(&self) -> CutSettings {
        self.options.settings(self.budget as usize)
    }
}

/// Widest preview `cut --preview` writes, pixels.
const PREVIEW_WIDTH: u32 = 1024;

/// What `cut` writes for each layer.
#[derive(Clone, Copy)]
struct Outputs {
    json: bool,
    gltf: bool,
    glb: bool,
    preview: bool,
}

impl Outputs {
    fn of(args: &CutArgs) -> Outputs {
        let gltf = args.format != FormatArg::Json;
        Outputs {
            json: args.format != FormatArg::Gltf,
            gltf: gltf && !args.glb,
            glb: gltf && args.glb,
            preview: args.preview,
        }
    }
    /// The files written for `stem` in `out`.
    fn paths(&self, out: &Path, stem: &str) -> Vec<PathBuf> {
        let mut v = Vec::new();
        if self.json {
            v.push(out.join(format!("{stem}.mesh.json")));
        }
        if self.gltf {
            v.extend(gltf_paths(out, stem));
        }
        if self.glb {
            v.push(glb_path(out, stem));
        }
        if self.preview {
            v.push(out.join(format!("{stem}.preview.png")));
        }
        v
    }
}

struct LayerLine {
    name: String,
    vertices: usize,
    capture: f64,
    excess: f64,
    must_cover: f64,
    notes: Vec<String>,
    /// The files written.
    outputs: Vec<String>,
}

pub(crate) fn cut(args: &CutArgs, print: Print) -> ExitCode {
    let settings = args.settings();
    if let Err(e) = settings.validate() {
        error(&e);
        return ExitCode::from(2);
    }
    if args.glb && args.format == FormatArg::Json {
        error("--glb chooses how the glTF asset is written, but --format json writes none\n  hint: add --format gltf (the .glb alone) or --format all (the mesh file and the .glb)");
        return ExitCode::from(2);
    }
    let outputs = Outputs::of(args);
    if let Err(e) = std::fs::create_dir_all(&args.out) {
        error(format!(
            "{}: the output folder cannot be created ({e})\n  hint: choose a writable --out folder",
            args.out.display()
        ));
        return ExitCode::from(2);
    }
    // two layers with one stem would write one mesh file: refuse the later ones
    let mut seen = std::collections::HashMap::new();
    let clash: Vec<Option<PathBuf>> = args
        .images
        .iter()
        .map(|p| {
            let stem = p.file_stem().map(|s| s.to_os_string()).unwrap_or_default();
            match seen.get(&stem) {
                Some(first) => Some(PathBuf::clone(first)),
                None => {
                    seen.insert(stem, p.clone());
                    None
                }
            }
        })
        .collect();
    // a bar only for a batch
    let progress = if args.images.len() > 1 {
        bar(print, args.images.len(), "layers cut")
    } else {
        indicatif::ProgressBar::hidden()
    };
    let results: Vec<Result<LayerLine, FileError>> = args
        .images
        .par_iter()
        .zip(clash.par_iter())
        .map(|(path, clash)| match clash {
            Some(first) => Err(FileError::new(
                path,
                format!(
                    "has the same name as {} and would overwrite its output files",
                    first.display()
                ),
                "rename one of them, or cut them into separate --out folders",
            )),
            None => cut_one(path, &args.out, &settings, outputs),
        })
        .inspect(|_| progress.inc(1))
        .collect();
    progress.finish_and_clear();
    if print.text() {
        println!(
            "{:<28} {:>8} {:>9} {:>12}",
            "layer", "vertices", "capture", "excess"
        );
    }
    let (mut ok, mut vertices, mut failures) = (0usize, 0usize, Vec::new());
    let mut objects = Vec::new();
    for r in results {
        match r {
            Ok(l) if !print.text() => {
                objects.push(serde_json::json!({
                    "layer": l.name,
                    "vertices": l.vertices,
                    "opaque_capture": l.capture,
                    "excess": l.excess,
                    "notes": l.notes,
                    "outputs": l.outputs,
                }));
                ok += 1;
                vertices += l.vertices;
            }
            Ok(l) => {
                println!(
                    "{:<28} {:>8} {:>8.1}% {:>8.0} tx ({:.1}%)",
                    l.name,
                    l.vertices,
                    100.0 * l.capture,
                    l.excess,
                    if l.must_cover > 0.0 {
                        100.0 * l.excess / l.must_cover
                    } else {
                        0.0
                    }
                );
                for n in &l.notes {
                    println!("  note: {n}");
                }
                ok += 1;
                vertices += l.vertices;
            }
            Err(e) => failures.push(e),
        }
    }
    if print.json {
        println!(
            "{}",
            serde_json::to_string_pretty(&objects).expect("plain values serialize")
        );
    } else if print.text() {
        println!("total: {ok} layers, {vertices} vertices");
    }
    if failures.is_empty() {
        return ExitCode::SUCCESS;
    }
    eprintln!("{} of {} layers failed:", failures.len(), args.images.len());
    for e in &failures {
        error(&e);
    }
    ExitCode::from(2)
}

fn cut_one(
    path: &Path,
    out: &Path,
    settings: &CutSettings,
    outputs: Outputs,
) -> Result<LayerLine, FileError> {
    let map = load_alpha(path)?;
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "layer".into());
    let name = path
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    if outputs.paths(out, &stem).iter().any(|d| same_file(d, path)) {
        return Err(FileError::new(
            path,
            "would be overwritten by its own output file",
            "choose another --out folder",
        ));
    }
    let outcome = cut_layer(&map, &name, settings);
    if outputs.json {
        let json = serde_json::to_vec_pretty(&outcome.mesh).expect("a mesh serializes");
        write_atomic(&out.join(format!("{stem}.mesh.json")), &json)?;
    }
    if outputs.gltf || outputs.glb {
        // the PNG by a URI relative to the folder of the .gltf / .glb
        let uri = relative_uri(out, path).ok_or_else(|| {
            FileError::new(
                path,
                format!(
                    "has no path relative to the output folder {} for the glTF image URI",
                    out.display()
                ),
                "put the --out folder on the same drive as the layers",
            )
        })?;
        if outputs.gltf {
            write_gltf(&outcome.mesh, &uri, out, &stem)?;
        }
        if outputs.glb {
            write_glb(&outcome.mesh, &uri, out, &stem)?;
        }
    }
    if outputs.preview {
        let rgba = image::open(path)
            .map_err(|e| FileError::new(path, format!("cannot be read ({e})"), "check the file"))?
            .to_rgba8();
        let img = underdraw::preview::render_preview(&rgba, &outcome.mesh, PREVIEW_WIDTH);
        let dest = out.join(format!("{stem}.preview.png"));
        write_atomic(&dest, &underdraw::heatmap::rgba_png(img))?;
    }
    let s = &outcome.mesh.stats;
    let written = outputs
        .paths(out, &stem)
        .iter()
        .map(|p| p.display().to_string())
        .collect();
    Ok(LayerLine {
        name: path.display().to_string(),
        vertices: s.vertices,
        capture: s.opaque_capture(),
        excess: s.excess(),
        must_cover: s.must_cover_area,
        notes: outcome.notes,
        outputs: written,
    })
}
