//! The scene report: what `underdraw scene` prints and writes to
//! `scene-report.json`.

use super::budget::AllocationReport;
use super::draws::Strategy;
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

fn share(v: Option<f64>) -> String {
    v.map_or("-".to_string(), |v| format!("{v:.2}"))
}

fn opt(v: Option<usize>) -> String {
    v.map_or("file".to_string(), |b| b.to_string())
}

impl SceneReport {
    fn overdraw(&self, s: Strategy) -> Option<f64> {
        self.strategies
            .iter()
            .find(|r| r.strategy == s)
            .map(|r| r.mean_overdraw)
    }

    /// The vertex cost table: vertices shaded per frame with a perfect
    /// post-transform cache and in groups of 4 consecutive indices, and the
    /// vertex bytes fetched per frame with each vertex format.
    fn vertex_costs(&self) -> String {
        let mut s = format!(
            "vertex cost per frame: {:<11} {:>9} {:>15} {:>10} {:>10}\n",
            "strategy", "vertices", "in groups of 4", "f32 bytes", "u16 bytes"
        );
        for r in &self.strategies {
            let bytes = |f: &str| r.vertex_bytes.get(f).copied().unwrap_or(0.0);
            s += &format!(
                "                       {:<11} {:>9.0} {:>15.0} {:>10.0} {:>10.0}\n",
                r.strategy.name(),
                r.per_frame.vertices,
                r.per_frame.vertices_in_groups,
                bytes("f32"),
                bytes("u16")
            );
        }
        s += "(vertices: a perfect post-transform cache; in groups of 4: a GPU that shades every group of 4 consecutive\n \
              indices a draw touches; bytes: those vertices fetched as position + texture coordinate, 16 bytes in f32, 8 in u16;\n \
              exact: its regions' corners, as if perfectly grouped)\n";
        s
    }

    /// The lines under the strategy table: the floor and the share of the
    /// possible saving, and what the layered order gets on each GPU class.
    fn findings(&self) -> String {
        let mut s = String::new();
        if let (Some(rect), Some(split), Some(exact)) = (
            self.overdraw(Strategy::Rect),
            self.overdraw(Strategy::Split),
            self.overdraw(Strategy::Exact),
        ) {
            s += &format!(
                "floor: the exact cut (every layer exactly its regions, unlimited vertices) shades {exact:.3} per pixel;\n\
                 split reaches {} of the possible saving ((rect - split) / (rect - exact) = ({rect:.3} - {split:.3}) / ({rect:.3} - {exact:.3}))\n",
                share(self.saving_share)
            );
        }
        if let (Some(rect), Some(outline), Some(split), Some(plain), Some(hsr)) = (
            self.overdraw(Strategy::Rect),
            self.overdraw(Strategy::Outline),
            self.overdraw(Strategy::Split),
            self.overdraw(Strategy::Layered),
            self.overdraw(Strategy::LayeredHsr),
        ) {
            s += &format!(
                "layered (per layer opaque then blended, back to front, no depth buffer):\n\
                 \x20 GPU without hidden-surface removal: {plain:.3} per pixel (outline {outline:.3}, rect {rect:.3}): the meshes save only the transparent texels\n\
                 \x20 GPU with ideal hidden-surface removal: {hsr:.3} per pixel (split with depth {split:.3}): the opaque meshes hide what lies behind them\n"
            );
        }
        s
    }

    /// The report as the plain-text tables `underdraw scene` prints.
    pub fn table(&self) -> String {
        let mut s = format!(
            "scene {}: {} x {}, {} layers, {} camera samples from x = {} to {}\n\n",
            self.scene,
            self.viewport[0],
            self.viewport[1],
            self.layers.len(),
            self.camera_positions.len(),
            self.camera_positions.first().copied().unwrap_or(0.0),
            self.camera_positions.last().copied().unwrap_or(0.0),
        );
        s += &format!(
            "{:<11} {:>15} {:>22} {:>12} {:>9} {:>6} {:>21}\n",
            "strategy",
            "overdraw (mean)",
            "overdraw peak (sample)",
            "shader lanes",
            "vertices",
            "draws",
            "vertices per triangle"
        );
        for r in &self.strategies {
            s += &format!(
                "{:<11} {:>15.3} {:>16.3} ({:>3}) {:>12.0} {:>9.0} {:>6.0} {:>21.2}\n",
                r.strategy.name(),
                r.mean_overdraw,
                r.peak_overdraw,
                r.peak_sample,
                r.per_frame.lanes,
                r.per_frame.vertices,
                r.per_frame.draws,
                r.vertices_per_triangle
            );
        }
        s += "(overdraw: fragments shaded per pixel of a frame, the mean over the camera samples and the peak; shader lanes (four per 2x2 quad shaded), vertices (vertex shader runs) and draws: per frame, mean over the samples)\n";
        s += &self.findings();
        s += &self.vertex_costs();
        s += "\n";
        s += &format!(
            "{:<16} {:>6} {:>8} {:>16} {:>14} {:>14} {:>16} {:>6}\n",
            "layer",
            "budget",
            "vertices",
            "saved vs outline",
            "saved vs rect",
            "vertices added",
            "saved per vertex",
            "share"
        );
        for l in &self.layers {
            s += &format!(
                "{:<16} {:>6} {:>8} {:>16.0} {:>14.0} {:>14.0} {:>16} {:>6}\n",
                crate::table::shorten_middle(&l.name, 16),
                opt(l.budget),
                l.mesh_vertices,
                l.saved_vs_outline,
                l.saved_vs_rect,
                l.vertices_added,
                l.saved_per_vertex
                    .map_or("-".to_string(), |v| format!("{v:.0}")),
                share(l.saving_share)
            );
        }
        s += "(per frame, the split strategy against outline and rect: fragments saved, and vertices added against rect; saved per vertex: fragments saved vs rect per vertex added; share: of the saving the exact floor makes on the layer, (rect - split) / (rect - exact); budget \"file\": a mesh read from a file)\n";
        if let Some(a) = &self.allocation {
            s += &format!(
                "\nallocation of {} vertices (split strategy, scored on every sample):\n",
                a.vertex_total
            );
            s += &format!(
                "{:<16} {:>6} {:>8} {:>12} {:>8}\n",
                "layer", "budget", "vertices", "even budget", "vertices"
            );
            for l in &a.layers {
                s += &format!(
                    "{:<16} {:>6} {:>8} {:>12} {:>8}\n",
                    l.name,
                    opt(l.budget),
                    l.vertices,
                    opt(l.even_budget),
                    l.even_vertices
                );
            }
            for (name, r) in [("allocated", &a.allocated), ("even spread", &a.even)] {
                s += &format!(
                    "{:<12} {:>6} vertices, {:>10.0} fragments per frame, overdraw {:.3}\n",
                    name, r.vertices, r.fragments, r.overdraw
                );
            }
            s += &format!(
                "saved against the even spread: {:.0} fragments per frame\n",
                a.saved_vs_even
            );
            s += &format!(
                "the allocated budgets reach {} of the possible saving (rect to exact)\n",
                share(self.allocation_saving_share)
            );
        }
        for n in &self.notes {
            s += &format!("note: {n}\n");
        }
        s += &format!("wrote {}\n", self.outputs.join(", "));
        s
    }
}
