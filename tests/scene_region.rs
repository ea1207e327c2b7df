//! Scene layers that are regions of a sprite sheet (the demo UI sheet): a
//! button region and the nine-slice panel stretched to three sizes score,
//! the button's exported mesh passes `check` as a region of the sheet, and
//! each stretched panel's fragments equal those of its mesh's triangles
//! placed by their slice anchors (the engine's rule, in sheet_support) and
//! rasterized here with the top-left rule at pixel centres (Direct3D 11
//! rasterization rules, from memory), vertices snapped to 1/256 pixel.
//! The export carries what an engine needs for a region (the sheet, the
//! region's rectangle, a stretched panel's drawn size and insets, read
//! here from the regions file), and each stretched panel's exported mesh
//! passes `check` against the sheet, while a vertex moved off its anchor's
//! place fails it. The report page gives a region layer's card no budget
//! plot, as `scene --help` says.

mod common;
mod sheet_support;
use common::TempDir;
use sheet_support::{anchored_positions, check, cut_regions, load, run, status, text};
use std::path::Path;
use underdraw::mesh::LayerMesh;

const PANELS: [([u32; 2], [u32; 2]); 3] = [
    ([96, 64], [20, 20]),
    ([300, 100], [140, 20]),
    ([60, 200], [20, 120]),
];

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Positions of a panel mesh drawn `size` texels (the README's rule for
/// engines, `sheet_support::anchored_positions`).
fn stretched(m: &LayerMesh, size: [u32; 2]) -> Vec<[f64; 2]> {
    anchored_positions(m, size.map(|v| v as f64))
}

/// Pixel centres covered by triangle `p` (pixels), top-left rule, vertices
/// snapped to 1/256 pixel; exact in integers.
fn covered(p: [[f64; 2]; 3]) -> u64 {
    let s = p.map(|v| v.map(|c| (c * 256.0).round() as i64));
    let area =
        (s[1][0] - s[0][0]) * (s[2][1] - s[0][1]) - (s[1][1] - s[0][1]) * (s[2][0] - s[0][0]);
    if area == 0 {
        return 0;
    }
    // counter-clockwise in a y-down frame after this: the interior is where
    // every edge function is positive
    let s = if area > 0 { s } else { [s[0], s[2], s[1]] };
    let min = |k: usize| s.iter().map(|v| v[k]).min().unwrap() / 256 - 1;
    let max = |k: usize| s.iter().map(|v| v[k]).max().unwrap() / 256 + 1;
    let mut n = 0;
    for py in min(1)..=max(1) {
        for px in min(0)..=max(0) {
            let c = [px * 256 + 128, py * 256 + 128];
            let inside = (0..3).all(|i| {
                let (a, b) = (s[i], s[(i + 1) % 3]);
                let e = (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]);
                // y down, interior on the positive side: a top edge runs
                // left to right (dy == 0, dx > 0), a left edge upward... on
                // screen with y down, "left" edges have dy < 0
                let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
                let top_left = (dy == 0 && dx > 0) || dy < 0;
                e > 0 || (e == 0 && top_left)
            });
            n += inside as u64;
        }
    }
    n
}

/// The card of layer `name` on the report page `html`.
fn card<'a>(html: &'a str, name: &str) -> &'a str {
    let start = html
        .find(&format!("<section class=\"card\" data-layer=\"{name}\""))
        .unwrap_or_else(|| panic!("no card for {name}"));
    let end = html[start..].find("</section>").expect("the card ends") + start;
    &html[start..end]
}

/// The report page of the region scene: a region layer's card has no
/// budget plot (its alpha is the whole sheet's: no sweep of it) and no
/// knee, and `scene --help` says so instead of promising a plot on every
/// card; a stretched panel's card says its capture and excess are at the
/// region's own size (`regions`: the regions file), not the drawn one.
fn report_cards_say_what_they_give(page: &Path, regions: &Path) {
    let html = std::fs::read_to_string(page.join("index.html")).unwrap();
    let file: serde_json::Value = serde_json::from_slice(&std::fs::read(regions).unwrap()).unwrap();
    let rect = file["regions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["name"] == "panel")
        .unwrap()["rect"]
        .clone();
    let (w, h) = (rect[2].as_u64().unwrap(), rect[3].as_u64().unwrap());
    for (k, (size, _)) in PANELS.iter().enumerate() {
        // the page escapes the apostrophe as XML does
        let c = card(&html, &format!("panel-{k}")).replace("&apos;", "'");
        let says = format!(
            "drawn stretched to {} x {}: its opaque capture and excess are given at the region's {w} x {h}",
            size[0], size[1]
        );
        assert!(
            c.contains(&says),
            "panel-{k}: the card does not say at what size its numbers are: {c}"
        );
    }
    for name in ["play", "panel-0", "panel-1", "panel-2"] {
        assert!(
            !page.join(format!("{name}.plot.svg")).exists(),
            "{name}: a budget plot was written"
        );
        let c = card(&html, name);
        assert!(
            !c.contains(".plot.svg"),
            "{name}: the card shows a plot: {c}"
        );
        assert!(
            c.contains("<tr><td>knee (80% of the largest saving)</td><td>-</td></tr>"),
            "{name}: the card gives a knee: {c}"
        );
    }
    let help = run(&["scene", "--help"]);
    status(&help, 0, "scene --help");
    let said = text(&help.stdout)
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ");
    assert!(
        said.contains(
            "a region of a sprite sheet and a layer read from a mesh file have no budget plot"
        ),
        "scene --help promises a plot on every card: {said}"
    );
}

#[test]
fn region_layers_and_stretched_panels_score_as_shipped() {
    let dir = TempDir::new("scene-region");
    for f in ["ui-sheet.png", "ui-sheet.regions.json"] {
        std::fs::copy(root().join("demo-sheets").join(f), dir.path(f)).unwrap();
    }
    let mut layers = vec![serde_json::json!({
        "name": "play", "image": "ui-sheet.png", "region": "button-play",
        "cut": {"budget": 24}, "position": [400, 250], "parallax": 0.0})];
    for (k, (size, at)) in PANELS.iter().enumerate() {
        layers.push(serde_json::json!({
            "name": format!("panel-{k}"), "image": "ui-sheet.png", "region": "panel",
            "size": size, "cut": {"budget": 24}, "position": at, "parallax": 0.0}));
    }
    let scene = serde_json::json!({"viewport": [640, 360],
        "camera": {"travel": 0, "samples": 1}, "layers": layers});
    let path = dir.path("ui.scene.json");
    std::fs::write(&path, serde_json::to_vec_pretty(&scene).unwrap()).unwrap();
    let (out, export, page) = (dir.path("out"), dir.path("export"), dir.path("page"));
    let o = run(&[
        "--json",
        "scene",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--export",
        export.to_str().unwrap(),
        "--dump-frame",
        "0",
        "--report",
        page.to_str().unwrap(),
    ]);
    status(&o, 0, "scene with region layers");
    report_cards_say_what_they_give(&page, &dir.path("ui-sheet.regions.json"));
    let report: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert!(
        report.to_string().contains("panel-2"),
        "{}",
        text(&o.stdout)
    );
    // the button's mesh is a region of the sheet: check holds on the sheet
    let sheet = dir.path("ui-sheet.png");
    let play = export.join("play.mesh.json");
    assert!(load(&play).region.is_some());
    check(&play, &sheet, &[], 0, "check the button region");
    // the panel as `cut --regions` cuts it, at the scene's budget
    let cut_dir = dir.path("cut");
    cut_regions(
        &sheet,
        &dir.path("ui-sheet.regions.json"),
        &cut_dir,
        &["--budget", "24"],
        0,
        "cut the sheet",
    );
    let panel = load(&cut_dir.join("ui-sheet/panel.mesh.json"));
    check(
        &cut_dir.join("ui-sheet/panel.mesh.json"),
        &sheet,
        &[],
        0,
        "check the panel region",
    );
    // the draw list: the sheet, the region's rectangle, and for a panel
    // drawn stretched its size and insets, as the regions file gives them
    let regions: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.path("ui-sheet.regions.json")).unwrap()).unwrap();
    let entry = |name: &str| -> serde_json::Value {
        regions["regions"]
            .as_array()
            .unwrap()
            .iter()
            .find(|r| r["name"] == name)
            .unwrap()
            .clone()
    };
    let list: serde_json::Value =
        serde_json::from_slice(&std::fs::read(export.join("draw-list.json")).unwrap()).unwrap();
    let (sw, sh) = image::image_dimensions(&sheet).unwrap();
    for l in list["layers"].as_array().unwrap() {
        let name = l["name"].as_str().unwrap();
        let image = export.join(l["image"].as_str().unwrap());
        assert_eq!(
            std::fs::canonicalize(image).unwrap(),
            std::fs::canonicalize(&sheet).unwrap(),
            "{name}: image is the sheet"
        );
        assert_eq!(
            l["region"]["sheet_size"],
            serde_json::json!([sw, sh]),
            "{name}"
        );
        let want = entry(if name == "play" {
            "button-play"
        } else {
            "panel"
        });
        assert_eq!(l["region"]["rect"], want["rect"], "{name}");
        if name == "play" {
            assert!(l.get("size").is_none() && l.get("slices").is_none(), "{l}");
        } else {
            let k: usize = name["panel-".len()..].parse().unwrap();
            assert_eq!(l["size"], serde_json::json!(PANELS[k].0), "{name}");
            assert_eq!(l["slices"], want["slices"], "{name}");
        }
    }
    // each stretched panel's exported mesh: placed by the engine's rule,
    // checked against the sheet; a vertex moved off its place fails
    for (k, (size, _)) in PANELS.iter().enumerate() {
        let file = export.join(format!("panel-{k}.mesh.json"));
        let m = load(&file);
        assert_eq!(m.size, *size);
        let want = stretched(&panel, *size);
        for (i, w) in want.iter().enumerate() {
            let got = m.position(i as u32);
            assert!(
                (got[0] as f64 - w[0]).abs() < 1e-3 && (got[1] as f64 - w[1]).abs() < 1e-3,
                "panel {size:?}, vertex {i}: {got:?} vs {w:?}"
            );
        }
        let c = check(
            &file,
            &sheet,
            &[],
            0,
            &format!("check the panel exported at {size:?}"),
        );
        let said = String::from_utf8_lossy(&c.stdout);
        assert!(
            said.contains(&format!("drawn stretched to {} x {}", size[0], size[1])),
            "check says at what size the panel was drawn: {said}"
        );
        let mut bad: serde_json::Value =
            serde_json::from_slice(&std::fs::read(&file).unwrap()).unwrap();
        let x = bad["positions"][0].as_f64().unwrap();
        bad["positions"][0] = serde_json::json!(x + 0.5);
        let tampered = dir.path(&format!("tampered-{k}.mesh.json"));
        std::fs::write(&tampered, serde_json::to_vec(&bad).unwrap()).unwrap();
        check(
            &tampered,
            &sheet,
            &[],
            1,
            &format!("check a tampered panel at {size:?}"),
        );
    }
    // the same scene from mesh files: the exported ones (a panel already
    // stretched) and the panel as `cut --regions` wrote it (stretched when
    // the scene is loaded) draw the frame the cut scene drew
    let mut from_files = scene.clone();
    for l in from_files["layers"].as_array_mut().unwrap() {
        let name = l["name"].as_str().unwrap().to_string();
        let mesh = match name.as_str() {
            "panel-0" => cut_dir.join("ui-sheet/panel.mesh.json"),
            _ => export.join(format!("{name}.mesh.json")),
        };
        let o = l.as_object_mut().unwrap();
        o.remove("cut");
        o.insert("mesh".into(), mesh.to_str().unwrap().into());
    }
    let path2 = dir.path("files.scene.json");
    std::fs::write(&path2, serde_json::to_vec_pretty(&from_files).unwrap()).unwrap();
    let out2 = dir.path("out2");
    let o = run(&[
        "scene",
        path2.to_str().unwrap(),
        "--out",
        out2.to_str().unwrap(),
        "--dump-frame",
        "0",
    ]);
    status(&o, 0, "scene with region mesh files");
    for s in ["split", "outline"] {
        let f = format!("counts-0-{s}.png");
        let (a, b) = (
            image::open(out.join(&f)).unwrap(),
            image::open(out2.join(&f)).unwrap(),
        );
        assert!(
            a.as_bytes() == b.as_bytes(),
            "{f}: mesh files draw another frame"
        );
    }
    // the outline strategy's counts (every triangle blended, no depth): the
    // UI layers do not overlap, so a panel's screen box holds its fragments
    let counts = image::open(out.join("counts-0-outline.png"))
        .unwrap()
        .into_luma16();
    for (size, at) in PANELS {
        let pos = stretched(&panel, size);
        let mut want = 0;
        for list in [&panel.opaque.indices, &panel.blended.indices] {
            for t in list.chunks_exact(3) {
                let p = [0, 1, 2].map(|i| {
                    let v = pos[t[i] as usize];
                    [v[0] + at[0] as f64, v[1] + at[1] as f64]
                });
                want += covered(p);
            }
        }
        let mut got = 0u64;
        for y in at[1]..at[1] + size[1] {
            for x in at[0]..at[0] + size[0] {
                got += counts.get_pixel(x, y).0[0] as u64;
            }
        }
        assert!(want > (size[0] * size[1]) as u64 / 2, "{size:?}: {want}");
        assert_eq!(got, want, "panel drawn {size:?}: scored vs rasterized here");
    }
}

/// A scene layer asking for a region the regions file does not have (or a
/// stretch a plain region cannot take): the error names the scene file and
/// the layer that asked, the regions file and the names it has, and what
/// to do (the project's rule for bad input: the file, what is wrong, what
/// to do), and the run fails with exit status 2.
#[test]
fn a_missing_region_names_the_scene_file_and_the_layer() {
    let dir = TempDir::new("scene-region-missing");
    for f in ["ui-sheet.png", "ui-sheet.regions.json"] {
        std::fs::copy(root().join("demo-sheets").join(f), dir.path(f)).unwrap();
    }
    let regions = dir.path("ui-sheet.regions.json");
    let names: Vec<String> =
        serde_json::from_slice::<serde_json::Value>(&std::fs::read(&regions).unwrap()).unwrap()
            ["regions"]
            .as_array()
            .unwrap()
            .iter()
            .map(|r| r["name"].as_str().unwrap().to_string())
            .collect();
    assert!(!names.iter().any(|n| n == "panl"));
    let cases = [
        // a misspelt region name
        (
            serde_json::json!({"name": "dialog", "image": "ui-sheet.png", "region": "panl",
                "size": [96, 64], "cut": {"budget": 24}, "parallax": 0.0}),
            vec!["\"panl\"", "is not in the regions file"],
        ),
        // a size for a region without slices
        (
            serde_json::json!({"name": "dialog", "image": "ui-sheet.png",
                "region": "button-play", "size": [200, 40], "parallax": 0.0}),
            vec!["\"button-play\"", "no \"slices\""],
        ),
    ];
    for (k, (layer, says)) in cases.into_iter().enumerate() {
        let scene = serde_json::json!({"viewport": [640, 360],
            "camera": {"travel": 0, "samples": 1},
            "layers": [{"name": "play", "image": "ui-sheet.png", "region": "button-play",
                        "parallax": 0.0}, layer]});
        let path = dir.path(&format!("case-{k}.scene.json"));
        std::fs::write(&path, serde_json::to_vec_pretty(&scene).unwrap()).unwrap();
        let o = run(&[
            "scene",
            path.to_str().unwrap(),
            "--out",
            dir.path(&format!("out-{k}")).to_str().unwrap(),
        ]);
        status(&o, 2, &format!("case {k}"));
        let err = text(&o.stderr);
        // the scene file first, then the layer, as the scene file's other
        // errors name them
        assert!(
            err.contains(&format!("{}: layers[1] (\"dialog\"): ", path.display())),
            "case {k}: the scene file and the layer: {err}"
        );
        assert!(
            err.contains(&regions.display().to_string()),
            "case {k}: the regions file: {err}"
        );
        for s in says {
            assert!(err.contains(s), "case {k}: {s:?} in {err}");
        }
        assert!(err.contains("hint: "), "case {k}: what to do: {err}");
        if k == 0 {
            // the names the file has, so the user can pick one
            for n in &names {
                assert!(err.contains(n.as_str()), "case 0: name {n} in {err}");
            }
        }
    }
}
