//! `underdraw scene`: load, cut, score, draw the heatmaps, dump a frame,
//! allocate a vertex total, write the report. Every output is written
//! atomically and none may be one of the scene's inputs.

use super::budget::allocate_scene;
use super::draws::{frame_draws, Strategy};
use super::file::{load_scene, Scene};
use super::prepare::prepare_layers;
use super::report::{HeatmapInfo, SceneReport};
use super::score::{render_frame, score_frames, summarize};
use crate::error::FileError;
use crate::frame::Draw;
use crate::heatmap::{counts_png, heatmap, rgb_png};
use crate::io::write_atomic;
use crate::mesh::LayerMesh;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// Highest count the heatmaps' colour scale tells apart.
pub const HEATMAP_TOP_MAX: u32 = 15;

/// What `underdraw scene` was asked to do.
#[derive(Clone, Debug)]
pub struct SceneOptions {
    pub scene: PathBuf,
    pub out: PathBuf,
    /// Camera sample whose draws and counts to write.
    pub dump_frame: Option<usize>,
    /// Vertices to split over the layers.
    pub vertex_total: Option<usize>,
}

/// A dumped frame: `frame-K.json`.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FrameDump {
    pub viewport: [u32; 2],
    pub strategies: BTreeMap<String, DumpedDraws>,
}

#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DumpedDraws {
    /// In submission order.
    pub draws: Vec<Draw>,
}

/// Writes outputs into one folder, refusing to overwrite an input.
struct Outputs {
    dir: PathBuf,
    inputs: Vec<PathBuf>,
    written: Vec<String>,
}

impl Outputs {
    fn write(&mut self, name: &str, bytes: &[u8]) -> Result<(), FileError> {
        let dest = self.dir.join(name);
        if let Ok(d) = dest.canonicalize() {
            if self
                .inputs
                .iter()
                .any(|i| i.canonicalize().is_ok_and(|i| i == d))
            {
                return Err(FileError::new(
                    &dest,
                    "is one of the scene's inputs and would be overwritten",
                    "choose another --out folder",
                ));
            }
        }
        write_atomic(&dest, bytes)?;
        self.written.push(dest.display().to_string());
        Ok(())
    }
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

/// Runs the whole `scene` command.
pub fn run_scene(opts: &SceneOptions) -> Result<SceneReport, FileError> {
    let scene = load_scene(&opts.scene)?;
    if let Some(k) = opts.dump_frame {
        if k >= scene.samples as usize {
            return Err(FileError::new(
                &opts.scene,
                format!(
                    "--dump-frame {k} names no camera sample: the scene has {} (0 to {})",
                    scene.samples,
                    scene.samples - 1
                ),
                "give a sample number from that range",
            ));
        }
    }
    std::fs::create_dir_all(&opts.out).map_err(|e| {
        FileError::new(
            &opts.out,
            format!("the output folder cannot be created ({e})"),
            "choose a writable --out folder",
        )
    })?;
    let mut out = Outputs {
        dir: opts.out.clone(),
        inputs: scene.inputs(),
        written: Vec::new(),
    };
    let layers = prepare_layers(&scene)?;
    let specs: Vec<_> = layers.iter().map(|l| l.spec.clone()).collect();
    let meshes: Vec<&LayerMesh> = layers.iter().map(|l| &l.mesh).collect();
    let cams = scene.camera_positions();
    let frames = score_frames(&Strategy::ALL, &specs, &meshes, scene.viewport, &cams);
    let (strategies, layer_reports) = summarize(&frames, &specs, &meshes, scene.viewport);

    // heatmaps of rect and split, each at its peak sample, on one colour scale
    let [w, h] = scene.viewport;
    let shown: Vec<(Strategy, usize)> = [Strategy::Rect, Strategy::Split]
        .iter()
        .filter_map(|&s| {
            strategies
                .iter()
                .find(|r| r.strategy == s)
                .map(|r| (s, r.peak_sample))
        })
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
    for (&(s, k), r) in shown.iter().zip(&rendered) {
        let name = format!("heatmap-{}.png", s.name());
        out.write(&name, &rgb_png(heatmap(&r.counts, w, h, top)))?;
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
        for s in Strategy::ALL {
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
            Some(a.report)
        }
    };

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
        heatmaps,
        allocation,
        notes,
        outputs: Vec::new(),
    };
    out.written.push(report_path.display().to_string());
    report.outputs = out.written.clone();
    let json = serde_json::to_vec_pretty(&report).expect("a report serializes");
    out.written.pop();
    out.write("scene-report.json", &json)?;
    Ok(report)
}

/// Reads a dumped frame (`frame-K.json`).
pub fn load_frame_dump(path: &Path) -> Result<FrameDump, FileError> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| FileError::new(path, format!("cannot be read ({e})"), "check the path"))?;
    serde_json::from_str(&text).map_err(|e| {
        FileError::new(
            path,
            format!("is not a frame dump: {e}"),
            "give a frame-K.json written by `underdraw scene --dump-frame K`",
        )
    })
}
