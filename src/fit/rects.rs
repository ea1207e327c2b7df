//! The largest axis-aligned rectangle of set cells in each 4-connected
//! component of a mask (the classic row-histogram stack method): the
//! fitter's four-vertex stand-in for an island too costly to outline.

use crate::mask::RunLabels;
use std::collections::HashMap;

/// Per component label (as `imageproc`'s 4-connected labelling numbers
/// them), the largest rectangle `[x0, y0, x1, y1]` (half units, exclusive
/// upper corner) of set cells; of equal ones the first found scanning rows
/// top to bottom, each left to right.
///
/// From the runs: a column's histogram height at row `y` is `y + 1` minus
/// the row where its current stretch of set cells began (kept per column,
/// updated only where a run reaches columns the row above did not have),
/// and the stack pass runs only over each run's columns, only on rows whose
/// next row differs: a rectangle ending on a row the next row repeats grows
/// by extending it, so it is never the largest. Cost: the set cells of the
/// rows where the region changes, plus the runs.
pub fn largest_rectangles(labels: &RunLabels) -> HashMap<u32, [i64; 4]> {
    let runs = &labels.runs;
    let h = runs.height;
    let mut best: HashMap<u32, (i64, [i64; 4])> = HashMap::new();
    // first row of each column's current stretch of set cells
    let mut top = vec![0usize; runs.width];
    let mut stack: Vec<(usize, usize)> = Vec::new(); // (start column, height)
    for y in 0..h {
        let row = runs.row(y);
        let above: &[[u32; 2]] = if y > 0 { runs.row(y - 1) } else { &[] };
        // columns of this row's runs that the row above does not have
        let mut k = 0;
        for &[x0, x1] in row {
            let mut x = x0;
            while x < x1 {
                while k < above.len() && above[k][1] <= x {
                    k += 1;
                }
                let gap_end = match above.get(k) {
                    Some(r) if r[0] <= x => {
                        x = r[1].min(x1);
                        continue;
                    }
                    Some(r) => r[0].min(x1),
                    None => x1,
                };
                top[x as usize..gap_end as usize].fill(y);
                x = gap_end;
            }
        }
        if y + 1 < h && runs.row(y + 1) == row {
            continue;
        }
        for (&[x0, x1], label) in row.iter().zip(labels.row(y).map(|(_, l)| l)) {
            let (x0, x1) = (x0 as usize, x1 as usize);
            stack.clear();
            for x in x0..=x1 {
                let hx = if x < x1 { y + 1 - top[x] } else { 0 };
                let mut start = x;
                while let Some(&(s, hs)) = stack.last() {
                    if hs <= hx {
                        break;
                    }
                    stack.pop();
                    // rectangle columns s..x, rows y+1-hs..=y
                    let area = (hs * (x - s)) as i64;
                    let rect = [s as i64, (y + 1 - hs) as i64, x as i64, (y + 1) as i64];
                    let e = best.entry(label).or_insert((0, rect));
                    if area > e.0 {
                        *e = (area, rect);
                    }
                    start = s;
                }
                if hx > 0 && stack.last().map_or(true, |&(_, hs)| hs < hx) {
                    stack.push((start, hx));
                }
            }
        }
    }
    best.into_iter().map(|(k, (_, r))| (k, r)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mask::Mask;
    use crate::test_rng::Lcg;

    /// The classic method cell by cell (the previous implementation): per
    /// component label (as `imageproc`'s 4-connected labelling numbers
    /// them), the largest rectangle `[x0, y0, x1, y1]` (half units, exclusive
    /// upper corner) of set cells.
    fn cell_by_cell(mask: &Mask, label_at: impl Fn(usize, usize) -> u32) -> HashMap<u32, [i64; 4]> {
        let (w, h) = (mask.width, mask.height);
        let mut best: HashMap<u32, (i64, [i64; 4])> = HashMap::new();
        let mut heights = vec![0usize; w];
        let mut stack: Vec<(usize, usize)> = Vec::new(); // (start column, height)
        for y in 0..h {
            for x in 0..w {
                heights[x] = if mask.get(x, y) { heights[x] + 1 } else { 0 };
            }
            stack.clear();
            for x in 0..=w {
                let hx = if x < w { heights[x] } else { 0 };
                let mut start = x;
                while let Some(&(s, hs)) = stack.last() {
                    if hs <= hx {
                        break;
                    }
                    stack.pop();
                    // rectangle columns s..x, rows y+1-hs..=y
                    let area = (hs * (x - s)) as i64;
                    let label = label_at(s, y);
                    let rect = [s as i64, (y + 1 - hs) as i64, x as i64, (y + 1) as i64];
                    let e = best.entry(label).or_insert((0, rect));
                    if area > e.0 {
                        *e = (area, rect);
                    }
                    start = s;
                }
                if hx > 0 && stack.last().map_or(true, |&(_, hs)| hs < hx) {
                    stack.push((start, hx));
                }
            }
        }
        best.into_iter().map(|(k, (_, r))| (k, r)).collect()
    }

    #[test]
    fn finds_the_largest_rectangle_of_an_l_shape() {
        // an L: a 6x2 bar under a 2x4 post; the bar (12 cells) beats the post (2x6=12? no: 2x6 post = 12)
        let mut m = Mask::new(6, 6, false);
        for y in 0..6 {
            for x in 0..6 {
                m.set(x, y, x < 2 || y >= 3);
            }
        }
        let r = largest_rectangles(&m.run_labels())[&1];
        let area = (r[2] - r[0]) * (r[3] - r[1]);
        // brute force over all rectangles as the reference
        let mut brute = 0;
        for x0 in 0..6 {
            for x1 in x0 + 1..=6 {
                for y0 in 0..6 {
                    for y1 in y0 + 1..=6 {
                        if (y0..y1).all(|y| (x0..x1).all(|x| m.get(x, y))) {
                            brute = brute.max((x1 - x0) * (y1 - y0));
                        }
                    }
                }
            }
        }
        assert_eq!(area, brute as i64);
        assert!((r[1]..r[3]).all(|y| (r[0]..r[2]).all(|x| m.get(x as usize, y as usize))));
    }

    /// The run-based method picks exactly the rectangles of the cell-based
    /// one (same areas, same first-found ties) on random masks, with runs of
    /// repeated rows among them.
    #[test]
    fn runs_pick_the_rectangles_cells_pick() {
        let mut rng = Lcg(4242);
        for case in 0..200 {
            let (w, h) = (1 + case % 19, 1 + case % 11 * 2);
            let mut m = Mask::new(w, h, false);
            for y in 0..h {
                if y > 0 && case % 3 == 0 && y % 3 != 0 {
                    // repeat the row above
                    let (a, b) = m.cells.split_at_mut(y * w);
                    b[..w].copy_from_slice(&a[(y - 1) * w..]);
                    continue;
                }
                for x in 0..w {
                    m.set(x, y, rng.below(100) < 70);
                }
            }
            let labels = m.components();
            let theirs = cell_by_cell(&m, |x, y| labels[y * w + x]);
            assert_eq!(
                largest_rectangles(&m.run_labels()),
                theirs,
                "case {case}: {m:?}"
            );
        }
    }
}
