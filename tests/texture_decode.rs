//! Our decode of shipped textures against outside references.
//!
//! ASTC: Debian's `astcenc` package (the ASTC reference codec, 4.2 here)
//! compresses demo layers and a noise image at 4x4, 6x6, 8x8 and 12x12
//! blocks (`-cl`, LDR) and decompresses them again (`-dl`); our decode of
//! its `.astc` files must equal the alpha of its PNG texel for texel. The
//! same blocks wrapped in a KTX 2.0 file written here byte by byte
//! (`common::ktx2`, per the KTX 2.0 specification) must decode the same.
//! Needs `astcenc` on the PATH: without it the test prints a message and
//! passes, except under CI (env CI=true), where it fails.

use std::path::{Path, PathBuf};
use std::process::Command;
use underdraw::alpha::AlphaMap;
use underdraw::io::{decode_texture, load_alpha, load_texture, ImageLimits};

mod common;
use common::ktx2::{ktx2_file, Level};
use common::TempDir;

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

/// Whether astcenc can run; under CI its absence is a failure.
pub fn have_astcenc() -> bool {
    let ok = Command::new("astcenc")
        .arg("-help")
        .output()
        .is_ok_and(|o| o.status.success() || !o.stdout.is_empty());
    if !ok {
        assert!(
            std::env::var("CI").as_deref() != Ok("true"),
            "astcenc (Debian package astcenc) is needed under CI: .ci/run installs it"
        );
        eprintln!("skipped: astcenc (the ASTC reference codec) is not installed");
    }
    ok
}

/// A crop of a demo layer, written as PNG to `out`.
fn crop_png(layer: &str, x: u32, y: u32, w: u32, h: u32, out: &Path) {
    let img = image::open(root().join("demo-layers").join(layer))
        .unwrap()
        .to_rgba8();
    image::imageops::crop_imm(&img, x, y, w, h)
        .to_image()
        .save(out)
        .unwrap();
}

fn astcenc(args: &[&str]) {
    let out = Command::new("astcenc").args(args).output().unwrap();
    assert!(
        out.status.success(),
        "astcenc {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// A noise image (RGBA from a fixed-seed generator): blocks of every kind
/// the encoder picks (partitions, dual planes, many weight grids).
fn noise_png(out: &Path, w: u32, h: u32) {
    let mut rng = common::Rng(16);
    let img = image::RgbaImage::from_fn(w, h, |_, _| {
        image::Rgba(rng.next().to_le_bytes()[..4].try_into().unwrap())
    });
    img.save(out).unwrap();
}

#[test]
fn astc_decode_equals_the_reference_decoder_texel_for_texel() {
    if !have_astcenc() {
        return;
    }
    let dir = TempDir::new("astc_reference");
    // edges of every kind: the button's soft rim, the houses' windows, the
    // masts' thin rigging; sizes that are not multiples of the blocks; and
    // noise, for the encodings smooth art does not use
    let crops = [
        ("ui-button.png", 0, 0, 128, 128),
        ("houses.png", 300, 200, 203, 157),
        ("masts.png", 600, 100, 190, 211),
        ("noise", 0, 0, 77, 61),
    ];
    let mut changed_by_compression = 0;
    let mut between = 0;
    for (layer, x, y, w, h) in crops {
        let png = dir.path(&format!("{layer}.png"));
        if layer == "noise" {
            noise_png(&png, w, h);
        } else {
            crop_png(layer, x, y, w, h, &png);
        }
        for block in ["4x4", "6x6", "8x8", "12x12"] {
            let astc = dir.path(&format!("{layer}-{block}.astc"));
            let back = dir.path(&format!("{layer}-{block}.png"));
            let s = |p: &Path| p.to_str().unwrap().to_string();
            astcenc(&["-cl", &s(&png), &s(&astc), block, "-medium", "-silent"]);
            astcenc(&["-dl", &s(&astc), &s(&back), "-silent"]);
            let reference = load_alpha(&back).unwrap();
            let ours = load_texture(&astc, &ImageLimits::default()).unwrap();
            assert_eq!(ours.levels.len(), 1);
            assert_eq!(ours.format.codec, format!("ASTC {block}"));
            assert_eq!(
                (ours.levels[0].width, ours.levels[0].height),
                (reference.width, reference.height)
            );
            let differ = differing(&ours.levels[0], &reference);
            assert_eq!(
                differ, 0,
                "{layer} at {block}: {differ} texels' alpha differ from astcenc -dl's"
            );
            between += reference
                .alpha
                .iter()
                .filter(|&&a| a > 0 && a < 255)
                .count();
            let source = load_alpha(&png).unwrap();
            changed_by_compression += differing(&source, &reference);
            // the same blocks in a KTX 2.0 file (VkFormat ASTC_{b}_UNORM_BLOCK)
            let bytes = std::fs::read(&astc).unwrap();
            let (bw, bh) = (bytes[4] as u32, bytes[5] as u32);
            let vk = 157 + 2 * footprint_index(bw, bh);
            let ktx = ktx2_file(
                vk,
                (w, h),
                &[Level::raw(bytes[16..].to_vec())],
                0,
                common::ktx2::dfd_for_block(vk, bw, bh),
            );
            let t = decode_texture(Path::new("t.ktx2"), &ktx, &ImageLimits::default()).unwrap();
            assert_eq!(t.levels[0], ours.levels[0]);
        }
    }
    // compression did move alpha somewhere, and there are alphas between 0
    // and 255 (where a conversion off by one would show), else the test
    // shows little
    assert!(changed_by_compression > 0);
    assert!(between > 1000, "{between}");
}

fn footprint_index(bw: u32, bh: u32) -> u32 {
    let all = [
        (4, 4),
        (5, 4),
        (5, 5),
        (6, 5),
        (6, 6),
        (8, 5),
        (8, 6),
        (8, 8),
        (10, 5),
        (10, 6),
        (10, 8),
        (10, 10),
        (12, 10),
        (12, 12),
    ];
    all.iter().position(|&f| f == (bw, bh)).unwrap() as u32
}

fn differing(a: &AlphaMap, b: &AlphaMap) -> usize {
    assert_eq!((a.width, a.height), (b.width, b.height));
    a.alpha.iter().zip(&b.alpha).filter(|(x, y)| x != y).count()
}

/// The EAC alpha of an ETC2 RGBA8 block, written here from the Khronos Data
/// Format specification's ETC2 section (EAC 8-bit alpha, from memory): 8
/// bytes, big-endian: base codeword (8 bits), multiplier (4), table index
/// (4), then 16 three-bit modifier indices, texels in column-major order
/// (x = 0 column first, y down); alpha = clamp(base + modifier *
/// multiplier, 0, 255).
fn eac_alpha(block: &[u8; 8]) -> [[u8; 4]; 4] {
    const MODIFIERS: [[i32; 8]; 16] = [
        [-3, -6, -9, -15, 2, 5, 8, 14],
        [-3, -7, -10, -13, 2, 6, 9, 12],
        [-2, -5, -8, -13, 1, 4, 7, 12],
        [-2, -4, -6, -13, 1, 3, 5, 12],
        [-3, -6, -8, -12, 2, 5, 7, 11],
        [-3, -7, -9, -11, 2, 6, 8, 10],
        [-4, -7, -8, -11, 3, 6, 7, 10],
        [-3, -5, -8, -11, 2, 4, 7, 10],
        [-2, -6, -8, -10, 1, 5, 7, 9],
        [-2, -5, -8, -10, 1, 4, 7, 9],
        [-2, -4, -8, -10, 1, 3, 7, 9],
        [-2, -5, -7, -10, 1, 4, 6, 9],
        [-3, -4, -7, -10, 2, 3, 6, 9],
        [-1, -2, -3, -10, 0, 1, 2, 9],
        [-4, -6, -8, -9, 3, 5, 7, 8],
        [-3, -5, -7, -9, 2, 4, 6, 8],
    ];
    let bits = u64::from_be_bytes(*block);
    let base = (bits >> 56) as i32;
    let mult = ((bits >> 52) & 15) as i32;
    let table = ((bits >> 48) & 15) as usize;
    let mut out = [[0u8; 4]; 4];
    for k in 0..16 {
        let idx = ((bits >> (45 - 3 * k)) & 7) as usize;
        let (x, y) = (k / 4, k % 4);
        out[y][x] = (base + MODIFIERS[table][idx] * mult).clamp(0, 255) as u8;
    }
    out
}

/// ETC2 RGBA8 (VkFormat 151) in a KTX 2.0 file: the decoded alpha equals
/// the EAC rule above on random blocks (a transcription of the
/// specification; tests/texture_etc2.rs compares with an independent
/// decoder from the registries).
#[test]
fn etc2_rgba8_alpha_follows_the_eac_rule() {
    let mut rng = common::Rng(151);
    let (w, h) = (64u32, 48u32);
    let mut data = Vec::new();
    let mut want = vec![0u8; (w * h) as usize];
    for by in 0..h / 4 {
        for bx in 0..w / 4 {
            let mut alpha = rng.next().to_be_bytes();
            if rng.below(4) == 0 {
                alpha[0] = [0, 255][rng.below(2) as usize]; // clamping at the ends
            }
            let block = eac_alpha(&alpha);
            for y in 0..4 {
                for x in 0..4 {
                    want[((by * 4 + y) * w + bx * 4 + x) as usize] = block[y as usize][x as usize];
                }
            }
            data.extend(alpha);
            data.extend(rng.next().to_be_bytes()); // the colour block
        }
    }
    let file = ktx2_file(
        151,
        (w, h),
        &[Level::raw(data)],
        0,
        common::ktx2::dfd_for_block(151, 4, 4),
    );
    let t = decode_texture(Path::new("e.ktx2"), &file, &ImageLimits::default()).unwrap();
    assert_eq!(t.format.codec, "ETC2 RGBA8");
    assert_eq!(t.levels[0].alpha, want);
}
