//! One generated layer through the cut, stage by stage, on one thread.
//!
//! The analysis/trace/fit split replicates `underdraw::cut::cut_layer`'s
//! path with public items only: each region built as row runs
//! (`must_cover`, `safe_opaque`), its pinches removed (safe) or filled
//! (cover) on the runs, traced and indexed ([`Prepared::from_runs`]), the
//! safe region also with its holes opened when it has any; then every
//! variant fitted ([`Fitter`]) with both rankings of large edits and the
//! first of the best kept.
//!
//! Invariants: the stages run in pipeline order on the previous stage's
//! result; before `cut_layer` is measured, nothing but the PNG bytes and
//! the alpha map is live, so its peak heap is the cut's own (the alpha map,
//! one byte a texel, counted as live from before the decode); when the
//! replicated fit differs from `fit_layer`'s (vertices or objective), the
//! result says so, as the split then no longer times what the cut does.

use super::layers::{encode_png, generate, Kind};
use super::{heap, measure, Timed};
use rayon::ThreadPool;
use std::path::Path;
use std::time::Instant;
use underdraw::alpha::{must_cover, safe_opaque, AlphaMap};
use underdraw::check::check_mesh;
use underdraw::cut::{cut_layer, fit_layer};
use underdraw::fit::{open_holes_in_runs, Class, Fit, Fitter, Prepared};
use underdraw::io::{decode_layer, write_atomic, ImageLimits};
use underdraw::mask::RowRuns;
use underdraw::settings::CutSettings;
use underdraw::triangulate::triangulate;

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
    /// Remarks: the cut's notes, a failed self-check, a drifted replica.
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
/// Alpha analysis.
pub const ANALYSIS: &str = "alpha analysis (must_cover + safe_opaque)";
/// Tracing and indexing.
pub const TRACE: &str = "pinches + trace + index (Prepared::from_runs)";
/// Fitting.
pub const FIT: &str = "fit (Fitter::fit, all variants)";
/// fit_layer whole (below 64 MP).
pub const FIT_LAYER: &str = "fit_layer (analysis+trace+fit)";
/// Triangulation.
pub const TRIANGULATE: &str = "triangulate";
/// The self-check.
pub const CHECK: &str = "self-check (check_mesh)";
/// The whole cut.
pub const CUT: &str = "cut_layer whole (no decode)";

struct Traced {
    cover: Prepared,
    plain: Prepared,
    opened: Option<Prepared>,
}

/// The two regions as the cut builds them: runs, one region at a time.
struct Analyzed {
    safe: RowRuns,
    cover: RowRuns,
}

fn analyze(map: &AlphaMap, settings: &CutSettings) -> Analyzed {
    Analyzed {
        cover: must_cover(map, settings).0,
        safe: safe_opaque(map, settings).0,
    }
}

fn trace(regions: &Analyzed) -> Traced {
    let mut cover = regions.cover.clone();
    cover.fill_pinches();
    let cover = Prepared::from_runs(cover, false);
    let mut safe = regions.safe.clone();
    safe.remove_pinches();
    let plain = Prepared::from_runs(safe, true);
    let opened = plain.has_holes().then(|| {
        let mut runs = open_holes_in_runs(plain.runs());
        runs.remove_pinches();
        Prepared::from_runs(runs, true)
    });
    Traced {
        cover,
        plain,
        opened,
    }
}

fn fit(t: &Traced, budget: usize) -> (i64, Fit) {
    let mut variants = vec![(&t.plain, true), (&t.plain, false)];
    if let Some(o) = &t.opened {
        variants.push((o, true));
        variants.push((o, false));
    }
    let mut best: Option<(i64, Fit)> = None;
    for (safe, cap) in variants {
        let mut f = Fitter::new(safe, &t.cover);
        f.set_cap_savings(cap);
        f.fit(budget);
        let obj = f.objective();
        // the first of the best, as fit_layer keeps
        if best.as_ref().is_none_or(|(b, _)| obj > *b) {
            best = Some((obj, f.result()));
        }
    }
    best.expect("at least one variant")
}

fn shape(f: &Fit) -> (usize, usize, usize) {
    (
        f.vertices,
        f.outline_vertices(Class::Opaque),
        f.outline_vertices(Class::Cover),
    )
}

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
        let (plain, _) = measure(decode_runs, || image::load_from_memory(&png).expect("a PNG decodes"));
        stages.push((PLAIN, plain));
        let (decode, layer) = measure(decode_runs, || {
            decode_layer(Path::new(&name), &png, &ImageLimits::default())
                .unwrap_or_else(|e| panic!("{e}"))
        });
        stages.push((DECODE, decode));
        let map = layer.alpha;
        let (analysis, regions) = measure(runs, || analyze(&map, &settings));
        let (traced_t, traced) = measure(runs, || trace(&regions));
        let (fit_t, (objective, fitted)) = measure(runs, || fit(&traced, settings.budget));
        drop(traced);
        // fit_layer whole, a cross-check of the split; left out from 64 MP
        let whole_fit = (side < 8192).then(|| {
            let (t, outlines) = measure(runs, || fit_layer(&map, &settings));
            if shape(&outlines.fit) != shape(&fitted) {
                notes.push(format!(
                    "the replicated trace/fit split gives {:?} (vertices, opaque, cover outline vertices; objective {objective}) but fit_layer {:?}: the split no longer matches fit_layer",
                    shape(&fitted),
                    shape(&outlines.fit)
                ));
            }
            t
        });
        let (tri_t, tri) = measure(runs, || triangulate(&fitted));
        if let Err(e) = &tri {
            notes.push(format!("triangulate failed: {e}"));
        }
        drop((regions, fitted, tri));
        let (cut_t, out) = measure(runs, || cut_layer(&map, &name, &settings));
        let (check_t, report) = measure(runs, || check_mesh(&out.mesh, &map));
        match report {
            Ok(r) if r.holds() => {}
            Ok(r) => notes.push(format!("the cut fails the check: {}", r.violations().join("; "))),
            Err(e) => notes.push(format!("the check could not run: {e}")),
        }
        notes.extend(out.notes.iter().map(|n| format!("cut note: {n}")));
        stages.extend([
            (ANALYSIS, analysis),
            (TRACE, traced_t),
            (FIT, fit_t),
        ]);
        stages.extend(whole_fit.map(|t| (FIT_LAYER, t)));
        stages.extend([(TRIANGULATE, tri_t), (CHECK, check_t), (CUT, cut_t)]);
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
