//! Every demo layer, cut over a grid of budgets, filters and mip levels,
//! must pass the independent contract checker, stay within its budget and
//! never take the fallback path (the "left out" note).
//!
//! The grid is 8 layers x 5 budgets x 2 filters x 2 mip levels = 160 cuts;
//! they run in parallel on rayon's pool (both cores) and each PNG is decoded
//! once. Failures are collected and reported together.

use rayon::prelude::*;
use std::path::{Path, PathBuf};
use std::time::Instant;
use underdraw::alpha::AlphaMap;
use underdraw::check::check_mesh;
use underdraw::cut::cut_layer;
use underdraw::io::load_alpha;
use underdraw::settings::{CutSettings, Filter, FilterMode};

const BUDGETS: [usize; 5] = [4, 8, 16, 64, 256];
const MODES: [FilterMode; 2] = [FilterMode::Nearest, FilterMode::Bilinear];
const MIP_LEVELS: [u32; 2] = [0, 2];

fn demo_layers() -> Vec<(String, AlphaMap)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers");
    let mut paths: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.expect("directory entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "png"))
        .collect();
    paths.sort();
    paths
        .par_iter()
        .map(|p| {
            let name = p.file_name().unwrap().to_string_lossy().into_owned();
            let map = load_alpha(p).unwrap_or_else(|e| panic!("{e}"));
            (name, map)
        })
        .collect()
}

/// Checks one cut; returns the problems found (empty when it is fine).
fn cut_and_check(name: &str, map: &AlphaMap, settings: &CutSettings) -> Vec<String> {
    let tag = format!(
        "{name} budget {} {:?} mip {}",
        settings.budget, settings.filter.mode, settings.filter.mip_levels
    );
    let out = cut_layer(map, name, settings);
    let mesh = &out.mesh;
    let mut problems = Vec::new();
    match check_mesh(mesh, map) {
        Err(e) => problems.push(format!("{tag}: check refused the mesh: {e}")),
        Ok(report) if !report.holds() => {
            for v in report.violations() {
                problems.push(format!("{tag}: contract violated: {v}"));
            }
        }
        Ok(_) => {}
    }
    if mesh.vertex_count() > settings.budget {
        problems.push(format!(
            "{tag}: {} vertices, over the budget",
            mesh.vertex_count()
        ));
    }
    for note in out.notes.iter().filter(|n| n.contains("left out")) {
        problems.push(format!("{tag}: fallback path taken: {note}"));
    }
    // sky.png is RGB without alpha, so every texel is opaque. With clamp
    // addressing every mip block is opaque and erosion removes nothing, so the
    // safe and must-cover regions are both the image rectangle: its 4 corners
    // and 2 opaque triangles are the least any mesh can use, and nothing is
    // left to blend.
    if name == "sky.png" {
        let got = (
            mesh.vertex_count(),
            mesh.opaque.triangle_count(),
            mesh.blended.triangle_count(),
        );
        if got != (4, 2, 0) {
            problems.push(format!(
                "{tag}: fully opaque layer gave (vertices, opaque, blended triangles) = {got:?}, expected (4, 2, 0)"
            ));
        }
    }
    problems
}

#[test]
fn every_demo_layer_keeps_the_contract_at_every_setting() {
    let start = Instant::now();
    let layers = demo_layers();
    let names: Vec<&str> = layers.iter().map(|(n, _)| n.as_str()).collect();
    assert!(
        names.contains(&"sky.png"),
        "demo-layers/ should hold sky.png; found {names:?}"
    );
    eprintln!("decoded {} layers in {:.1?}", layers.len(), start.elapsed());

    let mut cases = Vec::new();
    for (i, _) in layers.iter().enumerate() {
        for budget in BUDGETS {
            for mode in MODES {
                for mip_levels in MIP_LEVELS {
                    let settings = CutSettings {
                        budget,
                        filter: Filter { mode, mip_levels },
                        ..CutSettings::default()
                    };
                    cases.push((i, settings));
                }
            }
        }
    }
    // Largest layers first, so the pool's last jobs are the short ones.
    cases.sort_by_key(|(i, _)| std::cmp::Reverse(layers[*i].1.alpha.len()));

    let results: Vec<(Vec<String>, String)> = cases
        .par_iter()
        .map(|(i, settings)| {
            let (name, map) = &layers[*i];
            let t = Instant::now();
            let problems = cut_and_check(name, map, settings);
            let timing = format!(
                "{name} budget {} {:?} mip {}: {:.2?}",
                settings.budget,
                settings.filter.mode,
                settings.filter.mip_levels,
                t.elapsed()
            );
            (problems, timing)
        })
        .collect();
    for (_, timing) in &results {
        eprintln!("{timing}");
    }
    let problems: Vec<&String> = results.iter().flat_map(|(p, _)| p).collect();
    eprintln!("{} cuts in {:.1?}", cases.len(), start.elapsed());
    assert!(
        problems.is_empty(),
        "{} problem(s):\n{}",
        problems.len(),
        problems
            .iter()
            .map(|s| s.as_str())
            .collect::<Vec<_>>()
            .join("\n")
    );
}
