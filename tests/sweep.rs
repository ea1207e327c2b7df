//! `underdraw sweep` through the binary: the CSV's numbers obey their
//! definitions and the knee printed is the one they define.

use std::fs;
use std::path::PathBuf;
use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

struct Row {
    budget: usize,
    vertices: usize,
    opaque: f64,
    covered: f64,
    rect: f64,
    saving: f64,
}

/// Runs a sweep of a demo layer; returns the CSV rows and the knee printed.
fn sweep(layer: &str, knee: &str) -> (Vec<Row>, usize) {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let out = std::env::temp_dir().join(format!(
        "underdraw-sweep-{layer}-{knee}-{}",
        std::process::id()
    ));
    let _ = fs::remove_dir_all(&out);
    let o = Command::new(BIN)
        .arg("sweep")
        .arg(root.join("demo-layers").join(format!("{layer}.png")))
        .arg("--out")
        .arg(&out)
        .args(["--knee", knee])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let stdout = String::from_utf8_lossy(&o.stdout);
    let printed: usize = stdout
        .lines()
        .find_map(|l| l.strip_prefix("knee: budget "))
        .and_then(|l| l.split_whitespace().next())
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("no knee line in\n{stdout}"));
    let csv = fs::read_to_string(out.join(format!("{layer}.sweep.csv"))).unwrap();
    let _ = fs::remove_dir_all(&out);
    let mut lines = csv.lines();
    assert_eq!(
        lines.next(),
        Some("budget,vertices,opaque_area,covered_area,rect_area,saving")
    );
    let rows = lines
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            Row {
                budget: f[0].parse().unwrap(),
                vertices: f[1].parse().unwrap(),
                opaque: f[2].parse().unwrap(),
                covered: f[3].parse().unwrap(),
                rect: f[4].parse().unwrap(),
                saving: f[5].parse().unwrap(),
            }
        })
        .collect();
    (rows, printed)
}

/// Knee: the smallest budget whose saving reaches the fraction of the
/// saving at the largest budget (the 80/20 rule by default, common
/// practice, no source), recomputed here from the CSV.
#[test]
fn the_knee_obeys_its_definition() {
    for (layer, knee) in [
        ("ui-panel", "0.8"),
        ("ui-panel", "0.99"),
        ("ui-button", "0.5"),
    ] {
        let (rows, printed) = sweep(layer, knee);
        let (w, h) = image::image_dimensions(
            PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(format!("demo-layers/{layer}.png")),
        )
        .unwrap();
        let budgets: Vec<usize> = rows.iter().map(|r| r.budget).collect();
        assert_eq!(
            budgets,
            [4, 6, 8, 12, 16, 24, 32, 48, 64, 96, 128, 192, 256]
        );
        for r in &rows {
            assert!(r.vertices <= r.budget);
            assert_eq!(r.rect, (w * h) as f64);
            assert!(r.opaque <= r.covered && r.covered <= r.rect);
            assert_eq!(r.saving, r.opaque + (r.rect - r.covered));
        }
        let top = rows.iter().max_by_key(|r| r.budget).unwrap().saving;
        let f: f64 = knee.parse().unwrap();
        let expect = rows
            .iter()
            .filter(|r| r.saving >= f * top)
            .map(|r| r.budget)
            .min()
            .unwrap();
        assert_eq!(printed, expect, "{layer} at {knee}");
    }
}

#[test]
fn a_knee_outside_0_1_is_refused() {
    let o = Command::new(BIN)
        .args(["sweep", "demo-layers/ui-button.png", "--knee", "1.5"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--knee 1.5"));
}
