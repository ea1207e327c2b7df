//! Budget sweeps: a layer cut at a range of vertex budgets and the knee
//! of the curve (the split of a vertex total over several layers' curves
//! is the scene's, [`crate::scene::allocate`]).
//!
//! The **saving** of a cut is a proxy, in texels, for the fragments it
//! saves against the plain rectangle drawn blended: the opaque area (what
//! it can hide behind it) plus the rectangle's area it leaves uncovered
//! (what it no longer shades itself): `opaque_area + (rect_area -
//! covered_area)`.
//!
//! The **knee** is the smallest budget whose saving reaches a fraction
//! (0.8 by default; the 80/20 rule, common practice, no source) of the
//! saving at the largest budget tried.

use crate::alpha::AlphaMap;
use crate::alpha::Sampled;
use crate::cut::cut_budgets;
use crate::settings::CutSettings;
use serde::Serialize;

/// The budgets a sweep tries.
pub const BUDGETS: [usize; 13] = [4, 6, 8, 12, 16, 24, 32, 48, 64, 96, 128, 192, 256];

/// One cut of a sweep; areas in texels.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SweepPoint {
    /// The vertex budget of this cut.
    pub budget: usize,
    /// Vertices the cut has (both meshes, shared vertices once).
    pub vertices: usize,
    /// Area of the opaque mesh, in texels.
    pub opaque_area: f64,
    /// Area of the two meshes together, in texels.
    pub covered_area: f64,
    /// Area of the layer's rectangle (width x height), in texels.
    pub rect_area: f64,
    /// opaque_area + (rect_area - covered_area).
    pub saving: f64,
    /// The cut's remarks (fallbacks).
    #[serde(skip)]
    pub notes: Vec<String>,
}

/// Cuts a layer at each budget (from one analysis, in parallel:
/// [`crate::cut::cut_budgets`]), with the other settings of
/// `base`; one point per budget, in the order of `budgets`.
///
/// ```
/// use underdraw::{alpha::AlphaMap, settings::CutSettings, sweep::{knee, sweep_layer}};
/// // an 8 x 8 layer opaque throughout: clamped to its edge, no sample of it
/// // is less than opaque, so at any budget the opaque mesh can be the whole
/// // rectangle, which hides 64 texels and leaves none uncovered
/// let map = AlphaMap::from_raw(8, 8, vec![255; 64]);
/// let points = sweep_layer(&map, "full.png", &CutSettings::default(), &[4, 8]);
/// assert_eq!(points.len(), 2);
/// for p in &points {
///     assert_eq!((p.rect_area, p.opaque_area, p.covered_area), (64.0, 64.0, 64.0));
///     assert_eq!(p.saving, 64.0);
/// }
/// // the smallest budget already saves everything: it is the knee
/// assert_eq!(knee(&points, 0.8), Some(4));
/// ```
pub fn sweep_layer(
    map: &AlphaMap,
    source: &str,
    base: &CutSettings,
    budgets: &[usize],
) -> Vec<SweepPoint> {
    sweep_sampled(Sampled::source(map), source, base, budgets)
}

/// [`sweep_layer`] for what the GPU samples: a shipped texture's decoded
/// levels, alone or with the source ([`Sampled`], which must validate).
pub fn sweep_sampled(
    sampled: Sampled,
    source: &str,
    base: &CutSettings,
    budgets: &[usize],
) -> Vec<SweepPoint> {
    let map = sampled.level0();
    let rect_area = map.width as f64 * map.height as f64;
    // one analysis of the layer, each budget fitted from it
    cut_budgets(sampled, source, base, budgets)
        .into_iter()
        .zip(budgets)
        .map(|(out, &budget)| {
            let s = &out.mesh.stats;
            // + 0.0 turns an empty sum's -0 into 0
            let (opaque_area, covered_area) = (s.opaque_area + 0.0, s.covered_area + 0.0);
            SweepPoint {
                budget,
                vertices: out.mesh.vertex_count(),
                opaque_area,
                covered_area,
                rect_area,
                saving: opaque_area + (rect_area - covered_area),
                notes: out.notes,
            }
        })
        .collect()
}

/// The smallest budget whose saving reaches `fraction` of the saving at the
/// largest budget (`None` for an empty sweep).
pub fn knee(points: &[SweepPoint], fraction: f64) -> Option<usize> {
    let top = points.iter().max_by_key(|p| p.budget)?;
    let target = fraction * top.saving;
    points
        .iter()
        .filter(|p| p.saving >= target)
        .map(|p| p.budget)
        .min()
}

/// The sweep as CSV, one row per budget (numbers printed to round-trip).
pub fn to_csv(points: &[SweepPoint]) -> String {
    let mut s = String::from("budget,vertices,opaque_area,covered_area,rect_area,saving\n");
    for p in points {
        s += &format!(
            "{},{},{},{},{},{}\n",
            p.budget, p.vertices, p.opaque_area, p.covered_area, p.rect_area, p.saving
        );
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(budget: usize, saving: f64) -> SweepPoint {
        SweepPoint {
            budget,
            vertices: budget,
            opaque_area: 0.0,
            covered_area: 0.0,
            rect_area: 0.0,
            saving,
            notes: Vec::new(),
        }
    }

    #[test]
    fn knee_is_the_smallest_budget_reaching_the_fraction() {
        let pts = [
            point(4, 10.0),
            point(8, 79.0),
            point(16, 80.0),
            point(32, 100.0),
        ];
        assert_eq!(knee(&pts, 0.8), Some(16));
        assert_eq!(knee(&pts, 0.1), Some(4));
        assert_eq!(knee(&pts, 1.0), Some(32));
        assert_eq!(knee(&[], 0.8), None);
    }
}
