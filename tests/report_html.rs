//! `scene --report DIR`: the page is well-formed (XHTML syntax, read by
//! `roxmltree`, an XML 1.0 parser), refers only to files beside it, and
//! shows the numbers of `scene-report.json` and one card per layer.

use image::{Rgba, RgbaImage};
use std::fs;
use std::path::PathBuf;

fn temp(test: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("underdraw-{test}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).unwrap();
    d
}

/// An n x n layer: an opaque square in the middle, a soft rim, transparent edges.
fn square(n: u32) -> RgbaImage {
    RgbaImage::from_fn(n, n, |x, y| {
        let d = x.min(y).min(n - 1 - x).min(n - 1 - y);
        let a = if d >= n / 4 {
            255
        } else if d >= n / 8 {
            100
        } else {
            0
        };
        Rgba([200, 120, 40, a])
    })
}

#[test]
fn the_report_page_is_self_contained_and_shows_the_scene() {
    let dir = temp("report-html");
    square(64).save(dir.join("a.png")).unwrap();
    // soft everywhere but an opaque bar across: the cover is the whole
    // rectangle (4 vertices), so at budget 4 no vertex is left for the bar
    // and the opaque mesh must be empty although the safe area is not
    RgbaImage::from_fn(48, 48, |_, y| {
        Rgba([10, 10, 200, if (20..24).contains(&y) { 255 } else { 90 }])
    })
    .save(dir.join("b.png"))
    .unwrap();
    let scene = dir.join("s.scene.json");
    fs::write(
        &scene,
        r#"{"viewport": [160, 90], "camera": {"travel": 40, "samples": 3},
            "layers": [
              {"name": "back", "image": "a.png", "cut": {"budget": 12}, "scale": 1.5, "fill_width": true, "parallax": 0.5},
              {"name": "front", "image": "b.png", "cut": {"budget": 4}, "position": [20, 20]}]}"#,
    )
    .unwrap();
    let (out, rep) = (dir.join("out"), dir.join("report"));
    let status = std::process::Command::new(env!("CARGO_BIN_EXE_underdraw"))
        .arg("scene")
        .arg(&scene)
        .arg("--out")
        .arg(&out)
        .arg("--report")
        .arg(&rep)
        .status()
        .unwrap();
    assert!(status.success());
    let html = fs::read_to_string(rep.join("index.html")).unwrap();
    let opts = roxmltree::ParsingOptions {
        allow_dtd: true,
        ..Default::default()
    };
    let doc = roxmltree::Document::parse_with_options(&html, opts)
        .expect("the page is well-formed XHTML");

    // self-contained: no script, no external style sheet or font, and every
    // image is a file beside the page (or a data URI)
    assert!(!doc
        .descendants()
        .any(|n| matches!(n.tag_name().name(), "script" | "link" | "iframe" | "object")));
    assert!(!html.contains("@import") && !html.contains("url("));
    let srcs: Vec<&str> = doc
        .descendants()
        .filter_map(|n| n.attribute("src").or(n.attribute("href")))
        .collect();
    assert!(srcs.len() >= 4, "heatmaps, previews and plots: {srcs:?}");
    for s in &srcs {
        if s.starts_with("data:") {
            continue;
        }
        assert!(
            !s.contains(':') && !s.starts_with('/'),
            "{s} is not relative"
        );
        assert!(rep.join(s).is_file(), "{s} is missing beside the page");
    }
    for f in [
        "heatmap-rect.png",
        "heatmap-split.png",
        "back.preview.png",
        "back.plot.svg",
    ] {
        assert!(srcs.contains(&f), "{f} not shown");
    }
    roxmltree::Document::parse(&fs::read_to_string(rep.join("back.plot.svg")).unwrap())
        .expect("the plot is well-formed SVG");

    // the strategies' numbers are those of scene-report.json
    let report: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("scene-report.json")).unwrap()).unwrap();
    let rows: Vec<_> = doc
        .descendants()
        .filter(|n| n.attribute("class") == Some("strategy"))
        .collect();
    let strategies = report["strategies"].as_array().unwrap();
    assert_eq!(rows.len(), strategies.len());
    for (row, st) in rows.iter().zip(strategies) {
        assert_eq!(row.attribute("data-strategy"), st["strategy"].as_str());
        let shown: f64 = row
            .attribute("data-mean-overdraw")
            .unwrap()
            .parse()
            .unwrap();
        assert_eq!(shown, st["mean_overdraw"].as_f64().unwrap());
    }

    // a card per layer; only the front one's opaque mesh is empty
    let cards: Vec<_> = doc
        .descendants()
        .filter(|n| n.attribute("class") == Some("card"))
        .collect();
    let names: Vec<_> = cards
        .iter()
        .map(|c| c.attribute("data-layer").unwrap())
        .collect();
    assert_eq!(names, ["back", "front"]);
    let warns = |c: &roxmltree::Node| -> Vec<String> {
        c.descendants()
            .filter(|n| n.attribute("class") == Some("warning"))
            .filter_map(|n| n.text().map(str::to_string))
            .collect()
    };
    let empty = |c: &roxmltree::Node| warns(c).iter().any(|w| w.starts_with("opaque mesh empty"));
    assert!(!empty(&cards[0]), "{:?}", warns(&cards[0]));
    assert!(empty(&cards[1]), "{:?}", warns(&cards[1]));
    assert!(doc
        .descendants()
        .any(|n| n.attribute("id") == Some("settings")));
    fs::remove_dir_all(&dir).unwrap();
}
