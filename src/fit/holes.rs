//! Opening the holes of the safe region: each hole (a bounded part of the
//! complement), in the order of their first cells, gets a straight channel
//! as wide as the hole, in whichever of the four directions clears the
//! fewest safe cells, each line of it up to the first clear cell. That cell
//! is the outside or another hole, whose own channel usually leads out; two
//! holes whose channels lead into each other stay enclosed (rare; the
//! opened region is only a candidate the fitter weighs, the contract does
//! not depend on it). Only ever shrinks the mask. An island whose holes cannot all be kept
//! within the budget may then still keep most of its area as one ring with
//! notches, instead of being dropped whole.

use crate::mask::{Mask, RowRuns};

/// A hole's bounding box `(x0, y0, x1, y1)`, inclusive, in cells.
type HoleBox = (usize, usize, usize, usize);

/// The bounding boxes of the holes of the region `runs` describes (the
/// components of its complement that touch no border), in the order of
/// their first cells.
fn hole_boxes(runs: &RowRuns) -> Vec<HoleBox> {
    let (w, h) = (runs.width, runs.height);
    let labels = runs.complement().labels();
    let n = labels.count() as usize;
    // per label: bounding box and whether it touches the border
    let mut boxes = vec![(usize::MAX, usize::MAX, 0usize, 0usize, false); n + 1];
    for y in 0..h {
        for ([x0, x1], l) in labels.row(y) {
            let (x0, x1) = (x0 as usize, x1 as usize);
            let b = &mut boxes[l as usize];
            b.0 = b.0.min(x0);
            b.1 = b.1.min(y);
            b.2 = b.2.max(x1 - 1);
            b.3 = b.3.max(y);
            b.4 |= x0 == 0 || y == 0 || x1 == w || y == h - 1;
        }
    }
    boxes
        .into_iter()
        .skip(1)
        .filter(|&(x0, _, _, _, border)| !border && x0 != usize::MAX)
        .map(|(x0, y0, x1, y1, _)| (x0, y0, x1, y1))
        .collect()
}

/// What opening holes needs of a region's cells.
trait Cells {
    /// [`walk`] on these cells.
    fn walk(&mut self, bx: HoleBox, dir: u8, limit: usize, apply: bool) -> usize;
    /// Clears every cell of the box.
    fn clear_box(&mut self, bx: HoleBox);
}

/// Opens the holes `boxes` of `cells`, one after the other.
fn open_boxes(cells: &mut impl Cells, boxes: &[HoleBox]) {
    for &bx in boxes {
        // cells to clear in each direction: walk out of the box until a
        // clear cell. Each line of the walk reads only its own cells, each
        // before it clears it, so it can clear the cells it walks.
        // The along-row walks first (they are cheapest), then the others
        // stopped once they pass the best so far: a walk stopped past the
        // best cannot be the least, so the choice is the least count, the
        // first direction on a tie, as if all were walked out
        let mut best: Option<(usize, u8)> = None;
        for d in [2u8, 3, 0, 1] {
            let limit = best.map_or(usize::MAX, |(c, _)| c);
            let c = cells.walk(bx, d, limit, false);
            if best.is_none_or(|(bc, bd)| c < bc || (c == bc && d < bd)) {
                best = Some((c, d));
            }
        }
        let (_, best) = best.expect("four directions");
        cells.walk(bx, best, usize::MAX, true);
        // the box itself: clear it so the channel meets the hole everywhere
        cells.clear_box(bx);
    }
}

/// Opens the holes of `mask` (see the module docs).
pub fn open_holes(mask: &mut Mask) {
    if mask.width == 0 || mask.height == 0 {
        return;
    }
    let boxes = hole_boxes(&mask.row_runs());
    open_boxes(mask, &boxes);
}

/// [`open_holes`] on a region's runs, with no mask: the same cells cleared.
pub fn open_holes_in_runs(runs: &RowRuns) -> RowRuns {
    let boxes = hole_boxes(runs);
    let mut rows = RunRows {
        rows: (0..runs.height).map(|y| runs.row(y).to_vec()).collect(),
        width: runs.width,
    };
    open_boxes(&mut rows, &boxes);
    let mut out = RowRuns::new(runs.width);
    for r in &rows.rows {
        out.push_row(r);
    }
    out
}

impl Cells for Mask {
    fn walk(&mut self, bx: HoleBox, dir: u8, limit: usize, apply: bool) -> usize {
        walk(self, bx, dir, limit, apply)
    }
    fn clear_box(&mut self, (x0, y0, x1, y1): HoleBox) {
        let w = self.width;
        for y in y0..=y1 {
            self.cells[y * w + x0..=y * w + x1].fill(0);
        }
    }
}

/// A region as one editable list of runs a row.
struct RunRows {
    rows: Vec<Vec<[u32; 2]>>,
    width: usize,
}

impl RunRows {
    /// The run of row `y` holding cell `x`, if it is set.
    fn run_at(&self, x: usize, y: usize) -> Option<[u32; 2]> {
        let row = &self.rows[y];
        let i = row.partition_point(|r| r[1] as usize <= x);
        row.get(i).copied().filter(|r| r[0] as usize <= x)
    }
    /// Clears cells `a..b` of row `y`.
    fn clear(&mut self, y: usize, a: u32, b: u32) {
        let row = &mut self.rows[y];
        let i = row.partition_point(|r| r[1] <= a);
        let j = i + row[i..].iter().take_while(|r| r[0] < b).count();
        if i == j {
            return;
        }
        let (first, last) = (row[i], row[j - 1]);
        let mut keep = Vec::with_capacity(2);
        if first[0] < a {
            keep.push([first[0], a]);
        }
        if last[1] > b {
            keep.push([b, last[1]]);
        }
        row.splice(i..j, keep);
    }
}

impl Cells for RunRows {
    fn walk(&mut self, (x0, y0, x1, y1): HoleBox, dir: u8, limit: usize, apply: bool) -> usize {
        let mut count = 0;
        if dir >= 2 {
            // along the rows: the run next to the box's side, read whole
            for y in y0..=y1 {
                let next = if dir == 2 {
                    x0.checked_sub(1)
                } else {
                    Some(x1 + 1)
                };
                let Some(r) = next
                    .filter(|&x| x < self.width)
                    .and_then(|x| self.run_at(x, y))
                else {
                    continue;
                };
                let (a, b) = if dir == 2 {
                    (r[0], x0 as u32)
                } else {
                    ((x1 + 1) as u32, r[1])
                };
                count += (b - a) as usize;
                if count > limit {
                    return count;
                }
                if apply {
                    self.clear(y, a, b);
                }
            }
            return count;
        }
        // down the columns, cell by cell
        let h = self.rows.len();
        for x in x0..=x1 {
            let mut y = if dir == 0 {
                y0.checked_sub(1)
            } else {
                Some(y1 + 1)
            };
            while let Some(yy) = y.filter(|&yy| yy < h && self.run_at(x, yy).is_some()) {
                count += 1;
                if count > limit {
                    return count;
                }
                if apply {
                    self.clear(yy, x as u32, x as u32 + 1);
                }
                y = if dir == 0 {
                    yy.checked_sub(1)
                } else {
                    Some(yy + 1)
                };
            }
        }
        count
    }
    fn clear_box(&mut self, (x0, y0, x1, y1): HoleBox) {
        for y in y0..=y1 {
            self.clear(y, x0 as u32, x1 as u32 + 1);
        }
    }
}

/// Set cells met walking out of box `(x0, y0, x1, y1)` in direction `dir`
/// (0 up, 1 down, 2 left, 3 right), each line until its first clear cell;
/// with `apply`, clears them. Stops once the count passes `limit` (and
/// returns that count, more than `limit`).
fn walk(
    m: &mut Mask,
    (x0, y0, x1, y1): (usize, usize, usize, usize),
    dir: u8,
    limit: usize,
    apply: bool,
) -> usize {
    let mut count = 0;
    let lines = if dir < 2 { x0..=x1 } else { y0..=y1 };
    for k in lines {
        let mut i: i64 = match dir {
            0 => y0 as i64 - 1,
            1 => y1 as i64 + 1,
            2 => x0 as i64 - 1,
            _ => x1 as i64 + 1,
        };
        loop {
            let (x, y) = if dir < 2 {
                (k as i64, i)
            } else {
                (i, k as i64)
            };
            if !m.get_i(x, y) {
                break;
            }
            count += 1;
            if count > limit {
                return count;
            }
            if apply {
                m.set(x as usize, y as usize, false);
            }
            i += if dir % 2 == 0 { -1 } else { 1 };
        }
    }
    count
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_rng::Lcg;

    /// [`open_holes`] as first written: every direction walked out in full,
    /// the first least kept, cell by cell on a complement mask.
    fn open_holes_by_full_walks(mask: &mut Mask) {
        let (w, h) = (mask.width, mask.height);
        let complement = Mask {
            width: w,
            height: h,
            cells: mask.cells.iter().map(|&c| (c == 0) as u8).collect(),
        };
        let labels = complement.components();
        let n = labels.iter().copied().max().unwrap_or(0) as usize;
        let mut boxes = vec![(usize::MAX, usize::MAX, 0usize, 0usize, false); n + 1];
        for y in 0..h {
            for x in 0..w {
                let l = labels[y * w + x] as usize;
                if l == 0 {
                    continue;
                }
                let b = &mut boxes[l];
                b.0 = b.0.min(x);
                b.1 = b.1.min(y);
                b.2 = b.2.max(x);
                b.3 = b.3.max(y);
                b.4 |= x == 0 || y == 0 || x == w - 1 || y == h - 1;
            }
        }
        for &(x0, y0, x1, y1, border) in boxes.iter().skip(1) {
            if border || x0 == usize::MAX {
                continue;
            }
            let bx = (x0, y0, x1, y1);
            let best = (0u8..4)
                .min_by_key(|&d| walk(mask, bx, d, usize::MAX, false))
                .unwrap();
            walk(mask, bx, best, usize::MAX, true);
            for y in y0..=y1 {
                for x in x0..=x1 {
                    mask.set(x, y, false);
                }
            }
        }
    }

    /// Stopping walks early and reading the holes off the runs opens
    /// exactly the channels full walks open, on the mask and on its runs, on random masks full of holes
    /// and with ties between directions.
    #[test]
    fn bounded_walks_open_like_full_walks() {
        let mut rng = Lcg(5150);
        for case in 0..300 {
            let (w, h) = (3 + case % 29, 3 + case % 17);
            let m = rng.mask(w, h, |_, r| r >= 10 + case as u64 % 30);
            let mut ours = m.clone();
            open_holes(&mut ours);
            let mut theirs = m.clone();
            open_holes_by_full_walks(&mut theirs);
            assert_eq!(ours, theirs, "case {case}: {m:?}");
            let on_runs = open_holes_in_runs(&m.row_runs());
            assert_eq!(on_runs.to_mask(), theirs, "case {case}, on runs: {m:?}");
        }
    }
}
