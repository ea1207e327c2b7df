//! Sprite sheets: many images in one texture, each named region cut as its
//! own layer that an engine draws from the sheet.
//!
//! * [`batch`]: sheets found in a `cut` batch (a PNG with a sibling
//!   `<stem>.regions.json`).
//! * [`regions`]: the regions file (`underdraw.regions`, version 1).
//! * [`find`]: regions found from the sheet's alpha (groups of visible
//!   texels separated by transparent ones), in reading order.
//! * [`padding`]: the transparent padding around a region against the
//!   filter's reach, as warnings.
//! * [`shipped`]: a shipped texture of the sheet (or the sheet as one),
//!   its own decoded levels analyzed.
//! * [`preview`]: the sheet's preview, every region's meshes at its
//!   rectangle over the whole sheet.
//! * [`cut_region`]: the cut of one region. The contract on a sheet: the
//!   safe-opaque and must-cover regions are computed on the WHOLE sheet (a
//!   filtered sample near the region's edge reads its neighbours, the
//!   padding or the sheet's edge), then clipped to the region's rectangle;
//!   positions are local to the rectangle, texture coordinates address the
//!   sheet. An animation's one mesh lies inside the safe region of every
//!   frame and covers the must-cover region of any ([`frames`]); a
//!   nine-slice panel's triangles each lie within one slice ([`slices`]).
//!
//! Every region mesh is verified by the independent
//! [`crate::check::check_region_mesh`] before it is returned.

pub mod batch;
pub mod find;
pub mod frames;
pub mod padding;
pub mod preview;
pub mod regions;
pub mod run;
pub mod shipped;
pub mod slices;

use crate::alpha::{analyze_runs, AlphaMap, RegionStats};
use crate::check::check_region_mesh_sampled;
use crate::cut::{cut_runs, CutOutcome};
use crate::mask::RowRuns;
use crate::mesh::{LayerMesh, MeshRegion};
use crate::settings::CutSettings;
use regions::{Rect, RegionKind, SheetRegion};

/// A sheet's safe-opaque and must-cover regions on its whole half-texel
/// grid, for one filter, thresholds and addressing.
pub struct SheetAnalysis {
    /// The settings analyzed for (the budget does not matter).
    pub settings: CutSettings,
    /// Where an opaque mesh may lie, over the whole sheet.
    pub safe: RowRuns,
    /// What must be covered, over the whole sheet.
    pub cover: RowRuns,
    /// The shipped texture's decoded levels analyzed with (level 0 first,
    /// levels 0..=`mip_levels`); empty for the sheet's PNG alone.
    pub shipped: Vec<AlphaMap>,
    /// Whether the sheet's PNG (its block levels) was analyzed: false for
    /// a sheet that is itself a shipped texture.
    pub with_source: bool,
}

impl SheetAnalysis {
    /// Analyzes the whole sheet under `settings`.
    pub fn new(sheet: &AlphaMap, settings: &CutSettings) -> SheetAnalysis {
        let (safe, cover, _) = analyze_runs(sheet, settings);
        SheetAnalysis {
            settings: *settings,
            safe,
            cover,
            shipped: Vec::new(),
            with_source: true,
        }
    }

    /// Analyzes the whole sheet as the GPU samples it (`sampled`, which
    /// must [validate](crate::alpha::Sampled::validate)): safe where the
    /// PNG's block levels and the shipped texture's own decoded levels
    /// all sample opaque, must-cover where any of them is visible. Its
    /// meshes are checked against the same levels.
    pub fn sampled(sampled: crate::alpha::Sampled, settings: &CutSettings) -> SheetAnalysis {
        let (safe, cover, _) = crate::alpha::analyze_sampled_runs(sampled, settings);
        SheetAnalysis {
            settings: *settings,
            safe,
            cover,
            shipped: sampled.shipped.to_vec(),
            with_source: sampled.source.is_some(),
        }
    }
    /// Whether this analysis serves `settings` (same filter, thresholds and
    /// addressing).
    pub fn serves(&self, settings: &CutSettings) -> bool {
        let a = &self.settings;
        (a.filter, a.alpha, a.wrap) == (settings.filter, settings.alpha, settings.wrap)
    }
}

/// One region cut: its mesh (checked) and what the user should know.
#[derive(Clone, Debug)]
pub struct RegionCut {
    /// The region.
    pub region: SheetRegion,
    /// The mesh: positions local to the region, `uvs` addressing the sheet.
    pub mesh: LayerMesh,
    /// Remarks of the cut (fallbacks, an animation's shared-mesh cost).
    pub notes: Vec<String>,
    /// Padding warnings: neighbours within the filter's reach.
    pub warnings: Vec<String>,
    /// With per-frame meshes asked for: `(frame index, mesh)` per frame.
    pub per_frame: Vec<(usize, LayerMesh)>,
}

/// Why a region of a sheet has no mesh.
#[derive(Debug, Clone, thiserror::Error)]
pub enum RegionError {
    /// A nine-slice panel's pieces need more vertices than the budget.
    #[error("the nine-slice panel's {pieces} pieces are cut one by one (no triangle may cross a slice line) and need {needed} vertices together at {per_piece} a piece, over the budget of {budget}\n  hint: raise the budget to at least {needed}")]
    SlicesOverBudget {
        /// Non-empty pieces of the panel.
        pieces: usize,
        /// Vertices the pieces need together at their least.
        needed: usize,
        /// The least vertices a piece is cut with.
        per_piece: usize,
        /// The region's budget.
        budget: usize,
    },
    /// The mesh made fails the independent check: a bug in underdraw.
    #[error(
        "internal error: the {what} fails the check ({why}); please report it with this sheet"
    )]
    FailsCheck {
        /// Which mesh ("region's mesh", "joined nine-slice mesh").
        what: &'static str,
        /// The check's violations or error.
        why: String,
    },
    /// An output of the region cannot be made or written.
    #[error("{0}")]
    Output(#[from] crate::error::FileError),
}

/// Cuts one region of `sheet` (file name `sheet_name`) with `settings`,
/// using the whole sheet's `analysis` (which must
/// [serve](SheetAnalysis::serves) them). `per_frame` also cuts each frame
/// of an animation alone. Errors say why no mesh could be made.
pub fn cut_region(
    sheet: &AlphaMap,
    sheet_name: &str,
    analysis: &SheetAnalysis,
    region: &SheetRegion,
    settings: &CutSettings,
    per_frame: bool,
) -> Result<RegionCut, RegionError> {
    let place = Placement {
        sheet,
        sheet_name,
        analysis,
        settings,
    };
    // the padding as sampled: with a texture shipped for the PNG, its
    // decoded level 0 too
    let shipped = analysis.shipped.first().filter(|_| analysis.with_source);
    let warnings = padding::warnings(sheet, shipped, region, settings);
    let (mesh, notes, per) = match &region.kind {
        RegionKind::Plain => {
            let out = place.cut(&[region.rect], settings.budget)?;
            (out.mesh, out.notes, Vec::new())
        }
        RegionKind::Frames(frames) => frames::cut_frames(&place, frames, per_frame)?,
        RegionKind::Sliced(insets) => {
            let (mesh, notes) = slices::cut_sliced(&place, region.rect, *insets)?;
            (mesh, notes, Vec::new())
        }
    };
    Ok(RegionCut {
        region: region.clone(),
        mesh,
        notes,
        warnings,
        per_frame: per,
    })
}

/// What a region's cut needs of its sheet.
pub struct Placement<'a> {
    /// The sheet's alpha.
    pub sheet: &'a AlphaMap,
    /// The sheet's file name.
    pub sheet_name: &'a str,
    /// The whole sheet's regions.
    pub analysis: &'a SheetAnalysis,
    /// The cut settings.
    pub settings: &'a CutSettings,
}

impl Placement<'_> {
    /// The `region` key for a mesh of `frames` (the first is the rect).
    pub fn region_key(&self, frames: &[Rect]) -> MeshRegion {
        let (w, h) = (self.sheet.width as f64, self.sheet.height as f64);
        let first = frames[0];
        MeshRegion {
            sheet: self.sheet_name.to_string(),
            sheet_size: [self.sheet.width, self.sheet.height],
            rect: first.to_array(),
            slices: None,
            slice_positions: None,
            frames: (frames.len() > 1).then(|| frames.iter().map(|f| f.to_array()).collect()),
            frame_uv_offsets: (frames.len() > 1).then(|| {
                frames
                    .iter()
                    .map(|f| {
                        [
                            ((f.x as f64 - first.x as f64) / w) as f32,
                            ((f.y as f64 - first.y as f64) / h) as f32,
                        ]
                    })
                    .collect()
            }),
        }
    }

    /// Gives a mesh cut in a rectangle's own coordinates its `region` key
    /// and texture coordinates addressing the sheet at `region.rect`.
    pub fn locate(&self, mesh: &mut LayerMesh, region: MeshRegion) {
        let (w, h) = (self.sheet.width as f64, self.sheet.height as f64);
        let [rx, ry, _, _] = region.rect;
        mesh.uvs = mesh
            .positions
            .chunks(2)
            .flat_map(|p| {
                [
                    ((p[0] as f64 + rx as f64) / w) as f32,
                    ((p[1] as f64 + ry as f64) / h) as f32,
                ]
            })
            .collect();
        mesh.region = Some(region);
    }

    /// Cuts the rectangle `frames[0]` at `budget`: safe where every frame's
    /// clipped safe region is, covering what any frame's must-cover
    /// region holds; checked by the independent checker.
    pub fn cut(&self, frames: &[Rect], budget: usize) -> Result<CutOutcome, RegionError> {
        let first = frames[0];
        let mut safe = clip(&self.analysis.safe, first);
        let mut cover = clip(&self.analysis.cover, first);
        for f in &frames[1..] {
            safe = rowwise(&safe, &clip(&self.analysis.safe, *f), true);
            cover = rowwise(&cover, &clip(&self.analysis.cover, *f), false);
        }
        let stats = RegionStats {
            safe_opaque_area: safe.cells_set() as f64 / 4.0,
            must_cover_area: cover.cells_set() as f64 / 4.0,
            ..texel_classes(self.sheet, first, self.settings)
        };
        let key = self.region_key(frames);
        let check = |m: &LayerMesh| {
            let mut m = m.clone();
            self.locate(&mut m, key.clone());
            let a = self.analysis;
            let source = a.with_source.then_some(self.sheet);
            let r = check_region_mesh_sampled(&m, source, &a.shipped, None)
                .map_err(|e| e.to_string())?;
            if r.holds() {
                Ok(())
            } else {
                Err(r.violations().join("; "))
            }
        };
        let settings = CutSettings {
            budget,
            ..*self.settings
        };
        let mut out = cut_runs(
            (first.w, first.h),
            (safe, cover),
            &stats,
            self.sheet_name,
            &settings,
            &check,
        );
        // the fallback is checked too: a mesh that fails is never returned
        check(&out.mesh).map_err(|why| RegionError::FailsCheck {
            what: "region's mesh",
            why,
        })?;
        self.locate(&mut out.mesh, key);
        Ok(out)
    }
}

/// The texel classes inside `rect`.
fn texel_classes(sheet: &AlphaMap, rect: Rect, settings: &CutSettings) -> RegionStats {
    let t = settings.alpha;
    let mut s = RegionStats::default();
    for y in rect.y..rect.y + rect.h {
        for x in rect.x..rect.x + rect.w {
            let a = sheet.get(x, y);
            if a >= t.opaque_min {
                s.opaque_texels += 1;
            } else if a >= t.visible_min {
                s.partial_texels += 1;
            } else {
                s.transparent_texels += 1;
            }
        }
    }
    s
}

/// The cells of `runs` (the sheet's half-texel grid) inside `rect`
/// (texels), moved so the rectangle's top-left corner is cell (0, 0).
pub fn clip(runs: &RowRuns, rect: Rect) -> RowRuns {
    let (x0, x1) = (2 * rect.x, 2 * (rect.x + rect.w));
    let mut out = RowRuns::new(2 * rect.w as usize);
    let mut row = Vec::new();
    for y in 2 * rect.y as usize..2 * (rect.y + rect.h) as usize {
        row.clear();
        if y < runs.height {
            row.extend(
                runs.row(y)
                    .iter()
                    .map(|r| [r[0].max(x0), r[1].min(x1)])
                    .filter(|r| r[0] < r[1])
                    .map(|r| [r[0] - x0, r[1] - x0]),
            );
        }
        out.push_row(&row);
    }
    out
}

/// Row by row intersection (`and`) or union of two regions of one size
/// (the analysis's run operations, [`crate::alpha::runs`]).
pub fn rowwise(a: &RowRuns, b: &RowRuns, and: bool) -> RowRuns {
    let op = if and {
        crate::alpha::runs::intersect
    } else {
        crate::alpha::runs::unite
    };
    let mut out = RowRuns::new(a.width);
    let mut row = Vec::new();
    for y in 0..a.height {
        op(a.row(y), b.row(y), &mut row);
        out.push_row(&row);
    }
    out
}
