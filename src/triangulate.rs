//! Triangulation: fitted outlines to the two triangle lists over one shared
//! vertex array.
//!
//! The opaque mesh is the opaque outlines ear-clipped (`earcutr`, holes
//! included). The blended mesh is the covering outlines minus the opaque
//! ones (`geo`'s boolean difference), ear-clipped the same way. Then edge
//! flips shorten the edges inside each mesh: GPUs shade in 2x2 quads, so
//! long thin slivers cost lanes along their length (common practice, no
//! source). A flip never touches an outline edge, so the meshes keep their
//! outlines exactly and the result is never worse than plain ear clipping.
//!
//! Invariants of [`Triangulation`]: all positions are lattice points (half
//! texels), distinct; every triangle winds clockwise on screen (y down,
//! positive shoelace area) and has non-zero area.

use crate::fit::{orient, Fit, FitPolygon};
use crate::outline::Point;
use geo::{BooleanOps, Coord, LineString, MultiPolygon, Polygon};
use std::collections::HashMap;

/// Two triangle lists over one vertex array (lattice points, half texels).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Triangulation {
    /// The shared vertex array.
    pub positions: Vec<Point>,
    /// Triangles of the opaque mesh.
    pub opaque: Vec<[u32; 3]>,
    /// Triangles of the blended mesh.
    pub blended: Vec<[u32; 3]>,
    /// Interior edge length (texels) after plain ear clipping.
    pub interior_length_earcut: f64,
    /// Interior edge length (texels) after the edge flips.
    pub interior_length: f64,
}

/// Why a fit could not be triangulated: a library step (ear clipping, the
/// constrained triangulation, the boolean difference) produced something
/// that does not tile the outlines on the lattice. The cut then falls back
/// to a plainer mesh and quotes this in its note.
#[derive(Clone, Copy, Debug, PartialEq, thiserror::Error)]
pub enum TriangulateError {
    /// `earcutr` refused the rings.
    #[error("ear clipping failed: {0:?}")]
    EarClipping(earcutr::Error),
    /// `spade` refused a ring's vertex.
    #[error("constrained triangulation: {0:?}")]
    Insertion(spade::InsertionError),
    /// Two outline edges cross, so they cannot both be constraints.
    #[error("constrained triangulation: outline edges cross")]
    EdgesCross,
    /// Neither triangulation's triangles sum to the polygon's area.
    #[error("neither ear clipping nor the constrained triangulation tiles an outline")]
    NotTiled,
    /// `geo`'s boolean difference returned a point off the half-texel lattice.
    #[error("boolean difference produced a point off the lattice: ({x}, {y})")]
    OffLattice {
        /// Its x, half texels.
        x: f64,
        /// Its y, half texels.
        y: f64,
    },
}

#[derive(Default)]
struct Builder {
    positions: Vec<Point>,
    index: HashMap<Point, u32>,
}

impl Builder {
    fn id(&mut self, p: Point) -> u32 {
        let n = self.positions.len() as u32;
        *self.index.entry(p).or_insert_with(|| {
            self.positions.push(p);
            n
        })
    }

    /// Ear-clips a polygon with holes; keeps only non-degenerate triangles,
    /// wound clockwise on screen.
    fn earcut(
        &mut self,
        outer: &[Point],
        holes: &[Vec<Point>],
        out: &mut Vec<[u32; 3]>,
    ) -> Result<(), TriangulateError> {
        let mut flat: Vec<f64> = Vec::new();
        let mut pts: Vec<Point> = Vec::new();
        let mut hole_starts = Vec::new();
        for (k, ring) in std::iter::once(outer)
            .chain(holes.iter().map(|h| h.as_slice()))
            .enumerate()
        {
            if k > 0 {
                hole_starts.push(pts.len());
            }
            for &p in ring {
                flat.push(p[0] as f64);
                flat.push(p[1] as f64);
                pts.push(p);
            }
        }
        let tris =
            earcutr::earcut(&flat, &hole_starts, 2).map_err(TriangulateError::EarClipping)?;
        let found: Vec<[Point; 3]> = tris
            .chunks_exact(3)
            .map(|t| [pts[t[0]], pts[t[1]], pts[t[2]]])
            .filter(|t| orient(t[0], t[1], t[2]) != 0)
            .collect();
        // Ear clipping can overlap triangles where holes touch the outer
        // ring or each other at a vertex; then the triangles' areas do not
        // sum to the polygon's (exact, in integers), and a constrained
        // Delaunay triangulation of the same rings is used instead.
        let rings: Vec<&[Point]> = std::iter::once(outer)
            .chain(holes.iter().map(|h| h.as_slice()))
            .collect();
        let want = polygon_twice_area(&rings);
        let found = if twice_area_sum(&found) == want {
            found
        } else {
            let cdt = constrained(&rings)?;
            if twice_area_sum(&cdt) != want {
                return Err(TriangulateError::NotTiled);
            }
            cdt
        };
        for [a, b, c] in found {
            let o = orient(a, b, c);
            let (ia, ib, ic) = (self.id(a), self.id(b), self.id(c));
            out.push(if o > 0 { [ia, ib, ic] } else { [ia, ic, ib] });
        }
        Ok(())
    }
}

/// Twice the area of a polygon: its outer ring's minus its holes'.
fn polygon_twice_area(rings: &[&[Point]]) -> i64 {
    let shoelace = |r: &[Point]| -> i64 {
        (0..r.len())
            .map(|i| {
                let (a, b) = (r[i], r[(i + 1) % r.len()]);
                a[0] * b[1] - b[0] * a[1]
            })
            .sum::<i64>()
            .abs()
    };
    let outer = rings.first().map_or(0, |r| shoelace(r));
    outer - rings[1..].iter().map(|r| shoelace(r)).sum::<i64>()
}

/// Twice the summed (unsigned) area of triangles.
fn twice_area_sum(tris: &[[Point; 3]]) -> i64 {
    tris.iter().map(|t| orient(t[0], t[1], t[2]).abs()).sum()
}

/// Triangulates a polygon (outer ring, then holes; rings that may touch at
/// vertices but do not cross) by a constrained Delaunay triangulation
/// (`spade`, exact predicates) of its ring edges, keeping the triangles
/// whose centroid is inside by the even-odd rule. Adds no vertex.
fn constrained(rings: &[&[Point]]) -> Result<Vec<[Point; 3]>, TriangulateError> {
    use spade::{ConstrainedDelaunayTriangulation, Point2, Triangulation as _};
    let mut cdt = ConstrainedDelaunayTriangulation::<Point2<f64>>::new();
    for ring in rings {
        let handles = ring
            .iter()
            .map(|p| cdt.insert(Point2::new(p[0] as f64, p[1] as f64)))
            .collect::<Result<Vec<_>, _>>()
            .map_err(TriangulateError::Insertion)?;
        for i in 0..handles.len() {
            let (a, b) = (handles[i], handles[(i + 1) % handles.len()]);
            if a == b {
                continue;
            }
            if !cdt.can_add_constraint(a, b) {
                return Err(TriangulateError::EdgesCross);
            }
            cdt.add_constraint(a, b);
        }
    }
    // even-odd test of a centroid, scaled by 3 to stay in integers
    let inside = |q: Point| {
        let mut odd = false;
        for ring in rings {
            for i in 0..ring.len() {
                let (a, b) = (ring[i], ring[(i + 1) % ring.len()]);
                let (a, b) = ([3 * a[0], 3 * a[1]], [3 * b[0], 3 * b[1]]);
                if (a[1] > q[1]) != (b[1] > q[1]) {
                    let dy = b[1] - a[1];
                    let num = (a[0] - q[0]) * dy + (q[1] - a[1]) * (b[0] - a[0]);
                    if (num > 0) == (dy > 0) {
                        odd = !odd;
                    }
                }
            }
        }
        odd
    };
    let mut out = Vec::new();
    for face in cdt.inner_faces() {
        let v = face
            .vertices()
            .map(|v| [v.position().x as i64, v.position().y as i64]);
        let c = [v[0][0] + v[1][0] + v[2][0], v[0][1] + v[1][1] + v[2][1]];
        if orient(v[0], v[1], v[2]) != 0 && inside(c) {
            out.push(v);
        }
    }
    Ok(out)
}

fn to_geo(poly: &FitPolygon) -> Polygon<f64> {
    let ring = |r: &[Point]| {
        LineString::from(
            r.iter()
                .map(|p| Coord {
                    x: p[0] as f64,
                    y: p[1] as f64,
                })
                .collect::<Vec<_>>(),
        )
    };
    Polygon::new(
        ring(&poly.outer),
        poly.holes.iter().map(|h| ring(h)).collect(),
    )
}

fn from_geo_ring(ls: &LineString<f64>) -> Result<Vec<Point>, TriangulateError> {
    let mut pts: Vec<Point> = Vec::with_capacity(ls.0.len());
    for c in &ls.0 {
        let p = [c.x.round() as i64, c.y.round() as i64];
        if (c.x - p[0] as f64).abs() > 1e-9 || (c.y - p[1] as f64).abs() > 1e-9 {
            return Err(TriangulateError::OffLattice { x: c.x, y: c.y });
        }
        if pts.last() != Some(&p) {
            pts.push(p);
        }
    }
    if pts.len() > 1 && pts.first() == pts.last() {
        pts.pop();
    }
    Ok(pts)
}

/// Triangulates a fit. Fails (with the reason) only when a library step
/// produced something outside the lattice; the caller then falls back.
pub fn triangulate(fit: &Fit) -> Result<Triangulation, TriangulateError> {
    let mut b = Builder::default();
    let mut opaque = Vec::new();
    for poly in &fit.opaque {
        b.earcut(&poly.outer, &poly.holes, &mut opaque)?;
    }
    let mut blended = Vec::new();
    if !fit.cover.is_empty() {
        let cover = MultiPolygon::new(fit.cover.iter().map(to_geo).collect());
        let diff = if fit.opaque.is_empty() {
            cover
        } else {
            let op = MultiPolygon::new(fit.opaque.iter().map(to_geo).collect());
            cover.difference(&op)
        };
        for poly in diff.0 {
            let outer = from_geo_ring(poly.exterior())?;
            if outer.len() < 3 {
                continue;
            }
            let holes: Vec<Vec<Point>> = poly
                .interiors()
                .iter()
                .map(from_geo_ring)
                .collect::<Result<_, _>>()?;
            let holes: Vec<Vec<Point>> = holes.into_iter().filter(|h| h.len() >= 3).collect();
            b.earcut(&outer, &holes, &mut blended)?;
        }
    }
    let before = interior_length(&b.positions, &opaque) + interior_length(&b.positions, &blended);
    flip_to_shorter(&b.positions, &mut opaque);
    flip_to_shorter(&b.positions, &mut blended);
    let after = interior_length(&b.positions, &opaque) + interior_length(&b.positions, &blended);
    Ok(Triangulation {
        positions: b.positions,
        opaque,
        blended,
        interior_length_earcut: before,
        interior_length: after,
    })
}

/// Interior edges (shared by two triangles of the list): (a, b) with a < b,
/// mapped to the two (triangle, opposite vertex) pairs.
fn interior_edges(tris: &[[u32; 3]]) -> HashMap<(u32, u32), Vec<(usize, u32)>> {
    let mut edges: HashMap<(u32, u32), Vec<(usize, u32)>> = HashMap::new();
    for (i, t) in tris.iter().enumerate() {
        for k in 0..3 {
            let (a, b, c) = (t[k], t[(k + 1) % 3], t[(k + 2) % 3]);
            edges.entry((a.min(b), a.max(b))).or_default().push((i, c));
        }
    }
    edges.retain(|_, v| v.len() == 2);
    edges
}

fn len2(p: Point, q: Point) -> i64 {
    (p[0] - q[0]).pow(2) + (p[1] - q[1]).pow(2)
}

/// Total length, in texels, of the edges shared by two triangles.
pub fn interior_length(pos: &[Point], tris: &[[u32; 3]]) -> f64 {
    // summed in a fixed order, so the result is the same on every run
    let mut edges: Vec<(u32, u32)> = interior_edges(tris).into_keys().collect();
    edges.sort_unstable();
    edges
        .iter()
        .map(|&(a, b)| (len2(pos[a as usize], pos[b as usize]) as f64).sqrt() / 2.0)
        .sum()
}

/// Flips interior edges of convex quads to the shorter diagonal until none
/// is left; each flip strictly shortens the total, so this ends.
fn flip_to_shorter(pos: &[Point], tris: &mut [[u32; 3]]) {
    loop {
        let mut flipped = false;
        let mut edges: Vec<_> = interior_edges(tris).into_iter().collect();
        edges.sort_unstable_by_key(|(k, _)| *k);
        let mut touched = vec![false; tris.len()];
        for ((a, b), sides) in edges {
            let (t1, c) = sides[0];
            let (t2, d) = sides[1];
            if touched[t1] || touched[t2] {
                continue;
            }
            let (pa, pb, pc, pd) = (
                pos[a as usize],
                pos[b as usize],
                pos[c as usize],
                pos[d as usize],
            );
            // strictly convex quad: a and b on opposite sides of cd, c and d of ab
            let convex = orient(pc, pd, pa).signum() * orient(pc, pd, pb).signum() < 0
                && orient(pa, pb, pc).signum() * orient(pa, pb, pd).signum() < 0;
            if !convex || len2(pc, pd) >= len2(pa, pb) {
                continue;
            }
            let wind = |t: [u32; 3]| {
                if orient(pos[t[0] as usize], pos[t[1] as usize], pos[t[2] as usize]) > 0 {
                    t
                } else {
                    [t[0], t[2], t[1]]
                }
            };
            tris[t1] = wind([a, c, d]);
            tris[t2] = wind([b, c, d]);
            touched[t1] = true;
            touched[t2] = true;
            flipped = true;
        }
        if !flipped {
            break;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The constrained fallback tiles a polygon whose holes touch the outer
    /// ring and each other at vertices: the triangles' areas sum to the
    /// polygon's (outer minus holes; the shoelace formula), every triangle
    /// lies inside (its centroid), and no vertex is added.
    #[test]
    fn constrained_fallback_tiles_touching_holes() {
        // a diamond touching the outer ring at its vertex (6, 0), and a
        // second diamond touching the first at (6, 6)
        let outer_split: Vec<Point> = vec![[0, 0], [6, 0], [12, 0], [12, 12], [0, 12]];
        let hole_a: Vec<Point> = vec![[6, 0], [8, 3], [6, 6], [4, 3]];
        let hole_b: Vec<Point> = vec![[6, 6], [9, 9], [6, 10], [3, 9]];
        let rings: Vec<&[Point]> = vec![&outer_split, &hole_a, &hole_b];
        let tris = constrained(&rings).unwrap();
        assert_eq!(twice_area_sum(&tris), polygon_twice_area(&rings));
        assert_eq!(polygon_twice_area(&rings), 2 * (144 - 12 - 12));
        let corners: std::collections::HashSet<Point> =
            rings.iter().flat_map(|r| r.iter().copied()).collect();
        assert!(tris.iter().flatten().all(|p| corners.contains(p)));
    }

    #[test]
    fn flips_shorten_a_long_diagonal() {
        // a kite whose ear clipping may pick the long diagonal
        let pos = vec![[0, 0], [100, 1], [200, 0], [100, -1]];
        let mut tris = vec![[0, 2, 1], [0, 3, 2]];
        for t in tris.iter_mut() {
            if orient(pos[t[0] as usize], pos[t[1] as usize], pos[t[2] as usize]) < 0 {
                t.swap(1, 2);
            }
        }
        let before = interior_length(&pos, &tris);
        flip_to_shorter(&pos, &mut tris);
        let after = interior_length(&pos, &tris);
        assert!((before - 100.0).abs() < 1e-9);
        assert!((after - 1.0).abs() < 1e-9);
        for t in &tris {
            assert!(orient(pos[t[0] as usize], pos[t[1] as usize], pos[t[2] as usize]) > 0);
        }
    }
}
