//! KTX 2.0 files written byte by byte for the tests, per the Khronos KTX 2.0
//! specification (section 3, file structure): the 12-byte identifier; the
//! header (vkFormat, typeSize, pixelWidth, pixelHeight, pixelDepth,
//! layerCount, faceCount, levelCount, supercompressionScheme as
//! little-endian u32); the index (dfdByteOffset, dfdByteLength,
//! kvdByteOffset, kvdByteLength as u32, sgdByteOffset, sgdByteLength as
//! u64); the level index (byteOffset, byteLength, uncompressedByteLength as
//! u64 per level, level 0 first); the data format descriptor (its total
//! size, then one basic descriptor block per the Khronos Data Format
//! specification 1.3, section 5); then the levels' data, smallest level
//! first in the file, each at an offset aligned to lcm(block bytes, 4)
//! (no supercompression) or to 1 (supercompressed).

/// One level's bytes as stored, and its size once unpacked.
pub struct Level {
    pub stored: Vec<u8>,
    pub unpacked_len: u64,
}

impl Level {
    /// Stored as it is (no supercompression).
    pub fn raw(bytes: Vec<u8>) -> Level {
        let unpacked_len = bytes.len() as u64;
        Level {
            stored: bytes,
            unpacked_len,
        }
    }
}

pub const IDENTIFIER: [u8; 12] = [
    0xAB, 0x4B, 0x54, 0x58, 0x20, 0x32, 0x30, 0xBB, 0x0D, 0x0A, 0x1A, 0x0A,
];

/// A basic data format descriptor block (Khronos Data Format 1.3, section
/// 5.1; from memory): vendorId 0 and descriptorType 0, versionNumber 2,
/// blockSize 24 + 16 per sample; colorModel, colorPrimaries,
/// transferFunction, flags; texelBlockDimension0..3 (each minus one);
/// bytesPlane0..7; per sample bitOffset (16 bits), bitLength minus one (8),
/// channelType with qualifiers (8), samplePosition0..3, sampleLower,
/// sampleUpper.
pub fn basic_dfd(
    color_model: u8,
    transfer: u8,
    block: (u32, u32),
    bytes_plane0: u8,
    samples: &[(u16, u8, u8, u32, u32)],
) -> Vec<u8> {
    let size = 24 + 16 * samples.len() as u32;
    let mut d = Vec::new();
    d.extend(0u32.to_le_bytes());
    d.extend((2u32 | (size << 16)).to_le_bytes());
    d.extend([color_model, 1, transfer, 0]);
    d.extend([(block.0 - 1) as u8, (block.1 - 1) as u8, 0, 0]);
    d.extend([bytes_plane0, 0, 0, 0, 0, 0, 0, 0]);
    for &(offset, bits, channel, lower, upper) in samples {
        d.extend(offset.to_le_bytes());
        d.extend([bits - 1, channel]);
        d.extend([0u8; 4]);
        d.extend(lower.to_le_bytes());
        d.extend(upper.to_le_bytes());
    }
    d
}

/// The descriptor of a format by its VkFormat: RGBA8 (37 / 43: colour
/// model RGBSDA = 1, four 8-bit samples, alpha channel 15), ETC2 (149..152:
/// model ETC2 = 161), ASTC (157..184: model ASTC = 162, one 128-bit sample).
pub fn dfd_for_block(vk_format: u32, bw: u32, bh: u32) -> Vec<u8> {
    let srgb = matches!(vk_format, 43 | 150 | 152)
        || (157..=184).contains(&vk_format) && vk_format.is_multiple_of(2);
    let transfer = if srgb { 2 } else { 1 };
    match vk_format {
        37 | 43 => basic_dfd(
            1,
            transfer,
            (1, 1),
            4,
            &[
                (0, 8, 0, 0, 255),
                (8, 8, 1, 0, 255),
                (16, 8, 2, 0, 255),
                (24, 8, 15, 0, 255),
            ],
        ),
        149 | 150 => basic_dfd(161, transfer, (4, 4), 8, &[(0, 64, 2, 0, u32::MAX)]),
        151 | 152 => basic_dfd(
            161,
            transfer,
            (4, 4),
            16,
            &[(0, 64, 15, 0, u32::MAX), (64, 64, 2, 0, u32::MAX)],
        ),
        _ => basic_dfd(162, transfer, (bw, bh), 16, &[(0, 128, 0, 0, u32::MAX)]),
    }
}

fn lcm(a: u64, b: u64) -> u64 {
    let (mut x, mut y) = (a, b);
    while y != 0 {
        (x, y) = (y, x % y);
    }
    a / x * b
}

/// A whole KTX 2.0 file: a 2D texture of `size` (level 0) with `levels`
/// (level 0 first), `scheme` its supercompression, `dfd_block` its basic
/// descriptor block (without the total-size word).
pub fn ktx2_file(
    vk_format: u32,
    size: (u32, u32),
    levels: &[Level],
    scheme: u32,
    dfd_block: Vec<u8>,
) -> Vec<u8> {
    let block_bytes = match vk_format {
        37 | 43 => 4,
        149 | 150 => 8,
        _ => 16,
    };
    // typeSize is 1 for 8-bit components and for block-compressed formats (KTX 2.0, section 3.2)
    let type_size = 1;
    let n = levels.len();
    let index_end = 80 + 24 * n;
    let dfd_offset = index_end;
    let dfd_len = 4 + dfd_block.len();
    let mut data_at = dfd_offset + dfd_len;
    let align = if scheme == 0 { lcm(block_bytes, 4) } else { 1 } as usize;
    // smallest level first in the file
    let mut offsets = vec![0usize; n];
    for l in (0..n).rev() {
        data_at = data_at.div_ceil(align) * align;
        offsets[l] = data_at;
        data_at += levels[l].stored.len();
    }
    let mut f = IDENTIFIER.to_vec();
    for v in [
        vk_format,
        if vk_format == 0 { 1 } else { type_size },
        size.0,
        size.1,
        0,
        0,
        1,
        n as u32,
        scheme,
    ] {
        f.extend(v.to_le_bytes());
    }
    f.extend((dfd_offset as u32).to_le_bytes());
    f.extend((dfd_len as u32).to_le_bytes());
    f.extend(0u32.to_le_bytes()); // no key/value data
    f.extend(0u32.to_le_bytes());
    f.extend(0u64.to_le_bytes()); // no supercompression global data
    f.extend(0u64.to_le_bytes());
    for (l, level) in levels.iter().enumerate() {
        f.extend((offsets[l] as u64).to_le_bytes());
        f.extend((level.stored.len() as u64).to_le_bytes());
        f.extend(level.unpacked_len.to_le_bytes());
    }
    f.extend((dfd_len as u32).to_le_bytes());
    f.extend(dfd_block);
    for l in (0..n).rev() {
        f.resize(offsets[l], 0);
        f.extend(&levels[l].stored);
    }
    f
}

/// An RGBA8 KTX 2.0 file (VK_FORMAT_R8G8B8A8_UNORM) whose levels are the
/// given alpha maps (colour white), level 0 first.
pub fn rgba8_ktx2(levels: &[(u32, u32, Vec<u8>)]) -> Vec<u8> {
    let stored: Vec<Level> = levels
        .iter()
        .map(|(_, _, a)| Level::raw(a.iter().flat_map(|&x| [255, 255, 255, x]).collect()))
        .collect();
    ktx2_file(
        37,
        (levels[0].0, levels[0].1),
        &stored,
        0,
        dfd_for_block(37, 1, 1),
    )
}
