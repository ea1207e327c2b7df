//! Text in the pictures underdraw writes (preview captions, heatmap legends):
//! real glyphs from an embedded font, laid out and rasterized by `ab_glyph`
//! and drawn by imageproc's text drawing (each pixel blended towards the
//! ink by the glyph's coverage of it).
//!
//! The font is Noto Sans Regular, embedded from the `notosans` crate; its
//! licence is the SIL Open Font License 1.1 (the crate's
//! `fonts/LICENSE_OFL.txt`), which allows embedding it in software.
//!
//! A line of text of size `px` occupies [`line_height`] pixels from the
//! `y` it is drawn at: the font's ascent, then its descent, so lines
//! stacked [`line_height`] apart never touch.

use ab_glyph::{Font, FontRef, PxScale, ScaleFont};
use image::{ImageBuffer, Pixel};
use std::sync::OnceLock;

/// The embedded font's name.
pub const FONT_NAME: &str = "Noto Sans Regular";

/// The embedded font (parsed once).
pub fn font() -> &'static FontRef<'static> {
    static FONT: OnceLock<FontRef<'static>> = OnceLock::new();
    FONT.get_or_init(|| {
        FontRef::try_from_slice(notosans::REGULAR_TTF).expect("the embedded font parses")
    })
}

/// Height of a line of text of size `px` (pixels per em): the font's
/// ascent plus its descent, rounded up.
pub fn line_height(px: f32) -> u32 {
    let f = font().as_scaled(PxScale::from(px));
    (f.ascent() - f.descent()).ceil().max(1.0) as u32
}

/// Width of `text` at size `px`: the sum of its glyphs' advances, as
/// imageproc lays them out, rounded up.
pub fn text_width(text: &str, px: f32) -> u32 {
    let f = font().as_scaled(PxScale::from(px));
    let w: f32 = text.chars().map(|c| f.h_advance(f.glyph_id(c))).sum();
    w.ceil().max(0.0) as u32
}

/// Draws `text` at size `px` (pixels per em) with the top of its line at
/// `(x, y)`, blending each pixel towards `ink` by the glyph's coverage;
/// ink outside the image is dropped.
pub fn draw_text<P>(
    img: &mut ImageBuffer<P, Vec<P::Subpixel>>,
    text: &str,
    x: i32,
    y: i32,
    px: f32,
    ink: P,
) where
    P: Pixel,
    P::Subpixel: Into<f32> + imageproc::definitions::Clamp<f32>,
{
    imageproc::drawing::draw_text_mut(img, ink, x, y, PxScale::from(px), font(), text);
}

#[cfg(test)]
mod tests {
    use super::*;
    use ab_glyph::point;
    use image::{Rgb, RgbImage};

    /// The reference raster of `text`, made with `ab_glyph` alone: each
    /// glyph at its advance along the line, its outline's coverage per
    /// pixel (ab_glyph's rasterizer), blended as ink over the background.
    fn reference(w: u32, h: u32, text: &str, px: f32, back: [u8; 3], ink: [u8; 3]) -> RgbImage {
        let f = font().as_scaled(PxScale::from(px));
        let mut img = RgbImage::from_pixel(w, h, Rgb(back));
        let mut pen = 0.0f32;
        for c in text.chars() {
            let id = f.glyph_id(c);
            let g = id.with_scale_and_position(PxScale::from(px), point(pen, f.ascent()));
            pen += f.h_advance(id);
            let Some(o) = font().outline_glyph(g) else {
                continue;
            };
            let b = o.px_bounds();
            o.draw(|gx, gy, cov| {
                let (x, y) = (
                    gx as i32 + b.min.x.round() as i32,
                    gy as i32 + b.min.y.round() as i32,
                );
                if x >= 0 && y >= 0 && (x as u32) < w && (y as u32) < h {
                    let c = cov.clamp(0.0, 1.0);
                    let p = img.get_pixel_mut(x as u32, y as u32);
                    for k in 0..3 {
                        p.0[k] = (p.0[k] as f32 * (1.0 - c) + ink[k] as f32 * c) as u8;
                    }
                }
            });
        }
        img
    }

    /// A known caption drawn through [`draw_text`] is the raster ab_glyph
    /// makes of it (within one level of rounding per channel), and it is
    /// real ink: many pixels, and a different caption gives another raster.
    #[test]
    fn a_caption_is_the_fonts_raster() {
        let text = "budget 64 · 64 vertices · opaque 97.9% · excess 1.1%";
        let px = 18.0;
        let (w, h) = (text_width(text, px) + 4, line_height(px));
        let (back, ink) = ([30, 30, 30], [240, 240, 240]);
        let mut img = RgbImage::from_pixel(w, h, Rgb(back));
        draw_text(&mut img, text, 0, 0, px, Rgb(ink));
        let want = reference(w, h, text, px, back, ink);
        let mut inked = 0;
        for (a, b) in img.pixels().zip(want.pixels()) {
            for k in 0..3 {
                assert!(a.0[k].abs_diff(b.0[k]) <= 1, "{a:?} against {b:?}");
            }
            inked += (a.0 != back) as usize;
        }
        assert!(inked > 400, "only {inked} pixels inked");
        // the text fits its measured box: nothing inked in the last columns
        for y in 0..h {
            for x in w - 2..w {
                assert_eq!(img.get_pixel(x, y).0, back);
            }
        }
        let other = reference(w, h, "budget 65 · 64 vertices", px, back, ink);
        assert_ne!(img, other);
    }

    /// The hand-made pixel glyphs are gone from the picture modules.
    #[test]
    fn no_hand_made_glyph_table_is_left() {
        for (name, src) in [
            ("heatmap.rs", include_str!("../heatmap.rs")),
            ("preview.rs", include_str!("../preview.rs")),
        ] {
            assert!(!src.contains("fn glyph("), "{name} has a glyph table");
            assert!(!src.contains("[7, 5, 5, 5, 7]"), "{name} has a glyph table");
        }
    }
}
