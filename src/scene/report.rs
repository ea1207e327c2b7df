//! The scene report: what `underdraw scene` prints and writes to
//! `scene-report.json` (its text table: [`crate::present::tables`]).

use super::budget::AllocationReport;
use super::score::{LayerReport, StrategyReport};
use serde::Serialize;

/// A heatmap written, and the frame it shows.
#[derive(Clone, Debug, Serialize)]
pub struct HeatmapInfo {
    /// The heatmap's file name in the output folder (`heatmap-rect.png`,
    /// `heatmap-split.png`).
    pub file: String,
    /// The camera sample shown (index into [`SceneReport::camera_positions`]):
    /// [`SceneReport::heatmap_sample`], the same for every heatmap.
    pub sample: usize,
    /// The camera's x position at that sample, in screen pixels.
    pub camera_x: f64,
    /// The colour scale's top count (`top` and more share the last colour).
    pub top: u32,
}

/// The report of `underdraw scene`, as printed ([`SceneReport::table`]) and
/// written to `scene-report.json`.
#[derive(Clone, Debug, Serialize)]
pub struct SceneReport {
    /// The scene file's path, as given.
    pub scene: String,
    /// The viewport's size in pixels, [width, height].
    pub viewport: [u32; 2],
    /// The camera's x position at each sample, in screen pixels, in sample order.
    pub camera_positions: Vec<f64>,
    /// Each drawing strategy's numbers per frame (rect, outline, split).
    pub strategies: Vec<StrategyReport>,
    /// Each layer's numbers, in the scene's order (back to front).
    pub layers: Vec<LayerReport>,
    /// The camera sample every heatmap shows: where the rect strategy's
    /// overdraw peaks, the frame that costs most drawn the plain way, so
    /// the maps compare the same view.
    pub heatmap_sample: usize,
    /// The overdraw heatmaps written (rect and split, both at
    /// [`SceneReport::heatmap_sample`], on one colour scale).
    pub heatmaps: Vec<HeatmapInfo>,
    /// Share of the possible saving the split strategy reaches, over the
    /// frame: (rect - split) / (rect - exact) in fragments per frame
    /// (`None` when the exact floor saves nothing against rect).
    pub saving_share: Option<f64>,
    /// The same share for the allocated budgets (`--vertex-total`); left
    /// out of the JSON when there is no allocation.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub allocation_saving_share: Option<f64>,
    /// The split of a vertex total over the layers, when one was asked for
    /// (`--vertex-total`); left out of the JSON otherwise.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub allocation: Option<AllocationReport>,
    /// The cuts' remarks, prefixed by the layer's name.
    pub notes: Vec<String>,
    /// Files written, the report last.
    pub outputs: Vec<String>,
}
