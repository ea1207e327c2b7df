//! The budget plot is well-formed XML (read by `roxmltree`, an XML 1.0
//! parser) and marks the knee and the chosen budget where the sweep has them.

use underdraw::alpha::AlphaMap;
use underdraw::plot::{sweep_svg, Marks};
use underdraw::settings::CutSettings;
use underdraw::sweep::{knee, sweep_layer, BUDGETS};

/// A 96 x 64 layer: a disc of radius 24, opaque inside radius 18, soft
/// between; round outlines make the saving grow with the budget.
fn disc() -> AlphaMap {
    let (w, h) = (96u32, 64u32);
    let alpha = (0..w * h)
        .map(|i| {
            let (x, y) = ((i % w) as f64 + 0.5 - 48.0, (i / w) as f64 + 0.5 - 32.0);
            let r = (x * x + y * y).sqrt();
            if r < 18.0 {
                255
            } else if r < 24.0 {
                120
            } else {
                0
            }
        })
        .collect();
    AlphaMap::from_raw(w, h, alpha)
}

#[test]
fn the_plot_parses_and_marks_the_knee_and_the_choice() {
    let points = sweep_layer(&disc(), "disc.png", &CutSettings::default(), &BUDGETS);
    let k = knee(&points, 0.8).expect("a sweep has a knee");
    let chosen = 48;
    let svg = sweep_svg(
        "disc.png <budget & plot>",
        &points,
        Marks {
            knee: Some((k, 0.8)),
            chosen: Some(chosen),
        },
    );
    let doc = roxmltree::Document::parse(&svg).expect("the SVG is well-formed XML");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "svg");
    assert_eq!(
        root.tag_name().namespace(),
        Some("http://www.w3.org/2000/svg")
    );

    let knee_el = doc
        .descendants()
        .find(|n| n.attribute("id") == Some("knee"))
        .expect("the knee is marked");
    let kp = points.iter().find(|p| p.budget == k).unwrap();
    assert_eq!(
        knee_el.attribute("data-budget"),
        Some(k.to_string().as_str())
    );
    assert_eq!(
        knee_el.attribute("data-vertices"),
        Some(kp.vertices.to_string().as_str())
    );
    let saving: f64 = knee_el.attribute("data-saving").unwrap().parse().unwrap();
    assert_eq!(saving, kp.saving);
    // the knee's definition, from the README: the smallest budget whose
    // saving reaches 0.8 of the saving at the largest budget
    let top = points.iter().find(|p| p.budget == 256).unwrap().saving;
    assert!(saving >= 0.8 * top);
    for p in points.iter().filter(|p| p.budget < k) {
        assert!(
            p.saving < 0.8 * top,
            "budget {} already reaches it",
            p.budget
        );
    }
    assert!(doc
        .descendants()
        .any(|n| n.text().is_some_and(|t| t == format!("knee: budget {k}"))));

    let chosen_el = doc
        .descendants()
        .find(|n| n.attribute("id") == Some("chosen"))
        .expect("the chosen budget is marked");
    assert_eq!(chosen_el.attribute("data-budget"), Some("48"));

    // one mark per cut, and the axes say their units
    let cuts = doc
        .descendants()
        .filter(|n| n.attribute("class") == Some("cut"))
        .count();
    assert_eq!(cuts, BUDGETS.len());
    let texts: Vec<&str> = doc.descendants().filter_map(|n| n.text()).collect();
    assert!(texts.iter().any(|t| t.starts_with("vertices")));
    assert!(texts.iter().any(|t| t.contains("(texels)")));
    assert!(texts.iter().any(|t| t.contains("<budget & plot>")));
}

#[test]
fn marks_absent_from_the_sweep_are_left_out() {
    let points = sweep_layer(&disc(), "disc.png", &CutSettings::default(), &[8, 16]);
    let svg = sweep_svg(
        "disc",
        &points,
        Marks {
            knee: Some((99, 0.8)),
            chosen: Some(7),
        },
    );
    let doc = roxmltree::Document::parse(&svg).unwrap();
    assert!(!doc
        .descendants()
        .any(|n| matches!(n.attribute("id"), Some("knee" | "chosen"))));
}

/// The box of an SVG text element: its width measured with a real
/// sans-serif font (Noto Sans, the embedded font of `underdraw::present::glyphs`)
/// and widened by a fifth for wider fonts a browser may pick; its height
/// from the baseline up 0.8 em and down 0.25 em (common practice, no
/// source). A `rotate(-90 cx cy)` turns the box about its centre of
/// rotation.
fn text_box(n: roxmltree::Node, default_size: f64) -> [f64; 4] {
    let num = |k: &str| n.attribute(k).unwrap().parse::<f64>().unwrap();
    let size = n
        .attribute("font-size")
        .map_or(default_size, |v| v.parse().unwrap());
    let text = n.text().unwrap_or("");
    let w = underdraw::present::glyphs::text_width(text, size as f32) as f64 * 1.2;
    let anchor = n
        .attribute("text-anchor")
        .or_else(|| n.parent_element().and_then(|p| p.attribute("text-anchor")))
        .unwrap_or("start");
    let (x, y) = (num("x"), num("y"));
    let x0 = match anchor {
        "end" => x - w,
        "middle" => x - w / 2.0,
        _ => x,
    };
    let b = [x0, y - 0.8 * size, x0 + w, y + 0.25 * size];
    match n.attribute("transform") {
        Some(t) if t.starts_with("rotate(-90") => {
            let c: Vec<f64> = t
                .trim_start_matches("rotate(-90")
                .trim_end_matches(')')
                .split_whitespace()
                .map(|v| v.parse().unwrap())
                .collect();
            // (x, y) -> (cx + (y - cy), cy - (x - cx))
            let (cx, cy) = (c[0], c[1]);
            let xs = [cx + (b[1] - cy), cx + (b[3] - cy)];
            let ys = [cy - (b[0] - cx), cy - (b[2] - cx)];
            [
                xs[0].min(xs[1]),
                ys[0].min(ys[1]),
                xs[0].max(xs[1]),
                ys[0].max(ys[1]),
            ]
        }
        _ => b,
    }
}

fn overlap(a: [f64; 4], b: [f64; 4]) -> bool {
    a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3]
}

/// Whether the segment p-q crosses the box (sampled every half unit).
fn crosses(b: [f64; 4], p: (f64, f64), q: (f64, f64)) -> bool {
    let n = (((q.0 - p.0).hypot(q.1 - p.1)) * 2.0).ceil().max(1.0) as usize;
    (0..=n).any(|i| {
        let t = i as f64 / n as f64;
        let (x, y) = (p.0 + t * (q.0 - p.0), p.1 + t * (q.1 - p.1));
        x > b[0] && x < b[2] && y > b[1] && y < b[3]
    })
}

/// Every text inside the view box; the knee, chosen and target labels off
/// each other and off the curve; the axes' ranges covering every cut and
/// every cut drawn inside the axes.
fn check_layout(svg: &str, points: &[underdraw::sweep::SweepPoint]) {
    let doc = roxmltree::Document::parse(svg).unwrap();
    let root = doc.root_element();
    let vb: Vec<f64> = root
        .attribute("viewBox")
        .unwrap()
        .split_whitespace()
        .map(|v| v.parse().unwrap())
        .collect();
    let size: f64 = root.attribute("font-size").unwrap().parse().unwrap();
    for t in doc.descendants().filter(|n| n.has_tag_name("text")) {
        let b = text_box(t, size);
        assert!(
            b[0] >= vb[0] && b[1] >= vb[1] && b[2] <= vb[0] + vb[2] && b[3] <= vb[1] + vb[3],
            "{:?} at {b:?} leaves the view box {vb:?}",
            t.text()
        );
    }
    let label = |class: &str| {
        doc.descendants()
            .find(|n| n.attribute("class") == Some(class))
            .map(|n| text_box(n, size))
    };
    let labels: Vec<[f64; 4]> = ["knee-label", "chosen-label", "target-label"]
        .iter()
        .filter_map(|c| label(c))
        .collect();
    assert!(labels.len() >= 2, "the knee and chosen labels are there");
    for (i, a) in labels.iter().enumerate() {
        for b in &labels[i + 1..] {
            assert!(!overlap(*a, *b), "labels {a:?} and {b:?} overlap");
        }
    }
    let curve: Vec<(f64, f64)> = doc
        .descendants()
        .find(|n| n.attribute("class") == Some("curve"))
        .unwrap()
        .attribute("points")
        .unwrap()
        .split_whitespace()
        .map(|p| {
            let (x, y) = p.split_once(',').unwrap();
            (x.parse().unwrap(), y.parse().unwrap())
        })
        .collect();
    for l in &labels {
        for s in curve.windows(2) {
            assert!(!crosses(*l, s[0], s[1]), "label {l:?} lies on the curve");
        }
    }
    // ... and off the other marks' lines: the chosen budget's and the target
    let seg = |n: roxmltree::Node| {
        let f = |k: &str| n.attribute(k).unwrap().parse::<f64>().unwrap();
        ((f("x1"), f("y1")), (f("x2"), f("y2")))
    };
    let chosen_line = doc
        .descendants()
        .find(|n| n.attribute("id") == Some("chosen"))
        .map(seg);
    let target_line = doc
        .descendants()
        .find(|n| n.attribute("class") == Some("target"))
        .map(seg);
    for (class, others) in [
        ("knee-label", vec![chosen_line, target_line]),
        ("chosen-label", vec![target_line]),
        ("target-label", vec![chosen_line]),
    ] {
        if let Some(b) = label(class) {
            for (p, q) in others.into_iter().flatten() {
                assert!(!crosses(b, p, q), "{class} {b:?} lies on a line");
            }
        }
    }
    let axes = doc
        .descendants()
        .find(|n| n.attribute("class") == Some("axes"))
        .unwrap();
    let a = |k: &str| axes.attribute(k).unwrap().parse::<f64>().unwrap();
    for p in points {
        assert!(a("data-x-min") <= p.vertices as f64 && p.vertices as f64 <= a("data-x-max"));
        assert!(a("data-y-min") <= p.saving && p.saving <= a("data-y-max"));
    }
    // the axes' corner and ends: "M{left},{top} V{bottom} H{right}"
    let d = axes.attribute("d").unwrap();
    let nums: Vec<f64> = d
        .split(|c: char| !(c.is_ascii_digit() || c == '.'))
        .filter(|s| !s.is_empty())
        .map(|s| s.parse().unwrap())
        .collect();
    let (left, top, bottom, right) = (nums[0], nums[1], nums[2], nums[3]);
    for c in doc
        .descendants()
        .filter(|n| n.attribute("class") == Some("cut"))
    {
        let cx: f64 = c.attribute("cx").unwrap().parse().unwrap();
        let cy: f64 = c.attribute("cy").unwrap().parse().unwrap();
        // strictly inside: a cut on the frame would hide under the axes
        assert!(
            cx > left && cx < right && cy > top && cy < bottom,
            "cut at ({cx}, {cy})"
        );
    }
}

/// A layer every budget cuts to the same 4 vertices (a fully opaque
/// rectangle): the axes still frame the one point, with the labels inside.
#[test]
fn a_four_vertex_layer_gets_axes_around_its_point() {
    let map = AlphaMap::from_raw(64, 32, vec![255; 64 * 32]);
    let points = sweep_layer(&map, "flat.png", &CutSettings::default(), &BUDGETS);
    assert!(points.iter().all(|p| p.vertices == 4));
    let k = knee(&points, 0.8).unwrap();
    let svg = sweep_svg(
        "flat: saving against vertices",
        &points,
        Marks {
            knee: Some((k, 0.8)),
            chosen: Some(4),
        },
    );
    check_layout(&svg, &points);
}

#[test]
fn labels_stay_inside_and_off_the_curve() {
    let points = sweep_layer(&disc(), "disc.png", &CutSettings::default(), &BUDGETS);
    let k = knee(&points, 0.8).unwrap();
    for chosen in [4, k, 48, 256] {
        let svg = sweep_svg(
            "a-rather-long-layer-name-from-a-theme-folder: saving against vertices",
            &points,
            Marks {
                knee: Some((k, 0.8)),
                chosen: Some(chosen),
            },
        );
        check_layout(&svg, &points);
    }
}
