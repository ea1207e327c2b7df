//! One generated layer through the cut, stage by stage, on one thread.
//!
//! Each stage is the library's own public stage of `underdraw::cut`
//! ([`prepare_regions`]: the alpha analysis as row runs, the must-cover
//! region traced; [`fit_outlines`], the fitter's entry that
//! [`underdraw::cut::fit_regions`] calls: the safe region traced and every
//! variant fitted; [`triangulate_outlines`]), so the split times exactly
//! what `cut_layer` runs and no copy of its glue is kept here.
//!
//! Invariants: the stages run in pipeline order on the previous stage's
//! result; before `cut_layer` is measured, nothing but the PNG bytes and
//! the alpha map is live, so its peak heap is the cut's own (the alpha map,
//! one byte a texel, counted as live from before the decode).

use super::layers::{encode_png, generate, Kind};
use super::{heap, measure, Timed};
use rayon::ThreadPool;
use std::path::Path;
use std::time::Instant;
use underdraw::alpha::Sampled;
use underdraw::check::check_mesh;
use underdraw::cut::{cut_layer, prepare_regions, triangulate_outlines};
use underdraw::fit::fit_outlines;
use underdraw::io::{decode_layer, write_atomic, ImageLimits};
use underdraw::settings::CutSettings;

/// The measured stages of one layer.
pub struct LayerResult {
    /// The layer's kind.
    pub kind: Kind,
    /// Side of the square layer, texels.
    pub side: u32,
    /// Runs per stage.
    pub runs: usize,
    /// Size of the PNG, bytes.
    pub png_bytes: usize,
    /// Generating and encoding the layer, milliseconds (not a stage).
    pub make_ms: f64,
    /// (stage name, time); the first is the plain decode, the reference.
    pub stages: Vec<(&'static str, Timed)>,
    /// Live heap bytes before the decode (the PNG bytes held).
    pub base: usize,
    /// The cut's mesh: vertices, opaque and blended triangles.
    pub mesh: (usize, usize, usize),
    /// Remarks: the cut's notes, a failed self-check.
    pub notes: Vec<String>,
}

impl LayerResult {
    /// Texels of the layer.
    pub fn texels(&self) -> u64 {
        self.side as u64 * self.side as u64
    }
    /// The stage named `name`.
    pub fn stage(&self, name: &str) -> &Timed {
        &self
            .stages
            .iter()
            .find(|(n, _)| *n == name)
            .unwrap_or_else(|| panic!("no stage {name}"))
            .1
    }
    /// Peak heap of decode + cut above the live bytes before the decode.
    pub fn peak_load_cut(&self) -> usize {
        let d = self.stage(DECODE).peak_abs;
        let c = self.stage(CUT).peak_abs;
        d.max(c).saturating_sub(self.base)
    }
    /// Peak heap of the cut alone (the alpha map included).
    pub fn peak_cut(&self) -> usize {
        self.stage(CUT).peak_abs.saturating_sub(self.base)
    }
    /// The memory budget: decoded RGBA (4 bytes a texel) + 1 byte a texel + 64 MiB.
    pub fn memory_budget(&self) -> usize {
        5 * self.texels() as usize + (64 << 20)
    }
}

/// Stage names, in pipeline order.
pub const PLAIN: &str = "png decode (image crate, reference)";
/// underdraw's decode.
pub const DECODE: &str = "decode_layer (decode + alpha)";
/// Alpha analysis, the must-cover region traced.
pub const ANALYSIS: &str = "prepare_regions (analysis + cover trace)";
/// Fitting.
pub const FIT: &str = "fit_outlines (safe trace, all variants)";
/// Triangulation.
pub const TRIANGULATE: &str = "triangulate_outlines (+ vertex order)";
/// The self-check.
pub const CHECK: &str = "self-check (check_mesh)";
/// The whole cut.
pub const CUT: &str = "cut_layer whole (no decode)";

/// Generates a `side` x `side` layer of `kind` and measures every stage.
/// With `save`, also writes the layer's PNG into that folder.
pub fn bench_layer(
    kind: Kind,
    side: u32,
    runs: usize,
    one: &ThreadPool,
    save: Option<&Path>,
) -> LayerResult {
    let settings = CutSettings::default();
    let name = format!("{}-{side}.png", kind.name());
    let t = Instant::now();
    let png = encode_png(&generate(kind, side, side, side as u64));
    let make_ms = t.elapsed().as_secs_f64() * 1e3;
    if let Some(dir) = save {
        let written = std::fs::create_dir_all(dir)
            .map_err(|e| format!("{}: cannot be created ({e})", dir.display()))
            .and_then(|()| write_atomic(&dir.join(&name), &png).map_err(|e| e.to_string()));
        if let Err(e) = written {
            eprintln!("error: {e}; choose a writable folder for --save-layers");
            std::process::exit(2);
        }
    }
    let mut notes = Vec::new();
    let mut stages = Vec::new();
    one.install(|| {
        let base = heap::live();
        // the decodes are cheap: more runs steady the reference
        let decode_runs = runs.max(if side <= 4096 { 7 } else { 3 });
        let (plain, _) = measure(decode_runs, || {
            image::load_from_memory(&png).expect("a PNG decodes")
        });
        stages.push((PLAIN, plain));
        let (decode, layer) = measure(decode_runs, || {
            decode_layer(Path::new(&name), &png, &ImageLimits::default())
                .unwrap_or_else(|e| panic!("{e}"))
        });
        stages.push((DECODE, decode));
        let map = layer.alpha;
        let (analysis, regions) =
            measure(runs, || prepare_regions(Sampled::source(&map), &settings));
        // the fitter consumes the safe runs: each run fits a copy
        let (fit_t, fitted) = measure(runs, || {
            fit_outlines(regions.safe.clone(), &regions.cover, settings.budget)
        });
        drop(regions);
        let (tri_t, tri) = measure(runs, || triangulate_outlines(&fitted));
        if let Err(e) = &tri {
            notes.push(format!("triangulate failed: {e}"));
        }
        drop((fitted, tri));
        let (cut_t, out) = measure(runs, || cut_layer(&map, &name, &settings));
        let (check_t, report) = measure(runs, || check_mesh(&out.mesh, &map));
        match report {
            Ok(r) if r.holds() => {}
            Ok(r) => notes.push(format!(
                "the cut fails the check: {}",
                r.violations().join("; ")
            )),
            Err(e) => notes.push(format!("the check could not run: {e}")),
        }
        notes.extend(out.notes.iter().map(|n| format!("cut note: {n}")));
        stages.extend([
            (ANALYSIS, analysis),
            (FIT, fit_t),
            (TRIANGULATE, tri_t),
            (CHECK, check_t),
            (CUT, cut_t),
        ]);
        LayerResult {
            kind,
            side,
            runs,
            png_bytes: png.len(),
            make_ms,
            stages,
            base,
            mesh: (
                out.mesh.vertex_count(),
                out.mesh.opaque.triangle_count(),
                out.mesh.blended.triangle_count(),
            ),
            notes,
        }
    })
}
