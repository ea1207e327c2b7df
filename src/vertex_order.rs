//! Vertex ordering: a step after triangulation that renumbers the shared
//! vertex array and reorders the triangles, so that GPUs fetch and shade
//! fewer vertices; the geometry does not change.
//!
//! Tile-based mobile GPUs shade vertices in groups of consecutive indices
//! (4, common practice, no source): a draw that references one index of a
//! group shades all of it. So the array is laid out in three runs:
//! the vertices only the opaque mesh uses, then those both meshes use, then
//! those only the blended mesh uses. The opaque draw then touches one
//! contiguous index range (the first two runs) and the blended draw another
//! (the last two), and only the groups at their ends are partly wasted.
//!
//! Triangles of each list are sorted by the Z-order (Morton) code of their
//! centroid, a classical order that keeps neighbours in the plane near in
//! the list, and within each run vertices are numbered in the order the
//! sorted triangles first use them (the opaque list numbers the first two
//! runs, the blended list the last). Each triangle keeps its vertices in
//! the same cyclic order, so its winding does not change.
//!
//! Invariants after [`order_vertices`]: the same positions (permuted) and
//! the same triangles as point triples; every opaque index is below
//! `opaque_only + shared`, every blended index at least `opaque_only`.

use crate::outline::Point;
use crate::triangulate::Triangulation;

/// Interleaves the bits of two 32-bit values (x in the even bits).
fn morton(x: u32, y: u32) -> u64 {
    let spread = |v: u32| {
        let mut v = v as u64;
        v = (v | (v << 16)) & 0x0000_FFFF_0000_FFFF;
        v = (v | (v << 8)) & 0x00FF_00FF_00FF_00FF;
        v = (v | (v << 4)) & 0x0F0F_0F0F_0F0F_0F0F;
        v = (v | (v << 2)) & 0x3333_3333_3333_3333;
        v = (v | (v << 1)) & 0x5555_5555_5555_5555;
        v
    };
    spread(x) | (spread(y) << 1)
}

/// Sorts triangles by their centroid's Z-order code (3 x the centroid, in
/// half texels: exact integers), ties kept in their order.
fn sort_for_locality(pos: &[Point], tris: &mut [[u32; 3]]) {
    tris.sort_by_cached_key(|t| {
        let c = |k: usize| {
            t.iter()
                .map(|&i| pos[i as usize][k])
                .sum::<i64>()
                .clamp(0, u32::MAX as i64) as u32
        };
        morton(c(0), c(1))
    });
}

/// How many vertices only the opaque mesh uses, both use, and only the
/// blended mesh uses, after [`order_vertices`].
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct VertexRuns {
    /// Vertices of the opaque mesh only: indices `0..opaque_only`.
    pub opaque_only: usize,
    /// Vertices of both meshes: the next `shared` indices.
    pub shared: usize,
    /// Vertices of the blended mesh only (and any vertex of neither): the rest.
    pub blended_only: usize,
}

/// Renumbers `t`'s vertices into the three runs and sorts its triangles
/// for locality (see the module docs); returns the runs' lengths.
pub fn order_vertices(t: &mut Triangulation) -> VertexRuns {
    let n = t.positions.len();
    sort_for_locality(&t.positions, &mut t.opaque);
    sort_for_locality(&t.positions, &mut t.blended);
    let mut in_opaque = vec![false; n];
    let mut in_blended = vec![false; n];
    t.opaque
        .iter()
        .flatten()
        .for_each(|&i| in_opaque[i as usize] = true);
    t.blended
        .iter()
        .flatten()
        .for_each(|&i| in_blended[i as usize] = true);
    const NONE: u32 = u32::MAX;
    let mut new = vec![NONE; n];
    let mut next = 0u32;
    let mut number = |i: u32, new: &mut [u32]| {
        if new[i as usize] == NONE {
            new[i as usize] = next;
            next += 1;
        }
    };
    for want_shared in [false, true] {
        for &i in t.opaque.iter().flatten() {
            if in_blended[i as usize] == want_shared {
                number(i, &mut new);
            }
        }
    }
    let opaque_only = in_opaque
        .iter()
        .zip(&in_blended)
        .filter(|(o, b)| **o && !**b)
        .count();
    let shared = in_opaque
        .iter()
        .zip(&in_blended)
        .filter(|(o, b)| **o && **b)
        .count();
    for &i in t.blended.iter().flatten() {
        number(i, &mut new);
    }
    for i in 0..n as u32 {
        number(i, &mut new);
    }
    let mut positions = vec![[0, 0]; n];
    for (old, &p) in t.positions.iter().enumerate() {
        positions[new[old] as usize] = p;
    }
    t.positions = positions;
    for tri in t.opaque.iter_mut().chain(t.blended.iter_mut()) {
        *tri = tri.map(|i| new[i as usize]);
    }
    VertexRuns {
        opaque_only,
        shared,
        blended_only: n - opaque_only - shared,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::alpha::AlphaMap;
    use crate::cut::fit_layer;
    use crate::frame::{measure, Draw};
    use crate::settings::CutSettings;
    use crate::test_rng::Lcg;
    use crate::triangulate::triangulate;

    /// Soft blobs over transparency, `w` x `h`.
    fn blobs(rng: &mut Lcg, w: u32, h: u32) -> AlphaMap {
        let b: Vec<[f64; 3]> = (0..1 + rng.below(4))
            .map(|_| {
                [
                    rng.unit() * w as f64,
                    rng.unit() * h as f64,
                    3.0 + rng.unit() * 12.0,
                ]
            })
            .collect();
        let alpha = (0..w * h)
            .map(|i| {
                let (x, y) = ((i % w) as f64, (i / w) as f64);
                let d = b
                    .iter()
                    .map(|c| (x - c[0]).hypot(y - c[1]) / c[2])
                    .fold(f64::INFINITY, f64::min);
                if d < 0.7 {
                    255
                } else if d < 1.0 {
                    120
                } else {
                    0
                }
            })
            .collect();
        AlphaMap::from_raw(w, h, alpha)
    }

    fn draw(pos: &[Point], tris: &[[u32; 3]], shift: [f32; 2]) -> Draw {
        Draw {
            layer: "l".into(),
            blend: false,
            depth: 0.5,
            depth_test: false,
            depth_write: false,
            positions: pos
                .iter()
                .flat_map(|p| [p[0] as f32 / 2.0 + shift[0], p[1] as f32 / 2.0 + shift[1]])
                .collect(),
            indices: tris.iter().flatten().copied().collect(),
        }
    }

    fn as_points(pos: &[Point], tris: &[[u32; 3]]) -> Vec<[Point; 3]> {
        let mut v: Vec<[Point; 3]> = tris
            .iter()
            .map(|t| {
                // the same cyclic order, starting at its least point
                let p = t.map(|i| pos[i as usize]);
                let k = (0..3).min_by_key(|&k| p[k]).unwrap();
                [p[k], p[(k + 1) % 3], p[(k + 2) % 3]]
            })
            .collect();
        v.sort();
        v
    }

    /// On cuts of random layers: the same triangles (same winding), the
    /// three runs, each draw one contiguous range, the same fragments and
    /// lanes on the simulated GPU, and at most 3 vertices shaded in groups of
    /// 4 beyond those the draw uses.
    #[test]
    fn ordering_keeps_the_geometry_and_packs_the_draws() {
        let mut rng = Lcg(5);
        for case in 0..40 {
            let (w, h) = (8 + rng.below(50) as u32, 8 + rng.below(50) as u32);
            let map = blobs(&mut rng, w, h);
            let settings = CutSettings {
                budget: [8, 16, 64, 256][case % 4],
                ..CutSettings::default()
            };
            let before = triangulate(&fit_layer(&map, &settings).fit).unwrap();
            let mut after = before.clone();
            let runs = order_vertices(&mut after);
            let (b, a) = (&before, &after);
            assert_eq!(
                as_points(&b.positions, &b.opaque),
                as_points(&a.positions, &a.opaque)
            );
            assert_eq!(
                as_points(&b.positions, &b.blended),
                as_points(&a.positions, &a.blended)
            );
            let mut pb = b.positions.clone();
            let mut pa = a.positions.clone();
            pb.sort();
            pa.sort();
            assert_eq!(pa, pb);
            let end = (runs.opaque_only + runs.shared) as u32;
            assert!(a.opaque.iter().flatten().all(|&i| i < end));
            assert!(a
                .blended
                .iter()
                .flatten()
                .all(|&i| i as usize >= runs.opaque_only));
            for (tb, ta) in [(&b.opaque, &a.opaque), (&b.blended, &a.blended)] {
                let shift = [0.25 + rng.unit() as f32 * 3.0, rng.unit() as f32 * 3.0];
                let (db, da) = (draw(&b.positions, tb, shift), draw(&a.positions, ta, shift));
                let (mb, ma) = (
                    measure([80, 80], std::slice::from_ref(&db)),
                    measure([80, 80], std::slice::from_ref(&da)),
                );
                assert_eq!(mb.total.fragments, ma.total.fragments, "case {case}");
                assert_eq!(mb.total.lanes, ma.total.lanes, "case {case}");
                assert_eq!(db.distinct_vertices(), da.distinct_vertices());
                // one contiguous range, which starts at 0 (opaque) or ends
                // at the array's end (blended): at most one group partly
                // wasted, 3 vertices
                let grouped = da.vertices_in_groups(4);
                assert!(grouped <= da.distinct_vertices() + 3, "case {case}");
            }
        }
    }

    #[test]
    fn morton_interleaves() {
        assert_eq!(morton(0b11, 0), 0b0101);
        assert_eq!(morton(0, 0b11), 0b1010);
        assert_eq!(morton(1, 1), 0b11);
    }
}
