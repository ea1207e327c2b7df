//! The fuzz targets' properties (`fuzz/src/lib.rs`, compiled in here by
//! `#[path]`) run over every committed fuzz input: the minimized seed
//! corpora `fuzz/seeds/<target>/` and the minimized crashes
//! `fuzz/regressions/<target>/`. A crash the fuzzer found stays a failing
//! test until it is fixed; the seeds keep the paths they reach covered.
//!
//! Each test runs every file of its target, collects the ones whose
//! property panics and fails naming them all. See `fuzz/README.md` for how
//! to add a crash.

#[path = "../fuzz/src/lib.rs"]
#[allow(dead_code)]
mod props;

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use underdraw::io::decode_layer;

/// Files of `fuzz/<kind>/<target>/`, sorted; none when the folder is absent.
fn files(kind: &str, target: &str) -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fuzz")
        .join(kind)
        .join(target);
    let mut v: Vec<PathBuf> = match std::fs::read_dir(&dir) {
        Ok(rd) => rd
            .map(|e| e.expect("readable fuzz folder").path())
            .filter(|p| p.is_file())
            .collect(),
        Err(_) => Vec::new(),
    };
    v.sort();
    v
}

/// Runs `property` over the seeds and regressions of `target`.
fn run(target: &str, property: fn(&[u8])) {
    let seeds = files("seeds", target);
    assert!(
        seeds.len() >= 3,
        "fuzz/seeds/{target}/ holds {} files: the seed corpus is missing (see fuzz/README.md)",
        seeds.len()
    );
    let mut failures = Vec::new();
    for f in seeds.iter().chain(&files("regressions", target)) {
        let data = std::fs::read(f).unwrap_or_else(|e| panic!("{}: {e}", f.display()));
        if let Err(p) = catch_unwind(AssertUnwindSafe(|| property(&data))) {
            let msg = p
                .downcast_ref::<String>()
                .cloned()
                .or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string()))
                .unwrap_or_default();
            failures.push(format!("{}: {msg}", f.display()));
        }
    }
    assert!(
        failures.is_empty(),
        "{} {target} input(s) fail:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

#[test]
fn cut_png_inputs() {
    run("cut_png", props::cut_png);
}

#[test]
fn scene_json_inputs() {
    // scene images are relative to the working directory, which cargo test
    // sets to the package root, as `cargo fuzz run` from the root does
    run("scene_json", props::scene_json);
}

#[test]
fn mesh_json_inputs() {
    run("mesh_json", props::mesh_json);
}

#[test]
fn fit_mask_inputs() {
    run("fit_mask", props::fit_mask);
}

/// The hand-encoded seed PNGs (fuzz/make_seeds.py) decode to the alpha the
/// PNG standard gives them, so the cut_png seeds start where they claim.
#[test]
fn seed_pngs_decode_per_the_png_standard() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("fuzz/seeds/cut_png");
    let alpha = |name: &str| {
        let p = dir.join(name);
        let bytes = std::fs::read(&p).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
        decode_layer(&p, &bytes, &props::PNG_LIMITS)
            .unwrap_or_else(|e| panic!("{e}"))
            .alpha
    };
    // PNG (W3C, 2nd ed.) 11.3.2.1 tRNS: palette entries past the tRNS list
    // are fully opaque; here index 0 -> 0, 1 -> 128, 2 -> 255 (from memory)
    let pal = alpha("palette-trns.png");
    assert_eq!((pal.width, pal.height), (8, 8));
    assert_eq!([pal.get(0, 0), pal.get(1, 1), pal.get(3, 3)], [0, 128, 255]);
    // PNG 12.5 sample depth scaling: a 16-bit sample v*257 is v in 8 bits (from memory)
    let a16 = alpha("rgba16.png");
    let a8 = alpha("disc16-rgba.png");
    assert_eq!(a16.get(0, 0), 0);
    assert_eq!(a16.get(4, 4), 255);
    assert!(a8.get(8, 8) == 255 && a8.get(0, 0) == 0);
    // colour types 0 and 2 carry no alpha: every texel is opaque (PNG 6.1, from memory)
    assert!(alpha("grey-1bit.png").alpha.iter().all(|&a| a == 255));
    assert!(alpha("rgb-opaque.png").alpha.iter().all(|&a| a == 255));
}
