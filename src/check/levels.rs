//! The regions of a shipped texture's decoded levels, computed by the
//! checker straight from the sampling rule (independently of the builder).
//!
//! A shipped level l of size `wl` x `hl` for a layer of `W` x `H` texels
//! (W and H multiples of wl and hl) has texels that span `sx = W / wl` by
//! `sy = H / hl` level-0 texels: level texel (i, j) covers
//! [i sx, (i+1) sx] x [j sy, (j+1) sy]. In half-texel units its centre is at
//! x = (2i + 1) sx.
//!
//! * bilinear (the LINEAR rule of the OpenGL ES 3.x specification, from
//!   memory): a sample at p reads, with non-zero weight, the level texels
//!   whose centre lies less than one level texel from p on each axis. Over
//!   the half-grid cell [a, a+1] (half units) that is the texels with
//!   a - 2sx < (2i+1) sx < a + 1 + 2sx, i.e. i from
//!   floor((a - 3sx) / (2sx)) + 1 to floor((a + sx) / (2sx));
//! * nearest: the texel containing the cell, i = floor(a / (2sx)) (a cell
//!   never straddles a level texel's edge, which lies on an even multiple
//!   of sx half units).
//!
//! Indices outside the level are clamped to the edge texel, or taken
//! modulo the level's size on a wrap axis. A cell is safe when every texel
//! read is opaque, and must be covered when any is visible. A texture's
//! regions over its levels: S the intersection, C the union.

use super::runs::{intersect_into, push_merged, union_into, CellRuns, Run};
use crate::alpha::AlphaMap;
use crate::settings::{AlphaThresholds, FilterMode, Wrap};

/// The level texels (inclusive ranges, at most two after wrapping) that
/// cell `a` reads on an axis of `n` level texels, each `s` level-0 texels.
fn reach(a: i64, s: i64, n: i64, bilinear: bool, repeat: bool) -> Vec<(usize, usize)> {
    let (lo, hi) = if bilinear {
        ((a - 3 * s).div_euclid(2 * s) + 1, (a + s).div_euclid(2 * s))
    } else {
        (a.div_euclid(2 * s), a.div_euclid(2 * s))
    };
    if !repeat {
        return vec![(lo.clamp(0, n - 1) as usize, hi.clamp(0, n - 1) as usize)];
    }
    if hi - lo + 1 >= n {
        return vec![(0, n as usize - 1)];
    }
    let (p, q) = (lo.rem_euclid(n) as usize, hi.rem_euclid(n) as usize);
    if p <= q {
        vec![(p, q)]
    } else {
        vec![(0, q), (p, n as usize - 1)]
    }
}

/// Level `level`'s safe-opaque and must-cover regions on the layer's half
/// grid (`2 w0` cells a row, `2 h0` rows).
pub(crate) fn level_runs(
    level: &AlphaMap,
    (w0, h0): (u32, u32),
    mode: FilterMode,
    t: AlphaThresholds,
    wrap: Wrap,
) -> (CellRuns, CellRuns) {
    let (wl, hl) = (level.width as usize, level.height as usize);
    let (sx, sy) = ((w0 as usize / wl) as i64, (h0 as usize / hl) as i64);
    let bilinear = mode == FilterMode::Bilinear;
    let xs: Vec<Vec<(usize, usize)>> = (0..2 * w0 as i64)
        .map(|a| reach(a, sx, wl as i64, bilinear, wrap.x()))
        .collect();
    let (mut safe, mut cover) = (
        CellRuns::new(2 * w0 as usize),
        CellRuns::new(2 * w0 as usize),
    );
    let (mut bad, mut vis) = (vec![0u32; wl + 1], vec![0u32; wl + 1]);
    let mut last: Option<Vec<(usize, usize)>> = None;
    let (mut s_row, mut c_row): (Vec<Run>, Vec<Run>) = (Vec::new(), Vec::new());
    for b in 0..2 * h0 as i64 {
        let ys = reach(b, sy, hl as i64, bilinear, wrap.y());
        if last.as_ref() != Some(&ys) {
            // per level column: a non-opaque / a visible texel in the rows read,
            // as prefix counts
            let (mut any_bad, mut any_vis) = (vec![false; wl], vec![false; wl]);
            for &(y0, y1) in &ys {
                for row in level.alpha[y0 * wl..(y1 + 1) * wl].chunks_exact(wl) {
                    for (x, &a) in row.iter().enumerate() {
                        any_bad[x] |= a < t.opaque_min;
                        any_vis[x] |= a >= t.visible_min;
                    }
                }
            }
            for x in 0..wl {
                bad[x + 1] = bad[x] + any_bad[x] as u32;
                vis[x + 1] = vis[x] + any_vis[x] as u32;
            }
            let count = |sum: &[u32], r: &[(usize, usize)]| -> u32 {
                r.iter().map(|&(p, q)| sum[q + 1] - sum[p]).sum()
            };
            s_row.clear();
            c_row.clear();
            for (a, r) in xs.iter().enumerate() {
                if count(&bad, r) == 0 {
                    push_merged(&mut s_row, a as u32, a as u32 + 1);
                }
                if count(&vis, r) > 0 {
                    push_merged(&mut c_row, a as u32, a as u32 + 1);
                }
            }
            last = Some(ys);
        }
        safe.push_row(&s_row);
        cover.push_row(&c_row);
    }
    (safe, cover)
}

/// `a` combined with `b` row by row: intersection (`all`) or union.
pub(crate) fn combine(a: &CellRuns, b: &CellRuns, all: bool) -> CellRuns {
    let mut out = CellRuns::new(a.width());
    let mut row = Vec::new();
    for y in 0..a.height() {
        if all {
            intersect_into(a.row(y), b.row(y), &mut row);
        } else {
            union_into(a.row(y), b.row(y), &mut row);
        }
        out.push_row(&row);
    }
    out
}
