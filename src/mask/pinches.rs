//! Pinches: two set cells touching only at a corner, the other two cells
//! of their 2x2 block unset. Tracing needs at most two boundary edges at a
//! lattice point, so the safe region loses one cell of each pinch
//! ([`Mask::remove_pinches`], only shrinks) and the must-cover region gains
//! one ([`Mask::fill_pinches`], only grows).
//!
//! The definition: row-major passes over every 2x2 block until a pass
//! changes nothing; a pinch of set cells (a, d) on the diagonal loses a
//! (removing) or gains b's cell (filling), one of set cells (b, c) on the
//! other diagonal loses b or gains a's cell. [`RowRuns::fix_pinches`] does
//! the same on runs, visiting only the row pairs that can hold a pinch.
//!
//! Why the shortcuts are exact: an edit changes only the top row of its
//! pair, and a pair is processed before any edit of the pass touches its
//! rows; so a pair has an edit in a pass iff it holds a pinch as the pass
//! reaches it, which for the first pass is the mask's own state, and for
//! later passes needs one of its rows edited in the pass before.

use super::{fill_row, runs_of_row, Mask, RowRuns};
use std::collections::BTreeMap;

/// One row pair's share of a pass, left to right over the blocks of `top`
/// and `bottom` (one byte a cell); returns whether it changed `top`. Runs
/// of 8 columns with no change of value in `top` are skipped: a pinch needs
/// one, and an edit changes only columns x and x + 1, so a skip decided
/// before it is never stale.
fn pass_over_pair(top: &mut [u8], bottom: &[u8], grow: bool) -> bool {
    let w = top.len();
    let chunk = |row: &[u8], x: usize| -> u64 {
        u64::from_ne_bytes(row[x..x + 8].try_into().expect("8 bytes"))
    };
    let mut changed = false;
    let mut x = 0;
    while x + 1 < w {
        if x + 9 <= w && chunk(top, x) == chunk(top, x + 1) {
            x += 8;
            continue;
        }
        let (a, b, c, d) = (top[x], top[x + 1], bottom[x], bottom[x + 1]);
        if a == d && b == c && a != b {
            // diagonal pair
            if grow {
                if a != 0 {
                    top[x + 1] = 1;
                } else {
                    top[x] = 1;
                }
            } else if a != 0 {
                top[x] = 0;
            } else {
                top[x + 1] = 0;
            }
            changed = true;
        }
        x += 1;
    }
    changed
}

/// The passes over row pairs of a region `h` rows high: the first over
/// `pairs` (ascending), each later one over the pairs holding a row the
/// pass before edited (`y - 1, y` and `y, y + 1`), in order, until a pass
/// edits nothing. `visit(y)` makes pair `(y, y + 1)`'s share of a pass and
/// says whether it edited row `y`.
fn passes(mut pairs: Vec<usize>, h: usize, mut visit: impl FnMut(usize) -> bool) {
    let mut edited: Vec<usize> = Vec::new();
    while !pairs.is_empty() {
        edited.clear();
        edited.extend(pairs.iter().copied().filter(|&y| visit(y)));
        pairs.clear();
        for &y in &edited {
            for p in [y.wrapping_sub(1), y] {
                if p < h - 1 && pairs.last().is_none_or(|&l| l < p) {
                    pairs.push(p);
                }
            }
        }
    }
}

impl Mask {
    /// Removes "pinch" configurations (two cells that touch only at a corner,
    /// the other two of their 2x2 block empty) by clearing one of them, so
    /// every lattice point has at most two boundary edges. Only shrinks.
    pub fn remove_pinches(&mut self) {
        self.fix_pinches(false)
    }
    /// Removes pinches by setting one of the empty cells. Only grows.
    pub fn fill_pinches(&mut self) {
        self.fix_pinches(true)
    }
    fn fix_pinches(&mut self, grow: bool) {
        let (w, h) = (self.width, self.height);
        if w < 2 || h < 2 {
            return;
        }
        passes((0..h - 1).collect(), h, |y| {
            let (top, bottom) = self.cells[y * w..(y + 2) * w].split_at_mut(w);
            pass_over_pair(top, bottom, grow)
        });
    }
}

/// Whether rows `top` and `bottom` (runs, `w` cells) hold a pinch: a column
/// boundary inside the row where both rows change value in opposite ways
/// (one run ends where the other's starts).
fn holds_pinch(top: &[[u32; 2]], bottom: &[[u32; 2]], w: u32) -> bool {
    // (position, ends a run) of the changes strictly inside the row
    fn changes(row: &[[u32; 2]], w: u32) -> impl Iterator<Item = (u32, bool)> + '_ {
        row.iter()
            .flat_map(|r| [(r[0], false), (r[1], true)])
            .filter(move |&(x, _)| x > 0 && x < w)
    }
    let (mut a, mut b) = (changes(top, w).peekable(), changes(bottom, w).peekable());
    while let (Some(&(xa, ea)), Some(&(xb, eb))) = (a.peek(), b.peek()) {
        if xa == xb {
            if ea != eb {
                return true;
            }
            a.next();
            b.next();
        } else if xa < xb {
            a.next();
        } else {
            b.next();
        }
    }
    false
}

impl RowRuns {
    /// [`Mask::remove_pinches`] on the mask these runs describe.
    pub fn remove_pinches(&mut self) {
        self.fix_pinches(false)
    }
    /// [`Mask::fill_pinches`] on the mask these runs describe.
    pub fn fill_pinches(&mut self) {
        self.fix_pinches(true)
    }
    /// The same passes as [`Mask::fix_pinches`], exactly: the first visits
    /// only the pairs holding a pinch (found from the runs), each visited
    /// pair is expanded to two byte rows, and only edited rows are turned
    /// back into runs.
    fn fix_pinches(&mut self, grow: bool) {
        let (w, h) = (self.width, self.height);
        if w < 2 || h < 2 {
            return;
        }
        let pairs: Vec<usize> = (0..h - 1)
            .filter(|&y| holds_pinch(self.row(y), self.row(y + 1), w as u32))
            .collect();
        if pairs.is_empty() {
            return;
        }
        let mut rows: BTreeMap<usize, Vec<[u32; 2]>> = BTreeMap::new();
        let (mut top, mut bottom) = (vec![0u8; w], vec![0u8; w]);
        passes(pairs, h, |y| {
            fill_row(rows.get(&y).map_or(self.row(y), |r| r), &mut top);
            fill_row(
                rows.get(&(y + 1)).map_or(self.row(y + 1), |r| r),
                &mut bottom,
            );
            let edited = pass_over_pair(&mut top, &bottom, grow);
            if edited {
                let mut r = Vec::new();
                runs_of_row(&top, &mut r);
                rows.insert(y, r);
            }
            edited
        });
        // the runs again, edited rows replaced
        let mut out = RowRuns::new(w);
        for y in 0..h {
            out.push_row(rows.get(&y).map_or(self.row(y), |r| r));
        }
        *self = out;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_rng::Lcg;

    /// Full row-major passes over every 2x2 block until none changes, cell
    /// by cell: the definition [`Mask::fix_pinches`] shortens.
    fn fix_pinches_by_full_passes(m: &mut Mask, grow: bool) {
        let (w, h) = (m.width, m.height);
        loop {
            let mut changed = false;
            for y in 0..h.saturating_sub(1) {
                for x in 0..w.saturating_sub(1) {
                    let (a, b) = (m.get(x, y), m.get(x + 1, y));
                    let (c, d) = (m.get(x, y + 1), m.get(x + 1, y + 1));
                    if a == d && b == c && a != b {
                        match (grow, a) {
                            (true, true) => m.set(x + 1, y, true),
                            (true, false) => m.set(x, y, true),
                            (false, true) => m.set(x, y, false),
                            (false, false) => m.set(x + 1, y, false),
                        }
                        changed = true;
                    }
                }
            }
            if !changed {
                return;
            }
        }
    }

    /// Pinch removal and filling, on the mask and on its runs, leave exactly
    /// what full passes leave, on random masks dense with diagonal pairs.
    #[test]
    fn pinch_fixes_match_full_passes() {
        let mut rng = Lcg(31337);
        for case in 0..400 {
            let (w, h) = (1 + case % 23, 1 + case % 9 * 3);
            // checkerboard-like patches make chains of pinches
            let checker = |i: usize| ((i % w) + (i / w)) % 2 == 0;
            let m = rng.mask(w, h, |i, r| if case % 3 == 0 { checker(i) } else { r < 50 });
            for grow in [false, true] {
                let mut ours = m.clone();
                ours.fix_pinches(grow);
                let mut theirs = m.clone();
                fix_pinches_by_full_passes(&mut theirs, grow);
                assert_eq!(ours, theirs, "case {case} grow {grow}: {m:?}");
                let mut runs = m.row_runs();
                runs.fix_pinches(grow);
                let want = theirs.row_runs();
                for y in 0..h {
                    assert_eq!(
                        runs.row(y),
                        want.row(y),
                        "case {case} grow {grow} row {y}: {m:?}"
                    );
                }
            }
        }
    }
}
