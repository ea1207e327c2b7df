//! ASTC: the raw `.astc` file the reference encoder writes, and the decode
//! of ASTC LDR blocks (from a `.astc` file or a KTX 2.0 level) to alpha.
//!
//! The `.astc` layout (the ASTC reference codec's file format, from its
//! documentation; from memory): 16 bytes of header, then the blocks, 16
//! bytes each, row by row:
//! * bytes 0..4: the magic number 0x5CA1AB13, little-endian;
//! * bytes 4, 5, 6: the block's width, height and depth in texels;
//! * bytes 7..10, 10..13, 13..16: the image's width, height and depth, each a
//!   24-bit little-endian number.
//!
//! Blocks are decoded by code vendored from the `astc-decode` crate
//! (`io/astc/decode.rs`, Apache License 2.0) with the reference codec's
//! conversion from UNORM16 to 8 bits, so the alpha equals `astcenc -dl`'s
//! texel for texel (tests/texture_decode.rs); a block with a reserved
//! encoding decodes to the error colour, opaque magenta.
//!
//! Invariants: only 2D block sizes of the ASTC LDR profile are read (4x4 to
//! 12x12, the fourteen footprints of the specification); the data must hold
//! every block of the image; nothing is allocated before the size is checked
//! against the [`super::ImageLimits`].

use super::texture::TextureFormat;
use crate::alpha::AlphaMap;

mod decode;

/// The `.astc` file's magic number, as the first 4 bytes (little-endian).
pub(super) const MAGIC: [u8; 4] = [0x13, 0xAB, 0xA1, 0x5C];

/// The 2D block footprints of ASTC (width x height), in the order of their
/// Vulkan format numbers.
pub(super) const FOOTPRINTS: [(u32, u32); 14] = [
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

/// What a `.astc` file's header says.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct AstcHeader {
    /// Block width and height, texels.
    pub block: (u32, u32),
    /// Image width and height, texels.
    pub size: (u32, u32),
}

fn le24(b: &[u8]) -> u32 {
    u32::from_le_bytes([b[0], b[1], b[2], 0])
}

/// Reads the header of a `.astc` file; the error says what is wrong, in
/// words for the user.
pub(super) fn read_header(bytes: &[u8]) -> Result<AstcHeader, String> {
    if bytes.len() < 16 {
        return Err(format!(
            "it is cut short: it holds {} bytes, fewer than the 16 of an .astc header",
            bytes.len()
        ));
    }
    if bytes[..4] != MAGIC {
        return Err("its first bytes are not the .astc magic number".into());
    }
    let (bw, bh, bd) = (bytes[4] as u32, bytes[5] as u32, bytes[6] as u32);
    let (w, h, d) = (
        le24(&bytes[7..10]),
        le24(&bytes[10..13]),
        le24(&bytes[13..16]),
    );
    if bd != 1 || d != 1 {
        return Err(format!(
            "it is a 3D texture (block depth {bd}, image depth {d}); underdraw reads 2D layers"
        ));
    }
    check_footprint(bw, bh)?;
    Ok(AstcHeader {
        block: (bw, bh),
        size: (w, h),
    })
}

/// Refuses a block size that is not one of ASTC's 2D footprints.
pub(super) fn check_footprint(bw: u32, bh: u32) -> Result<(), String> {
    if FOOTPRINTS.contains(&(bw, bh)) {
        Ok(())
    } else {
        Err(format!(
            "its ASTC block size is {bw}x{bh}, which is not one of the 2D block sizes of ASTC (4x4 to 12x12)"
        ))
    }
}

/// Bytes of ASTC data for a `w` x `h` image in blocks of `bw` x `bh`.
pub(super) fn data_len(w: u32, h: u32, (bw, bh): (u32, u32)) -> u64 {
    w.div_ceil(bw) as u64 * h.div_ceil(bh) as u64 * 16
}

/// Decodes ASTC blocks (exactly [`data_len`] bytes or more) to the alpha
/// of a `w` x `h` image.
///
/// Texel for texel the reference codec's LDR decode (`astcenc -dl`): the
/// blocks are decoded to UNORM16 per the ASTC specification by the vendored
/// `astc-decode` code ([`decode`]), then converted to 8 bits as the
/// reference codec does ([`unorm16_to_u8`]). A block with a reserved
/// encoding decodes to the specification's error colour, opaque magenta;
/// an HDR endpoint mode gives its partition that colour. For the sRGB
/// formats the alpha is decoded the same way (the specification expands
/// alpha endpoints by bit replication in either mode).
pub(super) fn decode_alpha(data: &[u8], w: u32, h: u32, block: (u32, u32)) -> AlphaMap {
    let (bw, bh) = block;
    let footprint = decode::Footprint::new(bw, bh);
    let mut alpha = vec![0u8; w as usize * h as usize];
    let blocks_x = w.div_ceil(bw);
    for (i, b) in data[..data_len(w, h, block) as usize]
        .chunks_exact(16)
        .enumerate()
    {
        let (x0, y0) = ((i as u32 % blocks_x) * bw, (i as u32 / blocks_x) * bh);
        let b: &[u8; 16] = b.try_into().expect("chunks of 16 bytes");
        decode::astc_decode_block(b, footprint, |x, y, rgba| {
            let (x, y) = (x0 + x, y0 + y);
            if x < w && y < h {
                alpha[(y * w + x) as usize] = rgba[3];
            }
        });
    }
    AlphaMap::from_raw(w, h, alpha)
}

/// A UNORM16 ASTC result as 8 bits the way the reference codec's LDR
/// decompressor stores it: c / 65535 as f32, truncated to FP16 (toward
/// zero), times 255, rounded half up (found to match `astcenc -dl` for all
/// 65536 values).
pub(super) fn unorm16_to_u8(c: u16) -> u8 {
    let f = c as f32 / 65535.0;
    let half = if f >= 1.0 / 16384.0 {
        // normal FP16: keep 10 of f32's 23 mantissa bits
        f32::from_bits(f.to_bits() & !((1 << 13) - 1))
    } else {
        // subnormal FP16: multiples of 2^-24
        (f * 16_777_216.0).floor() / 16_777_216.0
    };
    (half * 255.0 + 0.5).floor() as u8
}

/// The texture a `.astc` file holds (one level), its data checked whole.
pub(super) fn read_astc(bytes: &[u8]) -> Result<(TextureFormat, Vec<AlphaMap>), String> {
    let header = read_header(bytes)?;
    let (w, h) = header.size;
    if w == 0 || h == 0 {
        return Err(format!("it has no texels: its header says {w} x {h}"));
    }
    let need = 16 + data_len(w, h, header.block);
    if (bytes.len() as u64) < need {
        return Err(format!(
            "it is cut short: a {w} x {h} image in {}x{} blocks needs {need} bytes, but the file holds {}",
            header.block.0,
            header.block.1,
            bytes.len()
        ));
    }
    let level = decode_alpha(&bytes[16..], w, h, header.block);
    let format = TextureFormat {
        container: ".astc file",
        codec: format!("ASTC {}x{}", header.block.0, header.block.1),
        block: [header.block.0, header.block.1],
        supercompression: None,
    };
    Ok((format, vec![level]))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn header(block: (u8, u8, u8), size: (u32, u32, u32)) -> Vec<u8> {
        let mut v = MAGIC.to_vec();
        v.extend([block.0, block.1, block.2]);
        for n in [size.0, size.1, size.2] {
            v.extend(&n.to_le_bytes()[..3]);
        }
        v
    }

    #[test]
    fn header_fields_and_refusals() {
        let h = read_header(&header((6, 6, 1), (70_000, 3, 1))).unwrap();
        assert_eq!(h.block, (6, 6));
        assert_eq!(h.size, (70_000, 3));
        assert!(read_header(&header((6, 6, 1), (7, 3, 1))[..10])
            .unwrap_err()
            .contains("cut short"));
        assert!(read_header(&header((7, 7, 1), (8, 8, 1)))
            .unwrap_err()
            .contains("7x7"));
        assert!(read_header(&header((4, 4, 4), (8, 8, 8)))
            .unwrap_err()
            .contains("3D"));
        assert_eq!(data_len(13, 7, (6, 6)), 3 * 2 * 16);
    }

    /// A void-extent block (ASTC specification, "Void-Extent Blocks", from
    /// memory: bits 0..9 are 0x1FC, bit 9 the HDR flag, the constant colour
    /// as four 16-bit UNORM values in bytes 8..16) decodes to its colour.
    #[test]
    fn a_void_extent_block_decodes_to_its_alpha() {
        let mut block = [0xFFu8; 16];
        block[0] = 0xFC;
        block[1] = 0xFD; // bit 8 set (the 0x1FC pattern), bit 9 clear: LDR
        block[14] = 0x80; // alpha 0x8080 -> 128
        block[15] = 0x80;
        let mut file = header((4, 4, 1), (3, 5, 1));
        file.extend(block);
        file.extend(block);
        let (_, levels) = read_astc(&file).unwrap();
        assert_eq!(levels[0].alpha, vec![128; 15]);
        assert!(read_astc(&file[..40]).unwrap_err().contains("cut short"));
    }

    /// Arbitrary bytes (a damaged or hand-made file) decode without a panic
    /// at every footprint: reserved encodings become the error colour, alpha
    /// 255 (the decoder crate used before panicked on such blocks).
    #[test]
    fn arbitrary_blocks_decode_without_panic() {
        let mut x = 0x9E37_79B9_7F4A_7C15u64;
        let data: Vec<u8> = (0..16 * 400)
            .map(|_| {
                x ^= x << 13;
                x ^= x >> 7;
                x ^= x << 17;
                x as u8
            })
            .collect();
        for &(bw, bh) in &FOOTPRINTS {
            let (w, h) = (20 * bw, 20 * bh);
            let a = decode_alpha(&data, w, h, (bw, bh));
            assert_eq!(a.alpha.len(), (w * h) as usize);
        }
        // a reserved block mode (bits 0..4 and 6..9 all zero) is an error block
        let mut block = [0u8; 16];
        block[0] = 0x00;
        assert_eq!(decode_alpha(&block, 4, 4, (4, 4)).alpha, vec![255; 16]);
    }

    /// The reference codec's 8-bit values at the ends and in the middle, as
    /// `astcenc -dl` (Debian's astcenc 4.2) wrote them for void-extent blocks
    /// of every UNORM16 alpha (probed once; the increments fall at 129, 386,
    /// 643, ..., 4244).
    #[test]
    fn unorm16_conversion_matches_the_reference_codec_probe() {
        for (c, a) in [
            (0u16, 0u8),
            (128, 0),
            (129, 1),
            (385, 1),
            (386, 2),
            (4243, 16),
            (4244, 17),
            (32792, 128),
            (36891, 143),
            (61485, 239),
            (65535, 255),
        ] {
            assert_eq!(unorm16_to_u8(c), a, "{c}");
        }
    }
}
