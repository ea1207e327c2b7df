//! The batch benchmark: 64 generated 512 x 512 layers (the three kinds,
//! each with its own seed) loaded, cut and written as mesh JSON, on a
//! 1-thread and on a 2-thread rayon pool.
//!
//! Invariants: each job is what `underdraw cut` does per layer (read the
//! PNG file, decode, `cut_layer`, serialize, [`write_atomic`]); every run
//! writes into a fresh folder; the inputs are written once, before any
//! timed run, and never overwritten.

use super::layers::{encode_png, generate, Kind};
use super::{heap, median_ms, Timed};
use rayon::prelude::*;
use rayon::ThreadPool;
use std::path::{Path, PathBuf};
use underdraw::cut::cut_layer;
use underdraw::io::{load_layer, write_atomic, ImageLimits};
use underdraw::settings::CutSettings;

/// Layers in the batch.
pub const LAYERS: usize = 64;
/// Side of each layer, texels.
pub const SIDE: u32 = 512;

/// Writes the batch's PNGs into `dir/in` and returns their paths.
pub fn write_inputs(dir: &Path) -> Vec<PathBuf> {
    let input = dir.join("in");
    std::fs::create_dir_all(&input).expect("the batch folder is created");
    (0..LAYERS)
        .map(|i| {
            let kind = Kind::ALL[i % Kind::ALL.len()];
            let png = encode_png(&generate(kind, SIDE, SIDE, 1000 + i as u64));
            let path = input.join(format!("{}-{i:02}.png", kind.name()));
            write_atomic(&path, &png).expect("a batch PNG is written");
            path
        })
        .collect()
}

/// Times the batch on `pool`, writing into `dir/out-<run>`. The heap's
/// peak is not tracked meanwhile ([`heap::set_tracking`]): one shared
/// counter updated by both threads would slow the run it measures.
pub fn run(dir: &Path, files: &[PathBuf], pool: &ThreadPool, runs: usize) -> Timed {
    let settings = CutSettings::default();
    let mut k = 0;
    heap::set_tracking(false);
    let mut timed = pool.install(|| {
        median_ms(runs, || {
            k += 1;
            let out = dir.join(format!("out-{}-{k}", pool.current_num_threads()));
            std::fs::create_dir_all(&out).expect("the batch output folder is created");
            files.par_iter().for_each(|f| {
                let layer =
                    load_layer(f, &ImageLimits::default()).unwrap_or_else(|e| panic!("{e}"));
                let name = f.file_name().unwrap().to_string_lossy().into_owned();
                let cut = cut_layer(&layer.alpha, &name, &settings);
                let json = serde_json::to_vec_pretty(&cut.mesh).expect("a mesh serializes");
                let stem = f.file_stem().unwrap().to_string_lossy().into_owned();
                write_atomic(&out.join(format!("{stem}.mesh.json")), &json)
                    .unwrap_or_else(|e| panic!("{e}"));
            });
        })
    });
    heap::set_tracking(true);
    timed.peak = 0;
    timed.peak_abs = 0;
    timed
}
