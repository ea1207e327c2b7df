//! Mesh triangles as float coordinates, for tests that sample a mesh at
//! points (an independent reading of the mesh file, no builder code).

use underdraw::mesh::LayerMesh;

/// A triangle's corners, texel units.
pub type Tri = [[f64; 2]; 3];

/// The triangles of one of `m`'s index lists.
pub fn triangles(m: &LayerMesh, indices: &[u32]) -> Vec<Tri> {
    let pos = |i: u32| {
        let [x, y] = m.position(i);
        [x as f64, y as f64]
    };
    indices
        .chunks(3)
        .map(|t| [pos(t[0]), pos(t[1]), pos(t[2])])
        .collect()
}

/// Smallest signed distance from `p` to the triangle's edge lines, positive
/// inside (either winding).
pub fn inset(t: &Tri, p: [f64; 2]) -> f64 {
    let twice =
        (t[1][0] - t[0][0]) * (t[2][1] - t[0][1]) - (t[2][0] - t[0][0]) * (t[1][1] - t[0][1]);
    if twice == 0.0 {
        return f64::NEG_INFINITY; // degenerate: covers nothing
    }
    let sign = twice.signum();
    (0..3)
        .map(|k| {
            let (a, b) = (t[k], t[(k + 1) % 3]);
            let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
            sign * (dx * (p[1] - a[1]) - dy * (p[0] - a[0])) / (dx * dx + dy * dy).sqrt()
        })
        .fold(f64::INFINITY, f64::min)
}
