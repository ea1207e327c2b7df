//! Sprite sheets cut against the texture that ships: a KTX 2.0 sheet cut
//! alone (`cut SHEET.ktx2 --regions FILE`) and a PNG sheet cut with
//! `--texture SHEET.ktx2`, with `--mip-levels 1`. The texture's level 1 is
//! its own (here: one sprite made translucent at level 1, as a
//! compressor's filter may leave a thin sprite), not a box filter of level
//! 0, so a cut from level 0 alone puts opaque triangles where level 1
//! samples translucent.
//!
//! Outside reference: a sampler written here from the OpenGL ES 3.0 LINEAR
//! rule (specification section 3.8.10, from memory; `sheet_support`'s
//! `linear_opaque` at each level, its coordinates in that level's texels)
//! at random points of every region's opaque triangles, on every level of
//! the KTX 2.0 file written byte by byte per the Khronos KTX 2.0
//! specification (`common::ktx2`).

mod common;
mod sheet_support;
use common::ktx2::rgba8_ktx2;
use common::triangles::{triangles, Tri};
use common::{Rng, TempDir};
use sheet_support::{
    check, cut_regions, linear_opaque, load, pack, point_in, regions_file, run, save, status, text,
    Sheet,
};
use std::path::Path;
use underdraw::mesh::LayerMesh;

/// A 64 x 32 sheet of three sprites (2 texels of padding), its level 1
/// (32 x 16: the 2x2 box average, except that sprite 1's texels are at
/// most alpha 128) and the sprites' boxes.
fn sheet_and_levels() -> (Sheet, Sheet, Vec<[u32; 4]>) {
    let mut s = pack(&[(1, 20, 20), (0, 16, 14), (2, 18, 18)], 2, 64);
    assert!(s.h <= 32);
    s.alpha.resize(64 * 32, 0);
    s.h = 32;
    let mut a1 = Vec::with_capacity(32 * 16);
    for y in 0..16u32 {
        for x in 0..32u32 {
            let at = |dx: u32, dy: u32| s.alpha[((2 * y + dy) * 64 + 2 * x + dx) as usize] as u32;
            a1.push(((at(0, 0) + at(1, 0) + at(0, 1) + at(1, 1) + 2) / 4) as u8);
        }
    }
    let b = s.boxes[1];
    for y in b[1] / 2..(b[1] + b[3]) / 2 {
        for x in b[0] / 2..(b[0] + b[2]) / 2 {
            let t = &mut a1[(y * 32 + x) as usize];
            *t = (*t).min(128);
        }
    }
    let l1 = Sheet {
        w: 32,
        h: 16,
        alpha: a1,
        boxes: Vec::new(),
    };
    let boxes = s.boxes.clone();
    (s, l1, boxes)
}

fn write_inputs(dir: &Path) -> (Sheet, Sheet, Vec<[u32; 4]>) {
    let (s0, s1, boxes) = sheet_and_levels();
    save(&s0, &dir.join("sheet.png"));
    let ktx = rgba8_ktx2(&[(64, 32, s0.alpha.clone()), (32, 16, s1.alpha.clone())]);
    std::fs::write(dir.join("sheet.ktx2"), ktx).unwrap();
    let e: Vec<(String, String)> = boxes
        .iter()
        .enumerate()
        .map(|(k, b)| (format!("s{k}"), format!("\"rect\": {b:?}")))
        .collect();
    std::fs::write(dir.join("sheet.regions.json"), regions_file(&e)).unwrap();
    (s0, s1, boxes)
}

/// The opaque triangles of a region mesh in sheet texels.
fn opaque_in_sheet(m: &LayerMesh) -> Vec<Tri> {
    let [x, y, _, _] = m.region.as_ref().expect("a region key").rect;
    triangles(m, &m.opaque.indices)
        .into_iter()
        .map(|t| t.map(|p| [p[0] + x as f64, p[1] + y as f64]))
        .collect()
}

/// Random points of the opaque triangles whose LINEAR sample at `level`
/// (`scale` level-0 texels a level texel) is not fully opaque.
fn translucent_samples(m: &LayerMesh, level: &Sheet, scale: f64, rng: &mut Rng) -> usize {
    let mut bad = 0;
    for t in opaque_in_sheet(m) {
        for _ in 0..400 {
            let p = point_in(&t, rng);
            if !linear_opaque(level, [p[0] / scale, p[1] / scale]) {
                bad += 1;
            }
        }
    }
    bad
}

#[test]
fn a_ktx2_sheet_is_cut_on_its_own_mip_levels() {
    let dir = TempDir::new("sheet-ktx2");
    let (s0, s1, _) = write_inputs(&dir.0);
    let (out, png_out) = (dir.path("out"), dir.path("png-out"));
    let regions = dir.path("sheet.regions.json");
    let cut = |sheet: &Path, out: &Path, extra: &[&str], what: &str| {
        let a = [&["--mip-levels", "1", "--budget", "24"], extra].concat();
        cut_regions(sheet, &regions, out, &a, 0, what)
    };
    let ktx = dir.path("sheet.ktx2");
    let o = cut(&ktx, &out, &[], "KTX 2.0 sheet");
    assert!(
        text(&o.stdout).contains("guarantee computed for RGBA8"),
        "{}",
        text(&o.stdout)
    );
    let mut rng = Rng(15);
    let levels = [(&s0, 1.0), (&s1, 2.0)];
    for k in 0..3 {
        let m = load(&out.join(format!("sheet/s{k}.mesh.json")));
        for (l, (level, scale)) in levels.iter().enumerate() {
            assert_eq!(
                translucent_samples(&m, level, *scale, &mut rng),
                0,
                "region s{k}: its opaque mesh samples translucent at level {l}"
            );
        }
        // the checker takes the texture sheet too
        let mesh = out.join(format!("sheet/s{k}.mesh.json"));
        check(&mesh, &ktx, &[], 0, "check on the KTX 2.0 sheet");
    }
    // the PNG of the same level 0 cut alone (box-filtered level 1) puts
    // opaque triangles where the shipped level 1 is translucent: what the
    // texture's own levels prevent
    let png = dir.path("sheet.png");
    let o = cut(&png, &png_out, &[], "PNG sheet");
    let m = load(&png_out.join("sheet/s1.mesh.json"));
    assert!(
        translucent_samples(&m, &s1, 2.0, &mut rng) > 0,
        "{} opaque triangles, capture {}: {}",
        m.opaque.indices.len() / 3,
        m.stats.opaque_capture(),
        text(&o.stdout)
    );
    let mesh = png_out.join("sheet/s1.mesh.json");
    check(
        &mesh,
        &png,
        &["--texture", ktx.to_str().unwrap()],
        1,
        "the PNG's cut checked against the texture",
    );

    // the PNG cut with --texture holds on both
    let tex_out = dir.path("tex-out");
    let texture = ["--texture", ktx.to_str().unwrap()];
    cut(&png, &tex_out, &texture, "PNG sheet with --texture");
    for k in 0..3 {
        let mesh = tex_out.join(format!("sheet/s{k}.mesh.json"));
        let m = load(&mesh);
        for (l, (level, scale)) in levels.iter().enumerate() {
            assert_eq!(
                translucent_samples(&m, level, *scale, &mut rng),
                0,
                "--texture region s{k}, level {l}"
            );
        }
        check(
            &mesh,
            &png,
            &["--texture", ktx.to_str().unwrap()],
            0,
            "check with --texture",
        );
        check(&mesh, &png, &[], 0, "check on the PNG alone");
    }
    // a new texture cuts the sheet again; the same one skips it
    let o = cut(&png, &tex_out, &texture, "the same texture");
    assert!(
        text(&o.stdout).contains("(0 cut, 3 unchanged"),
        "{}",
        text(&o.stdout)
    );
    let mut bytes = std::fs::read(&ktx).unwrap();
    let n = bytes.len();
    bytes[n - 1] ^= 0x10; // a texel's byte: a new hash
    std::fs::write(&ktx, &bytes).unwrap();
    let o = cut(&png, &tex_out, &texture, "changed texture");
    assert!(
        text(&o.stdout).contains("(3 cut, 0 unchanged"),
        "{}",
        text(&o.stdout)
    );
}

#[test]
fn a_texture_that_cannot_serve_a_sheet_is_refused_with_what_to_do() {
    let dir = TempDir::new("sheet-ktx2-bad");
    write_inputs(&dir.0);
    let regions = dir.path("sheet.regions.json");
    let (png, ktx) = (dir.path("sheet.png"), dir.path("sheet.ktx2"));
    let out = dir.path("out");
    let base = |sheet: &Path, extra: &[&str]| {
        let mut a = vec![
            "cut".to_string(),
            sheet.display().to_string(),
            "--regions".into(),
            regions.display().to_string(),
            "--out".into(),
            out.display().to_string(),
        ];
        a.extend(extra.iter().map(|s| s.to_string()));
        let a: Vec<&str> = a.iter().map(String::as_str).collect();
        run(&a)
    };
    // more mip levels than the file holds
    let o = base(&ktx, &["--mip-levels", "3"]);
    status(&o, 2, "mip levels not held");
    let e = text(&o.stderr);
    assert!(e.contains("sheet.ktx2") && e.contains("hint"), "{e}");
    // a texture of another size than the PNG sheet
    let small = dir.path("small.ktx2");
    std::fs::write(&small, rgba8_ktx2(&[(32, 32, vec![255; 32 * 32])])).unwrap();
    let o = base(&png, &["--texture", small.to_str().unwrap()]);
    status(&o, 2, "texture of another size");
    let e = text(&o.stderr);
    assert!(e.contains("small.ktx2") && e.contains("32 x 32"), "{e}");
    // a texture sheet has no PNG for a glTF image or a preview
    let o = base(&ktx, &["--format", "gltf"]);
    status(&o, 2, "glTF of a texture sheet");
    assert!(
        text(&o.stderr).contains("PNG or JPEG"),
        "{}",
        text(&o.stderr)
    );
    let o = base(&ktx, &["--preview"]);
    status(&o, 2, "preview of a texture sheet");
    assert!(text(&o.stderr).contains("--texture"), "{}", text(&o.stderr));
}

/// The padding warnings of a `--texture` cut count the padding in what
/// ships: a texture whose level 0 leaves a faint alpha (3) in the PNG's
/// transparent padding beside a region, as block compression can, puts a
/// neighbour's texels within bilinear's half-texel reach, so that side
/// warns with the texture's padding (0) beside the PNG's (counted up to
/// the reach: at least 1); the PNG cut alone does not warn. Reference: the padding counted here from the texels
/// (`sheet_support::padding_of`, for the side beside the faint column),
/// and the reach as the trade states it (half a texel for bilinear at level
/// 0; common practice, no source).
#[test]
fn padding_warnings_count_what_the_texture_ships() {
    let dir = TempDir::new("sheet-ktx2-padding");
    let (s0, _, boxes) = write_inputs(&dir.0);
    let [x, y, w, h] = boxes[0];
    // the shipped level 0: the sheet's, with the column right of s0
    // (padding, transparent in the PNG) faintly visible along s0's rows
    let mut shipped = s0.alpha.clone();
    for yy in y..y + h {
        let t = &mut shipped[(yy * s0.w + x + w) as usize];
        assert_eq!(*t, 0, "the PNG's padding is transparent");
        *t = 3;
    }
    let tex = Sheet {
        w: s0.w,
        h: s0.h,
        alpha: shipped.clone(),
        boxes: Vec::new(),
    };
    // s0's right side: 2 lines in the PNG, 0 in the texture (the faint
    // column is beside it), counted from the texels
    let right = |sheet: &Sheet| {
        let (x1, band) = (x + w, 1i64);
        let strip = Sheet {
            w: sheet.w,
            h: sheet.h,
            alpha: (0..sheet.h)
                .flat_map(|yy| (0..sheet.w).map(move |xx| (xx, yy)))
                .map(|(xx, yy)| match xx >= x1 {
                    true => sheet.alpha[(yy * sheet.w + xx) as usize],
                    false => 0,
                })
                .collect(),
            boxes: Vec::new(),
        };
        sheet_support::padding_of(&strip, boxes[0], band)
    };
    assert_eq!((right(&s0), right(&tex)), (2, 0));
    let ktx = dir.path("faint.ktx2");
    std::fs::write(&ktx, rgba8_ktx2(&[(s0.w, s0.h, shipped)])).unwrap();
    let (png, regions) = (dir.path("sheet.png"), dir.path("sheet.regions.json"));
    let cut = |out: &str, extra: &[&str]| {
        let a = [&["--json", "--budget", "24"], extra].concat();
        let what = format!("cut {extra:?}");
        let o = cut_regions(&png, &regions, &dir.path(out), &a, 0, &what);
        let rows: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        rows.as_array()
            .unwrap()
            .iter()
            .map(|r| {
                let w: Vec<String> = r["warnings"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|s| s.as_str().unwrap().to_string())
                    .filter(|s| s.contains("padding"))
                    .collect();
                (r["region"].as_str().unwrap().to_string(), w)
            })
            .collect::<Vec<_>>()
    };
    // the PNG alone: 2 texels everywhere, over the 0.5 bilinear reaches
    for (name, w) in cut("png", &[]) {
        assert!(w.is_empty(), "{name}: {w:?}");
    }
    // with the texture: s0's right side is short, in the texture
    let with = cut("tex", &["--texture", ktx.to_str().unwrap()]);
    for (name, w) in with {
        if name == "s0" {
            assert_eq!(w.len(), 1, "{w:?}");
            assert!(
                w[0].contains(
                    "padding of 0 texel(s) on the right in the shipped texture's level 0 (at least 1 in the PNG)"
                ),
                "{w:?}"
            );
        } else {
            // s1 lies beyond s0's faint column: 1 line of the texture's
            // padding is left on its left side, over the reach
            assert!(w.is_empty(), "{name}: {w:?}");
        }
    }
}
