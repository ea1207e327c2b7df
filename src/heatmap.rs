//! Overdraw heatmaps: fragments shaded per pixel as colour, with a legend
//! strip below the image, and the plain 16-bit counts image.
//!
//! The colour ramp is our own: black (no fragment) through blue, purple,
//! red, orange and yellow to white, one colour per whole count from 0 to
//! `top`, the last standing for `top` and more. Its anchors are chosen so
//! that luma (ITU-R BT.709 weights, 0.2126 R + 0.7152 G + 0.0722 B) rises
//! strictly from one anchor to the next; as luma is linear in R, G and B,
//! it then rises strictly along the whole ramp, and more overdraw always
//! reads brighter, in grey print too.
//!
//! The legend labels each colour with its count in a hand-made 3 x 5 pixel
//! digit font, scaled up.

use image::{DynamicImage, ImageBuffer, ImageFormat, Luma, Pixel, Rgb, RgbImage, RgbaImage};
use std::io::Cursor;

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

/// 3 x 5 glyphs, a row per byte, the high of 3 bits leftmost: the digits,
/// `+`, and the few letters and signs captions use (`B`, `V`, `C`, `E`,
/// `%`, `.`); any other character is blank (a space).
pub(crate) fn glyph(c: char) -> [u8; 5] {
    match c {
        '0' => [7, 5, 5, 5, 7],
        '1' => [2, 6, 2, 2, 7],
        '2' => [7, 1, 7, 4, 7],
        '3' => [7, 1, 3, 1, 7],
        '4' => [5, 5, 7, 1, 1],
        '5' => [7, 4, 7, 1, 7],
        '6' => [7, 4, 7, 5, 7],
        '7' => [7, 1, 2, 2, 2],
        '8' => [7, 5, 7, 5, 7],
        '9' => [7, 5, 7, 1, 7],
        '+' => [0, 2, 7, 2, 0],
        'B' => [6, 5, 6, 5, 6],
        'V' => [5, 5, 5, 5, 2],
        'C' => [7, 4, 4, 4, 7],
        'E' => [7, 4, 6, 4, 7],
        '%' => [5, 1, 2, 4, 5],
        '.' => [0, 0, 0, 0, 2],
        _ => [0; 5],
    }
}

/// Draws `text` with its top-left at (x, y), `px` image pixels per font
/// pixel, each character 4 font pixels wide (3 and a gap); ink outside the
/// image is dropped.
pub(crate) fn draw_text<P: Pixel>(
    img: &mut ImageBuffer<P, Vec<P::Subpixel>>,
    text: &str,
    x: u32,
    y: u32,
    px: u32,
    colour: P,
) {
    for (n, c) in text.chars().enumerate() {
        let g = glyph(c);
        let gx = x + n as u32 * 4 * px;
        for (row, bits) in g.iter().enumerate() {
            for col in 0..3 {
                if bits & (4 >> col) == 0 {
                    continue;
                }
                for dy in 0..px {
                    for dx in 0..px {
                        let (ix, iy) = (gx + col * px + dx, y + row as u32 * px + dy);
                        if ix < img.width() && iy < img.height() {
                            img.put_pixel(ix, iy, colour);
                        }
                    }
                }
            }
        }
    }
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
    let px = (strip / 8).max(1);
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
        let text_w = label.len() as u32 * 4 * px - px;
        let ink = if luma(colour) > 110.0 {
            [0, 0, 0]
        } else {
            [255, 255, 255]
        };
        let tx = x0 + (x1 - x0).saturating_sub(text_w) / 2;
        let ty = height + strip.saturating_sub(5 * px) / 2;
        draw_text(&mut img, &label, tx, ty, px, Rgb(ink));
    }
    img
}

fn png(image: DynamicImage) -> Vec<u8> {
    let mut bytes = Vec::new();
    image
        .write_to(&mut Cursor::new(&mut bytes), ImageFormat::Png)
        .expect("PNG encoding into memory does not fail");
    bytes
}

/// An RGBA image as PNG bytes.
pub fn rgba_png(img: RgbaImage) -> Vec<u8> {
    png(DynamicImage::ImageRgba8(img))
}

/// An RGB image as PNG bytes.
pub fn rgb_png(img: RgbImage) -> Vec<u8> {
    png(DynamicImage::ImageRgb8(img))
}

/// Per-pixel counts as a 16-bit greyscale PNG (counts above 65535 clamp).
pub fn counts_png(counts: &[u32], width: u32, height: u32) -> Vec<u8> {
    let data: Vec<u16> = counts
        .iter()
        .map(|&c| c.min(u16::MAX as u32) as u16)
        .collect();
    let buf: ImageBuffer<Luma<u16>, Vec<u16>> =
        ImageBuffer::from_raw(width, height, data).expect("counts are width x height");
    png(DynamicImage::ImageLuma16(buf))
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

    /// Every glyph used in labels is distinct and inked.
    #[test]
    fn digits_are_distinct() {
        let gs: Vec<[u8; 5]> = "0123456789+BVCE%.".chars().map(glyph).collect();
        for (i, a) in gs.iter().enumerate() {
            assert!(a.iter().any(|&r| r != 0));
            for b in &gs[i + 1..] {
                assert_ne!(a, b);
            }
        }
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
