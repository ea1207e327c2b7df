//! Reading layers and mesh files, writing outputs atomically.
//!
//! Invariants: a PNG is refused from its header when it is larger than the
//! limits, before any large allocation; an output is written to a temporary
//! file beside its destination and renamed over it, so a reader never sees
//! half a file; an output path that is one of the inputs is refused.

use crate::alpha::AlphaMap;
use crate::error::FileError;
use crate::mesh::LayerMesh;
use image::{ImageFormat, ImageReader, Limits};
use std::fs;
use std::io::{Cursor, Write};
use std::path::Path;

/// Largest layer accepted, per side.
pub const MAX_SIDE: u32 = 16384;

/// Reads a PNG layer and keeps its alpha channel.
pub fn load_alpha(path: &Path) -> Result<AlphaMap, FileError> {
    let bytes = fs::read(path).map_err(|e| {
        FileError::new(
            path,
            format!("cannot be read ({e})"),
            "check the path and the file's permissions",
        )
    })?;
    decode_alpha(path, &bytes)
}

/// Decodes PNG bytes (`path` only names them in errors).
pub fn decode_alpha(path: &Path, bytes: &[u8]) -> Result<AlphaMap, FileError> {
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
                format!("is a {other:?} image, not a PNG"),
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
    let mut reader = reader;
    let mut limits = Limits::default();
    limits.max_image_width = Some(MAX_SIDE);
    limits.max_image_height = Some(MAX_SIDE);
    limits.max_alloc = Some(6 * 1024 * 1024 * 1024);
    reader.limits(limits);
    let image = reader.decode().map_err(|e| match e {
        image::ImageError::Limits(_) => FileError::new(
            path,
            format!("is larger than {MAX_SIDE} x {MAX_SIDE} texels"),
            "split the layer into tiles no larger than that",
        ),
        other => FileError::new(
            path,
            format!("is a damaged or unsupported PNG ({other})"),
            "re-export the layer from your art tool",
        ),
    })?;
    if image.width() == 0 || image.height() == 0 {
        return Err(FileError::new(
            path,
            "has no texels (zero width or height)",
            "export a non-empty layer",
        ));
    }
    Ok(AlphaMap::from_image(&image))
}

/// Reads a mesh file.
pub fn load_mesh(path: &Path) -> Result<LayerMesh, FileError> {
    let text = fs::read_to_string(path)
        .map_err(|e| FileError::new(path, format!("cannot be read ({e})"), "check the path"))?;
    serde_json::from_str(&text).map_err(|e| {
        FileError::new(
            path,
            format!("is not a valid underdraw mesh file: {e}"),
            "give a .mesh.json file written by `underdraw cut`",
        )
    })
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
