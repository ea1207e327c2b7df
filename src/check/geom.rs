//! Convex-polygon geometry for the checker: Sutherland–Hodgman clipping
//! (the textbook algorithm, from memory), shoelace areas, and areas of a
//! polygon inside / outside a half-grid region given as cell runs per row.
//!
//! Polygons here are positively oriented (shoelace area > 0 with the
//! formula A = 1/2 sum(x_i*y_{i+1} - x_{i+1}*y_i)); an edge p -> q then has
//! the interior where (q - p) x (r - p) >= 0.

use super::runs::Run;

pub(crate) type Pt = [f64; 2];

/// Signed shoelace area.
pub(crate) fn area(poly: &[Pt]) -> f64 {
    let n = poly.len();
    if n < 3 {
        return 0.0;
    }
    let mut s = 0.0;
    for k in 0..n {
        let (p, q) = (poly[k], poly[(k + 1) % n]);
        s += p[0] * q[1] - q[0] * p[1];
    }
    s / 2.0
}

/// Keeps the part of `poly` where the affine `f` is >= 0. With `snap =
/// Some((axis, v))` (an axis-aligned cut) new vertices get coordinate `v` exactly.
fn clip_with(poly: &[Pt], f: impl Fn(Pt) -> f64, snap: Option<(usize, f64)>) -> Vec<Pt> {
    let n = poly.len();
    let mut out = Vec::with_capacity(n + 2);
    for k in 0..n {
        let (u, v) = (poly[k], poly[(k + 1) % n]);
        let (fu, fv) = (f(u), f(v));
        if fu >= 0.0 {
            out.push(u);
        }
        if (fu >= 0.0) != (fv >= 0.0) {
            let t = fu / (fu - fv);
            let mut p = [u[0] + t * (v[0] - u[0]), u[1] + t * (v[1] - u[1])];
            if let Some((axis, value)) = snap {
                p[axis] = value;
            }
            out.push(p);
        }
    }
    if out.len() < 3 {
        out.clear();
    }
    out
}

/// Keeps the part with coordinate `axis` (0 = x, 1 = y) >= `v` (`above`) or <= `v`.
pub(crate) fn clip_axis(poly: &[Pt], axis: usize, v: f64, above: bool) -> Vec<Pt> {
    if above {
        clip_with(poly, |p| p[axis] - v, Some((axis, v)))
    } else {
        clip_with(poly, |p| v - p[axis], Some((axis, v)))
    }
}

/// Keeps the part on the inner side of edge p -> q (`inside`) or the outer side.
fn clip_edge(poly: &[Pt], p: Pt, q: Pt, inside: bool) -> Vec<Pt> {
    let s = if inside { 1.0 } else { -1.0 };
    clip_with(
        poly,
        |r| s * ((q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0])),
        None,
    )
}

/// (xmin, ymin, xmax, ymax).
pub(crate) fn bbox(poly: &[Pt]) -> [f64; 4] {
    let mut b = [
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    for p in poly {
        b = [
            b[0].min(p[0]),
            b[1].min(p[1]),
            b[2].max(p[0]),
            b[3].max(p[1]),
        ];
    }
    b
}

/// True when the boxes share interior.
pub(crate) fn boxes_meet(a: &[f64; 4], b: &[f64; 4]) -> bool {
    a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3]
}

/// `poly` ∩ `tri` (tri positively oriented).
pub(crate) fn intersect(poly: &[Pt], tri: &[Pt; 3]) -> Vec<Pt> {
    let mut p = poly.to_vec();
    for k in 0..3 {
        if p.is_empty() {
            break;
        }
        p = clip_edge(&p, tri[k], tri[(k + 1) % 3], true);
    }
    p
}

/// `poly` minus `tri` as up to three convex pieces: outside edge 0; inside
/// edge 0 and outside edge 1; inside edges 0, 1 and outside edge 2. Pieces of
/// area <= `drop` are dropped.
pub(crate) fn subtract(poly: &[Pt], tri: &[Pt; 3], drop: f64) -> Vec<Vec<Pt>> {
    let mut pieces = Vec::new();
    let mut rest = poly.to_vec();
    for k in 0..3 {
        let (p, q) = (tri[k], tri[(k + 1) % 3]);
        let outside = clip_edge(&rest, p, q, false);
        if area(&outside) > drop {
            pieces.push(outside);
        }
        rest = clip_edge(&rest, p, q, true);
        if rest.is_empty() {
            break;
        }
    }
    pieces
}

/// Area of `poly` with y < 0 or y > `h`, or (inside the band) x < 0 or x > `w`.
pub(crate) fn area_outside_rect(poly: &[Pt], w: f64, h: f64) -> f64 {
    let band = clip_axis(&clip_axis(poly, 1, 0.0, true), 1, h, false);
    area(&clip_axis(poly, 1, 0.0, false))
        + area(&clip_axis(poly, 1, h, true))
        + area(&clip_axis(&band, 0, 0.0, false))
        + area(&clip_axis(&band, 0, w, true))
}

/// Calls `f(row, piece, piece_area)` for each half-grid row `b < rows`
/// (strip `[b/2, b/2 + 1/2]`) the polygon crosses with positive area.
pub(crate) fn for_rows(poly: &[Pt], rows: usize, mut f: impl FnMut(usize, &[Pt], f64)) {
    let b = bbox(poly);
    let first = (2.0 * b[1]).floor().clamp(0.0, rows as f64) as usize;
    let end = (2.0 * b[3]).ceil().clamp(0.0, rows as f64) as usize;
    for row in first..end {
        let y0 = row as f64 * 0.5;
        let piece = clip_axis(&clip_axis(poly, 1, y0, true), 1, y0 + 0.5, false);
        let a = area(&piece);
        if a > 0.0 {
            f(row, &piece, a);
        }
    }
}

/// The x-extent in texels of a run of half-grid cells `[start, end)`.
pub(crate) fn run_extent(r: Run) -> (f64, f64) {
    (r[0] as f64 * 0.5, r[1] as f64 * 0.5)
}

/// The width in texels of a run of half-grid cells, times the row height
/// (0.5 texel): the run's area. Exact (a multiple of 0.25).
pub(crate) fn run_width(r: Run) -> f64 {
    let (x0, x1) = run_extent(r);
    (x1 - x0) * 0.5
}

/// Area of `piece` (of area `piece_area`) inside the cell runs `runs` of its
/// row (sorted, disjoint, in half-grid cells).
pub(crate) fn area_in_runs(piece: &[Pt], piece_area: f64, runs: &[Run]) -> f64 {
    let b = bbox(piece);
    let (xmin, xmax) = (b[0], b[2]);
    let first = runs.partition_point(|&r| run_extent(r).1 <= xmin);
    let mut sum = 0.0;
    for &r in &runs[first..] {
        let (x0, x1) = run_extent(r);
        if x0 >= xmax {
            break;
        }
        if x0 <= xmin && x1 >= xmax {
            return piece_area;
        }
        let mut p = piece.to_vec();
        if x0 > xmin {
            p = clip_axis(&p, 0, x0, true);
        }
        if x1 < xmax {
            p = clip_axis(&p, 0, x1, false);
        }
        sum += area(&p);
    }
    sum
}
