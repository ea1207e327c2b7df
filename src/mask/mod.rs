//! A binary mask on the half-texel grid: cell (a, b) is the square
//! [a/2, a/2 + 1/2] x [b/2, b/2 + 1/2] in texel units.
//!
//! Every region the contract speaks of (opaque blocks at any mip level,
//! eroded or dilated by 2^(l-1) texels) has its edges on multiples of half a
//! texel, so each such region is exactly a union of half-grid cells.
//! Lattice coordinates ("half units") are integers: texel x = half / 2.

mod pinches;

/// A binary mask, row-major, one byte a cell (0 or 1).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Mask {
    /// Cells per row (twice the texels).
    pub width: usize,
    /// Rows of cells (twice the texel rows).
    pub height: usize,
    /// Cell (x, y) at `y * width + x`: 1 set, 0 unset.
    pub cells: Vec<u8>,
}

impl Mask {
    /// A mask with every cell `value`.
    pub fn new(width: usize, height: usize, value: bool) -> Mask {
        Mask {
            width,
            height,
            cells: vec![value as u8; width * height],
        }
    }
    /// Whether cell (x, y) is set; (x, y) must lie inside the mask.
    #[inline]
    pub fn get(&self, x: usize, y: usize) -> bool {
        self.cells[y * self.width + x] != 0
    }
    /// Outside the mask reads as false.
    #[inline]
    pub fn get_i(&self, x: i64, y: i64) -> bool {
        x >= 0
            && y >= 0
            && (x as usize) < self.width
            && (y as usize) < self.height
            && self.get(x as usize, y as usize)
    }
    /// Sets cell (x, y), which must lie inside the mask, to `v`.
    #[inline]
    pub fn set(&mut self, x: usize, y: usize, v: bool) {
        self.cells[y * self.width + x] = v as u8;
    }
    /// Set cells.
    pub fn count(&self) -> usize {
        self.cells.iter().filter(|&&c| c != 0).count()
    }
    /// Whether no cell is set.
    pub fn is_empty(&self) -> bool {
        self.cells.iter().all(|&c| c == 0)
    }
    /// Whether every cell is set.
    pub fn is_full(&self) -> bool {
        self.cells.iter().all(|&c| c != 0)
    }
    /// Cell-wise AND.
    pub fn and_with(&mut self, other: &Mask) {
        for (a, b) in self.cells.iter_mut().zip(&other.cells) {
            *a &= *b;
        }
    }
    /// Cell-wise OR.
    pub fn or_with(&mut self, other: &Mask) {
        for (a, b) in self.cells.iter_mut().zip(&other.cells) {
            *a |= *b;
        }
    }

    /// The mask's runs of set cells, row by row.
    pub fn row_runs(&self) -> RowRuns {
        let w = self.width;
        let mut starts = Vec::with_capacity(self.height + 1);
        let mut runs = Vec::new();
        for y in 0..self.height {
            starts.push(runs.len());
            runs_of_row(&self.cells[y * w..(y + 1) * w], &mut runs);
        }
        starts.push(runs.len());
        RowRuns {
            width: w,
            height: self.height,
            starts,
            runs,
        }
    }
}

/// Appends the runs of set cells of `row` (one byte a cell) to `runs`.
fn runs_of_row(row: &[u8], runs: &mut Vec<[u32; 2]>) {
    let w = row.len();
    // eight cells at a time while they all equal the current state
    const ONES: u64 = 0x0101_0101_0101_0101;
    let (mut x, mut inside, mut s) = (0, false, 0);
    while x < w {
        if x + 8 <= w {
            let c = u64::from_ne_bytes(row[x..x + 8].try_into().expect("8 bytes"));
            if c == if inside { ONES } else { 0 } {
                x += 8;
                continue;
            }
        }
        let v = row[x] != 0;
        if v != inside {
            if v {
                s = x;
            } else {
                runs.push([s as u32, x as u32]);
            }
            inside = v;
        }
        x += 1;
    }
    if inside {
        runs.push([s as u32, w as u32]);
    }
}

/// Writes the cells of `runs` into `row` (one byte a cell), the rest unset.
fn fill_row(runs: &[[u32; 2]], row: &mut [u8]) {
    row.fill(0);
    for &[x0, x1] in runs {
        row[x0 as usize..x1 as usize].fill(1);
    }
}

/// The runs of set cells of a [`Mask`], row by row (maximal, in order), to
/// ask about a row span in time logarithmic in the row's runs, with memory
/// that follows the number of runs rather than of cells.
#[derive(Clone, Debug)]
pub struct RowRuns {
    /// Cells per row.
    pub width: usize,
    /// Rows.
    pub height: usize,
    starts: Vec<usize>,
    runs: Vec<[u32; 2]>,
}

impl RowRuns {
    /// No rows yet, `width` cells wide; rows are added with
    /// [`RowRuns::push_row`].
    pub fn new(width: usize) -> RowRuns {
        RowRuns {
            width,
            height: 0,
            starts: vec![0],
            runs: Vec::new(),
        }
    }
    /// Adds a row below the others: its runs, sorted, maximal, within the
    /// width.
    pub fn push_row(&mut self, row: &[[u32; 2]]) {
        debug_assert!(row.windows(2).all(|p| p[0][1] < p[1][0]));
        debug_assert!(row
            .iter()
            .all(|r| r[0] < r[1] && r[1] as usize <= self.width));
        self.runs.extend_from_slice(row);
        self.starts.push(self.runs.len());
        self.height += 1;
    }
    /// Set cells in all rows.
    pub fn cells_set(&self) -> u64 {
        self.runs.iter().map(|r| (r[1] - r[0]) as u64).sum()
    }
    /// The mask these runs describe.
    pub fn to_mask(&self) -> Mask {
        let mut m = Mask::new(self.width, self.height, false);
        for y in 0..self.height {
            fill_row(
                self.row(y),
                &mut m.cells[y * self.width..(y + 1) * self.width],
            );
        }
        m
    }
    /// Row `y`'s runs `[x0, x1)` (half-open), left to right.
    #[inline]
    pub fn row(&self, y: usize) -> &[[u32; 2]] {
        &self.runs[self.starts[y]..self.starts[y + 1]]
    }
    /// Index in row `y`'s runs of the first run ending after column `x`.
    #[inline]
    fn first_after(row: &[[u32; 2]], x: usize) -> usize {
        row.partition_point(|r| r[1] as usize <= x)
    }
    /// Set cells in row `y`, columns `x0..x1` (clamped to the mask).
    pub fn count(&self, y: usize, x0: i64, x1: i64) -> u32 {
        let x0 = x0.clamp(0, self.width as i64) as usize;
        let x1 = x1.clamp(0, self.width as i64) as usize;
        if x1 <= x0 {
            return 0;
        }
        let row = self.row(y);
        row[Self::first_after(row, x0)..]
            .iter()
            .take_while(|r| (r[0] as usize) < x1)
            .map(|r| (r[1] as usize).min(x1) as u32 - (r[0] as usize).max(x0) as u32)
            .sum()
    }
    /// Whether every cell of row `y`, columns `x0..x1`, is set (`x0 < x1`,
    /// both within the mask): one run must hold the span, as runs are
    /// maximal.
    #[inline]
    pub fn all_set(&self, y: usize, x0: usize, x1: usize) -> bool {
        let row = self.row(y);
        let i = Self::first_after(row, x0);
        i < row.len() && row[i][0] as usize <= x0 && row[i][1] as usize >= x1
    }
    /// Whether no cell of row `y`, columns `x0..x1` (clamped), is set.
    #[inline]
    pub fn none_set(&self, y: usize, x0: i64, x1: i64) -> bool {
        let x0 = x0.clamp(0, self.width as i64) as usize;
        let x1 = x1.clamp(0, self.width as i64) as usize;
        if x1 <= x0 {
            return true;
        }
        let row = self.row(y);
        let i = Self::first_after(row, x0);
        i == row.len() || row[i][0] as usize >= x1
    }
}

/// 4-connected component labels of a mask's runs of set cells: the runs
/// ([`RowRuns`]) and one label a run, 1..=n, numbered in order of the
/// components' first cells in row-major order. Memory follows the runs.
#[derive(Clone, Debug)]
pub struct RunLabels {
    /// The runs the labels belong to.
    pub runs: RowRuns,
    labels: Vec<u32>,
}

impl RunLabels {
    /// The label of cell (x, y): 0 when the cell is unset.
    #[inline]
    pub fn at(&self, x: usize, y: usize) -> u32 {
        let row = self.runs.row(y);
        let i = RowRuns::first_after(row, x);
        if i < row.len() && row[i][0] as usize <= x {
            self.labels[self.runs.starts[y] + i]
        } else {
            0
        }
    }
    /// Row `y`'s runs `[x0, x1)` with their labels, left to right.
    pub fn row(&self, y: usize) -> impl Iterator<Item = ([u32; 2], u32)> + '_ {
        let first = self.runs.starts[y];
        self.runs
            .row(y)
            .iter()
            .zip(&self.labels[first..])
            .map(|(&r, &l)| (r, l))
    }
    /// The number of components.
    pub fn count(&self) -> u32 {
        self.labels.iter().copied().max().unwrap_or(0)
    }
}

impl Mask {
    /// 4-connected component labels of the set cells, row-major: 0 for an
    /// unset cell, 1..=n for the components, numbered in order of their
    /// first cell in row-major order ([`Mask::run_labels`], expanded).
    pub fn components(&self) -> Vec<u32> {
        let rl = self.run_labels();
        let w = self.width;
        let mut labels = vec![0u32; w * self.height];
        for y in 0..self.height {
            let first = rl.runs.starts[y];
            for (i, r) in rl.runs.row(y).iter().enumerate() {
                labels[y * w + r[0] as usize..y * w + r[1] as usize].fill(rl.labels[first + i]);
            }
        }
        labels
    }

    /// The components of the set cells, labelled run by run
    /// ([`RowRuns::labels`]).
    pub fn run_labels(&self) -> RunLabels {
        self.row_runs().labels()
    }
}

impl RowRuns {
    /// The runs of the unset cells: each row's gaps between its runs.
    pub fn complement(&self) -> RowRuns {
        let mut starts = Vec::with_capacity(self.height + 1);
        let mut runs = Vec::with_capacity(self.runs.len() + self.height);
        for y in 0..self.height {
            starts.push(runs.len());
            let mut x = 0u32;
            for &[x0, x1] in self.row(y) {
                if x < x0 {
                    runs.push([x, x0]);
                }
                x = x1;
            }
            if (x as usize) < self.width {
                runs.push([x, self.width as u32]);
            }
        }
        starts.push(runs.len());
        RowRuns {
            width: self.width,
            height: self.height,
            starts,
            runs,
        }
    }

    /// The 4-connected components of the set cells, labelled run by run: a
    /// union-find over runs, so its cost and memory follow the number of
    /// runs, not of cells.
    pub fn labels(self) -> RunLabels {
        let runs = self;
        let h = runs.height;
        let n = runs.runs.len();
        let mut parent: Vec<u32> = (0..n as u32).collect();
        fn find(p: &mut [u32], mut i: u32) -> u32 {
            while p[i as usize] != i {
                p[i as usize] = p[p[i as usize] as usize];
                i = p[i as usize];
            }
            i
        }
        for y in 1..h {
            let (mut a, a_end) = (runs.starts[y - 1], runs.starts[y]);
            let (mut b, b_end) = (runs.starts[y], runs.starts[y + 1]);
            while a < a_end && b < b_end {
                let [ax0, ax1] = runs.runs[a];
                let [bx0, bx1] = runs.runs[b];
                if ax0 < bx1 && bx0 < ax1 {
                    let (ra, rb) = (find(&mut parent, a as u32), find(&mut parent, b as u32));
                    if ra != rb {
                        let (lo, hi) = (ra.min(rb), ra.max(rb));
                        parent[hi as usize] = lo;
                    }
                }
                if ax1 < bx1 {
                    a += 1;
                } else {
                    b += 1;
                }
            }
        }
        // runs are in row-major order, so naming roots in run order numbers
        // the components by their first cell; a root is its set's first run
        let mut labels = vec![0u32; n];
        let mut next = 0u32;
        for i in 0..n {
            let r = find(&mut parent, i as u32) as usize;
            if r == i {
                next += 1;
                labels[i] = next;
            } else {
                labels[i] = labels[r];
            }
        }
        RunLabels { runs, labels }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_rng::Lcg;
    use image::{GrayImage, Luma};
    use imageproc::region_labelling::{connected_components, Connectivity};

    /// Row-run queries agree with counting the cells of the span one by
    /// one, the definition (no source needed: plain counting).
    #[test]
    fn row_runs_answer_like_counting_cells() {
        let mut rng = Lcg(777);
        for case in 0..30 {
            let (w, h) = (1 + case % 11 * 3, 1 + case % 5);
            let m = rng.mask(w, h, |_, r| r < 60);
            let runs = m.row_runs();
            let inverted = Mask {
                width: w,
                height: h,
                cells: m.cells.iter().map(|&c| (c == 0) as u8).collect(),
            };
            let gaps = runs.complement();
            for y in 0..h {
                assert_eq!(
                    gaps.row(y),
                    inverted.row_runs().row(y),
                    "case {case} row {y}"
                );
                for x0 in -2..w as i64 + 2 {
                    for x1 in x0..w as i64 + 3 {
                        let n = (x0.max(0)..x1.min(w as i64))
                            .filter(|&x| m.get(x as usize, y))
                            .count() as u32;
                        assert_eq!(runs.count(y, x0, x1), n, "case {case} row {y} {x0}..{x1}");
                        assert_eq!(runs.none_set(y, x0, x1), n == 0);
                        if x0 >= 0 && x1 <= w as i64 && x0 < x1 {
                            let all = n as i64 == x1 - x0;
                            assert_eq!(runs.all_set(y, x0 as usize, x1 as usize), all);
                        }
                    }
                }
            }
        }
    }

    /// The run-based labelling partitions cells exactly as imageproc's
    /// connected_components (general-purpose reference library) does.
    #[test]
    fn components_match_imageproc() {
        let mut rng = Lcg(12345);
        for case in 0..40 {
            let (w, h) = (1 + case % 13 * 5, 1 + case % 7 * 6);
            let m = rng.mask(w, h, |_, r| r < 55);
            let ours = m.components();
            let img = GrayImage::from_fn(w as u32, h as u32, |x, y| {
                Luma([m.get(x as usize, y as usize) as u8])
            });
            let theirs = connected_components(&img, Connectivity::Four, Luma([0u8])).into_raw();
            let mut map = std::collections::HashMap::new();
            let mut back = std::collections::HashMap::new();
            for (a, b) in ours.iter().zip(&theirs) {
                assert_eq!(*a == 0, *b == 0);
                assert_eq!(
                    *map.entry(*a).or_insert(*b),
                    *b,
                    "case {case}: one of our components spans two of theirs"
                );
                assert_eq!(
                    *back.entry(*b).or_insert(*a),
                    *a,
                    "case {case}: two of our components are one of theirs"
                );
            }
        }
    }
}
