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
mod improve;
mod island_edits;
mod queue;
mod rects;
mod refine;
mod ring_dp;
mod tabs;
mod variants;
mod vertex_edits;

pub use holes::{open_holes, open_holes_in_runs};
pub use variants::{fit_outlines, prepare_cover, LayerFit};

pub use geom::orient;

use crate::mask::{Mask, RowRuns};
use crate::outline::{Point, Ring};
use grid::BucketGrid;
use queue::{Cand, Eval};
use std::collections::{BinaryHeap, HashMap};

/// A map keyed by lattice points with a fast, fixed-seed hasher (the
/// fitter looks points up on every candidate it weighs; no result depends
/// on a map's order).
pub(crate) type PointMap<V> = HashMap<Point, V, foldhash::fast::FixedState>;

/// Which region a ring bounds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Class {
    /// The safe-opaque region: the opaque mesh.
    Opaque = 0,
    /// The must-cover region: both meshes together.
    Cover = 1,
}

/// One island of a fitted outline: its outer ring and its holes. Rings have
/// the region on their right (outer rings clockwise on screen, y down).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FitPolygon {
    /// The outer ring.
    pub outer: Vec<Point>,
    /// Its holes.
    pub holes: Vec<Vec<Point>>,
}

/// The fitted outlines of a layer.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Fit {
    /// Islands of the opaque mesh.
    pub opaque: Vec<FitPolygon>,
    /// Islands of the covering outline (opaque + blended).
    pub cover: Vec<FitPolygon>,
    /// Distinct vertex positions over both classes.
    pub vertices: usize,
}

impl Fit {
    /// Ring vertices of one class, counted per ring.
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

#[derive(Clone)]
struct Vert {
    p: Point,
    prev: u32,
    next: u32,
    ring: u32,
    alive: bool,
    stamp: u32,
}

#[derive(Clone)]
struct RingState {
    class: Class,
    hole: bool,
    comp: u32,
    head: u32,
    len: u32,
    area2: i64,
    alive: bool,
}

#[derive(Clone)]
struct Comp {
    class: Class,
    /// The largest rectangle inside the island (opaque), a stand-in.
    rect: Option<[i64; 4]>,
    /// The same rectangle, kept after the rectangle edit used it: what an
    /// island dropped whole comes back as.
    largest: Option<[i64; 4]>,
    rings: Vec<u32>,
    area2: i64,
    version: u32,
    alive: bool,
}

/// A region made ready for fitting: its exact rings, the row runs
/// the fitter's containment tests read, and each island's largest
/// rectangle. Made once per region and shared by every fit of it.
pub struct Prepared {
    /// The exact rings of the region.
    pub rings: Vec<Ring>,
    runs: RowRuns,
    rects: HashMap<u32, [i64; 4]>,
    size: Point,
}

impl Prepared {
    /// Traces `mask` (which must have no pinches); `with_rects` also finds
    /// the islands' largest rectangles (wanted for the safe region).
    pub fn new(mask: &Mask, with_rects: bool) -> Prepared {
        Prepared::from_runs(mask.row_runs(), with_rects)
    }
    /// [`Prepared::new`] from the region's runs (which must have no
    /// pinches), consumed.
    pub fn from_runs(runs: RowRuns, with_rects: bool) -> Prepared {
        let size = [runs.width as i64, runs.height as i64];
        let labels = runs.labels();
        Prepared {
            rings: crate::outline::trace_runs(&labels),
            rects: if with_rects {
                rects::largest_rectangles(&labels)
            } else {
                HashMap::new()
            },
            size,
            runs: labels.runs,
        }
    }
    /// The region's runs.
    pub fn runs(&self) -> &RowRuns {
        &self.runs
    }
    /// Whether the region has a hole.
    pub fn has_holes(&self) -> bool {
        self.rings.iter().any(|r| r.hole)
    }
}

/// The fitter's state; see the module docs.
#[derive(Clone)]
pub struct Fitter<'a> {
    verts: Vec<Vert>,
    rings: Vec<RingState>,
    comps: Vec<Comp>,
    grids: [BucketGrid; 2],
    refs: PointMap<u32>,
    distinct: usize,
    safe: &'a RowRuns,
    cover: &'a RowRuns,
    size: Point,
    heap: BinaryHeap<Cand>,
    budget: usize,
    cap_savings: bool,
    share_credit: bool,
    /// Set while [`Fitter::fit_greedy_both`] waits for the first edit the
    /// two rankings of large edits weigh differently.
    watch_cap: bool,
    cap_diverged: bool,
    /// Containment answers of tall triangles ([`Fitter::triangle_allowed`]):
    /// the regions never change, so an answer holds for the whole fit.
    triangle_answers: std::cell::RefCell<PointMap3<bool>>,
    /// The same answers shared by every fitter of a layer (all variants,
    /// all budgets: [`LayerFit`]), used instead of `triangle_answers`.
    shared_answers: Option<&'a SharedAnswers>,
}

/// Containment answers of tall triangles shared by every fitter of one
/// layer's regions (a cache: no result depends on it, as the regions never
/// change), keyed by the triangle, the test and the region tested. It
/// stops taking new answers at [`SharedAnswers::MAX`] entries, to bound
/// its memory on large layers.
#[derive(Default)]
pub(crate) struct SharedAnswers {
    map: std::sync::Mutex<HashMap<AnswerKey, bool, foldhash::fast::FixedState>>,
}

/// A kept answer's key: the triangle, the test (0: inside the safe region,
/// 1: clear of the must-cover region) and the address of the region's runs.
type AnswerKey = ([Point; 3], u8, usize);

impl SharedAnswers {
    /// Entries kept at most (about 20 MiB).
    const MAX: usize = 1 << 18;
    fn get(&self, key: &AnswerKey) -> Option<bool> {
        self.map
            .lock()
            .expect("no panic holds it")
            .get(key)
            .copied()
    }
    fn insert(&self, key: AnswerKey, answer: bool) {
        let mut map = self.map.lock().expect("no panic holds it");
        if map.len() < Self::MAX {
            map.insert(key, answer);
        }
    }
}

/// A map keyed by a triangle's three lattice points and a class.
pub(crate) type PointMap3<V> = HashMap<([Point; 3], u8), V, foldhash::fast::FixedState>;

impl<'a> Fitter<'a> {
    /// Starts from exact rings of the safe region (`opaque`) and of the
    /// must-cover region (`cover`), with the masks they were traced from.
    pub fn new(opaque: &'a Prepared, cover: &'a Prepared) -> Fitter<'a> {
        Fitter::from_rings(opaque, cover, opaque.rings.clone(), cover.rings.clone())
    }

    /// Starts from given rings (`opaque_rings` inside the safe region of
    /// `opaque`, `cover_rings` around the must-cover region of `cover`, with
    /// every invariant of the module docs already true), grouped into
    /// islands by their `component`.
    pub(crate) fn from_rings(
        opaque: &'a Prepared,
        cover: &'a Prepared,
        opaque_rings: Vec<Ring>,
        cover_rings: Vec<Ring>,
    ) -> Fitter<'a> {
        let size = opaque.size;
        let mut f = Fitter {
            verts: Vec::new(),
            rings: Vec::new(),
            comps: Vec::new(),
            grids: [
                BucketGrid::new(size[0], size[1]),
                BucketGrid::new(size[0], size[1]),
            ],
            refs: PointMap::default(),
            distinct: 0,
            safe: &opaque.runs,
            cover: &cover.runs,
            size,
            heap: BinaryHeap::new(),
            budget: usize::MAX,
            cap_savings: true,
            share_credit: true,
            watch_cap: false,
            cap_diverged: false,
            triangle_answers: Default::default(),
            shared_answers: None,
        };
        let rects = &opaque.rects;
        for (class, rings) in [(Class::Opaque, opaque_rings), (Class::Cover, cover_rings)] {
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
                        largest: rect,
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

    /// Whether an edit that stops using a position the other class still
    /// uses is ranked as saving half a vertex (the default), or as saving
    /// nothing. The first lets the greedy edits simplify the opaque and
    /// covering outlines in turn where they coincide (hard edges); the
    /// second keeps such positions shared as long as possible.
    pub fn set_share_credit(&mut self, credit: bool) {
        self.share_credit = credit;
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
        self.fit_greedy(budget);
        self.spend_rest(budget);
    }

    /// The greedy edits of [`Fitter::fit`] alone: at most `budget` distinct
    /// vertices remain, and the budget they leave is not spent yet.
    pub fn fit_greedy(&mut self, budget: usize) {
        assert!(budget >= 4, "a budget below 4 vertices cannot hold a quad");
        self.budget = budget;
        self.seed();
        self.finish_greedy(budget);
    }

    /// [`Fitter::fit_greedy`] with both rankings of large edits (see
    /// [`Fitter::set_cap_savings`]), sharing the edits they make alike:
    /// the first ranking's fit, and the second's when it can differ (`None`
    /// when every edit was weighed alike, so the two fits are the same).
    /// The second ranking takes over from the state where the rankings
    /// first weigh an edit differently, with its queue weighed anew.
    /// Both fitters start from [`Fitter::new`]`(opaque, cover)` with
    /// `share_credit` (see [`Fitter::set_share_credit`]).
    pub fn fit_greedy_both(
        opaque: &'a Prepared,
        cover: &'a Prepared,
        share_credit: bool,
        budget: usize,
    ) -> (Fitter<'a>, Option<Fitter<'a>>) {
        Fitter::fit_greedy_both_sharing(opaque, cover, share_credit, budget, None)
    }

    /// [`Fitter::fit_greedy_both`], the fitters keeping their containment
    /// answers in `answers` (shared with the layer's other fitters).
    pub(crate) fn fit_greedy_both_sharing(
        opaque: &'a Prepared,
        cover: &'a Prepared,
        share_credit: bool,
        budget: usize,
        answers: Option<&'a SharedAnswers>,
    ) -> (Fitter<'a>, Option<Fitter<'a>>) {
        assert!(budget >= 4, "a budget below 4 vertices cannot hold a quad");
        let mut this = Fitter::new(opaque, cover);
        this.shared_answers = answers;
        this.share_credit = share_credit;
        this.fit_greedy_pair(opaque, cover, budget)
    }

    fn fit_greedy_pair(
        mut self,
        opaque: &'a Prepared,
        cover: &'a Prepared,
        budget: usize,
    ) -> (Fitter<'a>, Option<Fitter<'a>>) {
        self.cap_savings = true;
        self.budget = budget;
        self.seed();
        self.watch_cap = true;
        self.cap_diverged = false;
        self.run(budget);
        self.watch_cap = false;
        if self.cap_diverged {
            let mut other = self.clone();
            other.cap_savings = false;
            other.seed();
            other.finish_greedy(budget);
            self.finish_greedy(budget);
            return (self, Some(other));
        }
        if self.distinct <= budget {
            // the first ranking's edits are done and none was weighed
            // differently: the second ranking makes the same ones
            self.finish_greedy(budget);
            return (self, None);
        }
        // the fallbacks follow, where the rankings may differ: the second
        // ranking starts afresh
        let mut other = Fitter::new(opaque, cover);
        other.shared_answers = self.shared_answers;
        other.share_credit = self.share_credit;
        other.cap_savings = false;
        other.fit_greedy(budget);
        self.finish_greedy(budget);
        (self, Some(other))
    }

    /// Keeps this fitter's containment answers in `answers`, shared with
    /// the layer's other fitters.
    pub(crate) fn share_answers(&mut self, answers: &'a SharedAnswers) {
        self.shared_answers = Some(answers);
    }

    fn finish_greedy(&mut self, budget: usize) {
        self.run(budget);
        if self.distinct > budget {
            self.cover_with_bounding_box();
            self.seed();
            self.run(budget);
        }
        if self.distinct > budget {
            // the ranking left an opaque island the box could not take in:
            // drop the opaque islands (the box alone holds 4 vertices)
            for c in 0..self.comps.len() as u32 {
                let comp = &self.comps[c as usize];
                if comp.alive && comp.class == Class::Opaque {
                    self.apply_drop_comp(c);
                }
            }
        }
        // the queue held a candidate per vertex of the exact outlines: give
        // its memory back, as several variants wait with their greedy fits
        // done (the order of a later queue does not depend on its capacity)
        self.heap.clear();
        self.heap.shrink_to_fit();
        // and the kept containment answers (a cache: no result depends on it)
        *self.triangle_answers.get_mut() = Default::default();
    }

    /// The second half of [`Fitter::fit`], after [`Fitter::fit_greedy`] at
    /// the same budget: spends what is left of the budget and exchanges
    /// vertices while that gains area.
    pub fn spend_rest(&mut self, budget: usize) {
        self.refine(budget, 4 * budget);
        // budget the insertions could not spend: opaque islands the greedy
        // edits dropped whole come back as their largest rectangles while
        // they fit, and the rest is spent again
        let islands = self.rebuild_dropped_islands(budget);
        // and covering holes filled whole come back as rectangles
        if self.rebuild_filled_holes(budget) || islands {
            self.refine(budget, 4 * budget);
        }
        debug_assert!(self.distinct <= budget);
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
