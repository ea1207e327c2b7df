//! Scoring a scene: every strategy at every camera sample drawn on the
//! simulated GPU, summed per frame and per layer. Scores need only totals,
//! so frames are measured by spans ([`crate::frame::measure`], exactly the
//! totals of [`crate::frame::render`] without per-pixel buffers);
//! [`render_frame`] keeps the per-pixel counts, for heatmaps.
//!
//! Overdraw is fragments shaded per viewport pixel. A strategy's **mean**
//! overdraw is the mean over the camera samples of each frame's overdraw,
//! its **peak** the highest frame's. Per-frame numbers (lanes, vertices,
//! draws) are means over the samples; vertices per triangle is the ratio
//! of the sums.

use super::draws::{frame_draws, Strategy};
use super::exact::ExactLayer;
use super::file::{LayerSpec, Scene};
use crate::frame::{render, FrameResult, SpanBuffer};
use crate::mesh::LayerMesh;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::collections::HashMap;

/// Work on the simulated GPU ([`crate::frame`]), summed over draws or
/// averaged over frames.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Work {
    /// Fragments shaded (covered pixels that pass the depth test).
    pub fragments: f64,
    /// Shader lanes: 4 per (triangle, aligned 2x2 quad) holding a shaded
    /// fragment, idle lanes included.
    pub lanes: f64,
    /// Vertex shader invocations: distinct indices referenced, per draw.
    pub vertices: f64,
    /// Vertices shaded on a GPU that shades groups of 4 consecutive indices
    /// ([`crate::frame::Draw::vertices_in_groups`]).
    #[serde(default)]
    pub vertices_in_groups: f64,
    /// Triangles submitted, drawn or not.
    pub triangles: f64,
    /// Draw calls.
    pub draws: f64,
}

impl Work {
    fn add(&mut self, o: &Work) {
        self.fragments += o.fragments;
        self.lanes += o.lanes;
        self.vertices += o.vertices;
        self.vertices_in_groups += o.vertices_in_groups;
        self.triangles += o.triangles;
        self.draws += o.draws;
    }
    fn scaled(mut self, k: f64) -> Work {
        self.fragments *= k;
        self.lanes *= k;
        self.vertices *= k;
        self.vertices_in_groups *= k;
        self.triangles *= k;
        self.draws *= k;
        self
    }
}

/// One rendered frame, summarized.
#[derive(Clone, Debug)]
pub struct FrameScore {
    /// The strategy the frame was drawn with.
    pub strategy: Strategy,
    /// Index of the camera sample.
    pub sample: usize,
    /// The frame's work, all layers summed.
    pub total: Work,
    /// Per layer, in the scene's order.
    pub per_layer: Vec<Work>,
    /// Most fragments shaded at one pixel.
    pub max_pixel: u32,
}

/// Renders one frame.
pub fn render_frame(
    strategy: Strategy,
    specs: &[LayerSpec],
    meshes: &[&LayerMesh],
    viewport: [u32; 2],
    camera_x: f64,
) -> FrameResult {
    render(
        viewport,
        &frame_draws(strategy, specs, meshes, viewport, camera_x),
    )
}

/// Measures every strategy at every camera position, in parallel.
pub fn score_frames(
    strategies: &[Strategy],
    specs: &[LayerSpec],
    meshes: &[&LayerMesh],
    viewport: [u32; 2],
    cameras: &[f64],
) -> Vec<FrameScore> {
    score_frames_with(strategies, specs, meshes, viewport, cameras, &|| {})
}

/// [`score_frames`], calling `tick` once as each frame (strategy, camera
/// sample) is scored, from any thread. [`Strategy::Exact`] is skipped here:
/// it needs the exact meshes ([`score_exact_frames_with`]).
pub fn score_frames_with(
    strategies: &[Strategy],
    specs: &[LayerSpec],
    meshes: &[&LayerMesh],
    viewport: [u32; 2],
    cameras: &[f64],
    tick: &(dyn Fn() + Sync),
) -> Vec<FrameScore> {
    let strategies: Vec<Strategy> = strategies
        .iter()
        .copied()
        .filter(|&s| s != Strategy::Exact)
        .collect();
    score_with(&strategies, specs, meshes, viewport, cameras, tick, None)
}

/// The exact floor ([`Strategy::Exact`]) at every camera position, in
/// parallel, with `exact[i]` the exact meshes of `specs[i]`: fragments as
/// drawn, lanes counting each quad once per draw
/// ([`SpanBuffer::measure_regions`]), vertices the regions' corners per
/// copy drawn ([`ExactLayer`]).
pub fn score_exact_frames_with(
    specs: &[LayerSpec],
    exact: &[ExactLayer],
    viewport: [u32; 2],
    cameras: &[f64],
    tick: &(dyn Fn() + Sync),
) -> Vec<FrameScore> {
    let meshes: Vec<&LayerMesh> = exact.iter().map(|e| &e.mesh).collect();
    score_with(
        &[Strategy::Exact],
        specs,
        &meshes,
        viewport,
        cameras,
        tick,
        Some(exact),
    )
}

fn score_with(
    strategies: &[Strategy],
    specs: &[LayerSpec],
    meshes: &[&LayerMesh],
    viewport: [u32; 2],
    cameras: &[f64],
    tick: &(dyn Fn() + Sync),
    exact: Option<&[ExactLayer]>,
) -> Vec<FrameScore> {
    let index: HashMap<&str, usize> = specs
        .iter()
        .enumerate()
        .map(|(i, s)| (s.name.as_str(), i))
        .collect();
    let jobs: Vec<(Strategy, usize)> = strategies
        .iter()
        .flat_map(|&s| (0..cameras.len()).map(move |k| (s, k)))
        .collect();
    jobs.par_iter()
        .map_init(SpanBuffer::new, |buf, &(strategy, sample)| {
            let draws = frame_draws(strategy, specs, meshes, viewport, cameras[sample]);
            let r = match exact {
                Some(_) => buf.measure_regions(viewport, &draws),
                None => buf.measure(viewport, &draws),
            };
            let mut per_layer = vec![Work::default(); specs.len()];
            for (d, st) in draws.iter().zip(&r.per_draw) {
                let i = index[d.layer.as_str()];
                let vertices = match exact {
                    // the regions' corners, once per copy drawn
                    Some(e) => {
                        let copies = (d.positions.len() / 2 / meshes[i].vertex_count()) as u64;
                        copies
                            * if d.blend {
                                e[i].blended_vertices
                            } else {
                                e[i].opaque_vertices
                            }
                    }
                    None => st.vertices,
                };
                per_layer[i].add(&Work {
                    fragments: st.fragments as f64,
                    lanes: st.lanes as f64,
                    vertices: vertices as f64,
                    // the exact floor's rectangles are no real vertex array:
                    // its corners, as if each were used (a lower bound)
                    vertices_in_groups: if exact.is_some() {
                        vertices as f64
                    } else {
                        st.vertices_in_groups as f64
                    },
                    triangles: st.triangles as f64,
                    draws: 1.0,
                });
            }
            let mut total = Work::default();
            per_layer.iter().for_each(|w| total.add(w));
            tick();
            FrameScore {
                strategy,
                sample,
                total,
                per_layer,
                max_pixel: r.max_pixel,
            }
        })
        .collect()
}

/// Scores a loaded scene with the given meshes (`meshes[i]` for
/// `scene.layers[i]`): every strategy at every camera sample, summarized
/// per strategy and per layer: every strategy but the exact floor, which
/// needs the layers' images ([`score_exact_frames_with`]; `underdraw scene`
/// reports it too).
///
/// ```
/// use underdraw::cut::cut_layer;
/// use underdraw::io::load_alpha;
/// use underdraw::scene::{draws::Strategy, file::parse_scene, score::score_scene};
/// use underdraw::settings::CutSettings;
/// use std::path::Path;
/// // the demo's 128x128 button, alone on a 256x128 screen (paths are
/// // relative to the scene file; doc tests run in the crate's folder)
/// let text = r#"{"viewport": [256, 128], "camera": {"travel": 0, "samples": 1},
///                "layers": [{"name": "button", "image": "ui-button.png"}]}"#;
/// let scene = parse_scene(Path::new("demo-layers/doc.scene.json"), text).unwrap();
/// let map = load_alpha(Path::new("demo-layers/ui-button.png")).unwrap();
/// let mesh = cut_layer(&map, "ui-button.png", &CutSettings::default()).mesh;
/// let (strategies, layers) = score_scene(&scene, &[&mesh]);
/// let of = |s| strategies.iter().find(|r| r.strategy == s).unwrap().per_frame.fragments;
/// // the rectangle shades all 128 x 128 pixels; the meshes only what is visible
/// assert_eq!(of(Strategy::Rect), 16384.0);
/// assert!(of(Strategy::Split) < of(Strategy::Rect));
/// assert_eq!(layers[0].name, "button");
/// ```
pub fn score_scene(
    scene: &Scene,
    meshes: &[&LayerMesh],
) -> (Vec<StrategyReport>, Vec<LayerReport>) {
    let strategies: Vec<Strategy> = Strategy::ALL.into_iter().chain(Strategy::LAYERED).collect();
    let frames = score_frames(
        &strategies,
        &scene.layers,
        meshes,
        scene.viewport,
        &scene.camera_positions(),
    );
    summarize(&frames, &scene.layers, meshes, scene.viewport)
}

/// A strategy's numbers over the camera samples.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct StrategyReport {
    /// The strategy these numbers are for.
    pub strategy: Strategy,
    /// Mean over the samples of the frame's fragments per pixel.
    pub mean_overdraw: f64,
    /// The highest frame's fragments per pixel.
    pub peak_overdraw: f64,
    /// The camera sample of the peak (index into the camera positions).
    pub peak_sample: usize,
    /// Most fragments at one pixel in any frame.
    pub max_pixel: u32,
    /// Per frame, means over the samples.
    pub per_frame: Work,
    /// Vertices / triangles, over all frames.
    pub vertices_per_triangle: f64,
    /// Vertex bytes fetched per frame (mean over the samples) with each
    /// vertex format, by its name (`f32`, `u16`): the vertices shaded in
    /// groups of 4 times the bytes of a vertex
    /// ([`crate::mesh::VertexFormat::bytes_per_vertex`]).
    #[serde(default)]
    pub vertex_bytes: std::collections::BTreeMap<String, f64>,
}

/// One layer's numbers, per frame (means over the samples).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LayerReport {
    /// The layer's name in the scene file.
    pub name: String,
    /// The budget it was cut to (`None` for a mesh file without one).
    pub budget: Option<usize>,
    /// Vertices of the layer's mesh (both meshes, shared vertices once), as
    /// stored; a repeated layer draws them once per copy.
    pub mesh_vertices: usize,
    /// The layer's work per frame drawn as a blended rectangle ([`Strategy::Rect`]).
    pub rect: Work,
    /// The layer's work per frame with [`Strategy::Outline`].
    pub outline: Work,
    /// The layer's work per frame with [`Strategy::Split`].
    pub split: Work,
    /// Fragments per frame the split strategy shades fewer than outline
    /// (`outline.fragments - split.fragments`).
    pub saved_vs_outline: f64,
    /// Fragments per frame the split strategy shades fewer than rect
    /// (`rect.fragments - split.fragments`).
    pub saved_vs_rect: f64,
    /// Vertices per frame the split strategy processes more than rect
    /// (`split.vertices - rect.vertices`).
    pub vertices_added: f64,
    /// saved_vs_rect / vertices_added (`None` when no vertex is added).
    pub saved_per_vertex: Option<f64>,
    /// The layer's work per frame with [`Strategy::Exact`] (its exact
    /// meshes; zero when the floor was not scored).
    #[serde(default)]
    pub exact: Work,
    /// The layer's work per frame with [`Strategy::Layered`] (no
    /// hidden-surface removal).
    #[serde(default)]
    pub layered: Work,
    /// The layer's work per frame with [`Strategy::LayeredHsr`] (ideal
    /// hidden-surface removal).
    #[serde(default)]
    pub layered_hsr: Work,
    /// Share of the possible saving split reaches on this layer:
    /// (rect - split) / (rect - exact) in fragments per frame; `None` when
    /// the floor was not scored or saves nothing against rect.
    #[serde(default)]
    pub saving_share: Option<f64>,
}

/// Share of the possible saving: (rect - x) / (rect - exact), or `None`
/// when the floor saves nothing (or was not scored: `exact` is `None`).
pub fn saving_share(rect: f64, x: f64, exact: Option<f64>) -> Option<f64> {
    let exact = exact?;
    (rect - exact > 0.0).then(|| (rect - x) / (rect - exact))
}

/// Means per strategy and per layer from the frames of [`score_frames`].
pub fn summarize(
    frames: &[FrameScore],
    specs: &[LayerSpec],
    meshes: &[&LayerMesh],
    viewport: [u32; 2],
) -> (Vec<StrategyReport>, Vec<LayerReport>) {
    let pixels = viewport[0] as f64 * viewport[1] as f64;
    let mut strategies = Vec::new();
    let mut layer_means: HashMap<Strategy, Vec<Work>> = HashMap::new();
    for s in Strategy::EVERY {
        let fs: Vec<&FrameScore> = frames.iter().filter(|f| f.strategy == s).collect();
        if fs.is_empty() {
            continue;
        }
        let k = 1.0 / fs.len() as f64;
        let mut sum = Work::default();
        let mut layers = vec![Work::default(); specs.len()];
        for f in &fs {
            sum.add(&f.total);
            for (a, w) in layers.iter_mut().zip(&f.per_layer) {
                a.add(w);
            }
        }
        let peak = fs
            .iter()
            .max_by(|a, b| a.total.fragments.total_cmp(&b.total.fragments))
            .expect("a frame");
        strategies.push(StrategyReport {
            strategy: s,
            mean_overdraw: sum.fragments * k / pixels,
            peak_overdraw: peak.total.fragments / pixels,
            peak_sample: peak.sample,
            max_pixel: fs.iter().map(|f| f.max_pixel).max().unwrap_or(0),
            per_frame: sum.scaled(k),
            vertices_per_triangle: if sum.triangles > 0.0 {
                sum.vertices / sum.triangles
            } else {
                0.0
            },
            vertex_bytes: crate::mesh::VertexFormat::ALL
                .iter()
                .map(|f| {
                    (
                        f.name().to_string(),
                        sum.vertices_in_groups * k * f.bytes_per_vertex() as f64,
                    )
                })
                .collect(),
        });
        layer_means.insert(s, layers.into_iter().map(|w| w.scaled(k)).collect());
    }
    let get = |s: Strategy, i: usize| layer_means.get(&s).map(|v| v[i]).unwrap_or_default();
    let layers = specs
        .iter()
        .enumerate()
        .map(|(i, spec)| {
            let (rect, outline, split) = (
                get(Strategy::Rect, i),
                get(Strategy::Outline, i),
                get(Strategy::Split, i),
            );
            let saved_vs_rect = rect.fragments - split.fragments;
            let vertices_added = split.vertices - rect.vertices;
            LayerReport {
                name: spec.name.clone(),
                budget: meshes[i].budget,
                mesh_vertices: meshes[i].vertex_count(),
                rect,
                outline,
                split,
                saved_vs_outline: outline.fragments - split.fragments,
                saved_vs_rect,
                vertices_added,
                saved_per_vertex: (vertices_added > 0.0).then(|| saved_vs_rect / vertices_added),
                exact: get(Strategy::Exact, i),
                layered: get(Strategy::Layered, i),
                layered_hsr: get(Strategy::LayeredHsr, i),
                saving_share: saving_share(
                    rect.fragments,
                    split.fragments,
                    layer_means
                        .contains_key(&Strategy::Exact)
                        .then(|| get(Strategy::Exact, i).fragments),
                ),
            }
        })
        .collect();
    (strategies, layers)
}

/// Mean fragments per frame of `strategy` over the camera positions.
pub fn mean_fragments(
    strategy: Strategy,
    specs: &[LayerSpec],
    meshes: &[&LayerMesh],
    viewport: [u32; 2],
    cameras: &[f64],
) -> f64 {
    let frames = score_frames(&[strategy], specs, meshes, viewport, cameras);
    frames.iter().map(|f| f.total.fragments).sum::<f64>() / frames.len().max(1) as f64
}
