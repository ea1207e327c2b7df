//! The draws of one frame of a scene, per drawing strategy and camera
//! position.
//!
//! * [`Strategy::Rect`]: every layer's full rectangle (2 triangles, 4
//!   vertices a copy), blended, back to front, no depth.
//! * [`Strategy::Outline`]: the covering outline only (the opaque and the
//!   blended triangles of the mesh, all blended), back to front, no depth.
//! * [`Strategy::Split`]: the opaque meshes front to back with depth test and
//!   write, then the blended meshes back to front with depth test, no write.
//! * [`Strategy::Exact`]: [`Strategy::Split`]'s frame drawn with every
//!   layer's exact meshes ([`super::exact`]): the floor any cut can reach.
//! * [`Strategy::Layered`]: per layer, back to front, its opaque triangles
//!   (blending off) then its blended ones, no depth buffer: the order of a
//!   2D renderer that cannot assign depth, on a GPU that shades everything.
//! * [`Strategy::LayeredHsr`]: the same submission on a GPU with ideal
//!   hidden-surface removal: a fragment is shaded only when no *later*
//!   opaque fragment in submission order covers its pixel. Measured as an
//!   equivalent frame: the layered draws in reverse order, all at one
//!   depth with the LESS test, the opaque ones writing depth, so a fragment
//!   passes exactly when no opaque fragment submitted after it covers its
//!   pixel (the meshes of one draw never overlap).
//!
//! Each layer has its own depth, the front layer nearest ([`layer_depth`]).
//! A layer with `fill_width` is drawn as copies side by side, one period
//! (`scale * width`) apart, as many as reach into the viewport; its copies
//! go in one draw (the layer's vertices repeated per copy). A draw with no
//! triangle is left out, and so is a layer with no copy on screen.

use super::file::LayerSpec;
use crate::frame::Draw;
use crate::mesh::LayerMesh;
use serde::{Deserialize, Serialize};

/// How a frame's layers are drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Strategy {
    /// Every layer's full rectangle, blended, back to front, no depth.
    Rect,
    /// Every layer's covering outline (opaque and blended triangles), all
    /// blended, back to front, no depth.
    Outline,
    /// Opaque meshes front to back with depth test and write and blending off,
    /// then blended meshes back to front with depth test, no write.
    Split,
    /// [`Strategy::Split`] with every layer's exact meshes: the floor.
    Exact,
    /// Per layer back to front, opaque then blended triangles, no depth, on a
    /// GPU without hidden-surface removal.
    Layered,
    /// [`Strategy::Layered`] on a GPU with ideal hidden-surface removal.
    #[serde(rename = "layered-hsr")]
    LayeredHsr,
}

impl Strategy {
    /// The strategies drawn from the layers' own meshes (the exact floor
    /// needs the exact meshes, [`super::exact`]).
    pub const ALL: [Strategy; 3] = [Strategy::Rect, Strategy::Outline, Strategy::Split];

    /// The retrofit order on the two GPU classes.
    pub const LAYERED: [Strategy; 2] = [Strategy::Layered, Strategy::LayeredHsr];

    /// Every strategy, in the order the report lists them.
    pub const EVERY: [Strategy; 6] = [
        Strategy::Rect,
        Strategy::Outline,
        Strategy::Split,
        Strategy::Exact,
        Strategy::Layered,
        Strategy::LayeredHsr,
    ];

    /// The strategy's name in file names, reports and frame dumps: `rect`,
    /// `outline`, `split`, `exact`, `layered`, `layered-hsr`.
    pub fn name(self) -> &'static str {
        match self {
            Strategy::Rect => "rect",
            Strategy::Outline => "outline",
            Strategy::Split => "split",
            Strategy::Exact => "exact",
            Strategy::Layered => "layered",
            Strategy::LayeredHsr => "layered-hsr",
        }
    }
}

/// The depth of layer `i` of `n` (0 the back): evenly spaced inside (0, 1),
/// decreasing towards the front, so the front layer is nearest (0 nearest).
pub fn layer_depth(i: usize, n: usize) -> f32 {
    (n - i) as f32 / (n + 1) as f32
}

/// Screen positions (top-left corners, pixels) of the copies of a layer of
/// `size` texels that reach into the viewport at camera position `camera_x`.
pub fn copy_origins(
    spec: &LayerSpec,
    size: [u32; 2],
    viewport: [u32; 2],
    camera_x: f64,
) -> Vec<[f64; 2]> {
    let (vw, vh) = (viewport[0] as f64, viewport[1] as f64);
    let (w, h) = (spec.scale * size[0] as f64, spec.scale * size[1] as f64);
    let x0 = spec.position[0] - camera_x * spec.parallax;
    let y0 = spec.position[1];
    if y0 + h <= 0.0 || y0 >= vh || w <= 0.0 {
        return Vec::new();
    }
    if !spec.fill_width {
        return if x0 + w > 0.0 && x0 < vw {
            vec![[x0, y0]]
        } else {
            Vec::new()
        };
    }
    // first copy k whose right edge is past the viewport's left edge
    let mut k = (-x0 / w).floor();
    while x0 + (k + 1.0) * w <= 0.0 {
        k += 1.0;
    }
    while x0 + k * w > 0.0 {
        k -= 1.0; // a copy further left still reaches in
    }
    let mut v = Vec::new();
    while x0 + k * w < vw {
        if x0 + (k + 1.0) * w > 0.0 {
            v.push([x0 + k * w, y0]);
        }
        k += 1.0;
    }
    v
}

/// A layer's mesh placed on screen: its copies' positions and the given
/// triangle lists, repeated per copy.
fn placed(
    spec: &LayerSpec,
    positions: &[f32],
    lists: &[&[u32]],
    origins: &[[f64; 2]],
) -> (Vec<f32>, Vec<u32>) {
    let n = (positions.len() / 2) as u32;
    let mut pos = Vec::with_capacity(positions.len() * origins.len());
    let mut idx = Vec::new();
    for (c, o) in origins.iter().enumerate() {
        for p in positions.chunks_exact(2) {
            pos.push((o[0] + spec.scale * p[0] as f64) as f32);
            pos.push((o[1] + spec.scale * p[1] as f64) as f32);
        }
        for list in lists {
            idx.extend(list.iter().map(|&i| i + c as u32 * n));
        }
    }
    (pos, idx)
}

/// The rectangle of a layer of `size` texels as a mesh: 4 corners, 2
/// triangles, clockwise on screen (y down).
fn rect_mesh(size: [u32; 2]) -> (Vec<f32>, Vec<u32>) {
    let (w, h) = (size[0] as f32, size[1] as f32);
    (vec![0.0, 0.0, w, 0.0, w, h, 0.0, h], vec![0, 1, 2, 0, 2, 3])
}

/// What a draw pass takes from a layer.
#[derive(Clone, Copy, PartialEq)]
pub enum Part {
    /// The layer's rectangle.
    Rect,
    /// Opaque and blended triangles together.
    Cover,
    /// The opaque triangles; the only part drawn with blending off.
    Opaque,
    /// The blended triangles.
    Blended,
}

/// One layer's draw of `part` at `depth`, every copy on screen in one draw
/// (positions in screen pixels), or `None` when it has nothing on screen or
/// `part` has no triangle. Blending is on except for [`Part::Opaque`]; depth
/// test and write are off (the caller turns them on for its strategy).
pub fn layer_draw(
    spec: &LayerSpec,
    mesh: &LayerMesh,
    part: Part,
    depth: f32,
    viewport: [u32; 2],
    camera_x: f64,
) -> Option<Draw> {
    let origins = copy_origins(spec, mesh.size, viewport, camera_x);
    if origins.is_empty() {
        return None;
    }
    let rect;
    let (positions, lists): (&[f32], Vec<&[u32]>) = match part {
        Part::Rect => {
            rect = rect_mesh(mesh.size);
            (&rect.0, vec![&rect.1])
        }
        Part::Cover => (
            &mesh.positions,
            vec![&mesh.opaque.indices, &mesh.blended.indices],
        ),
        Part::Opaque => (&mesh.positions, vec![&mesh.opaque.indices]),
        Part::Blended => (&mesh.positions, vec![&mesh.blended.indices]),
    };
    if lists.iter().all(|l| l.is_empty()) {
        return None;
    }
    let (positions, indices) = placed(spec, positions, &lists, &origins);
    Some(Draw {
        layer: spec.name.clone(),
        blend: part != Part::Opaque,
        depth,
        depth_test: false,
        depth_write: false,
        positions,
        indices,
    })
}

/// The draws of one frame, in submission order. `meshes[i]` is the mesh of
/// `specs[i]`; layers are back to front. For [`Strategy::Exact`] the meshes
/// are the exact ones ([`super::exact::ExactLayer::mesh`]).
pub fn frame_draws(
    strategy: Strategy,
    specs: &[LayerSpec],
    meshes: &[&LayerMesh],
    viewport: [u32; 2],
    camera_x: f64,
) -> Vec<Draw> {
    let n = specs.len();
    let one = |i: usize, part: Part| {
        layer_draw(
            &specs[i],
            meshes[i],
            part,
            layer_depth(i, n),
            viewport,
            camera_x,
        )
    };
    match strategy {
        Strategy::Rect => (0..n).filter_map(|i| one(i, Part::Rect)).collect(),
        Strategy::Outline => (0..n).filter_map(|i| one(i, Part::Cover)).collect(),
        Strategy::Layered => (0..n)
            .flat_map(|i| [one(i, Part::Opaque), one(i, Part::Blended)])
            .flatten()
            .collect(),
        Strategy::LayeredHsr => {
            let mut draws = frame_draws(Strategy::Layered, specs, meshes, viewport, camera_x);
            draws.reverse();
            draws
                .into_iter()
                .map(|d| Draw {
                    depth: 0.5,
                    depth_test: true,
                    depth_write: !d.blend,
                    ..d
                })
                .collect()
        }
        Strategy::Split | Strategy::Exact => {
            let opaque = (0..n)
                .rev()
                .filter_map(|i| one(i, Part::Opaque))
                .map(|d| Draw {
                    depth_test: true,
                    depth_write: true,
                    ..d
                });
            let blended = (0..n).filter_map(|i| one(i, Part::Blended)).map(|d| Draw {
                depth_test: true,
                ..d
            });
            opaque.chain(blended).collect()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::file::MeshSource;
    use crate::settings::CutSettings;

    fn spec(x: f64, scale: f64, parallax: f64, fill_width: bool) -> LayerSpec {
        LayerSpec {
            name: "l".into(),
            image: "l.png".into(),
            mesh: MeshSource::Cut(CutSettings::default()),
            position: [x, 10.0],
            scale,
            parallax,
            fill_width,
        }
    }

    /// Copies of a repeated layer tile the viewport's width: they abut, the
    /// first starts at or left of 0, the last ends at or right of the
    /// width, and none lies wholly outside.
    #[test]
    fn repeated_copies_tile_the_width() {
        for (x, scale, cam) in [
            (0.0, 1.0, 0.0),
            (-3.5, 0.75, 133.0),
            (40.0, 2.0, -500.0),
            (7.0, 0.3, 1e4),
        ] {
            let s = spec(x, scale, 0.6, true);
            let o = copy_origins(&s, [100, 50], [640, 100], cam);
            let w = 100.0 * scale;
            assert!(o[0][0] <= 0.0 && o[0][0] + w > 0.0, "{o:?}");
            let last = o.last().unwrap()[0];
            assert!(last + w >= 640.0 && last < 640.0, "{o:?}");
            for p in o.windows(2) {
                assert!((p[1][0] - p[0][0] - w).abs() < 1e-9);
            }
        }
    }

    /// screen x = position.x + scale * texel_x - camera_x * parallax.
    #[test]
    fn placement_follows_the_parallax_formula() {
        let s = spec(50.0, 2.0, 0.5, false);
        assert_eq!(
            copy_origins(&s, [10, 10], [640, 100], 40.0),
            vec![[30.0, 10.0]]
        );
        // scrolled off to the left: 50 + 20 - 0.5 * 200 = -30 <= 0
        assert!(copy_origins(&s, [10, 10], [640, 100], 200.0).is_empty());
    }

    #[test]
    fn depths_put_the_front_layer_nearest() {
        let d: Vec<f32> = (0..5).map(|i| layer_depth(i, 5)).collect();
        assert!(d.windows(2).all(|w| w[1] < w[0]));
        assert!(d[0] < 1.0 && d[4] > 0.0);
    }
}
