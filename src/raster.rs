//! Coverage on a simulated GPU: which pixels a triangle covers, row by row,
//! and the aligned 2x2 quads its fragments are shaded in.
//!
//! **Fixed point.** Positions are screen pixels (origin top-left, y down) as
//! `f32`. Like a GPU, the rasterizer first snaps every vertex to a fixed
//! sub-pixel grid: [`SUBPIXEL_BITS`] = 8 fractional bits, 1/256 pixel, the
//! precision Direct3D 11 requires (from memory), rounding to the nearest grid
//! point, ties to even. From then on everything is integer: edge functions
//! are evaluated exactly in `i128` at the pixel centres (x + 1/2, y + 1/2),
//! which lie on the grid, so every tie is decided exactly. Snapped
//! coordinates are clamped to +-2^40 grid units (about +-4e9 pixels), far
//! beyond any scene, which keeps every product well inside `i128`.
//!
//! **Coverage** (the top-left rule of the Direct3D 11 rasterization rules;
//! Vulkan implementations follow the same convention; from memory). A pixel
//! is covered when its centre lies strictly inside the triangle, or exactly
//! on an edge that is a *top* edge (exactly horizontal with the triangle
//! below it, y down) or a *left* edge (not horizontal, with the triangle to
//! its right). A centre on a bottom or right edge is not covered; a centre
//! on a vertex is covered only if both edges meeting there are top or left.
//! So two triangles sharing an edge never both cover a pixel, and triangles
//! tiling a region cover each pixel centre inside it exactly once. Either
//! winding is accepted (the triangle is reoriented first); a triangle of zero
//! area (after snapping) covers nothing.
//!
//! **Spans.** For each pixel row a triangle covers, the three edge functions
//! are linear in x, so each bounds the covered x to a half-line found by one
//! exact floor division; the covered pixels of a row are the intersection,
//! clipped to the viewport ([`Triangle::span`]). Cost per triangle is one
//! setup plus three divisions a row, whatever its width; walking the rows
//! in order ([`Triangle::row_spans`]) steps each bound with additions
//! instead, with the same result.
//!
//! **Quads.** GPUs shade fragments in aligned 2x2 quads, one quad per
//! triangle (common practice, no source): [`QuadTracker`] counts the
//! distinct quads (x / 2, y / 2) a triangle's shaded pixels fall in.

use std::ops::Range;

/// Fractional bits of the snapped vertex positions.
pub const SUBPIXEL_BITS: u32 = 8;
/// One pixel in grid units.
const ONE: i128 = 1 << SUBPIXEL_BITS;
/// Half a pixel: pixel centres are at `ONE * x + HALF`.
const HALF: i128 = ONE / 2;
/// Snapped coordinates are clamped to +-LIMIT grid units.
const LIMIT: f64 = (1u64 << 40) as f64;

/// Snaps a coordinate to the sub-pixel grid (grid units), or `None` if it is
/// not finite.
pub fn snap(v: f32) -> Option<i64> {
    if !v.is_finite() {
        return None;
    }
    // f32 -> f64 and the power-of-two scale are exact.
    let s = (v as f64 * ONE as f64).round_ties_even();
    Some(s.clamp(-LIMIT, LIMIT) as i64)
}

fn floor_div(n: i128, d: i128) -> i128 {
    debug_assert!(d > 0);
    n.div_euclid(d)
}

fn ceil_div(n: i128, d: i128) -> i128 {
    -floor_div(-n, d)
}

/// One edge a -> b of a positively oriented triangle (positive shoelace
/// area in y-down coordinates, clockwise on screen). A point p is on the
/// inner side iff E(p) = (b - a) x (p - a) > 0; on the edge E(p) = 0 counts
/// iff the edge is top or left, folded into `bias` (0 or -1) so that the
/// test is always `E(p) + bias >= 0` on integers.
#[derive(Clone, Copy, Debug)]
struct Edge {
    dx: i128,
    dy: i128,
    ax: i128,
    ay: i128,
    bias: i128,
}

impl Edge {
    fn new(a: [i128; 2], b: [i128; 2]) -> Edge {
        let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
        // With positive orientation the interior lies to the right of a -> b
        // as seen on screen: a top edge runs in +x (dy = 0), a left edge runs
        // up the screen (dy < 0).
        let top_left = dy < 0 || (dy == 0 && dx > 0);
        Edge {
            dx,
            dy,
            ax: a[0],
            ay: a[1],
            bias: if top_left { 0 } else { -1 },
        }
    }

    /// Narrows the pixel range [lo, hi) of row `y` to the pixels whose
    /// centres pass this edge.
    fn clip(&self, y: i128, lo: &mut i128, hi: &mut i128) {
        let py = ONE * y + HALF;
        // E(px) + bias = k - dy * px
        let k = self.dx * (py - self.ay) + self.dy * self.ax + self.bias;
        if self.dy == 0 {
            if k < 0 {
                *hi = *lo;
            }
        } else if self.dy > 0 {
            // px <= k / dy, px = ONE * x + HALF
            let x = floor_div(floor_div(k, self.dy) - HALF, ONE);
            *hi = (*hi).min(x + 1);
        } else {
            // px >= -k / m, m = -dy
            let x = ceil_div(ceil_div(-k, -self.dy) - HALF, ONE);
            *lo = (*lo).max(x);
        }
    }
}

/// An edge stepped row by row: the bound it puts on the covered x of a row
/// is `floor(n / d)` (see [`Edge::stepper`]), kept as quotient `q` and
/// remainder `r` in [0, d) of `n`, which grows by a constant each row.
#[derive(Clone, Copy, Debug)]
struct EdgeStep {
    /// dy of the edge: > 0 bounds x from above, < 0 from below, 0 all or none.
    dy: i128,
    /// floor(n / d), or for a horizontal edge the integer k itself.
    q: i128,
    /// n - q d, in [0, d); unused when dy = 0.
    r: i128,
    /// d = ONE |dy| (1 for a horizontal edge).
    d: i128,
    /// Per row, q grows by dq and r by dr (dr in [0, d)), with a carry.
    dq: i128,
    dr: i128,
}

impl Edge {
    /// The stepper of this edge from row `y`. For dy != 0, `clip`'s two
    /// nested divisions fold into one (nested floor divisions by positive
    /// integers compose: floor(floor(a / b) / c) = floor(a / (b c))): with
    /// n = k - HALF dy and d = ONE |dy|, the first pixel past the edge is
    /// floor(n / d) + 1 (dy > 0, an upper bound on x) and the first pixel
    /// inside is -floor(n / d) (dy < 0, a lower bound). One row further
    /// adds ONE dx to k, hence to n.
    fn stepper(&self, y: i128) -> EdgeStep {
        let py = ONE * y + HALF;
        let k = self.dx * (py - self.ay) + self.dy * self.ax + self.bias;
        let step = ONE * self.dx;
        if self.dy == 0 {
            return EdgeStep {
                dy: 0,
                q: k,
                r: 0,
                d: 1,
                dq: step,
                dr: 0,
            };
        }
        let n = k - HALF * self.dy;
        let d = ONE * self.dy.abs();
        EdgeStep {
            dy: self.dy,
            q: floor_div(n, d),
            r: n.rem_euclid(d),
            d,
            dq: floor_div(step, d),
            dr: step.rem_euclid(d),
        }
    }
}

impl EdgeStep {
    /// Narrows [lo, hi) to this edge's bound on the current row.
    fn clip(&self, lo: &mut i128, hi: &mut i128) {
        if self.dy == 0 {
            if self.q < 0 {
                *hi = *lo;
            }
        } else if self.dy > 0 {
            *hi = (*hi).min(self.q + 1);
        } else {
            *lo = (*lo).max(-self.q);
        }
    }

    /// Moves to the next row: additions and one compare, no division.
    fn advance(&mut self) {
        self.q += self.dq;
        self.r += self.dr;
        if self.r >= self.d {
            self.r -= self.d;
            self.q += 1;
        }
    }
}

/// The spans of a triangle row by row, from [`Triangle::row_spans`].
#[derive(Clone, Debug)]
pub struct RowSpans {
    steps: [EdgeStep; 3],
    rows: Range<u32>,
    width: i128,
}

impl Iterator for RowSpans {
    type Item = (u32, Range<u32>);

    fn next(&mut self) -> Option<(u32, Range<u32>)> {
        let y = self.rows.next()?;
        let (mut lo, mut hi) = (0i128, self.width);
        for s in &mut self.steps {
            s.clip(&mut lo, &mut hi);
            s.advance();
        }
        Some((y, if lo < hi { lo as u32..hi as u32 } else { 0..0 }))
    }

    fn size_hint(&self) -> (usize, Option<usize>) {
        self.rows.size_hint()
    }
}

impl ExactSizeIterator for RowSpans {}

/// A triangle set up for rasterization in a viewport.
#[derive(Clone, Debug)]
pub struct Triangle {
    edges: [Edge; 3],
    rows: Range<u32>,
    width: u32,
}

impl Triangle {
    /// Sets up triangle a, b, c (pixels, either winding) for a viewport of
    /// [width, height]. `None` if it covers no pixel for sure: a vertex is
    /// not finite, its snapped area is zero, or no pixel row of the viewport
    /// meets it.
    pub fn new(a: [f32; 2], b: [f32; 2], c: [f32; 2], viewport: [u32; 2]) -> Option<Triangle> {
        let s = |p: [f32; 2]| Some([snap(p[0])? as i128, snap(p[1])? as i128]);
        let (a, mut b, mut c) = (s(a)?, s(b)?, s(c)?);
        let area2 = (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]);
        if area2 == 0 {
            return None;
        }
        if area2 < 0 {
            std::mem::swap(&mut b, &mut c);
        }
        let (ymin, ymax) = (a[1].min(b[1]).min(c[1]), a[1].max(b[1]).max(c[1]));
        // Rows whose centre ONE * y + HALF lies in [ymin, ymax].
        let first = ceil_div(ymin - HALF, ONE).max(0);
        let last = floor_div(ymax - HALF, ONE).min(viewport[1] as i128 - 1);
        if first > last || viewport[0] == 0 {
            return None;
        }
        Some(Triangle {
            edges: [Edge::new(a, b), Edge::new(b, c), Edge::new(c, a)],
            rows: first as u32..last as u32 + 1,
            width: viewport[0],
        })
    }

    /// The viewport rows that may hold covered pixels (a superset: some
    /// spans in it may be empty).
    pub fn rows(&self) -> Range<u32> {
        self.rows.clone()
    }

    /// The covered pixels of row `y`, clipped to the viewport (maybe empty).
    pub fn span(&self, y: u32) -> Range<u32> {
        let (mut lo, mut hi) = (0i128, self.width as i128);
        for e in &self.edges {
            e.clip(y as i128, &mut lo, &mut hi);
            if lo >= hi {
                return 0..0;
            }
        }
        lo as u32..hi as u32
    }

    /// Every row of [`Triangle::rows`] with its span, in increasing y:
    /// exactly `(y, self.span(y))`, but each edge's bound is stepped from
    /// row to row with integer additions (one division per edge to set up,
    /// none per row).
    pub fn row_spans(&self) -> RowSpans {
        let y = self.rows.start as i128;
        RowSpans {
            steps: self.edges.map(|e| e.stepper(y)),
            rows: self.rows.clone(),
            width: self.width as i128,
        }
    }
}

/// Counts the aligned 2x2 quads that a triangle's shaded pixels fall in.
///
/// Call [`QuadTracker::next_triangle`] before each triangle and hand it that
/// triangle's shaded pixels with rows in increasing order (in any order
/// within a row). Quad (qx, qy) holds pixels (2qx..2qx+2, 2qy..2qy+2).
#[derive(Clone, Debug)]
pub struct QuadTracker {
    /// Per quad column, the (triangle, quad row) tag that last touched it.
    stamp: Vec<u64>,
    serial: u64,
}

impl QuadTracker {
    /// A tracker for rows `width` pixels wide (the viewport's width), before any
    /// triangle.
    pub fn new(width: u32) -> QuadTracker {
        QuadTracker {
            stamp: vec![0; (width as usize).div_ceil(2)],
            serial: 0,
        }
    }

    /// Starts a new triangle: no quad is touched yet.
    pub fn next_triangle(&mut self) {
        self.serial += 1;
    }

    /// Marks the shaded pixels `xs` of row `y` for the current triangle and
    /// returns how many quads they touch that it had not touched before.
    pub fn mark(&mut self, y: u32, xs: Range<u32>) -> u64 {
        if xs.is_empty() {
            return 0;
        }
        // serial >= 1 and y / 2 < 2^31, so a tag is never 0 nor shared.
        let tag = (self.serial << 31) | (y / 2) as u64;
        let mut new = 0;
        for s in &mut self.stamp[(xs.start / 2) as usize..=((xs.end - 1) / 2) as usize] {
            if *s != tag {
                *s = tag;
                new += 1;
            }
        }
        new
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spans(t: &Triangle) -> Vec<(u32, Range<u32>)> {
        t.rows()
            .map(|y| (y, t.span(y)))
            .filter(|(_, s)| !s.is_empty())
            .collect()
    }

    #[test]
    fn snapping_rounds_to_the_sub_pixel_grid() {
        // 8 fractional bits: 1/256 pixel steps (Direct3D 11, from memory).
        assert_eq!(snap(0.5), Some(128));
        assert_eq!(snap(-3.0), Some(-768));
        assert_eq!(snap(1.0 / 1024.0), Some(0));
        assert_eq!(snap(3.0 / 1024.0), Some(1));
        // ties to even: 1/512 is half a grid step
        assert_eq!(snap(1.0 / 512.0), Some(0));
        assert_eq!(snap(3.0 / 512.0), Some(2));
        assert_eq!(snap(f32::NAN), None);
        assert_eq!(snap(f32::INFINITY), None);
        assert_eq!(snap(1e30), Some(1 << 40));
    }

    #[test]
    fn winding_does_not_matter() {
        let (a, b, c) = ([0.3, 0.2], [7.9, 1.5], [2.2, 6.6]);
        let cw = Triangle::new(a, b, c, [10, 10]).unwrap();
        let ccw = Triangle::new(a, c, b, [10, 10]).unwrap();
        assert_eq!(spans(&cw), spans(&ccw));
        assert!(!spans(&cw).is_empty());
    }

    #[test]
    fn zero_area_and_offscreen_triangles_are_dropped() {
        assert!(Triangle::new([0.0, 0.0], [4.0, 4.0], [8.0, 8.0], [10, 10]).is_none());
        // collinear only after snapping to 1/256
        assert!(Triangle::new([0.0, 0.0], [4.0, 4.0001], [8.0, 8.0], [10, 10]).is_none());
        assert!(Triangle::new([0.0, 20.0], [4.0, 20.0], [0.0, 30.0], [10, 10]).is_none());
        assert!(Triangle::new([0.0, 0.0], [4.0, 0.0], [0.0, 4.0], [0, 10]).is_none());
    }

    /// A coordinate in pixels, on the 1/256 grid so snapping keeps it:
    /// mostly pixel corners and centres (where the top-left rule decides
    /// ties), some anywhere, some far off screen.
    fn coord() -> impl proptest::strategy::Strategy<Value = f32> {
        use proptest::prelude::*;
        prop_oneof![
            (-4i32..28).prop_map(|v| v as f32),
            (-4i32..28).prop_map(|v| v as f32 + 0.5),
            (-1024i32..7168).prop_map(|v| v as f32 / 256.0),
            (-3i32..4).prop_map(|v| v as f32 * 1e6),
        ]
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(4000))]
        /// `row_spans` steps what `span` computes afresh each row: the two
        /// must agree on every row, for either winding, on edges through
        /// pixel centres (top-left ties), and for triangles reaching far
        /// off screen. The viewport is small so rows are clipped often.
        #[test]
        fn row_spans_equal_span_on_every_row(
            p in proptest::array::uniform6(coord()),
            w in 1u32..24,
            h in 1u32..24,
        ) {
            let Some(t) = Triangle::new([p[0], p[1]], [p[2], p[3]], [p[4], p[5]], [w, h]) else {
                return Ok(());
            };
            let stepped: Vec<_> = t.row_spans().collect();
            let direct: Vec<_> = t.rows().map(|y| (y, t.span(y))).collect();
            proptest::prop_assert_eq!(stepped, direct);
        }
    }

    #[test]
    fn row_spans_follow_the_top_left_rule_at_centres() {
        // Right triangle with its legs through pixel centres: top edge
        // y = 1/2 and left edge x = 1/2 covered, the hypotenuse x + y = 4
        // (a right edge, centres on it) not (Direct3D 11 rules, from memory).
        let t = Triangle::new([0.5, 0.5], [3.5, 0.5], [0.5, 3.5], [6, 6]).unwrap();
        let got: Vec<_> = t.row_spans().filter(|(_, s)| !s.is_empty()).collect();
        assert_eq!(got, vec![(0, 0..3), (1, 0..2), (2, 0..1)]);
    }

    #[test]
    fn quads_count_distinct_aligned_blocks_per_triangle() {
        let mut q = QuadTracker::new(9);
        q.next_triangle();
        assert_eq!(q.mark(0, 1..4), 2); // quads 0, 1
        assert_eq!(q.mark(1, 0..2), 0); // quad 0 again, same quad row
        assert_eq!(q.mark(2, 0..1), 1); // next quad row
        assert_eq!(q.mark(3, 8..9), 1); // last, half-width quad column
        q.next_triangle();
        assert_eq!(q.mark(3, 0..2), 1); // a new triangle pays again
    }
}
