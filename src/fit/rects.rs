//! The largest axis-aligned rectangle of set cells in each 4-connected
//! component of a mask (the classic row-histogram stack method): the
//! fitter's four-vertex stand-in for an island too costly to outline.

use crate::mask::Mask;
use std::collections::HashMap;

/// Per component label (as `imageproc`'s 4-connected labelling numbers
/// them), the largest rectangle `[x0, y0, x1, y1]` (half units, exclusive
/// upper corner) of set cells.
pub fn largest_rectangles(
    mask: &Mask,
    label_at: impl Fn(usize, usize) -> u32,
) -> HashMap<u32, [i64; 4]> {
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_the_largest_rectangle_of_an_l_shape() {
        // an L: a 6x2 bar under a 2x4 post; the bar (12 cells) beats the post (2x6=12? no: 2x6 post = 12)
        let mut m = Mask::new(6, 6, false);
        for y in 0..6 {
            for x in 0..6 {
                m.set(x, y, x < 2 || y >= 3);
            }
        }
        let labels = vec![1u32; 36];
        let r = largest_rectangles(&m, |x, y| labels[y * 6 + x])[&1];
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
}
