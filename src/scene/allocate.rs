//! The split of a vertex total over several layers' curves (budget
//! options, each with the vertices it takes and what it saves) by
//! marginal gain: what [`super::budget`] uses to choose each layer's
//! budget for `scene --vertex-total`.
//!
//! Invariant: [`allocate`]'s choice never takes more vertices than the
//! total, and is never worse than every curve's cheapest point; on concave
//! curves in unit steps it is optimal.

use serde::Serialize;

/// One option of a layer: a mesh of `vertices` vertices saving `gain`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct CurvePoint {
    /// Vertices of this option's mesh.
    pub vertices: usize,
    /// What this option saves, in the caller's unit (fragments per frame
    /// in the scene's allocation, [`super::budget`]); more is better.
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
