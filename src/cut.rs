//! The whole cut of one layer: alpha analysis → outline tracing → fitting to
//! the budget → triangulation → vertex ordering → the mesh file's value,
//! self-checked.
//!
//! Invariant: a [`LayerMesh`] returned by [`cut_layer`] satisfies the
//! contract (as verified by the independent [`crate::check`]); when a step
//! of the fast path fails that check, the cut falls back to a plainer mesh
//! that passes it, and says so in [`CutOutcome::notes`].

use crate::alpha::{
    analyze_runs, must_cover_sampled, safe_opaque_sampled, AlphaMap, RegionStats, Regions, Sampled,
};
use crate::check::check_mesh_sampled;
use crate::fit::{fit_outlines, prepare_cover, Class, Fit};
use crate::mask::RowRuns;
use crate::mesh::{LayerMesh, MeshStats, TriangleList, Winding, FORMAT, VERSION};
use crate::outline::Point;
use crate::settings::CutSettings;
use crate::triangulate::{triangulate, Triangulation};
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

/// The fitted outlines of a layer at a budget, before triangulation.
pub struct Outlines {
    /// The safe-opaque and must-cover regions.
    pub regions: Regions,
    /// The outlines fitted to the budget.
    pub fit: Fit,
}

/// Analyzes, traces and fits a layer's outlines to `settings.budget`.
pub fn fit_layer(map: &AlphaMap, settings: &CutSettings) -> Outlines {
    let runs = analyze_runs(map, settings);
    let regions = Regions::from_runs(&runs);
    let (safe, cover, _) = runs;
    let cover = prepare_cover(cover);
    let fit = fit_outlines(safe, &cover, settings.budget);
    Outlines { regions, fit }
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
/// [validate](Sampled::validate).
pub fn cut_sampled(sampled: Sampled, source: &str, settings: &CutSettings) -> CutOutcome {
    let map = sampled.level0();
    // one region at a time, as runs: the must-cover one is prepared before
    // the safe one is built
    let (cover_mask, cover_area) = must_cover_sampled(sampled, settings);
    let cover = prepare_cover(cover_mask);
    let (safe, safe_area) = safe_opaque_sampled(sampled, settings);
    let fit = fit_outlines(safe, &cover, settings.budget);
    drop(cover);
    let regions = RegionStats::new(map, settings.alpha, safe_area, cover_area);
    let mut notes = Vec::new();
    if fit.cover.is_empty() {
        notes.push("fully transparent: the meshes are empty".to_string());
    }
    let attempt = triangulate(&fit).and_then(|mut t| {
        order_vertices(&mut t);
        if t.positions.len() > settings.budget {
            return Err(format!(
                "{} vertices after triangulation, over the budget of {}",
                t.positions.len(),
                settings.budget
            ));
        }
        let mesh = to_mesh(
            (map.width, map.height),
            source,
            settings,
            &regions,
            &fit,
            &t,
        );
        let report = check_mesh_sampled(&mesh, sampled.source, sampled.shipped)
            .map_err(|e| e.to_string())?;
        if report.holds() {
            Ok(mesh)
        } else {
            Err(report.violations().join("; "))
        }
    });
    let mesh = match attempt {
        Ok(mesh) => mesh,
        Err(why) => {
            // Plainer mesh: the covering outline alone, all blended.
            notes.push(format!(
                "opaque mesh left out: its triangulation failed the contract check ({why})"
            ));
            let plain = Fit {
                opaque: Vec::new(),
                cover: fit.cover.clone(),
                vertices: fit.outline_vertices(Class::Cover),
            };
            let mut t = triangulate(&plain).unwrap_or_default();
            order_vertices(&mut t);
            to_mesh(
                (map.width, map.height),
                source,
                settings,
                &regions,
                &plain,
                &t,
            )
        }
    };
    let s = &mesh.stats;
    if s.vertices + 2 < settings.budget && (s.opaque_capture() < 0.99 || s.excess_share() > 0.01) {
        notes.push(format!(
            "stopped at {} of {} vertices: no further vertex the fitter tried gains area \
             (an island or hole given up whole is not rebuilt)",
            s.vertices, settings.budget
        ));
    }
    CutOutcome { mesh, notes }
}

/// Cuts regions that were analyzed elsewhere: `safe` and `cover` on the
/// half-texel grid of a `size` (W x H texels) rectangle, such as a sprite
/// sheet's regions clipped to one region's rectangle ([`crate::sheet`]).
/// `regions` holds their areas and the rectangle's texel classes; `check`
/// verifies a mesh (positions in the rectangle's texels) and says why it
/// fails. The fallback and notes are those of [`cut_sampled`].
pub fn cut_runs(
    size: (u32, u32),
    (safe, cover): (RowRuns, RowRuns),
    regions: &RegionStats,
    source: &str,
    settings: &CutSettings,
    check: &dyn Fn(&LayerMesh) -> Result<(), String>,
) -> CutOutcome {
    let cover = prepare_cover(cover);
    let fit = fit_outlines(safe, &cover, settings.budget);
    drop(cover);
    let mut notes = Vec::new();
    if fit.cover.is_empty() {
        notes.push("fully transparent: the meshes are empty".to_string());
    }
    let attempt = triangulate(&fit).and_then(|mut t| {
        order_vertices(&mut t);
        if t.positions.len() > settings.budget {
            return Err(format!(
                "{} vertices after triangulation, over the budget of {}",
                t.positions.len(),
                settings.budget
            ));
        }
        let mesh = to_mesh(size, source, settings, regions, &fit, &t);
        check(&mesh).map(|()| mesh)
    });
    let mesh = match attempt {
        Ok(mesh) => mesh,
        Err(why) => {
            notes.push(format!(
                "opaque mesh left out: its triangulation failed the contract check ({why})"
            ));
            let plain = Fit {
                opaque: Vec::new(),
                cover: fit.cover.clone(),
                vertices: fit.outline_vertices(Class::Cover),
            };
            let mut t = triangulate(&plain).unwrap_or_default();
            order_vertices(&mut t);
            to_mesh(size, source, settings, regions, &plain, &t)
        }
    };
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
    (width, height): (u32, u32),
    source: &str,
    settings: &CutSettings,
    regions: &RegionStats,
    fit: &Fit,
    t: &Triangulation,
) -> LayerMesh {
    let (w, h) = (width as f32, height as f32);
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
        size: [width, height],
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
