//! Generates the demo art: a rainy harbour town at dusk, as six parallax
//! layers (2048 texels wide) and two UI sprites.
//!
//! Everything is drawn from code and is fully deterministic: a small
//! hash-based value noise stands in for randomness, and shape edges get an
//! analytic coverage value (box overlap or signed distance), so alpha has
//! realistic partial edges.
//!
//! Run: `cargo run --release --example demo_layers -- [OUT_DIR] [SHEET_DIR]`
//! (default `demo-layers`, and `demo-sheets` for the UI sprite sheet:
//! buttons, a nine-slice panel, icons and a six-frame spark, packed with 0,
//! 1 and 2 texels of padding, with its regions file).

use std::fs::File;
use std::io::BufWriter;
use std::path::Path;

use image::codecs::png::{CompressionType, FilterType, PngEncoder};
use image::{ExtendedColorType, ImageEncoder};

type Rgb = [f32; 3];

// ---------------------------------------------------------------- noise --

/// Hash of a lattice point to a value in [0, 1).
fn hash(x: i32, y: i32, seed: u32) -> f32 {
    let mut h = (x as u32).wrapping_mul(0x8da6_b343)
        ^ (y as u32).wrapping_mul(0xd816_3841)
        ^ seed.wrapping_mul(0xcb1a_b31f).wrapping_add(0x9e37_79b9);
    h ^= h >> 16;
    h = h.wrapping_mul(0x7feb_352d);
    h ^= h >> 15;
    h = h.wrapping_mul(0x846c_a68b);
    h ^= h >> 16;
    (h >> 8) as f32 / (1u32 << 24) as f32
}

/// A deterministic "random" number in [lo, hi) for item `i` of stream `seed`.
fn rnd(seed: u32, i: i32, lo: f32, hi: f32) -> f32 {
    lo + (hi - lo) * hash(i, 7919, seed)
}

/// 2D value noise in [0, 1]; lattice wraps every `period` cells in u, so
/// layers sampled with u = x / width * period tile horizontally.
fn noise2(u: f32, v: f32, seed: u32, period: i32) -> f32 {
    let (iu, iv) = (u.floor() as i32, v.floor() as i32);
    let (fu, fv) = (fade(u - iu as f32), fade(v - iv as f32));
    let (u0, u1) = (iu.rem_euclid(period), (iu + 1).rem_euclid(period));
    let a = lerp(hash(u0, iv, seed), hash(u1, iv, seed), fu);
    let b = lerp(hash(u0, iv + 1, seed), hash(u1, iv + 1, seed), fu);
    lerp(a, b, fv)
}

/// Fractal sum of `octaves` layers of value noise, normalised to [0, 1].
fn fbm(u: f32, v: f32, seed: u32, octaves: u32, period: i32) -> f32 {
    let (mut sum, mut amp, mut norm, mut f, mut p) = (0.0, 1.0, 0.0, 1.0, period);
    for o in 0..octaves {
        sum += amp * noise2(u * f, v * f, seed.wrapping_add(o * 101), p);
        norm += amp;
        amp *= 0.5;
        f *= 2.0;
        p *= 2;
    }
    sum / norm
}

fn fade(t: f32) -> f32 {
    t * t * (3.0 - 2.0 * t)
}

fn lerp(a: f32, b: f32, t: f32) -> f32 {
    a + (b - a) * t
}

fn smoothstep(e0: f32, e1: f32, x: f32) -> f32 {
    fade(((x - e0) / (e1 - e0)).clamp(0.0, 1.0))
}

fn mix(a: Rgb, b: Rgb, t: f32) -> Rgb {
    [
        lerp(a[0], b[0], t),
        lerp(a[1], b[1], t),
        lerp(a[2], b[2], t),
    ]
}

fn scale(c: Rgb, k: f32) -> Rgb {
    [c[0] * k, c[1] * k, c[2] * k]
}

fn rgb(r: u8, g: u8, b: u8) -> Rgb {
    [r as f32 / 255.0, g as f32 / 255.0, b as f32 / 255.0]
}

// ------------------------------------------------------------- geometry --

/// Length of the overlap of [a0, a1] with [b0, b1].
fn overlap(a0: f32, a1: f32, b0: f32, b1: f32) -> f32 {
    (a1.min(b1) - a0.max(b0)).max(0.0)
}

/// Exact area of texel (x, y) covered by the axis-aligned box [x0,x1]x[y0,y1].
fn box_cov(x: i32, y: i32, b: [f32; 4]) -> f32 {
    let (fx, fy) = (x as f32, y as f32);
    overlap(fx, fx + 1.0, b[0], b[2]) * overlap(fy, fy + 1.0, b[1], b[3])
}

/// Distance from p to segment ab, and the parameter of the nearest point.
fn seg_dist(p: [f32; 2], a: [f32; 2], b: [f32; 2]) -> (f32, f32) {
    let (bax, bay) = (b[0] - a[0], b[1] - a[1]);
    let (pax, pay) = (p[0] - a[0], p[1] - a[1]);
    let t = ((pax * bax + pay * bay) / (bax * bax + bay * bay).max(1e-9)).clamp(0.0, 1.0);
    ((pax - bax * t).hypot(pay - bay * t), t)
}

/// Signed distance to a simple polygon (negative inside).
fn sd_polygon(p: [f32; 2], pts: &[[f32; 2]]) -> f32 {
    let mut d = f32::MAX;
    let mut inside = false;
    for i in 0..pts.len() {
        let (a, b) = (pts[i], pts[(i + 1) % pts.len()]);
        d = d.min(seg_dist(p, a, b).0);
        if (a[1] > p[1]) != (b[1] > p[1])
            && p[0] < a[0] + (p[1] - a[1]) * (b[0] - a[0]) / (b[1] - a[1])
        {
            inside = !inside;
        }
    }
    if inside {
        -d
    } else {
        d
    }
}

/// Signed distance to a rounded rectangle given by centre, half size, radius.
fn sd_round_rect(p: [f32; 2], c: [f32; 2], half: [f32; 2], r: f32) -> f32 {
    let qx = (p[0] - c[0]).abs() - half[0] + r;
    let qy = (p[1] - c[1]).abs() - half[1] + r;
    qx.max(0.0).hypot(qy.max(0.0)) + qx.max(qy).min(0.0) - r
}

/// Coverage of a texel by a shape with signed distance `sd` at its centre
/// (a one-texel wide linear ramp across the edge).
fn cov(sd: f32) -> f32 {
    (0.5 - sd).clamp(0.0, 1.0)
}

// --------------------------------------------------------------- canvas --

/// A float RGBA canvas holding premultiplied colour.
struct Canvas {
    w: i32,
    h: i32,
    px: Vec<[f32; 4]>,
}

impl Canvas {
    fn new(w: i32, h: i32) -> Self {
        Canvas {
            w,
            h,
            px: vec![[0.0; 4]; (w * h) as usize],
        }
    }

    /// Source-over of straight colour `c` with opacity `a` at texel (x, y).
    fn blend(&mut self, x: i32, y: i32, c: Rgb, a: f32) {
        if a <= 0.0 || x < 0 || y < 0 || x >= self.w || y >= self.h {
            return;
        }
        let a = a.min(1.0);
        let d = &mut self.px[(y * self.w + x) as usize];
        for k in 0..3 {
            d[k] = c[k] * a + d[k] * (1.0 - a);
        }
        d[3] = a + d[3] * (1.0 - a);
    }

    /// Replaces texel (x, y) with straight colour `c` at opacity `a`.
    fn set(&mut self, x: i32, y: i32, c: Rgb, a: f32) {
        if x >= 0 && y >= 0 && x < self.w && y < self.h {
            self.px[(y * self.w + x) as usize] = [c[0] * a, c[1] * a, c[2] * a, a];
        }
    }

    /// Calls `f(x, y)` for every texel of the clipped box and blends what it
    /// returns (straight colour and opacity).
    fn paint(&mut self, bx: [f32; 4], mut f: impl FnMut(i32, i32) -> (Rgb, f32)) {
        let x0 = (bx[0].floor() as i32).max(0);
        let y0 = (bx[1].floor() as i32).max(0);
        let x1 = (bx[2].ceil() as i32).min(self.w);
        let y1 = (bx[3].ceil() as i32).min(self.h);
        for y in y0..y1 {
            for x in x0..x1 {
                let (c, a) = f(x, y);
                self.blend(x, y, c, a);
            }
        }
    }

    /// Axis-aligned box with exact fractional coverage at its edges.
    fn rect(&mut self, b: [f32; 4], c: Rgb) {
        self.paint(b, |x, y| (c, box_cov(x, y, b)));
    }

    /// Filled polygon, antialiased by its signed distance.
    fn polygon(&mut self, pts: &[[f32; 2]], c: Rgb) {
        self.paint(bounds(pts, 1.0), |x, y| {
            (c, cov(sd_polygon(centre(x, y), pts)))
        });
    }

    /// A stroked polyline of width `w` (coverage capped at `w` for hairlines)
    /// and opacity `a`; each texel is blended once, so joints don't darken.
    fn stroke(&mut self, pts: &[[f32; 2]], w: f32, c: Rgb, a: f32) {
        self.paint(bounds(pts, w + 1.0), |x, y| {
            let p = centre(x, y);
            let d = pts
                .windows(2)
                .map(|s| seg_dist(p, s[0], s[1]).0)
                .fold(f32::MAX, f32::min);
            (c, a * (0.5 * w + 0.5 - d).clamp(0.0, w.min(1.0)))
        });
    }

    /// A straight blade tapering from half-width `hw` at `a` to 0 at `b`,
    /// with a soft edge `feather` texels wide.
    fn blade(&mut self, a: [f32; 2], b: [f32; 2], hw: f32, feather: f32, c: Rgb) {
        self.paint(bounds(&[a, b], hw + feather + 1.0), |x, y| {
            let (d, t) = seg_dist(centre(x, y), a, b);
            let edge = hw * (1.0 - t);
            (
                mix(c, scale(c, 1.5), t),
                smoothstep(edge + feather, edge - feather, d),
            )
        });
    }

    fn save(&self, dir: &Path, name: &str, with_alpha: bool) -> anyhow::Result<()> {
        let mut bytes = Vec::with_capacity(self.px.len() * 4);
        for p in &self.px {
            let a = (p[3] * 255.0).round().clamp(0.0, 255.0) as u8;
            // Straight alpha on disk; fully transparent texels carry black.
            for k in 0..3 {
                let v = if a == 0 { 0.0 } else { p[k] / p[3] };
                bytes.push((v * 255.0).round().clamp(0.0, 255.0) as u8);
            }
            if with_alpha {
                bytes.push(a);
            }
        }
        let path = dir.join(name);
        let enc = PngEncoder::new_with_quality(
            BufWriter::new(File::create(&path)?),
            CompressionType::Best,
            FilterType::Adaptive,
        );
        let ty = if with_alpha {
            ExtendedColorType::Rgba8
        } else {
            ExtendedColorType::Rgb8
        };
        enc.write_image(&bytes, self.w as u32, self.h as u32, ty)?;
        println!("wrote {} ({}x{})", path.display(), self.w, self.h);
        Ok(())
    }
}

fn centre(x: i32, y: i32) -> [f32; 2] {
    [x as f32 + 0.5, y as f32 + 0.5]
}

fn bounds(pts: &[[f32; 2]], pad: f32) -> [f32; 4] {
    pts.iter()
        .fold([f32::MAX, f32::MAX, f32::MIN, f32::MIN], |b, p| {
            [
                b[0].min(p[0] - pad),
                b[1].min(p[1] - pad),
                b[2].max(p[0] + pad),
                b[3].max(p[1] + pad),
            ]
        })
}

// --------------------------------------------------------------- layers --

const W: i32 = 2048;

/// Horizontal noise coordinate that wraps at the layer width.
fn u_of(x: f32, period: i32) -> f32 {
    x / W as f32 * period as f32
}

/// 1. Opaque dusk sky with soft, horizontally stretched cloud bands.
fn sky() -> Canvas {
    let mut c = Canvas::new(W, 1024);
    let stops = [
        rgb(18, 20, 52),
        rgb(52, 40, 92),
        rgb(120, 64, 112),
        rgb(226, 120, 84),
        rgb(250, 176, 104),
    ];
    c.paint([0.0, 0.0, W as f32, 1024.0], |x, y| {
        let t = (y as f32 + 0.5) / 1024.0;
        let s = (t.powf(1.4) * 4.0).min(3.999);
        let base = mix(stops[s as usize], stops[s as usize + 1], s.fract());
        let band = fbm(u_of(x as f32, 6), y as f32 / 40.0, 11, 5, 6);
        let cloud = smoothstep(0.52, 0.75, band) * (1.0 - t) * 0.9;
        let lit = mix(rgb(70, 56, 104), rgb(255, 150, 120), t);
        (mix(base, lit, cloud * 0.45), 1.0)
    });
    c
}

/// 2. Distant cliffs: jagged noisy ridge with a hazy glow above it.
fn cliffs() -> Canvas {
    let mut c = Canvas::new(W, 768);
    // Ridge height per column centre (smaller y = higher), wrapping at W.
    let ridge: Vec<f32> = (0..W)
        .map(|x| {
            let x = x as f32 + 0.5;
            let n = fbm(u_of(x, 5), 0.5, 21, 7, 5);
            let r = 1.0 - (2.0 * fbm(u_of(x, 24), 3.5, 22, 4, 24) - 1.0).abs();
            let jag = fbm(u_of(x, 256), 6.5, 24, 2, 256);
            430.0 - 320.0 * (n - 0.3) - 70.0 * r - 14.0 * jag
        })
        .collect();
    let h_at = |x: i32| ridge[x.rem_euclid(W) as usize];
    let top = ridge.iter().cloned().fold(f32::MAX, f32::min) - 62.0;
    let (rock, haze) = (rgb(46, 38, 78), rgb(170, 130, 170));
    c.paint([0.0, top, W as f32, 768.0], |x, y| {
        let (xc, yc) = (x as f32 + 0.5, y as f32 + 0.5);
        let h = h_at(x);
        let slope = 0.5 * (h_at(x + 1) - h_at(x - 1));
        let body = cov((h - yc) / (1.0 + slope * slope).sqrt());
        // Haze fades with the true distance to the rock, not just the height.
        let dist = (-60..=60)
            .map(|dx: i32| (dx as f32).hypot((h_at(x + dx) - yc).max(0.0)))
            .fold(f32::MAX, f32::min);
        let hz = (120.0 / 255.0) * (1.0 - smoothstep(0.0, 60.0, dist)).powf(1.5);
        let strata = fbm(u_of(xc, 22), yc / 9.0, 23, 3, 22);
        let depth = ((yc - h) / 300.0).clamp(0.0, 1.0);
        let body_c = mix(scale(rock, 0.85 + 0.3 * strata), rgb(30, 26, 54), depth);
        let a = body + (1.0 - body) * hz;
        (mix(haze, body_c, if a > 0.0 { body / a } else { 0.0 }), a)
    });
    c
}

/// 3. Town row: gabled, flat and spired buildings on a ground band, with
/// transparent window holes and half-transparent lit windows.
fn houses() -> Canvas {
    let (h, ground) = (640, 580.0);
    let mut c = Canvas::new(W, h);
    let lit = rgb(255, 186, 92);
    let (mut x, mut i) = (6.0f32, 0);
    while x < W as f32 - 60.0 {
        let bw = rnd(31, i, 70.0, 150.0).round().min(W as f32 - 6.0 - x);
        let church = i == 9;
        let bh = if church {
            330.0
        } else {
            rnd(32, i, 140.0, 320.0).round()
        };
        let (x0, x1, top) = (x, x + bw, ground - bh);
        let wall = mix(rgb(58, 44, 76), rgb(86, 58, 80), rnd(33, i, 0.0, 1.0));
        let roof = mix(rgb(40, 28, 48), rgb(78, 40, 48), rnd(34, i, 0.0, 1.0));
        c.rect([x0, top, x1, ground], wall);
        match (church, hash(i, 0, 35) < 0.6) {
            (true, _) => {
                let mid = (x0 + x1) * 0.5;
                c.rect([mid - 24.0, top - 110.0, mid + 24.0, top], scale(wall, 0.9));
                c.polygon(
                    &[
                        [mid - 30.0, top - 108.0],
                        [mid + 30.0, top - 108.0],
                        [mid, 30.0],
                    ],
                    roof,
                );
                c.rect([mid - 1.5, 6.0, mid + 1.5, 32.0], roof);
                c.rect([mid - 8.0, 14.0, mid + 8.0, 17.0], roof);
            }
            (false, true) => {
                let peak = rnd(36, i, 40.0, 90.0);
                c.polygon(
                    &[
                        [x0 - 5.0, top + 1.0],
                        [x1 + 5.0, top + 1.0],
                        [(x0 + x1) * 0.5, top - peak],
                    ],
                    roof,
                );
                if hash(i, 1, 37) < 0.5 {
                    let cx = x0 + bw * 0.72;
                    c.rect([cx, top - peak * 0.6, cx + 12.0, top - peak * 0.2], roof);
                }
            }
            (false, false) => c.rect([x0 - 2.0, top - 10.0, x1 + 2.0, top], roof),
        }
        // Windows on a grid; every third building has open (empty) frames.
        let holes = i % 3 == 1;
        let (ww, wh) = (14.0, 22.0);
        let cols = ((bw - 20.0) / 30.0).floor().max(1.0) as i32;
        let gap = (bw - cols as f32 * ww) / (cols as f32 + 1.0);
        let rows = ((bh - 60.0) / 44.0).floor() as i32;
        for r in 0..rows {
            for k in 0..cols {
                let wx = (x0 + gap + k as f32 * (ww + gap)).round() as i32;
                let wy = (top + 24.0 + r as f32 * 44.0) as i32;
                let roll = hash(i * 64 + k, r, 38);
                for yy in wy..wy + wh as i32 {
                    for xx in wx..wx + ww as i32 {
                        if holes && roll < 0.75 {
                            c.set(xx, yy, [0.0; 3], 0.0);
                        } else if roll < 0.3 || (holes && roll >= 0.75) {
                            c.set(xx, yy, lit, 128.0 / 255.0);
                        } else {
                            c.set(xx, yy, rgb(28, 24, 40), 1.0);
                        }
                    }
                }
            }
        }
        let door = (x0 + bw * 0.5 - 9.0).round();
        c.rect([door, ground - 34.0, door + 18.0, ground], scale(roof, 0.8));
        let gap = rnd(39, i, -6.0, 14.0).round();
        x = x1 + if gap < 3.0 { 0.0 } else { gap };
        i += 1;
    }
    c.paint([0.0, ground, W as f32, h as f32], |x, y| {
        let t = fbm(x as f32 / 30.0, y as f32 / 6.0, 40, 3, 1 << 20);
        (mix(rgb(34, 28, 44), rgb(52, 40, 56), t), 1.0)
    });
    c
}

/// 4. Harbour: hulls at the bottom, thin masts with spars, and fine
/// translucent rigging.
fn masts() -> Canvas {
    let mut c = Canvas::new(W, 1024);
    let wood = rgb(40, 30, 42);
    let rope = rgb(24, 20, 32);
    let mut prev_top: Option<[f32; 2]> = None;
    for s in 0..5 {
        let x0 = 40.0 + s as f32 * 410.0 + rnd(50, s, 0.0, 60.0);
        let len = rnd(51, s, 240.0, 340.0);
        let deck = rnd(52, s, 870.0, 910.0);
        let x1 = x0 + len;
        let hull = [
            [x0 - 18.0, deck - 6.0],
            [x1 + 26.0, deck - 14.0],
            [x1 - 10.0, 1030.0],
            [x0 + 14.0, 1030.0],
        ];
        c.polygon(
            &hull,
            mix(rgb(50, 34, 44), rgb(70, 40, 40), rnd(53, s, 0.0, 1.0)),
        );
        c.rect(
            [x0 - 12.0, deck - 4.6, x1 + 18.0, deck - 1.3],
            rgb(120, 80, 70),
        );
        let n = 1 + (hash(s, 0, 54) * 2.99) as i32;
        let mut tops = Vec::new();
        for m in 0..n {
            let mx = x0 + len * (m as f32 + 1.0) / (n as f32 + 1.0) + rnd(55, s * 8 + m, -8.0, 8.0);
            let mw = rnd(56, s * 8 + m, 3.0, 6.0);
            let top = rnd(57, s * 8 + m, 120.0, 420.0);
            let split = lerp(top, deck, 0.45);
            c.rect([mx - mw * 0.5, split, mx + mw * 0.5, deck], wood);
            c.rect([mx - mw * 0.32, top, mx + mw * 0.32, split + 2.0], wood);
            for (k, yard) in [0.25f32, 0.6].iter().enumerate() {
                let yy = lerp(top, deck, *yard);
                let half = rnd(58, s * 8 + m * 2 + k as i32, 30.0, 70.0) * (0.6 + yard);
                c.rect([mx - half, yy, mx + half, yy + 3.3], wood);
                for side in [-1.0, 1.0] {
                    let end = [mx + side * half, yy + 1.5];
                    c.stroke(&[end, [mx + side * len * 0.18, deck - 6.0]], 1.1, rope, 0.7);
                }
            }
            let tip = [mx, top + 1.0];
            tops.push(tip);
        }
        // Stays to bow and stern, and between neighbouring mast tops.
        c.stroke(&[tops[0], [x0 - 16.0, deck - 8.0]], 1.6, rope, 0.85);
        c.stroke(
            &[*tops.last().unwrap(), [x1 + 22.0, deck - 14.0]],
            1.6,
            rope,
            0.85,
        );
        for pair in tops.windows(2) {
            c.stroke(pair, 1.3, rope, 0.75);
        }
        // A sagging line of bunting to the previous ship.
        if let Some(p) = prev_top {
            let q = tops[0];
            let pts: Vec<[f32; 2]> = (0..=24)
                .map(|k| {
                    let t = k as f32 / 24.0;
                    let sag = 4.0 * t * (1.0 - t) * 90.0;
                    [lerp(p[0], q[0], t), lerp(p[1], q[1], t) + 40.0 + sag]
                })
                .collect();
            c.stroke(&pts, 1.0, rope, 0.55);
        }
        prev_top = tops.last().copied();
    }
    c
}

/// 5. A translucent fog band; never opaque, clear at top and bottom.
fn fog() -> Canvas {
    let mut c = Canvas::new(W, 512);
    c.paint([0.0, 0.0, W as f32, 512.0], |x, y| {
        let (xc, yc) = (x as f32 + 0.5, y as f32 + 0.5);
        let wave = 40.0 * (fbm(u_of(xc, 4), 9.5, 60, 3, 4) - 0.5);
        let (top, bot) = (48.0 + 30.0 + wave, 512.0 - 48.0);
        let env = smoothstep(top - 30.0, top + 70.0, yc) * (1.0 - smoothstep(bot - 90.0, bot, yc));
        let n = smoothstep(0.3, 0.7, fbm(u_of(xc, 8), yc / 70.0, 61, 4, 8));
        let a = env * (20.0 + 140.0 * n) / 255.0;
        let col = mix(rgb(150, 150, 184), rgb(196, 160, 170), yc / 512.0);
        (col, if yc < 48.0 || yc > bot { 0.0 } else { a })
    });
    c
}

/// 6. Foreground pier: planks and posts with feathered tops, grass tufts.
fn pier() -> Canvas {
    let mut c = Canvas::new(W, 512);
    let wood = rgb(62, 44, 44);
    let deck_y = |x: f32| 400.0 + 4.0 * (fbm(u_of(x, 16), 0.5, 70, 2, 16) - 0.5);
    c.paint([0.0, 370.0, W as f32, 512.0], |x, y| {
        let (xc, yc) = (x as f32 + 0.5, y as f32 + 0.5);
        let top = deck_y(xc);
        let a = smoothstep(top - 12.0, top, yc);
        let board = ((yc - top) / 18.0).max(0.0);
        let seam = if board.fract() < 0.08 && yc > top + 4.0 {
            0.6
        } else {
            1.0
        };
        let sheen = 1.0 + 0.5 * (1.0 - smoothstep(0.0, 10.0, yc - top + 4.0));
        let grain = 0.85 + 0.3 * fbm(xc / 60.0, yc / 4.0, 71, 3, 1 << 20);
        (scale(wood, seam * sheen * grain), a)
    });
    for p in 0..12 {
        let px = p as f32 * 171.0 + rnd(72, p, 20.0, 120.0);
        let pw = rnd(73, p, 26.0, 40.0);
        let top = rnd(74, p, 290.0, 345.0);
        let col = scale(wood, 0.75);
        c.paint([px, top, px + pw, 512.0], |x, y| {
            let yc = y as f32 + 0.5;
            let a = box_cov(x, y, [px, 0.0, px + pw, 512.0]) * smoothstep(top, top + 12.0, yc);
            let rim = if (x as f32) < px + 3.0 { 1.3 } else { 1.0 };
            (scale(col, rim), a)
        });
    }
    for t in 0..14 {
        let bx = t as f32 * 146.0 + rnd(75, t, 0.0, 110.0);
        for b in 0..7 {
            let k = t * 16 + b;
            let base = [bx + rnd(76, k, -14.0, 14.0), deck_y(bx) + 5.0];
            let len = rnd(77, k, 18.0, 48.0);
            let lean = rnd(78, k, -0.6, 0.6);
            let tip = [base[0] + len * lean, base[1] - len];
            c.blade(base, tip, rnd(79, k, 2.0, 3.5), 1.5, rgb(58, 74, 52));
        }
    }
    c
}

/// 7. UI panel: rounded rectangle with gradient, bevel and soft shadow.
fn ui_panel() -> Canvas {
    let mut c = Canvas::new(512, 320);
    let (ctr, half, r) = ([252.0, 152.0], [238.0, 142.0], 32.0);
    c.paint([0.0, 0.0, 512.0, 320.0], |x, y| {
        let p = centre(x, y);
        let d = sd_round_rect([p[0] - 6.0, p[1] - 8.0], ctr, half, r);
        (rgb(8, 6, 16), 0.55 * (1.0 - smoothstep(-4.0, 12.0, d)))
    });
    c.paint([0.0, 0.0, 512.0, 320.0], |x, y| {
        let p = centre(x, y);
        let d = sd_round_rect(p, ctr, half, r);
        let t = (p[1] - 10.0) / 284.0;
        let fill = mix(rgb(84, 72, 128), rgb(42, 34, 74), t);
        let bevel = 1.0 - smoothstep(2.0, 4.0, -d);
        (
            mix(fill, rgb(196, 160, 220), bevel * 0.6 * (1.0 - t)),
            cov(d),
        )
    });
    c
}

/// 8. Round button: opaque disc with rim and highlight, soft outer glow.
fn ui_button() -> Canvas {
    let mut c = Canvas::new(128, 128);
    let (cx, cy, r) = (63.0, 62.0, 52.0);
    c.paint([0.0, 0.0, 128.0, 128.0], |x, y| {
        let p = centre(x, y);
        let d = (p[0] - cx - 1.5).hypot(p[1] - cy - 2.5) - r;
        (rgb(250, 150, 80), 0.5 * (1.0 - smoothstep(-3.0, 10.0, d)))
    });
    c.paint([0.0, 0.0, 128.0, 128.0], |x, y| {
        let p = centre(x, y);
        let d = (p[0] - cx).hypot(p[1] - cy) - r;
        let t = ((p[1] - cy) / r + 1.0) * 0.5;
        let mut col = mix(rgb(236, 128, 70), rgb(150, 58, 60), t);
        let hl = (p[0] - cx).hypot((p[1] - cy + 22.0) * 1.6) / 38.0;
        col = mix(
            col,
            rgb(255, 214, 160),
            0.7 * (1.0 - smoothstep(0.3, 1.0, hl)),
        );
        col = mix(col, rgb(90, 30, 40), smoothstep(-2.2, -1.2, d));
        (col, cov(d))
    });
    c
}

// ---------------------------------------------------------- UI sheet --

/// The UI sheet's regions: (name, rect) and the panel's slices; the spark's
/// six frames touch (no padding), the icons have one texel between them,
/// buttons and panel two.
const SHEET_W: i32 = 168;
const SHEET_H: i32 = 104;
const PLAY: [i32; 4] = [2, 2, 72, 28];
const ROUND: [i32; 4] = [76, 2, 40, 40];
const PANEL: [i32; 4] = [118, 2, 48, 48];
const PANEL_SLICES: [i32; 4] = [12, 12, 12, 12];
const ICONS: [[i32; 4]; 3] = [[2, 52, 24, 24], [27, 52, 24, 24], [52, 52, 24, 24]];
const ICON_NAMES: [&str; 3] = ["icon-anchor", "icon-star", "icon-lantern"];
const SPARK_Y: i32 = 77;
const FRAME: i32 = 24;

/// A box as [x0, y0, x1, y1] floats.
fn fbox(r: [i32; 4]) -> [f32; 4] {
    [
        r[0] as f32,
        r[1] as f32,
        (r[0] + r[2]) as f32,
        (r[1] + r[3]) as f32,
    ]
}

/// The UI sprite sheet: a pill "play" button and a round one, a bevelled
/// panel for nine-slice stretching, three icons (anchor, star, lantern)
/// and six frames of a spark (a growing core, a turning ray).
fn ui_sheet() -> Canvas {
    let mut c = Canvas::new(SHEET_W, SHEET_H);
    // pill button: a rounded box filling its rectangle, lit from above
    let b = fbox(PLAY);
    let (ctr, half) = ([(b[0] + b[2]) / 2.0, (b[1] + b[3]) / 2.0], [36.0, 14.0]);
    c.paint(b, |x, y| {
        let p = centre(x, y);
        let d = sd_round_rect(p, ctr, half, 13.5);
        let t = (p[1] - b[1]) / 28.0;
        let col = mix(rgb(120, 200, 150), rgb(40, 110, 90), t);
        (mix(col, rgb(20, 50, 40), smoothstep(-2.0, -1.0, d)), cov(d))
    });
    // play triangle on the pill
    c.polygon(
        &[[30.0, 8.0], [30.0, 24.0], [44.0, 16.0]],
        rgb(240, 250, 230),
    );
    // round button with a soft glow in its corners
    let b = fbox(ROUND);
    let (cx, cy) = ((b[0] + b[2]) / 2.0, (b[1] + b[3]) / 2.0);
    c.paint(b, |x, y| {
        let p = centre(x, y);
        let d = (p[0] - cx).hypot(p[1] - cy) - 16.0;
        let glow = 0.45 * (1.0 - smoothstep(-1.0, 5.0, d));
        (rgb(250, 180, 90), glow)
    });
    c.paint(b, |x, y| {
        let p = centre(x, y);
        let d = (p[0] - cx).hypot(p[1] - cy) - 16.0;
        let t = ((p[1] - cy) / 16.0 + 1.0) * 0.5;
        (mix(rgb(246, 150, 80), rgb(160, 70, 50), t), cov(d))
    });
    // panel: rounded, bevelled, drawn to be stretched
    let b = fbox(PANEL);
    let (ctr, half) = ([(b[0] + b[2]) / 2.0, (b[1] + b[3]) / 2.0], [24.0, 24.0]);
    c.paint(b, |x, y| {
        let p = centre(x, y);
        let d = sd_round_rect(p, ctr, half, 9.0);
        let bevel = 1.0 - smoothstep(2.0, 4.0, -d);
        (
            mix(rgb(60, 52, 96), rgb(190, 160, 220), bevel * 0.7),
            cov(d),
        )
    });
    // icons: an anchor, a star, a lantern
    let [ax, ay, _, _] = ICONS[0].map(|v| v as f32);
    c.stroke(
        &[[ax + 12.0, ay + 2.5], [ax + 12.0, ay + 21.0]],
        4.0,
        rgb(210, 220, 230),
        1.0,
    );
    c.stroke(
        &[[ax + 5.0, ay + 7.0], [ax + 19.0, ay + 7.0]],
        4.0,
        rgb(210, 220, 230),
        1.0,
    );
    c.stroke(
        &[
            [ax + 1.5, ay + 14.0],
            [ax + 4.0, ay + 20.0],
            [ax + 12.0, ay + 22.5],
            [ax + 20.0, ay + 20.0],
            [ax + 22.5, ay + 14.0],
        ],
        3.0,
        rgb(210, 220, 230),
        1.0,
    );
    let [sx, sy, _, _] = ICONS[1].map(|v| v as f32);
    let star: Vec<[f32; 2]> = (0..10)
        .map(|k| {
            let a = std::f32::consts::PI * (k as f32 / 5.0 - 0.5);
            let r = if k % 2 == 0 { 11.8 } else { 5.0 };
            [sx + 12.0 + r * a.cos(), sy + 12.6 + r * a.sin()]
        })
        .collect();
    c.polygon(&star, rgb(250, 220, 110));
    let [lx, ly, _, _] = ICONS[2].map(|v| v as f32);
    c.polygon(
        &[
            [lx + 5.0, ly + 7.0],
            [lx + 12.0, ly + 0.5],
            [lx + 19.0, ly + 7.0],
        ],
        rgb(70, 60, 50),
    );
    let lb = [lx + 5.0, ly + 7.0, lx + 19.0, ly + 23.5];
    c.paint(lb, |x, y| {
        let p = centre(x, y);
        let d = sd_round_rect(p, [lx + 12.0, ly + 15.25], [7.0, 8.25], 2.5);
        let glow = 1.0 - smoothstep(0.0, 6.0, (p[0] - lx - 12.0).hypot(p[1] - ly - 15.0));
        (mix(rgb(120, 80, 40), rgb(255, 230, 140), glow), cov(d))
    });
    // spark: six frames in a row, touching
    for k in 0..6 {
        let (x0, y0) = ((2 + k * FRAME) as f32, SPARK_Y as f32);
        let (cx, cy) = (x0 + 12.0, y0 + 12.0);
        let r = 4.0 + k as f32 * 0.9;
        let ang = k as f32 * 0.55;
        let tip = [cx + 11.9 * ang.cos(), cy + 11.9 * ang.sin()];
        c.blade([cx, cy], tip, 2.2, 0.6, rgb(255, 200, 120));
        c.paint([x0, y0, x0 + 24.0, y0 + 24.0], |x, y| {
            let p = centre(x, y);
            let d = (p[0] - cx).hypot(p[1] - cy) - r;
            (
                mix(
                    rgb(255, 250, 220),
                    rgb(255, 170, 60),
                    smoothstep(-r, 0.0, d),
                ),
                cov(d),
            )
        });
    }
    c
}

/// The UI sheet's regions file (our own format `underdraw.regions`).
fn ui_sheet_regions() -> String {
    let rect = |r: [i32; 4]| format!("[{}, {}, {}, {}]", r[0], r[1], r[2], r[3]);
    let mut lines = vec![
        format!("  {{\"name\": \"button-play\", \"rect\": {}}}", rect(PLAY)),
        format!(
            "  {{\"name\": \"button-round\", \"rect\": {}}}",
            rect(ROUND)
        ),
        format!(
            "  {{\"name\": \"panel\", \"rect\": {}, \"slices\": {}}}",
            rect(PANEL),
            rect(PANEL_SLICES)
        ),
    ];
    for (n, r) in ICON_NAMES.iter().zip(ICONS) {
        lines.push(format!("  {{\"name\": \"{n}\", \"rect\": {}}}", rect(r)));
    }
    let frames: Vec<String> = (0..6)
        .map(|k| rect([2 + k * FRAME, SPARK_Y, FRAME, FRAME]))
        .collect();
    lines.push(format!(
        "  {{\"name\": \"spark\", \"frames\": [{}]}}",
        frames.join(", ")
    ));
    format!(
        "{{\"format\": \"underdraw.regions\", \"version\": 1,\n \"regions\": [\n{}\n ]}}\n",
        lines.join(",\n")
    )
}

fn main() -> anyhow::Result<()> {
    let out = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "demo-layers".into());
    let dir = Path::new(&out);
    std::fs::create_dir_all(dir)?;
    sky().save(dir, "sky.png", false)?;
    cliffs().save(dir, "cliffs.png", true)?;
    houses().save(dir, "houses.png", true)?;
    masts().save(dir, "masts.png", true)?;
    fog().save(dir, "fog.png", true)?;
    pier().save(dir, "pier.png", true)?;
    ui_panel().save(dir, "ui-panel.png", true)?;
    ui_button().save(dir, "ui-button.png", true)?;
    let sheets = std::env::args()
        .nth(2)
        .unwrap_or_else(|| "demo-sheets".into());
    let sheets = Path::new(&sheets);
    std::fs::create_dir_all(sheets)?;
    ui_sheet().save(sheets, "ui-sheet.png", true)?;
    std::fs::write(sheets.join("ui-sheet.regions.json"), ui_sheet_regions())?;
    println!("wrote {}", sheets.join("ui-sheet.regions.json").display());
    Ok(())
}
