//! Scenes: parallax layers on a simulated GPU, scored per drawing strategy,
//! and a vertex total split over the layers.
//!
//! * [`file`](mod@file): the scene file and its validation ([`file::load_scene`]).
//! * [`prepare`]: each layer's mesh, cut on the fly or read from a file.
//! * [`region`]: layers that are regions of a sprite sheet (a nine-slice
//!   panel drawn stretched), cut and floored on the whole sheet.
//! * [`draws`]: the draws of a frame per [`draws::Strategy`] and camera position.
//! * [`exact`]: the floor, every layer drawn as exactly its regions.
//! * [`score`]: every strategy at every camera sample measured with
//!   [`crate::frame::measure`] (the totals of [`crate::frame::render`]
//!   without per-pixel buffers), summarized per strategy and per layer.
//! * [`budget`]: the budget per layer for a vertex total, by marginal gain
//!   over the layers' curves ([`allocate`]).
//! * [`report`], [`run`]: the `underdraw scene` command's report and outputs.
//! * [`export`]: every layer's meshes and the draw list for an engine
//!   (`scene --export DIR`).
pub mod allocate;
pub mod budget;
pub mod draws;
pub mod exact;
pub mod export;
pub mod file;
pub mod prepare;
pub mod region;
pub mod report;
pub mod run;
pub mod score;
