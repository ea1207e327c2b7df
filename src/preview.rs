//! The artist's preview of a cut: the layer over a checkerboard, the opaque
//! and the blended mesh tinted over it, their triangle edges, the outlines
//! of the safe-opaque and must-cover regions, and a caption strip below.
//!
//! How a pixel of the image part is made (preview pixel (px, py), scale
//! `f` = min(1, `max_width` / layer width) preview pixels per texel):
//!
//! 1. the checkerboard: [`CHECKER_LIGHT`] where `(px / CHECKER_PX + py /
//!    CHECKER_PX)` is even, else [`CHECKER_DARK`];
//! 2. the layer's texel under the pixel centre (nearest: texel
//!    `floor((px + 0.5) / f)`, clamped to the layer) composited over it with
//!    straight alpha `a` (the "over" operator of Porter and Duff,
//!    "Compositing Digital Images", 1984), per channel
//!    `base = round((a * layer + (255 - a) * checker) / 255)`;
//! 3. where the pixel centre, in texels, lies in an opaque triangle (edges
//!    included): `round(((255 - TINT_ALPHA) * base + TINT_ALPHA *
//!    OPAQUE_TINT) / 255)`; in a blended triangle the same with
//!    [`BLENDED_TINT`]; elsewhere `base`. Rounding is half up.
//!
//! On top: every triangle edge as a 1-pixel line ([`OPAQUE_EDGE`],
//! [`BLENDED_EDGE`]), then the region outlines as dotted 1-pixel lines: a
//! half-texel cell of [`crate::alpha::Regions`] is on a region's outline
//! when it is inside and a 4-neighbour (or the image edge) is not; it is
//! drawn at its centre's preview pixel when that pixel's `px + py` is even
//! ([`SAFE_OUTLINE`], [`COVER_OUTLINE`]). The image is fully opaque.
//!
//! The colours are our own. The two tints are a blue and an orange: they
//! differ mostly along the blue-yellow axis, which red-green colour
//! blindness (the common kinds) keeps, and in lightness, which grey print
//! keeps (common practice, no source).

use crate::alpha::{AlphaMap, Regions};
use crate::heatmap::draw_text;
use crate::mask::Mask;
use crate::mesh::{LayerMesh, TriangleList};
use crate::settings::CutSettings;
use image::{Rgba, RgbaImage};
use imageproc::drawing::draw_line_segment_mut;

/// Tint of the opaque mesh (a blue).
pub const OPAQUE_TINT: [u8; 3] = [20, 100, 210];
/// Tint of the blended mesh (an orange).
pub const BLENDED_TINT: [u8; 3] = [245, 160, 20];
/// Weight of a tint over the layer, out of 255.
pub const TINT_ALPHA: u8 = 110;
/// Edges of the opaque triangles.
pub const OPAQUE_EDGE: [u8; 3] = [10, 50, 120];
/// Edges of the blended triangles.
pub const BLENDED_EDGE: [u8; 3] = [150, 80, 0];
/// Dotted outline of the safe-opaque region.
pub const SAFE_OUTLINE: [u8; 3] = [255, 255, 255];
/// Dotted outline of the must-cover region.
pub const COVER_OUTLINE: [u8; 3] = [0, 0, 0];
/// Side of a checkerboard square, in preview pixels.
pub const CHECKER_PX: u32 = 8;
/// The checkerboard's light grey (squares whose column + row is even).
pub const CHECKER_LIGHT: [u8; 3] = [232, 232, 232];
/// The checkerboard's dark grey (the other squares).
pub const CHECKER_DARK: [u8; 3] = [180, 180, 180];
/// Background of the caption strip below the image.
pub const CAPTION_BACK: [u8; 3] = [30, 30, 30];
/// Ink of the caption's text.
pub const CAPTION_INK: [u8; 3] = [240, 240, 240];

/// Width of a preview of a `width`-texel layer, at most `max_width`
/// (at least 1): layers are scaled down, never up.
pub fn preview_width(width: u32, max_width: u32) -> u32 {
    width.min(max_width).max(1)
}

/// The preview scale, preview pixels per texel.
pub fn preview_scale(width: u32, max_width: u32) -> f64 {
    preview_width(width, max_width) as f64 / width.max(1) as f64
}

/// The checkerboard colour at preview pixel (px, py).
pub fn checker(px: u32, py: u32) -> [u8; 3] {
    if (px / CHECKER_PX + py / CHECKER_PX) % 2 == 0 {
        CHECKER_LIGHT
    } else {
        CHECKER_DARK
    }
}

/// `round((w * a + (255 - w) * b) / 255)` per channel, half up.
pub fn mix(a: [u8; 3], b: [u8; 3], w: u8) -> [u8; 3] {
    let w = w as u32;
    std::array::from_fn(|k| ((w * a[k] as u32 + (255 - w) * b[k] as u32 + 127) / 255) as u8)
}

/// The caption's items: budget, vertices, opaque capture and excess (share
/// of the must-cover area), in the caption font's glyphs.
pub fn caption_items(mesh: &LayerMesh) -> Vec<String> {
    let s = &mesh.stats;
    let excess = if s.must_cover_area > 0.0 {
        100.0 * s.excess() / s.must_cover_area
    } else {
        0.0
    };
    let mut items = Vec::new();
    if let Some(b) = mesh.budget {
        items.push(format!("B {b}"));
    }
    items.push(format!("V {}", mesh.vertex_count()));
    items.push(format!("C {:.1}%", 100.0 * s.opaque_capture()));
    items.push(format!("E {:.1}%", excess));
    items
}

/// The preview of `mesh` over the layer it was cut from (`map_rgba`, the
/// mesh's size), at most `max_width` pixels wide, with a caption strip
/// below (see the module documentation for every pixel's colour).
///
/// Panics when the mesh's size is not the layer's.
pub fn render_preview(map_rgba: &RgbaImage, mesh: &LayerMesh, max_width: u32) -> RgbaImage {
    let (w, h) = map_rgba.dimensions();
    assert_eq!(mesh.size, [w, h], "the mesh must be cut from this layer");
    let f = preview_scale(w, max_width);
    let pw = preview_width(w, max_width);
    let ph = ((h as f64 * f).round() as u32).max(1);
    let texel = |p: u32, n: u32| (((p as f64 + 0.5) / f).floor() as u32).min(n - 1);

    // 1-3: checkerboard, layer, tints
    let mut rgb: Vec<[u8; 3]> = Vec::with_capacity(pw as usize * ph as usize);
    for py in 0..ph {
        for px in 0..pw {
            let t = map_rgba.get_pixel(texel(px, w), texel(py, h)).0;
            rgb.push(mix([t[0], t[1], t[2]], checker(px, py), t[3]));
        }
    }
    for (list, tint) in [(&mesh.opaque, OPAQUE_TINT), (&mesh.blended, BLENDED_TINT)] {
        fill_triangles(&mut rgb, pw, ph, f, mesh, list, tint);
    }

    let caption = caption_lines(&caption_items(mesh), pw);
    let cap_h = caption_height(caption.len());
    let mut img = RgbaImage::new(pw, ph + cap_h);
    for (i, c) in rgb.iter().enumerate() {
        img.put_pixel(i as u32 % pw, i as u32 / pw, rgba(*c));
    }

    // edges
    for (list, colour) in [(&mesh.opaque, OPAQUE_EDGE), (&mesh.blended, BLENDED_EDGE)] {
        for t in list.indices.chunks_exact(3) {
            for k in 0..3 {
                let (a, b) = (mesh.position(t[k]), mesh.position(t[(k + 1) % 3]));
                let s = |p: [f32; 2]| ((p[0] as f64 * f) as f32, (p[1] as f64 * f) as f32);
                draw_line_segment_mut(&mut img, s(a), s(b), rgba(colour));
            }
        }
    }

    // region outlines
    let map = AlphaMap::from_raw(w, h, map_rgba.pixels().map(|p| p.0[3]).collect());
    let settings = CutSettings {
        budget: mesh.budget.unwrap_or(4),
        filter: mesh.filter,
        alpha: mesh.alpha,
        wrap: mesh.wrap,
    };
    let regions = Regions::analyze(&map, &settings);
    for (mask, colour) in [
        (&regions.cover, COVER_OUTLINE),
        (&regions.safe, SAFE_OUTLINE),
    ] {
        draw_outline(&mut img, mask, f, pw, ph, colour);
    }

    // caption
    for y in ph..ph + cap_h {
        for x in 0..pw {
            img.put_pixel(x, y, rgba(CAPTION_BACK));
        }
    }
    for (n, line) in caption.iter().enumerate() {
        let y = ph + CAPTION_PAD + n as u32 * (5 * CAPTION_PX + CAPTION_PAD);
        draw_text(
            &mut img,
            line,
            CAPTION_PAD,
            y,
            CAPTION_PX,
            rgba(CAPTION_INK),
        );
    }
    img
}

/// Font pixels of the caption, in image pixels, and the padding around lines.
const CAPTION_PX: u32 = 2;
const CAPTION_PAD: u32 = 4;

/// Height of a caption strip of `lines` lines.
pub fn caption_height(lines: usize) -> u32 {
    CAPTION_PAD + lines.max(1) as u32 * (5 * CAPTION_PX + CAPTION_PAD)
}

/// The caption's items laid out in lines that fit `width` pixels (an item
/// too wide alone gets a line of its own), two spaces between items.
fn caption_lines(items: &[String], width: u32) -> Vec<String> {
    let fits = |s: &str| 2 * CAPTION_PAD + s.chars().count() as u32 * 4 * CAPTION_PX <= width;
    let mut lines: Vec<String> = Vec::new();
    for item in items {
        match lines.last_mut() {
            Some(last) if fits(&format!("{last}  {item}")) => {
                *last = format!("{last}  {item}");
            }
            _ => lines.push(item.clone()),
        }
    }
    lines
}

fn rgba(c: [u8; 3]) -> Rgba<u8> {
    Rgba([c[0], c[1], c[2], 255])
}

/// Tints every preview pixel whose centre (in texels) lies in a triangle of `list`.
fn fill_triangles(
    rgb: &mut [[u8; 3]],
    pw: u32,
    ph: u32,
    f: f64,
    mesh: &LayerMesh,
    list: &TriangleList,
    tint: [u8; 3],
) {
    for t in list.indices.chunks_exact(3) {
        let v: [[f64; 2]; 3] = std::array::from_fn(|k| {
            let p = mesh.position(t[k]);
            [p[0] as f64, p[1] as f64]
        });
        let lo = |k: usize| v.iter().map(|p| p[k]).fold(f64::INFINITY, f64::min);
        let hi = |k: usize| v.iter().map(|p| p[k]).fold(f64::NEG_INFINITY, f64::max);
        let range = |lo: f64, hi: f64, n: u32| {
            let a = ((lo * f - 0.5).floor().max(0.0) as u32).min(n);
            let b = ((hi * f - 0.5).ceil().max(0.0) as u32 + 1).min(n);
            a..b
        };
        for py in range(lo(1), hi(1), ph) {
            for px in range(lo(0), hi(0), pw) {
                let q = [(px as f64 + 0.5) / f, (py as f64 + 0.5) / f];
                if inside(&v, q) {
                    let i = py as usize * pw as usize + px as usize;
                    rgb[i] = mix(tint, rgb[i], TINT_ALPHA);
                }
            }
        }
    }
}

/// Whether `q` lies in the triangle `v` (either winding, edges included).
fn inside(v: &[[f64; 2]; 3], q: [f64; 2]) -> bool {
    let side =
        |a: [f64; 2], b: [f64; 2]| (b[0] - a[0]) * (q[1] - a[1]) - (b[1] - a[1]) * (q[0] - a[0]);
    let s = [side(v[0], v[1]), side(v[1], v[2]), side(v[2], v[0])];
    s.iter().all(|&x| x >= 0.0) || s.iter().all(|&x| x <= 0.0)
}

/// Dots the outline cells of a half-texel `mask` (see the module documentation).
fn draw_outline(img: &mut RgbaImage, mask: &Mask, f: f64, pw: u32, ph: u32, colour: [u8; 3]) {
    for y in 0..mask.height {
        for x in 0..mask.width {
            if !mask.get(x, y) {
                continue;
            }
            let (xi, yi) = (x as i64, y as i64);
            let edge = [(-1, 0), (1, 0), (0, -1), (0, 1)].iter().any(|&(dx, dy)| {
                let (nx, ny) = (xi + dx, yi + dy);
                nx < 0
                    || ny < 0
                    || nx >= mask.width as i64
                    || ny >= mask.height as i64
                    || !mask.get(nx as usize, ny as usize)
            });
            if !edge {
                continue;
            }
            let px = ((x as f64 + 0.5) * 0.5 * f) as u32;
            let py = ((y as f64 + 0.5) * 0.5 * f) as u32;
            if px < pw && py < ph && (px + py) % 2 == 0 {
                img.put_pixel(px, py, rgba(colour));
            }
        }
    }
}
