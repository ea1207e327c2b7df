//! KTX 2.0 files: the container (parsed by the `ktx2` crate, with our own
//! reads of the header and level index first, so a damaged file gets a
//! precise message), Zstandard supercompression (the `ruzstd` crate), and
//! the decode of each level's texels to alpha.
//!
//! The layout (Khronos KTX 2.0 specification, sections 3 to 4): a 12-byte
//! identifier; the header (vkFormat, typeSize, pixelWidth, pixelHeight,
//! pixelDepth, layerCount, faceCount, levelCount, supercompressionScheme:
//! nine little-endian u32 at bytes 12..48), the index of the data format
//! descriptor, key/value data and supercompression global data (bytes
//! 48..80), then the level index: per level, byteOffset, byteLength and
//! uncompressedByteLength as little-endian u64, level 0 first. Level l is
//! max(1, pixelWidth >> l) x max(1, pixelHeight >> l) texels; levelCount 0
//! means the file holds level 0 only.
//!
//! Read: 2D textures (one layer, one face) in VK_FORMAT_R8G8B8A8_UNORM /
//! _SRGB (37, 43), the ETC2 RGB8A1 and RGBA8 block formats (149 to 152) and
//! the ASTC LDR block formats 4x4 to 12x12 (157 to 184), with no
//! supercompression or Zstandard (scheme 2). Refused with a reason: BasisLZ
//! (scheme 1) and UASTC (vkFormat 0 with the UASTC colour model), which are
//! transcoded at load time; ZLIB; any other format; arrays, cube maps, 3D
//! and 1D textures.

use super::astc;
use super::texture::TextureFormat;
use crate::alpha::AlphaMap;

/// The 12 bytes every KTX 2.0 file starts with: «KTX 20», CR LF, EOF, LF.
pub(super) const IDENTIFIER: [u8; 12] = [
    0xAB, 0x4B, 0x54, 0x58, 0x20, 0x32, 0x30, 0xBB, 0x0D, 0x0A, 0x1A, 0x0A,
];

const HEADER_LEN: usize = 80;
const LEVEL_ENTRY_LEN: usize = 24;

fn le32(b: &[u8], at: usize) -> u32 {
    u32::from_le_bytes(b[at..at + 4].try_into().expect("4 bytes"))
}

fn le64(b: &[u8], at: usize) -> u64 {
    u64::from_le_bytes(b[at..at + 8].try_into().expect("8 bytes"))
}

/// Level 0's width and height from the header.
pub(super) fn size(bytes: &[u8]) -> Result<(u32, u32), String> {
    if bytes.len() < HEADER_LEN {
        return Err("cut short".into());
    }
    Ok((le32(bytes, 20), le32(bytes, 24).max(1)))
}

/// How the texels of a level are stored.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Codec {
    Rgba8,
    Etc2Rgb8A1,
    Etc2Rgba8,
    Astc(u32, u32),
}

impl Codec {
    /// The codec of a Vulkan format number and whether it is sRGB.
    fn of(vk_format: u32) -> Option<(Codec, bool)> {
        Some(match vk_format {
            37 => (Codec::Rgba8, false),
            43 => (Codec::Rgba8, true),
            149 | 150 => (Codec::Etc2Rgb8A1, vk_format == 150),
            151 | 152 => (Codec::Etc2Rgba8, vk_format == 152),
            157..=184 => {
                let (bw, bh) = astc::FOOTPRINTS[((vk_format - 157) / 2) as usize];
                (Codec::Astc(bw, bh), vk_format.is_multiple_of(2))
            }
            _ => return None,
        })
    }

    fn block(self) -> (u32, u32) {
        match self {
            Codec::Rgba8 => (1, 1),
            Codec::Etc2Rgb8A1 | Codec::Etc2Rgba8 => (4, 4),
            Codec::Astc(bw, bh) => (bw, bh),
        }
    }

    fn block_bytes(self) -> u64 {
        match self {
            Codec::Rgba8 => 4,
            Codec::Etc2Rgb8A1 => 8,
            Codec::Etc2Rgba8 | Codec::Astc(..) => 16,
        }
    }

    fn name(self, srgb: bool) -> String {
        let base = match self {
            Codec::Rgba8 => "RGBA8".to_string(),
            Codec::Etc2Rgb8A1 => "ETC2 RGB8A1".to_string(),
            Codec::Etc2Rgba8 => "ETC2 RGBA8".to_string(),
            Codec::Astc(bw, bh) => format!("ASTC {bw}x{bh}"),
        };
        if srgb {
            format!("{base} sRGB")
        } else {
            base
        }
    }

    /// Bytes of a `w` x `h` level.
    fn level_len(self, w: u32, h: u32) -> u64 {
        let (bw, bh) = self.block();
        w.div_ceil(bw) as u64 * h.div_ceil(bh) as u64 * self.block_bytes()
    }

    /// The alpha of a `w` x `h` level from its bytes ([`Codec::level_len`]).
    fn decode(self, data: &[u8], w: u32, h: u32) -> AlphaMap {
        let n = w as usize * h as usize;
        let alpha_of = |texels: Vec<u32>| texels.iter().map(|&p| (p >> 24) as u8).collect();
        let alpha: Vec<u8> = match self {
            Codec::Rgba8 => data[..4 * n].chunks_exact(4).map(|t| t[3]).collect(),
            Codec::Astc(bw, bh) => return astc::decode_alpha(data, w, h, (bw, bh)),
            Codec::Etc2Rgb8A1 | Codec::Etc2Rgba8 => {
                let mut texels = vec![0u32; n];
                let (w, h) = (w as usize, h as usize);
                if self == Codec::Etc2Rgba8 {
                    texture2ddecoder::decode_etc2_rgba8(data, w, h, &mut texels)
                } else {
                    texture2ddecoder::decode_etc2_rgba1(data, w, h, &mut texels)
                }
                .expect("the caller checked the data length");
                alpha_of(texels)
            }
        };
        AlphaMap::from_raw(w, h, alpha)
    }
}

/// The texture a KTX 2.0 file holds: its format and every level's alpha.
/// The error says what is wrong, in words for the user.
pub(super) fn read_ktx2(bytes: &[u8]) -> Result<(TextureFormat, Vec<AlphaMap>), String> {
    if bytes.len() < HEADER_LEN {
        return Err(format!(
            "it is cut short: it holds {} bytes, fewer than the 80 of a KTX 2.0 header",
            bytes.len()
        ));
    }
    let vk_format = le32(bytes, 12);
    let (w, h, depth) = (le32(bytes, 20), le32(bytes, 24), le32(bytes, 28));
    let (layers, faces, level_count, scheme) = (
        le32(bytes, 32),
        le32(bytes, 36),
        le32(bytes, 40),
        le32(bytes, 44),
    );
    if w == 0 {
        return Err("its header gives a width of 0 texels".into());
    }
    if h == 0 || depth != 0 {
        return Err(format!(
            "it is a {} texture; underdraw reads 2D layers",
            if h == 0 { "1D" } else { "3D" }
        ));
    }
    if layers > 1 || faces != 1 {
        return Err(format!(
            "it is a texture array or cube map ({} layers, {faces} faces); underdraw reads one 2D layer",
            layers.max(1)
        ));
    }
    let levels = level_count.max(1) as usize;
    if levels > 32 {
        return Err(format!(
            "its header claims {level_count} mip levels, more than any 2D texture has"
        ));
    }
    let index_end = HEADER_LEN + levels * LEVEL_ENTRY_LEN;
    if bytes.len() < index_end {
        return Err(format!(
            "it is cut short: its level index for {levels} level(s) ends at byte {index_end}, but the file holds {} bytes",
            bytes.len()
        ));
    }
    for l in 0..levels {
        let at = HEADER_LEN + l * LEVEL_ENTRY_LEN;
        let (offset, len) = (le64(bytes, at), le64(bytes, at + 8));
        if offset
            .checked_add(len)
            .is_none_or(|e| e > bytes.len() as u64)
        {
            return Err(format!(
                "the level index puts level {l}'s data at bytes {offset} to {}, past the end of the file ({} bytes)",
                offset.saturating_add(len),
                bytes.len()
            ));
        }
    }
    match scheme {
        0 | 2 => {}
        1 => return Err("its levels are BasisLZ supercompressed (ETC1S), a format transcoded at load time, which underdraw does not read".into()),
        3 => return Err("its levels are ZLIB supercompressed, which underdraw does not read (it reads Zstandard)".into()),
        n => return Err(format!("its supercompression scheme {n} is not one of the KTX 2.0 schemes")),
    }
    let reader = ktx2::Reader::new(bytes).map_err(|e| match e {
        ktx2::ParseError::UnexpectedEnd => {
            "it is cut short or damaged: its data format descriptor, key/value data or supercompression data lies past the end of the file".to_string()
        }
        other => format!("its header or data format descriptor is damaged ({other})"),
    })?;
    let Some((codec, srgb)) = Codec::of(vk_format) else {
        let uastc = vk_format == 0
            && reader
                .basic_dfd()
                .and_then(|d| d.color_model)
                .is_some_and(|m| m == ktx2::ColorModel::UASTC);
        return Err(if uastc {
            "it holds UASTC texels, a format transcoded at load time, which underdraw does not read"
                .into()
        } else if (1_000_066_000..=1_000_066_013).contains(&vk_format) {
            format!("its format (VkFormat {vk_format}) is ASTC HDR; underdraw reads ASTC LDR")
        } else if (1_000_288_000..=1_000_288_029).contains(&vk_format) {
            format!("its format (VkFormat {vk_format}) has 3D ASTC blocks, a block size underdraw does not decode (it reads the 2D block sizes 4x4 to 12x12)")
        } else {
            format!("its format (VkFormat {vk_format}) is not one underdraw reads")
        });
    };
    let mut out = Vec::with_capacity(levels);
    for (l, level) in reader.levels().enumerate() {
        let (lw, lh) = ((w >> l).max(1), (h >> l).max(1));
        let need = codec.level_len(lw, lh);
        let unpacked;
        let data: &[u8] = if scheme == 2 {
            if level.uncompressed_byte_length != need {
                return Err(format!(
                    "level {l} unpacks to {} bytes by the level index, but a {lw} x {lh} level of {} takes {need}",
                    level.uncompressed_byte_length,
                    codec.name(srgb)
                ));
            }
            let mut buf = vec![0u8; need as usize];
            let written = ruzstd::decoding::FrameDecoder::new()
                .decode_all(level.data, &mut buf)
                .map_err(|e| format!("level {l}'s Zstandard data is damaged ({e})"))?;
            if written as u64 != need {
                return Err(format!(
                    "level {l}'s Zstandard data unpacks to {written} bytes, but a {lw} x {lh} level takes {need}"
                ));
            }
            unpacked = buf;
            &unpacked
        } else {
            level.data
        };
        if (data.len() as u64) < need {
            return Err(format!(
                "it is cut short: level {l} ({lw} x {lh} texels of {}) needs {need} bytes, but its data holds {}",
                codec.name(srgb),
                data.len()
            ));
        }
        out.push(codec.decode(data, lw, lh));
    }
    let format = TextureFormat {
        container: "KTX 2.0",
        codec: codec.name(srgb),
        block: {
            let (bw, bh) = codec.block();
            [bw, bh]
        },
        supercompression: (scheme == 2).then_some("Zstandard"),
    };
    Ok((format, out))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn vulkan_format_numbers_name_their_codecs() {
        // VkFormat values (Vulkan specification, enum VkFormat; from memory):
        // 157 ASTC_4x4_UNORM_BLOCK, 166 ASTC_6x6_SRGB_BLOCK, 184 ASTC_12x12_SRGB_BLOCK,
        // 152 ETC2_R8G8B8A8_SRGB_BLOCK
        assert_eq!(Codec::of(157), Some((Codec::Astc(4, 4), false)));
        assert_eq!(Codec::of(166), Some((Codec::Astc(6, 6), true)));
        assert_eq!(Codec::of(184), Some((Codec::Astc(12, 12), true)));
        assert_eq!(Codec::of(152), Some((Codec::Etc2Rgba8, true)));
        assert_eq!(Codec::of(43), Some((Codec::Rgba8, true)));
        assert_eq!(Codec::of(131), None); // BC1
        assert_eq!(Codec::Astc(6, 6).level_len(13, 7), 3 * 2 * 16);
        assert_eq!(Codec::Etc2Rgb8A1.level_len(5, 4), 2 * 8);
    }
}
