//! What each command reports, as library values: `--json` serializes them
//! and the text tables ([`super::tables`]) print them, so the two never
//! drift. JSON objects keep their keys in alphabetical order (they go
//! through [`serde_json::Value`]).
//!
//! Where to add a field to a command's `--json`: its type here (and, if
//! the table shows it, its column in [`super::tables`]).

use crate::batch::manifest::LayerResult;
use crate::batch::{BatchReport, LayerReport, Status};
use crate::check::ContractReport;
use crate::error::FileError;
use crate::mesh::VertexFormat;
use crate::quality::CutNumbers;
use crate::sweep::SweepPoint;
use serde::Serialize;
use std::collections::BTreeMap;
use std::path::PathBuf;

/// A value as pretty JSON with its objects' keys in alphabetical order.
pub fn to_json(value: &impl Serialize) -> String {
    let v = serde_json::to_value(value).expect("plain values serialize");
    serde_json::to_string_pretty(&v).expect("plain values serialize")
}

/// One input of `underdraw cut`: a layer cut, unchanged or failed, or an
/// input that gave no layer.
#[derive(Clone, Debug, Serialize)]
pub struct CutLayer {
    /// The input as given (its path).
    pub layer: String,
    /// `cut`, `unchanged` or `failed`.
    pub status: Status,
    /// The files written for it.
    pub outputs: Vec<String>,
    /// Its numbers, when it was cut or is unchanged.
    #[serde(flatten)]
    pub numbers: Option<CutLayerNumbers>,
    /// Why it failed.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
    /// The input's path, for the table's short names.
    #[serde(skip)]
    pub input: PathBuf,
    /// Its numbers for the table.
    #[serde(skip)]
    pub cut_numbers: Option<CutNumbers>,
}

/// A cut layer's numbers in `cut --json`.
#[derive(Clone, Debug, Serialize)]
pub struct CutLayerNumbers {
    /// Vertices of both meshes together.
    pub vertices: usize,
    /// The vertex array's bytes (position + texture coordinate) per format.
    pub vertex_bytes: BTreeMap<String, u64>,
    /// Opaque capture; null where the safe-opaque region is empty.
    pub opaque_capture: Option<f64>,
    /// Area covered beyond the must-cover region, texels.
    pub excess: f64,
    /// The excess as a share of the covered area.
    pub excess_share: f64,
    /// The must-cover region's area, texels.
    pub must_cover_area: f64,
    /// The cutter's notes.
    pub notes: Vec<String>,
    /// Warnings, each with what to try.
    pub warnings: Vec<String>,
}

impl CutLayerNumbers {
    /// The numbers a batch records for a layer (or a region of a sheet):
    /// the vertex bytes per vertex format, the capture (`None` where the
    /// safe-opaque region is empty), and the recorded warnings followed by
    /// the quality warnings.
    pub fn of_result(r: &LayerResult) -> CutLayerNumbers {
        let n = CutNumbers::of_result(r);
        CutLayerNumbers {
            vertices: r.vertices,
            vertex_bytes: VertexFormat::ALL
                .iter()
                .map(|f| {
                    (
                        f.name().to_string(),
                        r.vertices as u64 * f.bytes_per_vertex(),
                    )
                })
                .collect(),
            opaque_capture: n.capture(),
            excess: r.excess,
            excess_share: n.excess_share(),
            must_cover_area: r.must_cover_area,
            notes: r.notes.clone(),
            warnings: r.warnings.iter().cloned().chain(n.warnings(None)).collect(),
        }
    }
}

impl CutLayer {
    /// A layer of the batch's report.
    pub fn of_report(l: &LayerReport) -> CutLayer {
        let cut_numbers = l.result.as_ref().map(CutNumbers::of_result);
        let numbers = l.result.as_ref().map(CutLayerNumbers::of_result);
        CutLayer {
            layer: l.input.display().to_string(),
            status: l.status,
            outputs: l.outputs.iter().map(|p| p.display().to_string()).collect(),
            numbers,
            error: l.error.as_ref().map(|e| e.to_string()),
            input: l.input.clone(),
            cut_numbers,
        }
    }

    /// An input that gave no layer.
    pub fn of_empty_input(e: &FileError) -> CutLayer {
        CutLayer {
            layer: e.path.display().to_string(),
            status: Status::Failed,
            outputs: Vec::new(),
            numbers: None,
            error: Some(e.to_string()),
            input: e.path.clone(),
            cut_numbers: None,
        }
    }
}

/// What `underdraw cut` reports: `--json` is the array of the layers, then
/// of the inputs that gave no layer; the text is the notes, the table of the
/// layers and the total line.
#[derive(Clone, Debug)]
pub struct CutResult {
    /// Every layer of the batch.
    pub layers: Vec<CutLayer>,
    /// The inputs that gave no layer (in the JSON only; the errors say the rest).
    pub empty: Vec<CutLayer>,
    /// The batch's notes.
    pub notes: Vec<String>,
}

impl CutResult {
    /// The batch's report and the inputs that gave no layer.
    pub fn new(report: &BatchReport, empty: &[FileError]) -> CutResult {
        CutResult {
            layers: report.layers.iter().map(CutLayer::of_report).collect(),
            empty: empty.iter().map(CutLayer::of_empty_input).collect(),
            notes: report.notes.clone(),
        }
    }
}

impl Serialize for CutResult {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_seq(self.layers.iter().chain(&self.empty))
    }
}

/// What `underdraw check` reports: the contract's areas and whether it
/// holds, and per level of a shipped texture.
#[derive(Clone, Debug, Serialize)]
pub struct CheckResult {
    /// Whether the contract holds.
    pub holds: bool,
    /// Area of the opaque mesh, texels.
    pub opaque_area: f64,
    /// Area of the safe-opaque region, texels.
    pub safe_area: f64,
    /// Area the two meshes cover, texels.
    pub covered_area: f64,
    /// Area of the must-cover region, texels.
    pub must_cover_area: f64,
    /// The must-cover area the meshes cover.
    pub must_cover_covered: f64,
    /// The covered area beyond the must-cover region.
    pub beyond_must_cover: f64,
    /// Each violation in words.
    pub violations: Vec<String>,
    /// The shipped texture as described, when one was checked.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub texture: Option<String>,
    /// The result per level of the shipped texture (with `texture`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub levels: Option<Vec<CheckLevel>>,
    /// The one-line summary of the areas (for the text).
    #[serde(skip)]
    pub summary: String,
}

/// One level of a shipped texture in `check`.
#[derive(Clone, Debug, Serialize)]
pub struct CheckLevel {
    /// The mip level.
    pub level: usize,
    /// Whether the contract holds at this level.
    pub holds: bool,
    /// Opaque area outside the level's safe region, texels.
    pub opaque_outside_safe: f64,
    /// Must-cover area the meshes leave uncovered, texels.
    pub uncovered: f64,
    /// The level's safe-opaque area, texels.
    pub safe_area: f64,
    /// The level's must-cover area, texels.
    pub must_cover_area: f64,
    /// Each violation in words.
    pub violations: Vec<String>,
}

impl CheckResult {
    /// The result of checking a mesh (`report`), with the shipped texture's
    /// description and its per-level reports when one was checked.
    pub fn new(
        report: &ContractReport,
        texture: Option<String>,
        per_level: &[ContractReport],
    ) -> CheckResult {
        let levels = texture.as_ref().map(|_| {
            per_level
                .iter()
                .enumerate()
                .map(|(level, r)| CheckLevel {
                    level,
                    holds: r.holds(),
                    opaque_outside_safe: r.opaque_outside_safe,
                    uncovered: r.uncovered,
                    safe_area: r.safe_area,
                    must_cover_area: r.must_cover_area,
                    violations: r.violations(),
                })
                .collect()
        });
        CheckResult {
            holds: report.holds(),
            opaque_area: report.opaque_area,
            safe_area: report.safe_area,
            covered_area: report.covered_area,
            must_cover_area: report.must_cover_area,
            must_cover_covered: report.must_cover_covered(),
            beyond_must_cover: report.beyond_must_cover(),
            violations: report.violations().iter().map(|v| v.to_string()).collect(),
            texture,
            levels,
            summary: crate::quality::check_summary(report),
        }
    }
}

/// What `underdraw sweep` reports: the points, the knee and the file
/// written.
#[derive(Clone, Debug, Serialize)]
pub struct SweepResult {
    /// One point per budget tried.
    pub points: Vec<SweepPoint>,
    /// The knee's budget (none for an empty sweep).
    pub knee: Option<usize>,
    /// The fraction of the largest budget's saving the knee reaches.
    pub knee_fraction: f64,
    /// The files written (the CSV).
    pub outputs: Vec<String>,
}

/// One region of a sprite sheet in `cut --json` (with `--regions`,
/// `--find-regions`, or a sheet a batch found): the same keys as a layer's
/// object ([`CutLayer`]: `layer`, `status`, `outputs`, the numbers with
/// `vertex_bytes`, `error`), `layer` being `<sheet stem>/<region name>`,
/// plus the sheet, the region and its rectangle.
#[derive(Clone, Debug, Serialize)]
pub struct SheetRegionLine {
    /// `<sheet stem>/<region name>`, as the table names the row.
    pub layer: String,
    /// The sheet's path.
    pub sheet: String,
    /// The region's name.
    pub region: String,
    /// The region's rectangle in the sheet: x, y, width, height.
    pub rect: [u32; 4],
    /// The files written for it (for an unchanged sheet, those recorded).
    pub outputs: Vec<String>,
    /// `cut`, `unchanged` or `failed`.
    pub status: Status,
    /// Its numbers, when it was cut or is unchanged: a layer's numbers.
    #[serde(flatten)]
    pub numbers: Option<CutLayerNumbers>,
    /// Why it failed.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
    /// The sheet's preview with every region's meshes, when written.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sheet_preview: Option<String>,
}

impl SheetRegionLine {
    /// The lines of a sheet's run, one per region, in the regions' order.
    pub fn of_sheet(r: &crate::sheet::run::SheetReport) -> Vec<SheetRegionLine> {
        r.regions
            .iter()
            .map(|g| {
                let (numbers, error) = match &g.cut {
                    Ok(c) => (Some(CutLayerNumbers::of_result(c)), None),
                    Err(e) => (None, Some(e.to_string())),
                };
                SheetRegionLine {
                    layer: format!("{}/{}", r.stem, g.region.name),
                    sheet: r.sheet.display().to_string(),
                    region: g.region.name.clone(),
                    rect: g.region.rect.to_array(),
                    outputs: g.outputs.iter().map(|p| p.display().to_string()).collect(),
                    status: match (&numbers, r.unchanged) {
                        (None, _) => Status::Failed,
                        (Some(_), true) => Status::Unchanged,
                        (Some(_), false) => Status::Cut,
                    },
                    numbers,
                    error,
                    sheet_preview: r.preview.as_ref().map(|p| p.display().to_string()),
                }
            })
            .collect()
    }
}
