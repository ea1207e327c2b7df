//! One layer of a batch: read, decide whether it changed, cut, encode every
//! output, commit them together.
//!
//! Invariants: the outputs' bytes depend only on the input's bytes, the
//! effective settings, the file name of the input (recorded in the mesh as
//! `source`, in the glTF asset as its name) and, for glTF, the input's path
//! relative to the output folder (the image URI); nothing is written for a
//! layer until all of its outputs are encoded; a panic inside the work is
//! caught by [`catch_layer`] and becomes that layer's error.

use super::manifest::{sha256_hex, Entry, LayerResult, OutputFile};
use super::{Job, Outputs};
use crate::alpha::Sampled;
use crate::cut::{cut_layer, cut_sampled};
use crate::error::{FileError, Setting};
use crate::export::gltf::{format_refusal, glb_file, gltf_files, malformed, relative_uri};
use crate::io::{decode_layer, decode_rgba, decode_texture, is_texture, ImageLimits, OutputFolder};
use std::path::{Path, PathBuf};

/// Widest preview written, pixels.
pub const PREVIEW_WIDTH: u32 = 1024;

/// Runs `work` for the layer `input`; a panic inside it becomes a
/// [`FileError`] naming the layer: "internal error while cutting:
/// `<message>`; please report it with this file".
///
/// ```
/// use std::path::Path;
/// use underdraw::batch::catch_layer;
/// let ok = catch_layer(Path::new("a.png"), || Ok(2 + 2));
/// assert_eq!(ok.unwrap(), 4);
/// ```
pub fn catch_layer<T>(
    input: &Path,
    work: impl FnOnce() -> Result<T, FileError>,
) -> Result<T, FileError> {
    match std::panic::catch_unwind(std::panic::AssertUnwindSafe(work)) {
        Ok(r) => r,
        Err(payload) => {
            let msg = payload
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| payload.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "a panic without a message".into());
            Err(FileError::new(
                input,
                format!("internal error while cutting: {msg}"),
                "please report it with this file",
            ))
        }
    }
}

/// What became of a layer that did not fail.
pub(crate) struct Done {
    /// False when it was unchanged and skipped.
    pub cut: bool,
    pub entry: Entry,
}

/// The output files of `job` under `out`, relative to `out` with `/`.
pub(crate) fn output_names(job: &Job, outputs: Outputs) -> Vec<String> {
    let base = &job.key;
    let mut v = Vec::new();
    if outputs.json {
        v.push(format!("{base}.mesh.json"));
    }
    if outputs.gltf {
        // the .bin first, so a reader never sees a new .gltf with an old .bin
        v.push(format!("{base}.bin"));
        v.push(format!("{base}.gltf"));
    }
    if outputs.glb {
        v.push(format!("{base}.glb"));
    }
    if outputs.preview {
        v.push(format!("{base}.preview.png"));
    }
    v
}

/// Cuts `job` into `out` unless `previous` shows it unchanged (and not `force`).
pub(crate) fn run_layer(
    job: &Job,
    out: &Path,
    outputs: Outputs,
    limits: &ImageLimits,
    previous: Option<&Entry>,
    force: bool,
) -> Result<Done, FileError> {
    let bytes = std::fs::read(&job.input).map_err(|e| {
        FileError::new(
            &job.input,
            format!("cannot be read ({e})"),
            "check the path and the file's permissions",
        )
    })?;
    let dir = out
        .join(&job.key)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or(out.to_path_buf());
    std::fs::create_dir_all(&dir).map_err(|e| {
        FileError::new(
            &dir,
            format!("the output folder cannot be created ({e})"),
            format!(
                "check that {} is writable and no file stands where this folder should be",
                Setting::Out
            ),
        )
    })?;
    let image_uri = if outputs.gltf || outputs.glb {
        Some(relative_uri(&dir, &job.input).ok_or_else(|| {
            FileError::new(
                &job.input,
                format!(
                    "has no path relative to the output folder {} for the glTF image URI",
                    dir.display()
                ),
                format!(
                    "put the {} folder on the same drive as the layers",
                    Setting::Out
                ),
            )
        })?)
    } else {
        None
    };
    let mut settings = serde_json::json!({
        "cut": job.settings,
        "outputs": outputs,
        "image_uri": image_uri,
    });
    let texture_bytes = match &job.texture {
        Some(t) => {
            let b = std::fs::read(t).map_err(|e| {
                FileError::new(
                    t,
                    format!("cannot be read ({e})"),
                    "check the path and the file's permissions",
                )
            })?;
            // the texture is an input too: a new texture cuts the layer again
            settings["texture"] = serde_json::json!({
                "path": t.display().to_string(),
                "sha256": sha256_hex(&b),
            });
            Some((t, b))
        }
        None => None,
    };
    let input_sha256 = sha256_hex(&bytes);
    let version = env!("CARGO_PKG_VERSION");
    if let Some(prev) = previous.filter(|_| !force) {
        if prev.input_sha256 == input_sha256
            && prev.settings == settings
            && prev.underdraw == version
            && prev.outputs_intact(out)
        {
            let mut entry = prev.clone();
            entry.input = job.relative.clone();
            return Ok(Done { cut: false, entry });
        }
    }
    let dests: Vec<PathBuf> = output_names(job, outputs)
        .iter()
        .map(|n| out.join(n))
        .collect();
    if dests.iter().any(|d| same_file(d, &job.input)) {
        return Err(FileError::new(
            &job.input,
            "would be overwritten by its own output file",
            format!("choose another {} folder", Setting::Out),
        ));
    }
    let name = job
        .input
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let input_is_texture = is_texture(&bytes);
    let (layer, texture) = if input_is_texture {
        if outputs.preview {
            return Err(FileError::new(
                &job.input,
                "is a compressed texture, and previews are drawn from the PNG",
                format!(
                    "cut the PNG with {} pointing to this file to get a preview, or leave out {}",
                    Setting::Texture,
                    Setting::Preview
                ),
            ));
        }
        if image_uri.is_some() {
            return Err(FileError::new(
                &job.input,
                "is a compressed texture, and a glTF asset's image must be a PNG or JPEG (core glTF 2.0)",
                format!("cut the PNG with {} pointing to this file to get a glTF asset, or use {}", Setting::Texture, Setting::Format.given("json")),
            ));
        }
        let t = decode_texture(&job.input, &bytes, limits)?;
        (None, Some((job.input.as_path(), t)))
    } else {
        let layer = decode_layer(&job.input, &bytes, limits)?;
        let t = match &texture_bytes {
            Some((path, b)) => Some((path.as_path(), decode_texture(path, b, limits)?)),
            None => None,
        };
        (Some(layer), t)
    };
    let mut notes = Vec::new();
    let outcome = match &texture {
        None => cut_layer(
            &layer.as_ref().expect("a PNG layer").alpha,
            &name,
            &job.settings,
        ),
        Some((path, t)) => {
            let mip = job.settings.filter.mip_levels;
            let levels = t.levels_for(mip).map_err(|why| {
                FileError::new(
                    path,
                    why,
                    format!("lower {} to the levels the texture holds, or export it with a full mip chain of sizes W / 2^l", Setting::MipLevels),
                )
            })?;
            let sampled = Sampled {
                source: layer.as_ref().map(|l| &l.alpha),
                shipped: levels,
            };
            sampled.validate().map_err(|why| {
                FileError::new(
                    path,
                    why.to_string(),
                    "give the texture compressed from this layer, at its size",
                )
            })?;
            notes.push(t.guarantee_note(mip));
            if t.levels.len() as u32 > mip + 1 {
                notes.push(format!(
                    "the texture holds {} mip levels; the meshes are safe for levels 0 to {mip} only (pass {} if the GPU samples them all)",
                    t.levels.len(),
                    Setting::MipLevels.given(t.levels.len() - 1)
                ));
            }
            cut_sampled(sampled, &name, &job.settings)
        }
    };
    let warnings = layer.map(|l| l.warnings).unwrap_or_default();
    let mesh = &outcome.mesh;
    let base = &job.key;
    // (path relative to `out`, bytes), in the order of `output_names`
    let mut files: Vec<(String, Vec<u8>)> = Vec::new();
    if outputs.json {
        let json = serde_json::to_vec_pretty(mesh).expect("a mesh serializes");
        files.push((format!("{base}.mesh.json"), json));
    }
    if let Some(uri) = &image_uri {
        if let Some(why) = malformed(mesh) {
            return Err(FileError::new(
                &job.input,
                format!("cannot be exported to glTF: its mesh is malformed ({why})"),
                "please report it with this file",
            ));
        }
        if let Some(why) = format_refusal(mesh, outputs.vertex_format) {
            return Err(FileError::new(
                &job.input,
                format!(
                    "cannot be exported to glTF with {} vertices: {why}",
                    outputs.vertex_format.name()
                ),
                format!("export it with {}", Setting::VertexFormat.given("f32")),
            ));
        }
        // the glTF files beside the mesh file, in the key's subfolder
        let folder = base
            .strip_suffix(job.stem.as_str())
            .expect("a job's key ends with its stem");
        let (at, format) = (dir.as_path(), outputs.vertex_format);
        if outputs.gltf {
            for (name, bytes) in gltf_files(mesh, uri, at, &job.stem, format)? {
                files.push((format!("{folder}{name}"), bytes));
            }
        }
        if outputs.glb {
            let (name, bytes) = glb_file(mesh, uri, at, &job.stem, format)?;
            files.push((format!("{folder}{name}"), bytes));
        }
    }
    if outputs.preview {
        let rgba = decode_rgba(&job.input, &bytes, limits)?;
        let img = crate::preview::render_preview(&rgba, mesh, PREVIEW_WIDTH);
        files.push((
            format!("{base}.preview.png"),
            crate::present::png::rgba_png(img),
        ));
    }
    let recorded: Vec<OutputFile> = files
        .iter()
        .map(|(rel, data)| OutputFile {
            path: rel.clone(),
            sha256: sha256_hex(data),
        })
        .collect();
    let inputs = std::iter::once(job.input.clone())
        .chain(job.texture.clone())
        .collect();
    OutputFolder::open(out, inputs)
        .with_refusal(
            "would be overwritten by its own output file",
            &format!("choose another {} folder", Setting::Out),
        )
        .commit(&files)?;
    let s = &mesh.stats;
    let entry = Entry {
        input: job.relative.clone(),
        input_sha256,
        underdraw: version.into(),
        settings,
        outputs: recorded,
        result: LayerResult {
            vertices: s.vertices,
            opaque_capture: s.opaque_capture(),
            excess: s.excess(),
            must_cover_area: s.must_cover_area,
            safe_opaque_area: Some(s.safe_opaque_area),
            opaque_texels: Some(s.opaque_texels),
            notes: notes.into_iter().chain(outcome.notes).collect(),
            warnings,
        },
    };
    Ok(Done { cut: true, entry })
}

/// Whether two paths name the same existing file.
fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_panic_becomes_the_layers_error_with_its_message() {
        let input = Path::new("in/town/houses.png");
        let r: Result<(), FileError> = catch_layer(input, || panic!("index {} out of range", 7));
        let e = r.unwrap_err();
        assert_eq!(e.path, input);
        assert_eq!(
            e.problem,
            "internal error while cutting: index 7 out of range"
        );
        assert!(e.hint.contains("report it with this file"));
        // a static message too, and an error returned without a panic stays as it is
        let r: Result<(), FileError> = catch_layer(input, || panic!("plain"));
        assert!(r.unwrap_err().problem.ends_with(": plain"));
        let r: Result<(), FileError> = catch_layer(input, || {
            Err(FileError::new(input, "is empty", "re-export it"))
        });
        assert_eq!(r.unwrap_err().problem, "is empty");
    }
}
