//! Generated layers with the structure of real sprite art, made
//! deterministically in code (no file is read) and encoded to PNG in memory.
//!
//! * [`Kind::Skyline`]: buildings on a ground band, hard alpha edges (0 or
//!   255 only), many window holes; stepped roofs and thin antennas.
//! * [`Kind::Clouds`]: soft puffs composited with the "over" rule, wide
//!   partial-alpha gradients, only a few cores fully opaque.
//! * [`Kind::Rigging`]: ship masts, yards and diagonal ropes 1 to 3 texels
//!   wide, antialiased, over transparency; a solid hull under each ship.
//!
//! Invariants: the same (kind, width, height, seed) always gives the same
//! texels; shapes are laid out in units of `side / 1024` (the same art at a
//! higher resolution), except the rigging's line widths, which stay 1 to 3
//! texels at every size; colour carries a little texel noise (as painted
//! art does) so the PNG is not trivially compressible, and a transparent
//! texel has colour 0 (as image editors export it).

use image::codecs::png::PngEncoder;
use image::{ExtendedColorType, ImageEncoder};

/// The kind of art a generated layer imitates.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// Hard edges, many holes.
    Skyline,
    /// Wide soft gradients.
    Clouds,
    /// Thin diagonal lines.
    Rigging,
}

impl Kind {
    /// All kinds, in the order the benchmark runs them.
    pub const ALL: [Kind; 3] = [Kind::Skyline, Kind::Clouds, Kind::Rigging];

    /// The kind's name on the command line and in the tables.
    pub fn name(self) -> &'static str {
        match self {
            Kind::Skyline => "skyline",
            Kind::Clouds => "clouds",
            Kind::Rigging => "rigging",
        }
    }

    /// The kind named `s`, if any.
    pub fn parse(s: &str) -> Option<Kind> {
        Kind::ALL.into_iter().find(|k| k.name() == s)
    }
}

/// splitmix64, the generator the integration tests use (Steele, Lea and
/// Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014;
/// constants from memory).
#[path = "../../tests/common/mod.rs"]
mod common;
pub use common::Rng;

/// An RGBA8 layer, row-major, 4 bytes a texel.
pub struct Rgba {
    /// Texels per row.
    pub width: u32,
    /// Rows.
    pub height: u32,
    /// `width * height * 4` bytes.
    pub data: Vec<u8>,
}

/// Generates a layer of `kind`.
pub fn generate(kind: Kind, width: u32, height: u32, seed: u64) -> Rgba {
    let alpha = match kind {
        Kind::Skyline => skyline(width, height, seed),
        Kind::Clouds => clouds(width, height, seed),
        Kind::Rigging => rigging(width, height, seed),
    };
    colourize(kind, width, height, &alpha)
}

/// Encodes a layer as PNG (RGBA, 8 bits a channel) with the `image`
/// crate's encoder at its default settings.
pub fn encode_png(layer: &Rgba) -> Vec<u8> {
    let mut out = Vec::new();
    PngEncoder::new(&mut out)
        .write_image(
            &layer.data,
            layer.width,
            layer.height,
            ExtendedColorType::Rgba8,
        )
        .expect("an RGBA8 layer encodes as PNG");
    out
}

/// A fully opaque vertical gradient (a sky backdrop).
pub fn backdrop(width: u32, height: u32) -> Rgba {
    let mut data = Vec::with_capacity(width as usize * height as usize * 4);
    for y in 0..height {
        let t = y as f64 / height.max(1) as f64;
        for x in 0..width {
            let n = (hash(x, y, 7) & 7) as f64;
            data.extend([
                (40.0 + 120.0 * t + n) as u8,
                (50.0 + 90.0 * t + n) as u8,
                (110.0 + 60.0 * t + n) as u8,
                255,
            ]);
        }
    }
    Rgba {
        width,
        height,
        data,
    }
}

/// A UI sprite: a rounded rectangle with a one-texel antialiased rim
/// (`radius` in texels; a circle when it is half the side).
pub fn rounded(width: u32, height: u32, radius: f64) -> Rgba {
    let (w, h) = (width as f64, height as f64);
    let mut alpha = vec![0u8; width as usize * height as usize];
    for y in 0..height {
        for x in 0..width {
            let (px, py) = (x as f64 + 0.5, y as f64 + 0.5);
            let qx = (px - w / 2.0).abs() - (w / 2.0 - radius - 1.0);
            let qy = (py - h / 2.0).abs() - (h / 2.0 - radius - 1.0);
            let outside = (qx.max(0.0).powi(2) + qy.max(0.0).powi(2)).sqrt();
            let d = outside + qx.max(qy).min(0.0) - radius;
            alpha[(y * width + x) as usize] = coverage(0.5 - d);
        }
    }
    colourize(Kind::Skyline, width, height, &alpha)
}

fn coverage(a: f64) -> u8 {
    (a.clamp(0.0, 1.0) * 255.0).round() as u8
}

fn hash(x: u32, y: u32, seed: u64) -> u64 {
    Rng(((y as u64) << 32 | x as u64) ^ seed.wrapping_mul(0x2545_F491_4F6C_DD1D)).next()
}

fn colourize(kind: Kind, width: u32, height: u32, alpha: &[u8]) -> Rgba {
    let base: [u8; 3] = match kind {
        Kind::Skyline => [48, 44, 70],
        Kind::Clouds => [200, 200, 214],
        Kind::Rigging => [60, 40, 30],
    };
    let mut data = Vec::with_capacity(alpha.len() * 4);
    for y in 0..height {
        for x in 0..width {
            let a = alpha[(y * width + x) as usize];
            if a == 0 {
                data.extend([0, 0, 0, 0]);
            } else {
                let n = (hash(x, y, 3) & 15) as u8;
                data.extend([
                    base[0].saturating_add(n),
                    base[1].saturating_add(n),
                    base[2].saturating_add(n / 2),
                    a,
                ]);
            }
        }
    }
    Rgba {
        width,
        height,
        data,
    }
}

/// Fills the rectangle [x0, x1) x [y0, y1) (clipped) with `a`.
fn fill(alpha: &mut [u8], width: u32, height: u32, r: [f64; 4], a: u8) {
    let cx = |v: f64| (v.round().max(0.0) as u32).min(width) as usize;
    let cy = |v: f64| (v.round().max(0.0) as u32).min(height) as usize;
    let (x0, x1, y0, y1) = (cx(r[0]), cx(r[1]), cy(r[2]), cy(r[3]));
    for y in y0..y1 {
        alpha[y * width as usize + x0..y * width as usize + x1].fill(a);
    }
}

fn skyline(width: u32, height: u32, seed: u64) -> Vec<u8> {
    let (w, h) = (width as f64, height as f64);
    let s = w.min(h) / 1024.0;
    let mut rng = Rng(seed ^ 0x5C71);
    let mut alpha = vec![0u8; width as usize * height as usize];
    let ground = h - 0.06 * h;
    fill(&mut alpha, width, height, [0.0, w, ground, h], 255);
    let mut x = 0.0;
    while x < w {
        let bw = rng.range(40.0, 140.0) * s;
        let top = rng.range(0.25, 0.85) * h;
        let (x0, x1) = (x + rng.range(0.0, 6.0) * s, (x + bw).min(w));
        fill(&mut alpha, width, height, [x0, x1, top, ground], 255);
        // a stepped roof, and sometimes an antenna
        if rng.range(0.0, 1.0) < 0.5 {
            let inset = (x1 - x0) * rng.range(0.15, 0.35);
            let step = rng.range(8.0, 30.0) * s;
            fill(
                &mut alpha,
                width,
                height,
                [x0 + inset, x1 - inset, top - step, top],
                255,
            );
            if rng.range(0.0, 1.0) < 0.5 {
                let ax = (x0 + x1) / 2.0;
                let aw = (2.0 * s).max(1.0);
                let ah = rng.range(20.0, 60.0) * s;
                fill(
                    &mut alpha,
                    width,
                    height,
                    [ax, ax + aw, top - step - ah, top - step],
                    255,
                );
            }
        }
        // windows: a grid of cells, most of them holes
        let (cw, ch) = (12.0 * s, 16.0 * s);
        let (ww, wh) = (6.0 * s, 8.0 * s);
        let mut wy = top + 6.0 * s;
        while wy + wh < ground - 4.0 * s {
            let mut wx = x0 + 4.0 * s;
            while wx + ww < x1 - 4.0 * s {
                if rng.range(0.0, 1.0) < 0.6 {
                    fill(&mut alpha, width, height, [wx, wx + ww, wy, wy + wh], 0);
                }
                wx += cw;
            }
            wy += ch;
        }
        x += bw;
    }
    alpha
}

fn clouds(width: u32, height: u32, seed: u64) -> Vec<u8> {
    let (w, h) = (width as f64, height as f64);
    let s = w.min(h) / 1024.0;
    let mut rng = Rng(seed ^ 0xC10D);
    // alpha as coverage in [0, 1], composited "over": a = 1 - (1-a)(1-b)
    let mut clear = vec![1.0f32; width as usize * height as usize];
    let n_clouds = (12.0 * w / h.max(1.0)).clamp(6.0, 40.0) as usize;
    for _ in 0..n_clouds {
        let (cx, cy) = (rng.range(0.0, w), rng.range(0.15 * h, 0.85 * h));
        let puffs = 5 + (rng.next() % 5) as usize;
        for _ in 0..puffs {
            let px = cx + rng.range(-120.0, 120.0) * s;
            let py = cy + rng.range(-40.0, 40.0) * s;
            let rx = rng.range(50.0, 130.0) * s;
            let ry = rx * rng.range(0.4, 0.7);
            // peak below 1 for most puffs: few texels reach full opacity
            let peak = rng.range(0.35, 0.8) as f32;
            let x0 = (px - rx).max(0.0) as u32;
            let x1 = ((px + rx).ceil().max(0.0) as u32).min(width);
            let y0 = (py - ry).max(0.0) as u32;
            let y1 = ((py + ry).ceil().max(0.0) as u32).min(height);
            for y in y0..y1 {
                let dy = (y as f64 + 0.5 - py) / ry;
                let row = &mut clear[(y * width) as usize..((y + 1) * width) as usize];
                for x in x0..x1 {
                    let dx = (x as f64 + 0.5 - px) / rx;
                    let d2 = dx * dx + dy * dy;
                    if d2 < 1.0 {
                        let t = 1.0 - d2.sqrt();
                        let a = peak * (t * t * (3.0 - 2.0 * t)) as f32;
                        row[x as usize] *= 1.0 - a;
                    }
                }
            }
        }
    }
    clear.iter().map(|&c| coverage(1.0 - c as f64)).collect()
}

/// Draws an antialiased segment of `width` texels into `alpha` (max rule).
fn line(alpha: &mut [u8], size: [u32; 2], a: [f64; 2], b: [f64; 2], width: f64) {
    let [w, h] = size;
    let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
    let len2 = (dx * dx + dy * dy).max(1e-9);
    let r = width / 2.0;
    let steep = dy.abs() > dx.abs();
    // walk the major axis; on each step visit the texels within r + 1
    let (m0, m1) = if steep {
        (a[1].min(b[1]) - r - 1.0, a[1].max(b[1]) + r + 1.0)
    } else {
        (a[0].min(b[0]) - r - 1.0, a[0].max(b[0]) + r + 1.0)
    };
    let major_len = if steep { h } else { w };
    let slope = if steep { dx / dy } else { dy / dx };
    let spread = (r + 1.5) * (1.0 + slope * slope).sqrt();
    let (a_maj, a_min) = if steep { (a[1], a[0]) } else { (a[0], a[1]) };
    let (m0, m1) = (
        m0.max(0.0) as u32,
        (m1.ceil().max(0.0) as u32).min(major_len),
    );
    for m in m0..m1 {
        let c = a_min + (m as f64 + 0.5 - a_maj) * slope;
        let lo = (c - spread).floor().max(0.0) as i64;
        let hi = (c + spread).ceil() as i64;
        for n in lo..=hi {
            let (x, y) = if steep { (n, m as i64) } else { (m as i64, n) };
            if x < 0 || y < 0 || x >= w as i64 || y >= h as i64 {
                continue;
            }
            let (px, py) = (x as f64 + 0.5, y as f64 + 0.5);
            let t = (((px - a[0]) * dx + (py - a[1]) * dy) / len2).clamp(0.0, 1.0);
            let (qx, qy) = (a[0] + t * dx - px, a[1] + t * dy - py);
            let d = (qx * qx + qy * qy).sqrt();
            let v = coverage(r + 0.5 - d);
            let i = (y as u32 * w + x as u32) as usize;
            alpha[i] = alpha[i].max(v);
        }
    }
}

fn rigging(width: u32, height: u32, seed: u64) -> Vec<u8> {
    let (w, h) = (width as f64, height as f64);
    let s = w.min(h) / 1024.0;
    let mut rng = Rng(seed ^ 0x819);
    let mut alpha = vec![0u8; width as usize * height as usize];
    let size = [width, height];
    let ships = ((w / (340.0 * s)).round() as usize).max(1);
    for k in 0..ships {
        let x0 = (k as f64 + rng.range(0.05, 0.15)) * w / ships as f64;
        let x1 = (k as f64 + rng.range(0.85, 0.95)) * w / ships as f64;
        let deck = h * rng.range(0.8, 0.88);
        fill(
            &mut alpha,
            width,
            height,
            [x0, x1, deck, (deck + 40.0 * s).min(h)],
            255,
        );
        let masts = 2 + (rng.next() % 2) as usize;
        for j in 0..masts {
            let mx = x0 + (x1 - x0) * (j as f64 + 0.5) / masts as f64;
            let top = h * rng.range(0.05, 0.25);
            line(&mut alpha, size, [mx, top], [mx, deck], 3.0);
            // yards: horizontal spars
            for y in 0..3 {
                let yy = top + (deck - top) * (0.15 + 0.25 * y as f64);
                let half = 60.0 * s * (1.0 - 0.2 * y as f64);
                line(&mut alpha, size, [mx - half, yy], [mx + half, yy], 2.0);
            }
            // ropes: from the mast's upper half to the deck and the bow/stern
            for _ in 0..10 {
                let from = [mx, top + (deck - top) * rng.range(0.0, 0.5)];
                let to = [rng.range(x0, x1), deck];
                let width = if rng.range(0.0, 1.0) < 0.7 { 1.0 } else { 1.5 };
                line(&mut alpha, size, from, to, width);
            }
        }
        // stays between the mast tops and down to the bow
        line(
            &mut alpha,
            size,
            [x0, deck],
            [x0 + (x1 - x0) * 0.3, h * 0.2],
            1.0,
        );
        line(
            &mut alpha,
            size,
            [x1, deck],
            [x0 + (x1 - x0) * 0.7, h * 0.2],
            1.0,
        );
    }
    alpha
}
