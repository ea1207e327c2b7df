//! A frame on a simulated GPU: draws with depth, and what they cost.
//!
//! [`render`] draws a list of [`Draw`]s in order into a viewport and counts,
//! per pixel and per draw, the work a GPU would do. The model:
//!
//! * **Coverage**: pixel centres with the top-left rule, on vertex positions
//!   snapped to 1/256 pixel, exactly (see [`crate::raster`]). Pixels outside
//!   the viewport are not counted.
//! * **Depth**: a depth buffer initialised to 1.0 (far). A draw has one
//!   constant depth in [0, 1], 0 nearest. With `depth_test` a fragment
//!   passes iff its depth is *less* than the stored one (LESS); without, it
//!   always passes. With `depth_write` a passing fragment stores its depth.
//!   Triangles are drawn in order, within a draw too.
//! * **Fragments**: covered pixels that pass the depth test. Only they are
//!   shaded; a fragment failing the test is discarded before shading and
//!   costs nothing (an ideal early depth test).
//! * **Lanes**: fragments are shaded in aligned 2x2 quads, each triangle on
//!   its own; a quad holding at least one fragment of a triangle costs 4
//!   shader lanes, its idle lanes included (common practice, no source).
//!   Quads are formed from the fragments that *pass* the depth test, so a
//!   quad whose pixels all fail costs nothing. A triangle's lanes are 4 x the
//!   number of quads holding at least one of its fragments.
//! * **Vertices**: the number of distinct indices a draw references, i.e.
//!   vertex shader invocations assuming a perfect post-transform vertex
//!   cache within a draw. **Vertices in groups of 4**: the vertices shaded
//!   by a GPU that shades vertices in groups of 4 consecutive indices
//!   (common practice on tile-based mobile GPUs, no source): a draw that
//!   references any index of a group 4k..4k+3 shades the whole group (the
//!   last group of the array only the vertices that exist).
//!   **Triangles**: `indices.len() / 3`, drawn or not.
//! * **Blending** changes no count; `blend` is carried for the record.
//!
//! `counts` in the result holds, per pixel, the fragments shaded there.
//!
//! [`spans::measure`] computes the same numbers (every [`DrawStats`] and the
//! most fragments at one pixel) without per-pixel buffers, from runs of
//! equal depth and count per row; scoring uses it, images use [`render`].
//! [`coverage`] gives one draw's per-pixel counts into a reused buffer, and
//! sums of per-pixel weights over a triangle list's coverage, exactly as
//! `render` counts them (the scene allocation's weights and gains).

pub mod coverage;
pub mod spans;

#[cfg(test)]
mod measure_props;

pub use coverage::{coverage_into, coverage_rows_into, RowSums};
pub use spans::{measure, FrameStats, SpanBuffer};

use crate::raster::{QuadTracker, Triangle};
use serde::{Deserialize, Serialize};

/// Consecutive indices a tile-based GPU shades together (common practice,
/// no source).
pub const VERTEX_GROUP: u32 = 4;

/// One draw call: a triangle list at one constant depth.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Draw {
    /// The layer's name, for reports.
    pub layer: String,
    /// Drawn with blending on (changes no count).
    pub blend: bool,
    /// In [0, 1], 0 nearest.
    pub depth: f32,
    /// Test LESS against the depth buffer.
    pub depth_test: bool,
    /// Store the depth of passing fragments.
    pub depth_write: bool,
    /// x0, y0, x1, y1, ...: screen pixels, origin top-left, y down.
    pub positions: Vec<f32>,
    /// A triangle list into `positions`.
    pub indices: Vec<u32>,
}

/// A draw [`render`] cannot take: the layer, and what is wrong in words.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("layer {layer}: {problem}")]
pub struct DrawError {
    /// The draw's layer.
    pub layer: String,
    /// What is wrong and what to give instead.
    pub problem: String,
}

impl Draw {
    /// Checks what [`render`] requires of a draw: an even number of finite
    /// coordinates, whole triangles, every index naming a vertex, and a
    /// depth in [0, 1]. The message names the layer and says what is wrong.
    pub fn validate(&self) -> Result<(), DrawError> {
        let bad = |problem: String| {
            Err(DrawError {
                layer: self.layer.clone(),
                problem,
            })
        };
        if !(0.0..=1.0).contains(&self.depth) {
            return bad(format!(
                "depth {} is outside [0, 1]; give a depth from 0 (nearest) to 1 (farthest)",
                self.depth
            ));
        }
        if !self.positions.len().is_multiple_of(2) {
            return bad(format!(
                "{} position coordinates is an odd number; positions are x, y pairs",
                self.positions.len()
            ));
        }
        if let Some(i) = self.positions.iter().position(|v| !v.is_finite()) {
            return bad(format!(
                "position coordinate {i} is {}; positions must be finite",
                self.positions[i]
            ));
        }
        if !self.indices.len().is_multiple_of(3) {
            return bad(format!(
                "{} indices is not a whole number of triangles (a multiple of 3)",
                self.indices.len()
            ));
        }
        let n = self.positions.len() / 2;
        if let Some(&i) = self.indices.iter().find(|&&i| i as usize >= n) {
            return bad(format!(
                "index {i} names no vertex; the draw has {n} vertices"
            ));
        }
        Ok(())
    }

    pub(crate) fn vertex(&self, i: u32) -> [f32; 2] {
        let i = i as usize * 2;
        [self.positions[i], self.positions[i + 1]]
    }

    /// Distinct indices referenced (vertex shader invocations with a perfect
    /// post-transform cache).
    pub(crate) fn distinct_vertices(&self) -> u64 {
        self.vertex_counts(1)
    }

    /// Vertices shaded when a GPU shades whole groups of `group`
    /// consecutive indices: every group holding a referenced index, each
    /// as many vertices as it has (the last may be short).
    pub fn vertices_in_groups(&self, group: u32) -> u64 {
        self.vertex_counts(group)
    }

    fn vertex_counts(&self, group: u32) -> u64 {
        let n = (self.positions.len() / 2) as u64;
        let g = group.max(1) as u64;
        let mut seen = vec![false; n.div_ceil(g) as usize];
        let mut count = 0;
        for &i in &self.indices {
            let k = i as u64 / g;
            if !std::mem::replace(&mut seen[k as usize], true) {
                count += g.min(n - k * g);
            }
        }
        count
    }
}

/// What a draw, or the frame, costs.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct DrawStats {
    /// Fragments shaded (covered and passing the depth test).
    pub fragments: u64,
    /// Shader lanes: 4 per (triangle, 2x2 quad) with a shaded fragment.
    pub lanes: u64,
    /// Vertex shader invocations (distinct indices referenced).
    pub vertices: u64,
    /// Vertices shaded by a GPU that shades groups of 4 consecutive indices
    /// ([`Draw::vertices_in_groups`]).
    pub vertices_in_groups: u64,
    /// Triangles submitted.
    pub triangles: u64,
}

impl DrawStats {
    fn add(&mut self, o: &DrawStats) {
        self.fragments += o.fragments;
        self.lanes += o.lanes;
        self.vertices += o.vertices;
        self.vertices_in_groups += o.vertices_in_groups;
        self.triangles += o.triangles;
    }
}

/// The counts of a rendered frame.
#[derive(Clone, Debug, PartialEq)]
pub struct FrameResult {
    /// Viewport width, in pixels.
    pub width: u32,
    /// Viewport height, in pixels.
    pub height: u32,
    /// Per pixel, row-major: fragments shaded there.
    pub counts: Vec<u32>,
    /// Per draw, in the order of the draws.
    pub per_draw: Vec<DrawStats>,
    /// The sum over the draws.
    pub total: DrawStats,
}

impl FrameResult {
    /// Pixels in the viewport.
    pub fn pixels(&self) -> u64 {
        self.width as u64 * self.height as u64
    }

    /// Mean fragments shaded per pixel of the viewport (0 if it is empty).
    pub fn fragments_per_pixel(&self) -> f64 {
        self.per_pixel(self.total.fragments)
    }

    /// Mean shader lanes per pixel of the viewport (0 if it is empty).
    pub fn lanes_per_pixel(&self) -> f64 {
        self.per_pixel(self.total.lanes)
    }

    fn per_pixel(&self, n: u64) -> f64 {
        match self.pixels() {
            0 => 0.0,
            p => n as f64 / p as f64,
        }
    }
}

/// Draws `draws` in order into a viewport of [width, height] pixels and
/// counts the work (see the module docs for the model).
///
/// # Panics
/// If a draw fails [`Draw::validate`]; validate draws built from input
/// first to report the problem as an error.
///
/// # Example
/// ```
/// use underdraw::frame::{render, Draw};
/// // a 4 x 4 pixel square (two triangles) drawn twice at one depth, with
/// // depth test and write, on an 8 x 8 viewport
/// let square = Draw {
///     layer: "square".into(),
///     blend: false,
///     depth: 0.5,
///     depth_test: true,
///     depth_write: true,
///     positions: vec![0.0, 0.0, 4.0, 0.0, 4.0, 4.0, 0.0, 4.0],
///     indices: vec![0, 1, 2, 0, 2, 3],
/// };
/// let r = render([8, 8], &[square.clone(), square]);
/// // top-left rule (Direct3D rasterization rules, from memory): the 16 pixel
/// // centres inside are shaded once each, none on the shared diagonal twice
/// assert_eq!(r.per_draw[0].fragments, 16);
/// assert_eq!(r.counts.iter().filter(|&&c| c == 1).count(), 16);
/// // the second draw is not nearer (LESS fails at equal depth): nothing shaded
/// assert_eq!(r.per_draw[1].fragments, 0);
/// // the diagonal splits 2 of the 4 quads: each triangle pays for 3 quads
/// // of 4 lanes (2x2 quad shading, common practice, no source)
/// assert_eq!(r.per_draw[0].lanes, 24);
/// assert_eq!(r.per_draw[0].vertices, 4);
/// ```
pub fn render(viewport: [u32; 2], draws: &[Draw]) -> FrameResult {
    let [width, height] = viewport;
    let w = width as usize;
    let mut counts = vec![0u32; w * height as usize];
    let mut depth = vec![1.0f32; counts.len()];
    let mut quads = QuadTracker::new(width);
    let mut per_draw = Vec::with_capacity(draws.len());
    let mut total = DrawStats::default();
    for (n, d) in draws.iter().enumerate() {
        if let Err(e) = d.validate() {
            panic!("render: draw {n}: {e}");
        }
        let mut st = DrawStats {
            vertices: d.distinct_vertices(),
            vertices_in_groups: d.vertices_in_groups(VERTEX_GROUP),
            triangles: (d.indices.len() / 3) as u64,
            ..DrawStats::default()
        };
        for t in d.indices.chunks_exact(3) {
            let (a, b, c) = (d.vertex(t[0]), d.vertex(t[1]), d.vertex(t[2]));
            let Some(tri) = Triangle::new(a, b, c, viewport) else {
                continue;
            };
            quads.next_triangle();
            for y in tri.rows() {
                let span = tri.span(y);
                let row = y as usize * w;
                let passes =
                    |depth: &[f32], x: u32| !d.depth_test || d.depth < depth[row + x as usize];
                let mut x = span.start;
                while x < span.end {
                    if !passes(&depth, x) {
                        x += 1;
                        continue;
                    }
                    // a run of pixels that pass the depth test
                    let start = x;
                    while x < span.end && passes(&depth, x) {
                        x += 1;
                    }
                    let run = row + start as usize..row + x as usize;
                    counts[run.clone()].iter_mut().for_each(|c| *c += 1);
                    if d.depth_write {
                        depth[run].fill(d.depth);
                    }
                    st.fragments += (x - start) as u64;
                    st.lanes += 4 * quads.mark(y, start..x);
                }
            }
        }
        total.add(&st);
        per_draw.push(st);
    }
    FrameResult {
        width,
        height,
        counts,
        per_draw,
        total,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn square() -> Draw {
        Draw {
            layer: "sky".into(),
            blend: false,
            depth: 0.5,
            depth_test: true,
            depth_write: true,
            positions: vec![0.0, 0.0, 4.0, 0.0, 4.0, 4.0, 0.0, 4.0],
            indices: vec![0, 1, 2, 0, 2, 3],
        }
    }

    #[test]
    fn validate_names_the_layer_and_the_problem() {
        assert_eq!(square().validate(), Ok(()));
        type Spoil = fn(&mut Draw);
        let bad: [(Spoil, &str); 5] = [
            (|d| d.depth = 1.5, "depth"),
            (|d| d.depth = f32::NAN, "depth"),
            (|d| d.positions.push(1.0), "odd"),
            (|d| d.positions[3] = f32::INFINITY, "finite"),
            (|d| d.indices.push(0), "multiple of 3"),
        ];
        for (spoil, word) in bad {
            let mut d = square();
            spoil(&mut d);
            let e = d.validate().unwrap_err().to_string();
            assert!(e.contains("sky") && e.contains(word), "{e}");
        }
        let mut d = square();
        d.indices[4] = 4;
        let e = d.validate().unwrap_err().to_string();
        assert!(e.contains("index 4") && e.contains("4 vertices"), "{e}");
    }

    #[test]
    #[should_panic(expected = "draw 1")]
    fn render_refuses_an_invalid_draw() {
        let mut d = square();
        d.indices[0] = 9;
        render([8, 8], &[square(), d]);
    }

    /// Groups of 4 consecutive indices (common practice on tile-based GPUs,
    /// no source), counted by hand.
    #[test]
    fn vertices_in_groups_of_4_by_hand() {
        let with = |n: usize, indices: Vec<u32>| Draw {
            positions: vec![0.0; 2 * n],
            indices,
            ..square()
        };
        // 0, 1, 2 share group 0: 4 shaded for 3 used
        assert_eq!(with(8, vec![0, 1, 2]).vertices_in_groups(4), 4);
        // 0, 4, 8 touch groups 0, 1, 2: 12 shaded for 3 used
        assert_eq!(with(12, vec![0, 4, 8]).vertices_in_groups(4), 12);
        // 3, 4, 5 straddle groups 0 and 1: 8
        assert_eq!(with(8, vec![3, 4, 5]).vertices_in_groups(4), 8);
        // the last group of a 10-vertex array holds 2: 8, 9 and 0 cost 6
        assert_eq!(with(10, vec![8, 9, 0]).vertices_in_groups(4), 6);
        // groups of 1 are the perfect cache's distinct indices
        let d = with(10, vec![8, 9, 0, 0, 9, 5]);
        assert_eq!(d.vertices_in_groups(1), 4);
        assert_eq!(d.distinct_vertices(), 4);
    }

    #[test]
    fn equal_depth_fails_less_and_totals_add_up() {
        // LESS: a second draw at the same depth is hidden by the first.
        let r = render([8, 8], &[square(), square()]);
        assert_eq!(r.per_draw[1].fragments, 0);
        assert_eq!(r.per_draw[1].lanes, 0);
        assert_eq!(r.total.fragments, 16);
        // 4 quads; the diagonal (0, 0)-(4, 4) splits quads (0, 0) and (1, 1)
        // between the two triangles, which pay for them both: 6 x 4 lanes.
        assert_eq!(r.total.lanes, 24);
        assert_eq!(r.total.vertices, 8);
        assert_eq!(r.total.triangles, 4);
        assert_eq!(r.fragments_per_pixel(), 16.0 / 64.0);
        assert_eq!(render([0, 0], &[square()]).fragments_per_pixel(), 0.0);
    }
}
