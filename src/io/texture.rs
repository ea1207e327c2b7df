//! Shipped textures: the decoded alpha of every mip level a KTX 2.0 file
//! (`io/ktx2.rs`) or a raw `.astc` file (`io/astc.rs`) holds, which is what
//! the GPU samples once the layer ships compressed.
//!
//! Invariants of a [`Texture`]: at least one level; level l is
//! max(1, floor(W / 2^l)) x max(1, floor(H / 2^l)) texels (the KTX 2.0 rule
//! for level sizes); no level is larger than the [`ImageLimits`] it was
//! read with. Which levels the regions can be built from exactly is a
//! separate question ([`Texture::levels_for`]).

use super::{astc, ktx2, ImageLimits};
use crate::alpha::AlphaMap;
use crate::error::{FileError, Setting};
use std::path::Path;

/// What a texture file holds, for the report and the `cut` line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TextureFormat {
    /// The container: "KTX 2.0" or ".astc file".
    pub container: &'static str,
    /// The texel encoding, e.g. "ASTC 6x6 sRGB", "ETC2 RGBA8", "RGBA8".
    pub codec: String,
    /// The compression block's width and height in texels (1 x 1 when
    /// uncompressed).
    pub block: [u32; 2],
    /// The supercompression the levels were stored with ("Zstandard"), if any.
    pub supercompression: Option<&'static str>,
}

/// A shipped texture: its format and the decoded alpha of each level it
/// holds, level 0 first.
#[derive(Clone, Debug)]
pub struct Texture {
    /// How the file stores the texels.
    pub format: TextureFormat,
    /// Decoded alpha per mip level, level 0 first.
    pub levels: Vec<AlphaMap>,
}

impl Texture {
    /// Level 0's width and height.
    pub fn size(&self) -> (u32, u32) {
        (self.levels[0].width, self.levels[0].height)
    }

    /// Levels 0..=`highest` for a cut or check, or why not: the file must
    /// hold them, and each level's texel must span a whole number of level-0
    /// texels on each axis (W and H multiples of that level's size), so the
    /// regions' boundaries stay on the half-texel grid.
    pub fn levels_for(&self, highest: u32) -> Result<&[AlphaMap], String> {
        let held = self.levels.len() as u32;
        if highest >= held {
            return Err(format!(
                "holds {held} mip level(s) (0 to {}), but the guarantee was asked for levels 0 to {highest}",
                held - 1
            ));
        }
        let (w, h) = self.size();
        for (l, m) in self.levels[..=highest as usize].iter().enumerate() {
            if w % m.width != 0 || h % m.height != 0 {
                return Err(format!(
                    "its mip level {l} is {} x {} texels for a level 0 of {w} x {h}: a level-{l} texel does not span a whole number of level-0 texels, so the sampled regions are not exact on the half-texel grid",
                    m.width, m.height
                ));
            }
        }
        Ok(&self.levels[..=highest as usize])
    }

    /// One line for the report: format, block size, levels used of those held.
    pub fn describe(&self, highest: u32) -> String {
        let f = &self.format;
        let sc = f
            .supercompression
            .map(|s| format!(", {s}"))
            .unwrap_or_default();
        format!(
            "{} ({}, blocks {}x{}{sc}), mip levels 0 to {highest} of {}",
            f.codec,
            f.container,
            f.block[0],
            f.block[1],
            self.levels.len()
        )
    }

    /// The note a cut from this texture carries (the `cut` line, a scene
    /// layer's notes): the format, block size and levels the guarantee was
    /// computed for.
    pub fn guarantee_note(&self, highest: u32) -> String {
        format!("guarantee computed for {}", self.describe(highest))
    }
}

/// Whether `bytes` start like a texture file this module reads (KTX 2.0 or
/// `.astc`), rather than a PNG.
pub fn is_texture(bytes: &[u8]) -> bool {
    bytes.starts_with(&ktx2::IDENTIFIER) || bytes.starts_with(&astc::MAGIC)
}

/// Reads a texture file: a KTX 2.0 file or a raw `.astc` file, by its first
/// bytes.
pub fn load_texture(path: &Path, limits: &ImageLimits) -> Result<Texture, FileError> {
    let bytes = std::fs::read(path).map_err(|e| {
        FileError::new(
            path,
            format!("cannot be read ({e})"),
            "check the path and the file's permissions",
        )
    })?;
    decode_texture(path, &bytes, limits)
}

/// Decodes a texture file's bytes (`path` only names them in errors).
pub fn decode_texture(
    path: &Path,
    bytes: &[u8],
    limits: &ImageLimits,
) -> Result<Texture, FileError> {
    let (is_ktx, what) = if bytes.starts_with(&ktx2::IDENTIFIER) {
        (true, "KTX 2.0 file")
    } else if bytes.starts_with(&astc::MAGIC) {
        (false, ".astc file")
    } else {
        return Err(FileError::new(
            path,
            "is neither a KTX 2.0 file nor an .astc file (its first bytes are neither's identifier)",
            "give the compressed texture as .ktx2 (KTX 2.0) or .astc",
        ));
    };
    // the size from the header, checked before any level is decoded
    let size = if is_ktx {
        ktx2::size(bytes)
    } else {
        astc::read_header(bytes).map(|h| h.size)
    };
    if let Ok((w, h)) = size {
        if w > limits.max_side || h > limits.max_side || w as u64 * h as u64 > limits.max_pixels {
            return Err(FileError::new(
                path,
                format!("is {w} x {h} texels by its header, over the limits; it was refused before decoding"),
                format!("split the layer into smaller tiles, or raise the limit with {}", Setting::MaxTexels),
            ));
        }
    }
    let read = if is_ktx {
        ktx2::read_ktx2(bytes)
    } else {
        astc::read_astc(bytes)
    };
    let (format, levels) = read.map_err(|why| {
        let hint = if why.contains("cut short") || why.contains("past the end") {
            "copy the file again from where it was exported, or export the texture again"
        } else if why.contains("BasisLZ") || why.contains("UASTC") {
            "export the texture as ASTC (4x4 to 12x12), ETC2 RGBA8 or RGB8A1, or RGBA8: underdraw reads the texels the GPU samples, not a format transcoded at load time"
        } else if why.contains("block size") || why.contains("format") || why.contains("3D") {
            "export the texture as 2D ASTC LDR (4x4 to 12x12), ETC2 RGBA8, ETC2 RGB8A1 or RGBA8 (UNORM or sRGB)"
        } else {
            "export the texture again from your texture tool"
        };
        FileError::new(path, format!("is a {what} underdraw cannot read: {why}"), hint)
    })?;
    Ok(Texture { format, levels })
}
