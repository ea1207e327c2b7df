//! Fitting outlines to a vertex budget.
//!
//! Input: the traced rings of the safe-opaque region (class [`Class::Opaque`])
//! and of the must-cover region ([`Class::Cover`]), on the half-texel lattice.
//! Output: simplified rings, still on the lattice, with at most `budget`
//! distinct vertex positions in all (a position used by both an opaque and a
//! covering ring counts once, as the two meshes share one vertex array).
//!
//! The fitter is a greedy sequence of local edits, cheapest first, where the
//! cost of an edit is the area it gives up per vertex it saves: opaque area
//! lost (fragments no longer culled) or covering area added (fragments
//! shaded for nothing); both are counted as fragments, one to one. Edits:
//!
//! * remove a vertex (its two edges become one),
//! * collapse an edge (its two end vertices become one lattice point where
//!   the neighbouring edges meet),
//! * drop an opaque island with its holes, or fill a transparent hole of
//!   the covering outline,
//! * as a last resort, cover everything with its bounding rectangle.
//!
//! Invariants, checked before every edit and so true at every budget:
//! opaque rings only ever lose area that lay inside the safe region, or gain
//! area that lies inside it; covering rings only ever gain area inside the
//! image or lose area that lies outside the must-cover region; rings of one
//! class never touch or cross each other or themselves; every ring keeps at
//! least three vertices and a non-zero area.

mod geom;
mod grid;
mod holes;
mod rects;

pub use holes::open_holes;

pub use geom::orient;

use crate::mask::{Mask, RowPrefix};
use crate::outline::{Point, Ring};
use geom::{convex_row_spans, in_closed_polygon, segments_touch};
use grid::BucketGrid;
use std::cmp::Ordering;
use std::collections::{BinaryHeap, HashMap};

/// Which region a ring bounds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Class {
    Opaque = 0,
    Cover = 1,
}

/// One island of a fitted outline: its outer ring and its holes. Rings have
/// the region on their right (outer rings clockwise on screen, y down).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FitPolygon {
    pub outer: Vec<Point>,
    pub holes: Vec<Vec<Point>>,
}

/// The fitted outlines of a layer.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Fit {
    pub opaque: Vec<FitPolygon>,
    pub cover: Vec<FitPolygon>,
    /// Distinct vertex positions over both classes.
    pub vertices: usize,
}

impl Fit {
    pub fn outline_vertices(&self, class: Class) -> usize {
        let polys = if class == Class::Opaque {
            &self.opaque
        } else {
            &self.cover
        };
        polys
            .iter()
            .map(|p| p.outer.len() + p.holes.iter().map(Vec::len).sum::<usize>())
            .sum()
    }
}

struct Vert {
    p: Point,
    prev: u32,
    next: u32,
    ring: u32,
    alive: bool,
    stamp: u32,
}

struct RingState {
    class: Class,
    hole: bool,
    comp: u32,
    head: u32,
    len: u32,
    area2: i64,
    alive: bool,
}

struct Comp {
    class: Class,
    /// The largest rectangle inside the island (opaque), a stand-in.
    rect: Option<[i64; 4]>,
    rings: Vec<u32>,
    area2: i64,
    version: u32,
    alive: bool,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum OpKind {
    Remove,
    Collapse,
    DropComp,
    FillHole,
    RectComp,
    BoxComp,
    MergeComp,
}

struct Cand {
    key: f64,
    kind: OpKind,
    id: u32,
    stamp: u32,
}
impl PartialEq for Cand {
    fn eq(&self, o: &Self) -> bool {
        self.cmp(o) == Ordering::Equal
    }
}
impl Eq for Cand {}
impl PartialOrd for Cand {
    fn partial_cmp(&self, o: &Self) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Cand {
    // BinaryHeap is a max-heap: the smallest key must compare greatest.
    fn cmp(&self, o: &Self) -> Ordering {
        o.key
            .total_cmp(&self.key)
            .then_with(|| o.id.cmp(&self.id))
            .then_with(|| (o.kind as u8).cmp(&(self.kind as u8)))
    }
}

/// Islands of the covering outline above which merging is not tried (the
/// bounding-box fallback still bounds the vertex count).
const MAX_MERGE_ISLANDS: usize = 256;

/// Convex hull (monotone chain) of lattice points, without collinear
/// points, with a positive shoelace area (clockwise on screen).
fn convex_hull(mut pts: Vec<Point>) -> Vec<Point> {
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
fn rect_points(r: [i64; 4]) -> [Point; 4] {
    [[r[0], r[1]], [r[2], r[1]], [r[2], r[3]], [r[0], r[3]]]
}

/// An edit, evaluated: its cost (twice-area units, positive = worse) and the
/// distinct vertices it saves.
struct Eval {
    cost: i64,
    saved: i64,
    point: Point,
}

/// A region made ready for fitting: its exact rings, the row prefix sums
/// the fitter's containment tests read, and each island's largest
/// rectangle. Made once per region and shared by every fit of it.
pub struct Prepared {
    pub rings: Vec<Ring>,
    prefix: RowPrefix,
    rects: HashMap<u32, [i64; 4]>,
    size: Point,
}

impl Prepared {
    /// Traces `mask` (which must have no pinches); `with_rects` also finds
    /// the islands' largest rectangles (wanted for the safe region).
    pub fn new(mask: &Mask, with_rects: bool) -> Prepared {
        let labels = crate::outline::label(mask);
        Prepared {
            rings: crate::outline::trace_labelled(mask, &labels),
            prefix: mask.row_prefix(),
            rects: if with_rects {
                rects::largest_rectangles(mask, &labels)
            } else {
                HashMap::new()
            },
            size: [mask.width as i64, mask.height as i64],
        }
    }
    /// Whether the region has a hole.
    pub fn has_holes(&self) -> bool {
        self.rings.iter().any(|r| r.hole)
    }
}

/// The fitter's state; see the module docs.
pub struct Fitter<'a> {
    verts: Vec<Vert>,
    rings: Vec<RingState>,
    comps: Vec<Comp>,
    grids: [BucketGrid; 2],
    refs: HashMap<Point, u32>,
    distinct: usize,
    safe: &'a RowPrefix,
    cover: &'a RowPrefix,
    size: Point,
    heap: BinaryHeap<Cand>,
    budget: usize,
    cap_savings: bool,
}

impl<'a> Fitter<'a> {
    /// Starts from exact rings of the safe region (`opaque`) and of the
    /// must-cover region (`cover`), with the masks they were traced from.
    pub fn new(opaque: &'a Prepared, cover: &'a Prepared) -> Fitter<'a> {
        let size = opaque.size;
        let mut f = Fitter {
            verts: Vec::new(),
            rings: Vec::new(),
            comps: Vec::new(),
            grids: [
                BucketGrid::new(size[0], size[1]),
                BucketGrid::new(size[0], size[1]),
            ],
            refs: HashMap::new(),
            distinct: 0,
            safe: &opaque.prefix,
            cover: &cover.prefix,
            size,
            heap: BinaryHeap::new(),
            budget: usize::MAX,
            cap_savings: true,
        };
        let rects = &opaque.rects;
        let (opaque, cover) = (opaque.rings.clone(), cover.rings.clone());
        for (class, rings) in [(Class::Opaque, opaque), (Class::Cover, cover)] {
            let mut comp_of: HashMap<u32, u32> = HashMap::new();
            for r in rings {
                let next_id = f.comps.len() as u32;
                let c = *comp_of.entry(r.component).or_insert(next_id);
                if c == next_id {
                    let rect = if class == Class::Opaque {
                        rects.get(&r.component).copied()
                    } else {
                        None
                    };
                    f.comps.push(Comp {
                        class,
                        rect,
                        rings: Vec::new(),
                        area2: 0,
                        version: 0,
                        alive: true,
                    });
                }
                f.add_ring(class, r.hole, c, &r.points);
            }
        }
        f
    }

    fn add_ring(&mut self, class: Class, hole: bool, comp: u32, pts: &[Point]) -> u32 {
        let rid = self.rings.len() as u32;
        let base = self.verts.len() as u32;
        let n = pts.len() as u32;
        for (i, &p) in pts.iter().enumerate() {
            let i = i as u32;
            self.verts.push(Vert {
                p,
                prev: base + (i + n - 1) % n,
                next: base + (i + 1) % n,
                ring: rid,
                alive: true,
                stamp: 0,
            });
            self.grids[class as usize].add_vertex(base + i, p);
            self.add_ref(p);
        }
        for i in 0..n {
            let (a, b) = (base + i, base + (i + 1) % n);
            self.grids[class as usize].add_edge(a, b, pts[i as usize], pts[((i + 1) % n) as usize]);
        }
        let area2 = geom::twice_area(pts);
        self.rings.push(RingState {
            class,
            hole,
            comp,
            head: base,
            len: n,
            area2,
            alive: true,
        });
        let c = &mut self.comps[comp as usize];
        c.rings.push(rid);
        c.area2 += area2;
        rid
    }

    fn add_ref(&mut self, p: Point) {
        let r = self.refs.entry(p).or_insert(0);
        if *r == 0 {
            self.distinct += 1;
        }
        *r += 1;
    }
    fn drop_ref(&mut self, p: Point) {
        let r = self.refs.get_mut(&p).expect("position has a reference");
        *r -= 1;
        if *r == 0 {
            self.refs.remove(&p);
            self.distinct -= 1;
        }
    }
    fn refs_at(&self, p: Point) -> u32 {
        self.refs.get(&p).copied().unwrap_or(0)
    }

    /// Whether an edit that saves more vertices than the budget still needs
    /// is ranked by the needed ones only (the default), or by all it saves.
    /// The first avoids overshooting the budget with one large edit; the
    /// second lets a large edit (an island with many holes replaced by its
    /// largest rectangle) win before many small ones are spent.
    pub fn set_cap_savings(&mut self, cap: bool) {
        self.cap_savings = cap;
    }

    /// Opaque area minus covering area, in quarter texels (higher is better).
    pub fn objective(&self) -> i64 {
        let mut total = 0i64;
        for c in &self.comps {
            if c.alive {
                total += if c.class == Class::Opaque {
                    c.area2
                } else {
                    -c.area2
                };
            }
        }
        total / 2
    }

    /// Distinct vertex positions in use now.
    pub fn vertices(&self) -> usize {
        self.distinct
    }

    /// Runs the greedy edits until at most `budget` distinct vertices remain
    /// and no free improvement is left. Any `budget >= 4` is reached.
    pub fn fit(&mut self, budget: usize) {
        assert!(budget >= 4, "a budget below 4 vertices cannot hold a quad");
        self.budget = budget;
        self.seed();
        self.run(budget);
        if self.distinct > budget {
            self.cover_with_bounding_box();
            self.seed();
            self.run(budget);
        }
        debug_assert!(self.distinct <= budget);
    }

    fn seed(&mut self) {
        self.heap.clear();
        for v in 0..self.verts.len() as u32 {
            if self.verts[v as usize].alive {
                self.push_vertex_ops(v);
            }
        }
        for c in 0..self.comps.len() as u32 {
            self.push_comp_op(c);
        }
        for r in 0..self.rings.len() as u32 {
            self.push_hole_op(r);
        }
    }

    fn push(&mut self, kind: OpKind, id: u32, stamp: u32, e: &Eval) {
        let key = if e.cost <= 0 {
            if e.cost == 0 && e.saved <= 0 {
                return;
            }
            e.cost as f64 - if e.saved > 0 { 0.5 } else { 0.0 }
        } else {
            if e.saved <= 0 {
                return;
            }
            if self.cap_savings {
                // vertices saved beyond what the budget needs are worth nothing
                let need = (self.distinct as i64 - self.budget as i64).max(1);
                e.cost as f64 / e.saved.min(need) as f64
            } else {
                e.cost as f64 / e.saved as f64
            }
        };
        self.heap.push(Cand {
            key,
            kind,
            id,
            stamp,
        });
    }

    fn push_vertex_ops(&mut self, v: u32) {
        let stamp = self.verts[v as usize].stamp;
        if let Some(e) = self.eval_remove(v) {
            self.push(OpKind::Remove, v, stamp, &e);
        }
        if let Some(e) = self.eval_collapse(v) {
            self.push(OpKind::Collapse, v, stamp, &e);
        }
    }
    fn push_comp_op(&mut self, c: u32) {
        for kind in [
            OpKind::DropComp,
            OpKind::RectComp,
            OpKind::BoxComp,
            OpKind::MergeComp,
        ] {
            self.push_comp_kind(c, kind);
        }
    }
    fn push_comp_kind(&mut self, c: u32, kind: OpKind) {
        let stamp = self.comps[c as usize].version;
        let e = match kind {
            OpKind::DropComp => self.eval_drop_comp(c),
            OpKind::RectComp => self.eval_rect_comp(c),
            OpKind::BoxComp => self.eval_box_comp(c),
            _ => self.eval_merge_comp(c).map(|(e, _, _)| e),
        };
        if let Some(e) = e {
            self.push(kind, c, stamp, &e);
        }
    }
    fn push_hole_op(&mut self, r: u32) {
        if let Some(e) = self.eval_fill_hole(r) {
            let stamp = self.comps[self.rings[r as usize].comp as usize].version;
            self.push(OpKind::FillHole, r, stamp, &e);
        }
    }

    fn run(&mut self, budget: usize) {
        while let Some(c) = self.heap.pop() {
            if c.key > 0.0 && self.distinct <= budget {
                break;
            }
            match c.kind {
                OpKind::Remove | OpKind::Collapse => {
                    let v = &self.verts[c.id as usize];
                    if !v.alive || v.stamp != c.stamp {
                        continue;
                    }
                    let e = if c.kind == OpKind::Remove {
                        self.eval_remove(c.id)
                    } else {
                        self.eval_collapse(c.id)
                    };
                    let Some(e) = e else { continue };
                    if !self.still_best(&c, &e) {
                        continue;
                    }
                    if c.kind == OpKind::Remove {
                        self.apply_remove(c.id);
                    } else {
                        self.apply_collapse(c.id, e.point);
                    }
                }
                OpKind::DropComp | OpKind::RectComp | OpKind::BoxComp | OpKind::MergeComp => {
                    let comp = &self.comps[c.id as usize];
                    if !comp.alive {
                        continue;
                    }
                    if comp.version != c.stamp {
                        self.push_comp_kind(c.id, c.kind);
                        continue;
                    }
                    let e = match c.kind {
                        OpKind::DropComp => self.eval_drop_comp(c.id),
                        OpKind::RectComp => self.eval_rect_comp(c.id),
                        OpKind::BoxComp => self.eval_box_comp(c.id),
                        _ => None, // merges are re-evaluated below
                    };
                    if let Some(e) = e {
                        if !self.still_best(&c, &e) {
                            continue;
                        }
                    }
                    match c.kind {
                        OpKind::DropComp => self.apply_drop_comp(c.id),
                        OpKind::RectComp => {
                            let r = self.comps[c.id as usize].rect.take().expect("a rectangle");
                            self.replace_comp(c.id, r);
                        }
                        OpKind::MergeComp => {
                            let Some((e, set, hull)) = self.eval_merge_comp(c.id) else {
                                continue;
                            };
                            if !self.still_best(&c, &e) {
                                continue;
                            }
                            self.apply_merge(c.id, &set, &hull);
                        }
                        _ => {
                            let Some(r) = self.comp_box(c.id) else {
                                continue;
                            };
                            if !self.box_is_clear(c.id, r) {
                                continue;
                            }
                            self.replace_comp(c.id, r);
                        }
                    }
                }
                OpKind::FillHole => {
                    let r = &self.rings[c.id as usize];
                    if !r.alive {
                        continue;
                    }
                    if self.comps[r.comp as usize].version != c.stamp {
                        self.push_hole_op(c.id);
                        continue;
                    }
                    let Some(e) = self.eval_fill_hole(c.id) else {
                        continue;
                    };
                    if !self.still_best(&c, &e) {
                        continue;
                    }
                    self.apply_fill_hole(c.id);
                }
            }
        }
    }

    /// Re-queues the candidate when its key changed since it was queued.
    fn still_best(&mut self, c: &Cand, e: &Eval) -> bool {
        let stamp = c.stamp;
        let before = self.heap.len();
        self.push(c.kind, c.id, stamp, e);
        if self.heap.len() == before {
            return false; // no longer worth doing
        }
        let top = self.heap.peek().unwrap();
        if top.id == c.id && top.kind == c.kind && top.key <= c.key + 1e-9 {
            self.heap.pop();
            true
        } else {
            false
        }
    }

    fn class_of(&self, v: u32) -> Class {
        self.rings[self.verts[v as usize].ring as usize].class
    }

    /// Whether the closed region `poly` holds no vertex of `class` other
    /// than `skip`, and no edge of that class other than those in
    /// `skip_edges` touches the new edges `new_edges`.
    fn region_is_clear(
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
        let ok = grid.vertices_in(lo, hi, |id| {
            let v = &verts[id as usize];
            !v.alive || skip.contains(&id) || !in_closed_polygon(v.p, poly)
        });
        if !ok {
            return false;
        }
        grid.edges_in(lo, hi, |a, b| {
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

    fn sign(class: Class) -> i64 {
        if class == Class::Cover {
            1
        } else {
            -1
        }
    }

    /// Triangle (u, v, w) of region growth must lie in the safe region
    /// (opaque) and region loss must avoid the must-cover region (cover).
    fn triangle_allowed(&self, class: Class, tri: &[Point; 3], delta: i64) -> bool {
        match (class, delta.signum()) {
            (Class::Opaque, 1) => convex_row_spans(tri, |y, x0, x1| {
                y >= 0
                    && y < self.size[1]
                    && x0 >= 0
                    && x1 <= self.size[0]
                    && self.safe.count(y as usize, x0, x1) as i64 == x1 - x0
            }),
            (Class::Cover, -1) => convex_row_spans(tri, |y, x0, x1| {
                y < 0 || y >= self.size[1] || self.cover.count(y as usize, x0, x1) == 0
            }),
            _ => true,
        }
    }

    fn eval_remove(&self, v: u32) -> Option<Eval> {
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
            point: pv,
        })
    }

    fn eval_collapse(&self, v: u32) -> Option<Eval> {
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
            point: p,
        })
    }

    fn comp_vertices(&self, c: u32) -> Vec<u32> {
        let mut out = Vec::new();
        for &r in &self.comps[c as usize].rings {
            let ring = &self.rings[r as usize];
            if ring.alive {
                self.ring_vertices_into(r, &mut out);
            }
        }
        out
    }
    fn ring_vertices_into(&self, r: u32, out: &mut Vec<u32>) {
        let ring = &self.rings[r as usize];
        let mut v = ring.head;
        for _ in 0..ring.len {
            out.push(v);
            v = self.verts[v as usize].next;
        }
    }
    fn saved_by_removing(&self, ids: &[u32]) -> i64 {
        let mut count: HashMap<Point, u32> = HashMap::new();
        for &v in ids {
            *count.entry(self.verts[v as usize].p).or_insert(0) += 1;
        }
        count
            .iter()
            .filter(|(p, &n)| self.refs_at(**p) == n)
            .count() as i64
    }

    fn eval_drop_comp(&self, c: u32) -> Option<Eval> {
        let comp = &self.comps[c as usize];
        if !comp.alive || comp.class != Class::Opaque {
            return None;
        }
        let ids = self.comp_vertices(c);
        Some(Eval {
            cost: comp.area2,
            saved: self.saved_by_removing(&ids),
            point: [0, 0],
        })
    }

    /// Distinct vertices saved by replacing island `c` with rectangle `r`.
    fn saved_by_replacing(&self, c: u32, r: [i64; 4]) -> i64 {
        self.saved_by_swapping(&self.comp_vertices(c), &rect_points(r))
    }

    /// Distinct vertices saved by removing vertices `ids` and adding points `new`.
    fn saved_by_swapping(&self, ids: &[u32], new: &[Point]) -> i64 {
        let mut count: HashMap<Point, u32> = HashMap::new();
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

    fn eval_rect_comp(&self, c: u32) -> Option<Eval> {
        let comp = &self.comps[c as usize];
        let r = comp.rect?;
        if !comp.alive || comp.class != Class::Opaque {
            return None;
        }
        let cost = comp.area2 - 2 * (r[2] - r[0]) * (r[3] - r[1]);
        Some(Eval {
            cost,
            saved: self.saved_by_replacing(c, r),
            point: [0, 0],
        })
    }

    /// The bounding box of a covering island's outer ring.
    fn comp_box(&self, c: u32) -> Option<[i64; 4]> {
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
    fn box_is_clear(&self, c: u32, r: [i64; 4]) -> bool {
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

    fn eval_box_comp(&self, c: u32) -> Option<Eval> {
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
            point: [0, 0],
        })
    }

    /// Replaces island `c`'s rings by the rectangle `r`.
    fn replace_comp(&mut self, c: u32, r: [i64; 4]) {
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
    fn comp_rings(&self, c: u32) -> impl Iterator<Item = u32> + '_ {
        self.comps[c as usize]
            .rings
            .iter()
            .copied()
            .filter(|&r| self.rings[r as usize].alive)
    }

    /// Whether any ring of island `e` touches the closed convex polygon `hull`.
    fn comp_touches(&self, e: u32, hull: &[Point]) -> bool {
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
    fn eval_merge_comp(&self, c: u32) -> Option<(Eval, Vec<u32>, Vec<Point>)> {
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
                        point: [0, 0],
                    },
                    set,
                    hull,
                ));
            }
        }
    }

    fn apply_merge(&mut self, c: u32, set: &[u32], hull: &[Point]) {
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

    fn eval_fill_hole(&self, r: u32) -> Option<Eval> {
        let ring = &self.rings[r as usize];
        if !ring.alive || !ring.hole || ring.class != Class::Cover {
            return None;
        }
        let mut ids = Vec::new();
        self.ring_vertices_into(r, &mut ids);
        Some(Eval {
            cost: -ring.area2,
            saved: self.saved_by_removing(&ids),
            point: [0, 0],
        })
    }

    fn touch(&mut self, v: u32) {
        self.verts[v as usize].stamp += 1;
        let r = self.verts[v as usize].ring;
        let c = self.rings[r as usize].comp;
        self.comps[c as usize].version += 1;
    }

    fn requeue_around(&mut self, v: u32) {
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

    fn kill(&mut self, v: u32) {
        let class = self.class_of(v);
        let p = self.verts[v as usize].p;
        self.verts[v as usize].alive = false;
        self.grids[class as usize].remove_vertex(v, p);
        self.drop_ref(p);
    }

    fn apply_remove(&mut self, v: u32) {
        let (u, w, p, r) = {
            let vv = &self.verts[v as usize];
            (vv.prev, vv.next, vv.p, vv.ring)
        };
        let (pu, pw) = (self.verts[u as usize].p, self.verts[w as usize].p);
        let delta = -orient(pu, p, pw);
        self.kill(v);
        self.verts[u as usize].next = w;
        self.verts[w as usize].prev = u;
        let class = self.rings[r as usize].class;
        self.grids[class as usize].add_edge(u, w, pu, pw);
        self.change_ring(r, u, -1, delta);
        self.requeue_around(u);
    }

    fn apply_collapse(&mut self, v: u32, p: Point) {
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

    fn change_ring(&mut self, r: u32, head: u32, dlen: i64, delta: i64) {
        let ring = &mut self.rings[r as usize];
        ring.head = head;
        ring.len = (ring.len as i64 + dlen) as u32;
        ring.area2 += delta;
        let c = ring.comp;
        self.comps[c as usize].area2 += delta;
    }

    fn kill_ring(&mut self, r: u32) {
        let mut ids = Vec::new();
        self.ring_vertices_into(r, &mut ids);
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

    fn apply_drop_comp(&mut self, c: u32) {
        for r in self.comps[c as usize].rings.clone() {
            if self.rings[r as usize].alive {
                self.kill_ring(r);
            }
        }
        self.comps[c as usize].alive = false;
    }

    /// Fills a covering hole, and drops the covering islands inside it,
    /// which the filled area now covers.
    fn apply_fill_hole(&mut self, r: u32) {
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
    fn cover_with_bounding_box(&mut self) {
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

    /// The fitted outlines, grouped by island.
    pub fn result(&self) -> Fit {
        let mut fit = Fit {
            vertices: self.distinct,
            ..Fit::default()
        };
        for c in 0..self.comps.len() as u32 {
            let comp = &self.comps[c as usize];
            if !comp.alive {
                continue;
            }
            let mut outer = None;
            let mut holes = Vec::new();
            for &r in &comp.rings {
                let ring = &self.rings[r as usize];
                if !ring.alive {
                    continue;
                }
                let mut ids = Vec::new();
                self.ring_vertices_into(r, &mut ids);
                let pts: Vec<Point> = ids.iter().map(|&v| self.verts[v as usize].p).collect();
                if ring.hole {
                    holes.push(pts);
                } else {
                    outer = Some(pts);
                }
            }
            if let Some(outer) = outer {
                let poly = FitPolygon { outer, holes };
                if comp.class == Class::Opaque {
                    fit.opaque.push(poly);
                } else {
                    fit.cover.push(poly);
                }
            }
        }
        fit
    }
}
