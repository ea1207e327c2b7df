//! `underdraw scene` on the demo scene and on broken scene files, through
//! the binary as a user runs it.
//!
//! The demo scene is run once (with a frame dump and a vertex total) and
//! its outputs are shared by the tests below; each broken scene lives in
//! its own folder under the system temp dir, removed when the test ends.

use image::{ImageFormat, Rgba, RgbaImage};
use serde_json::Value;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::sync::OnceLock;
use underdraw::check::{check_mesh, check_region_mesh};
use underdraw::frame::{measure, render};
use underdraw::io::{load_alpha, load_mesh};
use underdraw::scene::run::load_frame_dump;

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");
const DUMPED: usize = 5;
const VERTEX_TOTAL: usize = 360;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

mod common;
use common::TempDir;

struct DemoRun {
    _dir: TempDir,
    out: PathBuf,
    report: Value,
}

/// The demo scene, run once for all the tests of this file.
fn demo() -> &'static DemoRun {
    static RUN: OnceLock<DemoRun> = OnceLock::new();
    RUN.get_or_init(|| {
        let dir = TempDir::new("demo");
        let out = dir.0.join("out");
        let o = Command::new(BIN)
            .arg("scene")
            .arg(root().join("demo-layers/harbour.scene.json"))
            .arg("--out")
            .arg(&out)
            .args(["--dump-frame", &DUMPED.to_string()])
            .args(["--vertex-total", &VERTEX_TOTAL.to_string()])
            .arg("--report")
            .arg(out.join("report"))
            .output()
            .expect("run underdraw");
        assert!(
            o.status.success(),
            "scene failed: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        let text = fs::read_to_string(out.join("scene-report.json")).expect("the report");
        DemoRun {
            report: serde_json::from_str(&text).expect("the report is JSON"),
            out,
            _dir: dir,
        }
    })
}

fn strategy(report: &Value, name: &str) -> Value {
    report["strategies"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["strategy"] == name)
        .unwrap_or_else(|| panic!("no strategy {name}"))
        .clone()
}

/// Drawing only what is visible shades less than drawing rectangles, and
/// culling behind opaque meshes less again: the point of cutting meshes
/// (common practice, no source).
#[test]
fn split_shades_less_than_outline_and_outline_less_than_rect() {
    let r = &demo().report;
    let mean = |s| strategy(r, s)["mean_overdraw"].as_f64().unwrap();
    let (rect, outline, split) = (mean("rect"), mean("outline"), mean("split"));
    assert!(
        split < outline && outline < rect,
        "split {split}, outline {outline}, rect {rect}"
    );
    for s in ["rect", "outline", "split"] {
        let st = strategy(r, s);
        assert!(st["peak_overdraw"].as_f64().unwrap() >= st["mean_overdraw"].as_f64().unwrap());
    }
}

/// The exact floor shades no more than split, and the share of the
/// possible saving is (rect - split) / (rect - exact), overall, per layer
/// and for the allocated budgets; the layered order shades outline's
/// fragments without hidden-surface removal and split's with the ideal one
/// (the same triangles; a fragment survives the ideal removal exactly when
/// no nearer layer's opaque mesh covers it, which is split's depth test).
#[test]
fn the_floor_and_the_layered_order_on_the_demo() {
    let r = &demo().report;
    let frags = |s| strategy(r, s)["per_frame"]["fragments"].as_f64().unwrap();
    let (rect, split, exact) = (frags("rect"), frags("split"), frags("exact"));
    assert!(exact <= split, "exact {exact} > split {split}");
    let share = r["saving_share"].as_f64().unwrap();
    assert!((share - (rect - split) / (rect - exact)).abs() < 1e-12);
    assert!(share > 0.0 && share <= 1.0, "{share}");
    let allocated = r["allocation"]["allocated"]["fragments"].as_f64().unwrap();
    let a_share = r["allocation_saving_share"].as_f64().unwrap();
    assert!((a_share - (rect - allocated) / (rect - exact)).abs() < 1e-12);
    assert_eq!(frags("layered"), frags("outline"));
    assert_eq!(frags("layered-hsr"), split);
    for l in r["layers"].as_array().unwrap() {
        let f = |k: &str| l[k]["fragments"].as_f64().unwrap();
        assert!(f("exact") <= f("rect"));
        assert_eq!(f("layered"), f("outline"), "{}", l["name"]);
        assert_eq!(f("layered_hsr"), f("split"), "{}", l["name"]);
        if let Some(s) = l["saving_share"].as_f64() {
            let want = (f("rect") - f("split")) / (f("rect") - f("exact"));
            assert!((s - want).abs() < 1e-12, "{}", l["name"]);
        }
    }
}

/// With rect, every layer copy shades every pixel centre of its rectangle
/// on screen: the rect strategy's fragments are the rectangles' areas
/// clipped to the viewport, computed here from the scene file and the PNG
/// headers alone, up to a pixel row or column per rectangle edge.
#[test]
fn rect_fragments_are_the_clipped_rectangle_areas() {
    let scene_path = root().join("demo-layers/harbour.scene.json");
    let scene: Value = serde_json::from_str(&fs::read_to_string(&scene_path).unwrap()).unwrap();
    let (vw, vh) = (
        scene["viewport"][0].as_f64().unwrap(),
        scene["viewport"][1].as_f64().unwrap(),
    );
    let travel = scene["camera"]["travel"].as_f64().unwrap();
    let samples = scene["camera"]["samples"].as_u64().unwrap() as usize;
    let (mut area, mut slack) = (0.0, 0.0);
    for k in 0..samples {
        let cam = travel * k as f64 / (samples - 1) as f64;
        for l in scene["layers"].as_array().unwrap() {
            let (w, h) = layer_rect_size(l);
            let s = l["scale"].as_f64().unwrap_or(1.0);
            let (w, h) = (w as f64 * s, h as f64 * s);
            let x =
                l["position"][0].as_f64().unwrap() - cam * l["parallax"].as_f64().unwrap_or(1.0);
            let y = l["position"][1].as_f64().unwrap();
            let rows = (y + h).min(vh) - y.max(0.0);
            let cols = if l["fill_width"].as_bool().unwrap_or(false) {
                vw
            } else {
                (x + w).min(vw) - x.max(0.0)
            };
            if rows > 0.0 && cols > 0.0 {
                area += rows * cols;
                slack += 2.0 * (rows + cols);
            }
        }
    }
    let expected = area / samples as f64;
    let slack = slack / samples as f64;
    let got = strategy(&demo().report, "rect")["per_frame"]["fragments"]
        .as_f64()
        .unwrap();
    assert!(
        (got - expected).abs() <= slack,
        "rect {got} vs areas {expected} +- {slack}"
    );
}

/// The rectangle a layer's rect strategy draws, in texels before scale:
/// the PNG header's size, or for a region of a sheet its `"size"` when
/// stretched, else the region's rectangle read from the regions file
/// (`"regions"`, default `<sheet stem>.regions.json` beside the sheet).
fn layer_rect_size(l: &Value) -> (u32, u32) {
    let img = root()
        .join("demo-layers")
        .join(l["image"].as_str().unwrap());
    let Some(name) = l["region"].as_str() else {
        return image::image_dimensions(&img).unwrap();
    };
    if let Some(size) = l["size"].as_array() {
        return (
            size[0].as_u64().unwrap() as u32,
            size[1].as_u64().unwrap() as u32,
        );
    }
    let file = match l["regions"].as_str() {
        Some(f) => root().join("demo-layers").join(f),
        None => img.with_extension("regions.json"),
    };
    let regions: Value = serde_json::from_str(&fs::read_to_string(&file).unwrap()).unwrap();
    let r = regions["regions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["name"] == name)
        .unwrap();
    let rect = r["rect"].as_array().or(r["frames"][0].as_array()).unwrap();
    (
        rect[2].as_u64().unwrap() as u32,
        rect[3].as_u64().unwrap() as u32,
    )
}

/// The chosen budgets beat the same total spread evenly (both scored by
/// rendering every sample), fit the total, and their meshes pass the
/// contract checker against their images.
#[test]
fn allocation_beats_the_even_spread() {
    let run = demo();
    let a = &run.report["allocation"];
    let alloc = a["allocated"]["fragments"].as_f64().unwrap();
    let even = a["even"]["fragments"].as_f64().unwrap();
    assert!(alloc < even, "allocated {alloc} vs even {even}");
    let mut vertices = 0;
    let scene: Value = serde_json::from_str(
        &fs::read_to_string(root().join("demo-layers/harbour.scene.json")).unwrap(),
    )
    .unwrap();
    for l in a["layers"].as_array().unwrap() {
        let name = l["name"].as_str().unwrap();
        let mesh = load_mesh(&run.out.join(format!("{name}.mesh.json"))).unwrap();
        let budget = l["budget"].as_u64().unwrap() as usize;
        assert_eq!(mesh.budget, Some(budget));
        assert!(mesh.vertex_count() <= budget, "{name}");
        vertices += mesh.vertex_count();
        let layer = scene["layers"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["name"] == name)
            .unwrap();
        let image = layer["image"].as_str().unwrap();
        let map = load_alpha(&root().join("demo-layers").join(image)).unwrap();
        if layer["region"].is_string() {
            // a region of a sheet: its mesh is checked against the whole
            // sheet, inside the region's rectangle
            assert!(mesh.region.is_some(), "{name}: no region key");
            let report = check_region_mesh(&mesh, &map, None).unwrap();
            assert!(report.holds(), "{name}");
        } else {
            assert!(check_mesh(&mesh, &map).unwrap().holds(), "{name}");
        }
    }
    assert!(vertices <= VERTEX_TOTAL, "{vertices} vertices");
}

/// The dumped counts are what the dumped draws render to: replaying
/// frame-K.json through the simulated GPU gives the 16-bit PNG's pixels.
#[test]
fn dumped_counts_are_the_replayed_draws() {
    let run = demo();
    let dump = load_frame_dump(&run.out.join(format!("frame-{DUMPED}.json"))).unwrap();
    // rect, outline, split, layered, layered-hsr
    assert_eq!(dump.strategies.len(), 5);
    for (name, frame) in &dump.strategies {
        let png = image::open(run.out.join(format!("counts-{DUMPED}-{name}.png")))
            .unwrap()
            .into_luma16();
        assert_eq!([png.width(), png.height()], dump.viewport);
        let r = render(dump.viewport, &frame.draws);
        let replayed: Vec<u16> = r.counts.iter().map(|&c| c as u16).collect();
        assert!(replayed == png.into_raw(), "{name}: counts differ");
        assert!(r.total.fragments > 0);
    }
    // split: opaque draws (depth write) first, then blended ones (no write)
    let split = &dump.strategies["split"].draws;
    let first_blended = split.iter().position(|d| !d.depth_write).unwrap();
    assert!(split[..first_blended]
        .iter()
        .all(|d| !d.blend && d.depth_test));
    assert!(split[first_blended..]
        .iter()
        .all(|d| d.blend && d.depth_test && !d.depth_write));
}

#[test]
fn measured_totals_are_the_rendered_ones_on_the_demo_frames() {
    // Scoring measures frames by spans (frame::measure) while the heatmaps
    // and dumps render them per pixel: on the demo's real meshes, at the
    // dumped camera sample and shifted by fractions of a pixel (off the
    // placements the scene produces), both must give the same totals.
    let run = demo();
    let dump = load_frame_dump(&run.out.join(format!("frame-{DUMPED}.json"))).unwrap();
    for (name, frame) in &dump.strategies {
        for shift in [[0.0f32, 0.0], [0.3, 0.0], [-17.5, 0.25], [0.125, -3.7]] {
            let mut draws = frame.draws.clone();
            for d in &mut draws {
                for p in d.positions.chunks_exact_mut(2) {
                    p[0] += shift[0];
                    p[1] += shift[1];
                }
            }
            let (m, r) = (
                measure(dump.viewport, &draws),
                render(dump.viewport, &draws),
            );
            assert_eq!(m.per_draw, r.per_draw, "{name} shifted by {shift:?}");
            assert_eq!(m.max_pixel, r.counts.iter().copied().max().unwrap());
            assert!(m.total.lanes > 0);
        }
    }
}

#[test]
fn heatmaps_have_a_legend_strip() {
    let run = demo();
    for s in ["rect", "split"] {
        let img = image::open(run.out.join(format!("heatmap-{s}.png"))).unwrap();
        assert_eq!(img.width(), 1920);
        assert!(img.height() > 1080, "{s}: no legend below the frame");
    }
}

// ---- broken scene files ----

fn tiny_png(path: &Path) {
    RgbaImage::from_pixel(8, 8, Rgba([10, 20, 30, 255]))
        .save_with_format(path, ImageFormat::Png)
        .unwrap();
}

/// Runs `scene` on `text` saved as `bad.scene.json` beside an 8x8 PNG.
fn run_broken(test: &str, text: &str) -> (Output, String) {
    let dir = TempDir::new(test);
    tiny_png(&dir.0.join("a.png"));
    let scene = dir.0.join("bad.scene.json");
    fs::write(&scene, text).unwrap();
    let o = Command::new(BIN)
        .arg("scene")
        .arg(&scene)
        .arg("--out")
        .arg(dir.0.join("out"))
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr).into_owned();
    assert_eq!(o.status.code(), Some(2), "{test}: {err}");
    assert!(
        err.contains("bad.scene.json"),
        "{test}: the file is not named: {err}"
    );
    assert!(err.contains("hint:"), "{test}: no advice: {err}");
    assert!(!dir.0.join("out/scene-report.json").exists());
    (o, err)
}

fn scene_text(camera: &str, layers: &str) -> String {
    format!("{{\n  \"viewport\": [64, 32],\n  \"camera\": {camera},\n  \"layers\": [\n{layers}\n  ]\n}}\n")
}

const CAMERA: &str = r#"{"travel": 16, "samples": 2}"#;
const LAYER: &str = r#"    {"name": "a", "image": "a.png"}"#;

#[test]
fn a_syntax_error_gives_its_line_and_column() {
    // line 3: the comma after 16 is missing; the parser stops at the quote
    // of "samples" (JSON, RFC 8259: members are separated by commas)
    let camera = r#"{"travel": 16 "samples": 2}"#;
    let text = scene_text(camera, LAYER);
    let line = text.lines().nth(2).unwrap();
    let col = line.find("\"samples\"").unwrap() + 1;
    let (_, err) = run_broken("syntax", &text);
    assert!(err.contains(&format!("line 3, column {col}")), "{err}");
    assert!(err.contains("not valid JSON"), "{err}");
}

#[test]
fn an_unknown_key_is_named_with_its_place() {
    let layer = r#"    {"name": "a", "image": "a.png", "paralax": 0.5}"#;
    let (_, err) = run_broken("unknown", &scene_text(CAMERA, layer));
    assert!(err.contains("paralax"), "{err}");
    assert!(err.contains("line 5"), "{err}");
}

#[test]
fn a_missing_image_is_named() {
    let layer = r#"    {"name": "a", "image": "gone.png"}"#;
    let (_, err) = run_broken("missing", &scene_text(CAMERA, layer));
    assert!(
        err.contains("gone.png") && err.contains("does not exist"),
        "{err}"
    );
}

#[test]
fn a_negative_scale_is_refused() {
    let layer = r#"    {"name": "a", "image": "a.png", "scale": -2}"#;
    let (_, err) = run_broken("scale", &scene_text(CAMERA, layer));
    assert!(
        err.contains("scale -2") && err.contains("layers[0]"),
        "{err}"
    );
}

#[test]
fn zero_samples_are_refused() {
    let (_, err) = run_broken(
        "samples",
        &scene_text(r#"{"travel": 16, "samples": 0}"#, LAYER),
    );
    assert!(err.contains("samples"), "{err}");
}

#[test]
fn a_duplicate_layer_name_is_refused() {
    let layers = format!("{LAYER},\n{LAYER}");
    let (_, err) = run_broken("duplicate", &scene_text(CAMERA, &layers));
    assert!(
        err.contains("layers[1]") && err.contains("earlier layer"),
        "{err}"
    );
}

/// A small scene that works: a mesh-file layer over a cut layer, both
/// read from the temp folder, and outputs that may not overwrite inputs.
#[test]
fn a_small_scene_runs_and_protects_its_inputs() {
    let dir = TempDir::new("small");
    tiny_png(&dir.0.join("a.png"));
    let cut = Command::new(BIN)
        .arg("cut")
        .arg(dir.0.join("a.png"))
        .arg("--out")
        .arg(&dir.0)
        .output()
        .unwrap();
    assert!(cut.status.success());
    let layers = r#"    {"name": "a", "image": "a.png", "scale": 4, "fill_width": true},
    {"name": "b", "image": "a.png", "mesh": "a.mesh.json", "position": [10, 10], "parallax": 0}"#;
    let scene = dir.0.join("small.scene.json");
    fs::write(&scene, scene_text(CAMERA, layers)).unwrap();
    let run = |out: &Path| {
        Command::new(BIN)
            .arg("scene")
            .arg(&scene)
            .arg("--out")
            .arg(out)
            .args(["--vertex-total", "8"])
            .output()
            .unwrap()
    };
    let ok = run(&dir.0.join("out"));
    assert!(
        ok.status.success(),
        "{}",
        String::from_utf8_lossy(&ok.stderr)
    );
    // the 64 x 32 viewport is covered by the opaque 32 x 32 copies of a:
    // split shades each pixel once, plus b's 8 x 8 square (b is nearer)
    let report: Value =
        serde_json::from_str(&fs::read_to_string(dir.0.join("out/scene-report.json")).unwrap())
            .unwrap();
    let split = strategy(&report, "split");
    assert_eq!(
        split["per_frame"]["fragments"].as_f64().unwrap(),
        64.0 * 32.0
    );
    // writing into the scene's own folder would overwrite the mesh file b reads
    let clash = run(&dir.0);
    assert_eq!(clash.status.code(), Some(2));
    let err = String::from_utf8_lossy(&clash.stderr);
    assert!(
        err.contains("a.mesh.json") || err.contains("inputs"),
        "{err}"
    );
}

/// A layer over the texel limit is refused from its PNG header (PNG
/// specification: IHDR, the first chunk, holds the width and height), on
/// every path that reads it: here a mesh-file layer, whose image the scene
/// only decodes for the report page's preview.
#[test]
fn a_layer_over_the_limit_is_refused_from_its_header() {
    let dir = TempDir::new("limit");
    tiny_png(&dir.0.join("a.png"));
    let cut = Command::new(BIN)
        .arg("cut")
        .arg(dir.0.join("a.png"))
        .arg("--out")
        .arg(&dir.0)
        .output()
        .unwrap();
    assert!(cut.status.success());
    let layers = r#"    {"name": "b", "image": "a.png", "mesh": "a.mesh.json"}"#;
    let scene = dir.0.join("limit.scene.json");
    fs::write(&scene, scene_text(CAMERA, layers)).unwrap();
    let run = |max: &str| {
        Command::new(BIN)
            .arg("scene")
            .arg(&scene)
            .arg("--out")
            .arg(dir.0.join("out"))
            .arg("--report")
            .arg(dir.0.join("page"))
            .args(["--max-texels", max, "--quiet"])
            .output()
            .unwrap()
    };
    // the 8 x 8 layer holds 64 texels: within 64, refused under 63
    let ok = run("64");
    assert!(
        ok.status.success(),
        "{}",
        String::from_utf8_lossy(&ok.stderr)
    );
    let refused = run("63");
    assert_eq!(refused.status.code(), Some(2));
    let err = String::from_utf8_lossy(&refused.stderr);
    assert!(
        err.contains("a.png") && err.contains("by its header") && err.contains("before decoding"),
        "{err}"
    );
}

/// A scene layer may be a shipped texture (KTX 2.0 specification: an
/// uncompressed RGBA8 level, VK_FORMAT_R8G8B8A8_UNORM): it is read through
/// the same gate as a PNG, cut from its level 0 and scored like one (mip
/// chains: tests/scene_texture.rs).
#[test]
fn a_ktx2_layer_is_cut_and_scored() {
    let dir = TempDir::new("ktx2");
    // an opaque 8 x 8 texture
    let ktx = common::ktx2::rgba8_ktx2(&[(8, 8, vec![255u8; 64])]);
    fs::write(dir.0.join("t.ktx2"), ktx).unwrap();
    let layers = r#"    {"name": "t", "image": "t.ktx2", "scale": 4, "fill_width": true}"#;
    let scene = dir.0.join("t.scene.json");
    fs::write(&scene, scene_text(CAMERA, layers)).unwrap();
    let o = Command::new(BIN)
        .arg("scene")
        .arg(&scene)
        .arg("--out")
        .arg(dir.0.join("out"))
        .arg("--report")
        .arg(dir.0.join("page"))
        .arg("--quiet")
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let report: Value =
        serde_json::from_str(&fs::read_to_string(dir.0.join("out/scene-report.json")).unwrap())
            .unwrap();
    // the opaque 32 x 32 copies cover the 64 x 32 viewport: split shades
    // each pixel once, the plain rectangles as often
    for s in ["split", "rect"] {
        let f = strategy(&report, s)["per_frame"]["fragments"]
            .as_f64()
            .unwrap();
        assert_eq!(f, 64.0 * 32.0, "{s}");
    }
    assert_eq!(
        report["layers"][0]["mesh_vertices"].as_u64(),
        Some(4),
        "{report}"
    );
    // asking for mip levels the file does not hold is refused
    let mipped = r#"    {"name": "t", "image": "t.ktx2", "cut": {"mip_levels": 2}}"#;
    fs::write(&scene, scene_text(CAMERA, mipped)).unwrap();
    let o = Command::new(BIN)
        .arg("scene")
        .arg(&scene)
        .arg("--out")
        .arg(dir.0.join("out2"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("t.ktx2") && err.contains("layer t") && err.contains("mip levels"),
        "{err}"
    );
    assert!(err.contains("mip_levels"), "{err}");
}

/// The README's main scene draws the sheet's nine-slice panel at three
/// sizes: per the scene file (read here, not through the library), three
/// layers of region "panel" with three different `size`s; each is drawn
/// by the rect strategy as exactly its stretched rectangle on screen
/// (position to position + size, parallax 0), and the report page shows
/// each with its preview over the stretched panel.
#[test]
fn the_demo_draws_the_sheet_panel_at_three_sizes() {
    let scene: Value = serde_json::from_str(
        &fs::read_to_string(root().join("demo-layers/harbour.scene.json")).unwrap(),
    )
    .unwrap();
    let panels: Vec<&Value> = scene["layers"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|l| l["region"] == "panel")
        .collect();
    let mut sizes: Vec<(u64, u64)> = panels
        .iter()
        .map(|l| {
            (
                l["size"][0].as_u64().unwrap(),
                l["size"][1].as_u64().unwrap(),
            )
        })
        .collect();
    sizes.sort();
    sizes.dedup();
    assert!(sizes.len() >= 3, "panel sizes in the demo: {sizes:?}");
    let run = demo();
    let dump = load_frame_dump(&run.out.join(format!("frame-{DUMPED}.json"))).unwrap();
    let page = fs::read_to_string(run.out.join("report/index.html")).unwrap();
    for l in panels {
        let name = l["name"].as_str().unwrap();
        let (x, y) = (
            l["position"][0].as_f64().unwrap(),
            l["position"][1].as_f64().unwrap(),
        );
        let (w, h) = (
            l["size"][0].as_f64().unwrap(),
            l["size"][1].as_f64().unwrap(),
        );
        let draw = dump.strategies["rect"]
            .draws
            .iter()
            .find(|d| d.layer == name)
            .unwrap();
        let xs = draw.positions.iter().step_by(2).map(|&v| v as f64);
        let ys = draw.positions.iter().skip(1).step_by(2).map(|&v| v as f64);
        let fold = |it: &mut dyn Iterator<Item = f64>, min: bool| {
            it.fold(if min { f64::MAX } else { f64::MIN }, |a, b| {
                if min {
                    a.min(b)
                } else {
                    a.max(b)
                }
            })
        };
        let box_ = [
            fold(&mut xs.clone(), true),
            fold(&mut ys.clone(), true),
            fold(&mut xs.clone(), false),
            fold(&mut ys.clone(), false),
        ];
        assert_eq!(box_, [x, y, x + w, y + h], "{name}: the rectangle drawn");
        let preview = format!("{name}.preview.png");
        assert!(page.contains(&preview), "{name}: no preview on the page");
        let (pw, ph) = image::image_dimensions(run.out.join("report").join(&preview)).unwrap();
        assert!(
            pw >= w.min(240.0) as u32 && ph > 0,
            "{name}: preview {pw} x {ph}"
        );
    }
}
