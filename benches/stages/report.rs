//! Printing the stage benchmark's tables, checking the performance
//! targets, and writing the numbers as JSON.
//!
//! Invariants: every ratio printed is measured against a time taken in the
//! same process (the plain decode of the same PNG, the decode of the
//! scene's PNGs, the batch on one thread); a target whose inputs were not
//! run (a size or section left out on the command line) is reported as
//! NOT RUN, never as met; the JSON holds the same numbers as the tables.

use super::heap::mib;
use super::scene::SceneTimes;
use super::split::{LayerResult, CUT, DECODE, PLAIN};
use super::Timed;
use serde_json::{json, Value};

/// A performance target and how the run did against it.
pub struct Target {
    /// What is checked.
    pub name: String,
    /// The measured value, as printed.
    pub measured: f64,
    /// The limit (at most, or at least when `at_least`).
    pub limit: f64,
    /// Whether the limit is a floor.
    pub at_least: bool,
    /// `None` when not run.
    pub met: Option<bool>,
    /// The unit of `measured` and `limit`.
    pub unit: &'static str,
}

fn mps(texels: u64, ms: f64) -> f64 {
    texels as f64 / 1e6 / (ms / 1e3)
}

/// Prints one layer's stages.
pub fn print_layer(r: &LayerResult) {
    let plain = r.stage(PLAIN).ms;
    println!(
        "\n== {0} x {0} ({1:.1} MP), {2}: PNG {3:.1} MiB, made in {4:.0} ms; {5} run(s) a stage ({6} for the two decodes), 1 thread ==",
        r.side,
        r.texels() as f64 / 1e6,
        r.kind.name(),
        mib(r.png_bytes),
        r.make_ms,
        r.runs,
        r.stage(PLAIN).runs.len()
    );
    println!(
        "{:<38} {:>10} {:>9} {:>9} {:>10}",
        "stage", "ms", "MP/s", "x decode", "peak MiB"
    );
    for (name, t) in &r.stages {
        println!(
            "{:<38} {:>10.1} {:>9.1} {:>9.3} {:>10.1}",
            name,
            t.ms,
            mps(r.texels(), t.ms),
            t.ms / plain,
            mib(t.peak)
        );
    }
    let (v, o, b) = r.mesh;
    println!("mesh: {v} vertices, {o} opaque and {b} blended triangles");
    println!(
        "peak heap: decode + cut {:.1} MiB, cut alone (alpha map included) {:.1} MiB; budget (RGBA 4 B + 1 B a texel + 64 MiB) {:.1} MiB",
        mib(r.peak_load_cut()),
        mib(r.peak_cut()),
        mib(r.memory_budget())
    );
    for n in &r.notes {
        println!("note: {n}");
    }
}

/// Prints the scoring benchmark.
pub fn print_scene(s: &SceneTimes) {
    println!(
        "\n== scoring: 1920 x 1080, 8 layers ({:.1} MP of texels), {} camera samples, {} frames (3 strategies) ==",
        s.texels as f64 / 1e6,
        super::scene::SAMPLES,
        s.frames
    );
    println!(
        "decode of the 8 PNGs (image crate), 1 thread: {:>9.1} ms",
        s.decode.ms
    );
    println!(
        "cut of the 8 layers (prepare_layers), 1 thread, once: {:>9.1} ms",
        s.cut_ms
    );
    println!(
        "scoring (score_frames + summarize), 1 thread: {:>9.1} ms = {:.2}x the decode{}",
        s.score_1.ms,
        s.score_1.ms / s.decode.ms,
        busy(&s.score_1)
    );
    println!(
        "scoring on {} threads: {:>9.1} ms = {:.2}x the decode{}",
        s.threads,
        s.score_n.ms,
        s.score_n.ms / s.decode.ms,
        busy(&s.score_n)
    );
    println!(
        "allocation of a vertex total of {} (allocate_scene), {} threads, once: {:>9.1} ms",
        super::scene::VERTEX_TOTAL,
        s.threads,
        s.allocate_ms
    );
}

/// Prints the batch benchmark.
pub fn print_batch(t1: &Timed, t2: &Timed) {
    println!(
        "\n== batch: {} layers of {} x {} (load + cut_layer + write mesh JSON) ==",
        super::batch::LAYERS,
        super::batch::SIDE,
        super::batch::SIDE
    );
    println!(
        "1 thread: {:.1} ms (runs {:?}){}",
        t1.ms,
        rounded(&t1.runs),
        busy(t1)
    );
    println!(
        "2 threads: {:.1} ms (runs {:?}){}",
        t2.ms,
        rounded(&t2.runs),
        busy(t2)
    );
    println!(
        "speed-up: {:.2}x (a shared machine's other work takes cores from the 2-thread run: see cores busy)",
        t1.ms / t2.ms
    );
}

/// The process's CPU time during a section, and the cores it kept busy.
fn busy(t: &Timed) -> String {
    t.cpu_ms.map_or(String::new(), |c| {
        format!("; CPU {:.1} s, {:.2} cores busy", c / 1e3, c / t.ms)
    })
}

fn rounded(v: &[f64]) -> Vec<f64> {
    v.iter().map(|x| x.round()).collect()
}

/// A target from its measured value (`None`: not run).
pub fn target(
    name: String,
    measured: Option<f64>,
    limit: f64,
    at_least: bool,
    unit: &'static str,
) -> Target {
    Target {
        name,
        measured: measured.unwrap_or(f64::NAN),
        limit,
        at_least,
        met: measured.map(|m| if at_least { m >= limit } else { m <= limit }),
        unit,
    }
}

/// Evaluates the targets on what was run.
pub fn targets(
    layers: &[LayerResult],
    scene: Option<&SceneTimes>,
    batch: Option<&(Timed, Timed)>,
) -> Vec<Target> {
    let mut out = Vec::new();
    let kinds: Vec<_> = {
        let mut k: Vec<_> = layers.iter().map(|r| r.kind).collect();
        k.dedup();
        k.sort_by_key(|k| k.name());
        k.dedup();
        k
    };
    let find = |kind, side| layers.iter().find(|r| r.kind == kind && r.side == side);
    for &kind in &kinds {
        let m = find(kind, 4096).map(|r| r.stage(CUT).ms / r.stage(PLAIN).ms);
        out.push(target(
            format!(
                "cut of the 4096 x 4096 {} layer / its plain PNG decode",
                kind.name()
            ),
            m,
            0.5,
            false,
            "x",
        ));
    }
    // per kind run at both ends; one NOT RUN line when no kind was
    let per_mp = |r: &LayerResult| r.stage(CUT).ms / (r.texels() as f64 / 1e6);
    let both: Vec<_> = kinds
        .iter()
        .filter_map(|&k| Some((k, find(k, 1024)?, find(k, 8192)?)))
        .collect();
    if both.is_empty() {
        out.push(target(
            "cut time per MP: 64 MP / 1 MP".into(),
            None,
            1.5,
            false,
            "x",
        ));
    }
    for (kind, small, big) in both {
        out.push(target(
            format!("cut time per MP, {}: 64 MP / 1 MP", kind.name()),
            Some(per_mp(big) / per_mp(small)),
            1.5,
            false,
            "x",
        ));
    }
    for r in layers {
        out.push(target(
            format!(
                "peak heap, decode + cut, {} {} x {} (budget {:.0} MiB)",
                r.kind.name(),
                r.side,
                r.side,
                mib(r.memory_budget())
            ),
            Some(mib(r.peak_load_cut())),
            mib(r.memory_budget()),
            false,
            "MiB",
        ));
    }
    out.push(target(
        "scoring 1920x1080, 8 layers, 32 samples, 1 thread / decode of the 8 PNGs".into(),
        scene.map(|s| s.score_1.ms / s.decode.ms),
        1.0,
        false,
        "x",
    ));
    out.push(target(
        "batch of 64 layers: speed-up of 2 threads over 1".into(),
        batch.map(|(a, b)| a.ms / b.ms),
        1.8,
        true,
        "x",
    ));
    out
}

/// Prints MET / MISSED (by how much) / NOT RUN for each target.
pub fn print_targets(targets: &[Target]) {
    println!("\n== targets ==");
    for t in targets {
        let rel = if t.at_least { "at least" } else { "at most" };
        let verdict = match t.met {
            None => "NOT RUN (its size or section was left out)".to_string(),
            Some(true) => format!("MET: {:.3} {}, {rel} {:.3}", t.measured, t.unit, t.limit),
            Some(false) => format!(
                "MISSED by {:.2}x: {:.3} {}, {rel} {:.3}",
                if t.at_least {
                    t.limit / t.measured
                } else {
                    t.measured / t.limit
                },
                t.measured,
                t.unit,
                t.limit
            ),
        };
        println!("{}: {verdict}", t.name);
    }
}

fn timed(t: &Timed) -> Value {
    json!({"ms": t.ms, "runs_ms": t.runs, "cpu_ms": t.cpu_ms, "peak_heap_bytes": t.peak})
}

/// Writes the numbers to `target/bench-stages.json` (or under
/// `CARGO_TARGET_DIR` when it is set).
pub fn write_json(
    layers: &[LayerResult],
    scene: Option<&SceneTimes>,
    batch: Option<&(Timed, Timed)>,
    targets: &[Target],
    load: &str,
) {
    let layers: Vec<Value> = layers
        .iter()
        .map(|r| {
            let plain = r.stage(PLAIN).ms;
            let stages: Vec<Value> = r
                .stages
                .iter()
                .map(|(n, t)| {
                    let mut v = timed(t);
                    v["stage"] = json!(n);
                    v["mp_per_s"] = json!(mps(r.texels(), t.ms));
                    v["ratio_to_decode"] = json!(t.ms / plain);
                    v
                })
                .collect();
            json!({
                "kind": r.kind.name(), "width": r.side, "height": r.side, "runs": r.runs,
                "png_bytes": r.png_bytes, "stages": stages,
                "peak_heap_decode_cut_bytes": r.peak_load_cut(),
                "peak_heap_cut_bytes": r.peak_cut(),
                "memory_budget_bytes": r.memory_budget(),
                "decode_layer_ms": r.stage(DECODE).ms,
                "mesh": {"vertices": r.mesh.0, "opaque_triangles": r.mesh.1, "blended_triangles": r.mesh.2},
                "notes": r.notes,
            })
        })
        .collect();
    let scene = scene.map(|s| {
        json!({"decode_8_png": timed(&s.decode), "cut_ms": s.cut_ms,
               "score_1_thread": timed(&s.score_1),
               "score_n_threads": timed(&s.score_n), "threads": s.threads,
               "frames": s.frames, "texels": s.texels})
    });
    let batch = batch.map(|(a, b)| {
        json!({"layers": super::batch::LAYERS, "side": super::batch::SIDE,
               "one_thread": timed(a), "two_threads": timed(b), "speedup": a.ms / b.ms})
    });
    let targets: Vec<Value> = targets
        .iter()
        .map(|t| {
            json!({"target": t.name, "measured": t.measured.is_finite().then_some(t.measured),
                   "limit": t.limit, "at_least": t.at_least, "unit": t.unit,
                   "status": match t.met { None => "not run", Some(true) => "met", Some(false) => "missed" }})
        })
        .collect();
    let doc = json!({
        "settings": {"budget": 64, "filter": "bilinear", "mip_levels": 0, "cut_threads": 1},
        "load_average_at_end": load,
        "layers": layers, "scene": scene, "batch": batch, "targets": targets,
    });
    let dir = std::env::var_os("CARGO_TARGET_DIR")
        .map(std::path::PathBuf::from)
        .unwrap_or_else(|| std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target"));
    let path = dir.join("bench-stages.json");
    match underdraw::io::write_atomic(&path, &serde_json::to_vec_pretty(&doc).unwrap()) {
        Ok(()) => println!("numbers written to {}", path.display()),
        Err(e) => eprintln!("error: {e}"),
    }
}
