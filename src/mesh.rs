//! The layer mesh: one vertex array shared by an opaque and a blended
//! triangle list, and its file format (`<stem>.mesh.json`).
//!
//! Invariants of a mesh written by [`crate::cut`]: every index is below the
//! vertex count, every triangle has the winding named in `winding` and a
//! non-zero area, and the contract of [`crate::check`] holds.

use crate::settings::{AlphaThresholds, Filter, Wrap};
use serde::{Deserialize, Serialize};

/// The file format's name, the value of the `format` key.
pub const FORMAT: &str = "underdraw.layer";
/// The file format's version.
/// Version 2 renamed `stats.interior_edge_length_earcut` to
/// `stats.interior_edge_length_unflipped` ([`RENAMED_STATS_KEYS`]).
pub const VERSION: u32 = 2;

/// Keys of `stats` renamed since version 1: (old name, new name). A mesh
/// file with an old name is refused by [`crate::io::load_mesh`] with a
/// message naming the new one.
pub const RENAMED_STATS_KEYS: [(&str, &str); 1] = [(
    "interior_edge_length_earcut",
    "interior_edge_length_unflipped",
)];

/// A triangle list into the shared vertex array.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct TriangleList {
    /// Vertex indices into [`LayerMesh::positions`] (and `uvs`), three per
    /// triangle; the count is a multiple of 3.
    pub indices: Vec<u32>,
}

impl TriangleList {
    /// Number of triangles: `indices.len() / 3`.
    pub fn triangle_count(&self) -> usize {
        self.indices.len() / 3
    }
}

/// Numbers that describe a cut; areas are in texels.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct MeshStats {
    /// Area where an opaque mesh may lie (the safe-opaque region).
    pub safe_opaque_area: f64,
    /// Area of the opaque mesh.
    pub opaque_area: f64,
    /// Area the two meshes must cover (the must-cover region).
    pub must_cover_area: f64,
    /// Area of the two meshes together.
    pub covered_area: f64,
    /// Vertices in the shared array (a vertex both meshes use counts once).
    pub vertices: usize,
    /// Vertices of the fitted opaque outline: every ring (islands and holes)
    /// of the opaque mesh, summed.
    pub opaque_outline_vertices: usize,
    /// Vertices of the fitted covering outline: every ring (islands and holes)
    /// of the outline the two meshes fill together, summed.
    pub cover_outline_vertices: usize,
    /// Triangles of the opaque mesh.
    pub opaque_triangles: usize,
    /// Triangles of the blended mesh.
    pub blended_triangles: usize,
    /// Texels opaque: alpha at least `opaque_min`. The texel counts and
    /// edge lengths below read as 0 from mesh files that lack them.
    #[serde(default)]
    pub opaque_texels: u64,
    /// Texels partly transparent: alpha at least `visible_min`, below
    /// `opaque_min`.
    #[serde(default)]
    pub partial_texels: u64,
    /// Texels transparent: alpha below `visible_min`.
    #[serde(default)]
    pub transparent_texels: u64,
    /// Total length, in texels, of the edges shared by two triangles of one
    /// mesh (opaque and blended summed), as the ear clipping left them,
    /// before any edge is flipped.
    #[serde(default)]
    pub interior_edge_length_unflipped: f64,
    /// Total length, in texels, of the edges shared by two triangles of one
    /// mesh (opaque and blended summed), after flipping edges to shorter
    /// diagonals.
    #[serde(default)]
    pub interior_edge_length: f64,
}

impl MeshStats {
    /// opaque_area / safe_opaque_area; 1 when there is no safe area.
    pub fn opaque_capture(&self) -> f64 {
        if self.safe_opaque_area > 0.0 {
            self.opaque_area / self.safe_opaque_area
        } else {
            1.0
        }
    }
    /// covered_area - must_cover_area, in texels.
    pub fn excess(&self) -> f64 {
        self.covered_area - self.must_cover_area
    }
    /// [`excess`](Self::excess) as a share of the must-cover area (0 when
    /// that is empty).
    pub fn excess_share(&self) -> f64 {
        if self.must_cover_area > 0.0 {
            self.excess() / self.must_cover_area
        } else {
            0.0
        }
    }
}

/// How a vertex is stored for the GPU: a position and a texture coordinate.
/// With the `cli` feature, also the command line's value enum.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[cfg_attr(feature = "cli", derive(clap::ValueEnum))]
#[serde(rename_all = "lowercase")]
pub enum VertexFormat {
    /// 32-bit floats: position x, y and texture coordinate u, v (16 bytes).
    #[default]
    #[cfg_attr(
        feature = "cli",
        value(help = "32-bit floats: position and texture coordinate, 16 bytes a vertex")
    )]
    F32,
    /// Unsigned 16-bit integers: position in half-texel units, texture
    /// coordinate normalized (8 bytes). Exact: every position lies on a
    /// multiple of half a texel.
    #[cfg_attr(
        feature = "cli",
        value(
            help = "16-bit: positions in half texels, texture coordinates normalized, 8 bytes a vertex (glTF's KHR_mesh_quantization; layers up to 32767 texels a side)"
        )
    )]
    U16,
}

impl VertexFormat {
    /// Both formats, f32 first.
    pub const ALL: [VertexFormat; 2] = [VertexFormat::F32, VertexFormat::U16];

    /// Bytes of one vertex: a 2D position and a 2D texture coordinate.
    pub fn bytes_per_vertex(self) -> u64 {
        match self {
            VertexFormat::F32 => 16,
            VertexFormat::U16 => 8,
        }
    }

    /// `f32` or `u16`.
    pub fn name(self) -> &'static str {
        match self {
            VertexFormat::F32 => "f32",
            VertexFormat::U16 => "u16",
        }
    }
}

/// Triangle winding as seen on screen with y down.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Winding {
    /// Clockwise on screen (x right, y down); what the cutter writes.
    Cw,
    /// Counter-clockwise on screen (x right, y down).
    Ccw,
}

/// A layer cut into an opaque and a blended mesh, as stored in the mesh file.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LayerMesh {
    /// The file format's name, always [`FORMAT`].
    pub format: String,
    /// The file format's version, [`VERSION`] for the files written now.
    pub version: u32,
    /// The image file name the mesh was cut from.
    pub source: String,
    /// Image size in texels, [W, H].
    pub size: [u32; 2],
    /// The texture filter and highest mip level the opaque mesh is safe for.
    pub filter: Filter,
    /// The alpha thresholds that class the texels as opaque or visible.
    pub alpha: AlphaThresholds,
    /// The axes on which the texture repeats; the others clamp to the edge texel.
    pub wrap: Wrap,
    /// The vertex budget the mesh was fitted to; `None` in files that do
    /// not record it.
    #[serde(default)]
    pub budget: Option<usize>,
    /// The winding of every triangle of both meshes.
    pub winding: Winding,
    /// x0, y0, x1, y1, ... in texel units (x right, y down).
    pub positions: Vec<f32>,
    /// u0, v0, ...: position / size.
    pub uvs: Vec<f32>,
    /// Draw with blending off.
    pub opaque: TriangleList,
    /// Draw with blending on.
    pub blended: TriangleList,
    /// The numbers of the cut: areas, vertex and triangle counts, texel classes.
    pub stats: MeshStats,
    /// For a region of a sprite sheet ([`crate::sheet`]): where it lies in
    /// the sheet (positions are then local to the region, `uvs` address
    /// the sheet). Absent from a plain layer's file.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub region: Option<MeshRegion>,
}

/// Where a region mesh lies in its sprite sheet, and how it is drawn
/// (the `region` key of a mesh file; see [`crate::sheet`]).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MeshRegion {
    /// The sheet's file name.
    pub sheet: String,
    /// The sheet's size in texels, [W, H].
    pub sheet_size: [u32; 2],
    /// The region's rectangle in the sheet, [x, y, w, h] in texels (for an
    /// animation, its first frame).
    pub rect: [u32; 4],
    /// Nine-slice insets in texels from the left, top, right and bottom
    /// edges, for a panel drawn stretched.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub slices: Option<[u32; 4]>,
    /// Per vertex of a nine-slice panel: slice column and row (0, 1, 2) and
    /// the offset in texels inside that slice, [column, row, dx, dy], so an
    /// engine places the vertex at any panel size.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub slice_positions: Option<Vec<[f32; 4]>>,
    /// The frames of an animation, [x, y, w, h] each (all of one size): one
    /// mesh serves every frame.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub frames: Option<Vec<[u32; 4]>>,
    /// Per frame, what to add to `uvs` to draw that frame.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub frame_uv_offsets: Option<Vec<[f32; 2]>>,
}

impl LayerMesh {
    /// Vertices in the shared array (`positions.len() / 2`); a vertex both
    /// meshes use counts once, as in the vertex budget.
    pub fn vertex_count(&self) -> usize {
        self.positions.len() / 2
    }
    /// The position of vertex `i`.
    pub fn position(&self, i: u32) -> [f32; 2] {
        let i = i as usize * 2;
        [self.positions[i], self.positions[i + 1]]
    }
}
