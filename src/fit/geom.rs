//! Exact integer predicates on lattice points (half-texel units).

use crate::outline::Point;

/// Twice the signed area of triangle (a, b, c); positive when a→b→c turns
/// right on screen with y down (clockwise).
#[inline]
pub fn orient(a: Point, b: Point, c: Point) -> i64 {
    (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
}

#[inline]
fn on_segment(a: Point, b: Point, p: Point) -> bool {
    p[0] >= a[0].min(b[0])
        && p[0] <= a[0].max(b[0])
        && p[1] >= a[1].min(b[1])
        && p[1] <= a[1].max(b[1])
}

/// Whether closed segments ab and cd share any point.
pub fn segments_touch(a: Point, b: Point, c: Point, d: Point) -> bool {
    let d1 = orient(c, d, a).signum();
    let d2 = orient(c, d, b).signum();
    let d3 = orient(a, b, c).signum();
    let d4 = orient(a, b, d).signum();
    if d1 * d2 < 0 && d3 * d4 < 0 {
        return true;
    }
    (d1 == 0 && on_segment(c, d, a))
        || (d2 == 0 && on_segment(c, d, b))
        || (d3 == 0 && on_segment(a, b, c))
        || (d4 == 0 && on_segment(a, b, d))
}

/// Whether `p` lies inside or on the boundary of the simple polygon `poly`.
pub fn in_closed_polygon(p: Point, poly: &[Point]) -> bool {
    let n = poly.len();
    let mut inside = false;
    for i in 0..n {
        let a = poly[i];
        let b = poly[(i + 1) % n];
        if orient(a, b, p) == 0 && on_segment(a, b, p) {
            return true;
        }
        if (a[1] > p[1]) != (b[1] > p[1]) {
            // x of the edge at p.y, compared exactly: p.x < a.x + (p.y-a.y)(b.x-a.x)/(b.y-a.y)
            let lhs = (p[0] - a[0]) * (b[1] - a[1]);
            let rhs = (p[1] - a[1]) * (b[0] - a[0]);
            let left = if b[1] > a[1] { lhs < rhs } else { lhs > rhs };
            if left {
                inside = !inside;
            }
        }
    }
    inside
}

/// Twice the signed shoelace area of a closed polygon.
pub fn twice_area(poly: &[Point]) -> i64 {
    crate::outline::twice_area(poly)
}

/// For each grid row triangle `tri` overlaps with positive area, in order,
/// the half-open span of cells `x0..x1` it overlaps with positive area;
/// exact; stops when `f` is false and then returns false.
///
/// Over row `y` (the strip between lattice lines `y` and `y + 1`) the
/// triangle's extent is reached on those two lines: at a vertex on one, or
/// where an edge crosses one. Each line is visited once; an edge's crossing
/// `x` is stepped from line to line as a quotient and remainder (no
/// division per line), rounded down for the span's left end and up for its
/// right end.
pub fn triangle_row_spans(tri: &[Point; 3], mut f: impl FnMut(i64, i64, i64) -> bool) -> bool {
    // the corners from top to bottom: between the top and bottom lines a
    // line crosses the long edge (top to bottom) and one short edge, or
    // passes through the middle corner
    let mut v = *tri;
    if v[0][1] > v[1][1] {
        v.swap(0, 1);
    }
    if v[1][1] > v[2][1] {
        v.swap(1, 2);
    }
    if v[0][1] > v[1][1] {
        v.swap(0, 1);
    }
    let [a, b, c] = v;
    if a[1] == c[1] {
        return true;
    }
    // the extent on the top line: its corners
    let mut above = if b[1] == a[1] {
        (a[0].min(b[0]), a[0].max(b[0]))
    } else {
        (a[0], a[0])
    };
    let mut long = EdgeStep::new(a, c);
    let mut short = if a[1] < b[1] {
        EdgeStep::new(a, b)
    } else {
        EdgeStep::new(b, c)
    };
    for y in a[1]..c[1] {
        let yl = y + 1;
        let below = if yl == c[1] {
            if b[1] == c[1] {
                (c[0].min(b[0]), c[0].max(b[0]))
            } else {
                (c[0], c[0])
            }
        } else {
            let (l0, l1) = long.take();
            let (s0, s1) = if yl == b[1] {
                short = EdgeStep::new(b, c);
                (b[0], b[0])
            } else {
                short.take()
            };
            (l0.min(s0), l1.max(s1))
        };
        let (lo, hi) = (above.0.min(below.0), above.1.max(below.1));
        if lo < hi && !f(y, lo, hi) {
            return false;
        }
        above = below;
    }
    true
}

/// An edge's crossings with successive lattice lines, from the line below
/// its upper end: `x = q + r / den` (0 <= r < den), stepped by
/// `dq + dr / den` per line (no division per line).
struct EdgeStep {
    q: i64,
    r: i64,
    dq: i64,
    dr: i64,
    den: i64,
}

impl EdgeStep {
    /// The edge from `p` down to `q` (`p[1] < q[1]`; any other pair gives
    /// a step that is never taken).
    #[inline]
    fn new(p: Point, q: Point) -> EdgeStep {
        let (den, dx) = ((q[1] - p[1]).max(1), q[0] - p[0]);
        // the crossing of line p.y + 1: x = (p.x * den + dx) / den
        let num = p[0] * den + dx;
        EdgeStep {
            q: num.div_euclid(den),
            r: num.rem_euclid(den),
            dq: dx.div_euclid(den),
            dr: dx.rem_euclid(den),
            den,
        }
    }
    /// The crossing's floor and ceiling on this line; then on to the next.
    #[inline]
    fn take(&mut self) -> (i64, i64) {
        let out = (self.q, self.q + (self.r != 0) as i64);
        self.q += self.dq;
        self.r += self.dr;
        if self.r >= self.den {
            self.r -= self.den;
            self.q += 1;
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_rng::Lcg;

    fn floor_div(n: i64, d: i64) -> i64 {
        n.div_euclid(d)
    }
    fn ceil_div(n: i64, d: i64) -> i64 {
        -((-n).div_euclid(d))
    }

    /// The definition, line by line with divisions: for each grid row a
    /// convex polygon overlaps with positive area, the
    /// half-open span of cells `x0..x1` it overlaps with positive area; exact.
    fn convex_row_spans(poly: &[Point], mut f: impl FnMut(i64, i64, i64) -> bool) -> bool {
        let ymin = poly.iter().map(|p| p[1]).min().unwrap();
        let ymax = poly.iter().map(|p| p[1]).max().unwrap();
        let n = poly.len();
        for y in ymin..ymax {
            // x-extent of poly ∩ [y, y+1] as rationals, tracked by floor(min) / ceil(max)
            let mut lo = i64::MAX;
            let mut hi = i64::MIN;
            for i in 0..n {
                let a = poly[i];
                let b = poly[(i + 1) % n];
                if a[1] >= y && a[1] <= y + 1 {
                    lo = lo.min(a[0]);
                    hi = hi.max(a[0]);
                }
                if a[1] == b[1] {
                    continue;
                }
                for yl in [y, y + 1] {
                    if (yl > a[1].min(b[1])) && (yl < a[1].max(b[1])) {
                        let (p, q) = if a[1] < b[1] { (a, b) } else { (b, a) };
                        let num = p[0] * (q[1] - p[1]) + (yl - p[1]) * (q[0] - p[0]);
                        let den = q[1] - p[1];
                        lo = lo.min(floor_div(num, den));
                        hi = hi.max(ceil_div(num, den));
                    }
                }
            }
            if lo < hi && !f(y, lo, hi) {
                return false;
            }
        }
        true
    }

    #[test]
    fn row_spans_of_right_triangle() {
        let mut rows = Vec::new();
        triangle_row_spans(&[[0, 0], [4, 0], [0, 4]], |y, a, b| {
            rows.push((y, a, b));
            true
        });
        assert_eq!(rows, vec![(0, 0, 4), (1, 0, 3), (2, 0, 2), (3, 0, 1)]);
    }

    #[test]
    fn touching_segments() {
        assert!(segments_touch([0, 0], [4, 0], [2, 0], [2, 5]));
        assert!(!segments_touch([0, 0], [4, 0], [5, 0], [6, 0]));
        assert!(segments_touch([0, 0], [4, 4], [0, 4], [4, 0]));
        assert!(in_closed_polygon([1, 1], &[[0, 0], [4, 0], [0, 4]]));
        assert!(in_closed_polygon([2, 2], &[[0, 0], [4, 0], [0, 4]]));
        assert!(!in_closed_polygon([3, 3], &[[0, 0], [4, 0], [0, 4]]));
    }

    /// Stepping the edges gives exactly the spans of the line-by-line
    /// definition, on random triangles of every shape and orientation,
    /// degenerate ones included, and stops where `f` says so.
    #[test]
    fn stepped_spans_match_the_definition() {
        let mut rng = Lcg(808);
        let mut rnd = move |n: i64| rng.below(n as u64) as i64 - n / 2;
        for case in 0..20000 {
            let span = [4, 30, 500][case % 3];
            let tri = [
                [rnd(span), rnd(span)],
                [rnd(span), rnd(span)],
                [rnd(span), rnd(span)],
            ];
            let (mut ours, mut theirs) = (Vec::new(), Vec::new());
            let stop = (case % 7 == 0).then(|| rnd(span));
            let a = triangle_row_spans(&tri, |y, x0, x1| {
                ours.push((y, x0, x1));
                stop != Some(y)
            });
            let b = convex_row_spans(&tri, |y, x0, x1| {
                theirs.push((y, x0, x1));
                stop != Some(y)
            });
            assert_eq!((a, &ours), (b, &theirs), "case {case}: {tri:?}");
        }
    }
}
