//! Opening the holes of the safe region: each hole (a bounded part of the
//! complement) is joined to the outside by a straight channel as wide as the
//! hole, in whichever of the four directions clears the fewest safe cells.
//! Only ever shrinks the mask. An island whose holes cannot all be kept
//! within the budget may then still keep most of its area as one ring with
//! notches, instead of being dropped whole.

use crate::mask::Mask;

/// Opens every hole of `mask` (see the module docs).
pub fn open_holes(mask: &mut Mask) {
    let (w, h) = (mask.width, mask.height);
    if w == 0 || h == 0 {
        return;
    }
    // the complement's components, from the mask's runs
    let labels = mask.row_runs().complement().labels();
    let n = labels.count() as usize;
    if n == 0 {
        return;
    }
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
    drop(labels);
    for &(x0, y0, x1, y1, border) in boxes.iter().skip(1) {
        if border || x0 == usize::MAX {
            continue;
        }
        // cells to clear in each direction: walk out of the box until a
        // clear cell. Each line of the walk reads only its own cells, each
        // before it clears it, so it can clear the mask it walks.
        // the along-row walks first (they read contiguous cells), then the
        // others stopped once they pass the best so far: a walk stopped
        // past the best cannot be the least, so the choice is the least
        // count, the first direction on a tie, as if all were walked out
        let bx = (x0, y0, x1, y1);
        let mut best: Option<(usize, u8)> = None;
        for d in [2u8, 3, 0, 1] {
            let limit = best.map_or(usize::MAX, |(c, _)| c);
            let c = walk(mask, bx, d, limit, false);
            if best.is_none_or(|(bc, bd)| c < bc || (c == bc && d < bd)) {
                best = Some((c, d));
            }
        }
        let (_, best) = best.expect("four directions");
        walk(mask, bx, best, usize::MAX, true);
        // the box itself: clear it so the channel meets the hole everywhere
        for y in y0..=y1 {
            mask.cells[y * w + x0..=y * w + x1].fill(0);
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
    /// exactly the channels full walks open, on random masks full of holes
    /// and with ties between directions.
    #[test]
    fn bounded_walks_open_like_full_walks() {
        let mut seed = 5150u64;
        for case in 0..300 {
            let (w, h) = (3 + case % 29, 3 + case % 17);
            let mut m = Mask::new(w, h, true);
            for c in m.cells.iter_mut() {
                seed = seed
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                *c = ((seed >> 33) % 100 >= 10 + case as u64 % 30) as u8;
            }
            let mut ours = m.clone();
            open_holes(&mut ours);
            let mut theirs = m.clone();
            open_holes_by_full_walks(&mut theirs);
            assert_eq!(ours, theirs, "case {case}: {m:?}");
        }
    }
}
