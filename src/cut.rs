//! The whole cut of one layer, as a chain of public stages, each a plain
//! function from one typed value to the next:
//!
//! | stage | from → to | invariant of the value |
//! |---|---|---|
//! | [`prepare_regions`] | what the GPU samples ([`Sampled`]) → [`PreparedRegions`] | the must-cover region traced with its pinches filled, the safe-opaque region as row runs, their areas and texel classes |
//! | [`fit_regions`] | [`PreparedRegions`] → [`Outlines`] | at most `budget` distinct vertex positions; opaque rings inside the safe region, covering rings around the must-cover region |
//! | [`triangulate_outlines`] | a [`Fit`] → [`Triangulation`] | two triangle lists over one vertex array, vertices in the three runs of [`crate::vertex_order`] |
//! | [`layer_mesh`] | [`Outlines`] + [`Triangulation`] → [`LayerMesh`] | the mesh file's value with its statistics |
//!
//! [`cut_sampled`] (and [`cut_layer`] for a PNG's alpha) runs the stages,
//! checks the mesh with the independent [`crate::check`] and falls back to
//! a plainer mesh when the check fails; [`fit_layer`] runs the first two.
//! Every caller that cuts (`batch`, `sweep`, `scene`, the benchmarks) goes
//! through these functions: there is no other copy of the glue.
//!
//! Invariant: a [`LayerMesh`] returned by [`cut_layer`] satisfies the
//! contract (as verified by the independent [`crate::check`]); when a step
//! of the fast path fails that check, the cut falls back to a plainer mesh
//! that passes it, and says so in [`CutOutcome::notes`].

use crate::alpha::{must_cover_sampled, safe_opaque_sampled, AlphaMap, RegionStats, Sampled};
use crate::check::check_mesh_sampled;
use crate::fit::{fit_outlines, prepare_cover, Class, Fit, LayerFit, Prepared};
use crate::mask::RowRuns;
use crate::mesh::{LayerMesh, MeshStats, TriangleList, Winding, FORMAT, VERSION};
use crate::outline::Point;
use crate::settings::CutSettings;
use crate::triangulate::{triangulate, TriangulateError, Triangulation};
use crate::vertex_order::order_vertices;

/// A cut layer and what the user should know about it.
#[derive(Clone, Debug)]
pub struct CutOutcome {
    /// The two meshes, checked.
    pub mesh: LayerMesh,
    /// Plain-language remarks ("fully transparent: empty meshes", fallbacks,
    /// a cut that stopped more than 2 vertices under its budget while its
    /// capture was under 0.99 or its excess over 0.01).
    pub notes: Vec<String>,
}

/// Stage 1's value: the layer's two regions, ready for fitting.
///
/// Invariants: `cover` is the must-cover region with its pinches filled,
/// traced and indexed ([`prepare_cover`]); `safe` is the safe-opaque
/// region's row runs (its pinches are removed and it is traced by the
/// fitter, once per variant); `stats` holds both regions' areas and the
/// layer's texel classes; `size` is level 0's width and height.
pub struct PreparedRegions {
    /// The safe-opaque region as row runs on the half-texel grid.
    pub safe: RowRuns,
    /// The must-cover region, prepared for fitting.
    pub cover: Prepared,
    /// The regions' areas and the texel classes.
    pub stats: RegionStats,
    /// Level 0's width and height, texels.
    pub size: [u32; 2],
}

/// Stage 1: the alpha analysis of what the GPU samples, one region at a
/// time as row runs (the must-cover one is prepared before the safe one is
/// built, so only one region's analysis is live at a time).
///
/// ```
/// use underdraw::{alpha::{AlphaMap, Sampled}, cut::prepare_regions, settings::CutSettings};
/// // an 8x8 layer, a 4x4 opaque square in its middle, transparent around
/// let alpha: Vec<u8> = (0..64)
///     .map(|i| if (2..6).contains(&(i % 8)) && (2..6).contains(&(i / 8)) { 255 } else { 0 })
///     .collect();
/// let map = AlphaMap::from_raw(8, 8, alpha);
/// let r = prepare_regions(Sampled::source(&map), &CutSettings::default());
/// // bilinear: a sample is fully opaque only where its four texels all are
/// // (texel centres 2.5..5.5: a 3x3 square), and visible wherever one is
/// // (1.5..6.5: a 5x5 square)
/// assert_eq!((r.stats.opaque_texels, r.stats.transparent_texels), (16, 48));
/// assert_eq!((r.stats.safe_opaque_area, r.stats.must_cover_area), (9.0, 25.0));
/// assert_eq!(r.size, [8, 8]);
/// ```
pub fn prepare_regions(sampled: Sampled, settings: &CutSettings) -> PreparedRegions {
    let map = sampled.level0();
    let (cover_runs, cover_area) = must_cover_sampled(sampled, settings);
    let cover = prepare_cover(cover_runs);
    let (safe, safe_area) = safe_opaque_sampled(sampled, settings);
    PreparedRegions {
        safe,
        cover,
        stats: RegionStats::new(map, settings.alpha, safe_area, cover_area),
        size: [map.width, map.height],
    }
}

/// Stage 2's value: the fitted outlines of a layer at a budget, before
/// triangulation.
///
/// Invariants: those of [`Fit`] (at most the budget's distinct vertex
/// positions; opaque rings inside the safe region, covering rings around
/// the must-cover region); `stats` and `size` are stage 1's.
#[derive(Clone, Debug)]
pub struct Outlines {
    /// The outlines fitted to the budget.
    pub fit: Fit,
    /// The regions' areas and the texel classes.
    pub stats: RegionStats,
    /// Level 0's width and height, texels.
    pub size: [u32; 2],
}

/// Stage 2: fits the regions' outlines to `budget` (the fitter's entry,
/// [`fit_outlines`]); the prepared regions are consumed.
///
/// ```
/// use underdraw::{alpha::{AlphaMap, Sampled}, cut::{fit_regions, prepare_regions}};
/// use underdraw::{fit::Class, settings::CutSettings};
/// // a 16x16 fully opaque layer: both regions are the whole rectangle
/// let map = AlphaMap::from_raw(16, 16, vec![255; 256]);
/// let regions = prepare_regions(Sampled::source(&map), &CutSettings::default());
/// let outlines = fit_regions(regions, 4);
/// // one rectangle, its four corners shared by both outlines
/// assert_eq!(outlines.fit.vertices, 4);
/// assert_eq!(outlines.fit.outline_vertices(Class::Opaque), 4);
/// assert_eq!(outlines.fit.outline_vertices(Class::Cover), 4);
/// ```
pub fn fit_regions(regions: PreparedRegions, budget: usize) -> Outlines {
    let PreparedRegions {
        safe,
        cover,
        stats,
        size,
    } = regions;
    let fit = fit_outlines(safe, &cover, budget);
    drop(cover);
    Outlines { fit, stats, size }
}

/// Stages 1 and 2 on a PNG's alpha: analyzes, traces and fits a layer's
/// outlines to `settings.budget`.
pub fn fit_layer(map: &AlphaMap, settings: &CutSettings) -> Outlines {
    fit_regions(
        prepare_regions(Sampled::source(map), settings),
        settings.budget,
    )
}

/// Stage 3: fitted rings → an opaque and a blended triangle list over one
/// vertex array ([`triangulate`]), the vertices renumbered and the
/// triangles sorted ([`order_vertices`]); fails ([`TriangulateError`]) when the rings
/// cannot be triangulated.
///
/// ```
/// use underdraw::{alpha::AlphaMap, cut::{fit_layer, triangulate_outlines}, settings::CutSettings};
/// // a 16x16 fully opaque layer: one opaque quad, two triangles
/// let map = AlphaMap::from_raw(16, 16, vec![255; 256]);
/// let outlines = fit_layer(&map, &CutSettings::default());
/// let t = triangulate_outlines(&outlines.fit).unwrap();
/// assert_eq!((t.positions.len(), t.opaque.len(), t.blended.len()), (4, 2, 0));
/// ```
pub fn triangulate_outlines(fit: &Fit) -> Result<Triangulation, TriangulateError> {
    let mut t = triangulate(fit)?;
    order_vertices(&mut t);
    Ok(t)
}

/// Stage 4: the mesh file's value from the fitted outlines (their
/// statistics) and their triangulation: positions in texels, UVs over the
/// layer, the two index lists and the statistics. Not checked: that is
/// [`cut_sampled`]'s job.
///
/// ```
/// use underdraw::{alpha::AlphaMap, cut::{fit_layer, layer_mesh, triangulate_outlines}};
/// use underdraw::settings::CutSettings;
/// let map = AlphaMap::from_raw(16, 16, vec![255; 256]);
/// let settings = CutSettings::default();
/// let outlines = fit_layer(&map, &settings);
/// let t = triangulate_outlines(&outlines.fit).unwrap();
/// let mesh = layer_mesh(&outlines, &t, "quad.png", &settings);
/// assert_eq!(mesh.size, [16, 16]);
/// assert_eq!(mesh.vertex_count(), 4);
/// // the opaque quad covers the whole 16 x 16 layer
/// assert_eq!((mesh.stats.opaque_area, mesh.stats.covered_area), (256.0, 256.0));
/// ```
pub fn layer_mesh(
    outlines: &Outlines,
    t: &Triangulation,
    source: &str,
    settings: &CutSettings,
) -> LayerMesh {
    to_mesh(
        outlines.size,
        source,
        settings,
        &outlines.stats,
        &outlines.fit,
        t,
    )
}

/// Cuts one layer into its opaque and blended meshes.
///
/// ```
/// use underdraw::{alpha::AlphaMap, cut::cut_layer, settings::CutSettings};
/// // a 16x16 fully opaque layer is one opaque quad
/// let map = AlphaMap::from_raw(16, 16, vec![255; 256]);
/// let out = cut_layer(&map, "quad.png", &CutSettings::default());
/// assert_eq!(out.mesh.vertex_count(), 4);
/// assert_eq!(out.mesh.opaque.triangle_count(), 2);
/// assert_eq!(out.mesh.blended.triangle_count(), 0);
/// ```
pub fn cut_layer(map: &AlphaMap, source: &str, settings: &CutSettings) -> CutOutcome {
    cut_sampled(Sampled::source(map), source, settings)
}

/// Cuts one layer against what the GPU samples ([`Sampled`]): a shipped
/// texture's decoded levels, alone or with the source's block levels (then
/// the meshes hold for both). The levels must
/// [validate](Sampled::validate). Runs the stages of this module in order
/// and checks the result.
pub fn cut_sampled(sampled: Sampled, source: &str, settings: &CutSettings) -> CutOutcome {
    let outlines = fit_regions(prepare_regions(sampled, settings), settings.budget);
    finish(outlines, source, settings, &|mesh: &LayerMesh| {
        sampled_check(mesh, sampled)
    })
}

/// A layer's cuts at several budgets from one analysis (a budget curve, as
/// `sweep` and the scene allocation need): stage 1 ([`prepare_regions`],
/// which does not depend on the budget) runs once, then each budget is
/// fitted from the shared regions, triangulated and checked (in parallel).
/// `result[i]` is exactly [`cut_sampled`] with `settings.budget =
/// budgets[i]`.
///
/// ```
/// use underdraw::{alpha::{AlphaMap, Sampled}, cut::{cut_budgets, cut_sampled}};
/// use underdraw::settings::CutSettings;
/// // a soft disc: its cuts grow with the budget
/// let alpha = (0..64 * 64)
///     .map(|i| {
///         let (x, y) = ((i % 64) as f64 - 31.5, (i / 64) as f64 - 31.5);
///         (255.0 * (28.0 - (x * x + y * y).sqrt()).clamp(0.0, 1.0)) as u8
///     })
///     .collect();
/// let map = AlphaMap::from_raw(64, 64, alpha);
/// let base = CutSettings::default();
/// let curve = cut_budgets(Sampled::source(&map), "disc.png", &base, &[8, 32]);
/// for (out, budget) in curve.iter().zip([8, 32]) {
///     let one = cut_sampled(Sampled::source(&map), "disc.png", &CutSettings { budget, ..base });
///     assert_eq!(out.mesh, one.mesh);
/// }
/// ```
pub fn cut_budgets(
    sampled: Sampled,
    source: &str,
    base: &CutSettings,
    budgets: &[usize],
) -> Vec<CutOutcome> {
    use rayon::prelude::*;
    let regions = prepare_regions(sampled, base);
    // what the fit does not owe to the budget is done once (`LayerFit`)
    let layer_fit = LayerFit::new(regions.safe, &regions.cover, budgets);
    budgets
        .par_iter()
        .map(|&budget| {
            let settings = CutSettings { budget, ..*base };
            let fit = layer_fit.fit(budget);
            let outlines = Outlines {
                fit,
                stats: regions.stats,
                size: regions.size,
            };
            finish(outlines, source, &settings, &|mesh: &LayerMesh| {
                sampled_check(mesh, sampled)
            })
        })
        .collect()
}

/// [`cut_sampled`]'s self-check: the independent [`crate::check`] on what
/// the GPU samples, its violations joined.
fn sampled_check(mesh: &LayerMesh, sampled: Sampled) -> Result<(), String> {
    let report =
        check_mesh_sampled(mesh, sampled.source, sampled.shipped).map_err(|e| e.to_string())?;
    if report.holds() {
        Ok(())
    } else {
        Err(report.violations().join("; "))
    }
}

/// Cuts regions that were analyzed elsewhere: `safe` and `cover` on the
/// half-texel grid of a `size` (W x H texels) rectangle, such as a sprite
/// sheet's regions clipped to one region's rectangle ([`crate::sheet`]).
/// `regions` holds their areas and the rectangle's texel classes; `check`
/// verifies a mesh (positions in the rectangle's texels) and says why it
/// fails (any error that displays: the fallback's note quotes it). The
/// stages, the fallback and the notes are those of [`cut_sampled`].
pub fn cut_runs<E: std::fmt::Display>(
    size: (u32, u32),
    (safe, cover): (RowRuns, RowRuns),
    regions: &RegionStats,
    source: &str,
    settings: &CutSettings,
    check: &dyn Fn(&LayerMesh) -> Result<(), E>,
) -> CutOutcome {
    let prepared = PreparedRegions {
        safe,
        cover: prepare_cover(cover),
        stats: *regions,
        size: [size.0, size.1],
    };
    finish(
        fit_regions(prepared, settings.budget),
        source,
        settings,
        &|mesh: &LayerMesh| check(mesh).map_err(|e| e.to_string()),
    )
}

/// Stages 3 and 4 and the self-check, with the fallback: when the mesh
/// fails `check`, the covering outline alone, all blended.
fn finish(
    outlines: Outlines,
    source: &str,
    settings: &CutSettings,
    check: &dyn Fn(&LayerMesh) -> Result<(), String>,
) -> CutOutcome {
    let mut notes = Vec::new();
    if outlines.fit.cover.is_empty() {
        notes.push("fully transparent: the meshes are empty".to_string());
    }
    let attempt = triangulate_outlines(&outlines.fit)
        .map_err(|e| e.to_string())
        .and_then(|t| {
            if t.positions.len() > settings.budget {
                return Err(format!(
                    "{} vertices after triangulation, over the budget of {}",
                    t.positions.len(),
                    settings.budget
                ));
            }
            let mesh = layer_mesh(&outlines, &t, source, settings);
            check(&mesh).map(|()| mesh)
        });
    let mesh = match attempt {
        Ok(mesh) => mesh,
        Err(why) => {
            // Plainer mesh: the covering outline alone, all blended.
            notes.push(format!(
                "opaque mesh left out: its triangulation failed the contract check ({why})"
            ));
            let plain = Outlines {
                fit: Fit {
                    opaque: Vec::new(),
                    cover: outlines.fit.cover.clone(),
                    vertices: outlines.fit.outline_vertices(Class::Cover),
                },
                ..outlines
            };
            let t = triangulate_outlines(&plain.fit).unwrap_or_default();
            layer_mesh(&plain, &t, source, settings)
        }
    };
    let s = &mesh.stats;
    if s.vertices + 2 < settings.budget && (s.opaque_capture() < 0.99 || s.excess_share() > 0.01) {
        notes.push(format!(
            "stopped at {} of {} vertices: no further vertex the fitter tried gains area \
             (an island or a hole given up whole comes back only as a rectangle, where one fits)",
            s.vertices, settings.budget
        ));
    }
    CutOutcome { mesh, notes }
}

/// Area in texels (orient is twice the area in half units: / 8).
fn area(pos: &[Point], tris: &[[u32; 3]]) -> f64 {
    let twice_half_units: i64 = tris
        .iter()
        .map(|t| crate::fit::orient(pos[t[0] as usize], pos[t[1] as usize], pos[t[2] as usize]))
        .sum();
    twice_half_units as f64 / 8.0
}

fn to_mesh(
    size: [u32; 2],
    source: &str,
    settings: &CutSettings,
    regions: &RegionStats,
    fit: &Fit,
    t: &Triangulation,
) -> LayerMesh {
    let (w, h) = (size[0] as f32, size[1] as f32);
    let mut positions = Vec::with_capacity(t.positions.len() * 2);
    let mut uvs = Vec::with_capacity(t.positions.len() * 2);
    for p in &t.positions {
        let (x, y) = (p[0] as f32 / 2.0, p[1] as f32 / 2.0);
        positions.extend([x, y]);
        uvs.extend([x / w, y / h]);
    }
    let flat = |tris: &[[u32; 3]]| TriangleList {
        indices: tris.iter().flatten().copied().collect(),
    };
    let opaque_area = area(&t.positions, &t.opaque);
    let s = *regions;
    let stats = MeshStats {
        safe_opaque_area: s.safe_opaque_area,
        opaque_area,
        must_cover_area: s.must_cover_area,
        covered_area: opaque_area + area(&t.positions, &t.blended),
        vertices: t.positions.len(),
        opaque_outline_vertices: fit.outline_vertices(Class::Opaque),
        cover_outline_vertices: fit.outline_vertices(Class::Cover),
        opaque_triangles: t.opaque.len(),
        blended_triangles: t.blended.len(),
        opaque_texels: s.opaque_texels,
        partial_texels: s.partial_texels,
        transparent_texels: s.transparent_texels,
        interior_edge_length_unflipped: t.interior_length_earcut,
        interior_edge_length: t.interior_length,
    };
    LayerMesh {
        format: FORMAT.to_string(),
        version: VERSION,
        source: source.to_string(),
        size,
        filter: settings.filter,
        alpha: settings.alpha,
        wrap: settings.wrap,
        budget: Some(settings.budget),
        winding: Winding::Cw,
        positions,
        uvs,
        opaque: flat(&t.opaque),
        blended: flat(&t.blended),
        stats,
        region: None,
    }
}
