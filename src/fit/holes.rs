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
    let complement = Mask {
        width: w,
        height: h,
        cells: mask.cells.iter().map(|&c| (c == 0) as u8).collect(),
    };
    let labels = complement.components();
    let n = labels.iter().copied().max().unwrap_or(0) as usize;
    if n == 0 {
        return;
    }
    // per label: bounding box and whether it touches the border
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
        // cells to clear in each direction: walk out of the box until a clear cell
        let walk = |m: &Mask, dir: u8, apply: bool, m2: &mut Option<&mut Mask>| -> usize {
            let mut count = 0;
            let lines: Vec<usize> = if dir < 2 {
                (x0..=x1).collect()
            } else {
                (y0..=y1).collect()
            };
            for &k in &lines {
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
                        if let Some(mm) = m2.as_mut() {
                            mm.set(x as usize, y as usize, false);
                        }
                    }
                    i += if dir % 2 == 0 { -1 } else { 1 };
                }
            }
            count
        };
        let best = (0u8..4)
            .min_by_key(|&d| walk(mask, d, false, &mut None))
            .unwrap();
        let snapshot = mask.clone();
        walk(&snapshot, best, true, &mut Some(mask));
        // the box itself: clear it so the channel meets the hole everywhere
        for y in y0..=y1 {
            for x in x0..=x1 {
                mask.set(x, y, false);
            }
        }
    }
}
