//! The contract's two regions on the half-texel grid, computed straight from
//! their definitions (independently of the builder's masks).
//!
//! Cell `(a, b)` of the grid is the square `[a/2, a/2 + 1/2] x [b/2, b/2 + 1/2]`.
//! Every region boundary lies on a multiple of 0.5 texel (level-0 bilinear
//! erodes by 0.5, levels >= 1 by integers), so each cell is wholly in or out.
//!
//! Method: erosion / dilation by the square of half-side `r` means a cell is
//! in `erode(O_l)` iff the cell grown by `r` on every side lies inside the
//! extended `O_l`, and in `dilate(V_l)` iff that grown rectangle meets the
//! extended `V_l`. The grown rectangle's interior meets a run of texels on
//! each axis; addressing maps that run back into the image (clamp: clamp
//! the texel index; wrap: index mod size, which may split the run in two)
//! and the run is widened to whole level-`l` blocks. A level-`l` block is
//! opaque iff all its texels are, visible iff any is, so "all touched blocks
//! opaque" is "no non-opaque texel in the widened texel rectangle", and "any
//! touched block visible" is "some visible texel in it", both answered by a
//! summed-area table of texel counts.
//!
//! Images are assumed to have fewer than 2^32 texels (counts are u32).

use crate::alpha::AlphaMap;
use crate::settings::{AlphaThresholds, Filter, FilterMode, Wrap};
use rayon::prelude::*;

/// Summed-area table of one texel predicate.
struct Counts {
    w: usize,
    sums: Vec<u32>,
}

impl Counts {
    fn new(alpha: &AlphaMap, pred: impl Fn(u8) -> bool) -> Counts {
        let (w, h) = (alpha.width as usize, alpha.height as usize);
        let mut sums = vec![0u32; (w + 1) * (h + 1)];
        for y in 0..h {
            let mut row = 0u32;
            for x in 0..w {
                row += pred(alpha.alpha[y * w + x]) as u32;
                sums[(y + 1) * (w + 1) + x + 1] = sums[y * (w + 1) + x + 1].wrapping_add(row);
            }
        }
        Counts { w, sums }
    }

    /// Texels in the inclusive rectangle `xs` x `ys` for which the predicate holds.
    fn rect(&self, xs: (usize, usize), ys: (usize, usize)) -> u32 {
        let s = |x: usize, y: usize| self.sums[y * (self.w + 1) + x];
        s(xs.1 + 1, ys.1 + 1)
            .wrapping_sub(s(xs.0, ys.1 + 1))
            .wrapping_sub(s(xs.1 + 1, ys.0))
            .wrapping_add(s(xs.0, ys.0))
    }
}

/// Image texels (inclusive ranges, at most two) reached on one axis.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
struct Span {
    r: [(usize, usize); 2],
    n: usize,
}

impl Span {
    fn ranges(&self) -> &[(usize, usize)] {
        &self.r[..self.n]
    }
}

/// One axis at one level: the cells grouped into runs that reach the same texels.
struct Axis {
    cell_run: Vec<u32>,
    runs: Vec<Span>,
    /// Cells `starts[k]..starts[k + 1]` form run `k` (one extra entry: the cell count).
    starts: Vec<usize>,
}

/// `n` texels on the axis, `reach` = r in half-texels.
fn axis(n: usize, level: u32, reach: i64, wrap: bool) -> Axis {
    let block = 1usize << level;
    let to_blocks =
        |(p, q): (usize, usize)| ((p / block) * block, ((q / block + 1) * block).min(n) - 1);
    let last = n as i64 - 1;
    let mut cell_run = Vec::with_capacity(2 * n);
    let mut runs: Vec<Span> = Vec::new();
    let mut starts = Vec::new();
    for a in 0..2 * n as i64 {
        // Texels whose open square meets the open interval (a - R, a + 1 + R) (half-texel units).
        let i0 = (a - reach).div_euclid(2);
        let i1 = (a + reach).div_euclid(2);
        let span = if !wrap {
            let r = to_blocks((i0.clamp(0, last) as usize, i1.clamp(0, last) as usize));
            Span { r: [r, r], n: 1 }
        } else if i1 - i0 + 1 >= n as i64 {
            Span {
                r: [(0, n - 1); 2],
                n: 1,
            }
        } else {
            let (p, q) = (
                i0.rem_euclid(n as i64) as usize,
                i1.rem_euclid(n as i64) as usize,
            );
            if p <= q {
                let r = to_blocks((p, q));
                Span { r: [r, r], n: 1 }
            } else {
                let (lo, hi) = (to_blocks((0, q)), to_blocks((p, n - 1)));
                if lo.1 + 1 >= hi.0 {
                    Span {
                        r: [(0, n - 1); 2],
                        n: 1,
                    }
                } else {
                    Span { r: [lo, hi], n: 2 }
                }
            }
        };
        if runs.last() != Some(&span) {
            runs.push(span);
            starts.push(a as usize);
        }
        cell_run.push(runs.len() as u32 - 1);
    }
    starts.push(2 * n);
    Axis {
        cell_run,
        runs,
        starts,
    }
}

/// The safe-opaque region S and the must-cover region C as half-grid masks
/// (row-major, `grid w = 2W` by `grid h = 2H`, both clipped to the image).
pub fn regions_for_check(
    alpha: &AlphaMap,
    filter: Filter,
    t: AlphaThresholds,
    wrap: Wrap,
) -> (Vec<bool>, Vec<bool>, usize, usize) {
    let (w, h) = (alpha.width as usize, alpha.height as usize);
    let (gw, gh) = (2 * w, 2 * h);
    if w == 0 || h == 0 {
        return (Vec::new(), Vec::new(), gw, gh);
    }
    let not_opaque = Counts::new(alpha, |a| a < t.opaque_min);
    let visible = Counts::new(alpha, |a| a >= t.visible_min);
    // From the first level whose single block is the whole image on, every
    // level gives the same regions (all or nothing, whatever r), so stop there.
    let mut top = 0u32;
    while (1usize << top) < w.max(h) {
        top += 1;
    }
    let last = filter.mip_levels.min(top);
    let mut safe = vec![true; gw * gh];
    let mut cover = vec![false; gw * gh];
    for level in 0..=last {
        // r = 2^(l-1) texels = 2^l half-texels under bilinear; 0 under nearest.
        let reach = match filter.mode {
            FilterMode::Nearest => 0,
            FilterMode::Bilinear => 1i64 << level,
        };
        let ax = axis(w, level, reach, wrap.x());
        let ay = axis(h, level, reach, wrap.y());
        let nx = ax.runs.len();
        let (not_opaque, visible, ax_runs) = (&not_opaque, &visible, &ax.runs);
        let table: Vec<(bool, bool)> = ay
            .runs
            .par_iter()
            .flat_map_iter(|sy| {
                ax_runs.iter().map(move |sx| {
                    let mut bad = 0u32;
                    let mut vis = 0u32;
                    for &xs in sx.ranges() {
                        for &ys in sy.ranges() {
                            bad |= not_opaque.rect(xs, ys);
                            vis |= visible.rect(xs, ys);
                        }
                    }
                    (bad == 0, vis != 0)
                })
            })
            .collect();
        safe.par_chunks_mut(gw)
            .zip(cover.par_chunks_mut(gw))
            .enumerate()
            .for_each(|(b, (srow, crow))| {
                let row = &table[ay.cell_run[b] as usize * nx..][..nx];
                for (k, &(s, c)) in row.iter().enumerate() {
                    let cells = ax.starts[k]..ax.starts[k + 1];
                    if !s {
                        srow[cells.clone()].fill(false);
                    }
                    if c {
                        crow[cells].fill(true);
                    }
                }
            });
    }
    (safe, cover, gw, gh)
}
