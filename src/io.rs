//! Reading layers and mesh files, writing outputs atomically.
//!
//! Invariants: a PNG is refused from its header (read by hand, see
//! `io/chunks.rs`) when it has no texels or is larger than the [`ImageLimits`]
//! it is loaded with, before anything is decoded or allocated in proportion
//! to its claimed size; the decoder then runs under an allocation limit
//! derived from the same limits. An animated PNG yields its still (`IDAT`)
//! image with a warning in [`Layer::warnings`]. A mesh file larger than
//! [`MAX_MESH_BYTES`] is refused without being read whole. An output is
//! written to a temporary file beside its destination and renamed over it,
//! so a reader never sees half a file; an output path that is one of the
//! inputs is refused.
//!
//! Shipped textures (KTX 2.0 and `.astc` files, `io/texture.rs`) are read
//! to the decoded alpha of every mip level they hold: `io/ktx2.rs` for the
//! container and its supercompression, `io/astc.rs` for ASTC blocks.

mod astc;
mod chunks;
mod folder;
mod ktx2;
mod texture;

pub use folder::{backup_path, staged_path, NamedBytes, OutputFolder};
pub use texture::{decode_texture, is_texture, load_texture, LevelsError, Texture, TextureFormat};

use crate::alpha::AlphaMap;
use crate::error::{FileError, Setting};
use crate::mesh::LayerMesh;
use image::{DynamicImage, ImageFormat, ImageReader, Limits, RgbaImage};
use std::fs;
use std::io::{Cursor, Read, Write};
use std::path::Path;

/// Largest layer accepted by default, per side.
pub const MAX_SIDE: u32 = 16384;

/// Most texels accepted by default (16384 x 16384 = 268,435,456).
pub const MAX_PIXELS: u64 = 16384 * 16384;

/// The largest layer a run accepts, checked from the PNG header before the
/// image is decoded, so a crafted header cannot make underdraw allocate
/// more than the limits allow.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ImageLimits {
    /// Most texels per side.
    pub max_side: u32,
    /// Most texels in all (width x height).
    pub max_pixels: u64,
}

impl Default for ImageLimits {
    fn default() -> Self {
        ImageLimits {
            max_side: MAX_SIDE,
            max_pixels: MAX_PIXELS,
        }
    }
}

/// Largest mesh file accepted: far above any budget's mesh (a 256-vertex
/// mesh file is a few tens of kilobytes).
pub const MAX_MESH_BYTES: u64 = 64 << 20;

/// A decoded layer: its alpha channel and what the user should know about
/// the file (for example that only the first frame of an animation was
/// read).
#[derive(Clone, Debug)]
pub struct Layer {
    /// The layer's alpha channel.
    pub alpha: AlphaMap,
    /// Plain-language warnings about the file, each a whole sentence that
    /// starts with the file's path (print it as it is); empty for a plain
    /// PNG.
    pub warnings: Vec<String>,
}

/// Reads a PNG layer and keeps its alpha channel, with the default limits.
pub fn load_alpha(path: &Path) -> Result<AlphaMap, FileError> {
    load_layer(path, &ImageLimits::default()).map(|l| l.alpha)
}

/// Reads a PNG layer within `limits`.
pub fn load_layer(path: &Path, limits: &ImageLimits) -> Result<Layer, FileError> {
    decode_layer(path, &read_input(path)?, limits)
}

/// Decodes PNG bytes with the default limits (`path` only names them in
/// errors).
pub fn decode_alpha(path: &Path, bytes: &[u8]) -> Result<AlphaMap, FileError> {
    decode_layer(path, bytes, &ImageLimits::default()).map(|l| l.alpha)
}

/// Decodes PNG bytes within `limits` (`path` only names them in errors).
pub fn decode_layer(path: &Path, bytes: &[u8], limits: &ImageLimits) -> Result<Layer, FileError> {
    let (image, warnings) = decode_png(path, bytes, limits)?;
    Ok(Layer {
        alpha: AlphaMap::from_image(&image),
        warnings,
    })
}

/// Decodes PNG bytes within `limits` to 8-bit RGBA (for pictures drawn
/// over the layer, such as previews), with the checks of [`decode_layer`].
pub fn decode_rgba(
    path: &Path,
    bytes: &[u8],
    limits: &ImageLimits,
) -> Result<RgbaImage, FileError> {
    decode_png(path, bytes, limits).map(|(image, _)| image.to_rgba8())
}

/// Reads a PNG layer within `limits` as 8-bit RGBA ([`decode_rgba`]).
pub fn load_rgba(path: &Path, limits: &ImageLimits) -> Result<RgbaImage, FileError> {
    decode_rgba(path, &read_input(path)?, limits)
}

/// What a layer file holds: a PNG's alpha, or a shipped texture's levels
/// (KTX 2.0 or `.astc`, told apart by the file's first bytes).
#[derive(Clone, Debug)]
pub enum LayerFile {
    /// A PNG layer ([`decode_layer`]).
    Png(Layer),
    /// A shipped texture ([`decode_texture`]).
    Texture(Texture),
}

impl LayerFile {
    /// Level 0's alpha (the PNG's, or the texture's level 0) with the
    /// warnings about the file.
    pub fn into_layer(self) -> Layer {
        match self {
            LayerFile::Png(layer) => layer,
            LayerFile::Texture(t) => Layer {
                alpha: t.levels.into_iter().next().expect("a texture has a level"),
                warnings: Vec::new(),
            },
        }
    }
}

/// Reads a layer file within `limits`: a shipped texture when its first
/// bytes say so ([`is_texture`]), else a PNG. The one entry for a layer
/// that may ship compressed.
///
/// ```
/// use underdraw::io::{read_layer_file, ImageLimits, LayerFile};
/// let dir = std::env::temp_dir().join(format!("underdraw-doc-read-{}", std::process::id()));
/// std::fs::create_dir_all(&dir).unwrap();
/// // a 4 x 2 PNG: opaque on the left half, transparent on the right
/// let path = dir.join("half.png");
/// image::RgbaImage::from_fn(4, 2, |x, _| image::Rgba([9, 9, 9, if x < 2 { 255 } else { 0 }]))
///     .save(&path)
///     .unwrap();
/// let LayerFile::Png(layer) = read_layer_file(&path, &ImageLimits::default()).unwrap() else {
///     panic!("a PNG is read as a PNG layer");
/// };
/// assert_eq!((layer.alpha.width, layer.alpha.height), (4, 2));
/// assert_eq!(layer.alpha.alpha, [255, 255, 0, 0, 255, 255, 0, 0]);
/// assert!(layer.warnings.is_empty());
/// // a file that is neither: the error names it and says what is wrong
/// std::fs::write(dir.join("notes.png"), b"not an image").unwrap();
/// let e = read_layer_file(&dir.join("notes.png"), &ImageLimits::default()).unwrap_err();
/// assert!(e.to_string().contains("notes.png"));
/// std::fs::remove_dir_all(&dir).unwrap();
/// ```
pub fn read_layer_file(path: &Path, limits: &ImageLimits) -> Result<LayerFile, FileError> {
    let bytes = read_input(path)?;
    if is_texture(&bytes) {
        decode_texture(path, &bytes, limits).map(LayerFile::Texture)
    } else {
        decode_layer(path, &bytes, limits).map(LayerFile::Png)
    }
}

/// Reads an input file whole, or says why it cannot be read.
pub fn read_input(path: &Path) -> Result<Vec<u8>, FileError> {
    fs::read(path).map_err(|e| {
        FileError::new(
            path,
            format!("cannot be read ({e})"),
            "check the path and the file's permissions",
        )
    })
}

/// The width and height of the image at `path` from its header (any
/// format the image crate reads; nothing is decoded), or of a shipped
/// texture's level 0 (decoded within the default limits): what a mesh
/// file's `size` is checked against.
pub fn image_size(path: &Path) -> Result<(u32, u32), FileError> {
    let mut head = [0u8; 16];
    let n = fs::File::open(path)
        .and_then(|mut f| f.read(&mut head))
        .unwrap_or(0);
    if is_texture(&head[..n]) {
        return load_texture(path, &ImageLimits::default()).map(|t| t.size());
    }
    ImageReader::open(path)
        .and_then(|r| r.with_guessed_format())
        .map_err(|e| e.to_string())
        .and_then(|r| r.into_dimensions().map_err(|e| e.to_string()))
        .map_err(|e| {
            FileError::new(
                path,
                format!("cannot be read as an image ({e})"),
                "export the layer as PNG",
            )
        })
}

/// The one PNG decode: the header checked against `limits` before
/// anything large is allocated, then the decode under an allocation limit;
/// with the warnings about the file.
fn decode_png(
    path: &Path,
    bytes: &[u8],
    limits: &ImageLimits,
) -> Result<(DynamicImage, Vec<String>), FileError> {
    if bytes.is_empty() {
        return Err(FileError::new(
            path,
            "is empty (0 bytes)",
            "re-export the layer as a PNG",
        ));
    }
    let reader = ImageReader::new(Cursor::new(bytes))
        .with_guessed_format()
        .map_err(|e| FileError::new(path, format!("cannot be read ({e})"), "check the file"))?;
    match reader.format() {
        Some(ImageFormat::Png) => {}
        Some(other) => {
            return Err(FileError::new(
                path,
                format!(
                    "is a {} image, not a PNG",
                    format!("{other:?}").to_uppercase()
                ),
                "underdraw reads PNG layers (lossless alpha): export the layer as PNG",
            ))
        }
        None => {
            return Err(FileError::new(
                path,
                "is not a PNG image (its first bytes are not the PNG signature)",
                "export the layer as PNG",
            ))
        }
    }
    // the size from the header alone, before anything large is allocated
    let header = chunks::read_header(bytes).map_err(|why| {
        FileError::new(
            path,
            format!("is a damaged PNG: {why}"),
            "re-export the layer from your art tool",
        )
    })?;
    let (w, h) = (header.width, header.height);
    if w == 0 || h == 0 {
        return Err(FileError::new(
            path,
            format!("has no texels: its header says {w} x {h}"),
            "export a layer at least 1 x 1 texel",
        ));
    }
    let pixels = w as u64 * h as u64;
    if w > limits.max_side || h > limits.max_side || pixels > limits.max_pixels {
        let (limit, hint) = if w > limits.max_side || h > limits.max_side {
            (
                format!("over the limit of {} texels per side", limits.max_side),
                format!(
                    "split the layer into tiles of at most {0} x {0} texels (few GPUs sample larger textures)",
                    limits.max_side
                ),
            )
        } else {
            (
                format!("over the limit of {} texels in all", limits.max_pixels),
                format!(
                    "split the layer into smaller tiles, or raise the limit with {}",
                    Setting::MaxTexels
                ),
            )
        };
        return Err(FileError::new(
            path,
            format!(
                "is {w} x {h} texels ({pixels} in all) by its header, {limit}; it was refused before decoding"
            ),
            hint,
        ));
    }
    let mut reader = reader;
    let mut decode_limits = Limits::default();
    decode_limits.max_image_width = Some(limits.max_side);
    decode_limits.max_image_height = Some(limits.max_side);
    // the largest decoded form: 16-bit RGBA, 8 bytes a texel, plus slack
    decode_limits.max_alloc = Some(pixels.saturating_mul(8).saturating_add(64 << 20));
    reader.limits(decode_limits);
    let image = reader.decode().map_err(|e| match e {
        image::ImageError::Limits(_) => FileError::new(
            path,
            format!("is {w} x {h} texels, too large to decode within the limits"),
            format!(
                "split the layer into smaller tiles, or raise the limit with {}",
                Setting::MaxTexels
            ),
        ),
        other => match chunks::diagnose(bytes) {
            Some(why) => FileError::new(
                path,
                format!("is a damaged PNG: {why}"),
                "copy the file again from where it was exported, or re-export the layer",
            ),
            None => FileError::new(
                path,
                format!("is a damaged or unsupported PNG ({other})"),
                "re-export the layer from your art tool",
            ),
        },
    })?;
    let mut warnings = Vec::new();
    if let Some(a) = header.animation {
        let frames = match a.frames {
            1 => "1 frame".to_string(),
            n => format!("{n} frames"),
        };
        warnings.push(if a.still_is_first_frame {
            format!(
                "{} is an animated PNG ({frames}): only its first frame is cut",
                path.display()
            )
        } else {
            format!(
                "{} is an animated PNG ({frames}) with a still image outside the animation: only the still image is cut",
                path.display()
            )
        });
    }
    Ok((image, warnings))
}

/// Reads a mesh file.
pub fn load_mesh(path: &Path) -> Result<LayerMesh, FileError> {
    let cannot =
        |e: std::io::Error| FileError::new(path, format!("cannot be read ({e})"), "check the path");
    let mut bytes = Vec::new();
    fs::File::open(path)
        .and_then(|f| f.take(MAX_MESH_BYTES + 1).read_to_end(&mut bytes))
        .map_err(cannot)?;
    if bytes.len() as u64 > MAX_MESH_BYTES {
        return Err(FileError::new(
            path,
            format!(
                "is larger than {} MiB, too large for a layer mesh file",
                MAX_MESH_BYTES >> 20
            ),
            "give a .mesh.json file written by `underdraw cut` (a few tens of kilobytes at most)",
        ));
    }
    let mesh = serde_json::from_slice::<LayerMesh>(&bytes).map_err(|e| {
        FileError::new(
            path,
            format!("is not a valid underdraw mesh file: {e}"),
            "give a .mesh.json file written by `underdraw cut`",
        )
    })?;
    // a key renamed since version 1 would otherwise be skipped in silence
    // (`stats` takes unknown keys, so older readers can read newer files)
    #[derive(serde::Deserialize)]
    struct Probe {
        #[serde(default)]
        stats: std::collections::BTreeMap<String, serde::de::IgnoredAny>,
    }
    if let Ok(probe) = serde_json::from_slice::<Probe>(&bytes) {
        for (old, new) in crate::mesh::RENAMED_STATS_KEYS {
            if probe.stats.contains_key(old) {
                return Err(FileError::new(
                    path,
                    format!(
                        "has the key stats.{old}, which mesh file version {} renamed stats.{new}",
                        crate::mesh::VERSION
                    ),
                    "cut the layer again with this underdraw (or rename the key and set \"version\" to 2)",
                ));
            }
        }
    }
    Ok(mesh)
}

/// Writes `bytes` to `dest` atomically: a temporary file in the same folder,
/// synced, then renamed over `dest`.
pub fn write_atomic(dest: &Path, bytes: &[u8]) -> Result<(), FileError> {
    let dir = dest
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = dest
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let tmp = dir.join(format!(".{name}.tmp{}", std::process::id()));
    let fail = |e: std::io::Error| {
        FileError::new(
            dest,
            format!("cannot be written ({e})"),
            "check that the output folder exists and is writable",
        )
    };
    let result = (|| {
        let mut f = fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        fs::rename(&tmp, dest)
    })();
    if let Err(e) = result {
        let _ = fs::remove_file(&tmp);
        return Err(fail(e));
    }
    Ok(())
}

/// Writes `bytes` to `dest` atomically (as [`write_atomic`]) unless `dest`
/// already holds exactly these bytes, in which case the file is left alone:
/// its modification time stays, so a file watcher or an engine's importer
/// sees no change. Returns whether it wrote.
pub fn write_if_changed(dest: &Path, bytes: &[u8]) -> Result<bool, FileError> {
    if same_bytes(dest, bytes) {
        return Ok(false);
    }
    write_atomic(dest, bytes)?;
    Ok(true)
}

/// Whether the file at `path` exists and holds exactly `bytes` (read only
/// when its length matches).
pub(crate) fn same_bytes(path: &Path, bytes: &[u8]) -> bool {
    match fs::metadata(path) {
        Ok(m) if m.is_file() && m.len() == bytes.len() as u64 => {
            fs::read(path).is_ok_and(|b| b == bytes)
        }
        _ => false,
    }
}
