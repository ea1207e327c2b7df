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
