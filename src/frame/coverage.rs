//! One draw alone, per pixel, without the frame's other buffers: what the
//! scene allocation ([`crate::scene::budget`]) needs many times over.
//!
//! * [`coverage_into`]: the per-pixel counts of one draw rendered alone
//!   into a cleared frame, written into a caller's buffer (no depth buffer,
//!   no quad tracking, no fresh allocation per frame);
//! * [`RowSums`]: per-pixel weights as row prefix sums, so that the sum of
//!   the weights over the pixels a triangle list covers (each pixel once
//!   per triangle covering it) costs one subtraction per triangle row
//!   instead of a rendered buffer.
//!
//! Both are exact: they walk the same triangle spans as
//! [`super::render`] ([`Triangle::row_spans`]) and count in integers;
//! the tests below compare them with `render` on random draws.

use super::{Draw, DrawError};
use crate::raster::Triangle;

/// Per pixel (row-major), the fragments `draw` shades when it is drawn
/// alone into a cleared frame: exactly `render(viewport, &[draw]).counts`
/// ([`super::render`]). `counts` is resized to the viewport and
/// overwritten, so a caller drawing many frames reuses one buffer.
///
/// # Panics
/// If the draw fails [`Draw::validate`], as `render` does.
pub fn coverage_into(viewport: [u32; 2], draw: &Draw, counts: &mut Vec<u32>) {
    counts.clear();
    coverage_rows_into(viewport, draw, counts, 0..0);
}

/// As [`coverage_into`], for a caller that keeps `counts` from one draw to
/// the next and reads only the rows a draw touched: `counts` is either
/// empty or the viewport's size and zero outside the rows `dirty` (what
/// the last call returned), and only those rows are cleared before
/// drawing. Returns the rows the draw may have written: every other row
/// of `counts` is zero afterwards, and the whole buffer is exactly
/// `render(viewport, &[draw]).counts`.
///
/// # Panics
/// If the draw fails [`Draw::validate`], as `render` does.
pub fn coverage_rows_into(
    viewport: [u32; 2],
    draw: &Draw,
    counts: &mut Vec<u32>,
    dirty: std::ops::Range<usize>,
) -> std::ops::Range<usize> {
    if let Err(e) = draw.validate() {
        panic!("coverage_into: draw 0: {e}");
    }
    let w = viewport[0] as usize;
    let h = viewport[1] as usize;
    if counts.len() != w * h {
        counts.clear();
        counts.resize(w * h, 0);
    } else {
        let rows = dirty.start.min(h)..dirty.end.min(h);
        if rows.start < rows.end {
            counts[rows.start * w..rows.end * w].fill(0);
        }
    }
    // A cleared depth buffer holds 1.0 (far). With the depth test (LESS),
    // a draw at depth 1.0 shades nothing; with depth write too, a pixel
    // passes once (the stored depth is then the draw's own, which fails
    // LESS); otherwise every triangle covering a pixel shades it.
    if draw.depth_test && !(draw.depth < 1.0) {
        return 0..0;
    }
    let cap = if draw.depth_test && draw.depth_write {
        1
    } else {
        u32::MAX
    };
    let (mut lo, mut hi) = (usize::MAX, 0usize);
    for t in draw.indices.chunks_exact(3) {
        let (a, b, c) = (draw.vertex(t[0]), draw.vertex(t[1]), draw.vertex(t[2]));
        let Some(tri) = Triangle::new(a, b, c, viewport) else {
            continue;
        };
        for (y, span) in tri.row_spans() {
            let y = y as usize;
            lo = lo.min(y);
            hi = hi.max(y + 1);
            let row = y * w;
            for n in &mut counts[row + span.start as usize..row + span.end as usize] {
                if *n < cap {
                    *n += 1;
                }
            }
        }
    }
    if lo < hi {
        lo..hi
    } else {
        0..0
    }
}

/// Per-pixel weights of a viewport as prefix sums along each row.
#[derive(Clone, Debug)]
pub struct RowSums {
    viewport: [u32; 2],
    /// Per row, `width + 1` sums: `sums[row * (width + 1) + x]` is the sum
    /// of the row's weights left of pixel x.
    sums: Vec<u64>,
}

impl RowSums {
    /// The prefix sums of `weights` (row-major, one per pixel of the
    /// viewport).
    ///
    /// # Panics
    /// If `weights` does not hold one weight per pixel.
    pub fn new(viewport: [u32; 2], weights: &[u64]) -> RowSums {
        let w = viewport[0] as usize;
        assert_eq!(
            weights.len(),
            w * viewport[1] as usize,
            "one weight a pixel"
        );
        let mut sums = Vec::with_capacity((w + 1) * viewport[1] as usize);
        for row in weights.chunks_exact(w.max(1)).take(viewport[1] as usize) {
            let mut s = 0u64;
            sums.push(0);
            for &v in row {
                s += v;
                sums.push(s);
            }
        }
        RowSums { viewport, sums }
    }

    /// The sum of all the weights.
    pub fn total(&self) -> u64 {
        let stride = self.viewport[0] as usize + 1;
        self.sums
            .chunks_exact(stride)
            .map(|row| row[stride - 1])
            .sum()
    }

    /// The sum of the weights over the pixels covered by the triangles of
    /// `indices` (a triangle list into `positions`, x, y pairs in pixels),
    /// each pixel counted once per triangle covering it: exactly
    /// `sum(counts[p] * weights[p])` with `counts` those of the list drawn
    /// alone without depth test ([`super::render`]).
    ///
    /// Fails ([`DrawError`], as [`Draw::validate`]) when the positions are
    /// not finite pairs or an index names no vertex.
    pub fn covered(&self, positions: &[f32], indices: &[u32]) -> Result<u64, DrawError> {
        // the checks of a draw (the vertex arrays are small: a copy)
        let check = Draw {
            layer: String::new(),
            blend: false,
            depth: 0.5,
            depth_test: false,
            depth_write: false,
            positions: positions.to_vec(),
            indices: indices.to_vec(),
        };
        check.validate()?;
        let stride = self.viewport[0] as usize + 1;
        let mut total = 0u64;
        for t in indices.chunks_exact(3) {
            let (a, b, c) = (check.vertex(t[0]), check.vertex(t[1]), check.vertex(t[2]));
            let Some(tri) = Triangle::new(a, b, c, self.viewport) else {
                continue;
            };
            for (y, span) in tri.row_spans() {
                let row = y as usize * stride;
                total += self.sums[row + span.end as usize] - self.sums[row + span.start as usize];
            }
        }
        Ok(total)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frame::render;
    use crate::test_rng::Lcg;

    /// A random draw: triangles over a small vertex pool (shared edges,
    /// degenerate ones, some vertices off screen, coordinates on the
    /// 1/256 grid and on pixel centres), random depth state.
    fn random_draw(rng: &mut Lcg, w: u32, h: u32) -> Draw {
        let coord = |rng: &mut Lcg, size: u32| match rng.below(4) {
            0 => rng.below(size as u64 + 6) as f32 - 3.0,
            1 => rng.below(size as u64 + 6) as f32 - 2.5,
            _ => (rng.below(256 * (size as u64 + 8)) as f32 - 1024.0) / 256.0,
        };
        let n = 3 + rng.below(10) as u32;
        let positions = (0..n)
            .flat_map(|_| [coord(rng, w), coord(rng, h)])
            .collect();
        let indices = (0..3 * (1 + rng.below(12)))
            .map(|_| rng.below(n as u64) as u32)
            .collect();
        Draw {
            layer: "random".into(),
            blend: false,
            depth: [0.0f32, 0.5, 1.0][rng.below(3) as usize],
            depth_test: rng.below(2) == 0,
            depth_write: rng.below(2) == 0,
            positions,
            indices,
        }
    }

    /// `render` (checked against a brute-force rasterizer in
    /// tests/raster.rs) is the reference for both.
    #[test]
    fn coverage_and_row_sums_are_render_counts() {
        let mut rng = Lcg(21);
        let mut counts = Vec::new();
        let mut nonzero = 0;
        for _ in 0..3000 {
            let (w, h) = (1 + rng.below(40) as u32, 1 + rng.below(40) as u32);
            let d = random_draw(&mut rng, w, h);
            let r = render([w, h], std::slice::from_ref(&d));
            coverage_into([w, h], &d, &mut counts);
            assert_eq!(counts, r.counts, "{d:?} on {w}x{h}");
            let weights: Vec<u64> = (0..w * h).map(|_| rng.below(1000)).collect();
            let flat = Draw {
                depth_test: false,
                depth_write: false,
                ..d.clone()
            };
            let plain = render([w, h], &[flat]).counts;
            let want: u64 = plain
                .iter()
                .zip(&weights)
                .map(|(&c, &v)| c as u64 * v)
                .sum();
            let got = RowSums::new([w, h], &weights).covered(&d.positions, &d.indices);
            assert_eq!(got, Ok(want), "{d:?} on {w}x{h}");
            let sums = RowSums::new([w, h], &weights);
            assert_eq!(sums.total(), weights.iter().sum::<u64>());
            nonzero += (want > 0) as usize;
        }
        // most draws cover something, or the comparison would show little
        assert!(nonzero > 1000, "{nonzero}");
    }

    #[test]
    fn a_reused_buffer_is_overwritten() {
        let mut counts = vec![7; 1000];
        let d = Draw {
            layer: "sq".into(),
            blend: false,
            depth: 0.5,
            depth_test: true,
            depth_write: true,
            positions: vec![0.0, 0.0, 4.0, 0.0, 4.0, 4.0, 0.0, 4.0],
            indices: vec![0, 1, 2, 0, 2, 3, 0, 1, 2],
        };
        coverage_into([8, 8], &d, &mut counts);
        assert_eq!(counts, render([8, 8], &[d]).counts);
    }

    /// One buffer kept across many draws on one viewport, only the rows
    /// the last draw touched cleared: every frame equals `render`'s, and
    /// the rows outside the returned range are zero.
    #[test]
    fn a_buffer_kept_across_draws_clears_only_the_touched_rows() {
        let mut rng = Lcg(5);
        let (w, h) = (33, 29);
        let mut counts = Vec::new();
        let mut rows = 0..0;
        let mut narrow = 0;
        for _ in 0..2000 {
            let d = random_draw(&mut rng, w, h);
            rows = coverage_rows_into([w, h], &d, &mut counts, rows);
            assert_eq!(counts, render([w, h], std::slice::from_ref(&d)).counts);
            let outside = counts[..rows.start * w as usize]
                .iter()
                .chain(&counts[rows.end * w as usize..]);
            assert!(outside.into_iter().all(|&c| c == 0), "{d:?}");
            narrow += (rows.len() < h as usize) as usize;
        }
        // most draws leave rows untouched, or the clearing would go untested
        assert!(narrow > 500, "{narrow}");
    }

    #[test]
    fn row_sums_refuse_an_index_past_the_vertices() {
        let sums = RowSums::new([4, 4], &[1; 16]);
        let e = sums.covered(&[0.0, 0.0, 4.0, 0.0, 4.0, 4.0], &[0, 1, 3]);
        assert!(e.unwrap_err().problem.contains("index 3"));
    }
}
