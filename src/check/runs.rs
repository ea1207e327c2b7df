//! A region of the half-texel grid stored as runs of set cells per row, so
//! that its memory follows the number of runs rather than the grid's area.
//!
//! Invariants of [`CellRuns`]:
//! * each row's runs are half-open `[start, end)` cell ranges with
//!   `start < end <= width`, sorted, and maximal: two runs of a row never
//!   touch or overlap (`end` of one `<` `start` of the next);
//! * row `b`'s runs are `runs[rows[b][0]..rows[b][1]]`; a row equal to the
//!   row before it shares that row's range instead of storing its runs again.
//!
//! Memory: 8 bytes a row plus 8 bytes a stored run.

/// One half-open run of cells `[start, end)`.
pub(crate) type Run = [u32; 2];

/// A set of grid cells, row by row, as maximal runs (see the module doc).
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub(crate) struct CellRuns {
    width: u32,
    /// Per row, the range of `runs` holding it.
    rows: Vec<[u32; 2]>,
    runs: Vec<Run>,
}

impl CellRuns {
    /// An empty region of `width` cells a row and no rows yet.
    pub(crate) fn new(width: usize) -> CellRuns {
        CellRuns {
            width: u32::try_from(width).expect("grid width fits in u32"),
            rows: Vec::new(),
            runs: Vec::new(),
        }
    }

    /// Appends a row given as maximal runs (the caller keeps the invariant;
    /// checked in debug builds). A row equal to the last one is shared.
    pub(crate) fn push_row(&mut self, row: &[Run]) {
        debug_assert!(row.iter().all(|r| r[0] < r[1] && r[1] <= self.width));
        debug_assert!(row.windows(2).all(|p| p[0][1] < p[1][0]));
        if let Some(&last) = self.rows.last() {
            if self.runs[last[0] as usize..last[1] as usize] == *row {
                self.rows.push(last);
                return;
            }
        }
        let start = self.runs.len() as u32;
        self.runs.extend_from_slice(row);
        self.rows.push([start, self.runs.len() as u32]);
    }

    /// Appends a row equal to the last one, sharing it (there must be one).
    pub(crate) fn repeat_last(&mut self) {
        let last = *self.rows.last().expect("a row to repeat");
        self.rows.push(last);
    }

    /// True when row `b` (> 0) shares the previous row's runs, so it is
    /// known equal to it without comparing (equal rows may still not share).
    pub(crate) fn shares_previous(&self, b: usize) -> bool {
        b > 0 && self.rows[b] == self.rows[b - 1]
    }

    /// Number of rows.
    pub(crate) fn height(&self) -> usize {
        self.rows.len()
    }

    /// Cells a row.
    pub(crate) fn width(&self) -> usize {
        self.width as usize
    }

    /// Row `b`'s runs.
    pub(crate) fn row(&self, b: usize) -> &[Run] {
        let [s, e] = self.rows[b];
        &self.runs[s as usize..e as usize]
    }

    /// Number of set cells.
    pub(crate) fn cell_count(&self) -> u64 {
        (0..self.height())
            .map(|b| {
                self.row(b)
                    .iter()
                    .map(|r| (r[1] - r[0]) as u64)
                    .sum::<u64>()
            })
            .sum()
    }

    /// Runs stored (shared rows counted once).
    #[cfg(test)]
    pub(crate) fn stored_runs(&self) -> usize {
        self.runs.len()
    }

    /// The region as a row-major mask of `width x height` cells.
    pub(crate) fn to_mask(&self) -> Vec<bool> {
        let w = self.width();
        let mut mask = vec![false; w * self.height()];
        for (b, row) in mask.chunks_mut(w.max(1)).enumerate().take(self.height()) {
            for r in self.row(b) {
                row[r[0] as usize..r[1] as usize].fill(true);
            }
        }
        mask
    }
}

/// Appends `[s, e)` to sorted runs `out`, merging it with the last run when
/// they touch or overlap (`s` must not precede the last run's start).
pub(crate) fn push_merged(out: &mut Vec<Run>, s: u32, e: u32) {
    if s >= e {
        return;
    }
    match out.last_mut() {
        Some(last) if s <= last[1] => last[1] = last[1].max(e),
        _ => out.push([s, e]),
    }
}

/// `a ∩ b` of two maximal run lists into `out` (cleared first); maximal.
pub(crate) fn intersect_into(a: &[Run], b: &[Run], out: &mut Vec<Run>) {
    out.clear();
    let (mut i, mut j) = (0, 0);
    while i < a.len() && j < b.len() {
        let s = a[i][0].max(b[j][0]);
        let e = a[i][1].min(b[j][1]);
        push_merged(out, s, e);
        if a[i][1] < b[j][1] {
            i += 1;
        } else {
            j += 1;
        }
    }
}

/// `a ∪ b` of two maximal run lists into `out` (cleared first); maximal.
pub(crate) fn union_into(a: &[Run], b: &[Run], out: &mut Vec<Run>) {
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_rng::Lcg;

    fn runs_of(mask: &[bool]) -> Vec<Run> {
        let mut out = Vec::new();
        for (a, &m) in mask.iter().enumerate() {
            if m {
                push_merged(&mut out, a as u32, a as u32 + 1);
            }
        }
        out
    }

    /// Set algebra on runs agrees with the cell-by-cell AND / OR of the masks
    /// (boolean algebra; the masks are the definition).
    #[test]
    fn run_set_operations_match_cellwise_logic() {
        let mut rng = Lcg(5);
        let mut bit = move || (rng.next() >> 7).is_multiple_of(3);
        let mut out = Vec::new();
        for n in 0..40usize {
            let a: Vec<bool> = (0..n).map(|_| bit()).collect();
            let b: Vec<bool> = (0..n).map(|_| bit()).collect();
            let and: Vec<bool> = a.iter().zip(&b).map(|(x, y)| *x && *y).collect();
            let or: Vec<bool> = a.iter().zip(&b).map(|(x, y)| *x || *y).collect();
            intersect_into(&runs_of(&a), &runs_of(&b), &mut out);
            assert_eq!(out, runs_of(&and), "{a:?} & {b:?}");
            union_into(&runs_of(&a), &runs_of(&b), &mut out);
            assert_eq!(out, runs_of(&or), "{a:?} | {b:?}");
        }
    }

    #[test]
    fn equal_consecutive_rows_are_stored_once() {
        let mut r = CellRuns::new(10);
        r.push_row(&[[1, 3], [5, 9]]);
        r.push_row(&[[1, 3], [5, 9]]);
        r.push_row(&[]);
        r.push_row(&[[0, 10]]);
        assert_eq!(r.height(), 4);
        assert_eq!(r.stored_runs(), 3);
        assert_eq!(r.row(1), &[[1, 3], [5, 9]]);
        assert_eq!(r.cell_count(), 2 + 4 + 2 + 4 + 10);
        let m = r.to_mask();
        assert_eq!(m.len(), 40);
        assert!(m[11] && m[12] && !m[13] && m[18] && !m[19]);
        assert!(m[20..30].iter().all(|&x| !x) && m[30..40].iter().all(|&x| x));
    }
}
