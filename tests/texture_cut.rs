//! Cutting and checking on the texels a shipped texture decodes to.
//!
//! * KTX 2.0 files written here byte by byte (`common::ktx2`, per the
//!   Khronos KTX 2.0 specification) carry mip chains made with a tent
//!   (1-3-3-1) filter, wider than the block rules' 2x2 box; the cut of the
//!   file holds per level on the decoded texels, as the independent checker
//!   measures it and as a sampler written here from the OpenGL ES 3.x LINEAR
//!   and NEAREST rules (specification section 3.8.10, from memory) finds at
//!   random points: inside opaque triangles every texel read with non-zero
//!   weight is opaque, outside both meshes every one is invisible.
//! * Zstandard supercompression: the same levels packed by Debian's `zstd`
//!   tool (RFC 8878's reference implementation) decode the same.
//! * A demo layer compressed by Debian's `astcenc` (the ASTC reference
//!   codec): its PNG cut at a tight budget breaks on the ASTC texels (found
//!   by `check --texture`), its `cut --texture` holds on both.
//!
//! Tests needing `astcenc` or `zstd` print a message and pass without them,
//! except under CI (env CI=true), where they fail.

use std::path::{Path, PathBuf};
use std::process::Command;
use underdraw::alpha::{AlphaMap, Sampled};
use underdraw::check::{check_mesh_per_level, check_mesh_sampled};
use underdraw::cut::cut_sampled;
use underdraw::io::{decode_texture, ImageLimits};
use underdraw::mesh::LayerMesh;
use underdraw::settings::{AlphaThresholds, CutSettings, Filter, FilterMode, Wrap};

mod common;
use common::ktx2::{dfd_for_block, ktx2_file, rgba8_ktx2, Level};
use common::triangles::{inset, triangles, Tri};
use common::{Rng, TempDir};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

fn have(tool: &str, probe: &str) -> bool {
    let ok = Command::new(tool).arg(probe).output().is_ok();
    if !ok {
        assert!(
            std::env::var("CI").as_deref() != Ok("true"),
            "{tool} (Debian package {tool}) is needed under CI: .ci/run installs it"
        );
        eprintln!("skipped: {tool} is not installed");
    }
    ok
}

// ------------------------------------------------------------- layers and chains

/// A layer of soft discs and hard rectangles with holes.
fn shapes(w: u32, h: u32, rng: &mut Rng) -> AlphaMap {
    let mut a = vec![0u8; (w * h) as usize];
    for _ in 0..4 {
        let (cx, cy) = (rng.range(0.0, w as f64), rng.range(0.0, h as f64));
        let r = rng.range(3.0, w.min(h) as f64 / 2.0);
        let soft = rng.range(0.5, 3.0);
        for y in 0..h {
            for x in 0..w {
                let d = ((x as f64 + 0.5 - cx).powi(2) + (y as f64 + 0.5 - cy).powi(2)).sqrt();
                let v = ((r - d) / soft).clamp(0.0, 1.0);
                let t = &mut a[(y * w + x) as usize];
                *t = (*t).max((v * 255.0).round() as u8);
            }
        }
    }
    for _ in 0..3 {
        let (x0, y0) = (rng.below(w as u64) as u32, rng.below(h as u64) as u32);
        let (x1, y1) = (
            (x0 + 2 + rng.below(w as u64 / 2) as u32).min(w),
            (y0 + 2 + rng.below(h as u64 / 2) as u32).min(h),
        );
        let hole = rng.below(2) == 0;
        for y in y0..y1 {
            for x in x0..x1 {
                a[(y * w + x) as usize] = if hole && (x + y) % 5 == 0 { 0 } else { 255 };
            }
        }
    }
    AlphaMap::from_raw(w, h, a)
}

/// The next mip level by a separable tent filter (weights 1, 3, 3, 1 over
/// the four texels around each pair, edges clamped), rounded.
fn tent_down(m: &AlphaMap) -> AlphaMap {
    let (w, h) = ((m.width / 2).max(1), (m.height / 2).max(1));
    let get = |x: i64, y: i64| {
        m.get(
            x.clamp(0, m.width as i64 - 1) as u32,
            y.clamp(0, m.height as i64 - 1) as u32,
        ) as u32
    };
    let k = [1u32, 3, 3, 1];
    let mut a = Vec::with_capacity((w * h) as usize);
    for y in 0..h as i64 {
        for x in 0..w as i64 {
            let (sx, sy) = (
                if m.width > 1 { 2 } else { 1 },
                if m.height > 1 { 2 } else { 1 },
            );
            let mut sum = 0;
            let mut wsum = 0;
            for (j, kj) in k.iter().enumerate() {
                for (i, ki) in k.iter().enumerate() {
                    sum += ki * kj * get(sx * x + i as i64 - 1, sy * y + j as i64 - 1);
                    wsum += ki * kj;
                }
            }
            a.push(((sum + wsum / 2) / wsum) as u8);
        }
    }
    AlphaMap::from_raw(w, h, a)
}

fn chain(level0: AlphaMap, levels: usize) -> Vec<AlphaMap> {
    let mut v = vec![level0];
    while v.len() < levels {
        let next = tent_down(v.last().unwrap());
        v.push(next);
    }
    v
}

fn as_rgba8_file(levels: &[AlphaMap]) -> Vec<u8> {
    rgba8_ktx2(
        &levels
            .iter()
            .map(|m| (m.width, m.height, m.alpha.clone()))
            .collect::<Vec<_>>(),
    )
}

// ------------------------------------------------------------- the sampler

/// The level texels a sample at `p` (level-0 texel units) reads with
/// non-zero weight on one axis of `n` level texels, each `s` level-0
/// texels wide.
fn taps(p: f64, s: f64, n: i64, mode: FilterMode, repeat: bool) -> Vec<i64> {
    let fix = |i: i64| {
        if repeat {
            i.rem_euclid(n)
        } else {
            i.clamp(0, n - 1)
        }
    };
    match mode {
        FilterMode::Nearest => vec![fix((p / s).floor() as i64)],
        FilterMode::Bilinear => {
            let u = p / s - 0.5;
            let i0 = u.floor();
            if u - i0 == 0.0 {
                vec![fix(i0 as i64)]
            } else {
                vec![fix(i0 as i64), fix(i0 as i64 + 1)]
            }
        }
    }
}

/// Samples every level at random points of the mesh and outside it.
fn sample(m: &LayerMesh, levels: &[AlphaMap], rng: &mut Rng) -> (usize, usize) {
    let (w, h) = (levels[0].width as f64, levels[0].height as f64);
    let opaque = triangles(m, &m.opaque.indices);
    let all: Vec<Tri> = opaque
        .iter()
        .copied()
        .chain(triangles(m, &m.blended.indices))
        .collect();
    let read = |p: [f64; 2], level: &AlphaMap| -> Vec<u8> {
        let (sx, sy) = (w / level.width as f64, h / level.height as f64);
        let xs = taps(p[0], sx, level.width as i64, m.filter.mode, m.wrap.x());
        let ys = taps(p[1], sy, level.height as i64, m.filter.mode, m.wrap.y());
        ys.iter()
            .flat_map(|&y| xs.iter().map(move |&x| level.get(x as u32, y as u32)))
            .collect()
    };
    let (mut inside, mut outside) = (0, 0);
    for _ in 0..20_000 {
        let p = [rng.range(0.0, w), rng.range(0.0, h)];
        let in_opaque = opaque.iter().any(|t| inset(t, p) > 1e-6);
        let near_edge = all.iter().any(|t| inset(t, p).abs() <= 1e-6);
        let in_any = all.iter().any(|t| inset(t, p) > 1e-6);
        if near_edge {
            continue;
        }
        for (l, level) in levels.iter().enumerate() {
            let texels = read(p, level);
            if in_opaque {
                inside += 1;
                assert!(
                    texels.iter().all(|&a| a >= m.alpha.opaque_min),
                    "level {l}: opaque mesh at {p:?} samples {texels:?}"
                );
            } else if !in_any {
                outside += 1;
                assert!(
                    texels.iter().all(|&a| a < m.alpha.visible_min),
                    "level {l}: uncovered point {p:?} samples {texels:?}"
                );
            }
        }
    }
    (inside, outside)
}

fn settings(budget: usize, mode: FilterMode, mip_levels: u32, wrap: Wrap) -> CutSettings {
    CutSettings {
        budget,
        filter: Filter { mode, mip_levels },
        alpha: AlphaThresholds::default(),
        wrap,
    }
}

// ------------------------------------------------------------- tests

#[test]
fn cuts_of_ktx2_mip_chains_hold_per_level_on_the_decoded_texels() {
    let mut rng = Rng(16);
    let (mut inside, mut outside) = (0, 0);
    for case in 0..12 {
        let (w, h) = [(64, 64), (96, 40), (48, 80), (128, 32)][case % 4];
        let levels = chain(shapes(w, h, &mut rng), 4);
        let file = as_rgba8_file(&levels);
        let t = decode_texture(Path::new("chain.ktx2"), &file, &ImageLimits::default()).unwrap();
        assert_eq!(t.format.codec, "RGBA8");
        assert_eq!(t.levels, levels, "the file's levels decode as written");
        let mode = [FilterMode::Bilinear, FilterMode::Nearest][case % 2];
        let wrap = [Wrap::None, Wrap::X, Wrap::Xy][case % 3];
        let mip = (case % 4) as u32;
        let s = settings([16, 64, 256][case % 3], mode, mip, wrap);
        let used = t.levels_for(mip).unwrap();
        let sampled = Sampled {
            source: None,
            shipped: used,
        };
        let out = cut_sampled(sampled, "chain.ktx2", &s);
        assert!(
            out.notes.iter().all(|n| !n.contains("left out")),
            "{:?}",
            out.notes
        );
        for (l, r) in check_mesh_per_level(&out.mesh, used)
            .unwrap()
            .iter()
            .enumerate()
        {
            assert!(r.holds(), "case {case} level {l}: {:?}", r.violations());
        }
        let (i, o) = sample(&out.mesh, used, &mut rng);
        inside += i;
        outside += o;
    }
    // the sampler did look at both sides
    assert!(inside > 10_000 && outside > 10_000, "{inside} {outside}");
}

/// A wider filter spreads transparency further than block averaging: the
/// PNG's cut for its block levels breaks on the tent-filtered levels.
#[test]
fn a_png_cut_for_block_levels_can_break_on_a_shipped_chain() {
    let mut rng = Rng(7);
    let mut broke = 0;
    for _ in 0..8 {
        let levels = chain(shapes(64, 64, &mut rng), 3);
        let s = settings(256, FilterMode::Bilinear, 2, Wrap::None);
        let png_cut = underdraw::cut::cut_layer(&levels[0], "l.png", &s);
        let r = check_mesh_sampled(&png_cut.mesh, None, &levels).unwrap();
        if !r.holds() {
            broke += 1;
        }
        // cut against both, it holds for both
        let both = cut_sampled(
            Sampled {
                source: Some(&levels[0]),
                shipped: &levels,
            },
            "l.png",
            &s,
        );
        assert!(check_mesh_sampled(&both.mesh, Some(&levels[0]), &[])
            .unwrap()
            .holds());
        assert!(check_mesh_sampled(&both.mesh, None, &levels)
            .unwrap()
            .holds());
    }
    assert!(broke > 0, "no PNG cut broke on the tent-filtered levels");
}

#[test]
fn zstandard_supercompressed_levels_decode_like_plain_ones() {
    if !have("zstd", "--version") {
        return;
    }
    let dir = TempDir::new("ktx2_zstd");
    let mut rng = Rng(3);
    let levels = chain(shapes(40, 24, &mut rng), 3);
    let packed: Vec<Level> = levels
        .iter()
        .enumerate()
        .map(|(l, m)| {
            let raw: Vec<u8> = m.alpha.iter().flat_map(|&a| [255, 255, 255, a]).collect();
            let p = dir.path(&format!("level{l}"));
            std::fs::write(&p, &raw).unwrap();
            let out = Command::new("zstd")
                .args(["-q", "-f", "-19", "-o"])
                .arg(dir.path(&format!("level{l}.zst")))
                .arg(&p)
                .output()
                .unwrap();
            assert!(out.status.success());
            Level {
                stored: std::fs::read(dir.path(&format!("level{l}.zst"))).unwrap(),
                unpacked_len: raw.len() as u64,
            }
        })
        .collect();
    // supercompressionScheme 2 = Zstandard (KTX 2.0 specification, section 3.5)
    let file = ktx2_file(37, (40, 24), &packed, 2, dfd_for_block(37, 1, 1));
    let t = decode_texture(Path::new("z.ktx2"), &file, &ImageLimits::default()).unwrap();
    assert_eq!(t.format.supercompression, Some("Zstandard"));
    assert_eq!(t.levels, levels);
}

// ------------------------------------------------------------- the demo, through the binary

fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_underdraw"))
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn a_png_cut_breaks_on_its_astc_texture_and_the_texture_cut_holds_on_both() {
    if !have("astcenc", "-help") {
        return;
    }
    let dir = TempDir::new("astc_demo");
    // a crop of the demo's pier: planks, posts and soft lamp glow
    let img = image::open(root().join("demo-layers/pier.png"))
        .unwrap()
        .to_rgba8();
    let crop = image::imageops::crop_imm(&img, 700, 200, 360, 240).to_image();
    let png = dir.path("pier.png");
    crop.save(&png).unwrap();
    let astc = dir.path("pier.astc");
    let s = |p: &Path| p.to_str().unwrap().to_string();
    let out = Command::new("astcenc")
        .args(["-cl", &s(&png), &s(&astc), "8x8", "-fast", "-silent"])
        .output()
        .unwrap();
    assert!(out.status.success());
    let meshes = dir.path("out");
    let (code, _, err) = run(&["cut", &s(&png), "--out", &s(&meshes), "--budget", "256"]);
    assert_eq!(code, 0, "{err}");
    let mesh = meshes.join("pier.mesh.json");
    // the PNG cut holds on the PNG ...
    assert_eq!(run(&["check", &s(&mesh), &s(&png)]).0, 0);
    // ... and breaks on what ships
    let (code, stdout, _) = run(&["check", &s(&mesh), "--texture", &s(&astc)]);
    assert_eq!(code, 1, "{stdout}");
    assert!(
        stdout.contains("ASTC 8x8") && stdout.contains("level 0:"),
        "{stdout}"
    );
    // cut against both: holds on both
    let both = dir.path("both");
    let (code, stdout, err) = run(&[
        "cut",
        &s(&png),
        "--texture",
        &s(&astc),
        "--out",
        &s(&both),
        "--budget",
        "256",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(
        stdout.contains("guarantee computed for ASTC 8x8"),
        "{stdout}"
    );
    let mesh = both.join("pier.mesh.json");
    assert_eq!(run(&["check", &s(&mesh), &s(&png)]).0, 0);
    let (code, stdout, _) = run(&["check", &s(&mesh), "--texture", &s(&astc)]);
    assert_eq!(code, 0, "{stdout}");
}

/// The texture is an input of the layer: a rerun with the same files skips
/// it, a changed texture cuts it again (the manifest records its hash).
#[test]
fn a_changed_texture_cuts_the_layer_again() {
    let dir = TempDir::new("texture_rerun");
    let corpus = root().join("tests/corpus");
    let (png, ktx) = (dir.path("layer.png"), dir.path("layer.ktx2"));
    std::fs::copy(corpus.join("gray-alpha.png"), &png).unwrap();
    std::fs::copy(corpus.join("rgba8-mips.ktx2"), &ktx).unwrap();
    let s = |p: &Path| p.to_str().unwrap().to_string();
    let out = s(&dir.path("out"));
    let status = || {
        let (code, stdout, err) = run(&[
            "--json",
            "cut",
            &s(&png),
            "--texture",
            &s(&ktx),
            "--out",
            &out,
            "--mip-levels",
            "3",
        ]);
        assert_eq!(code, 0, "{err}");
        let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
        v[0]["status"].as_str().unwrap().to_string()
    };
    assert_eq!(status(), "cut");
    assert_eq!(status(), "unchanged");
    // level 3 (1 x 1, the smallest level) given another alpha
    let mut bytes = std::fs::read(&ktx).unwrap();
    let at = u64::from_le_bytes(bytes[80 + 3 * 24..80 + 3 * 24 + 8].try_into().unwrap()) as usize;
    bytes[at + 3] ^= 0xFF;
    std::fs::write(&ktx, bytes).unwrap();
    assert_eq!(status(), "cut");
}

/// A KTX 2.0 ASTC 6x6 file with a tent-filtered mip chain, each level
/// compressed by the reference codec (`astcenc -cl`) and packed here per the
/// KTX 2.0 specification (VK_FORMAT_ASTC_6x6_UNORM_BLOCK = 165): the cut of
/// the file at mip levels 0 to 2 holds on every level's decoded texels, by
/// the checker and by the sampler.
#[test]
fn an_astc_mip_chain_in_ktx2_cuts_and_holds_per_level() {
    if !have("astcenc", "-help") {
        return;
    }
    let dir = TempDir::new("astc_chain");
    let mut rng = Rng(165);
    let levels = chain(shapes(96, 64, &mut rng), 3);
    let s = |p: &Path| p.to_str().unwrap().to_string();
    let stored: Vec<Level> = levels
        .iter()
        .enumerate()
        .map(|(l, m)| {
            let png = dir.path(&format!("level{l}.png"));
            let rgba: Vec<u8> = m.alpha.iter().flat_map(|&a| [200, 180, 160, a]).collect();
            image::RgbaImage::from_raw(m.width, m.height, rgba)
                .unwrap()
                .save(&png)
                .unwrap();
            let astc = dir.path(&format!("level{l}.astc"));
            let out = Command::new("astcenc")
                .args(["-cl", &s(&png), &s(&astc), "6x6", "-medium", "-silent"])
                .output()
                .unwrap();
            assert!(out.status.success());
            Level::raw(std::fs::read(&astc).unwrap()[16..].to_vec())
        })
        .collect();
    let file = ktx2_file(165, (96, 64), &stored, 0, dfd_for_block(165, 6, 6));
    let t = decode_texture(Path::new("chain.ktx2"), &file, &ImageLimits::default()).unwrap();
    assert_eq!(t.levels.len(), 3);
    assert_eq!(t.format.codec, "ASTC 6x6");
    let used = t.levels_for(2).unwrap();
    let mut inside_outside = (0, 0);
    for mode in [FilterMode::Bilinear, FilterMode::Nearest] {
        let st = settings(128, mode, 2, Wrap::None);
        let out = cut_sampled(
            Sampled {
                source: None,
                shipped: used,
            },
            "chain.ktx2",
            &st,
        );
        assert!(out.notes.iter().all(|n| !n.contains("left out")));
        for (l, r) in check_mesh_per_level(&out.mesh, used)
            .unwrap()
            .iter()
            .enumerate()
        {
            assert!(r.holds(), "level {l}: {:?}", r.violations());
        }
        let (i, o) = sample(&out.mesh, used, &mut rng);
        inside_outside.0 += i;
        inside_outside.1 += o;
    }
    assert!(
        inside_outside.0 > 1000 && inside_outside.1 > 1000,
        "{inside_outside:?}"
    );
}

/// `sweep --texture` cuts as `cut --texture` does (the same opaque and
/// covering areas at a budget), and refuses levels the file does not hold.
#[test]
fn sweep_takes_the_texture_like_cut() {
    let dir = TempDir::new("texture_sweep");
    let corpus = root().join("tests/corpus");
    let s = |p: &Path| p.to_str().unwrap().to_string();
    let (png, ktx) = (
        corpus.join("gray-alpha.png"),
        corpus.join("rgba8-mips.ktx2"),
    );
    let out = s(&dir.path("out"));
    let (code, stdout, err) = run(&[
        "--json",
        "sweep",
        &s(&png),
        "--texture",
        &s(&ktx),
        "--mip-levels",
        "1",
        "--out",
        &out,
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let at16 = v["points"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["budget"] == 16)
        .unwrap()
        .clone();
    let (code, _, err) = run(&[
        "cut",
        &s(&png),
        "--texture",
        &s(&ktx),
        "--mip-levels",
        "1",
        "--budget",
        "16",
        "--out",
        &out,
    ]);
    assert_eq!(code, 0, "{err}");
    let mesh: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.path("out/gray-alpha.mesh.json")).unwrap())
            .unwrap();
    assert_eq!(at16["opaque_area"], mesh["stats"]["opaque_area"]);
    assert_eq!(at16["covered_area"], mesh["stats"]["covered_area"]);
    // sweep on the .ktx2 alone notes the format and levels, as cut does
    let (code, stdout, err) = run(&["sweep", &s(&ktx), "--mip-levels", "1", "--out", &out]);
    assert_eq!(code, 0, "{err}");
    assert!(
        stdout.contains(
            "note: guarantee computed for RGBA8 (KTX 2.0, blocks 1x1), mip levels 0 to 1 of 4"
        ),
        "{stdout}"
    );
    let (code, _, err) = run(&["sweep", &s(&ktx), "--mip-levels", "6", "--out", &out]);
    assert_eq!(code, 2);
    assert!(
        err.contains("rgba8-mips.ktx2")
            && err.contains("holds 4 mip level(s)")
            && err.contains("hint:"),
        "{err}"
    );
}

/// `check --texture` with a texture it cannot read: exit 2, the file named,
/// what is wrong and what to do, for each kind of bad texture: cut short
/// (a KTX 2.0 header, an `.astc` file's blocks), a level index pointing past
/// the end, formats not read (BC1, BasisLZ, UASTC) and block sizes not
/// decoded (a 7x7 `.astc`, 3D ASTC in a KTX 2.0 file).
#[test]
fn check_texture_refusals_name_the_file_and_what_to_do() {
    let s = |p: &Path| p.to_str().unwrap().to_string();
    let corpus = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/corpus");
    let mesh = corpus.join("rgb-rectangle.mesh.json");
    let dir = TempDir::new("texture_refusals");
    // an .astc header for 16 x 16 texels in 4x4 blocks, then 3 of its 16 blocks
    let mut astc = vec![0x13, 0xAB, 0xA1, 0x5C, 4, 4, 1, 16, 0, 0, 16, 0, 0, 1, 0, 0];
    astc.extend([0u8; 48]);
    let short = dir.path("short.astc");
    std::fs::write(&short, &astc).unwrap();
    // VkFormat 1000288000: ASTC 3x3x3 (VK_EXT_texture_compression_astc_3d)
    let astc3d = dir.path("astc-3d.ktx2");
    let ktx = ktx2_file(
        1_000_288_000,
        (4, 4),
        &[Level::raw(vec![0; 16])],
        0,
        dfd_for_block(157, 4, 4),
    );
    std::fs::write(&astc3d, ktx).unwrap();
    let export = "hint: export the texture as";
    let again = "hint: copy the file again from where it was exported, or export the texture again";
    let cases: Vec<(PathBuf, &str, &str)> = vec![
        (corpus.join("truncated.ktx2"), "cut short", again),
        (
            short,
            "cut short: a 16 x 16 image in 4x4 blocks needs 272 bytes",
            again,
        ),
        (
            corpus.join("level-past-end.ktx2"),
            "past the end of the file",
            again,
        ),
        (
            corpus.join("bc1.ktx2"),
            "(VkFormat 131) is not one underdraw reads",
            export,
        ),
        (corpus.join("basislz.ktx2"), "BasisLZ", export),
        (corpus.join("uastc.ktx2"), "UASTC", export),
        (
            corpus.join("block-7x7.astc"),
            "its ASTC block size is 7x7",
            export,
        ),
        (
            astc3d,
            "has 3D ASTC blocks, a block size underdraw does not decode",
            export,
        ),
    ];
    for (file, what, hint) in cases {
        let (code, _, err) = run(&["check", &s(&mesh), "--texture", &s(&file)]);
        assert_eq!(code, 2, "{}: {err}", file.display());
        let named = format!("error: {}: ", file.display());
        assert!(err.contains(&named), "{named} not in {err}");
        assert!(err.contains(what), "{what:?} not in {err}");
        assert!(err.contains(hint), "{hint:?} not in {err}");
    }
}
