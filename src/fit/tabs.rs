//! Opaque tabs: a rectangle of the safe region standing on a straight,
//! axis-aligned opaque edge, added to the ring with four vertices at once.
//!
//! Where the safe region rises from an opaque edge in narrow pieces (a
//! skyline's walls between rows of window holes, rising from the ground
//! band the opaque outline keeps), no single inserted vertex gains: a
//! triangle over the edge crosses the holes. A rectangle on the edge does,
//! at the price of four vertices, and when the budget has no four to spare
//! it pays only if what gives them up (the greedy edits' cheapest
//! removals) loses less than the rectangle gains.
//!
//! For each axis-aligned edge of an opaque ring, the safe cells beyond it
//! give a histogram (per lattice column along the edge, how far the safe
//! region reaches outward from it without a gap, by the region's row runs),
//! and its largest rectangle (the classical stack method, O(edge length))
//! is the edge's tab; its end columns are kept off the edge's two vertices.
//! The largest tabs are each tried on a copy of the fit ([`TAB_TRIES`] in
//! all, the tabs weighed again on the new fit after one is kept): the
//! four vertices inserted, the greedy edits run until the budget holds
//! (without their fallbacks; a copy they cannot bring back is dropped),
//! the rest of the budget spent and the local moves run; a copy replaces
//! the fit only when its objective is strictly larger, so tabs never make
//! a cut worse.
//!
//! Invariant: the tab's cells are all in the safe region (its histogram
//! is read from the row runs), no other opaque vertex lies in the closed
//! rectangle and no opaque edge other than the one it stands on touches
//! its three new edges ([`Fitter::region_is_clear`]), so the ring stays
//! simple and inside the safe region; the rectangle adds area to the ring
//! (its twice-area change is computed and must be positive).
//!
//! What this gives up: only rectangles (no trapezoids or triangles), only on
//! axis-aligned edges, one tab per edge and the largest by area rather
//! than the best after the exchange; tabs whose side would run through one
//! of the edge's own vertices are not tried.

use super::*;

/// Tabs tried per cut (largest first, weighed again after each kept).
const TAB_TRIES: usize = 4;

/// A tab: the edge `u → next(u)` it stands on and its four new points in
/// ring order, with the twice-area it adds.
struct Tab {
    u: u32,
    points: [Point; 4],
    gain2: i64,
}

/// The largest rectangle under a histogram: `(area, first column, end
/// column, height)` with `end` exclusive.
fn largest_rectangle(h: &[i64]) -> Option<(i64, usize, usize, i64)> {
    let mut best: Option<(i64, usize, usize, i64)> = None;
    let mut stack: Vec<(usize, i64)> = Vec::new();
    for i in 0..=h.len() {
        let hi = if i < h.len() { h[i] } else { 0 };
        let mut start = i;
        while let Some(&(s, sh)) = stack.last() {
            if sh < hi {
                break;
            }
            stack.pop();
            let area = sh * (i - s) as i64;
            if area > 0 && best.is_none_or(|b| area > b.0) {
                best = Some((area, s, i, sh));
            }
            start = s;
        }
        stack.push((start, hi));
    }
    best
}

/// Per lattice column `x0..x1` (cells `x`), how many rows of safe cells
/// stand without a gap beyond line `y`: upward (rows `y - 1`, `y - 2`, ...)
/// or downward (rows `y`, `y + 1`, ...).
fn heights_across(safe: &RowRuns, y: i64, x0: i64, x1: i64, up: bool) -> Vec<i64> {
    let mut heights = vec![0i64; (x1 - x0) as usize];
    let mut alive: Vec<[i64; 2]> = vec![[x0, x1]];
    let mut k = 0i64;
    while !alive.is_empty() {
        let row = if up { y - 1 - k } else { y + k };
        let mut next: Vec<[i64; 2]> = Vec::new();
        if row >= 0 && row < safe.height as i64 {
            let runs = safe.row(row as usize);
            for &[a, b] in &alive {
                let i = runs.partition_point(|r| (r[1] as i64) <= a);
                for r in &runs[i..] {
                    let (ra, rb) = (r[0] as i64, r[1] as i64);
                    if ra >= b {
                        break;
                    }
                    let (s, e) = (ra.max(a), rb.min(b));
                    if s < e {
                        next.push([s, e]);
                    }
                }
            }
        }
        // columns alive before and not now stop at k rows
        let mut j = 0;
        for &[a, b] in &alive {
            let mut x = a;
            while x < b {
                while j < next.len() && next[j][1] <= x {
                    j += 1;
                }
                if j < next.len() && next[j][0] <= x {
                    x = next[j][1];
                    continue;
                }
                let stop = if j < next.len() { next[j][0].min(b) } else { b };
                for c in x..stop {
                    heights[(c - x0) as usize] = k;
                }
                x = stop;
            }
        }
        alive = next;
        k += 1;
    }
    heights
}

/// Per lattice row `y0..y1` (cells `y`), how many safe cells stand without
/// a gap beyond line `x`: rightward (cells `x`, `x + 1`, ...) or leftward.
fn heights_along(safe: &RowRuns, x: i64, y0: i64, y1: i64, right: bool) -> Vec<i64> {
    (y0..y1)
        .map(|y| {
            if y < 0 || y >= safe.height as i64 {
                return 0;
            }
            let cell = if right { x } else { x - 1 };
            if cell < 0 {
                return 0;
            }
            let runs = safe.row(y as usize);
            let i = runs.partition_point(|r| (r[1] as i64) <= cell);
            match runs.get(i) {
                Some(r) if (r[0] as i64) <= cell => {
                    if right {
                        r[1] as i64 - x
                    } else {
                        x - r[0] as i64
                    }
                }
                _ => 0,
            }
        })
        .collect()
}

impl Fitter<'_> {
    /// The largest tab on the edge `u → next(u)` of an opaque ring, if it
    /// adds area and is clear of the class's other vertices and edges.
    fn edge_tab(&self, u: u32) -> Option<Tab> {
        let vu = &self.verts[u as usize];
        let w = vu.next;
        let (a, b) = (vu.p, self.verts[w as usize].p);
        let horizontal = a[1] == b[1];
        if !horizontal && a[0] != b[0] {
            return None;
        }
        let (lo, hi) = if horizontal {
            (a[0].min(b[0]), a[0].max(b[0]))
        } else {
            (a[1].min(b[1]), a[1].max(b[1]))
        };
        // columns off the edge's two vertices
        if hi - lo < 3 {
            return None;
        }
        let mut best: Option<Tab> = None;
        // both sides; only the one outside the ring adds area
        for outward in [false, true] {
            let h = if horizontal {
                heights_across(self.safe, a[1], lo + 1, hi - 1, outward)
            } else {
                heights_along(self.safe, a[0], lo + 1, hi - 1, outward)
            };
            let Some((_, s, e, height)) = largest_rectangle(&h) else {
                continue;
            };
            let (c0, c1) = (lo + 1 + s as i64, lo + 1 + e as i64);
            // the rectangle's corners along the edge's direction from a
            let (along0, along1) = if (horizontal && a[0] < b[0]) || (!horizontal && a[1] < b[1]) {
                (c0, c1)
            } else {
                (c1, c0)
            };
            // `outward`: up (towards smaller y) across a horizontal edge,
            // right (towards larger x) along a vertical one
            let at = |t: i64, d: i64| -> Point {
                if horizontal {
                    [t, a[1] + if outward { -d } else { d }]
                } else {
                    [a[0] + if outward { d } else { -d }, t]
                }
            };
            let points = [
                at(along0, 0),
                at(along0, height),
                at(along1, height),
                at(along1, 0),
            ];
            let mut path = vec![a];
            path.extend_from_slice(&points);
            path.push(b);
            // the closed path a, tab, b: what the tab adds to the ring
            let gain2 = geom::twice_area(&path);
            if gain2 <= 0 || best.as_ref().is_some_and(|t| t.gain2 >= gain2) {
                continue;
            }
            let rect = [points[0], points[1], points[2], points[3]];
            let new_edges = [
                (points[0], points[1]),
                (points[1], points[2]),
                (points[2], points[3]),
            ];
            if !self.region_is_clear(Class::Opaque, &rect, &[u, w], &new_edges, &[]) {
                continue;
            }
            best = Some(Tab { u, points, gain2 });
        }
        best
    }

    /// Tries the largest tabs (see the module docs) on copies of this fit
    /// and keeps a copy that ends strictly better.
    pub(super) fn grow_tabs(&mut self, budget: usize) {
        let mut tries = 0;
        'rounds: while tries < TAB_TRIES {
            for tab in self.ranked_tabs() {
                if tries == TAB_TRIES {
                    break 'rounds;
                }
                tries += 1;
                if let Some(trial) = self.with_tab(&tab, budget) {
                    // the other tabs were weighed on the fit replaced
                    // here: weigh them again on the new one
                    *self = trial;
                    continue 'rounds;
                }
            }
            break;
        }
    }

    /// Every opaque edge's tab, largest first (ties by the edge's first
    /// vertex: a fixed order).
    fn ranked_tabs(&self) -> Vec<Tab> {
        let mut tabs: Vec<Tab> = Vec::new();
        let mut ids = Vec::new();
        for r in 0..self.rings.len() as u32 {
            let ring = &self.rings[r as usize];
            if !ring.alive || ring.class != Class::Opaque {
                continue;
            }
            ids.clear();
            self.ring_vertices_into(r, &mut ids);
            tabs.extend(ids.iter().filter_map(|&u| self.edge_tab(u)));
        }
        tabs.sort_by_key(|t| (std::cmp::Reverse(t.gain2), t.u));
        tabs
    }

    /// A copy of this fit with `tab` added, brought back to the budget,
    /// the rest spent and the local moves run; `None` unless it ends
    /// strictly better.
    fn with_tab(&self, tab: &Tab, budget: usize) -> Option<Self> {
        let mut trial = self.clone();
        let mut at = tab.u;
        for p in tab.points {
            at = trial.apply_insert(at, p);
        }
        if trial.distinct > budget {
            // the greedy edits alone (not their fallbacks: a box, the
            // islands dropped), cheapest first
            trial.seed();
            trial.run(budget);
            trial.heap.clear();
            if trial.distinct > budget {
                return None;
            }
        }
        trial.spend_rest(budget);
        trial.improve_chosen(budget);
        (trial.objective() > self.objective()).then_some(trial)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The column heights beyond a lattice line, read from the row runs,
    /// against the cells one by one, in all four directions, on random
    /// masks (a height counts the safe cells standing without a gap).
    #[test]
    fn heights_match_the_cells() {
        let mut rng = crate::test_rng::Lcg(2122);
        for case in 0..300 {
            let (w, h) = (1 + rng.below(9) as usize, 1 + rng.below(9) as usize);
            let mut m = crate::mask::Mask::new(w, h, false);
            for y in 0..h {
                for x in 0..w {
                    if rng.below(10) < 7 {
                        m.set(x, y, true);
                    }
                }
            }
            let runs = m.row_runs();
            let set = |x: i64, y: i64| {
                x >= 0
                    && y >= 0
                    && (x as usize) < w
                    && (y as usize) < h
                    && m.get(x as usize, y as usize)
            };
            let line = rng.below(h as u64 + 1) as i64;
            let (a, b) = (
                rng.below(w as u64 + 1) as i64,
                rng.below(w as u64 + 1) as i64,
            );
            let (x0, x1) = (a.min(b), a.max(b));
            for up in [false, true] {
                let ours = heights_across(&runs, line, x0, x1, up);
                for x in x0..x1 {
                    let step = |k: i64| if up { line - 1 - k } else { line + k };
                    let brute = (0..).take_while(|&k| set(x, step(k))).count() as i64;
                    assert_eq!(
                        ours[(x - x0) as usize],
                        brute,
                        "case {case} x {x} up {up}\n{m:?}"
                    );
                }
            }
            let line = rng.below(w as u64 + 1) as i64;
            let (a, b) = (
                rng.below(h as u64 + 1) as i64,
                rng.below(h as u64 + 1) as i64,
            );
            let (y0, y1) = (a.min(b), a.max(b));
            for right in [false, true] {
                let ours = heights_along(&runs, line, y0, y1, right);
                for y in y0..y1 {
                    let step = |k: i64| if right { line + k } else { line - 1 - k };
                    let brute = (0..).take_while(|&k| set(step(k), y)).count() as i64;
                    assert_eq!(
                        ours[(y - y0) as usize],
                        brute,
                        "case {case} y {y} right {right}\n{m:?}"
                    );
                }
            }
        }
    }

    /// The largest rectangle under a histogram, against every pair of
    /// columns (brute force).
    #[test]
    fn largest_rectangle_matches_brute_force() {
        let mut rng = crate::test_rng::Lcg(2121);
        for _ in 0..300 {
            let n = 1 + rng.below(12) as usize;
            let h: Vec<i64> = (0..n).map(|_| rng.below(6) as i64).collect();
            let mut brute = 0;
            for s in 0..n {
                for e in s + 1..=n {
                    let m = h[s..e].iter().min().unwrap();
                    brute = brute.max(m * (e - s) as i64);
                }
            }
            let ours = largest_rectangle(&h);
            assert_eq!(ours.map_or(0, |o| o.0), brute, "{h:?}");
            if let Some((area, s, e, height)) = ours {
                assert!(h[s..e].iter().all(|&x| x >= height));
                assert_eq!(area, height * (e - s) as i64);
            }
        }
    }
}
