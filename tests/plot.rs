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
