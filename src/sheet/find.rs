//! Regions found from a sheet's alpha, for a sheet without a regions file:
//! each group of visible texels (alpha at least `visible_min`; texels that
//! touch, diagonals included) separated from the others by at least one
//! transparent texel becomes a region, its bounding box. Groups whose boxes
//! overlap (a sprite with a detached part inside its outline, an L around
//! another) are one region, so regions never overlap. They are named
//! `<sheet>-<n>` (n from 1) in reading order: lines of boxes top to bottom
//! (a box starting above the bottom of a line's first box joins that line),
//! left to right within a line.

use super::regions::Rect;
use crate::alpha::AlphaMap;

/// The bounding boxes of the groups of visible texels, in reading order.
pub fn find_regions(sheet: &AlphaMap, visible_min: u8) -> Vec<Rect> {
    let (w, h) = (sheet.width as usize, sheet.height as usize);
    let mut seen = vec![false; w * h];
    let mut boxes: Vec<[u32; 4]> = Vec::new(); // x0, y0, x1, y1 (exclusive)
    let mut stack = Vec::new();
    for start in 0..w * h {
        if seen[start] || sheet.alpha[start] < visible_min {
            continue;
        }
        seen[start] = true;
        stack.push(start);
        let mut b = [u32::MAX, u32::MAX, 0, 0];
        while let Some(i) = stack.pop() {
            let (x, y) = (i % w, i / w);
            b = [
                b[0].min(x as u32),
                b[1].min(y as u32),
                b[2].max(x as u32 + 1),
                b[3].max(y as u32 + 1),
            ];
            for ny in y.saturating_sub(1)..(y + 2).min(h) {
                for nx in x.saturating_sub(1)..(x + 2).min(w) {
                    let j = ny * w + nx;
                    if !seen[j] && sheet.alpha[j] >= visible_min {
                        seen[j] = true;
                        stack.push(j);
                    }
                }
            }
        }
        boxes.push(b);
    }
    // merge overlapping boxes until none overlap
    loop {
        let mut merged = false;
        let mut i = 0;
        while i < boxes.len() {
            let mut j = i + 1;
            while j < boxes.len() {
                let (a, c) = (boxes[i], boxes[j]);
                if a[0] < c[2] && c[0] < a[2] && a[1] < c[3] && c[1] < a[3] {
                    boxes[i] = [
                        a[0].min(c[0]),
                        a[1].min(c[1]),
                        a[2].max(c[2]),
                        a[3].max(c[3]),
                    ];
                    boxes.swap_remove(j);
                    merged = true;
                } else {
                    j += 1;
                }
            }
            i += 1;
        }
        if !merged {
            break;
        }
    }
    reading_order(&mut boxes);
    boxes
        .into_iter()
        .map(|b| Rect {
            x: b[0],
            y: b[1],
            w: b[2] - b[0],
            h: b[3] - b[1],
        })
        .collect()
}

/// Sorts boxes (x0, y0, x1, y1) into lines top to bottom, each left to right.
fn reading_order(boxes: &mut [[u32; 4]]) {
    boxes.sort_by_key(|b| (b[1], b[0]));
    let mut start = 0;
    while start < boxes.len() {
        let bottom = boxes[start][3];
        let end = start + boxes[start..].iter().take_while(|b| b[1] < bottom).count();
        boxes[start..end].sort_by_key(|b| (b[0], b[1]));
        start = end;
    }
}

/// The names of found regions: `<stem>-1`, `<stem>-2`, ...
pub fn region_names(stem: &str, count: usize) -> Vec<String> {
    (1..=count).map(|n| format!("{stem}-{n}")).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn diagonal_texels_join_and_boxes_read_in_lines() {
        // 8 x 5: a diagonal pair at (0,0),(1,1); a dot at (5,0); a dot at
        // (3,3) below; an L around (6..8, 2..5) holding a dot inside its box
        let mut a = vec![0u8; 40];
        for (x, y) in [
            (0, 0),
            (1, 1),
            (5, 0),
            (3, 3),
            (6, 2),
            (6, 3),
            (6, 4),
            (7, 4),
        ] {
            a[y * 8 + x] = 255;
        }
        a[2 * 8 + 7] = 9; // inside the L's box, detached from it
        let r = find_regions(&AlphaMap::from_raw(8, 5, a), 1);
        let got: Vec<[u32; 4]> = r.iter().map(|r| r.to_array()).collect();
        assert_eq!(
            got,
            vec![[0, 0, 2, 2], [5, 0, 1, 1], [3, 3, 1, 1], [6, 2, 2, 3]]
        );
    }
}
