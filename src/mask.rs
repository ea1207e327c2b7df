//! A binary mask on the half-texel grid: cell (a, b) is the square
//! [a/2, a/2 + 1/2] x [b/2, b/2 + 1/2] in texel units.
//!
//! Every region the contract speaks of (opaque blocks at any mip level,
//! eroded or dilated by 2^(l-1) texels) has its edges on multiples of half a
//! texel, so each such region is exactly a union of half-grid cells.
//! Lattice coordinates ("half units") are integers: texel x = half / 2.

/// A binary mask, row-major, one byte a cell (0 or 1).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Mask {
    pub width: usize,
    pub height: usize,
    pub cells: Vec<u8>,
}

impl Mask {
    pub fn new(width: usize, height: usize, value: bool) -> Mask {
        Mask {
            width,
            height,
            cells: vec![value as u8; width * height],
        }
    }
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
    #[inline]
    pub fn set(&mut self, x: usize, y: usize, v: bool) {
        self.cells[y * self.width + x] = v as u8;
    }
    pub fn count(&self) -> usize {
        self.cells.iter().filter(|&&c| c != 0).count()
    }
    pub fn is_empty(&self) -> bool {
        self.cells.iter().all(|&c| c == 0)
    }
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
        if self.width < 2 || self.height < 2 {
            return;
        }
        loop {
            let mut changed = false;
            for y in 0..self.height - 1 {
                for x in 0..self.width - 1 {
                    let a = self.get(x, y);
                    let b = self.get(x + 1, y);
                    let c = self.get(x, y + 1);
                    let d = self.get(x + 1, y + 1);
                    if a == d && b == c && a != b {
                        // diagonal pair
                        if grow {
                            if a {
                                self.set(x + 1, y, true);
                            } else {
                                self.set(x, y, true);
                            }
                        } else if a {
                            self.set(x, y, false);
                        } else {
                            self.set(x + 1, y, false);
                        }
                        changed = true;
                    }
                }
            }
            if !changed {
                break;
            }
        }
    }

    /// Row prefix sums: `p[y * (w + 1) + x]` = set cells in row y before x.
    pub fn row_prefix(&self) -> RowPrefix {
        let w = self.width;
        let mut sums = vec![0u32; (w + 1) * self.height];
        for y in 0..self.height {
            let row = &self.cells[y * w..(y + 1) * w];
            let out = &mut sums[y * (w + 1)..(y + 1) * (w + 1)];
            let mut acc = 0u32;
            out[0] = 0;
            for x in 0..w {
                acc += row[x] as u32;
                out[x + 1] = acc;
            }
        }
        RowPrefix {
            width: w,
            height: self.height,
            sums,
        }
    }
}

/// Row prefix sums of a [`Mask`], to count set cells of a row span in O(1).
#[derive(Clone, Debug)]
pub struct RowPrefix {
    pub width: usize,
    pub height: usize,
    sums: Vec<u32>,
}

impl RowPrefix {
    /// Set cells in row `y`, columns `x0..x1` (clamped to the mask).
    #[inline]
    pub fn count(&self, y: usize, x0: i64, x1: i64) -> u32 {
        let x0 = x0.clamp(0, self.width as i64) as usize;
        let x1 = x1.clamp(0, self.width as i64) as usize;
        if x1 <= x0 {
            return 0;
        }
        let r = y * (self.width + 1);
        self.sums[r + x1] - self.sums[r + x0]
    }
}

impl Mask {
    /// 4-connected component labels of the set cells, row-major: 0 for an
    /// unset cell, 1..=n for the components, numbered in order of their
    /// first cell in row-major order. Works on runs of set cells with a
    /// union-find over runs, so its cost follows the number of runs, not of
    /// cells, apart from writing the labels.
    pub fn components(&self) -> Vec<u32> {
        let (w, h) = (self.width, self.height);
        // runs: (row, x0, x1)
        let mut runs: Vec<(usize, usize, usize)> = Vec::new();
        let mut row_start = Vec::with_capacity(h + 1);
        for y in 0..h {
            row_start.push(runs.len());
            let row = &self.cells[y * w..(y + 1) * w];
            let mut x = 0;
            while x < w {
                if row[x] != 0 {
                    let s = x;
                    while x < w && row[x] != 0 {
                        x += 1;
                    }
                    runs.push((y, s, x));
                } else {
                    x += 1;
                }
            }
        }
        row_start.push(runs.len());
        let mut parent: Vec<u32> = (0..runs.len() as u32).collect();
        fn find(p: &mut [u32], mut i: u32) -> u32 {
            while p[i as usize] != i {
                p[i as usize] = p[p[i as usize] as usize];
                i = p[i as usize];
            }
            i
        }
        for y in 1..h {
            let (mut a, a_end) = (row_start[y - 1], row_start[y]);
            let (mut b, b_end) = (row_start[y], row_start[y + 1]);
            while a < a_end && b < b_end {
                let (_, ax0, ax1) = runs[a];
                let (_, bx0, bx1) = runs[b];
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
        let mut labels = vec![0u32; w * h];
        let mut name = vec![0u32; runs.len()];
        let mut next = 0u32;
        for i in 0..runs.len() {
            let r = find(&mut parent, i as u32) as usize;
            if name[r] == 0 {
                next += 1;
                name[r] = next;
            }
            let (y, x0, x1) = runs[i];
            labels[y * w + x0..y * w + x1].fill(name[r]);
        }
        labels
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use image::{GrayImage, Luma};
    use imageproc::region_labelling::{connected_components, Connectivity};

    /// The run-based labelling partitions cells exactly as imageproc's
    /// connected_components (general-purpose reference library) does.
    #[test]
    fn components_match_imageproc() {
        let mut seed = 12345u64;
        for case in 0..40 {
            let (w, h) = (1 + case % 13 * 5, 1 + case % 7 * 6);
            let mut m = Mask::new(w, h, false);
            for c in m.cells.iter_mut() {
                seed = seed
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                *c = ((seed >> 33) % 100 < 55) as u8;
            }
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
