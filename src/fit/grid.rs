//! A uniform bucket grid over the lattice for the fitter's topology queries:
//! which vertices lie in a region, which edges a new edge might touch.
//! Entries go stale as the outlines change; callers re-validate them.

use crate::outline::Point;

/// Side of a bucket, half-texel units.
pub const CELL: i64 = 64;

/// Vertex ids and edges (pairs of vertex ids) filed by bucket, each with
/// its position(s), so a query can pass over entries that cannot meet it
/// without reading the vertices (a vertex's position never changes: an
/// edit that moves a corner makes a new vertex).
#[derive(Clone)]
pub struct BucketGrid {
    cols: i64,
    rows: i64,
    verts: Vec<Vec<(u32, Point)>>,
    edges: Vec<Vec<FiledEdge>>,
}

/// An edge as filed: its vertex ids and their positions.
#[derive(Clone, Copy, PartialEq, Eq)]
struct FiledEdge {
    a: u32,
    b: u32,
    pa: Point,
    pb: Point,
}

/// Whether the closed boxes spanned by segments pq and rs meet.
#[inline]
fn boxes_meet(p: Point, q: Point, r: Point, s: Point) -> bool {
    p[0].max(q[0]) >= r[0].min(s[0])
        && r[0].max(s[0]) >= p[0].min(q[0])
        && p[1].max(q[1]) >= r[1].min(s[1])
        && r[1].max(s[1]) >= p[1].min(q[1])
}

impl BucketGrid {
    /// An empty grid over a lattice of `width` x `height` half units.
    pub fn new(width: i64, height: i64) -> BucketGrid {
        let cols = width / CELL + 1;
        let rows = height / CELL + 1;
        let n = (cols * rows) as usize;
        BucketGrid {
            cols,
            rows,
            verts: vec![Vec::new(); n],
            edges: vec![Vec::new(); n],
        }
    }
    #[inline]
    fn cell(&self, x: i64, y: i64) -> usize {
        let cx = (x / CELL).clamp(0, self.cols - 1);
        let cy = (y / CELL).clamp(0, self.rows - 1);
        (cy * self.cols + cx) as usize
    }
    fn range(&self, lo: Point, hi: Point) -> (i64, i64, i64, i64) {
        (
            (lo[0] / CELL).clamp(0, self.cols - 1),
            (hi[0] / CELL).clamp(0, self.cols - 1),
            (lo[1] / CELL).clamp(0, self.rows - 1),
            (hi[1] / CELL).clamp(0, self.rows - 1),
        )
    }
    /// Files vertex `id` at `p`.
    pub fn add_vertex(&mut self, id: u32, p: Point) {
        let c = self.cell(p[0], p[1]);
        self.verts[c].push((id, p));
    }
    /// Takes vertex `id`, filed at `p`, out.
    pub fn remove_vertex(&mut self, id: u32, p: Point) {
        let c = self.cell(p[0], p[1]);
        if let Some(i) = self.verts[c].iter().position(|&(v, _)| v == id) {
            self.verts[c].swap_remove(i);
        }
    }
    /// Calls `f` on every bucket that a point of the closed segment pa-pb
    /// falls in (and perhaps a neighbour more): one bucket column at a time,
    /// the rows the segment spans over that column, so the cost follows the
    /// segment's length, not its bounding box's area.
    fn segment_buckets(&self, pa: Point, pb: Point, mut f: impl FnMut(usize)) {
        let (p, q) = if pa[0] <= pb[0] { (pa, pb) } else { (pb, pa) };
        let (cx0, cx1) = (
            (p[0] / CELL).clamp(0, self.cols - 1),
            (q[0] / CELL).clamp(0, self.cols - 1),
        );
        let (dx, dy) = (q[0] - p[0], q[1] - p[1]);
        for cx in cx0..=cx1 {
            // the segment's y extent over x in [xa, xb] (closed), widened to
            // whole lattice units: floor of the lower end, ceiling of the upper
            // (over one bucket column: its end points' extent)
            let (ya, yb) = if dx == 0 || cx0 == cx1 {
                (p[1].min(q[1]), p[1].max(q[1]))
            } else {
                let xa = (cx * CELL).max(p[0]);
                let xb = ((cx + 1) * CELL).min(q[0]);
                let y_at = |x: i64| {
                    let num = p[1] * dx + (x - p[0]) * dy;
                    (num.div_euclid(dx), -(-num).div_euclid(dx))
                };
                let (fa, ca) = y_at(xa);
                let (fb, cb) = y_at(xb);
                (fa.min(fb), ca.max(cb))
            };
            let cy0 = (ya.div_euclid(CELL)).clamp(0, self.rows - 1);
            let cy1 = (yb.div_euclid(CELL)).clamp(0, self.rows - 1);
            for cy in cy0..=cy1 {
                f((cy * self.cols + cx) as usize);
            }
        }
    }
    /// Files edge (a, b) under the buckets its segment passes through.
    pub fn add_edge(&mut self, a: u32, b: u32, pa: Point, pb: Point) {
        let mut cells = Vec::new();
        self.segment_buckets(pa, pb, |c| cells.push(c));
        let e = FiledEdge { a, b, pa, pb };
        for c in cells {
            self.edges[c].push(e);
        }
    }
    /// Takes edge (a, b), filed with [`BucketGrid::add_edge`] at the same
    /// points, out of its buckets.
    pub fn remove_edge(&mut self, a: u32, b: u32, pa: Point, pb: Point) {
        let mut cells = Vec::new();
        self.segment_buckets(pa, pb, |c| cells.push(c));
        for c in cells {
            let bucket = &mut self.edges[c];
            if let Some(i) = bucket.iter().position(|e| (e.a, e.b) == (a, b)) {
                bucket.swap_remove(i);
            }
        }
    }
    /// Calls `f` on every vertex id in buckets overlapping the box; stops when `f` is false.
    pub fn vertices_in(&self, lo: Point, hi: Point, mut f: impl FnMut(u32) -> bool) -> bool {
        let (x0, x1, y0, y1) = self.range(lo, hi);
        for cy in y0..=y1 {
            for cx in x0..=x1 {
                for &(v, _) in &self.verts[(cy * self.cols + cx) as usize] {
                    if !f(v) {
                        return false;
                    }
                }
            }
        }
        true
    }
    /// Calls `f` on every (possibly stale) edge in buckets overlapping the
    /// box; an edge that meets the box is met at least once.
    pub fn edges_in(&self, lo: Point, hi: Point, mut f: impl FnMut(u32, u32) -> bool) -> bool {
        let (x0, x1, y0, y1) = self.range(lo, hi);
        for cy in y0..=y1 {
            for cx in x0..=x1 {
                for e in &self.edges[(cy * self.cols + cx) as usize] {
                    if !f(e.a, e.b) {
                        return false;
                    }
                }
            }
        }
        true
    }
    /// Calls `f` on every vertex id in buckets that a point of the closed
    /// polygon `poly` (any simple polygon, or a segment) falls in, whose
    /// position lies in the polygon's bounding box (closed); stops when `f`
    /// is false. Per bucket row, only the columns the polygon spans over
    /// that row's band are visited (the extremes of a polygon over a band
    /// lie on its boundary), so a long thin triangle costs its length, not
    /// its bounding box's area.
    pub fn vertices_in_polygon(&self, poly: &[Point], mut f: impl FnMut(u32) -> bool) -> bool {
        let ymin = poly.iter().map(|p| p[1]).min().expect("a polygon");
        let ymax = poly.iter().map(|p| p[1]).max().expect("a polygon");
        let bx = [
            poly.iter().map(|p| p[0]).min().expect("a polygon"),
            ymin,
            poly.iter().map(|p| p[0]).max().expect("a polygon"),
            ymax,
        ];
        let (cy0, cy1) = (
            (ymin / CELL).clamp(0, self.rows - 1),
            (ymax / CELL).clamp(0, self.rows - 1),
        );
        let n = poly.len();
        for cy in cy0..=cy1 {
            let (y0, y1) = ((cy * CELL).max(ymin), ((cy + 1) * CELL).min(ymax));
            // over one bucket row: the polygon's whole extent
            let (mut xlo, mut xhi) = if cy0 == cy1 {
                (bx[0], bx[2])
            } else {
                (i64::MAX, i64::MIN)
            };
            for i in (0..n).filter(|_| cy0 != cy1) {
                let (a, b) = (poly[i], poly[(i + 1) % n]);
                let (p, q) = if a[1] <= b[1] { (a, b) } else { (b, a) };
                if q[1] < y0 || p[1] > y1 {
                    continue;
                }
                if p[1] == q[1] {
                    xlo = xlo.min(p[0].min(q[0]));
                    xhi = xhi.max(p[0].max(q[0]));
                    continue;
                }
                let dy = q[1] - p[1];
                for y in [y0.max(p[1]), y1.min(q[1])] {
                    let num = p[0] * dy + (y - p[1]) * (q[0] - p[0]);
                    xlo = xlo.min(num.div_euclid(dy));
                    xhi = xhi.max(-(-num).div_euclid(dy));
                }
            }
            if xlo > xhi {
                continue;
            }
            let cx0 = xlo.div_euclid(CELL).clamp(0, self.cols - 1);
            let cx1 = xhi.div_euclid(CELL).clamp(0, self.cols - 1);
            for cx in cx0..=cx1 {
                for &(v, p) in &self.verts[(cy * self.cols + cx) as usize] {
                    let in_box = p[0] >= bx[0] && p[0] <= bx[2] && p[1] >= ymin && p[1] <= ymax;
                    if in_box && !f(v) {
                        return false;
                    }
                }
            }
        }
        true
    }
    /// Calls `f` on every (possibly stale) edge filed in a bucket that one
    /// of the closed `segments` passes through and whose bounding box meets
    /// one of theirs, so every edge that touches one of them (perhaps more
    /// than once); stops when `f` is false.
    pub fn edges_along(
        &self,
        segments: &[(Point, Point)],
        mut f: impl FnMut(u32, u32) -> bool,
    ) -> bool {
        let mut ok = true;
        for &(p, q) in segments {
            self.segment_buckets(p, q, |c| {
                if ok {
                    ok = self.edges[c].iter().all(|e| {
                        !segments.iter().any(|&(p, q)| boxes_meet(p, q, e.pa, e.pb)) || f(e.a, e.b)
                    });
                }
            });
            if !ok {
                return false;
            }
        }
        true
    }
    /// Drops stale edges from every bucket.
    pub fn purge_edges(&mut self, valid: impl Fn(u32, u32) -> bool) {
        for bucket in &mut self.edges {
            bucket.retain(|e| valid(e.a, e.b));
        }
    }
}
