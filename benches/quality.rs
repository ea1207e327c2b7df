//! Quality benchmark: opaque capture, excess and saving of cuts at a range
//! of budgets, with both filters, over three sets of layers: the demo
//! layers, a generated terrain-like set (skylines with window holes, wooded
//! hills, mountain ranges, cloud banks, tiling strips; soft edges) and a
//! generated hard-edged set (pixel-art characters, props, UI icons and
//! frames, tiles; alpha 0 or 255). A table, not a pass/fail test.
//!
//! Run: `cargo bench --bench quality` (every set, budgets 8, 16, 24, 32,
//! 64, 256, both filters). Options: `--quick` (budgets 8, 16, 64, the first
//! five layers of each set), `--budgets 16,64`, `--sets demo,terrain,sprites`,
//! `--filters bilinear,nearest`, `--layers` (a line per layer, not only the
//! medians), `--out FILE` (the per-layer rows as CSV; default
//! `target/bench-quality.csv`), `--before FILE` (a CSV of an earlier run:
//! its medians are printed beside the new ones).
//!
//! Per cut: vertices, opaque capture (opaque area / safe-opaque area),
//! excess (covered area beyond the must-cover region, as a share of it),
//! the saving as a share of the layer's rectangle ((opaque area + rectangle
//! area - covered area) / rectangle area), and whether it "stopped short":
//! ended more than 2 vertices under its budget while its capture was below
//! 0.99 or its excess above 0.01.

#[path = "quality/sets.rs"]
mod sets;

use sets::Layer;
use std::collections::BTreeMap;
use std::path::Path;
use std::time::Instant;
use underdraw::cut::cut_layer;
use underdraw::io::load_alpha;
use underdraw::settings::{CutSettings, Filter, FilterMode, Wrap};

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n == 0 {
        return f64::NAN;
    }
    if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2.0
    }
}

struct Args {
    budgets: Vec<usize>,
    sets: Vec<String>,
    filters: Vec<FilterMode>,
    per_layer: usize,
    layers: bool,
    out: String,
    before: Option<String>,
}

fn list(v: &str) -> Vec<String> {
    v.split(',').map(str::to_string).collect()
}

fn parse_args() -> Args {
    let mut a = Args {
        budgets: vec![8, 16, 24, 32, 64, 256],
        sets: list("demo,terrain,sprites"),
        filters: vec![FilterMode::Bilinear, FilterMode::Nearest],
        per_layer: usize::MAX,
        layers: false,
        out: "target/bench-quality.csv".into(),
        before: None,
    };
    let mut it = std::env::args().skip(1);
    while let Some(arg) = it.next() {
        match arg.as_str() {
            "--quick" => {
                a.budgets = vec![8, 16, 64];
                a.per_layer = 5;
            }
            "--budgets" => {
                a.budgets = list(&it.next().expect("--budgets LIST"))
                    .iter()
                    .map(|b| b.parse().expect("a budget"))
                    .collect()
            }
            "--sets" => a.sets = list(&it.next().expect("--sets LIST")),
            "--filters" => {
                a.filters = list(&it.next().expect("--filters LIST"))
                    .iter()
                    .map(|f| match f.as_str() {
                        "nearest" => FilterMode::Nearest,
                        "bilinear" => FilterMode::Bilinear,
                        other => panic!("unknown filter {other}"),
                    })
                    .collect()
            }
            "--layers" => a.layers = true,
            "--out" => a.out = it.next().expect("--out FILE"),
            "--before" => a.before = Some(it.next().expect("--before FILE")),
            _ => {} // `cargo bench` passes --bench
        }
    }
    a
}

fn demo() -> Vec<Layer> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers");
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .expect("demo-layers/ exists")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "png"))
        .collect();
    files.sort();
    files
        .iter()
        .map(|f| {
            let name = f.file_name().unwrap().to_string_lossy().into_owned();
            // default settings, as the README's quality table
            Layer {
                name,
                map: load_alpha(f).unwrap(),
                wrap: Wrap::None,
            }
        })
        .collect()
}

/// One cut's figures.
struct Row {
    vertices: usize,
    capture: f64,
    excess: f64,
    saving: f64,
    ms: f64,
    short: bool,
}

type Key = (String, String, usize); // set, filter, budget

/// Medians per (set, filter, budget): vertices, capture, excess, saving,
/// and the count of cuts that stopped short.
fn medians(rows: &BTreeMap<Key, Vec<Row>>) -> BTreeMap<Key, [f64; 5]> {
    rows.iter()
        .map(|(k, v)| {
            let m = |f: fn(&Row) -> f64| median(v.iter().map(f).collect());
            (
                k.clone(),
                [
                    m(|r| r.vertices as f64),
                    m(|r| r.capture),
                    m(|r| r.excess),
                    m(|r| r.saving),
                    v.iter().filter(|r| r.short).count() as f64,
                ],
            )
        })
        .collect()
}

fn read_before(path: &str) -> BTreeMap<Key, Vec<Row>> {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{path}: {e}"));
    let mut out: BTreeMap<Key, Vec<Row>> = BTreeMap::new();
    for line in text.lines().skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        let key = (f[0].to_string(), f[1].to_string(), f[2].parse().unwrap());
        out.entry(key).or_default().push(Row {
            vertices: f[4].parse().unwrap(),
            capture: f[5].parse().unwrap(),
            excess: f[6].parse().unwrap(),
            saving: f[7].parse().unwrap(),
            ms: f[8].parse().unwrap(),
            short: f[9] == "1",
        });
    }
    out
}

fn main() {
    let args = parse_args();
    let mut csv = String::from("set,filter,budget,layer,vertices,capture,excess,saving,ms,short\n");
    let mut rows: BTreeMap<Key, Vec<Row>> = BTreeMap::new();
    for set in &args.sets {
        let layers: Vec<Layer> = match set.as_str() {
            "demo" => demo(),
            "terrain" => sets::terrain(),
            "sprites" => sets::sprites(),
            other => panic!("unknown set {other} (demo, terrain, sprites)"),
        };
        for layer in layers.iter().take(args.per_layer) {
            for &mode in &args.filters {
                let fname = if mode == FilterMode::Nearest {
                    "nearest"
                } else {
                    "bilinear"
                };
                for &budget in &args.budgets {
                    let settings = CutSettings {
                        budget,
                        filter: Filter {
                            mode,
                            mip_levels: 0,
                        },
                        wrap: layer.wrap,
                        ..CutSettings::default()
                    };
                    let t = Instant::now();
                    let out = cut_layer(&layer.map, &layer.name, &settings);
                    let ms = t.elapsed().as_secs_f64() * 1000.0;
                    for n in out.notes.iter().filter(|n| n.contains("left out")) {
                        eprintln!("FALLBACK {} {fname} {budget}: {n}", layer.name);
                    }
                    let s = &out.mesh.stats;
                    let rect = (layer.map.width * layer.map.height) as f64;
                    let row = Row {
                        vertices: s.vertices,
                        capture: s.opaque_capture(),
                        excess: s.excess_share(),
                        saving: (s.opaque_area + rect - s.covered_area) / rect,
                        ms,
                        short: s.vertices + 2 < budget
                            && (s.opaque_capture() < 0.99 || s.excess_share() > 0.01),
                    };
                    if args.layers {
                        println!(
                            "{set:<8} {fname:<8} {budget:>4} {:<16} {:>4} v  capture {:>6.1}%  excess {:>7.1}%  saving {:>6.1}%  {:>7.0} ms{}",
                            layer.name,
                            row.vertices,
                            100.0 * row.capture,
                            100.0 * row.excess,
                            100.0 * row.saving,
                            row.ms,
                            if row.short { "  short" } else { "" }
                        );
                    }
                    csv += &format!(
                        "{set},{fname},{budget},{},{},{:.5},{:.5},{:.5},{:.1},{}\n",
                        layer.name,
                        row.vertices,
                        row.capture,
                        row.excess,
                        row.saving,
                        row.ms,
                        row.short as u8
                    );
                    rows.entry((set.clone(), fname.to_string(), budget))
                        .or_default()
                        .push(row);
                }
            }
        }
    }
    if let Err(e) = std::fs::write(&args.out, &csv) {
        eprintln!("{}: {e}", args.out);
    }
    let before = args.before.as_deref().map(|p| medians(&read_before(p)));
    println!("\nmedians per set, filter and budget (short: cuts that stopped > 2 vertices under budget with capture < 0.99 or excess > 0.01)");
    println!(
        "{:<8} {:<8} {:>6} {:>8} {:>8} {:>8} {:>8} {:>6}{}",
        "set",
        "filter",
        "budget",
        "vertices",
        "capture",
        "excess",
        "saving",
        "short",
        if before.is_some() {
            "   | before: vertices capture excess saving short"
        } else {
            ""
        }
    );
    for (k, m) in medians(&rows) {
        let mut line = format!(
            "{:<8} {:<8} {:>6} {:>8.1} {:>7.1}% {:>7.1}% {:>7.1}% {:>6}",
            k.0,
            k.1,
            k.2,
            m[0],
            100.0 * m[1],
            100.0 * m[2],
            100.0 * m[3],
            m[4]
        );
        if let Some(b) = before.as_ref().and_then(|b| b.get(&k)) {
            line += &format!(
                "   | {:>8.1} {:>6.1}% {:>6.1}% {:>6.1}% {:>5}",
                b[0],
                100.0 * b[1],
                100.0 * b[2],
                100.0 * b[3],
                b[4]
            );
        }
        println!("{line}");
    }
}
