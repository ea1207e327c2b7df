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

/// Colour of the curve and its cuts (a slate blue; the three colours are
/// our own, told apart by hue and by lightness).
pub const CURVE: &str = "#30619b";
/// Colour of the knee's mark and its target line (a burnt orange).
pub const KNEE: &str = "#b5541b";
/// Colour of the chosen budget's line (an olive green).
pub const CHOSEN: &str = "#56761c";
/// Size of the labels' text, SVG user units.
pub const LABEL_SIZE: f64 = 12.0;
/// Width of a character of the labels, as a share of the text size: an
/// upper estimate for sans-serif text of digits and lowercase letters
/// (common practice, no source), used to keep labels inside the figure.
pub const CHAR_EM: f64 = 0.65;

/// A box in SVG user units, y down.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Box2 {
    /// Left.
    pub x0: f64,
    /// Top.
    pub y0: f64,
    /// Right.
    pub x1: f64,
    /// Bottom.
    pub y1: f64,
}

impl Box2 {
    /// Whether the two boxes share any point.
    pub fn overlaps(&self, o: &Box2) -> bool {
        self.x0 <= o.x1 && o.x0 <= self.x1 && self.y0 <= o.y1 && o.y0 <= self.y1
    }
    /// Whether `o` lies inside this box.
    pub fn contains(&self, o: &Box2) -> bool {
        o.x0 >= self.x0 && o.x1 <= self.x1 && o.y0 >= self.y0 && o.y1 <= self.y1
    }
    /// Whether the segment from `a` to `b` meets the box (clipped against
    /// it, Liang and Barsky's parametric test).
    pub fn meets_segment(&self, a: (f64, f64), b: (f64, f64)) -> bool {
        let (dx, dy) = (b.0 - a.0, b.1 - a.1);
        let (mut t0, mut t1) = (0.0f64, 1.0f64);
        for (p, q) in [
            (-dx, a.0 - self.x0),
            (dx, self.x1 - a.0),
            (-dy, a.1 - self.y0),
            (dy, self.y1 - a.1),
        ] {
            if p == 0.0 {
                if q < 0.0 {
                    return false;
                }
            } else {
                let r = q / p;
                if p < 0.0 {
                    t0 = t0.max(r);
                } else {
                    t1 = t1.min(r);
                }
                if t0 > t1 {
                    return false;
                }
            }
        }
        true
    }
}

/// The box of `text` drawn at `x` (as `anchor`: `start`, `middle` or
/// `end`) with its baseline at `y`, at text size `size`.
pub fn text_box(text: &str, x: f64, y: f64, anchor: &str, size: f64) -> Box2 {
    let w = text.chars().count() as f64 * CHAR_EM * size;
    let x0 = match anchor {
        "end" => x - w,
        "middle" => x - w / 2.0,
        _ => x,
    };
    Box2 {
        x0,
        y0: y - 0.8 * size,
        x1: x0 + w,
        y1: y + 0.25 * size,
    }
}

/// Places a label at the first of `candidates` ((x, baseline y, anchor))
/// whose box lies inside `area`, off the `curve` (a polyline) and the
/// other marks' `lines`, off the `points` (each a box) and off the boxes
/// `taken`; the first candidate
/// moved inside `area` when none does. Returns the position and its box.
#[allow(clippy::type_complexity)]
fn place(
    text: &str,
    candidates: &[(f64, f64, &'static str)],
    area: Box2,
    curve: &[(f64, f64)],
    lines: &[((f64, f64), (f64, f64))],
    points: &[Box2],
    taken: &[Box2],
) -> (f64, f64, &'static str, Box2) {
    // past the candidates, anywhere in the area (rows from the top)
    let mut anywhere = Vec::new();
    let mut y = area.y0 + LABEL_SIZE;
    while y < area.y1 {
        let mut x = area.x0 + 2.0;
        while x < area.x1 {
            anywhere.push((x, y, "start"));
            x += 20.0;
        }
        y += 8.0;
    }
    // nearest to the first candidate first
    let (fx, fy, _) = candidates[0];
    anywhere.sort_by(|a, b| {
        let d = |p: &(f64, f64, &str)| (p.0 - fx).hypot(p.1 - fy);
        d(a).total_cmp(&d(b))
    });
    for &(x, y, anchor) in candidates.iter().chain(&anywhere) {
        let b = text_box(text, x, y, anchor, LABEL_SIZE);
        let grown = Box2 {
            x0: b.x0 - 2.0,
            y0: b.y0 - 2.0,
            x1: b.x1 + 2.0,
            y1: b.y1 + 2.0,
        };
        if area.contains(&b)
            && !curve.windows(2).any(|s| grown.meets_segment(s[0], s[1]))
            && !lines.iter().any(|&(a, b)| grown.meets_segment(a, b))
            && !points.iter().chain(taken).any(|p| grown.overlaps(p))
        {
            return (x, y, anchor, b);
        }
    }
    let (x, y, anchor) = candidates[0];
    let b = text_box(text, x, y, anchor, LABEL_SIZE);
    let (mut x, mut y) = (x, y);
    if b.x0 < area.x0 {
        x += area.x0 - b.x0;
    }
    if b.x1 > area.x1 {
        x -= b.x1 - area.x1;
    }
    if b.y0 < area.y0 {
        y += area.y0 - b.y0;
    }
    if b.y1 > area.y1 {
        y -= b.y1 - area.y1;
    }
    (x, y, anchor, text_box(text, x, y, anchor, LABEL_SIZE))
}

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
///
/// The axes fit the data: x from 0 to a round number of vertices past the
/// largest (whole vertices only), y from 0 (or the smallest saving, if
/// negative) to a round number a tenth past the largest saving, so every
/// cut lies inside the plot with room for its labels. The labels (knee,
/// chosen budget, the knee's target line) are placed where they stay
/// inside the plot area, off the curve, its cuts and each other.
pub fn sweep_svg(title: &str, points: &[SweepPoint], marks: Marks) -> String {
    let mut pts: Vec<&SweepPoint> = points.iter().collect();
    pts.sort_by_key(|p| (p.vertices, p.budget));
    let xmax_data = pts.iter().map(|p| p.vertices).max().unwrap_or(4) as f64;
    let ymax_data = pts.iter().map(|p| p.saving).fold(0.0, f64::max);
    let ymin_data = pts.iter().map(|p| p.saving).fold(0.0, f64::min);
    let xreach = (xmax_data * 1.1).max(xmax_data + 1.0);
    let xstep = tick_step(xreach, 8).max(1.0);
    let xmax = (xreach / xstep).ceil() * xstep;
    let yspan = if ymax_data - ymin_data > 0.0 {
        (ymax_data - ymin_data) * 1.1
    } else {
        1.0
    };
    let ystep = tick_step(yspan, 6);
    let ymin = (ymin_data / ystep).floor() * ystep;
    // a tenth of the data's span above the largest saving, on a tick
    let ytarget = ymin_data + yspan;
    let ymax = ymin + ((ytarget - ymin) / ystep).ceil().max(1.0) * ystep;
    let (pw, ph) = (WIDTH - LEFT - RIGHT, HEIGHT - TOP - BOTTOM);
    let sx = |v: f64| LEFT + v / xmax * pw;
    let sy = |v: f64| TOP + ph - (v - ymin) / (ymax - ymin) * ph;
    let area = Box2 {
        x0: LEFT + 2.0,
        y0: TOP + 2.0,
        x1: LEFT + pw - 2.0,
        y1: TOP + ph - 2.0,
    };
    let curve: Vec<(f64, f64)> = pts
        .iter()
        .map(|p| (sx(p.vertices as f64), sy(p.saving)))
        .collect();
    let dots: Vec<Box2> = curve
        .iter()
        .map(|&(x, y)| Box2 {
            x0: x - 7.0,
            y0: y - 7.0,
            x1: x + 7.0,
            y1: y + 7.0,
        })
        .collect();
    let mut taken: Vec<Box2> = Vec::new();
    let knee = marks
        .knee
        .and_then(|(b, frac)| pts.iter().find(|p| p.budget == b).map(|p| (*p, frac)));
    let chosen = marks
        .chosen
        .and_then(|b| pts.iter().find(|p| p.budget == b).map(|p| (b, *p)));
    let target_y = knee.map(|(_, frac)| {
        let top = pts
            .iter()
            .max_by_key(|p| p.budget)
            .map_or(0.0, |p| p.saving);
        sy(frac * top)
    });
    let chosen_line = chosen.map(|(_, p)| {
        let x = sx(p.vertices as f64);
        ((x, TOP), (x, TOP + ph))
    });
    let target_line = target_y.map(|y| ((LEFT, y), (LEFT + pw, y)));
    let both: Vec<_> = chosen_line.into_iter().chain(target_line).collect();

    let mut s = String::new();
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{HEIGHT}" viewBox="0 0 {WIDTH} {HEIGHT}" font-family="sans-serif" font-size="{LABEL_SIZE}">"#
    );
    let _ = writeln!(s, "<title>{}</title>", xml_escape(title));
    let _ = writeln!(
        s,
        r##"<rect x="0" y="0" width="{WIDTH}" height="{HEIGHT}" fill="#ffffff"/>"##
    );
    // the title, shortened in the middle to fit the figure
    let fit = ((WIDTH - LEFT - 8.0) / (CHAR_EM * 14.0)) as usize;
    let _ = writeln!(
        s,
        r#"<text class="title" x="{LEFT}" y="24" font-size="14" font-weight="bold">{}</text>"#,
        xml_escape(&crate::present::tables::shorten_middle(title, fit))
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
    let mut v = ymin;
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
        r##"<path class="axes" data-x-min="0" data-x-max="{xmax}" data-y-min="{ymin}" data-y-max="{ymax}" d="M{LEFT},{TOP} V{:.1} H{:.1}" fill="none" stroke="#000000"/>"##,
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
    // the curve and its cuts
    let line: Vec<String> = curve
        .iter()
        .map(|(x, y)| format!("{x:.1},{y:.1}"))
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
    // the knee and its label, first: it belongs next to its cut
    if let Some((p, _)) = knee {
        let (x, y) = (sx(p.vertices as f64), sy(p.saving));
        let text = format!("knee: budget {}", p.budget);
        let mut cands = Vec::new();
        for dy in [20.0, -12.0, 36.0, -28.0, 52.0, -44.0, 68.0, -60.0] {
            cands.push((x + 10.0, y + dy, "start"));
            cands.push((x - 10.0, y + dy, "end"));
        }
        // farther away, still beside the cut: below it first
        let mut dy = 84.0;
        while dy < ph {
            for d in [dy, -dy] {
                cands.push((x + 10.0, y + d, "start"));
                cands.push((x - 10.0, y + d, "end"));
            }
            dy += 16.0;
        }
        let (lx, ly, anchor, b) = place(&text, &cands, area, &curve, &both, &dots, &taken);
        taken.push(b);
        let _ = writeln!(
            s,
            r##"<circle id="knee" class="knee" data-budget="{}" data-vertices="{}" data-saving="{}" cx="{x:.1}" cy="{y:.1}" r="6" fill="none" stroke="{KNEE}" stroke-width="2"/><text class="knee-label" x="{lx:.1}" y="{ly:.1}" text-anchor="{anchor}" fill="{KNEE}">{text}</text>"##,
            p.budget, p.vertices, p.saving,
        );
    }
    // the chosen budget
    if let Some((b, p)) = chosen {
        {
            let x = sx(p.vertices as f64);
            let text = format!("chosen: budget {b}");
            let mut cands = Vec::new();
            let mut y = TOP + 16.0;
            while y < TOP + ph {
                cands.push((x + 5.0, y, "start"));
                cands.push((x - 5.0, y, "end"));
                y += 16.0;
            }
            let lines: Vec<_> = target_line.into_iter().collect();
            let (lx, ly, anchor, bx) = place(&text, &cands, area, &curve, &lines, &dots, &taken);
            taken.push(bx);
            let _ = writeln!(
                s,
                r#"<line id="chosen" class="chosen" data-budget="{b}" data-vertices="{}" x1="{x:.1}" y1="{TOP}" x2="{x:.1}" y2="{:.1}" stroke="{CHOSEN}" stroke-width="2"/><text class="chosen-label" x="{lx:.1}" y="{ly:.1}" text-anchor="{anchor}" fill="{CHOSEN}">{text}</text>"#,
                p.vertices,
                TOP + ph,
            );
        }
    }
    // the knee's target line
    if let (Some((_, frac)), Some(y)) = (knee, target_y) {
        let text = format!(
            "{}% of the saving at the largest budget",
            trim(100.0 * frac)
        );
        let cands = [
            (LEFT + pw - 6.0, y - 6.0, "end"),
            (LEFT + pw - 6.0, y + 16.0, "end"),
            (LEFT + 6.0, y - 6.0, "start"),
            (LEFT + 6.0, y + 16.0, "start"),
            (LEFT + pw / 2.0, y - 6.0, "middle"),
            (LEFT + pw / 2.0, y + 16.0, "middle"),
        ];
        let lines: Vec<_> = chosen_line.into_iter().collect();
        let (lx, ly, anchor, bx) = place(&text, &cands, area, &curve, &lines, &dots, &taken);
        taken.push(bx);
        let _ = writeln!(
            s,
            r##"<line class="target" data-fraction="{frac}" x1="{LEFT}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{KNEE}" stroke-dasharray="4 4"/><text class="target-label" x="{lx:.1}" y="{ly:.1}" text-anchor="{anchor}" fill="{KNEE}">{text}</text>"##,
            LEFT + pw,
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
