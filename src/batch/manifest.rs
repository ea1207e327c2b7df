//! The batch manifest, `OUT/underdraw-manifest.json`: what each layer was
//! cut from, with which settings, and what it wrote.
//!
//! ```text
//! {"format": "underdraw.manifest", "version": 1,
//!  "layers": {"town/houses": {                 // the outputs' path in OUT, no extension
//!     "input": "town/houses.png",              // relative to its input folder
//!     "input_sha256": "9f86d0…",
//!     "underdraw": "0.1.0",
//!     "settings": {"cut": {...}, "outputs": {...}, "image_uri": "../in/town/houses.png"},
//!     "outputs": [{"path": "town/houses.mesh.json", "sha256": "…"}],
//!     "result": {"vertices": 48, "opaque_capture": 0.9, "excess": 120.0, ...}}},
//!  "sheets": {"ui/atlas": {                    // a sprite sheet cut by its regions (absent without)
//!     "input": "ui/atlas.png", "input_sha256": "…", "regions_sha256": "…",
//!     "underdraw": "0.1.0", "settings": {"regions": [{...}, ...], ...},
//!     "outputs": [{"path": "atlas/r0.mesh.json", "sha256": "…"}],
//!     "regions": [{"name": "r0", "outputs": ["atlas/r0.mesh.json"], "result": {...}}]}}}
//! ```
//!
//! Invariants: hashes are SHA-256 (FIPS 180-4) of the file bytes, in lower
//! case hex; paths use `/`; the layers are kept sorted by key, so the same
//! entries always serialize to the same bytes; an entry is recorded only
//! after all its outputs were renamed into place, so its hashes describe
//! files that were whole and complete together.

use crate::error::FileError;
use crate::io::OutputFolder;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::collections::BTreeMap;
use std::path::Path;

/// The manifest's file name in the output folder.
pub const FILE_NAME: &str = "underdraw-manifest.json";
/// The manifest's `format`.
pub const FORMAT: &str = "underdraw.manifest";
/// The manifest's `version`.
pub const VERSION: u32 = 1;

/// SHA-256 of `bytes`, as lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// One output file of a layer.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutputFile {
    /// Relative to the output folder, `/` separators.
    pub path: String,
    /// SHA-256 of its bytes.
    pub sha256: String,
}

/// What the batch prints about a layer, kept so an unchanged layer prints
/// the same line without being cut again.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LayerResult {
    /// Vertices of the two meshes together.
    pub vertices: usize,
    /// Opaque area / safe-opaque area.
    pub opaque_capture: f64,
    /// Covered area beyond the must-cover region, texels.
    pub excess: f64,
    /// The must-cover area, texels.
    pub must_cover_area: f64,
    /// The safe-opaque area, texels (absent from older manifests).
    #[serde(default)]
    pub safe_opaque_area: Option<f64>,
    /// Texels with alpha at least `opaque_min` (absent from older manifests).
    #[serde(default)]
    pub opaque_texels: Option<u64>,
    /// The cutter's notes.
    pub notes: Vec<String>,
    /// Warnings about the input file.
    pub warnings: Vec<String>,
}

/// A layer's record.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Entry {
    /// The input, relative to its input folder (a file given directly: its name).
    pub input: String,
    /// SHA-256 of the input's bytes.
    pub input_sha256: String,
    /// The underdraw version that cut it.
    pub underdraw: String,
    /// The effective settings: everything besides the input that decides
    /// the outputs' bytes.
    pub settings: serde_json::Value,
    /// The files written, in writing order.
    pub outputs: Vec<OutputFile>,
    /// What was printed for it.
    pub result: LayerResult,
}

/// The manifest: entries by output key.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Manifest {
    /// Always [`FORMAT`].
    pub format: String,
    /// Always [`VERSION`].
    pub version: u32,
    /// The layers, by the path of their outputs in the output folder
    /// without extension (`town/houses`).
    pub layers: BTreeMap<String, Entry>,
    /// The sprite sheets cut by their regions, by the path of their outputs'
    /// folder in the output folder (`ui/atlas`); absent when there are none,
    /// so manifests without sheets keep their bytes.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub sheets: BTreeMap<String, SheetEntry>,
}

/// A sprite sheet's record: what its regions were cut from, with which
/// settings, and what they wrote. A sheet is skipped when the sheet's
/// bytes, the regions file's bytes, every region's effective settings and
/// the underdraw version are the entry's and every output recorded is in
/// place with its hash.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SheetEntry {
    /// The sheet, relative to its input folder (given directly: its name).
    pub input: String,
    /// SHA-256 of the sheet's bytes.
    pub input_sha256: String,
    /// SHA-256 of the regions file's bytes.
    pub regions_sha256: String,
    /// The underdraw version that cut it.
    pub underdraw: String,
    /// Everything besides the sheet and the regions file that decides the
    /// outputs' bytes: each region's effective settings, the outputs asked
    /// for, the image URI, a shipped texture's hash.
    pub settings: serde_json::Value,
    /// The files written, relative to the sheet's output folder (the one
    /// holding `<stem>/`), in writing order.
    pub outputs: Vec<OutputFile>,
    /// Per region, in the regions file's order, what was printed for it.
    pub regions: Vec<RegionEntry>,
}

/// One region of a [`SheetEntry`].
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RegionEntry {
    /// The region's name.
    pub name: String,
    /// Its files, relative to the sheet's output folder.
    pub outputs: Vec<String>,
    /// Its numbers, notes and warnings (the padding warnings among them).
    pub result: LayerResult,
}

impl SheetEntry {
    /// Whether the outputs recorded are all in `out` (the sheet's output
    /// folder) with the hashes recorded.
    pub fn outputs_intact(&self, out: &Path) -> bool {
        self.outputs
            .iter()
            .all(|o| std::fs::read(out.join(&o.path)).is_ok_and(|b| sha256_hex(&b) == o.sha256))
    }
}

impl Manifest {
    /// An empty manifest.
    pub fn new() -> Manifest {
        Manifest {
            format: FORMAT.into(),
            version: VERSION,
            layers: BTreeMap::new(),
            sheets: BTreeMap::new(),
        }
    }

    /// Reads the manifest of `out`: `Ok(None)` when there is none; `Err`
    /// with a note when it cannot be used (every layer is then cut again and
    /// the file rewritten).
    pub fn load(out: &Path) -> Result<Option<Manifest>, ManifestError> {
        let path = out.join(FILE_NAME);
        let bytes = match std::fs::read(&path) {
            Ok(b) => b,
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(None),
            Err(e) => {
                return Err(ManifestError::Unreadable {
                    path,
                    reason: e.to_string(),
                })
            }
        };
        let m: Manifest = match serde_json::from_slice(&bytes) {
            Ok(m) => m,
            Err(e) => {
                return Err(ManifestError::NotAManifest {
                    path,
                    reason: e.to_string(),
                })
            }
        };
        if m.format != FORMAT || m.version != VERSION {
            return Err(ManifestError::OtherVersion {
                path,
                format: m.format,
                version: m.version,
            });
        }
        Ok(Some(m))
    }

    /// Writes the manifest into the output folder `out` as [`FILE_NAME`],
    /// through its gate ([`OutputFolder::write`]): atomically, never over an
    /// input, and not at all when the file there already holds the same
    /// bytes (a rerun with nothing to do leaves it untouched, modification
    /// time included).
    pub fn save(&self, out: &mut OutputFolder) -> Result<(), FileError> {
        let mut bytes = serde_json::to_vec_pretty(self).expect("a manifest serializes");
        bytes.push(b'\n');
        out.write(FILE_NAME, &bytes)
    }
}

impl Entry {
    /// Whether the outputs recorded are all in `out` with the hashes recorded.
    pub fn outputs_intact(&self, out: &Path) -> bool {
        self.outputs
            .iter()
            .all(|o| std::fs::read(out.join(&o.path)).is_ok_and(|b| sha256_hex(&b) == o.sha256))
    }
}

/// Why a manifest cannot be used (every layer is then cut again and the
/// file rewritten).
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum ManifestError {
    /// The file exists but cannot be read.
    #[error("{}: cannot be read ({reason})", path.display())]
    Unreadable {
        /// The manifest's path.
        path: std::path::PathBuf,
        /// The system's reason.
        reason: String,
    },
    /// The file is not a manifest's JSON.
    #[error("{}: is not an underdraw manifest ({reason})", path.display())]
    NotAManifest {
        /// The manifest's path.
        path: std::path::PathBuf,
        /// What the JSON parser found.
        reason: String,
    },
    /// Another format or version.
    #[error("{}: is {format} version {version}, not {FORMAT} version {VERSION}", path.display())]
    OtherVersion {
        /// The manifest's path.
        path: std::path::PathBuf,
        /// The format it names.
        format: String,
        /// The version it names.
        version: u32,
    },
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_matches_the_published_test_vectors() {
        // FIPS 180-4 examples (NIST CSRC "SHA256.pdf" example values): "abc"
        // and the empty message (from memory)
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert_eq!(
            sha256_hex(b""),
            "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
        );
    }

    #[test]
    fn a_manifest_of_another_format_or_version_is_not_used() {
        let d = std::env::temp_dir().join(format!("underdraw-manifest-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        assert_eq!(Manifest::load(&d), Ok(None));
        Manifest::new()
            .save(&mut OutputFolder::open(&d, Vec::new()))
            .unwrap();
        assert_eq!(Manifest::load(&d), Ok(Some(Manifest::new())));
        let text = std::fs::read_to_string(d.join(FILE_NAME)).unwrap();
        std::fs::write(
            d.join(FILE_NAME),
            text.replace("\"version\": 1", "\"version\": 9"),
        )
        .unwrap();
        assert!(Manifest::load(&d)
            .unwrap_err()
            .to_string()
            .contains("version 9"));
        std::fs::remove_dir_all(&d).unwrap();
    }
}
