//! Local improvement: after the greedy edits or the dynamic program have
//! chosen which vertices a cut keeps, vertices move on the half-texel
//! lattice while the objective (opaque area minus covering area) grows and
//! every containment test holds.
//!
//! Moves weighed for a vertex `v` between `u` and `w` (positions `pu`,
//! `pv`, `pw`):
//!
//! * steps along the eight lattice directions, of 1, 2, 4, 8 and 16 units
//!   (half texels), and the eight other points of the 5 x 5 window around
//!   `pv` (knight steps);
//! * slides along either edge: `pv + t d` with `d` the primitive lattice
//!   direction of `u → v` (or `w → v`) and `t` = ±1, ±2, ±4, ±8, ±16, so the
//!   other edge keeps its line and only one triangle of area changes hands
//!   (the eight directions cover this already for axis and diagonal edges);
//! * where nothing of these gains, the edge from `v` to its successor `w`
//!   moving as a whole: shifted (both ends by the same `d`) or turned (the
//!   ends by `d` and `-d`), `d` along the eight directions, 1, 2 or 4 units,
//!   or both ends sliding 1 or 2 steps along their other edges' lines
//!   (a tangent edge of a covering polygon turns about its touching point
//!   this way, which single moves cannot do when each half alone loses);
//!   made as two single moves in a row, each tested against the state it
//!   leaves, so the invariant below holds after each;
//! * where an opaque and a covering vertex share `pv` (hard edges, where
//!   the budget counts the position once), both moving together to the same
//!   point: the gain is the sum of both rings' changes (one may lose area
//!   when the other gains more), and the shared position stays one.
//!
//! A move of one vertex off a shared position adds a position, so it is
//! weighed only while the budget has one to spare.
//!
//! Invariant (the module's, kept by every move): the area that changes
//! hands is covered by the two triangles `(pu, pv, q)` and `(pv, pw, q)`;
//! both must lie in the safe region (an opaque vertex) or clear of the
//! must-cover region (a covering vertex), whatever their sign, by the exact
//! row-run tests of the greedy edits ([`Fitter::triangle_allowed`]); no
//! other vertex of the class may lie in them and no other edge of the class
//! may touch the new edges ([`Fitter::region_is_clear`]); the ring keeps
//! the sign of its area and at least four vertices; the distinct positions
//! stay within the budget. A joint move tests each of its two vertices
//! against its own class (the classes are tested apart everywhere in the
//! fitter: the opaque region lies inside the must-cover one).
//!
//! Worked example (lattice units, half texels; twice-area units as in the
//! fitter; the unit test below runs it): on a 16 x 16 lattice the safe
//! region is the block below line `y = 4` (positive `y` down) and the
//! must-cover region the whole image. The opaque ring `(2, 14) (2, 8)
//! (8, 6) (14, 8) (14, 14)` has its apex `pv = (8, 6)` between
//! `pu = (2, 8)` and `pw = (14, 8)`: `orient(pu, pv, pw) = 24`. Moving the
//! apex two units up to `q = (8, 4)` makes it `48`: the ring gains `24`
//! twice-area units (3 texels). The triangles `(pu, pv, q)` and
//! `(pv, pw, q)` lie between `y = 4` and `y = 8`, inside the block, so the
//! move is allowed; the diagonal and knight steps to `(6, 4)`, `(9, 4)`
//! gain as much but come later in the fixed order, so `(8, 4)` is taken
//! and the apex and its neighbours are weighed again. Had the apex been
//! shared with a covering vertex whose own move to `q` costs `10`, the
//! joint move would still gain `14` and keep the position count; the
//! single move would need a spare position.
//!
//! Bounds and pruning: each pass weighs at most `8 * budget` vertices
//! (a vertex is queued again only when it or a neighbour moved), each
//! against at most 68 target points (40 steps, 8 knight steps, 20 slides;
//! twice as many at a shared position, with its partner's slides), and an edge
//! move at 64 offset pairs of which only the twelve largest gains are tested
//! for containment; a target is tested for containment only when its area
//! gain beats the best so far. What this gives up: moves farther than 16
//! units or off these lines (reached, if at all, by several moves in a
//! row); edge moves farther than 4 units or other than a shift, a turn or a
//! slide of both ends along their lines, and of edges with a shared end;
//! moves of three or more neighbouring vertices at once; joint moves of
//! more than the two vertices at one shared position. The search is a
//! hill climb: it ends in a local optimum of these moves.

use super::*;

/// Vertex weighings of the local improvement, per vertex of budget.
const IMPROVE_WEIGHINGS: usize = 8;

/// Step lengths of the direction and slide moves, in half texels.
const STEPS: [i64; 5] = [1, 2, 4, 8, 16];
/// Edge moves tested for containment, largest gain first.
const EDGE_TRIES: usize = 12;
/// The eight lattice directions.
const DIRECTIONS: [[i64; 2]; 8] = [
    [1, 0],
    [-1, 0],
    [0, 1],
    [0, -1],
    [1, 1],
    [1, -1],
    [-1, 1],
    [-1, -1],
];
/// The points of the 5 x 5 window not on the eight directions.
const KNIGHT: [[i64; 2]; 8] = [
    [1, 2],
    [2, 1],
    [-1, 2],
    [-2, 1],
    [1, -2],
    [2, -1],
    [-1, -2],
    [-2, -1],
];

fn gcd(a: i64, b: i64) -> i64 {
    let (mut a, mut b) = (a.abs(), b.abs());
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

/// The target offsets weighed for a vertex whose edges run to `pu` and
/// `pw`, in a fixed order (the first of equal gains wins).
fn offsets(pu: Point, pv: Point, pw: Point, out: &mut Vec<[i64; 2]>) {
    for &s in &STEPS {
        for d in DIRECTIONS {
            out.push([s * d[0], s * d[1]]);
        }
    }
    out.extend_from_slice(&KNIGHT);
    for e in [pu, pw] {
        let (dx, dy) = (pv[0] - e[0], pv[1] - e[1]);
        let g = gcd(dx, dy);
        if g == 0 {
            continue;
        }
        let d = [dx / g, dy / g];
        if d[0].abs() <= 1 && d[1].abs() <= 1 {
            continue; // on the eight directions already
        }
        for &s in &STEPS {
            out.push([s * d[0], s * d[1]]);
            out.push([-s * d[0], -s * d[1]]);
        }
    }
}

impl Fitter<'_> {
    /// The objective's change (twice-area units) if vertex `v` moved to
    /// `q`, ignoring containment; `None` when the move is not considered
    /// (outside the image, a degenerate or flipped ring, a triangle ring).
    fn move_gain(&self, v: u32, q: Point) -> Option<i64> {
        let vv = &self.verts[v as usize];
        let ring = &self.rings[vv.ring as usize];
        if !vv.alive || !ring.alive || ring.len < 4 {
            return None;
        }
        if q[0] < 0 || q[1] < 0 || q[0] > self.size[0] || q[1] > self.size[1] || q == vv.p {
            return None;
        }
        let (pu, pw) = (
            self.verts[vv.prev as usize].p,
            self.verts[vv.next as usize].p,
        );
        let old = orient(pu, vv.p, pw);
        let now = orient(pu, q, pw);
        if now == 0 || (ring.area2 + now - old).signum() != ring.area2.signum() {
            return None;
        }
        Some(-Self::sign(ring.class) * (now - old))
    }

    /// Whether moving vertex `v` to `q` keeps the invariants of its class
    /// (see the module docs); the position count is the caller's.
    fn move_allowed(&self, v: u32, q: Point) -> bool {
        let vv = &self.verts[v as usize];
        let class = self.rings[vv.ring as usize].class;
        let (u, w) = (vv.prev, vv.next);
        let (pu, pv, pw) = (self.verts[u as usize].p, vv.p, self.verts[w as usize].p);
        [[pu, pv, q], [pv, pw, q]].iter().all(|t| {
            let d = -Self::sign(class); // the side that needs the test
            (orient(t[0], t[1], t[2]) == 0 || self.triangle_allowed(class, t, d))
                && self.region_is_clear(
                    class,
                    t,
                    &[u, v, w],
                    &[(pu, q), (q, pw)],
                    &[(u, pu), (w, pw)],
                )
        })
    }

    /// The vertex of the other class at `v`'s position, if any.
    fn partner(&self, v: u32) -> Option<u32> {
        let vv = &self.verts[v as usize];
        if self.refs_at(vv.p) != 2 {
            return None;
        }
        let other = match self.class_of(v) {
            Class::Opaque => Class::Cover,
            Class::Cover => Class::Opaque,
        };
        let mut found = None;
        self.grids[other as usize].vertices_in(vv.p, vv.p, |x| {
            let xv = &self.verts[x as usize];
            if xv.alive && xv.p == vv.p {
                found = Some(x);
                return false;
            }
            true
        });
        found
    }

    /// The best move of `v` (alone, or with its partner at a shared
    /// position): gain, the partner that moves along, and the target.
    fn eval_local_move(
        &self,
        v: u32,
        targets: &mut Vec<[i64; 2]>,
    ) -> Option<(i64, Option<u32>, Point)> {
        let vv = &self.verts[v as usize];
        if !vv.alive || !self.rings[vv.ring as usize].alive {
            return None;
        }
        let pv = vv.p;
        let (pu, pw) = (
            self.verts[vv.prev as usize].p,
            self.verts[vv.next as usize].p,
        );
        let freed = (self.refs_at(pv) == 1) as i64;
        targets.clear();
        offsets(pu, pv, pw, targets);
        let mut best: Option<(i64, Option<u32>, Point)> = None;
        let beats = |best: &Option<(i64, Option<u32>, Point)>, g: i64| {
            g > 0 && best.is_none_or(|b| g > b.0)
        };
        let singles = targets.len();
        let partner = self.partner(v);
        if let Some(x) = partner {
            let xv = &self.verts[x as usize];
            let (xu, xw) = (
                self.verts[xv.prev as usize].p,
                self.verts[xv.next as usize].p,
            );
            offsets(xu, pv, xw, targets);
        }
        for (i, d) in targets.iter().enumerate() {
            let q = [pv[0] + d[0], pv[1] + d[1]];
            if i < singles {
                if let Some(g) = self.move_gain(v, q) {
                    let added = (self.refs_at(q) == 0) as i64 - freed;
                    let fits = added <= 0 || self.distinct as i64 + added <= self.budget as i64;
                    if fits && beats(&best, g) && self.move_allowed(v, q) {
                        best = Some((g, None, q));
                    }
                }
            }
            if let Some(x) = partner {
                // both vertices of the shared position move: the count
                // does not grow
                let (Some(gv), Some(gx)) = (self.move_gain(v, q), self.move_gain(x, q)) else {
                    continue;
                };
                if beats(&best, gv + gx) && self.move_allowed(v, q) && self.move_allowed(x, q) {
                    best = Some((gv + gx, Some(x), q));
                }
            }
        }
        best
    }

    /// The best move of the edge from `v` to its successor `w`, both ends
    /// moving at once (the edge shifted or turned: offsets `(d, d)` and
    /// `(d, -d)` for `d` along the eight directions, 1, 2 or 4 units), made
    /// when it gains; whether it did. Only where neither end is shared
    /// (the count stays) and the ring has five vertices or more. Sound as
    /// two single moves in a row, each tested against the state it leaves
    /// (the first is undone when the second is not allowed), whatever the
    /// sign of either half's gain.
    fn try_edge_move(&mut self, v: u32) -> Option<u32> {
        let vv = &self.verts[v as usize];
        let ring = &self.rings[vv.ring as usize];
        if !vv.alive || !ring.alive || ring.len < 5 {
            return None;
        }
        let (u, w) = (vv.prev, vv.next);
        let x = self.verts[w as usize].next;
        let (pu, pv, pw, px) = (
            self.verts[u as usize].p,
            vv.p,
            self.verts[w as usize].p,
            self.verts[x as usize].p,
        );
        if self.refs_at(pv) != 1 || self.refs_at(pw) != 1 {
            return None;
        }
        let sign = Self::sign(ring.class);
        let area2 = ring.area2;
        let chain = |a: Point, b: Point, c: Point, d: Point| {
            let cr = |p: Point, q: Point| p[0] * q[1] - q[0] * p[1];
            cr(a, b) + cr(b, c) + cr(c, d)
        };
        let old = chain(pu, pv, pw, px);
        let mut tried: Vec<(i64, Point, Point)> = Vec::new();
        for s in [1, 2, 4] {
            for d in DIRECTIONS {
                let d = [s * d[0], s * d[1]];
                for e in [d, [-d[0], -d[1]]] {
                    let (qv, qw) = ([pv[0] + d[0], pv[1] + d[1]], [pw[0] + e[0], pw[1] + e[1]]);
                    let delta = chain(pu, qv, qw, px) - old;
                    let gain = -sign * delta;
                    if gain > 0 && (area2 + delta).signum() == area2.signum() {
                        tried.push((gain, qv, qw));
                    }
                }
            }
        }
        // both ends sliding along their other edges (an edge turning about
        // a point between its ends while its neighbours keep their lines)
        let dir = |from: Point, to: Point| {
            let (dx, dy) = (to[0] - from[0], to[1] - from[1]);
            let g = gcd(dx, dy).max(1);
            [dx / g, dy / g]
        };
        let (dv, dw) = (dir(pu, pv), dir(px, pw));
        for a in [-2, -1, 1, 2] {
            for b in [-2, -1, 1, 2] {
                let qv = [pv[0] + a * dv[0], pv[1] + a * dv[1]];
                let qw = [pw[0] + b * dw[0], pw[1] + b * dw[1]];
                let delta = chain(pu, qv, qw, px) - old;
                let gain = -sign * delta;
                if gain > 0 && (area2 + delta).signum() == area2.signum() {
                    tried.push((gain, qv, qw));
                }
            }
        }
        // largest gain first; the first allowed one is made
        tried.sort_by_key(|t| std::cmp::Reverse(t.0));
        for (_, qv, qw) in tried.into_iter().take(EDGE_TRIES) {
            if self.move_gain(v, qv).is_none() || !self.move_allowed(v, qv) {
                continue;
            }
            self.apply_move(v, qv);
            if self.move_gain(w, qw).is_some() && self.move_allowed(w, qw) {
                self.apply_move(w, qw);
                return Some(w);
            }
            self.apply_move(v, pv);
        }
        None
    }

    /// After [`Fitter::spend_rest`]: the local moves of this module, at
    /// most [`IMPROVE_WEIGHINGS`] weighings per vertex of budget. (Running
    /// the fitter's insertions and exchanges again after them, and 32
    /// weighings, cost about 10% of a cut at budget 16 for no change in the
    /// quality bench's medians.) Every move only gains.
    pub(super) fn improve_chosen(&mut self, budget: usize) {
        self.improve_locally(IMPROVE_WEIGHINGS * budget);
    }

    /// Local moves while they gain (see the module docs), neighbours
    /// weighed again after each; at most `limit` weighings. Whether any
    /// vertex moved.
    pub(super) fn improve_locally(&mut self, limit: usize) -> bool {
        let mut targets = Vec::new();
        self.move_while_gaining(limit, |f, v| {
            if let Some((_, partner, q)) = f.eval_local_move(v, &mut targets) {
                f.apply_move(v, q);
                let mut again = vec![v];
                if let Some(x) = partner {
                    f.apply_move(x, q);
                    again.push(x);
                }
                Some(again)
            } else {
                f.try_edge_move(v).map(|w| vec![v, w])
            }
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mask::Mask;

    /// The worked example of the module docs: the apex of an opaque ring
    /// moves up to the safe block's edge, gaining the triangle the shoelace
    /// formula gives (classical geometry: a triangle's area is half the
    /// cross product of two of its sides); then the hill climb keeps every
    /// vertex in the safe block and only gains.
    #[test]
    fn worked_example_moves_up_to_the_safe_edge() {
        // lattice 16 x 16; the safe region is the block below line y = 4,
        // the must-cover region the whole image
        let mut safe = Mask::new(16, 16, false);
        let cover = Mask::new(16, 16, true);
        for y in 4..16 {
            for x in 0..16 {
                safe.set(x, y, true);
            }
        }
        let (safe, cover) = (Prepared::new(&safe, false), Prepared::new(&cover, false));
        let ring = |points: Vec<Point>| Ring {
            points,
            hole: false,
            component: 0,
        };
        let opaque = ring(vec![[2, 14], [2, 8], [8, 6], [14, 8], [14, 14]]);
        let covering = ring(vec![[0, 16], [0, 0], [16, 0], [16, 16]]);
        let mut f = Fitter::from_rings(&safe, &cover, vec![opaque], vec![covering]);
        f.budget = 16;
        let apex = (0..f.verts.len() as u32)
            .find(|&v| f.verts[v as usize].p == [8, 6])
            .unwrap();
        let before = f.objective();
        // orient((2,8),(8,6),(14,8)) = 24, orient((2,8),(8,4),(14,8)) = 48
        assert_eq!(
            f.eval_local_move(apex, &mut Vec::new()),
            Some((24, None, [8, 4]))
        );
        assert!(f.improve_locally(1000));
        assert!(f.objective() > before);
        let fit = f.result();
        for p in &fit.opaque[0].outer {
            assert!(p[1] >= 4 && p[0] >= 0 && p[0] <= 16 && p[1] <= 16, "{p:?}");
        }
        // the ring keeps its five vertices (moves never add or remove)
        assert_eq!(fit.opaque[0].outer.len(), 5);
        assert!(fit.vertices <= 16);
    }
}
