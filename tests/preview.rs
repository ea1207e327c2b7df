//! The preview's pixels inside the meshes, against the formula in
//! `underdraw::preview`'s documentation: the layer composited over the
//! checkerboard with straight alpha ("over", Porter and Duff, "Compositing
//! Digital Images", 1984), then the mesh's tint mixed in at TINT_ALPHA/255,
//! so a pixel inside the opaque mesh is closer to the art's colour than to
//! the tint; a layer wider than tall also shows the plain layer above.

use image::{Rgba, RgbaImage};
use underdraw::alpha::AlphaMap;
use underdraw::cut::cut_layer;
use underdraw::mesh::LayerMesh;
use underdraw::preview::{
    render_preview, BLENDED_TINT, CHECKER_DARK, CHECKER_LIGHT, CHECKER_PX, OPAQUE_TINT, PANEL_GAP,
    TINT_ALPHA,
};
use underdraw::settings::CutSettings;

/// An n x n layer (n a multiple of 8): an opaque square over the middle
/// (n/16 * 5 .. n/16 * 11), a soft rim of alpha 128 around it out to n/8
/// from the edges, transparent beyond; colour varies over the layer.
fn layer(n: u32) -> RgbaImage {
    layer_wide(n, n)
}

/// `layer(n)` in the left of a `w` x n image, transparent to its right.
fn layer_wide(n: u32, w: u32) -> RgbaImage {
    let (o0, o1) = (n / 16 * 5, n / 16 * 11);
    let (r0, r1) = (n / 8, n - n / 8);
    RgbaImage::from_fn(w, n, |x, y| {
        let a = if x >= n {
            0
        } else if (o0..o1).contains(&x) && (o0..o1).contains(&y) {
            255
        } else if (r0..r1).contains(&x) && (r0..r1).contains(&y) {
            128
        } else {
            0
        };
        Rgba([(x * 255 / n) as u8, (y * 255 / n) as u8, 90, a])
    })
}

fn class(a: u8) -> u8 {
    match a {
        255 => 2,
        0 => 0,
        _ => 1,
    }
}

/// Distance from q to the line through a and b.
fn line_distance(a: [f64; 2], b: [f64; 2], q: [f64; 2]) -> f64 {
    let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
    ((dx * (q[1] - a[1]) - dy * (q[0] - a[0])) / (dx * dx + dy * dy).sqrt()).abs()
}

fn inside(v: &[[f64; 2]; 3], q: [f64; 2]) -> bool {
    let side =
        |a: [f64; 2], b: [f64; 2]| (b[0] - a[0]) * (q[1] - a[1]) - (b[1] - a[1]) * (q[0] - a[0]);
    let s = [side(v[0], v[1]), side(v[1], v[2]), side(v[2], v[0])];
    s.iter().all(|&x| x > 0.0) || s.iter().all(|&x| x < 0.0)
}

/// Per triangle of `indices`, the preview pixel deepest inside it (its
/// centre farthest from the triangle's edges), if that depth is more than
/// 2 preview pixels and no texel within 3 preview pixels of it changes
/// class (so no region outline is drawn near it).
fn deep_pixels(img: &RgbaImage, mesh: &LayerMesh, indices: &[u32], f: f64) -> Vec<(u32, u32)> {
    let (w, h) = (mesh.size[0], mesh.size[1]);
    let reach = (3.0 / f).ceil() as i64;
    let uniform = |tx: i64, ty: i64| {
        let c = class(img.get_pixel(tx as u32, ty as u32).0[3]);
        (-reach..=reach).all(|dy| {
            (-reach..=reach).all(|dx| {
                let (x, y) = (tx + dx, ty + dy);
                x >= 0
                    && y >= 0
                    && x < w as i64
                    && y < h as i64
                    && class(img.get_pixel(x as u32, y as u32).0[3]) == c
            })
        })
    };
    let (pw, ph) = ((w as f64 * f) as u32, (h as f64 * f) as u32);
    let mut out = Vec::new();
    for t in indices.chunks_exact(3) {
        let v: [[f64; 2]; 3] = std::array::from_fn(|k| {
            let p = mesh.position(t[k]);
            [p[0] as f64, p[1] as f64]
        });
        let mut best: Option<(f64, u32, u32)> = None;
        for py in 0..ph {
            for px in 0..pw {
                let q = [(px as f64 + 0.5) / f, (py as f64 + 0.5) / f];
                if !inside(&v, q) {
                    continue;
                }
                let depth = (0..3)
                    .map(|k| line_distance(v[k], v[(k + 1) % 3], q) * f)
                    .fold(f64::INFINITY, f64::min);
                let texel = (q[0].floor() as i64, q[1].floor() as i64);
                if depth > 2.0
                    && uniform(texel.0, texel.1)
                    && best.map_or(true, |(d, _, _)| depth > d)
                {
                    best = Some((depth, px, py));
                }
            }
        }
        out.extend(best.map(|(_, x, y)| (x, y)));
    }
    out
}

/// round((w * a + (255 - w) * b) / 255), half up, written out here.
fn over(a: u8, b: u8, w: u8) -> u8 {
    ((w as f64 * a as f64 + (255.0 - w as f64) * b as f64) / 255.0 + 0.5).floor() as u8
}

/// The layer over the checkerboard at preview pixel (px, py).
fn base(img: &RgbaImage, px: u32, py: u32, f: f64) -> [u8; 3] {
    let t = img
        .get_pixel(
            ((px as f64 + 0.5) / f) as u32,
            ((py as f64 + 0.5) / f) as u32,
        )
        .0;
    let k = if (px / CHECKER_PX + py / CHECKER_PX) % 2 == 0 {
        CHECKER_LIGHT
    } else {
        CHECKER_DARK
    };
    std::array::from_fn(|i| over(t[i], k[i], t[3]))
}

fn expected(img: &RgbaImage, px: u32, py: u32, f: f64, tint: [u8; 3]) -> [u8; 4] {
    let c = base(img, px, py, f);
    let c: [u8; 3] = std::array::from_fn(|i| over(tint[i], c[i], TINT_ALPHA));
    [c[0], c[1], c[2], 255]
}

fn distance(a: [u8; 3], b: [u8; 3]) -> f64 {
    (0..3)
        .map(|k| (a[k] as f64 - b[k] as f64).powi(2))
        .sum::<f64>()
        .sqrt()
}

fn check_preview(img: RgbaImage, max_width: u32, budget: usize) {
    let (n, hgt) = img.dimensions();
    let map = AlphaMap::from_raw(n, hgt, img.pixels().map(|p| p.0[3]).collect());
    let out = cut_layer(
        &map,
        "test.png",
        &CutSettings {
            budget,
            ..Default::default()
        },
    );
    assert!(out.notes.is_empty(), "{:?}", out.notes);
    let mesh = &out.mesh;
    let preview = render_preview(&img, mesh, max_width);
    let f = max_width.min(n) as f64 / n as f64;
    let (pw, ph) = ((n as f64 * f) as u32, (hgt as f64 * f) as u32);
    let wide = n > hgt;
    // a layer wider than tall: the plain layer above, its cut below
    let top = if wide { ph + PANEL_GAP } else { 0 };
    assert_eq!(preview.width(), max_width.min(n));
    assert!(
        preview.height() > top + ph,
        "a caption strip below the layer"
    );
    if wide {
        for py in (0..ph).step_by(3) {
            for px in (0..pw).step_by(3) {
                let c = base(&img, px, py, f);
                assert_eq!(
                    preview.get_pixel(px, py).0,
                    [c[0], c[1], c[2], 255],
                    "plain panel at ({px}, {py})"
                );
            }
        }
    }
    for (indices, tint, what) in [
        (&mesh.opaque.indices, OPAQUE_TINT, "opaque"),
        (&mesh.blended.indices, BLENDED_TINT, "blended"),
    ] {
        let pixels = deep_pixels(&img, mesh, indices, f);
        assert!(!pixels.is_empty(), "{n}: no deep {what} pixel to test");
        for (px, py) in pixels {
            let got = preview.get_pixel(px, top + py).0;
            assert_eq!(
                got,
                expected(&img, px, py, f, tint),
                "{n}px layer, {what} pixel ({px}, {py})"
            );
            // the art shows through: nearer the layer's colour than the tint's
            let (art, rgb) = (base(&img, px, py, f), [got[0], got[1], got[2]]);
            assert!(
                distance(rgb, art) < distance(rgb, tint),
                "{what} pixel ({px}, {py}): {rgb:?} hides the art {art:?} under {tint:?}"
            );
        }
    }
    // the caption has ink of its own colour on its background
    let strip: Vec<[u8; 4]> = (top + ph..preview.height())
        .flat_map(|y| (0..preview.width()).map(move |x| (x, y)))
        .map(|(x, y)| preview.get_pixel(x, y).0)
        .collect();
    assert!(strip.iter().any(|c| *c != strip[0]), "caption text drawn");
}

#[test]
fn mesh_pixels_are_the_tints_over_the_layer_at_full_size() {
    check_preview(layer(64), 1024, 16);
}

#[test]
fn mesh_pixels_are_the_tints_over_the_layer_scaled_down() {
    check_preview(layer(128), 64, 16);
}

#[test]
fn a_wide_layer_shows_the_plain_layer_above_its_cut() {
    check_preview(layer_wide(64, 160), 1024, 16);
    check_preview(layer_wide(128, 320), 200, 16);
}

/// `cut --preview` writes the preview beside the mesh file.
#[test]
fn cut_writes_the_preview_beside_the_mesh() {
    let dir = std::env::temp_dir().join(format!("underdraw-preview-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let input = dir.join("soft.png");
    layer(64).save(&input).unwrap();
    let out = dir.join("out");
    let status = std::process::Command::new(env!("CARGO_BIN_EXE_underdraw"))
        .args(["cut", "--preview", "--budget", "16", "--out"])
        .arg(&out)
        .arg(&input)
        .status()
        .unwrap();
    assert!(status.success());
    assert!(out.join("soft.mesh.json").is_file());
    let preview = image::open(out.join("soft.preview.png"))
        .unwrap()
        .to_rgba8();
    assert_eq!(preview.width(), 64);
    assert!(preview.height() > 64);
    std::fs::remove_dir_all(&dir).unwrap();
}
