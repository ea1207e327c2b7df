//! The exact floor and the layered order on small scenes made here: counts
//! computed by hand on pixel-aligned rectangles, and the orderings that
//! must hold on random scenes.

use image::{ImageFormat, Rgba, RgbaImage};
use std::fs;
use std::path::Path;
use underdraw::scene::draws::Strategy;
use underdraw::scene::exact::exact_layers;
use underdraw::scene::file::parse_scene;
use underdraw::scene::prepare::prepare_layers;
use underdraw::scene::score::{
    score_exact_frames_with, score_frames, summarize, LayerReport, StrategyReport,
};

mod common;
use common::{Rng, TempDir};

/// Every strategy of the scene `text` (saved in `dir`), per strategy and
/// per layer.
fn score(dir: &Path, text: &str) -> (Vec<StrategyReport>, Vec<LayerReport>) {
    let path = dir.join("t.scene.json");
    fs::write(&path, text).unwrap();
    let scene = parse_scene(&path, text).unwrap();
    let layers = prepare_layers(&scene).unwrap();
    let specs: Vec<_> = layers.iter().map(|l| l.spec.clone()).collect();
    let meshes: Vec<_> = layers.iter().map(|l| &l.mesh).collect();
    let cams = scene.camera_positions();
    let exact = exact_layers(&layers).unwrap();
    let mut frames = score_frames(&Strategy::EVERY, &specs, &meshes, scene.viewport, &cams);
    frames.extend(score_exact_frames_with(
        &specs,
        &exact,
        scene.viewport,
        &cams,
        &|| {},
    ));
    summarize(&frames, &specs, &meshes, scene.viewport)
}

fn of(r: &[StrategyReport], s: Strategy) -> &StrategyReport {
    r.iter().find(|x| x.strategy == s).unwrap()
}

/// A 16 x 8 opaque wall behind an 8 x 8 panel at x = 4 whose texel columns
/// 0-1 are transparent, 2-5 opaque and 6-7 half transparent (nearest
/// filter, so the regions are the texel classes). Counted by hand, with
/// the top-left rule at pixel centres (each pixel of an axis-aligned
/// rectangle with whole-pixel corners is covered once):
/// * rect: 128 + 64 = 192 fragments;
/// * exact: the panel's opaque columns (pixels 6-9) hide the wall's, so the
///   wall shades 128 - 32 = 96, the panel 32 opaque + 16 blended: 144;
/// * layered without removal: everything the meshes cover, 128 + 48 = 176;
/// * layered with ideal removal: the wall's 32 pixels under the panel's
///   later opaque ones are not shaded: 96 + 48 = 144, split's count.
///
/// Exact lanes: the wall's fragments fill quad columns 0-2 and 5-7 of 4
/// quad rows (24 quads), the panel's opaque pixels 6-9 quad columns 3-4 (8),
/// its blended pixels 10-11 column 5 (4): 36 quads, 144 lanes (2x2 quad
/// shading, common practice, no source). Exact vertices: 4 corners per
/// rectangular region, 3 regions: 12.
#[test]
fn hand_counted_rectangles() {
    let dir = TempDir::new("floor-hand");
    RgbaImage::from_pixel(16, 8, Rgba([90, 90, 90, 255]))
        .save_with_format(dir.0.join("wall.png"), ImageFormat::Png)
        .unwrap();
    let panel = RgbaImage::from_fn(8, 8, |x, _| {
        Rgba([200, 0, 0, [0, 0, 255, 255, 255, 255, 128, 128][x as usize]])
    });
    panel
        .save_with_format(dir.0.join("panel.png"), ImageFormat::Png)
        .unwrap();
    let text = r#"{"viewport": [16, 8], "camera": {"travel": 0, "samples": 1},
      "layers": [{"name": "wall", "image": "wall.png", "cut": {"filter": "nearest"}},
                 {"name": "panel", "image": "panel.png", "position": [4, 0],
                  "cut": {"filter": "nearest"}}]}"#;
    let (s, layers) = score(&dir.0, text);
    let frags = |st| of(&s, st).per_frame.fragments;
    assert_eq!(frags(Strategy::Rect), 192.0);
    assert_eq!(frags(Strategy::Exact), 144.0);
    assert_eq!(frags(Strategy::Layered), 176.0);
    assert_eq!(frags(Strategy::Outline), 176.0);
    assert_eq!(frags(Strategy::LayeredHsr), 144.0);
    assert_eq!(frags(Strategy::Split), 144.0);
    assert_eq!(of(&s, Strategy::Exact).per_frame.lanes, 144.0);
    assert_eq!(of(&s, Strategy::Exact).per_frame.vertices, 12.0);
    assert_eq!(layers[0].exact.fragments, 96.0);
    assert_eq!(layers[1].exact.fragments, 48.0);
    assert_eq!(layers[0].layered_hsr.fragments, 96.0);
    // the cut reaches the floor here: all of the possible saving
    assert_eq!(layers[0].saving_share, Some(1.0));
    assert_eq!(layers[1].saving_share, Some(1.0));
}

/// On random scenes of noisy layers at fractional placements and scales:
/// the floor never shades more than split, the layered order shades
/// outline's fragments on a GPU without hidden-surface removal and split's
/// with ideal removal, layer by layer (the triangles are the same, and a
/// fragment survives the ideal removal exactly when no nearer layer's
/// opaque mesh covers it, which is split's depth test).
#[test]
fn random_scenes_keep_the_orderings() {
    let dir = TempDir::new("floor-random");
    let mut rng = Rng(17);
    for case in 0..6 {
        let mut layers = Vec::new();
        for l in 0..3 {
            let (w, h) = (8 + rng.below(40) as u32, 8 + rng.below(30) as u32);
            // blobs: opaque discs with soft rims, over transparency
            let blobs: Vec<[f64; 3]> = (0..1 + rng.below(4))
                .map(|_| {
                    [
                        rng.range(0.0, w as f64),
                        rng.range(0.0, h as f64),
                        rng.range(2.0, 12.0),
                    ]
                })
                .collect();
            let img = RgbaImage::from_fn(w, h, |x, y| {
                let d = blobs
                    .iter()
                    .map(|b| ((x as f64 - b[0]).hypot(y as f64 - b[1])) / b[2])
                    .fold(f64::INFINITY, f64::min);
                let a = if d < 0.7 {
                    255
                } else if d < 1.0 {
                    100
                } else {
                    0
                };
                Rgba([1, 2, 3, a])
            });
            let name = format!("c{case}l{l}.png");
            img.save_with_format(dir.0.join(&name), ImageFormat::Png)
                .unwrap();
            layers.push(format!(
                r#"{{"name": "l{l}", "image": "{name}", "position": [{:.3}, {:.3}],
                    "scale": {:.3}, "parallax": {:.3}, "cut": {{"budget": {}}}}}"#,
                rng.range(-10.0, 40.0),
                rng.range(-10.0, 30.0),
                rng.range(0.6, 2.0),
                rng.range(0.0, 1.0),
                [4, 8, 16, 64][rng.below(4) as usize]
            ));
        }
        let text = format!(
            r#"{{"viewport": [64, 48], "camera": {{"travel": 30, "samples": 3}},
                "layers": [{}]}}"#,
            layers.join(",")
        );
        let (s, per_layer) = score(&dir.0, &text);
        let frags = |st| of(&s, st).per_frame.fragments;
        assert!(
            frags(Strategy::Exact) <= frags(Strategy::Split),
            "case {case}: exact {} > split {}",
            frags(Strategy::Exact),
            frags(Strategy::Split)
        );
        for l in &per_layer {
            assert_eq!(l.layered.fragments, l.outline.fragments, "case {case}");
            assert_eq!(l.layered.lanes, l.outline.lanes, "case {case}");
            assert_eq!(l.layered_hsr.fragments, l.split.fragments, "case {case}");
        }
    }
}
