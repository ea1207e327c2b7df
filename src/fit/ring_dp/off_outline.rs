//! Candidate vertices off the outline for the covering dynamic program.
//!
//! A covering polygon whose corners all lie on the outline must keep every
//! corner of the island's convex hull; a circumscribed polygon cuts across
//! them with corners outside the shape, where the lines of two hull edges
//! meet. The candidates here are the island's convex-hull corners (thinned
//! to [`MAX_HULL`]) and, for pairs of hull-edge lines up to [`MAX_SPAN`]
//! lines apart, the lattice point nearest to where the two lines meet
//! among those on the outer side of both (the meeting point rounded
//! outward; an edge from such a point along either line stays on or
//! outside the hull). They are ordered by angle about the hull's mean
//! corner, so a polygon through them in that order turns once around the
//! island; whether a chord between two of them keeps the must-cover
//! region on its inner side is decided by the exact chord test of the
//! caller, and every polygon kept is checked to be simple there. Nothing
//! here is a predicate the guarantee rests on.
//!
//! What the pruning gives up: only [`MAX_LINES`] hull-edge lines are used
//! (picked about evenly by direction when the hull has more edges), so the
//! polygons found have their edges flush with those lines or through hull
//! corners; polygons with edges in other directions (touching the hull at
//! a corner only) are left to the fitter's later lattice moves. A meeting
//! point more than [`MAX_SPAN`] lines on is not a candidate, so covering
//! polygons with fewer than about `MAX_LINES / MAX_SPAN` corners use hull
//! corners there instead.

use crate::fit::geom::orient;
use crate::outline::Point;

/// Hull-edge lines used at most.
pub const MAX_LINES: usize = 32;
/// Lines apart (along the hull) whose meeting points are candidates.
pub const MAX_SPAN: usize = 8;
/// Hull corners kept at most as candidates themselves.
pub const MAX_HULL: usize = 48;

/// The candidates for the covering polygon of an island with convex hull
/// `hull` (counter-clockwise in the shoelace sense: positive area, no
/// collinear corners), inside the image `[0, width] x [0, height]`.
pub fn cover_candidates(hull: &[Point], width: i64, height: i64) -> Vec<Point> {
    let h = hull.len();
    if h < 3 {
        return hull.to_vec();
    }
    let edge = |i: usize| (hull[i], hull[(i + 1) % h]);
    let angle = |i: usize| {
        let (a, b) = edge(i);
        ((b[1] - a[1]) as f64).atan2((b[0] - a[0]) as f64)
    };
    // the lines: every hull edge, or about evenly spread by direction
    let mut lines: Vec<usize> = Vec::new();
    if h <= MAX_LINES {
        lines.extend(0..h);
    } else {
        let step = std::f64::consts::TAU / MAX_LINES as f64;
        let mut last = angle(0);
        lines.push(0);
        for i in 1..h {
            let turn = (angle(i) - last).rem_euclid(std::f64::consts::TAU);
            // leave room before the first line again
            let to_first = (angle(0) - angle(i)).rem_euclid(std::f64::consts::TAU);
            if turn >= step && to_first >= step / 2.0 {
                lines.push(i);
                last = angle(i);
            }
        }
    }
    let mut out: Vec<Point> = super::candidates(hull, MAX_HULL);
    let l = lines.len();
    for a in 0..l {
        for s in 1..=MAX_SPAN.min(l - 1) {
            let (p1, p2) = edge(lines[a]);
            let (q1, q2) = edge(lines[(a + s) % l]);
            if let Some(p) = meeting_point_outward(p1, p2, q1, q2) {
                if p[0] >= 0 && p[1] >= 0 && p[0] <= width && p[1] <= height {
                    out.push(p);
                }
            }
        }
    }
    out.sort_unstable();
    out.dedup();
    let c = hull
        .iter()
        .fold([0.0, 0.0], |c, p| [c[0] + p[0] as f64, c[1] + p[1] as f64]);
    let c = [c[0] / h as f64, c[1] / h as f64];
    let key = |p: &Point| (p[1] as f64 - c[1]).atan2(p[0] as f64 - c[0]);
    out.sort_by(|p, q| key(p).total_cmp(&key(q)).then(p.cmp(q)));
    out
}

/// Where the line through `p1 p2` meets the line through `q1 q2` (the
/// second turned left of the first by less than a half turn), rounded to
/// the nearest lattice point on or right of both lines (their outer side
/// for a counter-clockwise hull); `None` when they do not meet ahead or no
/// lattice point next to the meeting point is on the outer side of both.
pub fn meeting_point_outward(p1: Point, p2: Point, q1: Point, q2: Point) -> Option<Point> {
    let d1 = [(p2[0] - p1[0]) as i128, (p2[1] - p1[1]) as i128];
    let d2 = [(q2[0] - q1[0]) as i128, (q2[1] - q1[1]) as i128];
    let den = d1[0] * d2[1] - d1[1] * d2[0];
    if den <= 0 {
        return None;
    }
    let w = [(q1[0] - p1[0]) as i128, (q1[1] - p1[1]) as i128];
    let t = w[0] * d2[1] - w[1] * d2[0];
    // meeting point = (p1 * den + d1 * t) / den
    let num = [
        p1[0] as i128 * den + d1[0] * t,
        p1[1] as i128 * den + d1[1] * t,
    ];
    let (fx, fy) = (num[0].div_euclid(den), num[1].div_euclid(den));
    let mut best: Option<(i128, Point)> = None;
    for dy in -1..=2 {
        for dx in -1..=2 {
            let (x, y) = (fx + dx, fy + dy);
            let p = [x as i64, y as i64];
            if orient(p1, p2, p) > 0 || orient(q1, q2, p) > 0 {
                continue;
            }
            let (ex, ey) = (x * den - num[0], y * den - num[1]);
            let d = ex * ex + ey * ey;
            if best.is_none_or(|(b, _)| d < b) {
                best = Some((d, p));
            }
        }
    }
    best.map(|(_, p)| p)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Two lines meeting at a lattice point meet there; meeting off the
    /// lattice, the point kept is on the outer side of both lines and
    /// within one step of the meeting point.
    #[test]
    fn meeting_points_round_outward() {
        // x axis (rightwards) and the line x = 10 (upwards): meet at (10, 0)
        assert_eq!(
            meeting_point_outward([0, 0], [4, 0], [10, 3], [10, 7]),
            Some([10, 0])
        );
        // y = 0 and the line through (10, 1), (9, 4): meets y = 0 at
        // x = 10 + 1/3; the outer side of the second line is x >= its x
        let p = meeting_point_outward([0, 0], [4, 0], [10, 1], [9, 4]).unwrap();
        assert!(orient([0, 0], [4, 0], p) <= 0 && orient([10, 1], [9, 4], p) <= 0);
        assert_eq!(p, [11, 0]);
        // parallel or turning right: no meeting point ahead
        assert_eq!(meeting_point_outward([0, 0], [4, 0], [0, 5], [4, 5]), None);
        assert_eq!(meeting_point_outward([0, 0], [4, 0], [6, 0], [7, -3]), None);
    }
}
