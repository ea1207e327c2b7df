//! Constructive per-ring fitting: for each ring, the polygon of largest
//! area inside the safe region (opaque) or of smallest area around the
//! must-cover region (covering) with k vertices, for every k at once, by
//! dynamic programming over the valid shortcuts between candidate vertices
//! (polygonal approximation as paths over valid shortcuts: Imai & Iri 1986;
//! optimal approximation by dynamic programming: Perez & Vidal 1994; both
//! cited from memory). Twice a polygon's area is the sum of its edges'
//! cross products (shoelace), so it is additive over the chords of a path.
//!
//! The cut uses both classes: the opaque curves ([`opaque_curves`]) split
//! across the islands by an exact knapsack ([`split_opaque`]), paired with
//! covering rings from the greedy edits and, as a separate variant, with
//! the covering curves ([`cover_curves`], one ring per island, holes
//! filled) split by their own knapsack ([`split_cover`]) for every count
//! the opaque rings leave room for: the pairing with the largest objective
//! is refined. With candidates on the traced outline, a covering polygon
//! must keep every corner of the outline's convex hull, so each island's
//! covering curve also runs over candidates off the outline (hull corners
//! and the lattice points just outside where extended hull edges meet;
//! see `off_outline` for them and their pruning): per count the smaller
//! of the two areas is kept. Those candidates are ordered by angle about
//! the hull's mean corner and only chords passing it on their left are
//! tried, so each polygon turns once around the island.
//!
//! Candidates and what their pruning gives up: the candidates of a ring are
//! its own traced corners without collinear ones, thinned to at most
//! [`MAX_CANDIDATES`] by repeatedly dropping the corner whose triangle with
//! its neighbours has the smallest area (Visvalingam-style). A polygon can
//! only use those points: lattice points off the traced ring (which the best
//! inner polygon of a staircase sometimes wants) and corners thinned away
//! are not reachable by the dynamic program; the fitter's lattice moves in
//! `refine` (run afterwards) recover part of it. Rings of more than
//! 24 candidates try only a few start vertices (the four extreme points
//! and four spread around the ring), so the cycle found is the best through
//! one of those starts, not over all cycles; and of each start's best
//! closings only the first three are tried for simplicity.
//!
//! The guarantee does not rest on the dynamic program: every chord is
//! tested exactly against the region's row runs, each polygon kept is
//! checked to be simple, and the rings of one class to be pairwise apart.
//! A simple polygon whose edges lie in the closed safe region, on an island
//! without holes, lies inside that island (Jordan curve theorem; an edge
//! cannot jump between islands, which do not touch once pinches are
//! removed); islands with holes are not handled (the caller passes the
//! region with its holes opened).

mod off_outline;
mod shared;

pub use shared::split_opaque_sharing;

use super::geom::{orient, segments_touch};
use super::Prepared;
use crate::mask::RowRuns;
use crate::outline::{Point, Ring};

/// Candidate vertices kept per ring.
pub const MAX_CANDIDATES: usize = 160;
/// Start vertices tried per ring (besides the extreme points).
const SPREAD_STARTS: usize = 4;
/// Start vertices tried (besides the extreme points) over the candidates
/// off the outline: there the best polygon for a count goes through the
/// meeting points of lines about as far apart as its edges are long, so
/// more starts are spread around.
const OFF_OUTLINE_STARTS: usize = 12;
/// Rings with at most this many candidates try every start.
const SMALL_RING: usize = 24;

/// Closed cell intervals `[x0, x1]` per row of a region, padded by one row
/// and column on every side (row index `y + 1` holds row `y`).
pub struct CellRows {
    rows: Vec<Vec<[i64; 2]>>,
    width: i64,
    height: i64,
}

impl CellRows {
    /// The region's own cells (the safe region: chords must stay in it).
    pub fn inside(runs: &RowRuns) -> CellRows {
        let (w, h) = (runs.width as i64, runs.height as i64);
        let mut rows = vec![Vec::new(); h as usize + 2];
        for y in 0..h as usize {
            rows[y + 1] = merge(runs.row(y).iter().map(|r| [r[0] as i64, r[1] as i64]));
        }
        CellRows {
            rows,
            width: w,
            height: h,
        }
    }
    /// The complement of the region, with a frame of free cells around the
    /// image (the must-cover region: chords must not enter its interior;
    /// staying inside the image is tested on the end points).
    pub fn outside(runs: &RowRuns) -> CellRows {
        let (w, h) = (runs.width as i64, runs.height as i64);
        let mut rows = vec![vec![[-1, w + 1]]; h as usize + 2];
        for y in 0..h as usize {
            let mut free = Vec::new();
            let mut x = -1;
            for r in runs.row(y) {
                let (a, b) = (r[0] as i64, r[1] as i64);
                if a > x {
                    free.push([x, a]);
                }
                x = b;
            }
            if x < w + 1 {
                free.push([x, w + 1]);
            }
            rows[y + 1] = merge(free.into_iter());
        }
        CellRows {
            rows,
            width: w,
            height: h,
        }
    }
    fn row(&self, y: i64) -> &[[i64; 2]] {
        if y < -1 || y > self.height {
            &[]
        } else {
            &self.rows[(y + 1) as usize]
        }
    }
    fn in_image(&self, p: Point) -> bool {
        p[0] >= 0 && p[1] >= 0 && p[0] <= self.width && p[1] <= self.height
    }

    /// Whether the closed segment ab lies in the union of the closed cells;
    /// exact, O(rows crossed).
    pub fn holds_segment(&self, a: Point, b: Point) -> bool {
        if a[1] == b[1] {
            // on lattice line y: covered by the cells of rows y - 1 and y;
            // the two rows' intervals are walked in sorted order (a merge
            // of the two sorted lists, no allocation)
            let (x0, x1) = (a[0].min(b[0]), a[0].max(b[0]));
            let (ra, rb) = (self.row(a[1] - 1), self.row(a[1]));
            let (mut ia, mut ib) = (0, 0);
            let mut reach = x0;
            let mut started = false;
            while ia < ra.len() || ib < rb.len() {
                let r = if ib >= rb.len() || (ia < ra.len() && ra[ia] <= rb[ib]) {
                    ia += 1;
                    ra[ia - 1]
                } else {
                    ib += 1;
                    rb[ib - 1]
                };
                if r[0] <= reach && r[1] >= reach {
                    started = true;
                    reach = reach.max(r[1]);
                } else if started && r[0] > reach {
                    break;
                }
                if reach >= x1 && started {
                    return true;
                }
            }
            return started && reach >= x1;
        }
        let (p, q) = if a[1] < b[1] { (a, b) } else { (b, a) };
        let (den, dx) = (q[1] - p[1], q[0] - p[0]);
        // x on line y as `xq + xr / den` (0 <= xr < den), stepped from line
        // to line without a division; over row y the span runs from the
        // floor of the smaller to the ceiling of the larger of the x on
        // lines y and y + 1
        // the middle row first: a chord that leaves the region mostly does
        // so away from its ends (the answer is the same: every row must hold)
        if den > 8 && !self.holds_row(p, den, dx, p[1] + den / 2) {
            return false;
        }
        let (dq, dr) = (dx.div_euclid(den), dx.rem_euclid(den));
        let (mut xq, mut xr) = (p[0], 0);
        for y in p[1]..q[1] {
            let (mut nq, mut nr) = (xq + dq, xr + dr);
            if nr >= den {
                nr -= den;
                nq += 1;
            }
            let flo = xq.min(nq);
            let chi = (xq + (xr != 0) as i64).max(nq + (nr != 0) as i64);
            let row = self.row(y);
            let i = if row.len() == 1 {
                (row[0][1] < chi) as usize
            } else {
                row.partition_point(|r| r[1] < chi)
            };
            if i >= row.len() || row[i][0] > flo {
                return false;
            }
            xq = nq;
            xr = nr;
        }
        true
    }
}

impl CellRows {
    /// Whether row `y` holds the part of the chord from `p` (its upper
    /// end) with `den` rows and `dx` columns over that row: the span from
    /// the floor of its smaller to the ceiling of its larger `x` on lines
    /// `y` and `y + 1` lies in one interval.
    fn holds_row(&self, p: Point, den: i64, dx: i64, y: i64) -> bool {
        let n0 = p[0] * den + (y - p[1]) * dx;
        let n1 = n0 + dx;
        let (lo, hi) = (n0.min(n1), n0.max(n1));
        let flo = lo.div_euclid(den);
        let chi = -((-hi).div_euclid(den));
        let row = self.row(y);
        let i = row.partition_point(|r| r[1] < chi);
        i < row.len() && row[i][0] <= flo
    }
}

/// Sorted intervals with touching ones joined.
fn merge(it: impl Iterator<Item = [i64; 2]>) -> Vec<[i64; 2]> {
    let mut v: Vec<[i64; 2]> = it.collect();
    v.sort_unstable();
    let mut out: Vec<[i64; 2]> = Vec::with_capacity(v.len());
    for r in v {
        match out.last_mut() {
            Some(l) if r[0] <= l[1] => l[1] = l[1].max(r[1]),
            _ => out.push(r),
        }
    }
    out
}

/// The ring's corners without collinear ones, thinned to at most `max` by
/// dropping the corner of smallest triangle area first.
pub fn candidates(points: &[Point], max: usize) -> Vec<Point> {
    let mut pts: Vec<Point> = Vec::with_capacity(points.len());
    let n = points.len();
    for i in 0..n {
        let (a, b, c) = (points[(i + n - 1) % n], points[i], points[(i + 1) % n]);
        if orient(a, b, c) != 0 {
            pts.push(b);
        }
    }
    let n = pts.len();
    if n <= max {
        return pts;
    }
    use std::cmp::Reverse;
    use std::collections::BinaryHeap;
    let mut prev: Vec<usize> = (0..n).map(|i| (i + n - 1) % n).collect();
    let mut next: Vec<usize> = (0..n).map(|i| (i + 1) % n).collect();
    let mut alive = vec![true; n];
    let mut stamp = vec![0u32; n];
    let weight =
        |i: usize, prev: &[usize], next: &[usize]| orient(pts[prev[i]], pts[i], pts[next[i]]).abs();
    let mut heap: BinaryHeap<Reverse<(i64, usize, u32)>> = (0..n)
        .map(|i| Reverse((weight(i, &prev, &next), i, 0)))
        .collect();
    let mut left = n;
    while left > max {
        let Reverse((_, i, s)) = heap.pop().expect("corners left");
        if !alive[i] || s != stamp[i] {
            continue;
        }
        alive[i] = false;
        left -= 1;
        let (a, b) = (prev[i], next[i]);
        next[a] = b;
        prev[b] = a;
        for j in [a, b] {
            stamp[j] += 1;
            heap.push(Reverse((weight(j, &prev, &next), j, stamp[j])));
        }
    }
    (0..n).filter(|&i| alive[i]).map(|i| pts[i]).collect()
}

fn cross(p: Point, q: Point) -> i64 {
    p[0] * q[1] - q[0] * p[1]
}

/// Whether a closed polygon is simple: no two edges share a point except
/// neighbours at their common end, and neighbours do not fold back.
pub fn is_simple(poly: &[Point]) -> bool {
    let n = poly.len();
    if n < 3 {
        return false;
    }
    for i in 0..n {
        let (a, b, c) = (poly[i], poly[(i + 1) % n], poly[(i + 2) % n]);
        if a == b {
            return false;
        }
        // neighbours folding back over each other
        if orient(a, b, c) == 0 && (b[0] - a[0]) * (c[0] - b[0]) + (b[1] - a[1]) * (c[1] - b[1]) < 0
        {
            return false;
        }
        for j in i + 2..n {
            if i == 0 && j == n - 1 {
                continue;
            }
            if segments_touch(a, b, poly[j], poly[(j + 1) % n]) {
                return false;
            }
        }
    }
    true
}

/// For one ring: the best polygon found with k vertices, for k = 3..=kmax
/// (index k), `None` where none was found. `maximise`: the opaque class
/// (largest area), else the covering class (smallest area). Polygons keep
/// the ring's orientation and are simple; their chords hold in `cells`.
pub fn ring_curve(
    points: &[Point],
    cells: &CellRows,
    maximise: bool,
    kmax: usize,
) -> Vec<Option<(i64, Vec<Point>)>> {
    curve_over(
        &candidates(points, MAX_CANDIDATES),
        cells,
        maximise,
        kmax,
        SPREAD_STARTS,
        None,
    )
}

/// [`ring_curve`] over the candidates `v` (in ring order), trying the
/// extreme candidates and `spread` more spread around as start vertices.
/// With `around` (a sum of `count` points, their mean strictly inside the
/// region), only chords that pass that mean on their left are tried: the
/// polygon then turns once around it (for candidates not on the ring, whose
/// order alone does not keep a polygon from folding back).
fn curve_over(
    v: &[Point],
    cells: &CellRows,
    maximise: bool,
    kmax: usize,
    spread: usize,
    around: Option<(Point, i64)>,
) -> Vec<Option<(i64, Vec<Point>)>> {
    let n = v.len();
    let kmax = kmax.min(n);
    let mut curve: Vec<Option<(i64, Vec<Point>)>> = vec![None; kmax + 1];
    if n < 3 || kmax < 3 {
        return curve;
    }
    let cover = !maximise;
    let mut valid = vec![false; n * n];
    for i in 0..n {
        for j in i + 1..n {
            let ok = (!cover || (cells.in_image(v[i]) && cells.in_image(v[j])))
                && cells.holds_segment(v[i], v[j]);
            let left = |p: Point, q: Point| match around {
                None => true,
                Some((sum, count)) => {
                    let d = [(q[0] - p[0]) as i128, (q[1] - p[1]) as i128];
                    let w = [
                        (sum[0] - p[0] * count) as i128,
                        (sum[1] - p[1] * count) as i128,
                    ];
                    d[0] * w[1] - d[1] * w[0] > 0
                }
            };
            valid[i * n + j] = ok && left(v[i], v[j]);
            valid[j * n + i] = ok && left(v[j], v[i]);
        }
    }
    let better = |a: i64, b: i64| if maximise { a > b } else { a < b };
    let worst = if maximise { i64::MIN } else { i64::MAX };
    let mut starts: Vec<usize> = Vec::new();
    for key in 0..4 {
        let pick = (0..n).min_by_key(|&i| match key {
            0 => v[i][0],
            1 => -v[i][0],
            2 => v[i][1],
            _ => -v[i][1],
        });
        starts.extend(pick);
    }
    if n <= SMALL_RING {
        starts.extend(0..n);
    } else {
        starts.extend((0..spread).map(|s| s * n / spread));
    }
    starts.sort_unstable();
    starts.dedup();
    // best[m * n + j]: best sum over paths start -> .. -> u_j with m edges
    let mut best = vec![worst; kmax * n];
    let mut from = vec![u16::MAX; kmax * n];
    // per start, the candidates in the order walked from it (`rv[j]` is
    // `u_j`) and the valid chords into each `u_j` (`preds[at[j]..at[j +
    // 1]]`: the i < j with u_i -> u_j valid, ascending), so the inner loop
    // reads memory in order and only over valid chords
    let mut rv: Vec<Point> = vec![[0, 0]; n];
    let mut preds: Vec<u16> = Vec::with_capacity(n * n / 2);
    let mut at = vec![0usize; n + 1];
    for &s in &starts {
        let u = |j: usize| (s + j) % n;
        for (j, p) in rv.iter_mut().enumerate() {
            *p = v[u(j)];
        }
        preds.clear();
        for (j, start) in at.iter_mut().take(n).enumerate() {
            let uj = u(j);
            *start = preds.len();
            preds.extend((0..j).filter(|&i| valid[u(i) * n + uj]).map(|i| i as u16));
        }
        at[n] = preds.len();
        best.fill(worst);
        for j in 1..n {
            if valid[s * n + u(j)] {
                best[n + j] = cross(v[s], v[u(j)]);
                from[n + j] = 0;
            }
        }
        for m in 2..kmax {
            let (done, rest) = best.split_at_mut(m * n);
            let prev_row = &done[(m - 1) * n..];
            for j in m..n {
                let col = &preds[at[j]..at[j + 1]];
                let col = &col[col.partition_point(|&i| (i as usize) < m - 1)..];
                let (b, f) = if maximise {
                    relax::<true>(prev_row, col, &rv, j, worst)
                } else {
                    relax::<false>(prev_row, col, &rv, j, worst)
                };
                rest[j] = b;
                from[m * n + j] = f;
            }
        }
        for k in 3..=kmax {
            // close: k - 1 edges to u_j, then back to the start
            let mut order: Vec<(i64, usize)> = (k - 1..n)
                .filter(|&j| best[(k - 1) * n + j] != worst && valid[u(j) * n + s])
                .map(|j| (best[(k - 1) * n + j] + cross(v[u(j)], v[s]), j))
                .collect();
            order.sort_by_key(|&(a, j)| (if maximise { -a } else { a }, j));
            for (area2, j) in order.into_iter().take(3) {
                if area2 <= 0 {
                    continue;
                }
                if let Some((cur, _)) = &curve[k] {
                    if !better(area2, *cur) {
                        break;
                    }
                }
                let mut path = vec![v[u(j)]];
                let (mut m, mut at) = (k - 1, j);
                while m > 1 {
                    at = from[m * n + at] as usize;
                    m -= 1;
                    path.push(v[u(at)]);
                }
                path.push(v[s]);
                path.reverse();
                if is_simple(&path) {
                    curve[k] = Some((area2, path));
                    break;
                }
            }
        }
    }
    curve
}

/// The best path sum into `rv[j]` over one more chord from `rv[i]`, `i`
/// in `col` (ascending: the `i` whose chord `rv[i]` -> `rv[j]` is valid;
/// `prev[i]`: the best sum into `rv[i]`, `worst` for none), with the `i`
/// it came from (the first of equals); `MAX`: largest, else smallest.
#[inline]
fn relax<const MAX: bool>(
    prev: &[i64],
    col: &[u16],
    rv: &[Point],
    j: usize,
    worst: i64,
) -> (i64, u16) {
    let (mut b, mut f) = (worst, u16::MAX);
    let vj = rv[j];
    for &i in col {
        let i = i as usize;
        let p = prev[i];
        if p == worst {
            continue;
        }
        let c = p + cross(rv[i], vj);
        if (MAX && c > b) || (!MAX && c < b) {
            b = c;
            f = i as u16;
        }
    }
    (b, f)
}

/// One opaque ring to fit: its area curve.
pub struct Item {
    curve: Vec<Option<(i64, Vec<Point>)>>,
    component: u32,
}

/// The area curves of the safe region's rings up to `kmax` vertices each,
/// or `None` when an island has a hole (the Jordan argument above needs
/// islands without holes).
pub fn opaque_curves(safe: &Prepared, kmax: usize) -> Option<Vec<Item>> {
    if safe.rings.iter().any(|r| r.hole) {
        return None;
    }
    let inside = CellRows::inside(&safe.runs);
    Some(
        safe.rings
            .iter()
            .map(|r| Item {
                curve: ring_curve(&r.points, &inside, true, kmax),
                component: r.component,
            })
            .collect(),
    )
}

/// The opaque rings of largest total area with at most `budget` vertices
/// counted per ring (an exact knapsack over the rings' curves; an island
/// may be left out), with twice their area; the rings keep their
/// components and are pairwise apart (checked; `None` if not).
pub fn split_opaque(items: &[Item], budget: usize) -> Option<(i64, Vec<Ring>)> {
    // value[b]: best total with b vertices used so far
    let mut value = vec![0i64; budget + 1];
    let mut choice: Vec<Vec<usize>> = Vec::new();
    for it in items {
        let mut next = value.clone();
        let mut pick = vec![0usize; budget + 1];
        for b in 0..=budget {
            for (k, c) in it.curve.iter().enumerate() {
                if let Some((a2, _)) = c {
                    if b + k <= budget && value[b] + a2 > next[b + k] {
                        next[b + k] = value[b] + a2;
                        pick[b + k] = k;
                    }
                }
            }
        }
        value = next;
        choice.push(pick);
    }
    let mut b = (0..=budget).max_by_key(|&b| (value[b], std::cmp::Reverse(b)))?;
    let total = value[b];
    let mut rings = Vec::new();
    for (i, it) in items.iter().enumerate().rev() {
        let k = choice[i][b];
        b -= k;
        if k > 0 {
            let (_, pts) = it.curve[k].clone().expect("chosen k has a polygon");
            rings.push(Ring {
                points: pts,
                hole: false,
                component: it.component,
            });
        }
    }
    rings.reverse();
    apart(&rings).then_some((total, rings))
}

/// The covering curves of the must-cover region's outer rings up to `kmax`
/// vertices each (holes are left out: a covering island without its holes
/// only covers more), or `None` when there are more than `max_islands`.
pub fn cover_curves(cover: &Prepared, kmax: usize, max_islands: usize) -> Option<Vec<Item>> {
    let parts = cover_curve_parts(cover, kmax, max_islands)?;
    Some(parts.iter().map(|p| p.up_to(kmax)).collect())
}

/// A covering island's two curves before they are joined: over candidates
/// on its outline (only where its convex hull has at most the largest
/// count asked of corners) and off it. Made once for the largest count a
/// layer's budgets ask, then cut back to each budget ([`CoverParts::up_to`]).
pub struct CoverParts {
    hull_len: usize,
    on: Vec<Option<(i64, Vec<Point>)>>,
    off: Vec<Option<(i64, Vec<Point>)>>,
    component: u32,
}

impl CoverParts {
    /// The island's covering curve up to `kmax` (at most the count the
    /// parts were made for): exactly what [`cover_curves`] gives for
    /// `kmax`, as a count's best polygon does not depend on the largest
    /// count asked.
    pub fn up_to(&self, kmax: usize) -> Item {
        // a polygon with its corners on the outline that holds the island
        // keeps every corner of the island's convex hull: where the hull
        // has more corners than `kmax`, no count is reachable with
        // candidates on the outline, and only the candidates off the
        // outline are tried
        let mut curve = if self.hull_len <= kmax {
            cut_back(&self.on, kmax)
        } else {
            Vec::new()
        };
        let off = cut_back(&self.off, kmax);
        if curve.len() < off.len() {
            curve.resize(off.len(), None);
        }
        for (k, c) in off.into_iter().enumerate() {
            let Some((a2, _)) = &c else { continue };
            if curve[k].as_ref().is_none_or(|(b2, _)| a2 < b2) {
                curve[k] = c;
            }
        }
        Item {
            curve,
            component: self.component,
        }
    }
}

/// A curve made for a larger count, cut back to what [`curve_over`] gives
/// for `kmax` (its counts up to `kmax` do not depend on the largest count
/// asked: each count's polygon is found apart).
fn cut_back(curve: &[Option<(i64, Vec<Point>)>], kmax: usize) -> Vec<Option<(i64, Vec<Point>)>> {
    curve[..curve.len().min(kmax + 1)].to_vec()
}

impl Item {
    /// The curve cut back to `kmax` vertices: exactly the item
    /// [`opaque_curves`] gives for `kmax` when this one was made for a
    /// larger count.
    pub fn up_to(&self, kmax: usize) -> Item {
        Item {
            curve: cut_back(&self.curve, kmax),
            component: self.component,
        }
    }
}

/// [`cover_curves`]' two curves per island, made for `kmax` (cut back to
/// any smaller count by [`CoverParts::up_to`]).
pub fn cover_curve_parts(
    cover: &Prepared,
    kmax: usize,
    max_islands: usize,
) -> Option<Vec<CoverParts>> {
    let outer: Vec<&Ring> = cover.rings.iter().filter(|r| !r.hole).collect();
    if outer.is_empty() || outer.len() > max_islands {
        return None;
    }
    let outside = CellRows::outside(&cover.runs);
    Some(
        outer
            .iter()
            .map(|r| {
                let hull = super::island_edits::convex_hull(r.points.clone());
                let on = if hull.len() <= kmax {
                    ring_curve(&r.points, &outside, false, kmax)
                } else {
                    Vec::new()
                };
                let off = off_outline::cover_candidates(&hull, outside.width, outside.height);
                let sum = hull.iter().fold([0, 0], |s, p| [s[0] + p[0], s[1] + p[1]]);
                let around = Some((sum, hull.len() as i64));
                let off = curve_over(&off, &outside, false, kmax, OFF_OUTLINE_STARTS, around);
                CoverParts {
                    hull_len: hull.len(),
                    on,
                    off,
                    component: r.component,
                }
            })
            .collect(),
    )
}

/// For every total vertex count `b` up to `budget` (counted per ring), the
/// covering rings of smallest total area with one ring per island (an
/// exact knapsack over the curves; no island may be left out), with twice
/// their area; only totals whose rings are pairwise apart (checked).
pub fn split_cover(items: &[Item], budget: usize) -> Vec<(usize, i64, Vec<Ring>)> {
    const NONE: i64 = i64::MAX;
    let mut value = vec![NONE; budget + 1];
    value[0] = 0;
    let mut choice: Vec<Vec<usize>> = Vec::new();
    for it in items {
        let mut next = vec![NONE; budget + 1];
        let mut pick = vec![0usize; budget + 1];
        for b in 0..=budget {
            if value[b] == NONE {
                continue;
            }
            for (k, c) in it.curve.iter().enumerate() {
                if let Some((a2, _)) = c {
                    if b + k <= budget && value[b] + a2 < next[b + k] {
                        next[b + k] = value[b] + a2;
                        pick[b + k] = k;
                    }
                }
            }
        }
        value = next;
        choice.push(pick);
    }
    let mut out = Vec::new();
    for total in 0..=budget {
        if value[total] == NONE {
            continue;
        }
        let mut b = total;
        let mut rings = Vec::new();
        for (i, it) in items.iter().enumerate().rev() {
            let k = choice[i][b];
            b -= k;
            let (_, pts) = it.curve[k].clone().expect("chosen k has a polygon");
            rings.push(Ring {
                points: pts,
                hole: false,
                component: it.component,
            });
        }
        rings.reverse();
        if apart(&rings) {
            out.push((total, value[total], rings));
        }
    }
    out
}

/// Whether the rings are pairwise apart: no edges touch and none lies
/// inside another.
fn apart(rings: &[Ring]) -> bool {
    for (i, r) in rings.iter().enumerate() {
        for s in &rings[i + 1..] {
            let (p, q) = (&r.points, &s.points);
            for x in 0..p.len() {
                for y in 0..q.len() {
                    if segments_touch(p[x], p[(x + 1) % p.len()], q[y], q[(y + 1) % q.len()]) {
                        return false;
                    }
                }
            }
            if super::geom::in_closed_polygon(p[0], q) || super::geom::in_closed_polygon(q[0], p) {
                return false;
            }
        }
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mask::Mask;
    use crate::test_rng::Lcg;

    /// A blob of a few random rectangles, without pinches.
    fn blob(rng: &mut Lcg, w: usize, h: usize) -> Mask {
        let mut m = Mask::new(w, h, false);
        for _ in 0..1 + rng.below(4) {
            let (x0, y0) = (rng.below(w as u64) as usize, rng.below(h as u64) as usize);
            let (x1, y1) = (
                x0 + 1 + rng.below((w - x0) as u64) as usize,
                y0 + 1 + rng.below((h - y0) as u64) as usize,
            );
            for y in y0..y1.min(h) {
                for x in x0..x1.min(w) {
                    m.set(x, y, true);
                }
            }
        }
        let mut runs = m.row_runs();
        runs.remove_pinches();
        runs.to_mask()
    }

    /// The definition, point by point: every point of the segment at a
    /// multiple of 1 / (2 D) of its length (D a common denominator of its
    /// crossings with the lattice lines, so these are the crossings and a
    /// point between each two) lies in a closed cell that is set.
    fn brute_holds(a: Point, b: Point, set: &dyn Fn(i64, i64) -> bool) -> bool {
        let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
        let d = dx.abs().max(1) * dy.abs().max(1);
        let s = 2 * d;
        (0..=s).all(|k| {
            let (x, y) = (a[0] * s + k * dx, a[1] * s + k * dy);
            let xs: Vec<i64> = if x.rem_euclid(s) == 0 {
                vec![x / s - 1, x / s]
            } else {
                vec![x.div_euclid(s)]
            };
            let ys: Vec<i64> = if y.rem_euclid(s) == 0 {
                vec![y / s - 1, y / s]
            } else {
                vec![y.div_euclid(s)]
            };
            xs.iter().any(|&cx| ys.iter().any(|&cy| set(cx, cy)))
        })
    }

    /// Chord validity on the row runs equals the point-by-point definition,
    /// for the region's own cells and for its complement with a frame
    /// around the image, on small random regions and random segments.
    #[test]
    fn chord_validity_matches_the_definition() {
        let mut rng = Lcg(2101);
        let (mut held, mut total) = (0, 0);
        for case in 0..300 {
            let (w, h) = (2 + rng.below(7) as usize, 2 + rng.below(7) as usize);
            let m = blob(&mut rng, w, h);
            let runs = m.row_runs();
            let (inside, outside) = (CellRows::inside(&runs), CellRows::outside(&runs));
            let (wi, hi) = (w as i64, h as i64);
            let out_set =
                |x: i64, y: i64| x >= -1 && y >= -1 && x <= wi && y <= hi && !m.get_i(x, y);
            for _ in 0..60 {
                let mut p = || {
                    [
                        rng.below(w as u64 + 1) as i64,
                        rng.below(h as u64 + 1) as i64,
                    ]
                };
                let (a, b) = (p(), p());
                let ours = inside.holds_segment(a, b);
                assert_eq!(
                    ours,
                    brute_holds(a, b, &|x, y| m.get_i(x, y)),
                    "case {case}: {a:?} {b:?} in\n{m:?}"
                );
                assert_eq!(
                    outside.holds_segment(a, b),
                    brute_holds(a, b, &out_set),
                    "case {case}: {a:?} {b:?} outside\n{m:?}"
                );
                held += ours as usize;
                total += 1;
            }
        }
        // both answers occur often
        assert!(
            held > total / 10 && held < total * 9 / 10,
            "{held} of {total}"
        );
    }

    fn twice_area(p: &[Point]) -> i64 {
        crate::outline::twice_area(p)
    }

    /// The dynamic program's best k-gon equals the best over every k-subset
    /// of the candidates (in ring order, all chords valid, simple) on tiny
    /// rings, for both classes; and each polygon it returns is simple with
    /// valid chords.
    #[test]
    fn best_k_gon_equals_brute_force() {
        let mut rng = Lcg(2102);
        let mut compared = 0;
        for case in 0..200 {
            let (w, h) = (3 + rng.below(6) as usize, 3 + rng.below(6) as usize);
            let m = blob(&mut rng, w, h);
            let runs = m.row_runs();
            let prepared = super::super::Prepared::from_runs(runs.clone(), false);
            let outer: Vec<&Ring> = prepared.rings.iter().filter(|r| !r.hole).collect();
            if outer.len() != 1 || prepared.rings.len() != 1 {
                continue;
            }
            let pts = &outer[0].points;
            let cand = candidates(pts, MAX_CANDIDATES);
            let n = cand.len();
            if n > 14 {
                continue;
            }
            for (maximise, cells) in [
                (true, CellRows::inside(&runs)),
                (false, CellRows::outside(&runs)),
            ] {
                let curve = ring_curve(pts, &cells, maximise, n);
                for k in 3..=n {
                    let mut best: Option<i64> = None;
                    for mask in 0u32..1 << n {
                        if mask.count_ones() as usize != k {
                            continue;
                        }
                        let poly: Vec<Point> = (0..n)
                            .filter(|i| mask >> i & 1 == 1)
                            .map(|i| cand[i])
                            .collect();
                        let ok = (0..k).all(|i| cells.holds_segment(poly[i], poly[(i + 1) % k]))
                            && is_simple(&poly);
                        let a = twice_area(&poly);
                        if ok && a > 0 {
                            let better = match best {
                                None => true,
                                Some(b) => {
                                    if maximise {
                                        a > b
                                    } else {
                                        a < b
                                    }
                                }
                            };
                            if better {
                                best = Some(a);
                            }
                        }
                    }
                    let ours = curve.get(k).cloned().flatten();
                    if let Some((a, poly)) = &ours {
                        assert_eq!(*a, twice_area(poly));
                        assert!(is_simple(poly));
                        assert!((0..k).all(|i| cells.holds_segment(poly[i], poly[(i + 1) % k])));
                    }
                    assert_eq!(
                        ours.map(|o| o.0),
                        best,
                        "case {case} k {k} max {maximise}\n{m:?}"
                    );
                    compared += 1;
                }
            }
        }
        assert!(compared > 100, "{compared}");
    }

    /// Thinning keeps at most the asked number of corners, in ring order.
    #[test]
    fn thinning_keeps_ring_order() {
        let ring: Vec<Point> = (0..400)
            .map(|i| {
                let t = i as f64 / 400.0 * std::f64::consts::TAU;
                [
                    (200.0 + 150.0 * t.cos()) as i64,
                    (200.0 + 150.0 * t.sin()) as i64,
                ]
            })
            .collect();
        let c = candidates(&ring, 50);
        assert!(c.len() <= 50 && c.len() >= 40);
        let pos: Vec<usize> = c
            .iter()
            .map(|p| ring.iter().position(|q| q == p).unwrap())
            .collect();
        assert!(pos.windows(2).all(|w| w[0] < w[1]));
    }
}

#[cfg(test)]
mod cover_tests {
    use super::*;
    use crate::mask::Mask;

    /// Whether point (x, y) is inside the polygon (crossing parity; the
    /// points tested are cell centres, never on a lattice edge).
    fn inside(poly: &[Point], x: f64, y: f64) -> bool {
        let mut odd = false;
        for i in 0..poly.len() {
            let (a, b) = (poly[i], poly[(i + 1) % poly.len()]);
            let (ax, ay, bx, by) = (a[0] as f64, a[1] as f64, b[0] as f64, b[1] as f64);
            if (ay > y) != (by > y) && x < ax + (y - ay) * (bx - ax) / (by - ay) {
                odd = !odd;
            }
        }
        odd
    }

    /// A worked example: a digital disc of radius 50 (the cells whose
    /// centre is within 50 of the centre). Its convex hull has 48 corners,
    /// so a covering polygon with corners on the outline needs at least 48;
    /// with the meeting points of hull-edge lines as candidates every count
    /// from 4 up is reached, and from 8 to 32 corners the covering area is
    /// within 1% of the regular k-gon circumscribed about the circle of
    /// radius 50 + sqrt(2)/2 that holds every cell (classical geometry: of
    /// the k-gons around a circle the regular one has the least area, and
    /// it is a cover here). Each polygon is simple, its chords hold, and it
    /// holds every cell of the disc (tested cell by cell here).
    #[test]
    fn covering_disc_needs_corners_off_the_outline() {
        let (size, r) = (120usize, 50.0f64);
        let mut m = Mask::new(size, size, false);
        for y in 0..size {
            for x in 0..size {
                let (dx, dy) = (x as f64 + 0.5 - 60.0, y as f64 + 0.5 - 60.0);
                if dx * dx + dy * dy <= r * r {
                    m.set(x, y, true);
                }
            }
        }
        let prepared = super::super::Prepared::from_runs(m.row_runs(), false);
        let outline = &prepared.rings[0].points;
        let hull = super::super::island_edits::convex_hull(outline.clone());
        assert_eq!(hull.len(), 48);
        let outside = CellRows::outside(&prepared.runs);
        let on_outline = ring_curve(outline, &outside, false, 32);
        assert!(on_outline.iter().all(|c| c.is_none()), "needs 48 corners");
        let items = cover_curves(&prepared, 32, 8).expect("one island");
        let curve = &items[0].curve;
        let rc = r + std::f64::consts::SQRT_2 / 2.0;
        for (k, c) in curve.iter().enumerate().skip(4) {
            let (a2, poly) = c.as_ref().unwrap_or_else(|| panic!("k {k}: no polygon"));
            assert_eq!(poly.len(), k);
            assert_eq!(*a2, crate::outline::twice_area(poly));
            assert!(is_simple(poly));
            assert!((0..k).all(|i| outside.holds_segment(poly[i], poly[(i + 1) % k])));
            for y in 0..size {
                for x in 0..size {
                    if m.get(x, y) {
                        assert!(inside(poly, x as f64 + 0.5, y as f64 + 0.5), "k {k}");
                    }
                }
            }
            let circumscribed = k as f64 * rc * rc * (std::f64::consts::PI / k as f64).tan();
            let ratio = *a2 as f64 / 2.0 / circumscribed;
            if k >= 8 {
                assert!(
                    ratio <= 1.01,
                    "k {k}: {ratio:.4} of the circumscribed k-gon"
                );
            }
        }
        assert_eq!(curve.len(), 33);
    }
}
