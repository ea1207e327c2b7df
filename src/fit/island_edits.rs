//! Edits of whole islands: dropping an opaque island, replacing it by its
//! largest rectangle, boxing or merging covering islands, filling a
//! covering hole, and the bounding-box fallback.

use super::geom::{in_closed_polygon, segments_touch};
use super::*;

/// Islands of the covering outline above which merging is not tried (the
/// bounding-box fallback still bounds the vertex count).
pub(super) const MAX_MERGE_ISLANDS: usize = 256;

/// Convex hull (monotone chain) of lattice points, without collinear
/// points, with a positive shoelace area (clockwise on screen).
pub(super) fn convex_hull(mut pts: Vec<Point>) -> Vec<Point> {
    pts.sort_unstable();
    pts.dedup();
    if pts.len() < 3 {
        return pts;
    }
    let mut lower: Vec<Point> = Vec::new();
    for &p in &pts {
        while lower.len() >= 2 && orient(lower[lower.len() - 2], lower[lower.len() - 1], p) <= 0 {
            lower.pop();
        }
        lower.push(p);
    }
    let mut upper: Vec<Point> = Vec::new();
    for &p in pts.iter().rev() {
        while upper.len() >= 2 && orient(upper[upper.len() - 2], upper[upper.len() - 1], p) <= 0 {
            upper.pop();
        }
        upper.push(p);
    }
    lower.pop();
    upper.pop();
    lower.extend(upper);
    if geom::twice_area(&lower) < 0 {
        lower.reverse();
    }
    lower
}

/// Corners of rectangle `[x0, y0, x1, y1]`, clockwise on screen.
pub(super) fn rect_points(r: [i64; 4]) -> [Point; 4] {
    [[r[0], r[1]], [r[2], r[1]], [r[2], r[3]], [r[0], r[3]]]
}

impl Fitter<'_> {
    pub(super) fn comp_vertices(&self, c: u32) -> Vec<u32> {
        let mut out = Vec::new();
        for &r in &self.comps[c as usize].rings {
            let ring = &self.rings[r as usize];
            if ring.alive {
                self.ring_vertices_into(r, &mut out);
            }
        }
        out
    }
    pub(super) fn ring_vertices_into(&self, r: u32, out: &mut Vec<u32>) {
        let ring = &self.rings[r as usize];
        let mut v = ring.head;
        for _ in 0..ring.len {
            out.push(v);
            v = self.verts[v as usize].next;
        }
    }
    pub(super) fn saved_by_removing(&self, ids: &[u32]) -> i64 {
        let mut count: PointMap<u32> = PointMap::default();
        for &v in ids {
            *count.entry(self.verts[v as usize].p).or_insert(0) += 1;
        }
        count
            .iter()
            .filter(|(p, &n)| self.refs_at(**p) == n)
            .count() as i64
    }

    pub(super) fn eval_drop_comp(&self, c: u32) -> Option<Eval> {
        let comp = &self.comps[c as usize];
        if !comp.alive || comp.class != Class::Opaque {
            return None;
        }
        let ids = self.comp_vertices(c);
        Some(Eval {
            cost: comp.area2,
            saved: self.saved_by_removing(&ids),
            shared: 0,
            point: [0, 0],
        })
    }

    /// Distinct vertices saved by replacing island `c` with rectangle `r`.
    pub(super) fn saved_by_replacing(&self, c: u32, r: [i64; 4]) -> i64 {
        self.saved_by_swapping(&self.comp_vertices(c), &rect_points(r))
    }

    /// Distinct vertices saved by removing vertices `ids` and adding points `new`.
    pub(super) fn saved_by_swapping(&self, ids: &[u32], new: &[Point]) -> i64 {
        let mut count: PointMap<u32> = PointMap::default();
        for &v in ids {
            *count.entry(self.verts[v as usize].p).or_insert(0) += 1;
        }
        let freed = count
            .iter()
            .filter(|(p, &n)| self.refs_at(**p) == n)
            .count() as i64;
        let added = new
            .iter()
            .filter(|p| self.refs_at(**p) == count.get(*p).copied().unwrap_or(0))
            .count() as i64;
        freed - added
    }

    pub(super) fn eval_rect_comp(&self, c: u32) -> Option<Eval> {
        let comp = &self.comps[c as usize];
        let r = comp.rect?;
        if !comp.alive || comp.class != Class::Opaque {
            return None;
        }
        let cost = comp.area2 - 2 * (r[2] - r[0]) * (r[3] - r[1]);
        Some(Eval {
            cost,
            saved: self.saved_by_replacing(c, r),
            shared: 0,
            point: [0, 0],
        })
    }

    /// The bounding box of a covering island's outer ring.
    pub(super) fn comp_box(&self, c: u32) -> Option<[i64; 4]> {
        let comp = &self.comps[c as usize];
        let outer = comp
            .rings
            .iter()
            .copied()
            .find(|&q| self.rings[q as usize].alive && !self.rings[q as usize].hole)?;
        let mut ids = Vec::new();
        self.ring_vertices_into(outer, &mut ids);
        let mut r = [i64::MAX, i64::MAX, i64::MIN, i64::MIN];
        for v in ids {
            let p = self.verts[v as usize].p;
            r = [
                r[0].min(p[0]),
                r[1].min(p[1]),
                r[2].max(p[0]),
                r[3].max(p[1]),
            ];
        }
        Some(r)
    }

    /// Whether box `r` touches no covering ring of another island.
    pub(super) fn box_is_clear(&self, c: u32, r: [i64; 4]) -> bool {
        let (lo, hi) = ([r[0], r[1]], [r[2], r[3]]);
        let grid = &self.grids[Class::Cover as usize];
        let other = |v: u32| self.rings[self.verts[v as usize].ring as usize].comp != c;
        let inside = |p: Point| p[0] >= r[0] && p[0] <= r[2] && p[1] >= r[1] && p[1] <= r[3];
        let ok = grid.vertices_in(lo, hi, |v| {
            !self.verts[v as usize].alive || !other(v) || !inside(self.verts[v as usize].p)
        });
        let corners = rect_points(r);
        ok && grid.edges_in(lo, hi, |a, b| {
            let (va, vb) = (&self.verts[a as usize], &self.verts[b as usize]);
            if !va.alive || !vb.alive || va.next != b || !other(a) {
                return true;
            }
            (0..4).all(|k| !segments_touch(corners[k], corners[(k + 1) % 4], va.p, vb.p))
        })
    }

    pub(super) fn eval_box_comp(&self, c: u32) -> Option<Eval> {
        let comp = &self.comps[c as usize];
        if !comp.alive || comp.class != Class::Cover {
            return None;
        }
        let r = self.comp_box(c)?;
        let cost = 2 * (r[2] - r[0]) * (r[3] - r[1]) - comp.area2;
        if cost == 0 {
            return None; // already a box
        }
        Some(Eval {
            cost,
            saved: self.saved_by_replacing(c, r),
            shared: 0,
            point: [0, 0],
        })
    }

    /// Replaces island `c`'s rings by the rectangle `r`.
    pub(super) fn replace_comp(&mut self, c: u32, r: [i64; 4]) {
        let class = self.comps[c as usize].class;
        for q in self.comps[c as usize].rings.clone() {
            if self.rings[q as usize].alive {
                self.kill_ring(q);
            }
        }
        self.add_ring(class, false, c, &rect_points(r));
        self.comps[c as usize].version += 1;
        let n = self.verts.len() as u32;
        for v in n - 4..n {
            self.push_vertex_ops(v);
        }
    }

    /// Alive rings of island `c`.
    pub(super) fn comp_rings(&self, c: u32) -> impl Iterator<Item = u32> + '_ {
        self.comps[c as usize]
            .rings
            .iter()
            .copied()
            .filter(|&r| self.rings[r as usize].alive)
    }

    /// Whether any ring of island `e` touches the closed convex polygon `hull`.
    pub(super) fn comp_touches(&self, e: u32, hull: &[Point]) -> bool {
        let n = hull.len();
        for r in self.comp_rings(e) {
            let mut ids = Vec::new();
            self.ring_vertices_into(r, &mut ids);
            for (k, &v) in ids.iter().enumerate() {
                let p = self.verts[v as usize].p;
                if in_closed_polygon(p, hull) {
                    return true;
                }
                let q = self.verts[ids[(k + 1) % ids.len()] as usize].p;
                if (0..n).any(|i| segments_touch(hull[i], hull[(i + 1) % n], p, q)) {
                    return true;
                }
            }
        }
        false
    }

    /// Merging covering island `c` with its nearest neighbour into their
    /// convex hull, grown until it touches no other covering island (those
    /// it touches join the merge). Hull corners are existing positions.
    pub(super) fn eval_merge_comp(&self, c: u32) -> Option<(Eval, Vec<u32>, Vec<Point>)> {
        let comp = &self.comps[c as usize];
        if !comp.alive || comp.class != Class::Cover {
            return None;
        }
        let alive: Vec<u32> = (0..self.comps.len() as u32)
            .filter(|&d| {
                self.comps[d as usize].alive && self.comps[d as usize].class == Class::Cover
            })
            .collect();
        if alive.len() < 2 || alive.len() > MAX_MERGE_ISLANDS {
            return None;
        }
        let bc = self.comp_box(c)?;
        let gap = |b: [i64; 4]| {
            (b[0] - bc[2]).max(bc[0] - b[2]).max(0) + (b[1] - bc[3]).max(bc[1] - b[3]).max(0)
        };
        let d = alive
            .iter()
            .copied()
            .filter(|&d| d != c)
            .min_by_key(|&d| (self.comp_box(d).map_or(i64::MAX, gap), d))?;
        let mut set = vec![c, d];
        loop {
            let mut pts = Vec::new();
            for &m in &set {
                for r in self.comp_rings(m) {
                    if !self.rings[r as usize].hole {
                        let mut ids = Vec::new();
                        self.ring_vertices_into(r, &mut ids);
                        pts.extend(ids.iter().map(|&v| self.verts[v as usize].p));
                    }
                }
            }
            let hull = convex_hull(pts);
            if hull.len() < 3 {
                return None;
            }
            let before = set.len();
            for &e in &alive {
                if !set.contains(&e) && self.comp_touches(e, &hull) {
                    set.push(e);
                }
            }
            if set.len() == before {
                let area: i64 = set.iter().map(|&m| self.comps[m as usize].area2).sum();
                let cost = geom::twice_area(&hull) - area;
                let ids: Vec<u32> = set.iter().flat_map(|&m| self.comp_vertices(m)).collect();
                let saved = self.saved_by_swapping(&ids, &hull);
                return Some((
                    Eval {
                        cost,
                        saved,
                        shared: 0,
                        point: [0, 0],
                    },
                    set,
                    hull,
                ));
            }
        }
    }

    pub(super) fn apply_merge(&mut self, c: u32, set: &[u32], hull: &[Point]) {
        for &m in set {
            for r in self.comps[m as usize].rings.clone() {
                if self.rings[r as usize].alive {
                    self.kill_ring(r);
                }
            }
            if m != c {
                self.comps[m as usize].alive = false;
            }
        }
        self.add_ring(Class::Cover, false, c, hull);
        self.comps[c as usize].version += 1;
        let n = self.verts.len() as u32;
        for v in n - hull.len() as u32..n {
            self.push_vertex_ops(v);
        }
    }

    pub(super) fn eval_fill_hole(&self, r: u32) -> Option<Eval> {
        let ring = &self.rings[r as usize];
        if !ring.alive || !ring.hole || ring.class != Class::Cover {
            return None;
        }
        let mut ids = Vec::new();
        self.ring_vertices_into(r, &mut ids);
        Some(Eval {
            cost: -ring.area2,
            saved: self.saved_by_removing(&ids),
            shared: 0,
            point: [0, 0],
        })
    }

    pub(super) fn kill_ring(&mut self, r: u32) {
        let mut ids = Vec::new();
        self.ring_vertices_into(r, &mut ids);
        let class = self.rings[r as usize].class as usize;
        for &v in &ids {
            let b = self.verts[v as usize].next;
            let (pa, pb) = (self.verts[v as usize].p, self.verts[b as usize].p);
            self.grids[class].remove_edge(v, b, pa, pb);
        }
        for v in ids {
            self.kill(v);
        }
        let ring = &mut self.rings[r as usize];
        ring.alive = false;
        let (c, a) = (ring.comp, ring.area2);
        let comp = &mut self.comps[c as usize];
        comp.area2 -= a;
        comp.version += 1;
    }

    pub(super) fn apply_drop_comp(&mut self, c: u32) {
        for r in self.comps[c as usize].rings.clone() {
            if self.rings[r as usize].alive {
                self.kill_ring(r);
            }
        }
        self.comps[c as usize].alive = false;
    }

    /// Fills a covering hole, and drops the covering islands inside it,
    /// which the filled area now covers.
    pub(super) fn apply_fill_hole(&mut self, r: u32) {
        let mut ids = Vec::new();
        self.ring_vertices_into(r, &mut ids);
        let poly: Vec<Point> = ids.iter().map(|&v| self.verts[v as usize].p).collect();
        let own = self.rings[r as usize].comp;
        self.kill_ring(r);
        for c in 0..self.comps.len() as u32 {
            let comp = &self.comps[c as usize];
            if c == own || !comp.alive || comp.class != Class::Cover {
                continue;
            }
            let outer = comp
                .rings
                .iter()
                .copied()
                .find(|&q| self.rings[q as usize].alive && !self.rings[q as usize].hole);
            if let Some(q) = outer {
                let p = self.verts[self.rings[q as usize].head as usize].p;
                if in_closed_polygon(p, &poly) {
                    self.apply_drop_comp(c);
                }
            }
        }
    }

    /// Replaces every covering ring by the bounding rectangle of them all.
    pub(super) fn cover_with_bounding_box(&mut self) {
        let mut lo = [i64::MAX, i64::MAX];
        let mut hi = [i64::MIN, i64::MIN];
        let mut any = false;
        for r in 0..self.rings.len() as u32 {
            let ring = &self.rings[r as usize];
            if !ring.alive || ring.class != Class::Cover {
                continue;
            }
            let mut ids = Vec::new();
            self.ring_vertices_into(r, &mut ids);
            for v in ids {
                let p = self.verts[v as usize].p;
                lo = [lo[0].min(p[0]), lo[1].min(p[1])];
                hi = [hi[0].max(p[0]), hi[1].max(p[1])];
            }
            any = true;
            self.kill_ring(r);
        }
        for c in &mut self.comps {
            if c.class == Class::Cover {
                c.alive = false;
            }
        }
        if any {
            let c = self.comps.len() as u32;
            self.comps.push(Comp {
                class: Class::Cover,
                rect: None,
                largest: None,
                rings: Vec::new(),
                area2: 0,
                version: 0,
                alive: true,
            });
            self.add_ring(
                Class::Cover,
                false,
                c,
                &[lo, [hi[0], lo[1]], hi, [lo[0], hi[1]]],
            );
        }
        let verts = &self.verts;
        self.grids[1].purge_edges(|a, b| {
            verts[a as usize].alive && verts[b as usize].alive && verts[a as usize].next == b
        });
    }
}
