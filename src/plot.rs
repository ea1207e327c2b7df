//! The budget plot of a layer's sweep: the saving (texels, see
//! [`crate::sweep`]) against the vertices each cut uses, as a
//! self-contained SVG document written by hand (no dependency, no external
//! font or script).
//!
//! Marks a reader (or a test) can find by their attributes:
//!
//! * every cut: `<circle class="cut" data-budget=".." data-vertices=".."
//!   data-saving="..">`;
//! * the knee: `<circle id="knee" class="knee" ...>` with the same data
//!   attributes, labelled `knee: budget N`, and the dashed line of the
//!   fraction of the largest saving it was found with (`class="target"`);
//! * the chosen budget: `<line id="chosen" class="chosen" data-budget=".."
//!   data-vertices="..">`, a vertical line at the vertices that budget's cut
//!   uses, labelled `chosen: budget N`.

use crate::sweep::SweepPoint;
use std::fmt::Write;

/// Width of the plot, in SVG user units (pixels at 100%).
pub const WIDTH: f64 = 640.0;
/// Height of the plot, in SVG user units (pixels at 100%).
pub const HEIGHT: f64 = 400.0;
const LEFT: f64 = 86.0;
const RIGHT: f64 = 24.0;
const TOP: f64 = 44.0;
const BOTTOM: f64 = 58.0;

/// Colour of the curve and its cuts (a blue; the colours are our own).
pub const CURVE: &str = "#1f5fa8";
/// Colour of the knee's mark and its target line (an orange).
pub const KNEE: &str = "#d9480f";
/// Colour of the chosen budget's line (a green).
pub const CHOSEN: &str = "#2b8a3e";

/// What to mark on the plot besides the curve.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Marks {
    /// The knee's budget (as [`crate::sweep::knee`] returns it) and the
    /// fraction it was found with.
    pub knee: Option<(usize, f64)>,
    /// The budget chosen for the layer.
    pub chosen: Option<usize>,
}

/// Escapes text for XML content and attribute values.
pub fn xml_escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            c => out.push(c),
        }
    }
    out
}

/// Tick step for a range of `span`: 1, 2 or 5 times a power of ten, giving
/// at most about `count` intervals (at least 1 for an empty span).
pub fn tick_step(span: f64, count: usize) -> f64 {
    if span <= 0.0 || !span.is_finite() {
        return 1.0;
    }
    let raw = span / count.max(1) as f64;
    let p = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * p)
        .find(|&s| s >= raw)
        .unwrap_or(10.0 * p)
}

/// A tick label: whole numbers, thousands as `k` and millions as `M`
/// when the step allows.
fn tick_label(v: f64, step: f64) -> String {
    if v.abs() >= 1e6 && step >= 1e5 {
        format!("{}M", trim(v / 1e6))
    } else if v.abs() >= 1e4 && step >= 1e3 {
        format!("{}k", trim(v / 1e3))
    } else {
        trim(v)
    }
}

fn trim(v: f64) -> String {
    let s = format!("{v:.3}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.into()
    }
}

/// The SVG plot of `points` (one layer's sweep) titled `title`.
pub fn sweep_svg(title: &str, points: &[SweepPoint], marks: Marks) -> String {
    let mut pts: Vec<&SweepPoint> = points.iter().collect();
    pts.sort_by_key(|p| (p.vertices, p.budget));
    let xmax_data = pts.iter().map(|p| p.vertices).max().unwrap_or(4).max(4) as f64;
    let ymax_data = pts.iter().map(|p| p.saving).fold(0.0, f64::max);
    let xstep = tick_step(xmax_data, 8);
    let ystep = tick_step(if ymax_data > 0.0 { ymax_data } else { 1.0 }, 6);
    let xmax = (xmax_data / xstep).ceil() * xstep;
    let ymax = ((ymax_data / ystep).ceil() * ystep).max(ystep);
    let (pw, ph) = (WIDTH - LEFT - RIGHT, HEIGHT - TOP - BOTTOM);
    let sx = |v: f64| LEFT + v / xmax * pw;
    let sy = |v: f64| TOP + ph - v / ymax * ph;

    let mut s = String::new();
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{HEIGHT}" viewBox="0 0 {WIDTH} {HEIGHT}" font-family="sans-serif" font-size="12">"#
    );
    let _ = writeln!(s, "<title>{}</title>", xml_escape(title));
    let _ = writeln!(
        s,
        r##"<rect x="0" y="0" width="{WIDTH}" height="{HEIGHT}" fill="#ffffff"/>"##
    );
    let _ = writeln!(
        s,
        r#"<text x="{LEFT}" y="24" font-size="14" font-weight="bold">{}</text>"#,
        xml_escape(title)
    );
    // grid and ticks
    let _ = writeln!(s, r#"<g class="x-ticks" text-anchor="middle">"#);
    let mut v = 0.0;
    while v <= xmax + 1e-9 {
        let x = sx(v);
        let _ = writeln!(
            s,
            r##"<line x1="{x:.1}" y1="{:.1}" x2="{x:.1}" y2="{:.1}" stroke="#e4e4e4"/><line x1="{x:.1}" y1="{:.1}" x2="{x:.1}" y2="{:.1}" stroke="#000000"/><text x="{x:.1}" y="{:.1}">{}</text>"##,
            TOP,
            TOP + ph,
            TOP + ph,
            TOP + ph + 5.0,
            TOP + ph + 18.0,
            tick_label(v, xstep)
        );
        v += xstep;
    }
    let _ = writeln!(s, "</g>");
    let _ = writeln!(s, r#"<g class="y-ticks" text-anchor="end">"#);
    let mut v = 0.0;
    while v <= ymax + 1e-9 {
        let y = sy(v);
        let _ = writeln!(
            s,
            r##"<line x1="{LEFT}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#e4e4e4"/><line x1="{:.1}" y1="{y:.1}" x2="{LEFT}" y2="{y:.1}" stroke="#000000"/><text x="{:.1}" y="{:.1}">{}</text>"##,
            LEFT + pw,
            LEFT - 5.0,
            LEFT - 8.0,
            y + 4.0,
            tick_label(v, ystep)
        );
        v += ystep;
    }
    let _ = writeln!(s, "</g>");
    // axes and their labels
    let _ = writeln!(
        s,
        r##"<path class="axes" d="M{LEFT},{TOP} V{:.1} H{:.1}" fill="none" stroke="#000000"/>"##,
        TOP + ph,
        LEFT + pw
    );
    let _ = writeln!(
        s,
        r#"<text class="x-label" x="{:.1}" y="{:.1}" text-anchor="middle">vertices (both meshes, shared ones once)</text>"#,
        LEFT + pw / 2.0,
        HEIGHT - 14.0
    );
    let _ = writeln!(
        s,
        r#"<text class="y-label" x="18" y="{:.1}" text-anchor="middle" transform="rotate(-90 18 {:.1})">saving against the rectangle (texels)</text>"#,
        TOP + ph / 2.0,
        TOP + ph / 2.0
    );
    // the knee's target line
    let knee = marks
        .knee
        .and_then(|(b, frac)| pts.iter().find(|p| p.budget == b).map(|p| (*p, frac)));
    if let Some((_, frac)) = knee {
        let top = pts
            .iter()
            .max_by_key(|p| p.budget)
            .map_or(0.0, |p| p.saving);
        let y = sy(frac * top);
        let _ = writeln!(
            s,
            r##"<line class="target" data-fraction="{frac}" x1="{LEFT}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{KNEE}" stroke-dasharray="4 4"/><text x="{:.1}" y="{:.1}" text-anchor="end" fill="{KNEE}">{}% of the saving at the largest budget</text>"##,
            LEFT + pw,
            LEFT + pw - 4.0,
            y - 5.0,
            trim(100.0 * frac)
        );
    }
    // the chosen budget
    if let Some(b) = marks.chosen {
        if let Some(p) = pts.iter().find(|p| p.budget == b) {
            let x = sx(p.vertices as f64);
            let _ = writeln!(
                s,
                r#"<line id="chosen" class="chosen" data-budget="{b}" data-vertices="{}" x1="{x:.1}" y1="{TOP}" x2="{x:.1}" y2="{:.1}" stroke="{CHOSEN}" stroke-width="2"/><text x="{:.1}" y="{:.1}" fill="{CHOSEN}">chosen: budget {b}</text>"#,
                p.vertices,
                TOP + ph,
                x + 4.0,
                TOP + 12.0
            );
        }
    }
    // the curve and its cuts
    let line: Vec<String> = pts
        .iter()
        .map(|p| format!("{:.1},{:.1}", sx(p.vertices as f64), sy(p.saving)))
        .collect();
    let _ = writeln!(
        s,
        r#"<polyline class="curve" points="{}" fill="none" stroke="{CURVE}" stroke-width="2"/>"#,
        line.join(" ")
    );
    for p in &pts {
        let _ = writeln!(
            s,
            r##"<circle class="cut" data-budget="{}" data-vertices="{}" data-saving="{}" cx="{:.1}" cy="{:.1}" r="3" fill="{CURVE}"><title>budget {}: {} vertices, saving {} texels</title></circle>"##,
            p.budget,
            p.vertices,
            p.saving,
            sx(p.vertices as f64),
            sy(p.saving),
            p.budget,
            p.vertices,
            trim(p.saving)
        );
    }
    if let Some((p, _)) = knee {
        let (x, y) = (sx(p.vertices as f64), sy(p.saving));
        let _ = writeln!(
            s,
            r##"<circle id="knee" class="knee" data-budget="{}" data-vertices="{}" data-saving="{}" cx="{x:.1}" cy="{y:.1}" r="6" fill="none" stroke="{KNEE}" stroke-width="2"/><text x="{:.1}" y="{:.1}" fill="{KNEE}">knee: budget {}</text>"##,
            p.budget,
            p.vertices,
            p.saving,
            x + 9.0,
            y + 16.0,
            p.budget
        );
    }
    s.push_str("</svg>\n");
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Steps are 1, 2 or 5 times a power of ten (the usual "nice numbers"
    /// of chart axes, common practice, no source) and give at most the
    /// asked number of intervals.
    #[test]
    fn tick_steps_are_nice() {
        for (span, count) in [(256.0, 8), (1_000_000.0, 6), (7.0, 6), (0.3, 5), (4.0, 8)] {
            let step: f64 = tick_step(span, count);
            let m = step / 10f64.powf(step.log10().floor());
            assert!(
                [1.0, 2.0, 5.0].iter().any(|x| (m - x).abs() < 1e-9),
                "{span}: {step}"
            );
            assert!(span / step <= count as f64 + 1e-9, "{span}: {step}");
            assert!(
                span / step > count as f64 / 5.0,
                "{span}: {step} too coarse"
            );
        }
    }

    #[test]
    fn escapes_markup() {
        assert_eq!(
            xml_escape(r#"a<b & "c">"#),
            "a&lt;b &amp; &quot;c&quot;&gt;"
        );
    }
}
