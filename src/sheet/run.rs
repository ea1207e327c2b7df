//! A sheet's whole run: read the sheet and its regions (from a file, or
//! found and written to `OUT/<stem>.regions.json`), cut every region with
//! its settings, write `OUT/<stem>/<name>.mesh.json` (and glTF) per region.
//! Every file goes out through one [`OutputFolder`]: a region's files (its
//! mesh, its glTF asset, its frames' meshes with `--per-frame`) are
//! committed together, the found regions file is written through it too,
//! no input is ever written over, a file already holding its bytes is left
//! untouched, and every file is recorded ([`SheetReport::written`]).

use super::find::{find_regions, region_names};
use super::regions::{load_regions, parse_regions, RegionKind, RegionsFile, SheetRegion};
use super::shipped::{texture_sheet_refusals, ShippedSheet};
use super::{cut_region, RegionCut, RegionError, SheetAnalysis};
use crate::batch::manifest::{sha256_hex, LayerResult, OutputFile, RegionEntry, SheetEntry};
use crate::batch::settings_file::SettingsFile;
use crate::batch::Outputs;
use crate::error::{FileError, Setting};
use crate::export::gltf::{glb_file, gltf_files, relative_uri};
use crate::io::{ImageLimits, NamedBytes, OutputFolder};
use crate::mesh::LayerMesh;
use crate::settings::CutSettings;
use crate::settings::PartialSettings;
use rayon::prelude::*;
use std::path::{Path, PathBuf};

/// Where a sheet's regions come from.
#[derive(Clone, Debug)]
pub enum RegionSource {
    /// A regions file.
    File(PathBuf),
    /// Found from the alpha and written to `OUT/<stem>.regions.json`;
    /// `replace` allows replacing a different file already there.
    Find {
        /// Replace an existing regions file of other content.
        replace: bool,
    },
}

/// What to cut and write for one sheet.
#[derive(Clone, Debug)]
pub struct SheetRequest {
    /// The sheet (a PNG).
    pub sheet: PathBuf,
    /// Its regions.
    pub regions: RegionSource,
    /// The output folder.
    pub out: PathBuf,
    /// A settings file, its patterns matched against
    /// `<match_prefix><stem>/<name>`.
    pub settings_file: Option<PathBuf>,
    /// What comes before `<stem>/<name>` when the settings file's patterns
    /// are matched: the sheet's folder relative to the batch's input folder
    /// with a trailing `/` (empty for a sheet given directly).
    pub match_prefix: String,
    /// The settings before the file.
    pub base: CutSettings,
    /// Settings given explicitly (over the file's).
    pub overrides: PartialSettings,
    /// What to write per region; `preview`: one `OUT/<stem>.preview.png`
    /// of the whole sheet with every region's meshes ([`super::preview`]).
    pub outputs: Outputs,
    /// Also cut and write each frame of an animation alone.
    pub per_frame: bool,
    /// Largest sheet read.
    pub limits: ImageLimits,
    /// The compressed texture that ships for the sheet's PNG (KTX 2.0 or
    /// `.astc`): every region is cut safe where the PNG and the texture's
    /// own decoded levels (0..=`mip_levels`) all sample opaque, covering
    /// what any shows. A sheet that is itself such a texture is cut on its
    /// decoded levels alone.
    pub texture: Option<PathBuf>,
    /// The sheet's key in the output folder's manifest (the path of its
    /// outputs' folder, `ui/atlas`), for a sheet cut from a regions file;
    /// `None` runs it without the manifest (regions found every run).
    pub key: Option<String>,
}

/// One region's result.
#[derive(Clone, Debug)]
pub struct RegionResult {
    /// The region.
    pub region: SheetRegion,
    /// Its settings.
    pub settings: CutSettings,
    /// The cut's numbers, notes and warnings (the padding warnings among
    /// them), as a batch records a layer's, or why it failed.
    pub cut: Result<LayerResult, RegionError>,
    /// Files written (or already holding these bytes; for an unchanged
    /// sheet, the files recorded).
    pub outputs: Vec<PathBuf>,
}

/// What a sheet's run did.
#[derive(Clone, Debug)]
pub struct SheetReport {
    /// The sheet.
    pub sheet: PathBuf,
    /// Its stem, the outputs' folder name.
    pub stem: String,
    /// The regions file written by a run that found the regions.
    pub regions_written: Option<PathBuf>,
    /// Warnings about the sheet's file.
    pub warnings: Vec<String>,
    /// Per region, in the file's order.
    pub regions: Vec<RegionResult>,
    /// Every file written through the run's output folder, in order.
    pub written: Vec<PathBuf>,
    /// True when the manifest showed the sheet unchanged: nothing was cut
    /// or written, the regions' numbers are the recorded ones.
    pub unchanged: bool,
    /// The manifest entry to record, when the sheet has a key and every
    /// region was cut (or it was unchanged).
    pub entry: Option<SheetEntry>,
    /// The sheet's preview (`OUT/<stem>.preview.png`), when asked for.
    pub preview: Option<PathBuf>,
}

impl SheetReport {
    /// Regions that failed.
    pub fn failed(&self) -> usize {
        self.regions.iter().filter(|r| r.cut.is_err()).count()
    }
}

/// Cuts every region of a sheet and writes its outputs. Errors that stop
/// the whole sheet (unreadable sheet or regions file, a settings file
/// refused, an output that would replace an input) come back as `Err`; a
/// region that fails is reported in its [`RegionResult`].
pub fn run_sheet(req: &SheetRequest) -> Result<SheetReport, FileError> {
    run_sheet_since(req, None)
}

/// [`run_sheet`], skipping the cut when `previous` (the sheet's manifest
/// entry) shows the sheet's bytes, the regions file's bytes, every region's
/// effective settings and the underdraw version unchanged and every output
/// recorded in place with its hash: the report then says `unchanged` and
/// carries the recorded numbers.
pub fn run_sheet_since(
    req: &SheetRequest,
    previous: Option<&SheetEntry>,
) -> Result<SheetReport, FileError> {
    let sheet_bytes = crate::io::read_input(&req.sheet)?;
    let shipped = ShippedSheet::read(req, &sheet_bytes)?;
    // the sheet's alpha: its PNG's, or a texture sheet's level 0
    let (sheet, sheet_warnings) = match &shipped {
        Some(t) if t.is_sheet => (t.texture.levels[0].clone(), Vec::new()),
        _ => {
            let layer = crate::io::decode_layer(&req.sheet, &sheet_bytes, &req.limits)?;
            (layer.alpha, layer.warnings)
        }
    };
    let stem = req
        .sheet
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "sheet".into());
    let sheet_name = req
        .sheet
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let size = (sheet.width, sheet.height);
    let inputs: Vec<PathBuf> = std::iter::once(req.sheet.clone())
        .chain(req.regions_path().map(Path::to_path_buf))
        .chain(req.settings_file.clone())
        .collect();
    let mut out = OutputFolder::create(
        &req.out,
        inputs,
        "output folder",
        "give an output folder you can write to",
    )?
    .with_refusal(
        "is an input of this run: a sheet's output would be written over it",
        &format!("give another {} folder", Setting::Out),
    );
    let mut regions_written = None;
    let regions: Vec<SheetRegion> = match &req.regions {
        RegionSource::File(p) => load_regions(p, size)?,
        RegionSource::Find { replace } => {
            let found = find_regions(&sheet, req.base_visible_min());
            if found.is_empty() {
                return Err(FileError::new(
                    &req.sheet,
                    "has no visible texel: no region was found",
                    format!("check the sheet (or {})", Setting::VisibleMin),
                ));
            }
            let names = region_names(&stem, found.len());
            let file = RegionsFile::plain(&names.into_iter().zip(found).collect::<Vec<_>>());
            let text = file.to_text();
            let name = format!("{stem}.regions.json");
            let dest = out.path(&name);
            out.refuse_inputs(&name)?;
            if !replace
                && dest.exists()
                && std::fs::read(&dest).ok().as_deref() != Some(text.as_bytes())
            {
                return Err(FileError::new(
                    &dest,
                    "already exists with other regions (perhaps edited by hand): finding the regions again would replace it",
                    format!("cut with {} to use it, or add {} to replace it with the regions found", Setting::Regions.given("FILE"), Setting::Force),
                ));
            }
            out.write(&name, text.as_bytes())?;
            regions_written = Some(dest.clone());
            parse_regions(&dest, &text, size)?
        }
    };
    let settings_file = req
        .settings_file
        .as_ref()
        .map(|p| SettingsFile::load(p))
        .transpose()?;
    let dir = req.out.join(&stem);
    std::fs::create_dir_all(&dir).map_err(|e| {
        FileError::new(
            &dir,
            format!("cannot be created ({e})"),
            "give an output folder you can write to",
        )
    })?;
    // the settings of every region, validated before anything is cut
    let mut settings = Vec::with_capacity(regions.len());
    for r in &regions {
        let mut s = req.base;
        if let Some(f) = &settings_file {
            f.apply(&format!("{}{stem}/{}", req.match_prefix, r.name), &mut s);
        }
        req.overrides.apply(&mut s);
        s.validate().map_err(|e| {
            FileError::new(
                req.settings_file.as_deref().unwrap_or(&req.sheet),
                format!("gives region {:?} settings that are refused: {e}", r.name),
                "fix the settings for this region",
            )
        })?;
        settings.push(s);
    }
    // output names: a region's, and with --per-frame its frames' `<name>.<k>`
    let mut stems: Vec<(String, &str)> = Vec::new();
    for r in &regions {
        stems.push((r.name.clone(), &r.name));
        if let (true, RegionKind::Frames(f)) = (req.per_frame, &r.kind) {
            stems.extend((0..f.len()).map(|k| (format!("{}.{k}", r.name), r.name.as_str())));
        }
    }
    let mut sorted = stems.clone();
    sorted.sort();
    if let Some(w) = sorted.windows(2).find(|w| w[0].0 == w[1].0) {
        return Err(FileError::new(
            req.regions_path().unwrap_or(&req.sheet),
            format!(
                "regions {:?} and {:?} would both write {}.mesh.json",
                w[0].1, w[1].1, w[0].0
            ),
            format!(
                "rename one of them (a frame k of an animation is written as <name>.<k> with {})",
                Setting::PerFrame
            ),
        ));
    }
    // refused before anything of a region is written
    let preview_name = format!("{stem}.preview.png");
    if req.outputs.preview {
        out.refuse_inputs(&preview_name)?;
    }
    for (name, _) in &stems {
        for p in [".mesh.json", ".gltf", ".bin", ".glb"] {
            out.refuse_inputs(&format!("{stem}/{name}{p}"))?;
        }
    }
    let image_uri = relative_uri(&dir, &req.sheet).unwrap_or_else(|| sheet_name.clone());
    if shipped.as_ref().is_some_and(|t| t.is_sheet) {
        texture_sheet_refusals(req)?;
    }
    // what decides the outputs' bytes besides the two input files
    let key_settings = serde_json::json!({
        "regions": settings,
        "outputs": req.outputs,
        "per_frame": req.per_frame,
        "image_uri": image_uri,
    });
    let mut key_settings = key_settings;
    if let Some(t) = shipped.as_ref().filter(|t| !t.is_sheet) {
        // a new texture cuts the sheet again
        key_settings["texture"] = serde_json::json!({
            "path": t.path.display().to_string(),
            "sha256": t.sha256,
        });
    }
    let regions_sha256 = match req.regions_path() {
        Some(p) => Some(sha256_hex(&crate::io::read_input(p)?)),
        None => None,
    };
    let input_sha256 = sha256_hex(&sheet_bytes);
    let version = env!("CARGO_PKG_VERSION");
    if let (Some(prev), Some(regions_sha256)) = (previous, &regions_sha256) {
        if prev.input_sha256 == input_sha256
            && &prev.regions_sha256 == regions_sha256
            && prev.settings == key_settings
            && prev.underdraw == version
            && prev.regions.len() == regions.len()
            && prev.outputs_intact(&req.out)
        {
            let results = regions
                .iter()
                .zip(&settings)
                .zip(&prev.regions)
                .map(|((r, s), e)| RegionResult {
                    region: r.clone(),
                    settings: *s,
                    cut: Ok(e.result.clone()),
                    outputs: e.outputs.iter().map(|o| req.out.join(o)).collect(),
                })
                .collect();
            return Ok(SheetReport {
                sheet: req.sheet.clone(),
                stem,
                regions_written: None,
                warnings: sheet_warnings.clone(),
                regions: results,
                written: Vec::new(),
                unchanged: true,
                preview: prev
                    .outputs
                    .iter()
                    .find(|o| o.path == preview_name)
                    .map(|o| req.out.join(&o.path)),
                entry: Some(prev.clone()),
            });
        }
    }
    // the whole sheet analyzed once per filter, thresholds and addressing
    // (with a shipped texture: its own decoded levels up to the mip level)
    let mut analyses: Vec<(SheetAnalysis, Option<String>)> = Vec::new();
    for s in &settings {
        if !analyses.iter().any(|a| a.0.serves(s)) {
            analyses.push(match &shipped {
                None => (SheetAnalysis::new(&sheet, s), None),
                Some(t) => {
                    let (a, note) = t.analysis(&sheet, s)?;
                    (a, Some(note))
                }
            });
        }
    }
    // cut in parallel, each region's files as named bytes
    let cuts: Vec<Result<(RegionCut, Vec<NamedBytes>), RegionError>> = regions
        .par_iter()
        .zip(&settings)
        .map(|(r, s)| {
            let (a, note) = analyses
                .iter()
                .find(|a| a.0.serves(s))
                .expect("analyzed above");
            let mut c = cut_region(&sheet, &sheet_name, a, r, s, req.per_frame)?;
            // what the guarantee was computed for, as a layer's cut says
            c.notes.splice(0..0, note.clone());
            let mut files = mesh_files(&dir, &stem, &r.name, &c.mesh, &req.outputs, &image_uri)?;
            for (k, m) in &c.per_frame {
                let name = format!("{}.{k}", r.name);
                files.extend(mesh_files(&dir, &stem, &name, m, &req.outputs, &image_uri)?);
            }
            Ok((c, files))
        })
        .collect();
    // then each region's group committed, in the file's order
    let mut results = Vec::with_capacity(regions.len());
    let mut recorded = Vec::new();
    let mut entries = Vec::new();
    let mut meshes = Vec::new();
    for ((r, s), cut) in regions.iter().zip(&settings).zip(cuts) {
        let before = out.written().len();
        let cut = cut.and_then(|(c, files)| {
            out.commit_changed(&files)?;
            recorded.extend(files.iter().map(|(name, bytes)| OutputFile {
                path: name.clone(),
                sha256: sha256_hex(bytes),
            }));
            entries.push(RegionEntry {
                name: r.name.clone(),
                outputs: files.iter().map(|(name, _)| name.clone()).collect(),
                result: region_result(&c),
            });
            let result = region_result(&c);
            meshes.push(c.mesh);
            Ok(result)
        });
        results.push(RegionResult {
            region: r.clone(),
            settings: *s,
            cut,
            outputs: out.written()[before..].to_vec(),
        });
    }
    // the sheet's preview, of the regions cut
    let mut preview = None;
    if req.outputs.preview {
        let rgba = crate::io::decode_rgba(&req.sheet, &sheet_bytes, &req.limits)?;
        let placed: Vec<&LayerMesh> = meshes.iter().collect();
        let width = crate::batch::layer::PREVIEW_WIDTH;
        if let Some(png) = super::preview::sheet_preview(&rgba, &placed, width) {
            out.write(&preview_name, &png)?;
            recorded.push(OutputFile {
                path: preview_name.clone(),
                sha256: sha256_hex(&png),
            });
            preview = Some(out.path(&preview_name));
        }
    }
    // recorded only when every region is in place: a failed one is cut again
    let entry = match (&req.key, regions_sha256) {
        (Some(_), Some(regions_sha256)) if entries.len() == regions.len() => Some(SheetEntry {
            input: format!("{}{sheet_name}", req.match_prefix),
            input_sha256,
            regions_sha256,
            underdraw: version.into(),
            settings: key_settings,
            outputs: recorded,
            regions: entries,
        }),
        _ => None,
    };
    Ok(SheetReport {
        sheet: req.sheet.clone(),
        stem,
        regions_written,
        warnings: sheet_warnings.clone(),
        regions: results,
        written: out.written().to_vec(),
        unchanged: false,
        entry,
        preview,
    })
}

/// A region's cut as a batch records a layer's: its numbers, the cutter's
/// notes and the padding warnings.
fn region_result(c: &RegionCut) -> LayerResult {
    let s = &c.mesh.stats;
    LayerResult {
        vertices: c.mesh.vertex_count(),
        opaque_capture: s.opaque_capture(),
        excess: s.excess(),
        must_cover_area: s.must_cover_area,
        safe_opaque_area: Some(s.safe_opaque_area),
        opaque_texels: Some(s.opaque_texels),
        notes: c.notes.clone(),
        warnings: c.warnings.clone(),
    }
}

impl SheetRequest {
    /// The regions file, when one is given.
    fn regions_path(&self) -> Option<&Path> {
        match &self.regions {
            RegionSource::File(p) => Some(p),
            RegionSource::Find { .. } => None,
        }
    }

    /// The visible threshold for finding regions: the explicit one, else
    /// the base settings'.
    fn base_visible_min(&self) -> u8 {
        self.overrides
            .visible_min
            .unwrap_or(self.base.alpha.visible_min)
    }
}

/// One mesh's files, named `<stem>/<name>.*` in the output folder: the
/// mesh file, then its glTF asset (`.bin` before `.gltf`) or GLB, as
/// `outputs` asks. `dir` is `OUT/<stem>` (named by the glTF refusals).
fn mesh_files(
    dir: &Path,
    stem: &str,
    name: &str,
    mesh: &LayerMesh,
    outputs: &Outputs,
    image_uri: &str,
) -> Result<Vec<NamedBytes>, RegionError> {
    let mut files = Vec::new();
    if outputs.json {
        let json = serde_json::to_vec_pretty(mesh).expect("a mesh serializes");
        files.push((format!("{stem}/{name}.mesh.json"), json));
    }
    let format = outputs.vertex_format;
    if outputs.gltf {
        let assets = gltf_files(mesh, image_uri, dir, name, format)?;
        files.extend(assets.into_iter().map(|(n, b)| (format!("{stem}/{n}"), b)));
    }
    if outputs.glb {
        let (n, b) = glb_file(mesh, image_uri, dir, name, format)?;
        files.push((format!("{stem}/{n}"), b));
    }
    Ok(files)
}
