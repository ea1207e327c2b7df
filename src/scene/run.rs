//! `underdraw scene`: load, cut, score, draw the heatmaps, dump a frame,
//! allocate a vertex total, write the report. Every output is written
//! atomically and none may be one of the scene's inputs.

use super::budget::allocate_scene;
use super::draws::{frame_draws, Strategy};
use super::exact::exact_layers;
use super::file::{load_scene, Scene};
use super::prepare::prepare_layers_with;
use super::report::{HeatmapInfo, SceneReport};
use super::score::{
    render_frame, saving_share, score_exact_frames_with, score_frames_with, summarize,
};
use crate::error::{FileError, Setting};
use crate::frame::Draw;
use crate::heatmap::heatmap;
use crate::io::OutputFolder;
use crate::mesh::LayerMesh;
use crate::present::png::{counts_png, rgb_png};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;

/// Highest count the heatmaps' colour scale tells apart.
pub const HEATMAP_TOP_MAX: u32 = 15;

/// What `underdraw scene` was asked to do.
#[derive(Clone, Debug)]
pub struct SceneOptions {
    /// The scene file (`<name>.scene.json`).
    pub scene: PathBuf,
    /// The output folder: `scene-report.json`, the heatmaps, the dumped frame
    /// and the allocated meshes go there.
    pub out: PathBuf,
    /// Camera sample whose draws and counts to write.
    pub dump_frame: Option<usize>,
    /// Vertices to split over the layers.
    pub vertex_total: Option<usize>,
    /// Folder for the web page report (`index.html` and its images).
    pub report: Option<PathBuf>,
    /// Folder for every layer's meshes (JSON and glTF) and the draw list.
    pub export: Option<PathBuf>,
    /// The vertex format of the exported glTF assets.
    pub vertex_format: crate::mesh::VertexFormat,
    /// The largest image accepted.
    pub limits: crate::io::ImageLimits,
    /// Told how far the long steps are (the command line draws a bar).
    pub progress: Option<Arc<dyn Progress>>,
}

/// Someone told how far `run_scene`'s long steps are: `start` as a step of
/// `total` units begins, `step` as each unit ends (from any thread).
pub trait Progress: Send + Sync {
    /// A long step named `what` (such as `"camera samples"`) begins; it has
    /// `total` units.
    fn start(&self, what: &str, total: usize);
    /// One unit of the current step is done; may be called from any thread.
    fn step(&self);
}

impl std::fmt::Debug for dyn Progress {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("Progress")
    }
}

/// A dumped frame: `frame-K.json`, written for `--dump-frame K` beside the
/// per-pixel counts `counts-K-<strategy>.png`.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FrameDump {
    /// The viewport's size in pixels, [width, height].
    pub viewport: [u32; 2],
    /// The frame's draws under each strategy, by its name (`rect`, `outline`,
    /// `split`, `layered`, `layered-hsr`; the last as the equivalent frame
    /// [`Strategy::LayeredHsr`] describes: the layered draws reversed, at
    /// one depth, the opaque ones writing it).
    pub strategies: BTreeMap<String, DumpedDraws>,
}

/// One strategy's draws of the dumped frame.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DumpedDraws {
    /// The draws, in submission order.
    pub draws: Vec<Draw>,
}

/// The scene's output folder `dir`, refusing to write over its inputs.
pub(crate) fn scene_folder(
    scene: &Scene,
    dir: &Path,
    what: &str,
    setting: Setting,
) -> Result<OutputFolder, FileError> {
    let writable = format!("choose a writable {setting} folder");
    let another = format!("choose another {setting} folder");
    Ok(
        OutputFolder::create(dir, scene.inputs(), what, &writable)?.with_refusal(
            "is one of the scene's inputs and would be overwritten",
            &another,
        ),
    )
}

/// The frame of `strategy` at camera sample `k`'s draws.
fn draws_at(scene: &Scene, strategy: Strategy, meshes: &[&LayerMesh], k: usize) -> Vec<Draw> {
    let specs: Vec<_> = scene.layers.to_vec();
    frame_draws(
        strategy,
        &specs,
        meshes,
        scene.viewport,
        scene.camera_positions()[k],
    )
}

/// Runs the whole `scene` command: loads the scene, cuts (or reads) every
/// layer's mesh, renders every strategy at every camera sample, and writes
/// into `opts.out` the heatmaps, the dumped frame, the allocated meshes and
/// `scene-report.json` (and the web page and export folders when asked).
/// Returns the report; fails naming the file when a file cannot be read or
/// written, or when an output would overwrite one of the scene's inputs.
pub fn run_scene(opts: &SceneOptions) -> Result<SceneReport, FileError> {
    let scene = load_scene(&opts.scene)?;
    if let Some(k) = opts.dump_frame {
        if k >= scene.samples as usize {
            return Err(FileError::new(
                &opts.scene,
                format!(
                    "{} names no camera sample: the scene has {} (0 to {})",
                    Setting::DumpFrame.given(k),
                    scene.samples,
                    scene.samples - 1
                ),
                "give a sample number from that range",
            ));
        }
    }
    let mut out = scene_folder(&scene, &opts.out, "output folder", Setting::Out)?;
    let layers = prepare_layers_with(&scene, &opts.limits)?;
    let specs: Vec<_> = layers.iter().map(|l| l.spec.clone()).collect();
    let meshes: Vec<&LayerMesh> = layers.iter().map(|l| &l.mesh).collect();
    let cams = scene.camera_positions();
    let exact = exact_layers(&layers)?;
    let progress = opts.progress.as_deref();
    let drawn: Vec<Strategy> = Strategy::ALL.into_iter().chain(Strategy::LAYERED).collect();
    if let Some(p) = progress {
        p.start("camera samples", (drawn.len() + 1) * cams.len());
    }
    let tick = || {
        if let Some(p) = progress {
            p.step();
        }
    };
    let mut frames = score_frames_with(&drawn, &specs, &meshes, scene.viewport, &cams, &tick);
    frames.extend(score_exact_frames_with(
        &specs,
        &exact,
        scene.viewport,
        &cams,
        &tick,
    ));
    let (strategies, layer_reports) = summarize(&frames, &specs, &meshes, scene.viewport);
    let fragments_of = |s: Strategy| {
        strategies
            .iter()
            .find(|r| r.strategy == s)
            .map(|r| r.per_frame.fragments)
    };
    let rect_fragments = fragments_of(Strategy::Rect).unwrap_or(0.0);
    let exact_fragments = fragments_of(Strategy::Exact);
    let share = saving_share(
        rect_fragments,
        fragments_of(Strategy::Split).unwrap_or(0.0),
        exact_fragments,
    );

    // heatmaps of rect and split at one camera sample, on one colour scale:
    // the sample where plain rectangles peak, the frame that costs most when
    // drawn the plain way, so the split map shows what the meshes do to it
    let [w, h] = scene.viewport;
    let sample = heatmap_sample(&strategies);
    let shown: Vec<(Strategy, usize)> = [Strategy::Rect, Strategy::Split]
        .iter()
        .filter(|&&s| strategies.iter().any(|r| r.strategy == s))
        .map(|&s| (s, sample))
        .collect();
    let rendered: Vec<_> = shown
        .iter()
        .map(|&(s, k)| render_frame(s, &specs, &meshes, scene.viewport, cams[k]))
        .collect();
    let top = rendered
        .iter()
        .flat_map(|r| r.counts.iter().copied())
        .max()
        .unwrap_or(1)
        .clamp(1, HEATMAP_TOP_MAX);
    let mut heatmaps = Vec::new();
    let mut heatmap_files = Vec::new();
    for (&(s, k), r) in shown.iter().zip(&rendered) {
        let name = format!("heatmap-{}.png", s.name());
        let bytes = rgb_png(heatmap(&r.counts, w, h, top));
        out.write(&name, &bytes)?;
        heatmap_files.push((name.clone(), bytes));
        heatmaps.push(HeatmapInfo {
            file: name,
            sample: k,
            camera_x: cams[k],
            top,
        });
    }

    if let Some(k) = opts.dump_frame {
        let mut dump = FrameDump {
            viewport: scene.viewport,
            strategies: BTreeMap::new(),
        };
        for &s in &drawn {
            let draws = draws_at(&scene, s, &meshes, k);
            let r = crate::frame::render(scene.viewport, &draws);
            out.write(
                &format!("counts-{k}-{}.png", s.name()),
                &counts_png(&r.counts, w, h),
            )?;
            dump.strategies
                .insert(s.name().to_string(), DumpedDraws { draws });
        }
        let json = serde_json::to_vec(&dump).expect("a frame serializes");
        out.write(&format!("frame-{k}.json"), &json)?;
    }

    let mut chosen: Option<Vec<LayerMesh>> = None;
    let mut exported_files = Vec::new();
    let allocation = match opts.vertex_total {
        None => None,
        Some(total) => {
            let a = allocate_scene(&scene, &layers, total)?;
            for (l, m) in layers.iter().zip(&a.meshes) {
                if l.alpha.is_some() {
                    let json = serde_json::to_vec_pretty(m).expect("a mesh serializes");
                    out.write(&format!("{}.mesh.json", l.spec.name), &json)?;
                }
            }
            chosen = Some(a.meshes);
            Some(a.report)
        }
    };
    if let Some(dir) = &opts.export {
        // the budgets chosen by the allocation, else each layer's own mesh
        let exported: Vec<&LayerMesh> = match &chosen {
            Some(m) => m.iter().collect(),
            None => meshes.clone(),
        };
        let mut to = scene_folder(&scene, dir, "export folder", Setting::Export)?;
        let (_, files) =
            super::export::export_scene_with(dir, &scene, &layers, &exported, opts.vertex_format)?;
        to.write_all(&files)?;
        exported_files = to.written().to_vec();
    }

    let notes = layers
        .iter()
        .flat_map(|l| l.notes.iter().map(move |n| format!("{}: {n}", l.spec.name)))
        .collect();
    let report_path = opts.out.join("scene-report.json");
    let mut report = SceneReport {
        scene: scene.path.display().to_string(),
        viewport: scene.viewport,
        camera_positions: cams,
        strategies,
        layers: layer_reports,
        heatmap_sample: sample,
        heatmaps,
        saving_share: share,
        allocation_saving_share: allocation
            .as_ref()
            .and_then(|a| saving_share(rect_fragments, a.allocated.fragments, exact_fragments)),
        allocation,
        notes,
        outputs: Vec::new(),
    };
    // every file written, the report itself included (written last)
    report.outputs = out
        .written()
        .iter()
        .chain(&exported_files)
        .chain([&report_path])
        .map(|p| p.display().to_string())
        .collect();
    let json = serde_json::to_vec_pretty(&report).expect("a report serializes");
    out.write("scene-report.json", &json)?;
    if let Some(dir) = &opts.report {
        crate::present::html::write_report_page(
            dir,
            &scene,
            &layers,
            &report,
            &heatmap_files,
            opts,
        )?;
    }
    Ok(report)
}

/// The camera sample both heatmaps show: where the rect strategy's
/// overdraw peaks (the first such sample), else sample 0.
pub fn heatmap_sample(strategies: &[super::score::StrategyReport]) -> usize {
    strategies
        .iter()
        .find(|r| r.strategy == Strategy::Rect)
        .map_or(0, |r| r.peak_sample)
}

/// Reads a dumped frame (`frame-K.json`).
pub fn load_frame_dump(path: &Path) -> Result<FrameDump, FileError> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| FileError::new(path, format!("cannot be read ({e})"), "check the path"))?;
    serde_json::from_str(&text).map_err(|e| {
        FileError::new(
            path,
            format!("is not a frame dump: {e}"),
            format!(
                "give a frame-K.json written by the scene command's {}",
                Setting::DumpFrame.given("K")
            ),
        )
    })
}
