//! The artist's preview of a cut: the layer over a checkerboard, the opaque
//! and the blended mesh tinted lightly over it so the art stays readable,
//! their triangle edges on top, the outlines of the safe-opaque and
//! must-cover regions, and a caption in words below. A layer wider than
//! tall is shown twice, the plain layer above its cut at the same scale,
//! so a feature of the art and the mesh around it line up vertically
//! (side by side, each would get half the width).
//!
//! How a pixel of a panel is made (panel pixel (px, py), scale
//! `f` = min(1, `max_width` / layer width) preview pixels per texel):
//!
//! 1. the checkerboard: [`CHECKER_LIGHT`] where `(px / CHECKER_PX + py /
//!    CHECKER_PX)` is even, else [`CHECKER_DARK`];
//! 2. the layer's texel under the pixel centre (nearest: texel
//!    `floor((px + 0.5) / f)`, clamped to the layer) composited over it with
//!    straight alpha `a` (the "over" operator of Porter and Duff,
//!    "Compositing Digital Images", 1984), per channel
//!    `base = round((a * layer + (255 - a) * checker) / 255)`; the plain
//!    panel stops here;
//! 3. in the cut panel, where the pixel centre, in texels, lies in an
//!    opaque triangle (edges included): `round(((255 - TINT_ALPHA) * base +
//!    TINT_ALPHA * OPAQUE_TINT) / 255)`, so the art keeps
//!    (255 - [`TINT_ALPHA`]) / 255 of its weight (three quarters); in a
//!    blended triangle the same with [`BLENDED_TINT`]; elsewhere `base`.
//!    Rounding is half up.
//!
//! On top of the cut panel: every triangle edge as a 1-pixel line
//! ([`OPAQUE_EDGE`], [`BLENDED_EDGE`]), then the region outlines as dotted
//! 1-pixel lines: a half-texel cell of [`crate::alpha::Regions`] is on a
//! region's outline when it is inside and a 4-neighbour (or the image edge)
//! is not; it is drawn at its centre's preview pixel when that pixel's
//! `px + py` is even ([`SAFE_OUTLINE`], [`COVER_OUTLINE`]). Panels are
//! [`PANEL_GAP`] pixels apart on [`CAPTION_BACK`]. The image is fully
//! opaque.
//!
//! The caption ([`caption_items`]) is drawn with the embedded font of
//! [`crate::present::glyphs`] at [`caption_px`], so it stays legible when the report
//! shows the preview at half its width.
//!
//! The colours are our own. The two tints are a blue and an orange: they
//! differ mostly along the blue-yellow axis, which red-green colour
//! blindness (the common kinds) keeps, and in lightness, which grey print
//! keeps (common practice, no source).

use crate::alpha::{AlphaMap, Regions};
use crate::mask::Mask;
use crate::mesh::{LayerMesh, TriangleList};
use crate::present::glyphs::{draw_text, line_height, text_width};
use crate::quality::CutNumbers;
use crate::settings::CutSettings;
use image::{Rgba, RgbaImage};
use imageproc::drawing::draw_line_segment_mut;

/// Tint of the opaque mesh (a blue).
pub const OPAQUE_TINT: [u8; 3] = [20, 100, 210];
/// Tint of the blended mesh (an orange).
pub const BLENDED_TINT: [u8; 3] = [245, 160, 20];
/// Weight of a tint over the layer, out of 255 (a quarter: the art keeps
/// three quarters of its weight).
pub const TINT_ALPHA: u8 = 64;
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
/// Pixels between the plain panel and the cut panel.
pub const PANEL_GAP: u32 = 6;

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

/// The caption's items, in words: `budget 64`, `64 vertices`, `opaque
/// capture 97.9%` (or `n/a (no opaque texels)`), `excess 11578 texels
/// (1.1%)` (the share of the must-cover area); the budget only when
/// recorded.
pub fn caption_items(mesh: &LayerMesh) -> Vec<String> {
    let n = CutNumbers::of_mesh(&mesh.stats, mesh.budget, mesh.vertex_count());
    let mut items = Vec::new();
    if let Some(b) = mesh.budget {
        items.push(format!("budget {b}"));
    }
    items.push(format!("{} vertices", mesh.vertex_count()));
    items.push(format!("opaque capture {}", n.capture_text()));
    items.push(format!(
        "excess {:.0} texels ({:.1}%)",
        n.excess,
        100.0 * n.excess_share()
    ));
    items
}

/// The caption's text size for a preview `width` pixels wide: a 42nd of
/// the width, at least 13 and at most 26 pixels (about 12 pixels when the
/// report shows a 1024-pixel preview at half size).
pub fn caption_px(width: u32) -> f32 {
    (width as f32 / 42.0).clamp(13.0, 26.0)
}

/// Whether the preview shows the plain layer above its cut: the layer is
/// wider than tall.
pub fn shows_plain_panel(size: [u32; 2]) -> bool {
    size[0] > size[1]
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

    // 1-2: checkerboard and layer
    let mut plain: Vec<[u8; 3]> = Vec::with_capacity(pw as usize * ph as usize);
    for py in 0..ph {
        for px in 0..pw {
            let t = map_rgba.get_pixel(texel(px, w), texel(py, h)).0;
            plain.push(mix([t[0], t[1], t[2]], checker(px, py), t[3]));
        }
    }
    // 3: tints
    let mut rgb = plain.clone();
    for (list, tint) in [(&mesh.opaque, OPAQUE_TINT), (&mesh.blended, BLENDED_TINT)] {
        fill_triangles(&mut rgb, pw, ph, f, mesh, list, tint);
    }

    let px_size = caption_px(pw);
    let pair = shows_plain_panel(mesh.size);
    let mut items = Vec::new();
    if pair {
        items.push("above: the layer; below: its cut".to_string());
    }
    let caption = caption_lines(&items, &caption_items(mesh), pw, px_size);
    let cut_top = if pair { ph + PANEL_GAP } else { 0 };
    let cap_top = cut_top + ph;
    let cap_h = caption_height(caption.len(), px_size);
    let mut img = RgbaImage::from_pixel(pw, cap_top + cap_h, rgba(CAPTION_BACK));
    for (i, c) in rgb.iter().enumerate() {
        img.put_pixel(i as u32 % pw, cut_top + i as u32 / pw, rgba(*c));
    }
    if pair {
        for (i, c) in plain.iter().enumerate() {
            img.put_pixel(i as u32 % pw, i as u32 / pw, rgba(*c));
        }
    }

    // edges, on top of the tints
    let dy = cut_top as f32;
    for (list, colour) in [(&mesh.opaque, OPAQUE_EDGE), (&mesh.blended, BLENDED_EDGE)] {
        for t in list.indices.chunks_exact(3) {
            for k in 0..3 {
                let (a, b) = (mesh.position(t[k]), mesh.position(t[(k + 1) % 3]));
                let s = |p: [f32; 2]| ((p[0] as f64 * f) as f32, (p[1] as f64 * f) as f32 + dy);
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
        draw_outline(&mut img, mask, f, pw, ph, cut_top, colour);
    }

    // caption
    let line = line_height(px_size);
    for (n, text) in caption.iter().enumerate() {
        let y = cap_top + CAPTION_PAD + n as u32 * (line + CAPTION_LEADING);
        draw_text(
            &mut img,
            text,
            CAPTION_PAD as i32,
            y as i32,
            px_size,
            rgba(CAPTION_INK),
        );
    }
    img
}

/// Padding around the caption's lines, pixels.
const CAPTION_PAD: u32 = 6;
/// Pixels between two caption lines.
const CAPTION_LEADING: u32 = 2;
/// Between two caption items on one line.
const SEPARATOR: &str = " · ";

/// Height of a caption strip of `lines` lines of text size `px`.
pub fn caption_height(lines: usize, px: f32) -> u32 {
    let n = lines.max(1) as u32;
    2 * CAPTION_PAD + n * line_height(px) + (n - 1) * CAPTION_LEADING
}

/// The caption laid out in lines that fit `width` pixels at text size
/// `px`: each of `first` on a line of its own, then `items` joined by
/// " · " (an item too wide alone gets a line of its own).
fn caption_lines(first: &[String], items: &[String], width: u32, px: f32) -> Vec<String> {
    let fits = |s: &str| 2 * CAPTION_PAD + text_width(s, px) <= width;
    let mut lines: Vec<String> = first.to_vec();
    let mut open = false;
    for item in items {
        match lines.last_mut() {
            Some(last) if open && fits(&format!("{last}{SEPARATOR}{item}")) => {
                *last = format!("{last}{SEPARATOR}{item}");
            }
            _ => lines.push(item.clone()),
        }
        open = true;
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

/// Dots the outline cells of a half-texel `mask` on the panel starting at
/// row `top` (see the module documentation).
fn draw_outline(
    img: &mut RgbaImage,
    mask: &Mask,
    f: f64,
    pw: u32,
    ph: u32,
    top: u32,
    colour: [u8; 3],
) {
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
                img.put_pixel(px, top + py, rgba(colour));
            }
        }
    }
}
