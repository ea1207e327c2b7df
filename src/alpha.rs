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
    /// Texels per row.
    pub width: u32,
    /// Rows.
    pub height: u32,
    /// Alpha of texel (x, y) at `y * width + x`.
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

    /// Alpha of texel (x, y).
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
    /// Texels with alpha at least `opaque_min`.
    pub opaque_texels: u64,
    /// Visible texels that are not opaque.
    pub partial_texels: u64,
    /// Texels with alpha below `visible_min`.
    pub transparent_texels: u64,
    /// Area of the safe-opaque region, texels.
    pub safe_opaque_area: f64,
    /// Area of the must-cover region, texels.
    pub must_cover_area: f64,
}

/// The two regions of the contract on the half-texel grid.
#[derive(Clone, Debug)]
pub struct Regions {
    /// Where the opaque mesh may lie.
    pub safe: Mask,
    /// What the two meshes must cover.
    pub cover: Mask,
    /// Their areas and the texel classes.
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
        let region = |min: u8, all: bool| {
            let texels: Vec<bool> = map.alpha.iter().map(|&a| a >= min).collect();
            let mut acc: Option<Mask> = None;
            for level in 0..=settings.filter.mip_levels {
                let mut m = block_mask(&texels, w, h, level, all);
                if settings.filter.mode == FilterMode::Bilinear {
                    let k = 1usize << level; // 2^(l-1) texels = 2^l half cells
                    m = window_filter(m, k, settings.wrap, all);
                }
                match acc.as_mut() {
                    None => acc = Some(m),
                    Some(a) if all => a.and_with(&m),
                    Some(a) => a.or_with(&m),
                }
            }
            acc.expect("level 0 is always built")
        };
        // the two regions are independent: build them side by side
        let (safe, cover) = rayon::join(
            || region(t.opaque_min, true),
            || region(t.visible_min, false),
        );
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
    let mut row = vec![0u8; 2 * w];
    for ty in 0..h {
        let by = ty >> level;
        for (x, c) in row.iter_mut().enumerate() {
            *c = blocks[by * bw + ((x / 2) >> level)] as u8;
        }
        m.cells[2 * ty * 2 * w..(2 * ty + 1) * 2 * w].copy_from_slice(&row);
        m.cells[(2 * ty + 1) * 2 * w..(2 * ty + 2) * 2 * w].copy_from_slice(&row);
    }
    m
}

/// A separable square min (`erode`) or max filter of radius `k` cells, with
/// clamp-to-edge or repeat addressing per axis. Each line is extended by its
/// addressing, then every cell takes the AND (erode) or OR (dilate) of its
/// window: for a small `k` offset by offset over whole lines (which the
/// compiler vectorizes), for a large one with a running count, so the cost
/// does not grow with `k`.
fn window_filter(m: Mask, k: usize, wrap: Wrap, erode: bool) -> Mask {
    let (w, h) = (m.width, m.height);
    let win = 2 * k + 1;
    // `out` (n cells) gets the window of every cell of `ext` (n + 2k cells)
    let filter = |ext: &[u8], out: &mut [u8]| {
        let n = out.len();
        if k <= SMALL_RADIUS {
            out.copy_from_slice(&ext[..n]);
            for j in 1..win {
                let src = &ext[j..j + n];
                if erode {
                    out.iter_mut().zip(src).for_each(|(o, &v)| *o &= v);
                } else {
                    out.iter_mut().zip(src).for_each(|(o, &v)| *o |= v);
                }
            }
        } else {
            let mut count: usize = ext[..win - 1].iter().map(|&v| v as usize).sum();
            for x in 0..n {
                count += ext[x + win - 1] as usize;
                out[x] = if erode {
                    (count == win) as u8
                } else {
                    (count > 0) as u8
                };
                count -= ext[x] as usize;
            }
        }
    };
    let index = |i: i64, n: usize, repeat: bool| -> usize {
        let n = n as i64;
        (if repeat {
            i.rem_euclid(n)
        } else {
            i.clamp(0, n - 1)
        }) as usize
    };
    // horizontal pass
    let mut horiz = Mask::new(w, h, false);
    let mut ext = vec![0u8; w + 2 * k];
    for y in 0..h {
        let row = &m.cells[y * w..(y + 1) * w];
        ext[k..k + w].copy_from_slice(row);
        for i in 0..k {
            ext[i] = row[index(i as i64 - k as i64, w, wrap.x())];
            ext[k + w + i] = row[index((w + i) as i64, w, wrap.x())];
        }
        filter(&ext, &mut horiz.cells[y * w..(y + 1) * w]);
    }
    // vertical pass: each output row combines the rows of its window, for
    // a small radius row by row, else with a running count per column
    // the input is no longer read: its cells take the output
    let row_of = |i: i64| index(i, h, wrap.y());
    let mut out = m;
    if k <= SMALL_RADIUS {
        for y in 0..h {
            let o = &mut out.cells[y * w..(y + 1) * w];
            let first = row_of(y as i64 - k as i64);
            o.copy_from_slice(&horiz.cells[first * w..(first + 1) * w]);
            for j in 1..win {
                let r = row_of(y as i64 - k as i64 + j as i64);
                let src = &horiz.cells[r * w..(r + 1) * w];
                if erode {
                    o.iter_mut().zip(src).for_each(|(o, &v)| *o &= v);
                } else {
                    o.iter_mut().zip(src).for_each(|(o, &v)| *o |= v);
                }
            }
        }
        return out;
    }
    let src = &horiz.cells;
    let mut count = vec![0u32; w];
    for i in -(k as i64)..k as i64 {
        let r = row_of(i);
        for (c, &v) in count.iter_mut().zip(&src[r * w..(r + 1) * w]) {
            *c += v as u32;
        }
    }
    for y in 0..h {
        let add = row_of(y as i64 + k as i64);
        for (c, &v) in count.iter_mut().zip(&src[add * w..(add + 1) * w]) {
            *c += v as u32;
        }
        for (o, &c) in out.cells[y * w..(y + 1) * w].iter_mut().zip(&count) {
            *o = if erode {
                (c == win as u32) as u8
            } else {
                (c > 0) as u8
            };
        }
        let sub = row_of(y as i64 - k as i64);
        for (c, &v) in count.iter_mut().zip(&src[sub * w..(sub + 1) * w]) {
            *c -= v as u32;
        }
    }
    out
}

/// Radius up to which [`window_filter`] combines the window offset by
/// offset rather than with a running count.
const SMALL_RADIUS: usize = 8;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::check::regions_for_check;
    use crate::settings::Filter;

    /// The builder's separable filters give exactly the regions that the
    /// independent checker derives from the definitions, cell by cell.
    #[test]
    fn regions_match_the_checker_definitions() {
        let mut seed = 99u64;
        let mut rnd = move || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 33) as u32
        };
        for case in 0..300 {
            let (w, h) = (1 + rnd() % 19, 1 + rnd() % 17);
            let density = rnd() % 100;
            let alpha: Vec<u8> = (0..w * h)
                .map(|_| match rnd() % 100 {
                    r if r < density => 255,
                    r if r < density + 10 => (rnd() % 255) as u8,
                    _ => 0,
                })
                .collect();
            let map = AlphaMap::from_raw(w, h, alpha);
            let settings = CutSettings {
                budget: 64,
                filter: Filter {
                    mode: if case % 2 == 0 {
                        FilterMode::Bilinear
                    } else {
                        FilterMode::Nearest
                    },
                    mip_levels: rnd() % 4,
                },
                alpha: AlphaThresholds {
                    opaque_min: 200 + (rnd() % 56) as u8,
                    visible_min: 1 + (rnd() % 100) as u8,
                },
                wrap: [Wrap::None, Wrap::X, Wrap::Y, Wrap::Xy][(rnd() % 4) as usize],
            };
            let ours = Regions::analyze(&map, &settings);
            let (s, c, gw, gh) =
                regions_for_check(&map, settings.filter, settings.alpha, settings.wrap);
            assert_eq!((gw, gh), (ours.safe.width, ours.safe.height));
            for i in 0..gw * gh {
                assert_eq!(
                    s[i],
                    ours.safe.cells[i] != 0,
                    "case {case}: safe cell {i} differs ({settings:?})"
                );
                assert_eq!(
                    c[i],
                    ours.cover.cells[i] != 0,
                    "case {case}: cover cell {i} differs ({settings:?})"
                );
            }
        }
    }
}
