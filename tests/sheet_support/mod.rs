//! Generated sprite sheets and a texture sampler for the sheet tests.
#![allow(dead_code)]

use crate::common::triangles::Tri;
use crate::common::Rng;
use image::{ImageFormat, Rgba, RgbaImage};
use std::path::Path;
use std::process::{Command, Output};
use underdraw::mesh::LayerMesh;

pub const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

pub fn run(args: &[&str]) -> Output {
    Command::new(BIN)
        .args(args)
        .output()
        .expect("run underdraw")
}

pub fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

pub fn status(out: &Output, code: i32, what: &str) {
    assert_eq!(
        out.status.code(),
        Some(code),
        "{what}: stdout:\n{}\nstderr:\n{}",
        text(&out.stdout),
        text(&out.stderr)
    );
}

/// Runs underdraw with `args` and checks that it exits with `code`
/// (`what` names the step in a failure); returns its output.
pub fn run_expect(args: &[&str], code: i32, what: &str) -> Output {
    let o = run(args);
    status(&o, code, what);
    o
}

/// `underdraw cut SHEET --regions REGIONS --out OUT EXTRA...` (`--json`
/// among `extra` for the rows as JSON), checked to exit with `code`.
pub fn cut_regions(
    sheet: &Path,
    regions: &Path,
    out: &Path,
    extra: &[&str],
    code: i32,
    what: &str,
) -> Output {
    let mut args = vec![
        "cut",
        sheet.to_str().unwrap(),
        "--regions",
        regions.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    run_expect(&args, code, what)
}

/// `underdraw check MESH IMAGE EXTRA...`, checked to exit with `code`.
pub fn check(mesh: &Path, image: &Path, extra: &[&str], code: i32, what: &str) -> Output {
    let mut args = vec!["check", mesh.to_str().unwrap(), image.to_str().unwrap()];
    args.extend_from_slice(extra);
    run_expect(&args, code, what)
}

/// A sprite's alpha, `w` x `h`, row-major: its visible texels reach every
/// side of its box (so the box is its bounding box).
pub fn sprite(kind: u64, w: u32, h: u32) -> Vec<u8> {
    let (cx, cy) = (w as f64 / 2.0, h as f64 / 2.0);
    let mut a = vec![0u8; (w * h) as usize];
    for y in 0..h {
        for x in 0..w {
            let (px, py) = (x as f64 + 0.5 - cx, y as f64 + 0.5 - cy);
            let v = match kind % 3 {
                // an ellipse with a soft rim one texel wide
                0 => {
                    let d = ((px / cx).powi(2) + (py / cy).powi(2)).sqrt();
                    ((1.0 - d) * cx.min(cy) * 255.0).clamp(0.0, 255.0)
                }
                // a ring: opaque band, transparent middle
                1 => {
                    let d = ((px / cx).powi(2) + (py / cy).powi(2)).sqrt();
                    if (0.5..1.0).contains(&d) {
                        255.0
                    } else {
                        0.0
                    }
                }
                // a box with soft corners
                _ => {
                    let (ex, ey) = (cx - px.abs(), cy - py.abs());
                    (ex.min(ey) * 120.0 + 15.0).clamp(0.0, 255.0)
                }
            };
            a[(y * w + x) as usize] = v as u8;
        }
    }
    // every side reaches the box: the middle texel of each edge is visible
    for (x, y) in [(w / 2, 0), (w / 2, h - 1), (0, h / 2), (w - 1, h / 2)] {
        let i = (y * w + x) as usize;
        a[i] = a[i].max(40);
    }
    a
}

/// A packed sheet: sprites on shelves, `pad` transparent texels between
/// them and around the sheet. Returns the sheet and each sprite's box.
pub struct Sheet {
    pub w: u32,
    pub h: u32,
    pub alpha: Vec<u8>,
    pub boxes: Vec<[u32; 4]>,
}

pub fn pack(sizes: &[(u64, u32, u32)], pad: u32, width: u32) -> Sheet {
    let (mut x, mut y, mut shelf) = (pad, pad, 0);
    let mut boxes = Vec::new();
    for &(_, w, h) in sizes {
        if x + w + pad > width {
            x = pad;
            y += shelf + pad;
            shelf = 0;
        }
        boxes.push([x, y, w, h]);
        x += w + pad;
        shelf = shelf.max(h);
    }
    let h = y + shelf + pad;
    let mut alpha = vec![0u8; (width * h) as usize];
    for (&(kind, w, hh), b) in sizes.iter().zip(&boxes) {
        let s = sprite(kind, w, hh);
        for sy in 0..hh {
            for sx in 0..w {
                alpha[((b[1] + sy) * width + b[0] + sx) as usize] = s[(sy * w + sx) as usize];
            }
        }
    }
    Sheet {
        w: width,
        h,
        alpha,
        boxes,
    }
}

pub fn save(sheet: &Sheet, path: &Path) {
    RgbaImage::from_fn(sheet.w, sheet.h, |x, y| {
        let a = sheet.alpha[(y * sheet.w + x) as usize];
        Rgba([(x * 7) as u8, (y * 5) as u8, 200, a])
    })
    .save_with_format(path, ImageFormat::Png)
    .unwrap();
}

pub fn regions_file(names_rects: &[(String, String)]) -> String {
    let entries: Vec<String> = names_rects
        .iter()
        .map(|(n, rest)| format!("{{\"name\": \"{n}\", {rest}}}"))
        .collect();
    format!(
        "{{\"format\": \"underdraw.regions\", \"version\": 1, \"regions\": [{}]}}",
        entries.join(",\n")
    )
}

pub fn load(p: &Path) -> LayerMesh {
    serde_json::from_slice(&std::fs::read(p).unwrap_or_else(|e| panic!("{p:?}: {e}"))).unwrap()
}

/// A nine-slice panel mesh's vertex positions when drawn `size` texels,
/// by the rule for engines (the README's; nine-slice scaling is common
/// practice, no source): each vertex placed from its `slice_positions`
/// anchor [column, row, dx, dy]: column 0 at dx, 1 at left + dx * (W' -
/// left - right) / (w - left - right), 2 at W' - right + dx; rows alike.
pub fn anchored_positions(m: &LayerMesh, size: [f64; 2]) -> Vec<[f64; 2]> {
    let r = m.region.as_ref().unwrap();
    let [l, t, rr, b] = r.slices.unwrap().map(|v| v as f64);
    let (w, h) = (m.size[0] as f64, m.size[1] as f64);
    let place = |k: f32, d: f32, lo: f64, hi: f64, n: f64, to: f64| match k as u32 {
        0 => d as f64,
        1 => lo + d as f64 * (to - lo - hi) / (n - lo - hi),
        _ => to - hi + d as f64,
    };
    r.slice_positions
        .as_ref()
        .unwrap()
        .iter()
        .map(|a| {
            [
                place(a[0], a[2], l, rr, w, size[0]),
                place(a[1], a[3], t, b, h, size[1]),
            ]
        })
        .collect()
}

/// Level 0 of the OpenGL ES 3.0 LINEAR rule (specification section 3.8.10,
/// from memory): at p (texels) u = p.x - 1/2, the texels floor(u) and
/// floor(u) + 1 weighted 1 - frac(u) and frac(u), same in y, indices
/// clamped to the texture (CLAMP_TO_EDGE). The sample is fully opaque when
/// every texel of non-zero weight is.
pub fn linear_opaque(sheet: &Sheet, p: [f64; 2]) -> bool {
    linear_taps(sheet, p).iter().all(|&a| a == 255)
}

/// Whether the LINEAR sample at `p` (as [`linear_opaque`]) reads any
/// visible texel (alpha above 0).
pub fn linear_visible(sheet: &Sheet, p: [f64; 2]) -> bool {
    linear_taps(sheet, p).iter().any(|&a| a > 0)
}

/// The alphas of the texels of non-zero weight at `p`.
fn linear_taps(sheet: &Sheet, p: [f64; 2]) -> Vec<u8> {
    let mut out = Vec::with_capacity(4);
    let (u, v) = (p[0] - 0.5, p[1] - 0.5);
    let (i0, j0) = (u.floor(), v.floor());
    let (a, b) = (u - i0, v - j0);
    for (di, wx) in [(0, 1.0 - a), (1, a)] {
        for (dj, wy) in [(0, 1.0 - b), (1, b)] {
            if wx * wy > 0.0 {
                let i = (i0 as i64 + di).clamp(0, sheet.w as i64 - 1);
                let j = (j0 as i64 + dj).clamp(0, sheet.h as i64 - 1);
                out.push(sheet.alpha[(j * sheet.w as i64 + i) as usize]);
            }
        }
    }
    out
}

pub fn point_in(t: &Tri, rng: &mut Rng) -> [f64; 2] {
    let (mut r, mut s) = (rng.unit(), rng.unit());
    if r + s > 1.0 {
        (r, s) = (1.0 - r, 1.0 - s);
    }
    [0, 1].map(|c| t[0][c] + r * (t[1][c] - t[0][c]) + s * (t[2][c] - t[0][c]))
}

/// The padding beyond each side of `b` computed from the texels: over the
/// visible texels q outside the box within `band` texels of its span, the
/// fewest transparent texels between q and the box along the axis
/// (`u32::MAX` when there is none).
pub fn padding_of(sheet: &Sheet, b: [u32; 4], band: i64) -> u32 {
    let [x0, y0, w, h] = b.map(|v| v as i64);
    let (x1, y1) = (x0 + w, y0 + h);
    let mut best = u32::MAX;
    for qy in 0..sheet.h as i64 {
        for qx in 0..sheet.w as i64 {
            if sheet.alpha[(qy * sheet.w as i64 + qx) as usize] == 0 {
                continue;
            }
            let in_x = qx >= x0 - band && qx < x1 + band;
            let in_y = qy >= y0 - band && qy < y1 + band;
            let gap = if in_y && qx < x0 {
                x0 - 1 - qx
            } else if in_y && qx >= x1 {
                qx - x1
            } else if in_x && qy < y0 {
                y0 - 1 - qy
            } else if in_x && qy >= y1 {
                qy - y1
            } else {
                continue;
            };
            best = best.min(gap as u32);
        }
    }
    best
}
