//! The fitter's entry: the two regions' runs in, the outlines at a budget
//! out, the best of several variants of the greedy fit.
//!
//! Invariant: the returned [`Fit`] keeps every invariant of [`Fitter`] and
//! has at most `budget` distinct vertex positions; the choice among
//! variants does not depend on thread scheduling.

use super::{open_holes_in_runs, Fit, Fitter, Prepared};
use crate::mask::RowRuns;
use rayon::prelude::*;

/// The must-cover region's runs (consumed: its pinches are filled in
/// place), prepared for fitting.
pub fn prepare_cover(mut cover: RowRuns) -> Prepared {
    cover.fill_pinches();
    Prepared::from_runs(cover, false)
}

/// Fits the safe region's runs (consumed) against the prepared must-cover
/// region to `budget`.
pub fn fit_outlines(mut safe: RowRuns, cover: &Prepared, budget: usize) -> Fit {
    safe.remove_pinches();
    let plain = Prepared::from_runs(safe, true);
    // An island with more holes than the budget can keep may do better as
    // one ring with notches: then also try the safe region with its holes
    // opened (on its runs). Each region is fitted with both rankings of
    // large edits; the best result (opaque area minus covering area) wins.
    // Every variant ends by spending what is left of the budget and
    // exchanging vertices while that gains area (`Fitter::fit`).
    let opened = plain.has_holes().then(|| {
        let mut runs = open_holes_in_runs(plain.runs());
        runs.remove_pinches();
        Prepared::from_runs(runs, true)
    });
    // Where the outlines coincide (hard edges), the greedy edits also run
    // without counting a position given up by one class as half saved;
    // where the two regions' exact outlines share no position, that ranking
    // is the same as the default one, so the variant is left out.
    let shared = shares_a_position(&plain, cover);
    // Each fit with its own share credit runs both rankings of large
    // edits, sharing the edits they make alike (`Fitter::fit_greedy_both`);
    // the share-less one with the first ranking only. The order of the
    // variants (which wins a tie) is: plain capped, plain uncapped, plain
    // without share credit, opened capped, opened uncapped.
    let mut runs: Vec<(&Prepared, bool)> = vec![(&plain, true)];
    if shared {
        runs.push((&plain, false));
    }
    if let Some(o) = &opened {
        runs.push((o, true));
    }
    let greedy: Vec<Fitter> = runs
        .par_iter()
        .map(|&(safe, credit)| {
            if credit {
                let (capped, uncapped) = Fitter::fit_greedy_both(safe, cover, true, budget);
                std::iter::once(capped).chain(uncapped).collect::<Vec<_>>()
            } else {
                let mut fitter = Fitter::new(safe, cover);
                fitter.set_share_credit(false);
                fitter.fit_greedy(budget);
                vec![fitter]
            }
        })
        .collect::<Vec<_>>()
        .into_iter()
        .flatten()
        .collect();
    // Variants whose greedy edits ended in the same outlines would spend
    // the rest of the budget alike: only the first of them goes on.
    let mut seen: Vec<Fit> = Vec::new();
    let distinct: Vec<Fitter> = greedy
        .into_iter()
        .filter(|f| {
            let fit = f.result();
            let new = !seen.contains(&fit);
            if new {
                seen.push(fit);
            }
            new
        })
        .collect();
    let (mut results, constructed) = rayon::join(
        || -> Vec<(i64, Fit)> {
            distinct
                .into_par_iter()
                .map(|mut fitter| {
                    fitter.spend_rest(budget);
                    (fitter.objective(), fitter.result())
                })
                .collect()
        },
        || constructed_fit(&plain, opened.as_ref(), cover, budget),
    );
    // the constructed rings come last, so they win only when strictly better
    results.extend(constructed);
    // the first of the best, so the choice does not depend on scheduling
    results
        .into_iter()
        .enumerate()
        .max_by_key(|(i, (obj, _))| (*obj, std::cmp::Reverse(*i)))
        .map(|(_, (_, fit))| fit)
        .expect("at least one variant")
}

/// Budgets up to which the per-ring dynamic program also runs (its cost
/// grows with the budget; above this the greedy edits are near the best).
pub const CONSTRUCTED_MAX_BUDGET: usize = 64;

/// The per-ring dynamic program's rings ([`super::ring_dp`]) on the safe
/// region (its holes opened when it has some), refined by the fitter's
/// insertions, exchanges and lattice moves; `None` when it does not apply.
fn constructed_fit(
    plain: &Prepared,
    opened: Option<&Prepared>,
    cover: &Prepared,
    budget: usize,
) -> Option<(i64, Fit)> {
    if budget > CONSTRUCTED_MAX_BUDGET {
        return None;
    }
    let safe = opened.unwrap_or(plain);
    let (opaque, covering) = super::ring_dp::fit_rings(safe, cover, budget)?;
    let mut fitter = Fitter::from_rings(safe, cover, opaque, covering);
    if fitter.vertices() > budget {
        return None;
    }
    fitter.budget = budget;
    fitter.spend_rest(budget);
    Some((fitter.objective(), fitter.result()))
}

/// Whether a vertex of the safe region's exact outline lies on the
/// must-cover region's exact outline (hard edges, or an image edge both
/// regions reach).
fn shares_a_position(safe: &Prepared, cover: &Prepared) -> bool {
    let on_cover: std::collections::HashSet<_> = cover
        .rings
        .iter()
        .flat_map(|r| r.points.iter().copied())
        .collect();
    safe.rings
        .iter()
        .any(|r| r.points.iter().any(|p| on_cover.contains(p)))
}
