//! Pictures as PNG bytes, encoded in memory by the image crate: what the
//! heatmaps, previews and per-pixel count dumps are written as.
//!
//! Invariant: encoding into memory does not fail, so these return bytes,
//! not results; the bytes are a whole PNG (PNG specification: signature,
//! IHDR, IDAT, IEND) with the image's colour type and bit depth.

use image::{DynamicImage, ImageBuffer, ImageFormat, Luma, RgbImage, RgbaImage};
use std::io::Cursor;

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
