//! A uniform bucket grid over the lattice for the fitter's topology queries:
//! which vertices lie in a region, which edges a new edge might touch.
//! Entries go stale as the outlines change; callers re-validate them.

use crate::outline::Point;

pub const CELL: i64 = 32;

pub struct BucketGrid {
    cols: i64,
    rows: i64,
    verts: Vec<Vec<u32>>,
    edges: Vec<Vec<(u32, u32)>>,
}

impl BucketGrid {
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
    pub fn add_vertex(&mut self, id: u32, p: Point) {
        let c = self.cell(p[0], p[1]);
        self.verts[c].push(id);
    }
    pub fn remove_vertex(&mut self, id: u32, p: Point) {
        let c = self.cell(p[0], p[1]);
        if let Some(i) = self.verts[c].iter().position(|&v| v == id) {
            self.verts[c].swap_remove(i);
        }
    }
    pub fn add_edge(&mut self, a: u32, b: u32, pa: Point, pb: Point) {
        let lo = [pa[0].min(pb[0]), pa[1].min(pb[1])];
        let hi = [pa[0].max(pb[0]), pa[1].max(pb[1])];
        let (x0, x1, y0, y1) = self.range(lo, hi);
        for cy in y0..=y1 {
            for cx in x0..=x1 {
                self.edges[(cy * self.cols + cx) as usize].push((a, b));
            }
        }
    }
    /// Calls `f` on every vertex id in buckets overlapping the box; stops when `f` is false.
    pub fn vertices_in(&self, lo: Point, hi: Point, mut f: impl FnMut(u32) -> bool) -> bool {
        let (x0, x1, y0, y1) = self.range(lo, hi);
        for cy in y0..=y1 {
            for cx in x0..=x1 {
                for &v in &self.verts[(cy * self.cols + cx) as usize] {
                    if !f(v) {
                        return false;
                    }
                }
            }
        }
        true
    }
    /// Calls `f` on every (possibly stale) edge in buckets overlapping the box.
    pub fn edges_in(&self, lo: Point, hi: Point, mut f: impl FnMut(u32, u32) -> bool) -> bool {
        let (x0, x1, y0, y1) = self.range(lo, hi);
        for cy in y0..=y1 {
            for cx in x0..=x1 {
                for &(a, b) in &self.edges[(cy * self.cols + cx) as usize] {
                    if !f(a, b) {
                        return false;
                    }
                }
            }
        }
        true
    }
    /// Drops stale edges from every bucket.
    pub fn purge_edges(&mut self, valid: impl Fn(u32, u32) -> bool) {
        for bucket in &mut self.edges {
            bucket.retain(|&(a, b)| valid(a, b));
        }
    }
}
