//! Edits of one ring at a time: removing a vertex, collapsing an edge; the
//! topology and containment tests that make them safe.

use super::geom::{in_closed_polygon, segments_touch, triangle_row_spans};
use super::*;

/// Triangles spanning at least this many lattice rows have their
/// containment answer kept ([`Fitter::triangle_allowed`]).
const TALL_TRIANGLE_ROWS: i64 = 8;

impl Fitter<'_> {
    pub(super) fn class_of(&self, v: u32) -> Class {
        self.rings[self.verts[v as usize].ring as usize].class
    }

    /// Whether the closed region `poly` holds no vertex of `class` other
    /// than `skip`, and no edge of that class other than those in
    /// `skip_edges` touches the new edges `new_edges`.
    pub(super) fn region_is_clear(
        &self,
        class: Class,
        poly: &[Point],
        skip: &[u32],
        new_edges: &[(Point, Point)],
        adjacent: &[(u32, Point)],
    ) -> bool {
        let lo = [
            poly.iter().map(|p| p[0]).min().unwrap(),
            poly.iter().map(|p| p[1]).min().unwrap(),
        ];
        let hi = [
            poly.iter().map(|p| p[0]).max().unwrap(),
            poly.iter().map(|p| p[1]).max().unwrap(),
        ];
        let grid = &self.grids[class as usize];
        let verts = &self.verts;
        let ok = grid.vertices_in_polygon(poly, |id| {
            let v = &verts[id as usize];
            let outside_box = v.p[0] < lo[0] || v.p[0] > hi[0] || v.p[1] < lo[1] || v.p[1] > hi[1];
            outside_box || !v.alive || skip.contains(&id) || !in_closed_polygon(v.p, poly)
        });
        if !ok {
            return false;
        }
        // an edge that touches a new edge is filed along that new edge
        grid.edges_along(new_edges, |a, b| {
            let va = &verts[a as usize];
            let vb = &verts[b as usize];
            if !va.alive || !vb.alive || va.next != b {
                return true; // stale
            }
            if skip.contains(&a) && skip.contains(&b) {
                return true; // an edge being replaced
            }
            for &(p, q) in new_edges {
                // an edge sharing an endpoint vertex: only a fold along it is a problem
                let shared = adjacent.iter().find(|(id, _)| *id == a || *id == b);
                if let Some(&(id, at)) = shared {
                    let other = if id == a { vb.p } else { va.p };
                    if at == p || at == q {
                        let far = if at == p { q } else { p };
                        if orient(at, far, other) == 0
                            && (far[0] - at[0]) * (other[0] - at[0])
                                + (far[1] - at[1]) * (other[1] - at[1])
                                > 0
                        {
                            return false;
                        }
                        continue;
                    }
                }
                if segments_touch(p, q, va.p, vb.p) {
                    return false;
                }
            }
            true
        })
    }

    pub(super) fn sign(class: Class) -> i64 {
        if class == Class::Cover {
            1
        } else {
            -1
        }
    }

    /// Triangle (u, v, w) of region growth must lie in the safe region
    /// (opaque) and region loss must avoid the must-cover region (cover).
    pub(super) fn triangle_allowed(&self, class: Class, tri: &[Point; 3], delta: i64) -> bool {
        let (ymin, ymax) = (
            tri[0][1].min(tri[1][1]).min(tri[2][1]),
            tri[0][1].max(tri[1][1]).max(tri[2][1]),
        );
        let kind = match (class, delta.signum()) {
            (Class::Opaque, 1) => 0u8,
            (Class::Cover, -1) => 1,
            _ => return true,
        };
        // a tall triangle's row walk costs more than a look-up; the
        // regions never change, so a triangle's answer is kept
        if ymax - ymin < TALL_TRIANGLE_ROWS {
            return self.triangle_allowed_walk(class, tri, delta);
        }
        if let Some(shared) = self.shared_answers {
            let region = if kind == 0 {
                self.safe as *const RowRuns as usize
            } else {
                self.cover as *const RowRuns as usize
            };
            let key = (*tri, kind, region);
            if let Some(answer) = shared.get(&key) {
                return answer;
            }
            let answer = self.triangle_allowed_walk(class, tri, delta);
            shared.insert(key, answer);
            return answer;
        }
        let key = (*tri, kind);
        if let Some(&answer) = self.triangle_answers.borrow().get(&key) {
            return answer;
        }
        let answer = self.triangle_allowed_walk(class, tri, delta);
        self.triangle_answers.borrow_mut().insert(key, answer);
        answer
    }

    /// [`Fitter::triangle_allowed`], walking the triangle's rows.
    fn triangle_allowed_walk(&self, class: Class, tri: &[Point; 3], delta: i64) -> bool {
        match (class, delta.signum()) {
            (Class::Opaque, 1) => triangle_row_spans(tri, |y, x0, x1| {
                y >= 0
                    && y < self.size[1]
                    && x0 >= 0
                    && x1 <= self.size[0]
                    && (x1 <= x0 || self.safe.all_set(y as usize, x0 as usize, x1 as usize))
            }),
            (Class::Cover, -1) => triangle_row_spans(tri, |y, x0, x1| {
                y < 0 || y >= self.size[1] || self.cover.none_set(y as usize, x0, x1)
            }),
            _ => true,
        }
    }

    pub(super) fn eval_remove(&self, v: u32) -> Option<Eval> {
        let vv = &self.verts[v as usize];
        let ring = &self.rings[vv.ring as usize];
        if ring.len <= 3 {
            return None;
        }
        let (u, w) = (vv.prev, vv.next);
        let (pu, pv, pw) = (self.verts[u as usize].p, vv.p, self.verts[w as usize].p);
        let cross = orient(pu, pv, pw);
        let delta = -cross; // change of twice the region's area
        let class = ring.class;
        if ring.len == 4 {
            let x = self.verts[w as usize].next;
            if orient(pu, pw, self.verts[x as usize].p) == 0 {
                return None;
            }
        }
        if cross != 0 {
            if !self.triangle_allowed(class, &[pu, pv, pw], delta) {
                return None;
            }
            if !self.region_is_clear(
                class,
                &[pu, pv, pw],
                &[u, v, w],
                &[(pu, pw)],
                &[(u, pu), (w, pw)],
            ) {
                return None;
            }
        } else if !self.region_is_clear(
            class,
            &[pu, pw],
            &[u, v, w],
            &[(pu, pw)],
            &[(u, pu), (w, pw)],
        ) {
            return None;
        }
        let saved = (self.refs_at(pv) == 1) as i64;
        Some(Eval {
            cost: Self::sign(class) * delta,
            saved,
            shared: (self.refs_at(pv) == 2) as i64,
            point: pv,
        })
    }

    pub(super) fn eval_collapse(&self, v: u32) -> Option<Eval> {
        let vv = &self.verts[v as usize];
        let ring = &self.rings[vv.ring as usize];
        if ring.len <= 4 {
            return None;
        }
        let class = ring.class;
        let w = vv.next;
        let u = vv.prev;
        let x = self.verts[w as usize].next;
        let (pu, pv, pw, px) = (
            self.verts[u as usize].p,
            vv.p,
            self.verts[w as usize].p,
            self.verts[x as usize].p,
        );
        let tv = orient(pu, pv, pw);
        let tw = orient(pv, pw, px);
        // cover grows at two convex corners, opaque shrinks at two reflex ones
        let want = if class == Class::Cover { 1 } else { -1 };
        if tv.signum() != want || tw.signum() != want {
            return None;
        }
        // intersection of line u→v with line x→w: p = u + t (v - u)
        let d1 = [pv[0] - pu[0], pv[1] - pu[1]];
        let d2 = [pw[0] - px[0], pw[1] - px[1]];
        let den = d1[0] * d2[1] - d1[1] * d2[0];
        if den == 0 {
            return None;
        }
        let num = (px[0] - pu[0]) * d2[1] - (px[1] - pu[1]) * d2[0];
        let t = num as f64 / den as f64;
        // and p = x + s (w - x)
        let num2 = (px[0] - pu[0]) * d1[1] - (px[1] - pu[1]) * d1[0];
        let s = num2 as f64 / den as f64;
        if !(t > 1.0) || !(s > 1.0) || t > 1e6 {
            return None;
        }
        let ex = pu[0] as f64 + t * d1[0] as f64;
        let ey = pu[1] as f64 + t * d1[1] as f64;
        let old_chain = geom::twice_area(&[pu, pv, pw, px]);
        let mut best: Option<(i64, Point)> = None;
        for cx in [ex.floor() as i64, ex.ceil() as i64] {
            for cy in [ey.floor() as i64, ey.ceil() as i64] {
                let p = [cx, cy];
                if p[0] < 0 || p[1] < 0 || p[0] > self.size[0] || p[1] > self.size[1] {
                    continue;
                }
                if p == pu || p == px {
                    continue;
                }
                // v and w must stay on the kept side of the new edges
                let sv = orient(pu, p, pv) * want;
                let sw = orient(p, px, pw) * want;
                if sv < 0 || sw < 0 {
                    continue;
                }
                if orient(pu, p, px) == 0 {
                    continue;
                }
                // the change of twice the ring's area
                let delta = geom::twice_area(&[pu, p, px]) - old_chain;
                if delta.signum() == -want {
                    continue;
                }
                let cost = Self::sign(class) * delta;
                if best.map_or(true, |(c, _)| cost < c) {
                    best = Some((cost, p));
                }
            }
        }
        let (cost, p) = best?;
        // the swept region: new chain u→p→x, back along x→w→v→u
        let swept = [pu, p, px, pw, pv];
        for &(a, b) in &[(pu, p), (p, px)] {
            for &(c, d) in &[(pu, pv), (pv, pw), (pw, px)] {
                if a != c && a != d && b != c && b != d && segments_touch(a, b, c, d) {
                    return None;
                }
            }
        }
        if !self.region_is_clear(
            class,
            &swept,
            &[u, v, w, x],
            &[(pu, p), (p, px)],
            &[(u, pu), (x, px)],
        ) {
            return None;
        }
        let saved = (self.refs_at(pv) == 1) as i64 + (self.refs_at(pw) == 1) as i64
            - (self.refs_at(p) == 0) as i64;
        Some(Eval {
            cost,
            saved,
            shared: (self.refs_at(pv) == 2) as i64 + (self.refs_at(pw) == 2) as i64,
            point: p,
        })
    }

    pub(super) fn touch(&mut self, v: u32) {
        self.verts[v as usize].stamp += 1;
        let r = self.verts[v as usize].ring;
        let c = self.rings[r as usize].comp;
        self.comps[c as usize].version += 1;
    }

    pub(super) fn requeue_around(&mut self, v: u32) {
        let mut ids = vec![v];
        let (mut a, mut b) = (v, v);
        for _ in 0..2 {
            a = self.verts[a as usize].prev;
            b = self.verts[b as usize].next;
            ids.push(a);
            ids.push(b);
        }
        ids.sort_unstable();
        ids.dedup();
        for &i in &ids {
            self.touch(i);
        }
        for &i in &ids {
            self.push_vertex_ops(i);
        }
        // island drops and hole fills are re-evaluated lazily, when popped
    }

    pub(super) fn kill(&mut self, v: u32) {
        let class = self.class_of(v);
        let p = self.verts[v as usize].p;
        self.verts[v as usize].alive = false;
        self.grids[class as usize].remove_vertex(v, p);
        self.drop_ref(p);
    }

    pub(super) fn apply_remove(&mut self, v: u32) {
        let u = self.apply_remove_quiet(v);
        self.requeue_around(u);
    }

    /// Removes vertex `v` without queueing edits around it; returns its
    /// predecessor.
    pub(super) fn apply_remove_quiet(&mut self, v: u32) -> u32 {
        let (u, w, p, r) = {
            let vv = &self.verts[v as usize];
            (vv.prev, vv.next, vv.p, vv.ring)
        };
        let (pu, pw) = (self.verts[u as usize].p, self.verts[w as usize].p);
        let delta = -orient(pu, p, pw);
        let class = self.rings[r as usize].class;
        let grid = &mut self.grids[class as usize];
        grid.remove_edge(u, v, pu, p);
        grid.remove_edge(v, w, p, pw);
        self.kill(v);
        self.verts[u as usize].next = w;
        self.verts[w as usize].prev = u;
        self.grids[class as usize].add_edge(u, w, pu, pw);
        self.change_ring(r, u, -1, delta);
        u
    }

    pub(super) fn apply_collapse(&mut self, v: u32, p: Point) {
        let (u, w, r) = {
            let vv = &self.verts[v as usize];
            (vv.prev, vv.next, vv.ring)
        };
        let x = self.verts[w as usize].next;
        let (pu, pv, pw, px) = (
            self.verts[u as usize].p,
            self.verts[v as usize].p,
            self.verts[w as usize].p,
            self.verts[x as usize].p,
        );
        let delta = geom::twice_area(&[pu, p, px]) - geom::twice_area(&[pu, pv, pw, px]);
        let grid = &mut self.grids[self.rings[r as usize].class as usize];
        grid.remove_edge(u, v, pu, pv);
        grid.remove_edge(v, w, pv, pw);
        grid.remove_edge(w, x, pw, px);
        self.kill(v);
        self.kill(w);
        let n = self.verts.len() as u32;
        self.verts.push(Vert {
            p,
            prev: u,
            next: x,
            ring: r,
            alive: true,
            stamp: 0,
        });
        self.verts[u as usize].next = n;
        self.verts[x as usize].prev = n;
        let class = self.rings[r as usize].class;
        self.grids[class as usize].add_vertex(n, p);
        self.grids[class as usize].add_edge(u, n, pu, p);
        self.grids[class as usize].add_edge(n, x, p, px);
        self.add_ref(p);
        self.change_ring(r, n, -1, delta);
        self.requeue_around(n);
    }

    pub(super) fn change_ring(&mut self, r: u32, head: u32, dlen: i64, delta: i64) {
        let ring = &mut self.rings[r as usize];
        ring.head = head;
        ring.len = (ring.len as i64 + dlen) as u32;
        ring.area2 += delta;
        let c = ring.comp;
        self.comps[c as usize].area2 += delta;
    }
}
