//! The quality bench's generated layers, our own invented shapes, made
//! deterministically from a seed: terrain-like strips with soft (antialiased)
//! edges, and hard-edged sprites and tiles (alpha only 0 or 255).

use underdraw::alpha::AlphaMap;
use underdraw::settings::Wrap;

/// A generated layer: its name, alpha and the addressing it is cut with.
pub struct Layer {
    pub name: String,
    pub map: AlphaMap,
    pub wrap: Wrap,
}

/// A small linear congruential generator (Knuth's MMIX constants).
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
    fn range(&mut self, a: f64, b: f64) -> f64 {
        a + (b - a) * self.next()
    }
}

/// Alpha from a coverage test sampled 4 x 4 per texel (a soft,
/// antialiased edge one texel wide).
fn supersampled(w: u32, h: u32, inside: impl Fn(f64, f64) -> bool) -> AlphaMap {
    let mut a = vec![0u8; (w * h) as usize];
    for y in 0..h {
        for x in 0..w {
            let mut n = 0;
            for sy in 0..4 {
                for sx in 0..4 {
                    let (px, py) = (
                        x as f64 + (sx as f64 + 0.5) / 4.0,
                        y as f64 + (sy as f64 + 0.5) / 4.0,
                    );
                    n += inside(px, py) as u32;
                }
            }
            a[(y * w + x) as usize] = (n * 255 / 16) as u8;
        }
    }
    AlphaMap::from_raw(w, h, a)
}

/// Alpha 255 where `inside` holds at the texel centre, else 0.
fn hard(w: u32, h: u32, inside: impl Fn(f64, f64) -> bool) -> AlphaMap {
    let mut a = vec![0u8; (w * h) as usize];
    for y in 0..h {
        for x in 0..w {
            if inside(x as f64 + 0.5, y as f64 + 0.5) {
                a[(y * w + x) as usize] = 255;
            }
        }
    }
    AlphaMap::from_raw(w, h, a)
}

/// A skyline: buildings of random widths and heights, rows of window holes.
fn skyline(seed: u64) -> AlphaMap {
    let (w, h) = (1024u32, 384u32);
    let mut r = Rng(seed);
    let mut blocks = Vec::new(); // (x0, x1, top)
    let mut x = 0.0;
    while x < w as f64 {
        let bw = r.range(40.0, 140.0);
        blocks.push((x, x + bw, r.range(80.0, 330.0)));
        x += bw;
    }
    let win = r.range(6.0, 10.0);
    supersampled(w, h, |px, py| {
        let b = blocks.iter().find(|b| px >= b.0 && px < b.1).unwrap();
        if py < b.2 {
            return false;
        }
        // windows: a grid of holes above the ground floor
        let (lx, ly) = (px - b.0 - 8.0, py - b.2 - 10.0);
        let window = lx > 0.0
            && px < b.1 - 8.0
            && ly > 0.0
            && py < h as f64 - 40.0
            && lx % (2.0 * win) < win
            && ly % (2.5 * win) < 1.4 * win;
        !window
    })
}

/// Wooded hills: a smooth profile with round tree crowns on top.
fn hills(seed: u64, wrap: bool) -> AlphaMap {
    let (w, h) = (1024u32, 320u32);
    let mut r = Rng(seed);
    let waves: Vec<(f64, f64, f64)> = (0..4)
        .map(|k| {
            let cycles = if wrap {
                (k + 1) as f64
            } else {
                r.range(0.5, 4.0)
            };
            (
                r.range(15.0, 45.0) / (k + 1) as f64,
                cycles,
                r.range(0.0, 6.3),
            )
        })
        .collect();
    let ground = |x: f64| {
        let mut y = 180.0;
        for &(amp, cyc, ph) in &waves {
            y += amp * (x / w as f64 * cyc * std::f64::consts::TAU + ph).sin();
        }
        y
    };
    let trees: Vec<(f64, f64)> = (0..40)
        .map(|_| (r.range(0.0, w as f64), r.range(8.0, 22.0)))
        .collect();
    let ground_at: Vec<f64> = trees.iter().map(|t| ground(t.0)).collect();
    supersampled(w, h, |px, py| {
        if py > ground(px) {
            return true;
        }
        trees.iter().zip(&ground_at).any(|(&(tx, rad), &gy)| {
            let cy = gy - rad * 0.8;
            (px - tx).powi(2) + (py - cy).powi(2) < rad * rad
        })
    })
}

/// A mountain range: a jagged profile by midpoint displacement.
fn mountains(seed: u64) -> AlphaMap {
    let (w, h) = (1024u32, 384u32);
    let mut r = Rng(seed);
    let n = 257;
    let mut ys = vec![0.0f64; n];
    ys[0] = r.range(150.0, 300.0);
    ys[n - 1] = r.range(150.0, 300.0);
    let mut step = n - 1;
    let mut amp = 140.0;
    while step > 1 {
        let half = step / 2;
        let mut i = half;
        while i < n {
            ys[i] = (ys[i - half] + ys[i + half]) / 2.0 + r.range(-amp, amp);
            i += step;
        }
        step = half;
        amp *= 0.55;
    }
    let profile = move |x: f64| {
        let t = x / w as f64 * (n - 1) as f64;
        let i = (t.floor() as usize).min(n - 2);
        let f = t - i as f64;
        (ys[i] * (1.0 - f) + ys[i + 1] * f).clamp(20.0, h as f64 - 10.0)
    };
    supersampled(w, h, move |px, py| py > profile(px))
}

/// A cloud bank: soft ellipses with alpha falling off over several texels,
/// over a flat base.
fn clouds(seed: u64) -> AlphaMap {
    let (w, h) = (1024u32, 256u32);
    let mut r = Rng(seed);
    let puffs: Vec<(f64, f64, f64, f64)> = (0..30)
        .map(|_| {
            (
                r.range(0.0, w as f64),
                r.range(90.0, 200.0),
                r.range(30.0, 90.0),
                r.range(20.0, 50.0),
            )
        })
        .collect();
    let mut a = vec![0u8; (w * h) as usize];
    for y in 0..h {
        for x in 0..w {
            let (px, py) = (x as f64 + 0.5, y as f64 + 0.5);
            let mut d = f64::MAX; // signed distance-like value, < 0 inside
            for &(cx, cy, rx, ry) in &puffs {
                let q = ((px - cx) / rx).powi(2) + ((py - cy) / ry).powi(2);
                d = d.min((q.sqrt() - 1.0) * rx.min(ry));
            }
            if py > 200.0 {
                d = d.min(200.0 - py);
            }
            // opaque 6 texels inside the edge, fading to 0 at 2 texels outside
            let t = ((2.0 - d) / 8.0).clamp(0.0, 1.0);
            a[(y * w + x) as usize] = (t * 255.0).round() as u8;
        }
    }
    AlphaMap::from_raw(w, h, a)
}

/// The terrain-like set: 13 strips (skylines, wooded hills, mountain
/// ranges, cloud banks, tiling strips repeated on x).
pub fn terrain() -> Vec<Layer> {
    let mut out = Vec::new();
    let mut push = |name: String, map: AlphaMap, wrap: Wrap| out.push(Layer { name, map, wrap });
    for s in 0..3 {
        push(format!("skyline-{s}"), skyline(11 + s), Wrap::None);
        push(format!("hills-{s}"), hills(21 + s, false), Wrap::None);
        push(format!("mountains-{s}"), mountains(31 + s), Wrap::None);
    }
    for s in 0..2 {
        push(format!("clouds-{s}"), clouds(41 + s), Wrap::None);
        push(format!("strip-{s}"), hills(51 + s, true), Wrap::X);
    }
    out
}

/// A pixel-art character on a 32 x 48 grid: head, body, arms, legs.
fn character(seed: u64) -> AlphaMap {
    let mut r = Rng(seed);
    let head = r.range(5.0, 8.0);
    let arm = r.range(2.0, 4.0);
    let stride = r.range(1.0, 5.0);
    hard(32, 48, move |x, y| {
        let head_c = (16.0, 4.0 + head);
        let in_head = (x - head_c.0).powi(2) + (y - head_c.1).powi(2) < head * head;
        let in_body = (10.0..22.0).contains(&x) && y > 2.0 * head + 3.0 && y < 34.0;
        let in_arms = y > 2.0 * head + 4.0
            && y < 2.0 * head + 4.0 + arm
            && ((4.0..10.0).contains(&x) || (22.0..28.0).contains(&x));
        let in_legs = (34.0..46.0).contains(&y)
            && ((11.0 - stride..15.0 - stride).contains(&x)
                || (17.0 + stride..21.0 + stride).contains(&x));
        in_head || in_body || in_arms || in_legs
    })
}

/// A prop: a barrel (64 x 80, rounded) or a crate with a notched lid.
fn prop(seed: u64) -> AlphaMap {
    if seed.is_multiple_of(2) {
        hard(64, 80, |x, y| {
            let bulge = 28.0 + 4.0 * (1.0 - ((y - 40.0) / 38.0).powi(2));
            (x - 32.0).abs() < bulge && (2.0..78.0).contains(&y)
        })
    } else {
        hard(96, 96, |x, y| {
            let body = (4.0..92.0).contains(&x) && (12.0..92.0).contains(&y);
            let lid =
                (8.0..88.0).contains(&x) && (4.0..12.0).contains(&y) && (x as i64 / 8) % 3 != 1;
            body || lid
        })
    }
}

/// A UI icon: a disc, a five-pointed star or a heart, 64 x 64 or 128 x 128.
fn icon(kind: u64, size: u32) -> AlphaMap {
    let s = size as f64;
    match kind {
        0 => hard(size, size, move |x, y| {
            (x - s / 2.0).powi(2) + (y - s / 2.0).powi(2) < (0.45 * s).powi(2)
        }),
        1 => hard(size, size, move |x, y| {
            let (dx, dy) = (x - s / 2.0, y - s / 2.0);
            let a = dy.atan2(dx) + std::f64::consts::FRAC_PI_2;
            let k = (a / (std::f64::consts::TAU / 5.0)).rem_euclid(1.0);
            let rad = 0.2 * s + 0.27 * s * (1.0 - 2.0 * (k - 0.5).abs()).powf(1.5);
            (dx * dx + dy * dy).sqrt() < rad
        }),
        _ => hard(size, size, move |x, y| {
            let (u, v) = ((x - s / 2.0) / (0.3 * s), (s * 0.45 - y) / (0.3 * s));
            (u * u + v * v - 1.0).powi(3) - u * u * v.powi(3) < 0.0
        }),
    }
}

/// A UI frame: a rounded rectangle with a rectangular hole.
fn frame(w: u32, h: u32, border: f64, corner: f64) -> AlphaMap {
    let (wf, hf) = (w as f64, h as f64);
    hard(w, h, move |x, y| {
        let (qx, qy) = (
            (x - wf / 2.0).abs() - (wf / 2.0 - corner - 2.0),
            (y - hf / 2.0).abs() - (hf / 2.0 - corner - 2.0),
        );
        let outside = qx.max(0.0).hypot(qy.max(0.0)) > corner;
        let hole =
            (x - wf / 2.0).abs() < wf / 2.0 - border && (y - hf / 2.0).abs() < hf / 2.0 - border;
        !outside && !hole
    })
}

/// A tile of a tiling ground strip: a stepped top edge, repeated on x.
fn tile(seed: u64) -> AlphaMap {
    let mut r = Rng(seed);
    let steps: Vec<f64> = (0..8).map(|_| r.range(8.0, 40.0)).collect();
    hard(128, 64, move |x, y| y > steps[(x / 16.0) as usize])
}

/// The hard-edged set: 13 sprites and tiles with alpha 0 or 255.
pub fn sprites() -> Vec<Layer> {
    let mut out = Vec::new();
    let mut push = |name: String, map: AlphaMap, wrap: Wrap| out.push(Layer { name, map, wrap });
    for s in 0..3 {
        push(format!("character-{s}"), character(61 + s), Wrap::None);
    }
    push("barrel".into(), prop(0), Wrap::None);
    push("crate".into(), prop(1), Wrap::None);
    push("icon-disc".into(), icon(0, 64), Wrap::None);
    push("icon-star".into(), icon(1, 128), Wrap::None);
    push("icon-heart".into(), icon(2, 128), Wrap::None);
    push("icon-disc-big".into(), icon(0, 128), Wrap::None);
    push(
        "frame-panel".into(),
        frame(256, 160, 16.0, 12.0),
        Wrap::None,
    );
    push("frame-button".into(), frame(128, 48, 6.0, 10.0), Wrap::None);
    push("tile-0".into(), tile(71), Wrap::X);
    push("tile-1".into(), tile(72), Wrap::X);
    out
}
