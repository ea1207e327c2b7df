//! Scene layers cut from a shipped texture's mip chain.
//!
//! The texture is a KTX 2.0 file written here byte by byte (`common::ktx2`,
//! per the Khronos KTX 2.0 specification: header, level index, data format
//! descriptor), uncompressed RGBA8 (VK_FORMAT_R8G8B8A8_UNORM), its levels
//! made by a separable tent filter (weights 1, 3, 3, 1), wider than the
//! 2x2 box the block rules assume. The scene's meshes (the layer's own cut,
//! the allocation's chosen cut and the exact floor) are checked per level
//! on the decoded texels by the independent checker (`underdraw::check`).

use serde_json::Value;
use std::fs;
use std::process::Command;
use underdraw::alpha::AlphaMap;
use underdraw::check::check_mesh_per_level;
use underdraw::io::load_mesh;
use underdraw::mesh::LayerMesh;
use underdraw::scene::exact::{exact_layer, exact_layers};
use underdraw::scene::file::{load_scene, MeshSource};
use underdraw::scene::prepare::prepare_layers;

mod common;
use common::ktx2::rgba8_ktx2;
use common::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

/// A 128 x 64 layer: a soft-edged disc and a hard bar, transparent around.
fn level0() -> AlphaMap {
    let (w, h) = (128u32, 64u32);
    let mut a = vec![0u8; (w * h) as usize];
    for y in 0..h {
        for x in 0..w {
            let d = ((x as f64 + 0.5 - 32.0).powi(2) + (y as f64 + 0.5 - 32.0).powi(2)).sqrt();
            let disc = ((26.0 - d) / 2.0).clamp(0.0, 1.0);
            let bar = if (64..124).contains(&x) && (8..56).contains(&y) {
                1.0
            } else {
                0.0
            };
            a[(y * w + x) as usize] = (disc.max(bar) * 255.0).round() as u8;
        }
    }
    AlphaMap::from_raw(w, h, a)
}

/// The next level by a separable tent filter (1, 3, 3, 1 over the four
/// texels around each pair, edges clamped), rounded.
fn tent_down(m: &AlphaMap) -> AlphaMap {
    let (w, h) = (m.width / 2, m.height / 2);
    let get = |x: i64, y: i64| {
        m.get(
            x.clamp(0, m.width as i64 - 1) as u32,
            y.clamp(0, m.height as i64 - 1) as u32,
        ) as u32
    };
    let k = [1u32, 3, 3, 1];
    let mut a = Vec::new();
    for y in 0..h as i64 {
        for x in 0..w as i64 {
            let mut sum = 0;
            for (j, kj) in k.iter().enumerate() {
                for (i, ki) in k.iter().enumerate() {
                    sum += ki * kj * get(2 * x + i as i64 - 1, 2 * y + j as i64 - 1);
                }
            }
            a.push(((sum + 32) / 64) as u8);
        }
    }
    AlphaMap::from_raw(w, h, a)
}

/// Levels 0..4 of the layer (128 x 64 down to 8 x 4).
fn chain() -> Vec<AlphaMap> {
    let mut v = vec![level0()];
    while v.len() < 5 {
        let next = tent_down(v.last().unwrap());
        v.push(next);
    }
    v
}

fn write_scene(dir: &TempDir, cut: &str) -> std::path::PathBuf {
    let levels: Vec<(u32, u32, Vec<u8>)> = chain()
        .iter()
        .map(|m| (m.width, m.height, m.alpha.clone()))
        .collect();
    fs::write(dir.path("t.ktx2"), rgba8_ktx2(&levels)).unwrap();
    let scene = dir.path("t.scene.json");
    fs::write(
        &scene,
        format!(
            "{{\n  \"viewport\": [128, 64],\n  \"camera\": {{\"travel\": 16, \"samples\": 2}},\n  \"layers\": [\n    {{\"name\": \"sky\", \"image\": \"t.ktx2\", \"scale\": 2}},\n    {{\"name\": \"hull\", \"image\": \"t.ktx2\", \"cut\": {cut}}}\n  ]\n}}\n"
        ),
    )
    .unwrap();
    scene
}

fn holds_per_level(what: &str, mesh: &LayerMesh, levels: &[AlphaMap]) {
    let reports = check_mesh_per_level(mesh, levels).unwrap();
    assert_eq!(reports.len(), levels.len());
    for (l, r) in reports.iter().enumerate() {
        assert!(r.holds(), "{what}, level {l}: {:?}", r.violations());
    }
}

#[test]
fn a_ktx2_mip_chain_layer_is_cut_on_its_levels_and_scored() {
    let dir = TempDir::new("scene-ktx2-mips");
    let cut = r#"{"budget": 24, "mip_levels": 3}"#;
    let scene_path = write_scene(&dir, cut);
    let levels = chain();
    let used = &levels[..4];

    // the library: the layer's own cut and the exact floor hold on levels 0..3
    let scene = load_scene(&scene_path).unwrap();
    let layers = prepare_layers(&scene).unwrap();
    let hull = &layers[1];
    assert!(matches!(hull.spec.mesh, MeshSource::Cut(s) if s.filter.mip_levels == 3));
    holds_per_level("hull's cut", &hull.mesh, used);
    // the check is not vacuous: the cut draws opaque triangles
    assert!(hull.mesh.stats.opaque_area > 0.0);
    // the sky layer asks for no mip levels: its guarantee is for level 0
    holds_per_level("sky's cut", &layers[0].mesh, &levels[..1]);
    let exact = exact_layers(&layers).unwrap();
    holds_per_level("hull's exact meshes", &exact[1].mesh, used);
    // the same layer analysed as a PNG (block-averaged levels) claims more
    // opaque area than the tent-filtered levels allow: the scene did use
    // the file's levels
    let png_floor = exact_layer(&levels[0], "t.png", &hull.cut_settings().unwrap());
    eprintln!(
        "safe opaque area: file's levels {}, block levels {}; hull's cut: opaque {}, covered {}",
        exact[1].mesh.stats.safe_opaque_area,
        png_floor.mesh.stats.safe_opaque_area,
        hull.mesh.stats.opaque_area,
        hull.mesh.stats.covered_area
    );
    assert!(
        png_floor.mesh.stats.safe_opaque_area > exact[1].mesh.stats.safe_opaque_area,
        "{} {}",
        png_floor.mesh.stats.safe_opaque_area,
        exact[1].mesh.stats.safe_opaque_area
    );
    assert!(check_mesh_per_level(&png_floor.mesh, used)
        .unwrap()
        .iter()
        .any(|r| !r.holds()));
    // notes: the format, block size and levels, and the levels left out
    let notes = hull.notes.join("\n");
    assert!(
        notes
            .contains("guarantee computed for RGBA8 (KTX 2.0, blocks 1x1), mip levels 0 to 3 of 5"),
        "{notes}"
    );
    assert!(notes.contains("mip_levels to 4"), "{notes}");

    // the binary: scored, with a vertex total (the allocation cuts again)
    let out = dir.path("out");
    let o = Command::new(BIN)
        .arg("scene")
        .arg(&scene_path)
        .arg("--out")
        .arg(&out)
        .arg("--report")
        .arg(dir.path("page"))
        .args(["--vertex-total", "40", "--quiet"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let report: Value =
        serde_json::from_str(&fs::read_to_string(out.join("scene-report.json")).unwrap()).unwrap();
    let split = report["strategies"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["strategy"] == "split")
        .unwrap();
    assert!(split["per_frame"]["fragments"].as_f64().unwrap() > 0.0);
    let notes: Vec<&str> = report["notes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|n| n.as_str().unwrap())
        .collect();
    assert!(
        notes.contains(
            &"hull: guarantee computed for RGBA8 (KTX 2.0, blocks 1x1), mip levels 0 to 3 of 5"
        ),
        "{notes:?}"
    );
    assert!(
        notes.contains(
            &"sky: guarantee computed for RGBA8 (KTX 2.0, blocks 1x1), mip levels 0 to 0 of 5"
        ),
        "{notes:?}"
    );
    let chosen = load_mesh(&out.join("hull.mesh.json")).unwrap();
    assert_eq!(chosen.filter.mip_levels, 3);
    holds_per_level("hull's allocated cut", &chosen, used);
    // the page: the row naming the format and levels
    let page = fs::read_to_string(dir.path("page/index.html")).unwrap();
    assert!(
        page.contains("RGBA8 (KTX 2.0, blocks 1x1), mip levels 0 to 3 of 5"),
        "the page names the texture"
    );
}

#[test]
fn asking_for_more_levels_than_the_file_holds_names_the_layer_and_the_file() {
    let dir = TempDir::new("scene-ktx2-too-many");
    let scene_path = write_scene(&dir, r#"{"mip_levels": 6}"#);
    let o = Command::new(BIN)
        .arg("scene")
        .arg(&scene_path)
        .arg("--out")
        .arg(dir.path("out"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("t.ktx2"), "{err}");
    assert!(err.contains("hull"), "{err}");
    assert!(err.contains("holds 5 mip level(s)"), "{err}");
    assert!(
        err.contains("mip_levels") && err.contains("at most 4"),
        "{err}"
    );
    assert!(!dir.path("out/scene-report.json").exists());
}
