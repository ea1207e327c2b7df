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
    // without counting a position given up by one class as half saved.
    let mut variants: Vec<(&Prepared, bool, bool)> = vec![
        (&plain, true, true),
        (&plain, false, true),
        (&plain, true, false),
    ];
    if let Some(o) = &opened {
        variants.push((o, true, true));
        variants.push((o, false, true));
    }
    let results: Vec<(i64, Fit)> = variants
        .par_iter()
        .map(|&(safe, cap, credit)| {
            let mut fitter = Fitter::new(safe, cover);
            fitter.set_cap_savings(cap);
            fitter.set_share_credit(credit);
            fitter.fit(budget);
            (fitter.objective(), fitter.result())
        })
        .collect();
    // the first of the best, so the choice does not depend on scheduling
    results
        .into_iter()
        .enumerate()
        .max_by_key(|(i, (obj, _))| (*obj, std::cmp::Reverse(*i)))
        .map(|(_, (_, fit))| fit)
        .expect("at least one variant")
}
