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
//! [`cut::cut_layer`] runs them all (as the public stages of [`cut`]:
//! [`cut::prepare_regions`] → [`cut::fit_regions`] →
//! [`cut::triangulate_outlines`] → [`cut::layer_mesh`]) and verifies the
//! result with [`check::check_mesh`], which recomputes the contract from its
//! definition with code of its own.
//!
//! # Catalogue
//!
//! Every public module, one line each.
//!
//! **The cut pipeline**
//! - [`settings`]: the cut settings (budget, alpha thresholds, filter, mip levels, wrap) and their validation.
//! - [`alpha`]: alpha → texel classes → the safe-opaque and must-cover regions, as row runs or masks.
//! - [`mask`]: the half-texel grid mask, its row runs and their components, pinch removal and filling.
//! - [`outline`]: a region's runs → its exact rings, islands and holes.
//! - [`fit`]: rings → rings fitted to the vertex budget (the fitter and its variants).
//! - [`triangulate`]: fitted rings → an opaque and a blended triangle list over one vertex array.
//! - [`vertex_order`]: the vertex array in three runs and the triangles in Z-order.
//! - [`mesh`]: the mesh file's value, [`mesh::LayerMesh`].
//! - [`cut`]: the stages above chained from one typed value to the next, self-checked.
//! - [`check`]: the contract recomputed from its definitions, with no builder code.
//! - [`quality`]: a cut's numbers in the outputs' one vocabulary, and its warnings.
//!
//! **The GPU model**
//! - [`raster`]: the simulated GPU's coverage (snapped vertices, top-left rule, 2x2 quads).
//! - [`frame`]: a frame of draws → fragments, lanes and vertices per pixel and per draw.
//!
//! **Scene scoring**
//! - [`scene`]: the scene file, its layers' meshes, every strategy scored per camera sample, the
//!   vertex total allocated ([`scene::allocate`]), the report and the export for an engine.
//!
//! **Inputs and outputs**
//! - [`io`]: the one gate in (PNGs and shipped textures within limits, mesh files) and the one gate
//!   out ([`io::OutputFolder`]: atomic writes, inputs never overwritten, every file recorded).
//! - [`error`]: errors that name the file, what is wrong and what to do.
//! - [`export`]: a layer mesh → glTF 2.0 (`.gltf` + `.bin`, or `.glb`) as named bytes.
//! - [`present`]: each command's result as a value (`--json`) and its text table, the report web
//!   page, PNG encoding and text in pictures.
//! - [`heatmap`]: per-pixel counts → a colour heatmap with a legend.
//! - [`preview`]: a layer and its cut → the preview picture.
//! - [`plot`]: a layer's budget sweep → the plot SVG.
//!
//! **Runners**
//! - [`batch`]: files and folders cut into one output folder, with a settings file, a manifest and
//!   reruns that skip unchanged layers.
//! - [`sweep`]: one layer cut at a range of budgets, and the knee of the curve.
//! - [`sheet`]: a sprite sheet's regions (a regions file, or found from the alpha) cut one by one
//!   on the whole sheet's regions, animation frames and nine-slice panels.
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
pub mod sheet;
pub mod sweep;
pub mod triangulate;
pub mod vertex_order;

#[cfg(test)]
mod test_rng;
