//! The regions built row by row as runs of set cells, never cell by cell.
//!
//! A row is a sorted list of maximal half-open runs `[x0, x1)` (disjoint and
//! not touching). Every step of the analysis maps rows of runs to rows of
//! runs in time proportional to the runs, whatever the filter's radius:
//!
//! 1. texel rows: the runs of texels whose alpha reaches the threshold;
//! 2. level-`l` block rows: the texel rows of a block row intersected
//!    (opaque: every texel) or united (visible: any texel), then narrowed
//!    to whole blocks (opaque) or widened to them (visible), in cells;
//! 3. bilinear: a min (erode) or max (dilate) filter of radius `k` cells
//!    along the row, with clamp-to-edge or repeat addressing: each run
//!    shrinks or grows by `k`;
//! 4. bilinear, down the columns: a cell row is the intersection (union)
//!    of the block rows its window of `2k + 1` addressed rows meets; as a
//!    block row spans `2k` cell rows, that is at most three of them.
//!
//! Invariant: the result is exactly the cell-by-cell definition (block
//! classification expanded to the half grid, then the separable window
//! filter with the same addressing), as the module's tests check against
//! a transcription of it.

/// One row: sorted, maximal, half-open runs of set cells.
pub type Row = Vec<[u32; 2]>;

/// Appends `[x0, x1)` to `out`, merging it with the last run when they
/// touch or overlap; runs must come in order of `x0`.
#[inline]
fn push_merged(out: &mut Row, x0: u32, x1: u32) {
    if x0 >= x1 {
        return;
    }
    match out.last_mut() {
        Some(last) if last[1] >= x0 => last[1] = last[1].max(x1),
        _ => out.push([x0, x1]),
    }
}

/// The runs of `alpha` at least `min`.
pub fn threshold(alpha: &[u8], min: u8, out: &mut Row) {
    out.clear();
    let n = alpha.len();
    let mut x = 0;
    while x < n {
        let s = x + first_where(&alpha[x..], |a| a >= min);
        if s == n {
            break;
        }
        x = s + first_where(&alpha[s..], |a| a < min);
        out.push([s as u32, x as u32]);
    }
}

/// The index of the first byte of `bytes` where `hit` holds, or its
/// length. Whole blocks without a hit are passed over by a test of the
/// block (a branch-free fold, which the compiler vectorizes); long runs of
/// one class, the common case in a sprite's alpha, cost little per byte.
#[inline]
fn first_where(bytes: &[u8], hit: impl Fn(u8) -> bool) -> usize {
    const BLOCK: usize = 32;
    let mut i = 0;
    while i + BLOCK <= bytes.len() {
        let block = &bytes[i..i + BLOCK];
        if block.iter().fold(false, |any, &a| any | hit(a)) {
            return i + block.iter().position(|&a| hit(a)).unwrap_or(BLOCK);
        }
        i += BLOCK;
    }
    i + bytes[i..]
        .iter()
        .position(|&a| hit(a))
        .unwrap_or(bytes.len() - i)
}

/// `a ∩ b` into `out`.
pub fn intersect(a: &[[u32; 2]], b: &[[u32; 2]], out: &mut Row) {
    out.clear();
    let (mut i, mut j) = (0, 0);
    while i < a.len() && j < b.len() {
        let lo = a[i][0].max(b[j][0]);
        let hi = a[i][1].min(b[j][1]);
        if lo < hi {
            out.push([lo, hi]);
        }
        if a[i][1] < b[j][1] {
            i += 1;
        } else {
            j += 1;
        }
    }
}

/// `a ∪ b` into `out`.
pub fn unite(a: &[[u32; 2]], b: &[[u32; 2]], out: &mut Row) {
    out.clear();
    let (mut i, mut j) = (0, 0);
    while i < a.len() || j < b.len() {
        let take_a = j == b.len() || (i < a.len() && a[i][0] <= b[j][0]);
        let r = if take_a {
            i += 1;
            a[i - 1]
        } else {
            j += 1;
            b[j - 1]
        };
        push_merged(out, r[0], r[1]);
    }
}

/// Combines `acc` with `row` in place: intersection (`all`) or union.
pub fn combine(acc: &mut Row, row: &[[u32; 2]], all: bool, scratch: &mut Row) {
    if all {
        intersect(acc, row, scratch);
    } else {
        unite(acc, row, scratch);
    }
    std::mem::swap(acc, scratch);
}

/// A row of texel runs (`w` texels) as the half-grid cells of its blocks of
/// `s` texels: the blocks wholly inside a run (`all`; the last block may be
/// narrower than `s`) or meeting one (`!all`), each block `2s` cells wide,
/// clipped to the `2w` cells of the row.
pub fn blocks_to_cells(texels: &[[u32; 2]], s: u32, w: u32, all: bool, out: &mut Row) {
    out.clear();
    let cells = 2 * w;
    for &[x0, x1] in texels {
        let (b0, b1) = if all {
            // the last block ends at the image's edge
            let end = if x1 == w { w.div_ceil(s) } else { x1 / s };
            (x0.div_ceil(s), end)
        } else {
            (x0 / s, x1.div_ceil(s))
        };
        if b0 < b1 {
            push_merged(out, (2 * s * b0).min(cells), (2 * s * b1).min(cells));
        }
    }
}

/// The window filter of radius `k` along a row of `n` cells: a cell is set
/// iff every (`erode`) or any (`!erode`) cell within `k` of it is, cells
/// beyond the row's ends addressed by clamping or repeating (`repeat`).
pub fn filter_row(row: &[[u32; 2]], k: u32, n: u32, repeat: bool, erode: bool, out: &mut Row) {
    out.clear();
    if row.is_empty() {
        return;
    }
    let full = row.len() == 1 && row[0] == [0, n];
    if full {
        out.push([0, n]);
        return;
    }
    let (k, n64) = (k as i64, n as i64);
    if !repeat {
        // clamp: the cells beyond an end repeat the end cell, which every
        // window reaching past the end already holds
        for &[x0, x1] in row {
            let (x0, x1) = (x0 as i64, x1 as i64);
            let (a, b) = if erode {
                (
                    if x0 == 0 { 0 } else { x0 + k },
                    if x1 == n64 { n64 } else { x1 - k },
                )
            } else {
                ((x0 - k).max(0), (x1 + k).min(n64))
            };
            if a < b {
                push_merged(out, a as u32, b as u32);
            }
        }
        return;
    }
    // repeat: the row is periodic; a window of 2k + 1 >= n cells holds
    // every cell, and the row is neither empty nor full
    if 2 * k + 1 >= n64 {
        if !erode {
            out.push([0, n]);
        }
        return;
    }
    // runs on the circle: one touching both ends is one run across the seam
    let mut circ: Vec<(i64, i64)> = row.iter().map(|r| (r[0] as i64, r[1] as i64)).collect();
    if circ.len() > 1 && circ[0].0 == 0 && circ[circ.len() - 1].1 == n64 {
        let first = circ.remove(0);
        let last = circ.last_mut().expect("two runs");
        last.1 = n64 + first.1;
    }
    let mut pieces: Vec<(i64, i64)> = Vec::with_capacity(circ.len() + 2);
    for (x0, x1) in circ {
        let (a, b) = if erode {
            (x0 + k, x1 - k)
        } else {
            (x0 - k, x1 + k)
        };
        if a >= b {
            continue;
        }
        if b - a >= n64 {
            pieces.clear();
            pieces.push((0, n64));
            break;
        }
        // back onto [0, n): at most two pieces
        let a0 = a.rem_euclid(n64);
        let b0 = a0 + (b - a);
        if b0 <= n64 {
            pieces.push((a0, b0));
        } else {
            pieces.push((a0, n64));
            pieces.push((0, b0 - n64));
        }
    }
    pieces.sort_unstable();
    for (a, b) in pieces {
        push_merged(out, a as u32, b as u32);
    }
}

/// The cell rows (of `n` rows) that the vertical window of radius `k`
/// around row `y` reaches, clamped or repeated: at most two inclusive
/// ranges.
pub fn window_rows(y: u32, k: u32, n: u32, repeat: bool) -> [(u32, u32); 2] {
    let (y, k, n) = (y as i64, k as i64, n as i64);
    let (lo, hi) = (y - k, y + k);
    let none = (1, 0);
    let r = |a: i64, b: i64| (a as u32, b as u32);
    if !repeat {
        return [r(lo.max(0), hi.min(n - 1)), none];
    }
    if 2 * k + 1 >= n {
        return [r(0, n - 1), none];
    }
    if lo < 0 {
        [r(0, hi), r(lo + n, n - 1)]
    } else if hi >= n {
        [r(lo, n - 1), r(0, hi - n)]
    } else {
        [r(lo, hi), none]
    }
}
