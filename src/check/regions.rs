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
//! touched block visible" is "some visible texel in it".
//!
//! Both are answered without any per-texel or per-cell table: the grid
//! rows fall into y-runs that reach the same texel rows; for each y-run,
//! per-column flags ("a non-opaque texel in these rows", "a visible one")
//! are OR-ed from those rows, then prefix counts over the flags answer
//! every x-run of cells. So the work is a few rows per y-run and the
//! scratch memory is O(width); the result is stored as [`CellRuns`], whose
//! size follows its runs, not the area. Levels combine row by row: S is the
//! intersection over levels, C the union.
//!
//! Images are assumed to be narrower than 2^31 texels (column counts and
//! cell indices are u32).

use super::runs::{intersect_into, union_into, CellRuns, Run};
use crate::alpha::AlphaMap;
use crate::settings::{AlphaThresholds, Filter, FilterMode, Wrap};
use rayon::prelude::*;

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

/// Per-thread scratch for one y-run: column flags and their prefix counts.
struct Columns {
    bad: Vec<u8>,
    vis: Vec<u8>,
    /// Prefix counts of both flags in one word: non-opaque columns in the
    /// high 32 bits, visible ones in the low 32 (a count never exceeds the
    /// width, below 2^31, so a difference of two prefixes never borrows
    /// across the halves and one subtraction answers both).
    sums: Vec<u64>,
}

impl Columns {
    fn new(w: usize) -> Columns {
        Columns {
            bad: vec![0; w],
            vis: vec![0; w],
            sums: vec![0; w + 1],
        }
    }

    /// One y-run's row of S_l and of C_l (as maximal cell runs), from the
    /// texel rows `sy` reaches and the x-axis runs `ax`.
    fn row(&mut self, alpha: &AlphaMap, t: AlphaThresholds, sy: &Span, ax: &Axis) -> [Vec<Run>; 2] {
        let w = alpha.width as usize;
        self.bad.fill(0);
        self.vis.fill(0);
        for &(y0, y1) in sy.ranges() {
            for texels in alpha.alpha[y0 * w..(y1 + 1) * w].chunks_exact(w) {
                for ((b, v), &a) in self.bad.iter_mut().zip(&mut self.vis).zip(texels) {
                    *b |= (a < t.opaque_min) as u8;
                    *v |= (a >= t.visible_min) as u8;
                }
            }
        }
        // a y-run whose columns all agree (every texel opaque, or none
        // visible and none opaque: a solid or an empty row) gives every
        // x-run the same answers, so the row is whole or empty
        let bad: u32 = self.bad.iter().map(|&b| b as u32).sum();
        let vis: u32 = self.vis.iter().map(|&v| v as u32).sum();
        let all = w as u32;
        if (bad == 0 || bad == all) && (vis == 0 || vis == all) {
            let whole = vec![[0, ax.starts[ax.runs.len()] as u32]];
            let safe = if bad == 0 { whole.clone() } else { Vec::new() };
            let cover = if vis == all { whole } else { Vec::new() };
            return [safe, cover];
        }
        let mut total = 0u64;
        for ((sum, &b), &v) in self.sums[1..].iter_mut().zip(&self.bad).zip(&self.vis) {
            total += ((b as u64) << 32) | v as u64;
            *sum = total;
        }
        let sums = &self.sums;
        let count = |sx: &Span| {
            let (p, q) = sx.r[0];
            let first = sums[q + 1] - sums[p];
            if sx.n == 1 {
                first
            } else {
                let (p, q) = sx.r[1];
                first + (sums[q + 1] - sums[p])
            }
        };
        // the x-runs tile the row in order, so each region's runs open
        // where a run is in and the one before is not, and close where a
        // run is out after one that is (maximal by construction)
        let (mut safe, mut cover) = (Vec::new(), Vec::new());
        let (mut safe_from, mut cover_from) = (None, None);
        for (sx, &s) in ax.runs.iter().zip(&ax.starts) {
            let s = s as u32;
            let both = count(sx);
            match (both >> 32 == 0, safe_from) {
                (true, None) => safe_from = Some(s),
                (false, Some(from)) => {
                    safe.push([from, s]);
                    safe_from = None;
                }
                _ => {}
            }
            match (both & 0xffff_ffff != 0, cover_from) {
                (true, None) => cover_from = Some(s),
                (false, Some(from)) => {
                    cover.push([from, s]);
                    cover_from = None;
                }
                _ => {}
            }
        }
        let end = ax.starts[ax.runs.len()] as u32;
        if let Some(from) = safe_from {
            safe.push([from, end]);
        }
        if let Some(from) = cover_from {
            cover.push([from, end]);
        }
        [safe, cover]
    }
}

/// Combines `acc` (one row per grid row, or none yet) with a level's
/// regions `lvl` (one row per y-run of `ay`), by `op`, row by row.
fn combine(
    acc: Option<CellRuns>,
    lvl: &CellRuns,
    ay: &Axis,
    op: fn(&[Run], &[Run], &mut Vec<Run>),
) -> CellRuns {
    let mut out = CellRuns::new(lvl.width());
    let mut tmp = Vec::new();
    for (b, &k) in ay.cell_run.iter().enumerate() {
        let same_level_row = b > 0 && ay.cell_run[b - 1] == k;
        match &acc {
            None if same_level_row => out.repeat_last(),
            None => out.push_row(lvl.row(k as usize)),
            Some(a) if same_level_row && a.shares_previous(b) => out.repeat_last(),
            Some(a) => {
                op(a.row(b), lvl.row(k as usize), &mut tmp);
                out.push_row(&tmp);
            }
        }
    }
    out
}

/// The safe-opaque region S and the must-cover region C as runs on the
/// half grid (`2W` cells a row, `2H` rows; both clipped to the image). An
/// image with no texels gives regions with no rows.
pub(crate) fn region_runs(
    alpha: &AlphaMap,
    filter: Filter,
    t: AlphaThresholds,
    wrap: Wrap,
) -> (CellRuns, CellRuns) {
    let (w, h) = (alpha.width as usize, alpha.height as usize);
    if w == 0 || h == 0 {
        return (CellRuns::new(2 * w), CellRuns::new(2 * w));
    }
    // From the first level whose single block is the whole image on, every
    // level gives the same regions (all or nothing, whatever r), so stop there.
    let mut top = 0u32;
    while (1usize << top) < w.max(h) {
        top += 1;
    }
    let last = filter.mip_levels.min(top);
    let (mut safe, mut cover): (Option<CellRuns>, Option<CellRuns>) = (None, None);
    for level in 0..=last {
        // r = 2^(l-1) texels = 2^l half-texels under bilinear; 0 under nearest.
        let reach = match filter.mode {
            FilterMode::Nearest => 0,
            FilterMode::Bilinear => 1i64 << level,
        };
        let ax = axis(w, level, reach, wrap.x());
        let ay = axis(h, level, reach, wrap.y());
        let rows: Vec<[Vec<Run>; 2]> = ay
            .runs
            .par_iter()
            .map_init(|| Columns::new(w), |cols, sy| cols.row(alpha, t, sy, &ax))
            .collect();
        let (mut lvl_safe, mut lvl_cover) = (CellRuns::new(2 * w), CellRuns::new(2 * w));
        for [s, c] in &rows {
            lvl_safe.push_row(s);
            lvl_cover.push_row(c);
        }
        drop(rows);
        safe = Some(combine(safe, &lvl_safe, &ay, intersect_into));
        cover = Some(combine(cover, &lvl_cover, &ay, union_into));
    }
    (safe.expect("level 0"), cover.expect("level 0"))
}

/// The safe-opaque region S and the must-cover region C as half-grid masks
/// (row-major, `grid w = 2W` by `grid h = 2H`, both clipped to the image),
/// expanded from the run form the checker uses; for tests and tools that
/// want cells.
pub fn regions_for_check(
    alpha: &AlphaMap,
    filter: Filter,
    t: AlphaThresholds,
    wrap: Wrap,
) -> (Vec<bool>, Vec<bool>, usize, usize) {
    let (w, h) = (alpha.width as usize, alpha.height as usize);
    let (safe, cover) = region_runs(alpha, filter, t, wrap);
    (safe.to_mask(), cover.to_mask(), 2 * w, 2 * h)
}
