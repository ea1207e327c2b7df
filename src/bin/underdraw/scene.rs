//! `underdraw scene`: score a parallax scene on the simulated GPU.

use crate::{bar, Print, Result};
use clap::Args;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::{Arc, Mutex};
use underdraw::scene::run::{run_scene, Progress, SceneOptions};

#[derive(Args)]
pub(crate) struct SceneArgs {
    /// The scene file (`.scene.json`, see the README's Scenes section).
    scene: PathBuf,
    /// Folder for the report, heatmaps and meshes (created if missing;
    /// default `out/<scene name>`).
    #[arg(long, short)]
    out: Option<PathBuf>,
    /// Also write camera sample K's draws (`frame-K.json`) and per-pixel
    /// fragment counts (`counts-K-<strategy>.png`, 16-bit grey).
    #[arg(long, value_name = "K")]
    dump_frame: Option<usize>,
    /// Split N vertices over the layers cut on the fly to save the most
    /// fragments with the split strategy; writes `<layer>.mesh.json` and
    /// compares against the same total spread evenly.
    #[arg(long, value_name = "N")]
    vertex_total: Option<usize>,
    /// Also write a self-contained web page report, `DIR/index.html`, with
    /// its images beside it: the strategies, the heatmaps side by side, and
    /// a card per layer: its numbers and warnings, its preview (for a layer
    /// drawn from a PNG) and, for a layer cut from its own image, its
    /// budget plot from a sweep with the knee (a region of a sprite sheet
    /// and a layer read from a mesh file have no budget plot).
    #[arg(long, value_name = "DIR")]
    report: Option<PathBuf>,
    /// Also write, for an engine, every layer's `<name>.mesh.json` and glTF
    /// asset (`<name>.gltf` + `.bin`) with the budgets chosen (by
    /// --vertex-total when given), and `DIR/draw-list.json`: the opaque
    /// pass front to back (blending off, depth test and write) then the
    /// blended pass back to front (blending on, depth test, no write), each
    /// draw with its layer, mesh, depth and blend state.
    #[arg(long, value_name = "DIR")]
    export: Option<PathBuf>,
    /// How the exported glTF assets store their vertices.
    #[arg(long, value_enum, default_value = "f32")]
    vertex_format: underdraw::mesh::VertexFormat,
}

/// `run_scene`'s steps shown as one bar per step.
struct SceneBar {
    print: Print,
    current: Mutex<Option<indicatif::ProgressBar>>,
}

impl Progress for SceneBar {
    fn start(&self, what: &str, total: usize) {
        let mut c = self.current.lock().unwrap();
        if let Some(b) = c.take() {
            b.finish_and_clear();
        }
        *c = Some(bar(self.print, total, what));
    }
    fn step(&self) {
        if let Some(b) = &*self.current.lock().unwrap() {
            b.inc(1);
        }
    }
}

impl SceneBar {
    fn clear(&self) {
        if let Some(b) = self.current.lock().unwrap().take() {
            b.finish_and_clear();
        }
    }
}

pub(crate) fn scene(
    args: &SceneArgs,
    print: Print,
    limits: underdraw::io::ImageLimits,
) -> Result<ExitCode> {
    let out = args.out.clone().unwrap_or_else(|| {
        let stem = args
            .scene
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        let stem = stem.trim_end_matches(".json").trim_end_matches(".scene");
        Path::new("out").join(stem)
    });
    let opts = SceneOptions {
        scene: args.scene.clone(),
        out,
        dump_frame: args.dump_frame,
        vertex_total: args.vertex_total,
        report: args.report.clone(),
        export: args.export.clone(),
        vertex_format: args.vertex_format,
        limits,
        progress: None,
    };
    let progress = Arc::new(SceneBar {
        print,
        current: Mutex::new(None),
    });
    let opts = SceneOptions {
        progress: Some(progress.clone()),
        ..opts
    };
    let result = run_scene(&opts);
    progress.clear();
    let report = result?;
    if print.json {
        println!(
            "{}",
            serde_json::to_string_pretty(&report).expect("the report serializes")
        );
    } else if print.text() {
        print!("{}", report.table());
        if let Some(dir) = &args.report {
            println!("report: {}", dir.join("index.html").display());
        }
    }
    Ok(ExitCode::SUCCESS)
}
