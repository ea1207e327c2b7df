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
        let best = (0u8..4)
            .min_by_key(|&d| walk(mask, (x0, y0, x1, y1), d, false))
            .unwrap();
        walk(mask, (x0, y0, x1, y1), best, true);
        // the box itself: clear it so the channel meets the hole everywhere
        for y in y0..=y1 {
            for x in x0..=x1 {
                mask.set(x, y, false);
            }
        }
    }
}

/// Set cells met walking out of box `(x0, y0, x1, y1)` in direction `dir`
/// (0 up, 1 down, 2 left, 3 right), each line until its first clear cell;
/// with `apply`, clears them.
fn walk(
    m: &mut Mask,
    (x0, y0, x1, y1): (usize, usize, usize, usize),
    dir: u8,
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
            if apply {
                m.set(x as usize, y as usize, false);
            }
            i += if dir % 2 == 0 { -1 } else { 1 };
        }
    }
    count
}
