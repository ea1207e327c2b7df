//! The properties the fuzz targets check, one public function per target,
//! each taking the raw fuzzer input. A property returns normally when the
//! input is fine (accepted or refused with a proper error) and panics when
//! it finds a bug, which is what libFuzzer records as a crash.
//!
//! The same file is compiled into `tests/fuzz_regressions.rs` (by
//! `#[path]`), which runs every property over the committed seeds
//! (`fuzz/seeds/<target>/`) and minimized crashes
//! (`fuzz/regressions/<target>/`), so a fuzz finding stays a test.
//!
//! Invariants the properties hold the library to:
//! * a layer that decodes is cut into meshes that pass the independent
//!   checker, without the fallback note ("opaque mesh left out") and within
//!   the vertex budget;
//! * bad PNG, scene or mesh input is refused with an error naming the file
//!   and saying what is wrong and what to do, never a panic;
//! * a scene that parses meets the invariants documented on `load_scene`.

use arbitrary::{Arbitrary, Unstructured};
use std::path::Path;
use underdraw::alpha::AlphaMap;
use underdraw::check::check_mesh;
use underdraw::cut::cut_layer;
use underdraw::error::FileError;
use underdraw::io::{decode_layer, ImageLimits};
use underdraw::mesh::LayerMesh;
use underdraw::scene::file::{parse_scene, MeshSource};
use underdraw::settings::{AlphaThresholds, CutSettings, Filter, FilterMode, Wrap};

/// The note `cut_layer` adds when its fast path failed the contract check
/// and it fell back to the blended-only mesh.
pub const FALLBACK_NOTE: &str = "opaque mesh left out";

/// Image limits for `cut_png`: small, so one input cuts in milliseconds.
pub const PNG_LIMITS: ImageLimits = ImageLimits {
    max_side: 256,
    max_pixels: 65536,
};

/// Largest declared mesh size for which `mesh_json` also builds an alpha
/// map of that size, so the checker's geometry code is reached.
pub const MESH_MAX_SIDE: u32 = 64;

/// Panics unless `e` names `path` and says what is wrong and what to do.
fn assert_clear_error(e: &FileError, path: &Path) {
    assert_eq!(e.path, path, "the error names another file: {e}");
    assert!(
        !e.problem.trim().is_empty(),
        "the error does not say what is wrong: {e}"
    );
    assert!(
        !e.hint.trim().is_empty(),
        "the error does not say what to do: {e}"
    );
}

/// Cuts `map` with `settings` and panics unless the contract holds, the
/// fast path did not fall back, and the budget is kept.
pub fn assert_cut_holds(map: &AlphaMap, settings: &CutSettings) {
    let out = cut_layer(map, "fuzz.png", settings);
    let report = check_mesh(&out.mesh, map)
        .unwrap_or_else(|e| panic!("the cut mesh cannot be checked: {e} ({settings:?})"));
    assert!(
        report.holds(),
        "contract violated: {:?} ({settings:?})",
        report.violations()
    );
    let fallback: Vec<&String> = out
        .notes
        .iter()
        .filter(|n| n.starts_with(FALLBACK_NOTE))
        .collect();
    assert!(
        fallback.is_empty(),
        "the fast path failed and fell back: {fallback:?} ({settings:?})"
    );
    assert!(
        out.mesh.vertex_count() <= settings.budget,
        "{} vertices, over the budget of {} ({settings:?})",
        out.mesh.vertex_count(),
        settings.budget
    );
}

/// Target `cut_png`: bytes → `decode_layer` (limits [`PNG_LIMITS`]) → on
/// success `cut_layer` at a budget in 4..=64 taken from the bytes, with the
/// default filter (bilinear, no mipmaps).
pub fn cut_png(data: &[u8]) {
    let path = Path::new("fuzz.png");
    let layer = match decode_layer(path, data, &PNG_LIMITS) {
        Ok(layer) => layer,
        Err(e) => return assert_clear_error(&e, path),
    };
    let sum = data.iter().fold(0u32, |s, &b| s.wrapping_add(b as u32));
    let settings = CutSettings {
        budget: 4 + (sum % 61) as usize,
        ..CutSettings::default()
    };
    assert_cut_holds(&layer.alpha, &settings);
}

/// Target `scene_json`: bytes as UTF-8 (lossy) → `parse_scene` of
/// `fuzz.scene.json` (images relative to the working directory). An error
/// must be a clear one; a scene must meet `load_scene`'s invariants.
pub fn scene_json(data: &[u8]) {
    let path = Path::new("fuzz.scene.json");
    let text = String::from_utf8_lossy(data);
    let scene = match parse_scene(path, &text) {
        Ok(scene) => scene,
        Err(e) => return assert_clear_error(&e, path),
    };
    let [w, h] = scene.viewport;
    assert!(w > 0 && h > 0, "empty viewport accepted: {w} x {h}");
    assert!(!scene.layers.is_empty(), "a scene without layers accepted");
    assert!(
        scene.samples >= 1,
        "a scene without camera samples accepted"
    );
    assert!(scene.travel.is_finite(), "non-finite travel accepted");
    let mut names = std::collections::HashSet::new();
    for l in &scene.layers {
        assert!(names.insert(&l.name), "duplicate layer name {:?}", l.name);
        assert!(
            !l.name.is_empty() && !l.name.starts_with('.') && !l.name.contains(['/', '\\']),
            "layer name {:?} cannot name a mesh file",
            l.name
        );
        assert!(
            l.scale.is_finite() && l.scale > 0.0,
            "layer {:?}: scale {} accepted",
            l.name,
            l.scale
        );
        assert!(
            l.parallax.is_finite() && l.position.iter().all(|v| v.is_finite()),
            "layer {:?}: non-finite placement accepted",
            l.name
        );
        assert!(
            l.image.is_file(),
            "layer {:?}: missing image accepted",
            l.name
        );
        match &l.mesh {
            MeshSource::Cut(s) => {
                if let Err(e) = s.validate() {
                    panic!("layer {:?}: invalid cut settings accepted: {e}", l.name)
                }
            }
            MeshSource::File(m) => assert!(m.is_file(), "layer {:?}: missing mesh file", l.name),
            MeshSource::Region(r) => {
                assert!(
                    r.regions.is_file(),
                    "layer {:?}: missing regions file",
                    l.name
                );
                if let Err(e) = r.settings.validate() {
                    panic!("layer {:?}: invalid cut settings accepted: {e}", l.name)
                }
            }
        }
    }
    let cams = scene.camera_positions();
    assert_eq!(cams.len(), scene.samples as usize, "camera positions");
    assert!(
        cams.iter().all(|c| c.is_finite()),
        "a camera position is not finite (travel {}, samples {})",
        scene.travel,
        scene.samples
    );
}

/// A soft disc on a `w` x `h` map: opaque centre, partial rim, transparent
/// corners, so safe-opaque and must-cover regions both have area.
pub fn disc_map(w: u32, h: u32) -> AlphaMap {
    let (cx, cy, r) = (w as f64 / 2.0, h as f64 / 2.0, w.min(h) as f64 / 2.0);
    let alpha = (0..w * h)
        .map(|i| {
            let (x, y) = ((i % w) as f64 + 0.5, (i / w) as f64 + 0.5);
            let d = ((x - cx).powi(2) + (y - cy).powi(2)).sqrt();
            ((r - d + 0.5).clamp(0.0, 1.0) * 255.0).round() as u8
        })
        .collect();
    AlphaMap::from_raw(w, h, alpha)
}

/// Target `mesh_json`: bytes → a `LayerMesh` by serde → on success
/// `check_mesh` against an 8x8 map and, when the declared size is at most
/// [`MESH_MAX_SIDE`] a side, against a map of that size: a report or a
/// `CheckError`, never a panic; the report's areas are finite and not
/// negative.
pub fn mesh_json(data: &[u8]) {
    let Ok(mesh) = serde_json::from_slice::<LayerMesh>(data) else {
        return;
    };
    let mut maps = vec![disc_map(8, 8)];
    let [w, h] = mesh.size;
    if (1..=MESH_MAX_SIDE).contains(&w) && (1..=MESH_MAX_SIDE).contains(&h) && [w, h] != [8, 8] {
        maps.push(disc_map(w, h));
    }
    for map in &maps {
        if let Ok(r) = check_mesh(&mesh, map) {
            let areas = [
                r.opaque_outside_safe,
                r.uncovered,
                r.blended_outside_image,
                r.overlap_opaque_blended,
                r.overlap_within_opaque,
                r.overlap_within_blended,
                r.safe_area,
                r.must_cover_area,
                r.opaque_area,
                r.covered_area,
            ];
            assert!(
                areas.iter().all(|a| a.is_finite() && *a >= -1e-6),
                "the report has a negative or non-finite area: {r:?}"
            );
        }
    }
}

/// The structured input of `fit_mask`, decoded from the fuzzer's bytes by
/// `arbitrary` (the alpha bytes last, taking the rest of the input).
#[derive(Arbitrary, Debug, Clone)]
pub struct FitInput {
    /// Width - 1, modulo 48.
    pub w: u8,
    /// Height - 1, modulo 48.
    pub h: u8,
    /// Quantize alpha to 0, 128 and 255 (larger flat areas, more shapes).
    pub quantize: bool,
    /// Bilinear when true, nearest when false.
    pub bilinear: bool,
    /// Mip levels, modulo 4.
    pub mip_levels: u8,
    /// 0 none, 1 x, 2 y, 3 xy (modulo 4).
    pub wrap: u8,
    /// Thresholds (the larger is opaque-min); `None` for the defaults.
    pub thresholds: Option<(u8, u8)>,
    /// Budget - 4, modulo 253.
    pub budget: u16,
    /// Alpha bytes, row-major, repeated to fill the map (empty: transparent).
    pub alpha: Vec<u8>,
}

impl FitInput {
    /// The alpha map and the (valid) settings this input stands for.
    pub fn build(&self) -> (AlphaMap, CutSettings) {
        let (w, h) = (1 + self.w as u32 % 48, 1 + self.h as u32 % 48);
        let n = (w * h) as usize;
        let quant = |a: u8| match (self.quantize, a) {
            (false, a) => a,
            (true, 0..=84) => 0,
            (true, 85..=169) => 128,
            (true, _) => 255,
        };
        let alpha: Vec<u8> = if self.alpha.is_empty() {
            vec![0; n]
        } else {
            self.alpha
                .iter()
                .cycle()
                .take(n)
                .map(|&a| quant(a))
                .collect()
        };
        let alpha_t = match self.thresholds {
            None => AlphaThresholds::default(),
            Some((a, b)) => AlphaThresholds {
                opaque_min: a.max(b),
                visible_min: a.min(b),
            },
        };
        let settings = CutSettings {
            budget: 4 + (self.budget % 253) as usize,
            filter: Filter {
                mode: if self.bilinear {
                    FilterMode::Bilinear
                } else {
                    FilterMode::Nearest
                },
                mip_levels: (self.mip_levels % 4) as u32,
            },
            alpha: alpha_t,
            wrap: [Wrap::None, Wrap::X, Wrap::Y, Wrap::Xy][(self.wrap % 4) as usize],
        };
        (AlphaMap::from_raw(w, h, alpha), settings)
    }
}

/// Target `fit_mask`: structured input ([`FitInput`]) → `cut_layer` → the
/// contract holds without fallback, within the budget.
pub fn fit_mask(data: &[u8]) {
    // as libfuzzer-sys decodes a typed target input
    let Ok(input) = FitInput::arbitrary_take_rest(Unstructured::new(data)) else {
        return;
    };
    let (map, settings) = input.build();
    settings.validate().expect("FitInput builds valid settings");
    assert_cut_holds(&map, &settings);
}
