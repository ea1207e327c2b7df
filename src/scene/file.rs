//! The scene file (`<name>.scene.json`, our own format): the viewport, the
//! layers back to front with their placement, and the camera's travel.
//!
//! ```text
//! {"viewport": [1920, 1080],
//!  "camera": {"travel": 1920, "samples": 16},
//!  "layers": [                                  // back to front
//!    {"name": "sky", "image": "sky.png",        // relative to the scene file
//!     "cut": {"budget": 8, "wrap": "x"},        // or "mesh": "sky.mesh.json"
//!     "position": [0, 0], "scale": 1.06,        // top-left on screen at camera 0
//!     "parallax": 0.1, "fill_width": true}]}
//! ```
//!
//! A layer may be a region of a sprite sheet: `"region": NAME` (its
//! regions file `"regions": FILE`, default `<image stem>.regions.json`
//! beside the image), and a nine-slice region `"size": [w, h]`, the size it
//! is drawn stretched to ([`MeshSource::Region`], see [`super::region`]).
//!
//! A texel (tx, ty) of a layer lands on screen at
//! `(position.x + scale * tx - camera_x * parallax, position.y + scale * ty)`.
//!
//! Limits, each refused with a message and a hint before the work it would
//! cost: the file is at most [`MAX_SCENE_BYTES`] (read with a bounded read,
//! never whole when larger), at most [`MAX_LAYERS`] layers, at most
//! [`MAX_SAMPLES`] camera samples, viewport sides at most [`MAX_VIEWPORT`].
//!
//! Invariants of a [`Scene`] returned by [`load_scene`]: the viewport is
//! non-empty, there are 1 to [`MAX_LAYERS`] layers, layer names are unique and safe
//! as file names, every scale is positive and finite, every number finite,
//! `samples >= 1`, every image exists, every cut's settings validate, and a
//! layer has either cut settings or a mesh file, not both.

use crate::error::FileError;
use crate::settings::{CutSettings, PartialSettings, SettingsError};
use serde::Deserialize;
use std::collections::HashSet;
use std::io::Read;
use std::path::{Path, PathBuf};

/// Largest viewport side accepted.
pub const MAX_VIEWPORT: u32 = 16384;
/// Most camera samples accepted: every sample renders the whole scene three
/// times (and once per layer more with a vertex total), and a smooth pan
/// needs a few dozen.
pub const MAX_SAMPLES: u32 = 1024;
/// Most layers in a scene (each is cut, and drawn at every sample).
pub const MAX_LAYERS: usize = 256;
/// Largest scene file accepted, bytes (1 MiB; 256 layers take about 64 KiB).
pub const MAX_SCENE_BYTES: usize = 1 << 20;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SceneJson {
    viewport: [u32; 2],
    camera: CameraJson,
    layers: Vec<LayerJson>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct CameraJson {
    travel: f64,
    samples: u32,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct LayerJson {
    name: String,
    image: PathBuf,
    #[serde(default)]
    cut: Option<PartialSettings>,
    #[serde(default)]
    mesh: Option<PathBuf>,
    #[serde(default)]
    position: [f64; 2],
    #[serde(default = "one")]
    scale: f64,
    #[serde(default = "one")]
    parallax: f64,
    #[serde(default)]
    fill_width: bool,
    /// A region of the image (a sprite sheet) as the layer.
    #[serde(default)]
    region: Option<String>,
    /// The regions file (default: `<image stem>.regions.json` beside it).
    #[serde(default)]
    regions: Option<PathBuf>,
    /// The size a nine-slice region is drawn stretched to, texels.
    #[serde(default)]
    size: Option<[u32; 2]>,
    /// The old name of `fill_width`, refused with a message naming the new one.
    #[serde(default)]
    repeat_x: Option<serde::de::IgnoredAny>,
}

fn one() -> f64 {
    1.0
}

/// What a scene-file author changes for a settings error: the key in the
/// layer's `"cut"` block (never a command-line flag).
fn cut_hint(e: SettingsError) -> String {
    match e {
        SettingsError::Budget(_) => {
            "give the layer's \"cut\" a \"budget\" of 4 or more".to_string()
        }
        SettingsError::Alpha { .. } => {
            "lower \"visible_min\" or raise \"opaque_min\" in the layer's \"cut\"".to_string()
        }
        SettingsError::MipLevels(_) => {
            "give the layer's \"cut\" a \"mip_levels\" of 15 or less".to_string()
        }
    }
}

/// Where a layer's meshes come from.
#[derive(Clone, Debug, PartialEq)]
pub enum MeshSource {
    /// Cut from the image with these settings when the scene is loaded.
    Cut(CutSettings),
    /// Read from a mesh file (resolved path).
    File(PathBuf),
    /// Cut from a region of the image, a sprite sheet, with these settings
    /// (the way it ships: on the whole sheet, uvs into the sheet).
    Region(RegionLayer),
}

/// A layer that is a region of a sprite sheet.
#[derive(Clone, Debug, PartialEq)]
pub struct RegionLayer {
    /// The cut settings.
    pub settings: CutSettings,
    /// The region's name in the regions file.
    pub name: String,
    /// The regions file (resolved path; it exists).
    pub regions: PathBuf,
    /// For a nine-slice region: the size it is drawn stretched to, texels
    /// (each side at least the slices' insets).
    pub size: Option<[u32; 2]>,
    /// A mesh file of the region cut before (resolved path; it exists),
    /// used instead of cutting it: as `cut --regions` writes it, or as
    /// `scene --export` writes it (a panel already stretched to `size`).
    pub mesh: Option<PathBuf>,
    /// The scene file that asks for the region, and the layer's place in
    /// it (`layers[i] ("name")`, as the scene file's errors name a layer):
    /// a region the regions file cannot give is reported there.
    pub asked_by: (PathBuf, String),
}

/// One layer of a scene, paths resolved against the scene file's folder.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerSpec {
    /// Unique in the scene, safe as a file name.
    pub name: String,
    /// The layer's PNG (resolved path; it exists).
    pub image: PathBuf,
    /// Where its meshes come from.
    pub mesh: MeshSource,
    /// Top-left on screen at camera 0, pixels.
    pub position: [f64; 2],
    /// Screen pixels per texel.
    pub scale: f64,
    /// Screen pixels the layer moves left per pixel of camera travel.
    pub parallax: f64,
    /// Tile horizontally to fill the viewport's width.
    pub fill_width: bool,
}

/// A loaded, validated scene.
#[derive(Clone, Debug, PartialEq)]
pub struct Scene {
    /// The scene file.
    pub path: PathBuf,
    /// Screen width and height, pixels (each 1 to [`MAX_VIEWPORT`]).
    pub viewport: [u32; 2],
    /// Pixels of horizontal camera travel.
    pub travel: f64,
    /// Camera positions, evenly spaced over [0, travel].
    pub samples: u32,
    /// Back to front.
    pub layers: Vec<LayerSpec>,
}

impl Scene {
    /// The camera positions: `samples` values evenly spaced over
    /// [0, travel], both ends included (one sample: 0).
    pub fn camera_positions(&self) -> Vec<f64> {
        let n = self.samples;
        (0..n)
            .map(|i| {
                if n == 1 {
                    0.0
                } else {
                    self.travel * i as f64 / (n - 1) as f64
                }
            })
            .collect()
    }

    /// Every file the scene reads: the scene file, images, mesh files.
    pub fn inputs(&self) -> Vec<PathBuf> {
        let mut v = vec![self.path.clone()];
        for l in &self.layers {
            v.push(l.image.clone());
            match &l.mesh {
                MeshSource::File(m) => v.push(m.clone()),
                MeshSource::Region(r) => v.push(r.regions.clone()),
                MeshSource::Cut(_) => {}
            }
        }
        v
    }
}

/// Reads and validates a scene file.
pub fn load_scene(path: &Path) -> Result<Scene, FileError> {
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .and_then(|f| f.take(MAX_SCENE_BYTES as u64 + 1).read_to_end(&mut bytes))
        .map_err(|e| {
            FileError::new(
                path,
                format!("cannot be read ({e})"),
                "check the path to the scene file",
            )
        })?;
    if bytes.len() > MAX_SCENE_BYTES {
        return Err(too_large(path));
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        FileError::new(
            path,
            format!(
                "is not UTF-8 text (byte {} is not valid UTF-8)",
                e.utf8_error().valid_up_to()
            ),
            "a scene file is JSON text: save it as UTF-8 (is this the scene file, not an image?)",
        )
    })?;
    parse_scene(path, &text)
}

fn too_large(path: &Path) -> FileError {
    FileError::new(
        path,
        format!(
            "is larger than {} MiB, the limit for a scene file",
            MAX_SCENE_BYTES >> 20
        ),
        format!(
            "check that this is the scene file; a scene lists at most {MAX_LAYERS} layers, far less than 1 MiB of JSON"
        ),
    )
}

/// Parses and validates scene text (`path` names the file in errors and
/// anchors relative paths).
pub fn parse_scene(path: &Path, text: &str) -> Result<Scene, FileError> {
    if text.len() > MAX_SCENE_BYTES {
        return Err(too_large(path));
    }
    let json: SceneJson = serde_json::from_str(text).map_err(|e| json_error(path, &e))?;
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let bad = |what: String, hint: &str| Err(FileError::new(path, what, hint));
    let [w, h] = json.viewport;
    if w == 0 || h == 0 || w > MAX_VIEWPORT || h > MAX_VIEWPORT {
        return bad(
            format!("viewport {w} x {h} is not a usable screen size"),
            &format!("give \"viewport\": [width, height] in pixels, each from 1 to {MAX_VIEWPORT}"),
        );
    }
    let cam = &json.camera;
    if cam.samples == 0 {
        return bad(
            "camera.samples is 0: the scene needs at least one camera position to be scored".into(),
            &format!("give \"samples\" from 1 to {MAX_SAMPLES} (16 is plenty for a smooth pan)"),
        );
    }
    if cam.samples > MAX_SAMPLES {
        return bad(
            format!(
                "camera.samples is {}, over the limit of {MAX_SAMPLES}",
                cam.samples
            ),
            "give fewer samples: each one renders the whole scene, and 16 to 64 already give a smooth pan",
        );
    }
    if !cam.travel.is_finite() {
        return bad(
            "camera.travel is not a finite number".into(),
            "give the camera's horizontal travel in pixels",
        );
    }
    // camera_positions() multiplies travel by the sample index first
    if !(cam.travel * cam.samples as f64).is_finite() {
        return bad(
            format!("camera.travel {} is too large to sample", cam.travel),
            "give the camera's horizontal travel in pixels (a few screen widths)",
        );
    }
    if json.layers.is_empty() {
        return bad(
            "has no layers".into(),
            "list the layers back to front under \"layers\"",
        );
    }
    if json.layers.len() > MAX_LAYERS {
        return bad(
            format!(
                "has {} layers, over the limit of {MAX_LAYERS}",
                json.layers.len()
            ),
            "merge layers that move together (same parallax) into one image, or split the scene into several scene files",
        );
    }
    let mut names = HashSet::new();
    let mut layers = Vec::with_capacity(json.layers.len());
    for (i, l) in json.layers.into_iter().enumerate() {
        let at = format!("layers[{i}] (\"{}\")", l.name);
        if l.repeat_x.is_some() {
            return bad(
                format!("{at}: the key \"repeat_x\" is now called \"fill_width\""),
                "rename the key to \"fill_width\" (same meaning: copies side by side to fill the viewport's width)",
            );
        }
        if !valid_name(&l.name) {
            return bad(
                format!("layers[{i}]: name \"{}\" cannot name a mesh file", l.name),
                "use letters, digits, '-', '_' and '.', not starting with '.'",
            );
        }
        if !names.insert(l.name.clone()) {
            return bad(
                format!("{at}: the name is used by an earlier layer too"),
                "give every layer its own name (the report and the mesh files are named after it)",
            );
        }
        if !(l.scale.is_finite() && l.scale > 0.0) {
            return bad(
                format!("{at}: scale {} is not a positive number", l.scale),
                "give a scale above 0: screen pixels per texel (1 draws a texel as a pixel)",
            );
        }
        if !(l.parallax.is_finite() && l.position.iter().all(|v| v.is_finite())) {
            return bad(
                format!("{at}: position or parallax is not a finite number"),
                "give finite numbers",
            );
        }
        let image = dir.join(&l.image);
        if !image.is_file() {
            return bad(
                format!("{at}: image {} does not exist", image.display()),
                "check the path; image and mesh paths are relative to the scene file's folder",
            );
        }
        if l.region.is_none() && (l.regions.is_some() || l.size.is_some()) {
            return bad(
                format!("{at}: \"regions\" and \"size\" are for a region of a sprite sheet, but no \"region\" is given"),
                "add \"region\": NAME (a region of the image's regions file), or remove them",
            );
        }
        if let Some(name) = &l.region {
            let regions = match &l.regions {
                Some(r) => dir.join(r),
                None => {
                    let stem = image.file_stem().unwrap_or_default().to_string_lossy();
                    image.with_file_name(format!("{stem}.regions.json"))
                }
            };
            if !regions.is_file() {
                return bad(
                    format!("{at}: regions file {} does not exist", regions.display()),
                    "give \"regions\": FILE, or put <image stem>.regions.json beside the image (`underdraw cut IMAGE --find-regions` writes one)",
                );
            }
            let settings = CutSettings::default().with(&l.cut.unwrap_or_default());
            if let Err(e) = settings.validate() {
                return bad(format!("{at}.cut: {e}"), &cut_hint(e));
            }
            if l.size.is_some_and(|[w, h]| {
                w == 0 || h == 0 || w > MAX_VIEWPORT * 4 || h > MAX_VIEWPORT * 4
            }) {
                return bad(
                    format!(
                        "{at}: size {:?} is not a usable panel size",
                        l.size.unwrap_or_default()
                    ),
                    "give \"size\": [width, height] in texels, at least the panel's slice insets",
                );
            }
            let mesh = match (&l.cut, &l.mesh) {
                (Some(_), Some(_)) => {
                    return bad(
                        format!("{at}: has both \"cut\" settings and a \"mesh\" file"),
                        "keep one: \"cut\" to cut the region when the scene is loaded, or \"mesh\" to use a region mesh cut before",
                    )
                }
                (_, Some(m)) => {
                    let m = dir.join(m);
                    if !m.is_file() {
                        return bad(
                            format!("{at}: mesh file {} does not exist", m.display()),
                            "check the path, or write it with `underdraw cut --regions`, or give \"cut\" settings instead",
                        );
                    }
                    Some(m)
                }
                _ => None,
            };
            layers.push(LayerSpec {
                name: l.name,
                image,
                mesh: MeshSource::Region(RegionLayer {
                    settings,
                    name: name.clone(),
                    regions,
                    size: l.size,
                    mesh,
                    asked_by: (path.to_path_buf(), at.clone()),
                }),
                position: l.position,
                scale: l.scale,
                parallax: l.parallax,
                fill_width: l.fill_width,
            });
            continue;
        }
        let mesh = match (l.cut, l.mesh) {
            (Some(_), Some(_)) => {
                return bad(
                    format!("{at}: has both \"cut\" settings and a \"mesh\" file"),
                    "keep one: \"cut\" to cut the layer when the scene is loaded, or \"mesh\" to use a mesh cut before",
                )
            }
            (None, Some(m)) => {
                let m = dir.join(m);
                if !m.is_file() {
                    return bad(
                        format!("{at}: mesh file {} does not exist", m.display()),
                        "check the path, or write it with `underdraw cut`, or give \"cut\" settings instead",
                    );
                }
                MeshSource::File(m)
            }
            (cut, None) => {
                let settings = CutSettings::default().with(&cut.unwrap_or_default());
                if let Err(e) = settings.validate() {
                    return bad(format!("{at}.cut: {e}"), &cut_hint(e));
                }
                MeshSource::Cut(settings)
            }
        };
        layers.push(LayerSpec {
            name: l.name,
            image,
            mesh,
            position: l.position,
            scale: l.scale,
            parallax: l.parallax,
            fill_width: l.fill_width,
        });
    }
    Ok(Scene {
        path: path.to_path_buf(),
        viewport: json.viewport,
        travel: cam.travel,
        samples: cam.samples,
        layers,
    })
}

/// A name usable as `<name>.mesh.json`.
fn valid_name(name: &str) -> bool {
    !name.is_empty()
        && name.len() <= 100
        && !name.starts_with('.')
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.'))
}

/// A JSON error with its line and column; serde names an unknown key in its
/// message (`unknown field `x``), and the position is the key's.
fn json_error(path: &Path, e: &serde_json::Error) -> FileError {
    use serde_json::error::Category;
    let (line, col) = (e.line(), e.column());
    // serde_json appends " at line L column C" to its message; keep the message alone.
    let msg = e.to_string();
    let msg = msg
        .rsplit_once(" at line ")
        .map(|(m, _)| m.to_string())
        .unwrap_or(msg);
    let (what, hint) = match e.classify() {
        Category::Syntax | Category::Eof => (
            "is not valid JSON",
            "fix the JSON at that place (a missing comma, quote or bracket is the usual cause)",
        ),
        Category::Data if msg.starts_with("unknown field") => (
            "has a key the scene format does not know",
            "remove or rename the key; the keys are listed in the README's Scenes section",
        ),
        _ => (
            "does not match the scene format",
            "see the README's Scenes section for the keys and their types",
        ),
    };
    FileError::new(
        path,
        format!("{what}: {msg}, at line {line}, column {col}"),
        hint,
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::{FilterMode, Wrap};

    fn scene_with(layers: &str) -> String {
        format!(
            r#"{{"viewport": [100, 50], "camera": {{"travel": 30, "samples": 4}}, "layers": [{layers}]}}"#
        )
    }

    fn here() -> PathBuf {
        Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers/x.scene.json")
    }

    #[test]
    fn defaults_and_camera_positions() {
        let s = parse_scene(&here(), &scene_with(r#"{"name": "a", "image": "sky.png"}"#)).unwrap();
        let l = &s.layers[0];
        assert_eq!(
            (l.scale, l.parallax, l.position, l.fill_width),
            (1.0, 1.0, [0.0, 0.0], false)
        );
        assert_eq!(l.mesh, MeshSource::Cut(CutSettings::default()));
        // 4 samples evenly spaced over [0, 30], both ends included
        assert_eq!(s.camera_positions(), vec![0.0, 10.0, 20.0, 30.0]);
    }

    #[test]
    fn a_bad_cut_setting_names_the_scene_key_not_a_flag() {
        for (cut, says, hint) in [
            (
                r#"{"budget": 3}"#,
                "budget 3: a mesh needs at least 4 vertices",
                "\"budget\" of 4 or more",
            ),
            (
                r#"{"mip_levels": 16}"#,
                "mip_levels 16",
                "\"mip_levels\" of 15 or less",
            ),
            (
                r#"{"opaque_min": 10, "visible_min": 20}"#,
                "visible_min 20 is above opaque_min 10",
                "lower \"visible_min\"",
            ),
        ] {
            let layer = format!(r#"{{"name": "a", "image": "sky.png", "cut": {cut}}}"#);
            let e = parse_scene(&here(), &scene_with(&layer)).unwrap_err();
            assert!(e.problem.contains(says), "{cut}: {e}");
            assert!(e.hint.contains(hint), "{cut}: {e}");
            assert!(
                !e.to_string().contains("--"),
                "a scene author typed no flag: {e}"
            );
        }
    }

    #[test]
    fn cut_settings_override_defaults() {
        let s = parse_scene(
            &here(),
            &scene_with(r#"{"name": "a", "image": "sky.png", "cut": {"budget": 12, "filter": "nearest", "wrap": "x", "opaque_min": 200}}"#),
        )
        .unwrap();
        let MeshSource::Cut(c) = s.layers[0].mesh else {
            panic!("expected cut settings")
        };
        assert_eq!(c.budget, 12);
        assert_eq!(c.filter.mode, FilterMode::Nearest);
        assert_eq!(c.wrap, Wrap::X);
        assert_eq!(c.alpha.opaque_min, 200);
        assert_eq!(c.alpha.visible_min, 1);
    }

    #[test]
    fn unsafe_names_and_both_sources_are_refused() {
        for name in ["", "../up", "a/b", ".hidden"] {
            let text = scene_with(&format!(r#"{{"name": "{name}", "image": "sky.png"}}"#));
            assert!(parse_scene(&here(), &text).is_err(), "{name}");
        }
        let text = scene_with(r#"{"name": "a", "image": "sky.png", "cut": {}, "mesh": "sky.png"}"#);
        let e = parse_scene(&here(), &text).unwrap_err();
        assert!(e.problem.contains("both"), "{e}");
    }
}
