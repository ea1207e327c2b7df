//! Alpha analysis: the layer's alpha channel, texel classes, and the two
//! regions every mesh is held to.
//!
//! * [`AlphaMap`] is the alpha channel alone, 8 bits a texel (the decoded
//!   image is dropped once it is extracted).
//! * [`Regions::analyze`] builds, on the half-texel grid ([`Mask`]), the
//!   **safe-opaque** region (where the opaque mesh may lie) and the
//!   **must-cover** region (what opaque + blended must cover) for a filter,
//!   its mip levels and the addressing mode.
//!
//! Invariants: `safe` ⊂ opaque texels ⊂ visible texels ⊂ `cover` (as long as
//! `visible_min <= opaque_min`); `cover` lies inside the image rectangle.

use crate::mask::Mask;
use crate::settings::{AlphaThresholds, CutSettings, FilterMode, Wrap};
use image::DynamicImage;

/// The alpha channel of a layer, row-major, one byte a texel.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct AlphaMap {
    pub width: u32,
    pub height: u32,
    pub alpha: Vec<u8>,
}

impl AlphaMap {
    /// Extracts alpha the way the `image` crate converts to 8-bit RGBA:
    /// images without alpha are fully opaque, 16-bit alpha is scaled to 8
    /// bits, palette images use their tRNS transparency (the PNG decoder
    /// expands it).
    pub fn from_image(image: &DynamicImage) -> AlphaMap {
        let (width, height) = (image.width(), image.height());
        let alpha = if !image.color().has_alpha() {
            vec![255u8; width as usize * height as usize]
        } else {
            match image {
                DynamicImage::ImageRgba8(buf) => buf.pixels().map(|p| p.0[3]).collect(),
                DynamicImage::ImageLumaA8(buf) => buf.pixels().map(|p| p.0[1]).collect(),
                other => other.to_rgba8().pixels().map(|p| p.0[3]).collect(),
            }
        };
        AlphaMap {
            width,
            height,
            alpha,
        }
    }

    /// A map from raw alpha values (row-major, `width * height` bytes).
    pub fn from_raw(width: u32, height: u32, alpha: Vec<u8>) -> AlphaMap {
        assert_eq!(
            alpha.len(),
            width as usize * height as usize,
            "alpha length must be width * height"
        );
        AlphaMap {
            width,
            height,
            alpha,
        }
    }

    pub fn get(&self, x: u32, y: u32) -> u8 {
        self.alpha[y as usize * self.width as usize + x as usize]
    }

    /// Counts of (opaque, partial, transparent) texels.
    pub fn class_counts(&self, t: AlphaThresholds) -> (u64, u64, u64) {
        let (mut o, mut p, mut tr) = (0u64, 0u64, 0u64);
        for &a in &self.alpha {
            if a >= t.opaque_min {
                o += 1;
            } else if a >= t.visible_min {
                p += 1;
            } else {
                tr += 1;
            }
        }
        (o, p, tr)
    }
}

/// Areas of a layer's classes and regions, in texels.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct RegionStats {
    pub opaque_texels: u64,
    pub partial_texels: u64,
    pub transparent_texels: u64,
    pub safe_opaque_area: f64,
    pub must_cover_area: f64,
}

/// The two regions of the contract on the half-texel grid.
#[derive(Clone, Debug)]
pub struct Regions {
    /// Where the opaque mesh may lie.
    pub safe: Mask,
    /// What the two meshes must cover.
    pub cover: Mask,
    pub stats: RegionStats,
}

impl Regions {
    /// Builds the safe-opaque and must-cover regions for `settings`.
    ///
    /// Level l's blocks are classified (opaque: all texels opaque; visible:
    /// any visible), expanded to the half grid, then for `bilinear` eroded
    /// (a min filter) or dilated (a max filter) by 2^(l-1) texels, i.e.
    /// 2^l half cells, with clamp or repeat addressing beyond the edges.
    pub fn analyze(map: &AlphaMap, settings: &CutSettings) -> Regions {
        let t = settings.alpha;
        let (w, h) = (map.width as usize, map.height as usize);
        let opaque: Vec<bool> = map.alpha.iter().map(|&a| a >= t.opaque_min).collect();
        let visible: Vec<bool> = map.alpha.iter().map(|&a| a >= t.visible_min).collect();
        let mut safe = Mask::new(2 * w, 2 * h, true);
        let mut cover = Mask::new(2 * w, 2 * h, false);
        for level in 0..=settings.filter.mip_levels {
            let mut o = block_mask(&opaque, w, h, level, true);
            let mut v = block_mask(&visible, w, h, level, false);
            if settings.filter.mode == FilterMode::Bilinear {
                let k = 1usize << level; // 2^(l-1) texels = 2^l half cells
                o = window_filter(&o, k, settings.wrap, true);
                v = window_filter(&v, k, settings.wrap, false);
            }
            safe.and_with(&o);
            cover.or_with(&v);
        }
        let (opaque_texels, partial_texels, transparent_texels) = map.class_counts(t);
        let stats = RegionStats {
            opaque_texels,
            partial_texels,
            transparent_texels,
            safe_opaque_area: safe.count() as f64 * 0.25,
            must_cover_area: cover.count() as f64 * 0.25,
        };
        Regions { safe, cover, stats }
    }
}

/// Level-`level` block classification expanded to the half grid: a cell is
/// set when its block is all set (`all`) or has any set texel (`!all`).
fn block_mask(texels: &[bool], w: usize, h: usize, level: u32, all: bool) -> Mask {
    let s = 1usize << level;
    let (bw, bh) = (w.div_ceil(s), h.div_ceil(s));
    let mut blocks = vec![all; bw * bh];
    for y in 0..h {
        for x in 0..w {
            let b = &mut blocks[(y >> level) * bw + (x >> level)];
            if all {
                *b &= texels[y * w + x];
            } else {
                *b |= texels[y * w + x];
            }
        }
    }
    let mut m = Mask::new(2 * w, 2 * h, false);
    for y in 0..2 * h {
        let by = (y / 2) >> level;
        for x in 0..2 * w {
            let bx = (x / 2) >> level;
            m.cells[y * 2 * w + x] = blocks[by * bw + bx] as u8;
        }
    }
    m
}

/// A separable square min (`erode`) or max filter of radius `k` cells, with
/// clamp-to-edge or repeat addressing per axis.
fn window_filter(m: &Mask, k: usize, wrap: Wrap, erode: bool) -> Mask {
    let pass = |src: &Mask, horizontal: bool, repeat: bool| -> Mask {
        let (w, h) = (src.width, src.height);
        let mut out = Mask::new(w, h, false);
        let n = if horizontal { w } else { h } as i64;
        for y in 0..h {
            for x in 0..w {
                let c = if horizontal { x } else { y } as i64;
                let mut acc = erode;
                for d in -(k as i64)..=(k as i64) {
                    let mut i = c + d;
                    i = if repeat {
                        i.rem_euclid(n)
                    } else {
                        i.clamp(0, n - 1)
                    };
                    let v = if horizontal {
                        src.get(i as usize, y)
                    } else {
                        src.get(x, i as usize)
                    };
                    if erode {
                        acc &= v;
                    } else {
                        acc |= v;
                    }
                    if acc != erode {
                        break;
                    }
                }
                out.set(x, y, acc);
            }
        }
        out
    };
    let a = pass(m, true, wrap.x());
    pass(&a, false, wrap.y())
}
