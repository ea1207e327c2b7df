//! Overdraw heatmaps: fragments shaded per pixel as colour, with a legend
//! strip below the image (as PNG bytes with [`crate::present::png`]).
//!
//! The colour ramp is our own: black (no fragment) through blue, purple,
//! red, orange and yellow to white, one colour per whole count from 0 to
//! `top`, the last standing for `top` and more. Its anchors are chosen so
//! that luma (ITU-R BT.709 weights, 0.2126 R + 0.7152 G + 0.0722 B) rises
//! strictly from one anchor to the next; as luma is linear in R, G and B,
//! it then rises strictly along the whole ramp, and more overdraw always
//! reads brighter, in grey print too.
//!
//! The legend labels each colour with its count, drawn with the embedded
//! font of [`crate::present::glyphs`] at half the strip's height.

use crate::present::glyphs::{draw_text, line_height, text_width};
use image::{Rgb, RgbImage};

/// The ramp's anchors, evenly spaced from 0 to 1.
const ANCHORS: [[u8; 3]; 7] = [
    [0, 0, 0],
    [30, 20, 150],
    [150, 30, 160],
    [230, 50, 50],
    [250, 140, 20],
    [250, 230, 60],
    [255, 255, 255],
];

/// Luma by the ITU-R BT.709 weights, 0 to 255.
pub fn luma(c: [u8; 3]) -> f64 {
    0.2126 * c[0] as f64 + 0.7152 * c[1] as f64 + 0.0722 * c[2] as f64
}

/// The colour of `t` in [0, 1] along the ramp (linear between anchors).
pub fn ramp(t: f64) -> [u8; 3] {
    let t = t.clamp(0.0, 1.0) * (ANCHORS.len() - 1) as f64;
    let i = (t.floor() as usize).min(ANCHORS.len() - 2);
    let f = t - i as f64;
    let (a, b) = (ANCHORS[i], ANCHORS[i + 1]);
    std::array::from_fn(|k| (a[k] as f64 + f * (b[k] as f64 - a[k] as f64)).round() as u8)
}

/// The colour of `count` fragments on a ramp from 0 to `top` (`top` >= 1).
pub fn count_colour(count: u32, top: u32) -> [u8; 3] {
    ramp(count.min(top) as f64 / top.max(1) as f64)
}

/// Height of the legend strip below a heatmap of `height` pixels.
pub fn legend_height(height: u32) -> u32 {
    (height / 14).clamp(24, 120)
}

/// The heatmap of per-pixel fragment counts (row-major, `width` x
/// `height`), colours on a ramp from 0 to `top`, with a legend strip of
/// [`legend_height`] below: one box per count 0..=top, labelled, the last
/// labelled `top+`.
pub fn heatmap(counts: &[u32], width: u32, height: u32, top: u32) -> RgbImage {
    let top = top.max(1);
    let strip = legend_height(height);
    let mut img = RgbImage::new(width, height + strip);
    for (i, &c) in counts.iter().enumerate() {
        let (x, y) = (i as u32 % width, i as u32 / width);
        img.put_pixel(x, y, Rgb(count_colour(c, top)));
    }
    let boxes = top + 1;
    let px = strip as f32 * 0.5;
    for b in 0..boxes {
        let (x0, x1) = (b * width / boxes, (b + 1) * width / boxes);
        let colour = count_colour(b, top);
        for y in height..height + strip {
            for x in x0..x1 {
                img.put_pixel(x, y, Rgb(colour));
            }
        }
        let label = if b == top {
            format!("{b}+")
        } else {
            b.to_string()
        };
        let ink = if luma(colour) > 110.0 {
            [0, 0, 0]
        } else {
            [255, 255, 255]
        };
        let tx = x0 + (x1 - x0).saturating_sub(text_width(&label, px)) / 2;
        let ty = height + strip.saturating_sub(line_height(px)) / 2;
        draw_text(&mut img, &label, tx as i32, ty as i32, px, Rgb(ink));
    }
    img
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Luma (ITU-R BT.709 weights) rises strictly with the count, at every
    /// scale a heatmap can use.
    #[test]
    fn more_overdraw_is_brighter() {
        for top in 1..=40 {
            let l: Vec<f64> = (0..=top).map(|c| luma(count_colour(c, top))).collect();
            assert!(l.windows(2).all(|w| w[1] > w[0]), "top {top}: {l:?}");
        }
        assert_eq!(count_colour(0, 8), [0, 0, 0]);
        assert_eq!(count_colour(99, 8), [255, 255, 255]);
    }

    #[test]
    fn the_map_shows_counts_and_the_legend_every_colour() {
        let (w, h) = (64u32, 48u32);
        let counts: Vec<u32> = (0..w * h).map(|i| (i % w) / 8).collect();
        let img = heatmap(&counts, w, h, 4);
        assert_eq!(img.height(), h + legend_height(h));
        assert_eq!(img.get_pixel(3, 0).0, count_colour(0, 4));
        assert_eq!(img.get_pixel(60, 10).0, count_colour(7, 4));
        // each legend box shows its colour at its left edge
        for b in 0..5 {
            assert_eq!(img.get_pixel(b * w / 5, h + 1).0, count_colour(b, 4));
        }
    }
}
