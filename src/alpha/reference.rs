//! The analysis as first written, cell by cell on byte masks: a direct
//! transcription of the definition (block classification expanded to the
//! half grid, then a separable window filter), kept as the reference the
//! run-based analysis ([`super::runs`]) is tested against.

use super::AlphaMap;
use crate::mask::Mask;
use crate::settings::{CutSettings, FilterMode, Wrap};

/// The safe-opaque (`all`, threshold `min`) or must-cover region, cell by
/// cell.
pub fn region(map: &AlphaMap, settings: &CutSettings, min: u8, all: bool) -> Mask {
    let (w, h) = (map.width as usize, map.height as usize);
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
