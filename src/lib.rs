//! underdraw: cut 2D sprite layers into a guaranteed opaque mesh and a
//! blended mesh under a vertex budget.
//!
//! The pipeline, one module a stage:
//!
//! 1. [`alpha`]: the layer's alpha channel ([`alpha::AlphaMap`]) → the
//!    safe-opaque and must-cover regions ([`alpha::Regions`]) on the
//!    half-texel grid ([`mask::Mask`]), for a filter, mip levels and wrap.
//! 2. [`outline`]: a region → its exact boundary rings, islands and holes.
//! 3. [`fit`]: the rings of both regions → rings fitted to the vertex
//!    budget; opaque rings only shrink inside the safe region, covering
//!    rings only grow outside the must-cover region.
//! 4. [`triangulate`]: fitted rings → an opaque and a blended triangle list
//!    over one vertex array.
//! 5. [`vertex_order`]: the vertex array renumbered (opaque-only, shared,
//!    blended-only) and the triangles sorted for locality; same geometry.
//! 6. [`mesh`]: the mesh file's value, [`mesh::LayerMesh`].
//!
//! [`cut::cut_layer`] runs them all and verifies the result with
//! [`check::check_mesh`], which recomputes the contract from its definition
//! with code of its own.
//!
//! For the artist: [`preview`] draws a cut over its layer, [`plot`] draws a
//! layer's budget sweep as SVG.
//!
//! For many layers: [`batch`] cuts files and folders into one output folder,
//! with a settings file, a manifest and reruns that skip unchanged layers.
//!
//! ```
//! use underdraw::{alpha::AlphaMap, check::check_mesh, cut::cut_layer, settings::CutSettings};
//! // an 8x8 layer: an opaque 6x6 square with a soft one-texel rim
//! let alpha: Vec<u8> = (0..64)
//!     .map(|i| {
//!         let (x, y) = (i % 8, i / 8);
//!         if (1..7).contains(&x) && (1..7).contains(&y) { 255 } else { 100 }
//!     })
//!     .collect();
//! let map = AlphaMap::from_raw(8, 8, alpha);
//! let out = cut_layer(&map, "square.png", &CutSettings { budget: 8, ..Default::default() });
//! assert!(out.mesh.vertex_count() <= 8);
//! assert!(check_mesh(&out.mesh, &map).unwrap().holds());
//! ```
#![warn(missing_docs)]

pub mod alpha;
pub mod batch;
pub mod check;
pub mod cut;
pub mod error;
pub mod export;
pub mod fit;
pub mod frame;
pub mod heatmap;
pub mod io;
pub mod mask;
pub mod mesh;
pub mod outline;
pub mod plot;
pub mod present;
pub mod preview;
pub mod quality;
pub mod raster;
pub mod scene;
pub mod settings;
pub mod sweep;
pub mod text;
pub mod triangulate;
pub mod vertex_order;

#[cfg(test)]
mod test_rng;
