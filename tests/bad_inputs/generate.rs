//! The bad-input corpus (`tests/corpus/`), built from code: every file's
//! bytes, and for the images that decode, the alpha channel the PNG
//! specification says they hold, computed here from the samples written
//! (never from underdraw's output).
//!
//! The rules used (PNG specification, W3C Second Edition, from memory):
//! an image without an alpha channel or tRNS is fully opaque; a palette
//! image's alpha is its tRNS entry, and entries past tRNS's end are opaque;
//! a 16-bit sample becomes 8 bits as floor(v * 255 / 65535 + 1/2) (the
//! spec's scaling of sample depth); interlacing (Adam7) changes the order
//! the texels are stored in, not the image.
//!
//! Files the `png` encoder cannot write (zero width, a header claiming
//! 100000 x 100000, Adam7) are assembled from chunks by hand: each chunk is
//! length, type, data and a CRC-32 of type and data (`crc32fast`), the image
//! data a zlib stream (RFC 1950) of stored deflate blocks (RFC 1951).

use underdraw::scene::file::{MAX_LAYERS, MAX_SAMPLES};

/// One corpus file; `alpha` is the decoded alpha channel the standard
/// gives, for the files that decode.
pub struct Entry {
    pub name: &'static str,
    pub bytes: Vec<u8>,
    pub alpha: Option<Expected>,
}

/// Width, height and row-major alpha of a valid image.
pub struct Expected {
    pub width: u32,
    pub height: u32,
    pub alpha: Vec<u8>,
}

const W: u32 = 12;
const H: u32 = 10;

/// The shape every image draws: an opaque core, a rim of partial alpha,
/// transparent around.
fn alpha_at(x: u32, y: u32) -> u8 {
    let (dx, dy) = (x as i32 * 2 - 11, y as i32 * 2 - 9);
    let d2 = dx * dx + dy * dy;
    if d2 <= 30 {
        255
    } else if d2 <= 70 {
        (1 + (x * 37 + y * 11) % 254) as u8
    } else {
        0
    }
}

fn grid(w: u32, h: u32, f: impl Fn(u32, u32) -> u8) -> Vec<u8> {
    (0..h)
        .flat_map(|y| (0..w).map(move |x| (x, y)))
        .map(|(x, y)| f(x, y))
        .collect()
}

fn opaque(w: u32, h: u32) -> Option<Expected> {
    Some(Expected {
        width: w,
        height: h,
        alpha: vec![255; (w * h) as usize],
    })
}

fn encode(
    w: u32,
    h: u32,
    color: png::ColorType,
    depth: png::BitDepth,
    set: impl FnOnce(&mut png::Encoder<'_, &mut Vec<u8>>),
    frames: &[Vec<u8>],
) -> Vec<u8> {
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, w, h);
        enc.set_color(color);
        enc.set_depth(depth);
        set(&mut enc);
        let mut writer = enc.write_header().expect("png header");
        for f in frames {
            writer.write_image_data(f).expect("png image data");
        }
        writer.finish().expect("png end");
    }
    out
}

fn rgba8(w: u32, h: u32, alpha: impl Fn(u32, u32) -> u8) -> Vec<u8> {
    (0..h)
        .flat_map(|y| (0..w).map(move |x| (x, y)))
        .flat_map(|(x, y)| [(x * 20) as u8, (y * 25) as u8, 90, alpha(x, y)])
        .collect()
}

/// A chunk: length, type, data, CRC-32 over type and data.
fn chunk(kind: &[u8; 4], data: &[u8]) -> Vec<u8> {
    let mut v = (data.len() as u32).to_be_bytes().to_vec();
    v.extend_from_slice(kind);
    v.extend_from_slice(data);
    let mut crc = crc32fast::Hasher::new();
    crc.update(kind);
    crc.update(data);
    v.extend_from_slice(&crc.finalize().to_be_bytes());
    v
}

/// A zlib stream of stored (uncompressed) deflate blocks, with its Adler-32.
fn zlib_stored(data: &[u8]) -> Vec<u8> {
    let mut v = vec![0x78, 0x01];
    let blocks: Vec<&[u8]> = if data.is_empty() {
        vec![&[]]
    } else {
        data.chunks(65535).collect()
    };
    for (i, b) in blocks.iter().enumerate() {
        v.push(u8::from(i + 1 == blocks.len()));
        let len = b.len() as u16;
        v.extend_from_slice(&len.to_le_bytes());
        v.extend_from_slice(&(!len).to_le_bytes());
        v.extend_from_slice(b);
    }
    let (mut a, mut b) = (1u32, 0u32);
    for &byte in data {
        a = (a + byte as u32) % 65521;
        b = (b + a) % 65521;
    }
    v.extend_from_slice(&((b << 16) | a).to_be_bytes());
    v
}

/// A PNG by hand: IHDR (8-bit RGBA, `interlace` 0 or 1), one IDAT of
/// `raw` (filtered scanlines) stored, IEND.
fn hand_png(w: u32, h: u32, interlace: u8, raw: &[u8]) -> Vec<u8> {
    let mut ihdr = w.to_be_bytes().to_vec();
    ihdr.extend_from_slice(&h.to_be_bytes());
    ihdr.extend_from_slice(&[8, 6, 0, 0, interlace]);
    let mut v = vec![0x89, b'P', b'N', b'G', 0x0D, 0x0A, 0x1A, 0x0A];
    v.extend(chunk(b"IHDR", &ihdr));
    v.extend(chunk(b"IDAT", &zlib_stored(raw)));
    v.extend(chunk(b"IEND", &[]));
    v
}

/// RGBA8 texels in Adam7 order: the seven passes' sub-images, each row
/// with filter byte 0 (None); an empty pass has no rows at all.
fn adam7(w: u32, h: u32, rgba: &[u8]) -> Vec<u8> {
    // (x0, y0, dx, dy) per pass
    const PASSES: [(u32, u32, u32, u32); 7] = [
        (0, 0, 8, 8),
        (4, 0, 8, 8),
        (0, 4, 4, 8),
        (2, 0, 4, 4),
        (0, 2, 2, 4),
        (1, 0, 2, 2),
        (0, 1, 1, 2),
    ];
    let mut raw = Vec::new();
    for (x0, y0, dx, dy) in PASSES {
        let cols: Vec<u32> = (x0..w).step_by(dx as usize).collect();
        if cols.is_empty() {
            continue;
        }
        for y in (y0..h).step_by(dy as usize) {
            raw.push(0);
            for &x in &cols {
                let at = ((y * w + x) * 4) as usize;
                raw.extend_from_slice(&rgba[at..at + 4]);
            }
        }
    }
    raw
}

/// A baseline JPEG of one grey texel, by hand (JPEG, ITU-T T.81, and the
/// JFIF APP0 segment, from memory): one quantization table, one-code DC and
/// AC Huffman tables, and a scan of DC difference 0 then end-of-block.
fn tiny_jpeg() -> Vec<u8> {
    let mut v = vec![0xFF, 0xD8]; // SOI
    v.extend_from_slice(&[0xFF, 0xE0, 0x00, 0x10]); // APP0, length 16
    v.extend_from_slice(b"JFIF\0");
    v.extend_from_slice(&[1, 1, 0, 0, 1, 0, 1, 0, 0]);
    v.extend_from_slice(&[0xFF, 0xDB, 0x00, 0x43, 0x00]); // DQT, table 0
    v.extend_from_slice(&[1; 64]);
    // SOF0: 8-bit, 1 x 1, one component (id 1, 1x1 sampling, table 0)
    v.extend_from_slice(&[0xFF, 0xC0, 0x00, 0x0B, 8, 0, 1, 0, 1, 1, 1, 0x11, 0]);
    for class in [0x00, 0x10] {
        // DHT: one code of length 1 for symbol 0 (DC: size 0; AC: EOB)
        v.extend_from_slice(&[0xFF, 0xC4, 0x00, 0x14, class, 1]);
        v.extend_from_slice(&[0; 15]);
        v.push(0);
    }
    // SOS: one component, tables 0/0, spectral 0..63; data "0" "0" + 1-bits
    v.extend_from_slice(&[0xFF, 0xDA, 0x00, 0x08, 1, 1, 0x00, 0, 63, 0]);
    v.push(0x3F);
    v.extend_from_slice(&[0xFF, 0xD9]); // EOI
    v
}

/// Pseudo-random bytes from a fixed LCG (Knuth's MMIX constants, from memory).
fn noise(n: usize) -> Vec<u8> {
    let mut state: u64 = 0xC0FFEE;
    (0..n)
        .map(|_| {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 56) as u8
        })
        .collect()
}

fn images() -> Vec<Entry> {
    use png::{BitDepth as D, ColorType as C};
    let mut v = Vec::new();
    let mut add = |name, bytes, alpha| v.push(Entry { name, bytes, alpha });

    let shape = grid(W, H, alpha_at);
    let la: Vec<u8> = grid(W, H, |x, _| (x * 21) as u8)
        .into_iter()
        .zip(&shape)
        .flat_map(|(g, &a)| [g, a])
        .collect();
    let gray_alpha = encode(W, H, C::GrayscaleAlpha, D::Eight, |_| {}, &[la]);

    add("empty.png", Vec::new(), None);
    add("noise.png", noise(4096), None);
    add("jpeg.png", tiny_jpeg(), None);
    // the IDAT's last 4 bytes, its CRC and IEND cut off
    let truncated = gray_alpha[..gray_alpha.len() - 20].to_vec();
    add("truncated.png", truncated, None);
    // the IDAT's CRC (the 4 bytes before IEND's 12) with one bit flipped
    let mut bad_crc = gray_alpha.clone();
    let at = bad_crc.len() - 13;
    bad_crc[at] ^= 0x01;
    add("bad-crc.png", bad_crc, None);
    add(
        "huge-header.png",
        hand_png(100_000, 100_000, 0, &[0; 64]),
        None,
    );
    add("zero-width.png", hand_png(0, 10, 0, &[]), None);

    let one = encode(1, 1, C::Rgba, D::Eight, |_| {}, &[vec![10, 20, 30, 255]]);
    add(
        "one-by-one.png",
        one,
        Some(Expected {
            width: 1,
            height: 1,
            alpha: vec![255],
        }),
    );

    // 1 x 65536: opaque from row 1000 to 60999, a partial band above
    let tall_alpha = |y: u32| match y {
        1000..=60999 => 255,
        900..=999 => 128,
        _ => 0,
    };
    let tall_la: Vec<u8> = (0..65536).flat_map(|y| [200, tall_alpha(y)]).collect();
    let tall = encode(1, 65536, C::GrayscaleAlpha, D::Eight, |_| {}, &[tall_la]);
    let tall_expected = (0..65536).map(tall_alpha).collect();
    add(
        "tall-1x65536.png",
        tall,
        Some(Expected {
            width: 1,
            height: 65536,
            alpha: tall_expected,
        }),
    );

    // 16-bit: rim samples chosen around the rounding steps of v / 257
    const RIM16: [u16; 9] = [1, 128, 129, 385, 386, 32767, 32768, 65406, 65407];
    let a16 = grid(W, H, |x, y| x as u8 + 16 * y as u8)
        .into_iter()
        .zip(&shape)
        .map(|(k, &a)| match a {
            0 => 0u16,
            255 => 65535,
            _ => RIM16[k as usize % RIM16.len()],
        })
        .collect::<Vec<u16>>();
    let rgba16: Vec<u8> = a16
        .iter()
        .flat_map(|&a| {
            [0x12, 0x34, 0x56, 0x78, 0x9A, 0xBC]
                .into_iter()
                .chain(a.to_be_bytes())
        })
        .collect();
    let scaled = a16
        .iter()
        .map(|&a| ((2 * a as u64 * 255 + 65535) / (2 * 65535)) as u8)
        .collect();
    let png16 = encode(W, H, C::Rgba, D::Sixteen, |_| {}, &[rgba16]);
    add(
        "rgba16.png",
        png16,
        Some(Expected {
            width: W,
            height: H,
            alpha: scaled,
        }),
    );

    let gray = encode(
        W,
        H,
        C::Grayscale,
        D::Eight,
        |_| {},
        &[grid(W, H, |x, y| (x * 9 + y) as u8)],
    );
    add("gray.png", gray, opaque(W, H));
    add(
        "gray-alpha.png",
        gray_alpha,
        Some(Expected {
            width: W,
            height: H,
            alpha: shape.clone(),
        }),
    );

    // 4-bit palette of 16; tRNS gives entries 0..4 only
    let trns = [0u8, 40, 100, 160, 220];
    let index = grid(W, H, |x, y| match alpha_at(x, y) {
        0 => 0,
        255 => 5 + ((x + y) % 11) as u8,
        _ => 1 + ((x * 3 + y) % 4) as u8,
    });
    let packed: Vec<u8> = index
        .chunks(W as usize)
        .flat_map(|row| {
            row.chunks(2)
                .map(|p| p[0] << 4 | p.get(1).copied().unwrap_or(0))
                .collect::<Vec<u8>>()
        })
        .collect();
    let palette: Vec<u8> = (0..16u8)
        .flat_map(|i| [i * 16, 255 - i * 16, 128])
        .collect();
    let pal_trns = encode(
        W,
        H,
        C::Indexed,
        D::Four,
        |e| {
            e.set_palette(palette.clone());
            e.set_trns(trns.to_vec());
        },
        &[packed],
    );
    let pal_alpha = index
        .iter()
        .map(|&i| trns.get(i as usize).copied().unwrap_or(255))
        .collect();
    add(
        "palette-trns.png",
        pal_trns,
        Some(Expected {
            width: W,
            height: H,
            alpha: pal_alpha,
        }),
    );

    // 2-bit palette of 4, no tRNS
    let packed2: Vec<u8> = grid(W, H, |x, y| ((x + 2 * y) % 4) as u8)
        .chunks(W as usize)
        .flat_map(|row| {
            row.chunks(4)
                .map(|q| q.iter().fold(0u8, |acc, &i| acc << 2 | i))
                .collect::<Vec<u8>>()
        })
        .collect();
    let pal = encode(
        W,
        H,
        C::Indexed,
        D::Two,
        |e| e.set_palette(palette[..12].to_vec()),
        &[packed2],
    );
    add("palette.png", pal, opaque(W, H));

    let (iw, ih) = (13, 11);
    let inter = hand_png(iw, ih, 1, &adam7(iw, ih, &rgba8(iw, ih, alpha_at)));
    add(
        "interlaced.png",
        inter,
        Some(Expected {
            width: iw,
            height: ih,
            alpha: grid(iw, ih, alpha_at),
        }),
    );

    // APNG, 3 frames, the IDAT image is frame 0; frames 1 and 2 differ
    let frames = [
        rgba8(W, H, alpha_at),
        rgba8(W, H, |_, _| 255),
        rgba8(W, H, |x, _| (x * 20) as u8),
    ];
    let apng = encode(
        W,
        H,
        C::Rgba,
        D::Eight,
        |e| e.set_animated(3, 0).expect("apng"),
        &frames,
    );
    add(
        "animated.png",
        apng,
        Some(Expected {
            width: W,
            height: H,
            alpha: shape,
        }),
    );

    let rgb: Vec<u8> = grid(W, H, |x, y| (x * y) as u8)
        .into_iter()
        .flat_map(|g| [g, 255 - g, 7])
        .collect();
    add(
        "rgb.png",
        encode(W, H, C::Rgb, D::Eight, |_| {}, &[rgb]),
        opaque(W, H),
    );
    v
}

fn scene(camera: &str, layers: &[String]) -> Vec<u8> {
    format!(
        "{{\n  \"viewport\": [32, 12],\n  \"camera\": {camera},\n  \"layers\": [\n    {}\n  ]\n}}\n",
        layers.join(",\n    ")
    )
    .into_bytes()
}

fn scenes() -> Vec<Entry> {
    let cam = r#"{"travel": 8, "samples": 2}"#;
    let back = r#"{"name": "back", "image": "rgb.png", "cut": {"budget": 4}, "parallax": 0.5}"#
        .to_string();
    let front = r#"{"name": "front", "image": "gray-alpha.png", "cut": {"budget": 8}}"#.to_string();
    let ok = [back.clone(), front.clone()];
    let mut v = Vec::new();
    let mut add = |name, bytes: Vec<u8>| {
        v.push(Entry {
            name,
            bytes,
            alpha: None,
        })
    };
    add("ok.scene.json", scene(cam, &ok));
    let syntax = String::from_utf8(scene(cam, &ok))
        .unwrap()
        .replace("\"travel\": 8,", "\"travel\": 8");
    add("syntax-error.scene.json", syntax.into_bytes());
    add(
        "unknown-key.scene.json",
        scene(
            cam,
            &[back.clone(), front.replace("}}", "}, \"opacity\": 0.5}")],
        ),
    );
    add(
        "missing-image.scene.json",
        scene(
            cam,
            &[
                back.clone(),
                front.replace("gray-alpha.png", "no-such-layer.png"),
            ],
        ),
    );
    add(
        "negative-scale.scene.json",
        scene(
            cam,
            &[back.clone(), front.replace("}}", "}, \"scale\": -2}")],
        ),
    );
    add(
        "old-fill-key.scene.json",
        scene(
            cam,
            &[back.clone(), front.replace("}}", "}, \"repeat_x\": true}")],
        ),
    );
    add(
        "zero-samples.scene.json",
        scene(r#"{"travel": 8, "samples": 0}"#, &ok),
    );
    add(
        "duplicate-layer.scene.json",
        scene(cam, &[back.clone(), back.replace("0.5", "0.25")]),
    );
    let many: Vec<String> = (0..=MAX_LAYERS)
        .map(|i| format!(r#"{{"name": "l{i}", "image": "rgb.png", "position": [{i}, 0]}}"#))
        .collect();
    add("too-many-layers.scene.json", scene(cam, &many));
    let samples = format!(r#"{{"travel": 8, "samples": {}}}"#, MAX_SAMPLES + 1);
    add("too-many-samples.scene.json", scene(&samples, &ok));
    v
}

/// A mesh file for rgb.png (12 x 10, opaque): its rectangle as two opaque
/// triangles, wound clockwise on screen (y down).
fn mesh(size: [u32; 2], index: u32) -> Vec<u8> {
    let [w, h] = size.map(|s| s as f32);
    let m = serde_json::json!({
        "format": "underdraw.layer", "version": 2, "source": "rgb.png",
        "size": size,
        "filter": {"mode": "bilinear", "mip_levels": 0},
        "alpha": {"opaque_min": 255, "visible_min": 1},
        "wrap": "none", "budget": 4, "winding": "cw",
        "positions": [0.0, 0.0, w, 0.0, w, h, 0.0, h],
        "uvs": [0.0, 0.0, 1.0, 0.0, 1.0, 1.0, 0.0, 1.0],
        "opaque": {"indices": [0, 1, 2, 0, 2, index]},
        "blended": {"indices": []},
        "stats": {"safe_opaque_area": w * h, "opaque_area": w * h, "must_cover_area": w * h,
                  "covered_area": w * h, "vertices": 4, "opaque_outline_vertices": 4,
                  "cover_outline_vertices": 4, "opaque_triangles": 2, "blended_triangles": 0}
    });
    let mut text = serde_json::to_vec_pretty(&m).unwrap();
    text.push(b'\n');
    text
}

/// A version 1 mesh file: `stats` has the key version 2 renamed.
fn old_mesh() -> Vec<u8> {
    let mut m: serde_json::Value = serde_json::from_slice(&mesh([W, H], 3)).unwrap();
    m["version"] = 1.into();
    m["stats"]["interior_edge_length_earcut"] = 16.0.into();
    let mut text = serde_json::to_vec_pretty(&m).unwrap();
    text.push(b'\n');
    text
}

fn meshes() -> Vec<Entry> {
    let e = |name, bytes| Entry {
        name,
        bytes,
        alpha: None,
    };
    vec![
        e("rgb-rectangle.mesh.json", mesh([W, H], 3)),
        e("index-out-of-range.mesh.json", mesh([W, H], 7)),
        e("wrong-size.mesh.json", mesh([64, 48], 3)),
        e("old-stats-key.mesh.json", old_mesh()),
    ]
}

/// Every corpus file, in the README table's order.
pub fn corpus() -> Vec<Entry> {
    let mut v = images();
    v.extend(scenes());
    v.extend(meshes());
    v.extend(textures());
    v
}

/// Shipped textures, KTX 2.0 files written byte by byte (`common::ktx2`,
/// per the Khronos KTX 2.0 specification) and raw `.astc` files (the ASTC
/// reference codec's 16-byte header: magic 0x5CA1AB13, block x, y, z, then
/// the image's x, y, z as 24-bit little-endian numbers; from memory).
fn textures() -> Vec<Entry> {
    use crate::common::ktx2::{basic_dfd, dfd_for_block, ktx2_file, rgba8_ktx2, Level};
    let mut v = Vec::new();
    let mut add = |name, bytes: Vec<u8>| {
        v.push(Entry {
            name,
            bytes,
            alpha: None,
        })
    };
    // the corpus shape at 12 x 10, then three levels by 2x2 minimum (any
    // chain will do: the file's own levels are what is read)
    let mut levels = vec![(W, H, grid(W, H, alpha_at))];
    while levels.len() < 4 {
        let (w, h, a) = levels.last().unwrap().clone();
        let (nw, nh) = ((w / 2).max(1), (h / 2).max(1));
        let next = grid(nw, nh, |x, y| {
            let at = |x: u32, y: u32| a[(y.min(h - 1) * w + x.min(w - 1)) as usize];
            at(2 * x, 2 * y)
                .min(at(2 * x + 1, 2 * y))
                .min(at(2 * x, 2 * y + 1))
                .min(at(2 * x + 1, 2 * y + 1))
        });
        levels.push((nw, nh, next));
    }
    let ok = rgba8_ktx2(&levels);
    add("rgba8-mips.ktx2", ok.clone());
    add("truncated.ktx2", ok[..60].to_vec());
    // level 0's byteOffset (level index entry 0, bytes 80..88) past the end
    let mut past = ok.clone();
    past[80..88].copy_from_slice(&(ok.len() as u64 + 100).to_le_bytes());
    add("level-past-end.ktx2", past);
    // BasisLZ: vkFormat UNDEFINED (0), supercompressionScheme 1, ETC1S colour model (163)
    let one = Level::raw(vec![0; 16]);
    add(
        "basislz.ktx2",
        ktx2_file(
            0,
            (4, 4),
            &[one],
            1,
            basic_dfd(163, 2, (4, 4), 0, &[(0, 64, 0, 0, u32::MAX)]),
        ),
    );
    // UASTC: vkFormat UNDEFINED, no supercompression, UASTC colour model (166)
    let one = Level::raw(vec![0; 16]);
    add(
        "uastc.ktx2",
        ktx2_file(
            0,
            (4, 4),
            &[one],
            0,
            basic_dfd(166, 2, (4, 4), 16, &[(0, 128, 0, 0, u32::MAX)]),
        ),
    );
    // BC1 (VK_FORMAT_BC1_RGB_UNORM_BLOCK = 131): a desktop format, not read
    let one = Level::raw(vec![0; 8]);
    add(
        "bc1.ktx2",
        ktx2_file(
            131,
            (4, 4),
            &[one],
            0,
            basic_dfd(128, 1, (4, 4), 8, &[(0, 64, 0, 0, u32::MAX)]),
        ),
    );
    // an .astc file with 7 x 7 blocks, not an ASTC footprint
    let mut astc = vec![0x13, 0xAB, 0xA1, 0x5C, 7, 7, 1];
    for n in [W, H, 1] {
        astc.extend(&n.to_le_bytes()[..3]);
    }
    astc.extend(vec![0u8; 2 * 2 * 16]);
    add("block-7x7.astc", astc);
    // a valid ASTC 4x4 KTX 2.0 file: void-extent blocks (constant colour; ASTC
    // specification, from memory: bits 0..9 = 0x1FC, LDR, 16-bit RGBA at
    // bytes 8..16), opaque on the left, transparent on the right
    let block = |alpha: u16| {
        let mut b = vec![0xFC, 0xFD, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF];
        for c in [0xFFFFu16, 0xFFFF, 0xFFFF, alpha] {
            b.extend(c.to_le_bytes());
        }
        b
    };
    let mut data = Vec::new();
    for _ in 0..3 {
        for bx in 0..3 {
            data.extend(block(if bx < 2 { 0xFFFF } else { 0 }));
        }
    }
    add(
        "astc-4x4.ktx2",
        ktx2_file(
            157,
            (W, H),
            &[Level::raw(data)],
            0,
            dfd_for_block(157, 4, 4),
        ),
    );
    v
}
