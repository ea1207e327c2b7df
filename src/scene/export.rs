//! `scene --export DIR`: every layer's meshes for an engine, and the draw
//! list that says how to draw them.
//!
//! The draw list (`DIR/draw-list.json`, our own format
//! [`DRAW_LIST_FORMAT`]) has two passes, in the order an engine submits
//! them:
//!
//! 1. **opaque**: the layers' opaque meshes, front to back, blending off,
//!    depth test LESS and depth write on, so each fragment hidden behind a
//!    nearer opaque mesh is rejected before it is shaded;
//! 2. **blended**: the blended meshes, back to front, blending on (the
//!    "over" operator on straight alpha), depth test LESS, depth write off,
//!    so a blended fragment behind an opaque one is rejected and the others
//!    composite in painter's order.
//!
//! Beside the passes, `layered` is another order an engine can choose
//! instead of them, for a renderer without a depth buffer: per layer, back
//! to front, its opaque draw (blending off) then its blended draw, no depth
//! test or write (the [`Strategy::Layered`] frame; on a GPU with
//! hidden-surface removal it shades what the passes shade).
//!
//! A layer that is a region of a sprite sheet has `image` the sheet and
//! `"region": {"sheet_size": [W, H], "rect": [x, y, w, h]}` (its mesh's
//! positions are local to the rectangle, its uvs address the sheet); a
//! nine-slice panel drawn stretched also has `"size": [w, h]`, the drawn
//! size in texels (its mesh file's positions are already placed at that
//! size, each vertex where its `slice_positions` anchor puts it), and
//! `"slices": [left, top, right, bottom]`, the insets in texels. Lists
//! without these keys (whole layers, or lists written before them) read
//! as before.
//!
//! Invariants: the entries of `passes` are exactly the non-empty draws of the
//! [`Strategy::Split`] frame in the same order (the scorer's model, so the
//! report's numbers are the numbers of this list); each layer's depth is
//! [`layer_depth`], the front layer nearest; each entry names a mesh file
//! and a glTF primitive written beside the list.

use super::draws::layer_depth;
#[allow(unused_imports)]
use super::draws::Strategy; // named in the docs
use super::file::{MeshSource, Scene};
use super::prepare::Layer;
use crate::error::{FileError, Setting};
use crate::export::gltf::{gltf_files, relative_uri};
use crate::io::NamedBytes;
use crate::mesh::LayerMesh;
use crate::mesh::VertexFormat;
use serde::{Deserialize, Serialize};
use std::path::Path;

/// The draw list's `format` value.
pub const DRAW_LIST_FORMAT: &str = "underdraw.draw-list";
/// The draw list's `version` value. Version 2 renamed the layers'
/// `repeat_x` to `fill_width`.
pub const DRAW_LIST_VERSION: u32 = 2;

/// The draw list file: the scene's layers and the two passes.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DrawList {
    /// [`DRAW_LIST_FORMAT`].
    pub format: String,
    /// [`DRAW_LIST_VERSION`].
    pub version: u32,
    /// Screen size the scene was scored at, pixels.
    pub viewport: [u32; 2],
    /// How the depth buffer is set up for the frame.
    pub depth: DepthSetup,
    /// Every layer of the scene, back to front, with its placement and files.
    pub layers: Vec<ExportedLayer>,
    /// The passes in submission order: `opaque`, then `blended`.
    pub passes: Vec<Pass>,
    /// The other order, instead of `passes` (name `"layered"`, order
    /// `"back-to-front"`): per layer its opaque then its blended draw, no
    /// depth. Empty in lists written before it existed.
    #[serde(default)]
    pub layered: Pass,
}

/// The depth buffer's setup for the frame.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DepthSetup {
    /// Value the depth buffer is cleared to (1.0, the far plane).
    pub clear: f32,
    /// The comparison a fragment must pass: `"less"`.
    pub test: String,
    /// Depths run from 0 (nearest) to 1 (farthest).
    pub range: [f32; 2],
}

/// A layer as exported: where its files are and how it is placed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ExportedLayer {
    /// The layer's name in the scene.
    pub name: String,
    /// The layer's PNG, as a URI relative to the export folder.
    pub image: String,
    /// Its mesh file, relative to the export folder.
    pub mesh: String,
    /// Its glTF asset, relative to the export folder.
    pub gltf: String,
    /// The vertex budget it was cut at (`None` for a mesh read from a file
    /// without one).
    pub budget: Option<usize>,
    /// Vertices in its mesh.
    pub vertices: usize,
    /// Top-left on screen at camera 0, pixels.
    pub position: [f64; 2],
    /// Screen pixels per texel.
    pub scale: f64,
    /// Screen pixels the layer moves left per pixel of camera travel.
    pub parallax: f64,
    /// Tiled horizontally to fill the screen's width.
    pub fill_width: bool,
    /// Its depth, 0 nearest ([`layer_depth`]).
    pub depth: f32,
    /// For a region of a sprite sheet: where it lies in the sheet (`image`
    /// is then the sheet). Absent for a whole layer.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub region: Option<ExportedRegion>,
    /// For a nine-slice panel drawn stretched: the size it is drawn at, in
    /// texels (before `scale`), [w, h]. Absent otherwise.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub size: Option<[u32; 2]>,
    /// For a nine-slice panel drawn stretched: its insets in texels from
    /// the left, top, right and bottom edges. Absent otherwise.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub slices: Option<[u32; 4]>,
}

/// Where a layer that is a region of a sprite sheet lies in the sheet.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ExportedRegion {
    /// The sheet's size in texels, [W, H].
    pub sheet_size: [u32; 2],
    /// The region's rectangle in the sheet, [x, y, w, h] in texels (for an
    /// animation, its first frame).
    pub rect: [u32; 4],
}

/// One pass of the frame.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Pass {
    /// `"opaque"` or `"blended"`.
    pub name: String,
    /// `"front-to-back"` or `"back-to-front"`.
    pub order: String,
    /// The draws in submission order.
    pub draws: Vec<DrawEntry>,
}

/// One draw: a layer's triangle list with its render state.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DrawEntry {
    /// The layer's name.
    pub layer: String,
    /// Its mesh file, relative to the export folder.
    pub mesh: String,
    /// Which triangle list of the mesh file: `"opaque"` or `"blended"`.
    pub triangles: String,
    /// The same triangles as a primitive of the glTF asset's one mesh.
    pub gltf_primitive: usize,
    /// The draw's constant depth.
    pub depth: f32,
    /// The blend state.
    pub blend: Blend,
    /// Test fragments LESS against the depth buffer.
    pub depth_test: bool,
    /// Store the depth of the fragments that pass.
    pub depth_write: bool,
}

/// A blend state, in OpenGL ES / WebGL's factor names.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Blend {
    /// Blending on.
    pub enabled: bool,
    /// Source colour factor (`"SRC_ALPHA"` when on: PNG colour is not
    /// premultiplied by alpha).
    pub src: Option<String>,
    /// Destination colour factor (`"ONE_MINUS_SRC_ALPHA"` when on).
    pub dst: Option<String>,
}

impl Blend {
    fn off() -> Blend {
        Blend {
            enabled: false,
            src: None,
            dst: None,
        }
    }
    /// The "over" operator on straight (not premultiplied) alpha.
    fn over() -> Blend {
        Blend {
            enabled: true,
            src: Some("SRC_ALPHA".into()),
            dst: Some("ONE_MINUS_SRC_ALPHA".into()),
        }
    }
}

/// The draw list of `layers` (with `meshes[i]` the mesh exported for
/// `layers[i]`, back to front).
pub fn draw_list(scene: &Scene, layers: &[ExportedLayer], meshes: &[&LayerMesh]) -> DrawList {
    let n = layers.len();
    let entry = |i: usize, opaque: bool| {
        let l = &layers[i];
        let m = meshes[i];
        let list = if opaque { &m.opaque } else { &m.blended };
        if list.indices.is_empty() {
            return None;
        }
        // the glTF asset holds a primitive per non-empty list, opaque first
        let primitive = usize::from(!opaque && !m.opaque.indices.is_empty());
        Some(DrawEntry {
            layer: l.name.clone(),
            mesh: l.mesh.clone(),
            triangles: if opaque { "opaque" } else { "blended" }.into(),
            gltf_primitive: primitive,
            depth: layer_depth(i, n),
            blend: if opaque { Blend::off() } else { Blend::over() },
            depth_test: true,
            depth_write: opaque,
        })
    };
    // the order of Strategy::Split's frame (see scene::draws::frame_draws)
    let opaque = (0..n).rev().filter_map(|i| entry(i, true)).collect();
    let blended = (0..n).filter_map(|i| entry(i, false)).collect();
    // the order of Strategy::Layered's frame, without depth
    let layered = (0..n)
        .flat_map(|i| [entry(i, true), entry(i, false)])
        .flatten()
        .map(|e| DrawEntry {
            depth_test: false,
            depth_write: false,
            ..e
        })
        .collect();
    DrawList {
        format: DRAW_LIST_FORMAT.into(),
        version: DRAW_LIST_VERSION,
        viewport: scene.viewport,
        depth: DepthSetup {
            clear: 1.0,
            test: "less".into(),
            range: [0.0, 1.0],
        },
        layers: layers.to_vec(),
        passes: vec![
            Pass {
                name: "opaque".into(),
                order: "front-to-back".into(),
                draws: opaque,
            },
            Pass {
                name: "blended".into(),
                order: "back-to-front".into(),
                draws: blended,
            },
        ],
        layered: Pass {
            name: "layered".into(),
            order: "back-to-front".into(),
            draws: layered,
        },
    }
}

/// Every file of the export as named bytes, for an
/// [`OutputFolder`](crate::io::OutputFolder) to write in this order: per
/// layer `<name>.mesh.json` and the glTF asset (`<name>.bin` when it has
/// triangles, then `<name>.gltf`) from `meshes` (one per layer, in the
/// scene's order), then `draw-list.json`. `dir` is the folder they will be
/// written to (the images' URIs are relative to it).
pub fn export_scene(
    dir: &Path,
    scene: &Scene,
    layers: &[Layer],
    meshes: &[&LayerMesh],
) -> Result<(DrawList, Vec<NamedBytes>), FileError> {
    export_scene_with(dir, scene, layers, meshes, VertexFormat::F32)
}

/// [`export_scene`] with the glTF assets' vertices in `format`
/// ([`crate::export::gltf::build_with`]; the mesh files are the same).
pub fn export_scene_with(
    dir: &Path,
    scene: &Scene,
    layers: &[Layer],
    meshes: &[&LayerMesh],
    format: VertexFormat,
) -> Result<(DrawList, Vec<NamedBytes>), FileError> {
    let mut files = Vec::new();
    let n = layers.len();
    let mut exported = Vec::with_capacity(n);
    for (i, (layer, mesh)) in layers.iter().zip(meshes).enumerate() {
        let name = &layer.spec.name;
        let uri = relative_uri(dir, &layer.spec.image).ok_or_else(|| {
            FileError::new(
                &layer.spec.image,
                format!(
                    "has no path relative to the export folder {}",
                    dir.display()
                ),
                format!(
                    "put the {} folder on the same drive as the layers",
                    Setting::Export
                ),
            )
        })?;
        let mesh_file = format!("{name}.mesh.json");
        files.push((
            mesh_file.clone(),
            serde_json::to_vec_pretty(mesh).expect("a mesh serializes"),
        ));
        files.extend(gltf_files(mesh, &uri, dir, name, format)?);
        let s = &layer.spec;
        // a nine-slice panel drawn stretched: its insets
        let stretched = match &s.mesh {
            MeshSource::Region(r) if r.size.is_some() => {
                mesh.region.as_ref().and_then(|g| g.slices)
            }
            _ => None,
        };
        exported.push(ExportedLayer {
            name: name.clone(),
            image: uri,
            mesh: mesh_file,
            gltf: format!("{name}.gltf"),
            budget: mesh.budget,
            vertices: mesh.vertex_count(),
            position: s.position,
            scale: s.scale,
            parallax: s.parallax,
            fill_width: s.fill_width,
            depth: layer_depth(i, n),
            region: mesh.region.as_ref().map(|r| ExportedRegion {
                sheet_size: r.sheet_size,
                rect: r.rect,
            }),
            size: stretched.map(|_| mesh.size),
            slices: stretched,
        });
    }
    let list = draw_list(scene, &exported, meshes);
    let json = serde_json::to_vec_pretty(&list).expect("a draw list serializes");
    files.push(("draw-list.json".into(), json));
    Ok((list, files))
}

/// Reads a draw list written by [`export_scene`].
pub fn load_draw_list(path: &Path) -> Result<DrawList, FileError> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| FileError::new(path, format!("cannot be read ({e})"), "check the path"))?;
    // a version 1 list names `fill_width` by its old name
    #[derive(Deserialize)]
    struct Probe {
        #[serde(default)]
        layers: Vec<std::collections::BTreeMap<String, serde::de::IgnoredAny>>,
    }
    if let Ok(p) = serde_json::from_str::<Probe>(&text) {
        if p.layers.iter().any(|l| l.contains_key("repeat_x")) {
            return Err(FileError::new(
                path,
                format!("has the layer key \"repeat_x\", which draw list version {DRAW_LIST_VERSION} renamed \"fill_width\""),
                "export the scene again with this underdraw (or rename the key and set \"version\" to 2)",
            ));
        }
    }
    let list: DrawList = serde_json::from_str(&text).map_err(|e| {
        FileError::new(
            path,
            format!("is not a draw list: {e}"),
            format!(
                "give a draw-list.json written by the scene command's {}",
                Setting::Export
            ),
        )
    })?;
    if list.format != DRAW_LIST_FORMAT || list.version != DRAW_LIST_VERSION {
        return Err(FileError::new(
            path,
            format!(
                "is format {:?} version {}, not {DRAW_LIST_FORMAT:?} version {DRAW_LIST_VERSION}",
                list.format, list.version
            ),
            "export the scene again with this underdraw",
        ));
    }
    Ok(list)
}
