//! Stage benchmark: the time and peak heap of each stage of the cut on
//! generated layers of 1 to 64 megapixels, the scoring of a scene and a
//! batch cut on 1 and 2 threads, checked against the performance targets.
//! A report, not a pass/fail test.
//!
//! Run: `cargo bench --bench stages` (all sizes: 1, 4, 16, 64 MP), or a
//! quick run: `cargo bench --bench stages -- --sizes 1,4`. Options:
//! `--sizes LIST` (megapixels, each a square of 1024 x 1024 times a
//! power of 4), `--kinds LIST` (skyline, clouds, rigging; default all
//! three), `--kinds-64 LIST` (the kinds run at 64 MP and more; default
//! skyline, to keep the 64 MP run within a few minutes), `--runs N` (runs
//! per stage, median kept; default 3 up to 16 MP, 1 from 64 MP),
//! `--no-layers`, `--no-scene`, `--no-batch`, `--no-process` (the whole
//! `underdraw cut` process on a 1024² and a 4096² soft layer against
//! their decode, [`process`]), `--save-layers DIR` (also
//! write each generated layer's PNG there, to look at or cut by hand). Writes the numbers as JSON
//! to `target/bench-stages.json`.
//!
//! Invariants: only the library's public API is used, so the benchmark
//! keeps working while the stages' internals change (the split times the
//! public stages of `underdraw::cut`, the ones `cut_layer` runs); every cut stage runs in a 1-thread
//! rayon pool; a stage's time is the median of its runs; ratios are to the
//! plain PNG decode (`image::load_from_memory`) of the same PNG, timed in
//! the same process, since the machine's speed drifts; a stage's peak heap
//! is the most live heap bytes during it above those live when it began.

#[path = "stages/batch.rs"]
mod batch;
#[path = "stages/heap.rs"]
mod heap;
#[path = "stages/layers.rs"]
mod layers;
#[path = "stages/process.rs"]
mod process;
#[path = "stages/report.rs"]
mod report;
#[path = "stages/scene.rs"]
mod scene;
#[path = "stages/split.rs"]
mod split;

use layers::Kind;
use std::time::Instant;

#[global_allocator]
static ALLOC: heap::Counting = heap::Counting;

/// A measured section: the median time of its runs and its peak heap.
#[derive(Clone, Debug)]
pub struct Timed {
    /// Median of the runs, milliseconds.
    pub ms: f64,
    /// Every run, milliseconds.
    pub runs: Vec<f64>,
    /// Most live heap bytes during any run, above those live as it began.
    pub peak: usize,
    /// Most live heap bytes during any run, absolute.
    pub peak_abs: usize,
    /// Median CPU time of the process (all threads, user + system) per
    /// run, milliseconds; `None` where `/proc/self/stat` cannot be read.
    pub cpu_ms: Option<f64>,
}

/// CPU time of this process so far (user + system, all threads), ms,
/// from `/proc/self/stat` fields 14 and 15, in clock ticks of 1/100 s
/// (Linux's USER_HZ, proc(5) and times(2); from memory).
fn cpu_ms() -> Option<f64> {
    let stat = std::fs::read_to_string("/proc/self/stat").ok()?;
    // fields after the command name, which is in parentheses
    let rest = &stat[stat.rfind(')')? + 1..];
    let f: Vec<&str> = rest.split_whitespace().collect();
    let ticks: f64 = f.get(11)?.parse::<f64>().ok()? + f.get(12)?.parse::<f64>().ok()?;
    Some(ticks * 10.0)
}

fn median(v: &[f64]) -> f64 {
    let mut sorted = v.to_vec();
    sorted.sort_by(f64::total_cmp);
    let n = sorted.len();
    if n % 2 == 1 {
        sorted[n / 2]
    } else {
        (sorted[n / 2 - 1] + sorted[n / 2]) / 2.0
    }
}

/// Runs `f` `runs` times (at least once) and keeps the last result; each
/// earlier result is dropped before the next run starts.
pub fn measure<T>(runs: usize, mut f: impl FnMut() -> T) -> (Timed, T) {
    let mut last: Option<T> = None;
    let (mut times, mut cpu, mut peak, mut peak_abs) = (Vec::new(), Vec::new(), 0, 0);
    for _ in 0..runs.max(1) {
        drop(last.take());
        let base = heap::live();
        heap::reset_peak();
        let c = cpu_ms();
        let t = Instant::now();
        let v = f();
        times.push(t.elapsed().as_secs_f64() * 1e3);
        if let (Some(a), Some(b)) = (c, cpu_ms()) {
            cpu.push(b - a);
        }
        let p = heap::peak();
        peak = peak.max(p.saturating_sub(base));
        peak_abs = peak_abs.max(p);
        last = Some(v);
    }
    let timed = Timed {
        ms: median(&times),
        cpu_ms: (cpu.len() == times.len()).then(|| median(&cpu)),
        runs: times,
        peak,
        peak_abs,
    };
    (timed, last.expect("at least one run"))
}

/// [`measure`] for a section whose result is not needed.
pub fn median_ms(runs: usize, f: impl FnMut()) -> Timed {
    measure(runs, f).0
}

/// The command line.
pub struct Args {
    /// Sides of the square layers, texels.
    pub sides: Vec<u32>,
    /// Kinds of layer at each size below 64 MP.
    pub kinds: Vec<Kind>,
    /// Kinds of layer from 64 MP.
    pub kinds_big: Vec<Kind>,
    /// Runs per stage, when given.
    pub runs: Option<usize>,
    /// Where to write the generated layers' PNGs, if anywhere.
    pub save: Option<std::path::PathBuf>,
    /// Run the scene's scoring.
    pub scene: bool,
    /// Run the batch.
    pub batch: bool,
    /// Run the whole process on one big layer.
    pub process: bool,
}

fn usage(why: &str) -> ! {
    eprintln!(
        "error: {why}\n\nusage: cargo bench --bench stages -- [--sizes 1,4,16,64] \
         [--kinds skyline,clouds,rigging] [--kinds-64 skyline] [--runs N] \
         [--no-layers] [--no-scene] [--no-batch] [--no-process] [--save-layers DIR]"
    );
    std::process::exit(2)
}

fn parse_args() -> Args {
    let mut a = Args {
        sides: vec![1024, 2048, 4096, 8192],
        kinds: Kind::ALL.to_vec(),
        kinds_big: vec![Kind::Skyline],
        runs: None,
        save: None,
        scene: true,
        batch: true,
        process: true,
    };
    let mut no_layers = false;
    let mut it = std::env::args().skip(1);
    while let Some(arg) = it.next() {
        let mut value = |name: &str| {
            it.next()
                .unwrap_or_else(|| usage(&format!("{name} needs a value")))
        };
        match arg.as_str() {
            // cargo bench passes --bench to a bench without the default harness
            "--bench" => {}
            "--sizes" => {
                a.sides = value("--sizes")
                    .split(',')
                    .map(|s| {
                        let mp: u32 = s.trim().parse().unwrap_or_else(|_| {
                            usage(&format!("--sizes: {s:?} is not a number of megapixels"))
                        });
                        let root = (mp as f64).sqrt().round() as u32;
                        if mp == 0 || root * root != mp || !root.is_power_of_two() || root > 16 {
                            usage(&format!(
                                "--sizes: {mp} MP is not 1024 x 1024 times a power of 4 (give 1, 4, 16, 64 or 256)"
                            ));
                        }
                        1024 * root
                    })
                    .collect()
            }
            "--kinds" | "--kinds-64" => {
                let kinds = value(&arg)
                    .split(',')
                    .map(|s| {
                        Kind::parse(s.trim()).unwrap_or_else(|| {
                            usage(&format!(
                                "{arg}: unknown kind {s:?} (give skyline, clouds or rigging)"
                            ))
                        })
                    })
                    .collect();
                if arg == "--kinds" {
                    a.kinds = kinds;
                } else {
                    a.kinds_big = kinds;
                }
            }
            "--runs" => {
                let v = value("--runs");
                a.runs = Some(
                    v.parse()
                        .ok()
                        .filter(|&n: &usize| n >= 1)
                        .unwrap_or_else(|| usage(&format!("--runs: {v:?} is not a count of 1 or more"))),
                );
            }
            "--no-layers" => no_layers = true,
            "--save-layers" => a.save = Some(value("--save-layers").into()),
            "--no-scene" => a.scene = false,
            "--no-batch" => a.batch = false,
            "--no-process" => a.process = false,
            other => usage(&format!("unknown option {other:?}")),
        }
    }
    if no_layers {
        a.sides.clear();
    }
    a
}

fn uptime() -> String {
    std::fs::read_to_string("/proc/loadavg")
        .map(|s| s.split_whitespace().take(3).collect::<Vec<_>>().join(" "))
        .unwrap_or_else(|_| "unknown".into())
}

fn main() {
    let args = parse_args();
    let pool = |n| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .expect("a rayon pool starts")
    };
    let (one, two) = (pool(1), pool(2));
    let started = Instant::now();
    println!(
        "underdraw stage benchmark: budget 64, bilinear, mip level 0, cut stages on 1 thread; load average at start {}",
        uptime()
    );
    let mut layers = Vec::new();
    for &side in &args.sides {
        let big = side >= 8192;
        let runs = args.runs.unwrap_or(if big { 1 } else { 3 });
        for &kind in if big { &args.kinds_big } else { &args.kinds } {
            let r = split::bench_layer(kind, side, runs, &one, args.save.as_deref());
            report::print_layer(&r);
            layers.push(r);
        }
    }
    let tmp = std::env::temp_dir().join(format!("underdraw-bench-stages-{}", std::process::id()));
    std::fs::create_dir_all(&tmp).expect("a temporary folder is created");
    let scene = args.scene.then(|| {
        let dir = tmp.join("scene");
        std::fs::create_dir_all(&dir).expect("the scene folder is created");
        let s = scene::run(&dir, 3, &one, &two);
        report::print_scene(&s);
        s
    });
    let batch = args.batch.then(|| {
        let dir = tmp.join("batch");
        let files = batch::write_inputs(&dir);
        let t1 = batch::run(&dir, &files, &one, 3);
        let t2 = batch::run(&dir, &files, &two, 3);
        report::print_batch(&t1, &t2);
        (t1, t2)
    });
    let whole: Vec<process::ProcessResult> = if args.process {
        let runs = args.runs.unwrap_or(3);
        let r: Vec<_> = [1024, 4096]
            .iter()
            .map(|&side| {
                // with --save-layers, the layers and outputs stay there
                let dir = args.save.clone().unwrap_or_else(|| tmp.join("process"));
                process::run(&dir, side, runs)
            })
            .collect();
        process::print(&r);
        r
    } else {
        Vec::new()
    };
    let _ = std::fs::remove_dir_all(&tmp);
    let load = uptime();
    let mut targets = report::targets(&layers, scene.as_ref(), batch.as_ref());
    targets.extend(process::targets(&whole));
    report::print_targets(&targets);
    println!(
        "\nload average at end {load} (2 cores shared); total {:.0} s",
        started.elapsed().as_secs_f64()
    );
    report::write_json(&layers, scene.as_ref(), batch.as_ref(), &targets, &load);
}
