//! Budget sweeps: a layer cut at a range of vertex budgets, the knee of
//! the curve, and the split of a vertex total over several layers' curves
//! by marginal gain.
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
use crate::cut::cut_sampled;
use crate::settings::CutSettings;
use rayon::prelude::*;
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

/// Cuts a layer at each budget (in parallel), with the other settings of
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
    budgets
        .par_iter()
        .map(|&budget| {
            let out = cut_sampled(sampled, source, &CutSettings { budget, ..*base });
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

/// One option of a layer: a mesh of `vertices` vertices saving `gain`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct CurvePoint {
    /// Vertices of this option's mesh.
    pub vertices: usize,
    /// What this option saves, in the caller's unit (fragments per frame
    /// in the scene's allocation, [`crate::scene::budget`]); more is better.
    pub gain: f64,
}

/// The indices of the points of `curve` on its upper concave hull, from
/// `start` on, each with more vertices and more gain than the one before.
fn upper_hull(curve: &[CurvePoint], start: usize) -> Vec<usize> {
    let mut order: Vec<usize> = (0..curve.len())
        .filter(|&j| curve[j].vertices > curve[start].vertices)
        .collect();
    order.sort_by(|&a, &b| {
        curve[a]
            .vertices
            .cmp(&curve[b].vertices)
            .then(curve[b].gain.total_cmp(&curve[a].gain))
    });
    let mut hull = vec![start];
    let mut best = curve[start].gain;
    for j in order {
        let p = curve[j];
        if p.gain <= best {
            continue; // more vertices for no more gain
        }
        best = p.gain;
        while hull.len() >= 2 {
            let (a, b) = (curve[hull[hull.len() - 2]], curve[hull[hull.len() - 1]]);
            // b lies on or under the chord a-p: drop it
            let left = (b.gain - a.gain) * (p.vertices - a.vertices) as f64;
            let right = (p.gain - a.gain) * (b.vertices - a.vertices) as f64;
            if left <= right {
                hull.pop();
            } else {
                break;
            }
        }
        hull.push(j);
    }
    hull
}

/// Chooses one point per curve so that the vertices add up to at most
/// `total`, by marginal gain: every curve starts at its cheapest point;
/// then, while vertices are left, the curve whose next step along its upper
/// concave hull gains most per vertex (and fits) takes it; last, any single
/// curve that can move to a better point with the vertices left does.
///
/// For concave curves in unit steps this is optimal (marginal allocation,
/// Gross 1956 and Fox 1966, from memory). Returns the chosen index per
/// curve, or `None` when even the cheapest points exceed `total` or a curve
/// is empty.
pub fn allocate(curves: &[Vec<CurvePoint>], total: usize) -> Option<Vec<usize>> {
    let mut chosen = Vec::with_capacity(curves.len());
    for c in curves {
        let start = (0..c.len()).min_by(|&a, &b| {
            c[a].vertices
                .cmp(&c[b].vertices)
                .then(c[b].gain.total_cmp(&c[a].gain))
        })?;
        chosen.push(start);
    }
    let used: usize = chosen.iter().zip(curves).map(|(&j, c)| c[j].vertices).sum();
    let mut left = total.checked_sub(used)?;
    let hulls: Vec<Vec<usize>> = curves
        .iter()
        .zip(&chosen)
        .map(|(c, &s)| upper_hull(c, s))
        .collect();
    let mut at = vec![0usize; curves.len()];
    loop {
        let mut best: Option<(f64, usize, usize)> = None;
        for (i, c) in curves.iter().enumerate() {
            let Some(&next) = hulls[i].get(at[i] + 1) else {
                continue;
            };
            let (a, b) = (c[hulls[i][at[i]]], c[next]);
            let dv = b.vertices - a.vertices;
            let rate = (b.gain - a.gain) / dv as f64;
            if dv <= left && best.is_none_or(|(r, _, _)| rate > r) {
                best = Some((rate, i, dv));
            }
        }
        let Some((_, i, dv)) = best else { break };
        left -= dv;
        at[i] += 1;
        chosen[i] = hulls[i][at[i]];
    }
    loop {
        let mut best: Option<(f64, usize, usize)> = None;
        for (i, c) in curves.iter().enumerate() {
            let cur = c[chosen[i]];
            for (j, p) in c.iter().enumerate() {
                let more = p.gain - cur.gain;
                if p.vertices <= cur.vertices + left
                    && more > 0.0
                    && best.is_none_or(|(m, _, _)| more > m)
                {
                    best = Some((more, i, j));
                }
            }
        }
        let Some((_, i, j)) = best else { break };
        left = left + curves[i][chosen[i]].vertices - curves[i][j].vertices;
        chosen[i] = j;
    }
    Some(chosen)
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

    /// A deterministic generator (64-bit LCG, Knuth's MMIX constants, from memory).
    struct Lcg(u64);
    impl Lcg {
        fn next(&mut self) -> f64 {
            self.0 = self
                .0
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (self.0 >> 11) as f64 / (1u64 << 53) as f64
        }
    }

    /// Best total gain by trying every combination.
    fn brute(curves: &[Vec<CurvePoint>], total: usize) -> f64 {
        fn go(c: &[Vec<CurvePoint>], left: isize) -> f64 {
            match c.split_first() {
                None => 0.0,
                Some((first, rest)) => first
                    .iter()
                    .filter(|p| p.vertices as isize <= left)
                    .map(|p| p.gain + go(rest, left - p.vertices as isize))
                    .fold(f64::NEG_INFINITY, f64::max),
            }
        }
        go(curves, total as isize)
    }

    /// Concave curves in steps of one vertex: marginal allocation is
    /// optimal (Gross 1956, Fox 1966, from memory), checked by brute force.
    #[test]
    fn marginal_gain_is_optimal_on_concave_unit_steps() {
        let mut rng = Lcg(7);
        for case in 0..200 {
            let curves: Vec<Vec<CurvePoint>> = (0..3)
                .map(|_| {
                    let mut steps: Vec<f64> = (0..5).map(|_| rng.next() * 10.0).collect();
                    steps.sort_by(|a, b| b.total_cmp(a));
                    let mut g = 0.0;
                    let mut v = vec![CurvePoint {
                        vertices: 4,
                        gain: 0.0,
                    }];
                    for (k, s) in steps.iter().enumerate() {
                        g += s;
                        v.push(CurvePoint {
                            vertices: 5 + k,
                            gain: g,
                        });
                    }
                    v
                })
                .collect();
            let total = 12 + case % 15;
            let pick = allocate(&curves, total).unwrap();
            let used: usize = pick.iter().zip(&curves).map(|(&j, c)| c[j].vertices).sum();
            let gain: f64 = pick.iter().zip(&curves).map(|(&j, c)| c[j].gain).sum();
            assert!(used <= total);
            assert!((gain - brute(&curves, total)).abs() < 1e-9, "case {case}");
        }
    }

    /// On any curves the choice fits the total and is never worse than
    /// every curve's cheapest point.
    #[test]
    fn allocation_fits_and_refuses_too_small_totals() {
        let mut rng = Lcg(11);
        for _ in 0..200 {
            let curves: Vec<Vec<CurvePoint>> = (0..4)
                .map(|_| {
                    (0..6)
                        .map(|_| CurvePoint {
                            vertices: 4 + (rng.next() * 60.0) as usize,
                            gain: rng.next() * 100.0 - 20.0,
                        })
                        .collect()
                })
                .collect();
            let min: usize = curves
                .iter()
                .map(|c| c.iter().map(|p| p.vertices).min().unwrap())
                .sum();
            assert!(allocate(&curves, min - 1).is_none());
            let total = min + (rng.next() * 100.0) as usize;
            let pick = allocate(&curves, total).unwrap();
            let used: usize = pick.iter().zip(&curves).map(|(&j, c)| c[j].vertices).sum();
            assert!(used <= total);
            let got: f64 = pick.iter().zip(&curves).map(|(&j, c)| c[j].gain).sum();
            let cheapest: f64 = curves
                .iter()
                .map(|c| {
                    let v = c.iter().map(|p| p.vertices).min().unwrap();
                    c.iter()
                        .filter(|p| p.vertices == v)
                        .map(|p| p.gain)
                        .fold(f64::MIN, f64::max)
                })
                .sum();
            assert!(got >= cheapest - 1e-9 && got <= brute(&curves, total) + 1e-9);
        }
    }
}
