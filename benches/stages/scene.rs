//! The scoring benchmark: a 1920 x 1080 scene of eight generated layers
//! over 32 camera samples, written to a temporary folder as a scene file
//! and its PNGs, then loaded and cut through the library's scene API.
//!
//! Invariants: the cut ([`underdraw::scene::prepare::prepare_layers`]) is
//! timed apart from the scoring ([`score_frames`] of every strategy and
//! [`summarize`]), so the scoring time holds no cutting; the reference is
//! the plain decode ([`image::load_from_memory`]) of the eight PNGs, one
//! after the other, from bytes already in memory.

use super::layers::{backdrop, encode_png, generate, rounded, Kind};
use super::{median_ms, Timed};
use rayon::ThreadPool;
use std::path::Path;
use underdraw::io::write_atomic;
use underdraw::mesh::LayerMesh;
use underdraw::scene::budget::allocate_scene;
use underdraw::scene::draws::Strategy;
use underdraw::scene::file::load_scene;
use underdraw::scene::prepare::prepare_layers;
use underdraw::scene::score::{score_frames, summarize};

/// Camera samples of the scene.
pub const SAMPLES: u32 = 32;

/// The vertex total the allocation benchmark splits over the eight layers.
pub const VERTEX_TOTAL: usize = 400;

/// What the scoring benchmark measured.
pub struct SceneTimes {
    /// Decoding the eight PNGs, one thread.
    pub decode: Timed,
    /// Loading and cutting the eight layers (`prepare_layers`), once, one thread.
    pub cut_ms: f64,
    /// Scoring every strategy at every sample, one thread.
    pub score_1: Timed,
    /// The same on a pool of `threads` threads.
    pub score_n: Timed,
    /// Threads of the second pool.
    pub threads: usize,
    /// Choosing budgets for a vertex total of [`VERTEX_TOTAL`]
    /// (`allocate_scene`: every layer cut at every candidate budget, the
    /// weights and gains of each round, each choice scored), once, on
    /// the second pool.
    pub allocate_ms: f64,
    /// Frames rendered per scoring (strategies x samples).
    pub frames: usize,
    /// Total texels of the eight layers.
    pub texels: u64,
}

/// Writes the scene into `dir` and times it.
pub fn run(dir: &Path, runs: usize, one: &ThreadPool, many: &ThreadPool) -> SceneTimes {
    // (name, image, position, scale, parallax, fill_width), back to front
    let images: Vec<(&str, super::layers::Rgba)> = vec![
        ("sky", backdrop(1024, 540)),
        ("clouds", generate(Kind::Clouds, 2048, 512, 11)),
        ("far", generate(Kind::Skyline, 2048, 640, 12)),
        ("near", generate(Kind::Skyline, 2048, 768, 13)),
        ("rigging", generate(Kind::Rigging, 2048, 1024, 14)),
        ("ground", generate(Kind::Skyline, 2048, 256, 15)),
        ("panel", rounded(512, 256, 24.0)),
        ("button", rounded(128, 128, 64.0)),
    ];
    let place = [
        ([0, 0], 2.0, 0.1, true),
        ([0, 40], 1.0, 0.2, true),
        ([0, 300], 1.0, 0.35, true),
        ([0, 340], 1.0, 0.6, true),
        ([0, 150], 0.9, 0.8, true),
        ([0, 860], 1.0, 1.0, true),
        ([32, 32], 1.0, 0.0, false),
        ([1760, 920], 1.0, 0.0, false),
    ];
    let mut pngs = Vec::new();
    let mut entries = Vec::new();
    let mut texels = 0u64;
    for ((name, img), (pos, scale, parallax, repeat)) in images.iter().zip(place) {
        texels += img.width as u64 * img.height as u64;
        let png = encode_png(img);
        let file = format!("{name}.png");
        write_atomic(&dir.join(&file), &png).expect("the scene's PNG is written");
        pngs.push(png);
        entries.push(serde_json::json!({
            "name": name, "image": file, "cut": {"budget": 64},
            "position": pos, "scale": scale, "parallax": parallax, "fill_width": repeat,
        }));
    }
    let scene_json = serde_json::json!({
        "viewport": [1920, 1080],
        "camera": {"travel": 1920, "samples": SAMPLES},
        "layers": entries,
    });
    let path = dir.join("bench.scene.json");
    write_atomic(&path, &serde_json::to_vec_pretty(&scene_json).unwrap())
        .expect("the scene file is written");

    let decode = one.install(|| {
        median_ms(runs, || {
            for png in &pngs {
                std::hint::black_box(image::load_from_memory(png).expect("a PNG decodes"));
            }
        })
    });
    let scene = load_scene(&path).unwrap_or_else(|e| panic!("{e}"));
    let t = std::time::Instant::now();
    let layers = one
        .install(|| prepare_layers(&scene))
        .unwrap_or_else(|e| panic!("{e}"));
    let cut_ms = t.elapsed().as_secs_f64() * 1e3;
    let specs: Vec<_> = layers.iter().map(|l| l.spec.clone()).collect();
    let meshes: Vec<&LayerMesh> = layers.iter().map(|l| &l.mesh).collect();
    let cams = scene.camera_positions();
    let score = || {
        let frames = score_frames(&Strategy::ALL, &specs, &meshes, scene.viewport, &cams);
        std::hint::black_box(summarize(&frames, &specs, &meshes, scene.viewport));
    };
    let score_1 = one.install(|| median_ms(runs, score));
    let score_n = many.install(|| median_ms(runs, score));
    let t = std::time::Instant::now();
    many.install(|| std::hint::black_box(allocate_scene(&scene, &layers, VERTEX_TOTAL)))
        .unwrap_or_else(|e| panic!("{e}"));
    let allocate_ms = t.elapsed().as_secs_f64() * 1e3;
    SceneTimes {
        decode,
        cut_ms,
        score_1,
        score_n,
        threads: many.current_num_threads(),
        allocate_ms,
        frames: Strategy::ALL.len() * cams.len(),
        texels,
    }
}
