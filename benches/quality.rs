//! Quality benchmark over the demo layers: opaque capture and excess at a
//! few budgets, with the time per cut. A table, not a pass/fail test.
//!
//! Run: `cargo bench --bench quality` (optionally `-- 16 64 256` budgets).

use std::path::Path;
use std::time::Instant;
use underdraw::cut::cut_layer;
use underdraw::io::load_alpha;
use underdraw::settings::CutSettings;

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

fn main() {
    let budgets: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let budgets = if budgets.is_empty() {
        vec![16, 64]
    } else {
        budgets
    };
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers");
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .expect("demo-layers/ exists")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "png"))
        .collect();
    files.sort();
    let maps: Vec<_> = files
        .iter()
        .map(|f| {
            (
                f.file_name().unwrap().to_string_lossy().into_owned(),
                load_alpha(f).unwrap(),
            )
        })
        .collect();
    for &budget in &budgets {
        println!("\nbudget {budget}, bilinear, mip levels 0");
        println!(
            "{:<16} {:>10} {:>8} {:>9} {:>9} {:>8}",
            "layer", "size", "vertices", "capture", "excess", "ms"
        );
        let (mut caps, mut excs) = (Vec::new(), Vec::new());
        for (name, map) in &maps {
            let settings = CutSettings {
                budget,
                ..CutSettings::default()
            };
            let t = Instant::now();
            let out = cut_layer(map, name, &settings);
            let ms = t.elapsed().as_secs_f64() * 1000.0;
            let s = &out.mesh.stats;
            let exc = if s.must_cover_area > 0.0 {
                s.excess() / s.must_cover_area
            } else {
                0.0
            };
            println!(
                "{:<16} {:>10} {:>8} {:>8.1}% {:>8.1}% {:>8.0}",
                name,
                format!("{}x{}", map.width, map.height),
                s.vertices,
                100.0 * s.opaque_capture(),
                100.0 * exc,
                ms
            );
            caps.push(s.opaque_capture());
            excs.push(exc);
        }
        println!(
            "{:<16} {:>10} {:>8} {:>8.1}% {:>8.1}%",
            "median",
            "",
            "",
            100.0 * median(caps),
            100.0 * median(excs)
        );
    }
}
