//! The fitter's entry: the two regions' runs in, the outlines at a budget
//! out, the best of several variants of the greedy fit.
//!
//! At budgets up to [`CONSTRUCTED_MAX_BUDGET`] the per-ring dynamic
//! program (`ring_dp`) adds constructed variants: its opaque rings with
//! the greedy edits' covering rings, and with its own covering rings. The
//! variant with the largest objective (opaque area minus covering area)
//! is chosen, and only it gets the wider local moves of `improve`, which
//! only gain: no variant's result is lost to them.
//!
//! Invariant: the returned [`Fit`] keeps every invariant of [`Fitter`] and
//! has at most `budget` distinct vertex positions; the choice among
//! variants does not depend on thread scheduling.

use super::{geom, open_holes_in_runs, Fit, Fitter, Prepared, SharedAnswers};
use crate::mask::RowRuns;
use crate::outline::Ring;
use rayon::prelude::*;

/// The must-cover region's runs (consumed: its pinches are filled in
/// place), prepared for fitting.
pub fn prepare_cover(mut cover: RowRuns) -> Prepared {
    cover.fill_pinches();
    Prepared::from_runs(cover, false)
}

/// Fits the safe region's runs (consumed) against the prepared must-cover
/// region to `budget`.
pub fn fit_outlines(safe: RowRuns, cover: &Prepared, budget: usize) -> Fit {
    LayerFit::new(safe, cover, &[budget]).fit(budget)
}

/// A layer's fitting work that does not depend on the budget, done once
/// and shared by the fits at each of its budgets: the safe region prepared
/// (and with its holes opened), whether it shares a position with the
/// must-cover outline, and, when several budgets up to 32
/// (`CONSTRUCTED_MAX_BUDGET`) are asked, the per-ring dynamic program's
/// curves for the largest of them (a count's polygon does not depend on
/// the largest count asked, so each budget's fit is exactly the one made
/// alone).
pub struct LayerFit<'c> {
    cover: &'c Prepared,
    plain: Prepared,
    opened: Option<Prepared>,
    shared: bool,
    curves: Option<Curves>,
    /// The tall triangles' containment answers, shared by every fitter.
    answers: SharedAnswers,
}

/// The dynamic program's curves made once for a layer's budgets.
struct Curves {
    opaque: Option<Vec<super::ring_dp::Item>>,
    cover: Option<Vec<super::ring_dp::CoverParts>>,
}

impl<'c> LayerFit<'c> {
    /// Prepares the safe region's runs (consumed) for fitting against the
    /// prepared must-cover region at each of `budgets`.
    pub fn new(mut safe: RowRuns, cover: &'c Prepared, budgets: &[usize]) -> LayerFit<'c> {
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
        let mut fit = LayerFit {
            cover,
            plain,
            opened,
            shared,
            curves: None,
            answers: SharedAnswers::default(),
        };
        // the curves are made here only when more than one budget uses
        // them (a single fit makes them beside its greedy edits)
        let constructed: Vec<usize> = budgets
            .iter()
            .copied()
            .filter(|&b| b <= CONSTRUCTED_MAX_BUDGET)
            .collect();
        if let (true, Some(&kmax)) = (constructed.len() > 1, constructed.iter().max()) {
            let dp_safe = fit.opened.as_ref().unwrap_or(&fit.plain);
            let (opaque, cover) = rayon::join(
                || super::ring_dp::opaque_curves(dp_safe, kmax),
                || super::ring_dp::cover_curve_parts(cover, kmax, COVER_DP_MAX_ISLANDS),
            );
            fit.curves = Some(Curves { opaque, cover });
        }
        fit
    }

    /// The fit at `budget`: the best of the variants, identical to
    /// [`fit_outlines`] at that budget.
    pub fn fit(&self, budget: usize) -> Fit {
        fit_variants(self, budget)
    }
}

/// [`LayerFit::fit`].
fn fit_variants(layer: &LayerFit, budget: usize) -> Fit {
    let (plain, opened, cover, shared) = (&layer.plain, &layer.opened, layer.cover, layer.shared);
    // Each fit with its own share credit runs both rankings of large
    // edits, sharing the edits they make alike (`Fitter::fit_greedy_both`);
    // the share-less one with the first ranking only. The order of the
    // variants (which wins a tie) is: plain capped, plain uncapped, plain
    // without share credit, opened capped, opened uncapped.
    let mut runs: Vec<(&Prepared, bool)> = vec![(plain, true)];
    if shared {
        runs.push((plain, false));
    }
    if let Some(o) = &opened {
        runs.push((o, true));
    }
    let greedy: Vec<Fitter> = runs
        .par_iter()
        .map(|&(safe, credit)| {
            if credit {
                let answers = Some(&layer.answers);
                let (capped, uncapped) =
                    Fitter::fit_greedy_both_sharing(safe, cover, true, budget, answers);
                std::iter::once(capped).chain(uncapped).collect::<Vec<_>>()
            } else {
                let mut fitter = Fitter::new(safe, cover);
                fitter.share_answers(&layer.answers);
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
    let dp_safe = opened.as_ref().unwrap_or(plain);
    let (mut results, parts) = rayon::join(
        || -> Vec<(i64, Fitter)> {
            distinct
                .into_par_iter()
                .map(|mut fitter| {
                    fitter.spend_rest(budget);
                    (fitter.objective(), fitter)
                })
                .collect()
        },
        || constructed_parts(dp_safe, cover, budget, layer),
    );
    // the constructed rings, paired with the covering rings of the greedy
    // edits (also the best greedy fit's) and, apart, with the covering
    // rings of the dynamic program; they come last, so they win only when
    // strictly better
    let constructed = parts.map(|(items, mut options, dp_options)| {
        let greedy_best = results.iter().max_by_key(|r| r.0).map(|r| r.1.result());
        options.extend(greedy_best.as_ref().map(covering_rings));
        // the plain pairings first, then those counting shared positions
        // once (kept apart below)
        [(&options, false), (&dp_options, false)]
            .into_iter()
            .chain([(&options, true), (&dp_options, true)])
            .collect::<Vec<_>>()
            .into_par_iter()
            .filter_map(|(options, sharing)| {
                constructed_fit(
                    dp_safe,
                    cover,
                    &items,
                    options,
                    budget,
                    sharing,
                    &layer.answers,
                )
            })
            .collect::<Vec<_>>()
    });
    let mut sharing = Vec::new();
    for (obj, fitter, shares) in constructed.into_iter().flatten() {
        if shares {
            sharing.push((obj, fitter));
        } else {
            results.push((obj, fitter));
        }
    }
    let (plain_obj, mut best) = first_best(results).expect("at least one variant");
    // the wider local moves (`improve`), on the chosen fit only (on every
    // variant they cost about 40% more time for a few tenths of a percent
    // on a few layers); they only gain, so no variant's result is lost
    best.improve_chosen(budget);
    // the constructed variants that count shared positions once
    // (`ring_dp::shared`) challenge the chosen fit only where they beat it
    // before the local moves, and win only where they end strictly better
    // after their own: so no cut ends worse than without them
    if let Some((obj, mut other)) = first_best(sharing) {
        if obj > plain_obj {
            other.improve_chosen(budget);
            if other.objective() > best.objective() {
                best = other;
            }
        }
    }
    // rectangles of the safe region on straight opaque edges (`tabs`),
    // kept only where they end strictly better
    best.grow_tabs(budget);
    debug_assert!(best.vertices() <= budget);
    best.result()
}

/// The first of the variants with the largest objective, so the choice
/// does not depend on scheduling.
fn first_best(results: Vec<(i64, Fitter<'_>)>) -> Option<(i64, Fitter<'_>)> {
    results
        .into_iter()
        .enumerate()
        .max_by_key(|(i, (obj, _))| (*obj, std::cmp::Reverse(*i)))
        .map(|(_, r)| r)
}

/// Budgets up to which the per-ring dynamic program also runs (its cost
/// grows with the budget; above this the greedy edits are near the best).
pub const CONSTRUCTED_MAX_BUDGET: usize = 32;

/// Covering islands up to which the covering rings also come from the
/// dynamic program (its knapsack takes one ring per island).
const COVER_DP_MAX_ISLANDS: usize = 8;

/// Covering rings to pair with the dynamic program's opaque rings, with
/// the distinct positions they use.
type CoverOption = (Vec<Ring>, usize);

/// A fit's covering rings, one component per island.
fn covering_rings(fit: &Fit) -> CoverOption {
    let rings: Vec<Ring> = fit
        .cover
        .iter()
        .enumerate()
        .flat_map(|(c, poly)| {
            std::iter::once((poly.outer.clone(), false))
                .chain(poly.holes.iter().map(|h| (h.clone(), true)))
                .map(move |(points, hole)| Ring {
                    points,
                    hole,
                    component: c as u32,
                })
        })
        .collect();
    let mut pos: Vec<_> = rings
        .iter()
        .flat_map(|r| r.points.iter().copied())
        .collect();
    pos.sort_unstable();
    pos.dedup();
    let n = pos.len();
    (rings, n)
}

/// The per-ring dynamic program's opaque curves ([`super::ring_dp`]) on
/// `safe`; covering rings from the greedy edits run on the covering
/// outline alone at a few shares of the budget; and the covering rings of
/// the dynamic program for every count it reaches (none when the covering
/// outline has more islands than [`COVER_DP_MAX_ISLANDS`]). `None` when
/// it does not apply.
fn constructed_parts(
    safe: &Prepared,
    cover: &Prepared,
    budget: usize,
    layer: &LayerFit,
) -> Option<(
    Vec<super::ring_dp::Item>,
    Vec<CoverOption>,
    Vec<CoverOption>,
)> {
    if budget > CONSTRUCTED_MAX_BUDGET {
        return None;
    }
    let made = layer.curves.as_ref();
    let items = match made {
        Some(c) => c.opaque.as_ref()?.iter().map(|i| i.up_to(budget)).collect(),
        None => super::ring_dp::opaque_curves(safe, budget)?,
    };
    // largest share first (each continues from the last)
    let mut shares: Vec<usize> = [2, 3, 4, 5, 6]
        .iter()
        .map(|eighths| (budget * eighths / 8).clamp(4, budget.saturating_sub(3).max(4)))
        .collect();
    shares.sort_unstable_by(|a, b| b.cmp(a));
    shares.dedup();
    let mut alone = Fitter::from_rings(safe, cover, Vec::new(), cover.rings.clone());
    alone.share_answers(&layer.answers);
    let mut options = Vec::new();
    for share in shares {
        alone.fit_greedy(share);
        options.push(covering_rings(&alone.result()));
    }
    // the covering rings of smallest area for every count, by the same
    // dynamic program (candidates on the covering outline)
    let mut dp_options = Vec::new();
    let cover_items = match made {
        Some(c) => c
            .cover
            .as_ref()
            .map(|parts| parts.iter().map(|p| p.up_to(budget)).collect::<Vec<_>>()),
        None => super::ring_dp::cover_curves(cover, budget, COVER_DP_MAX_ISLANDS),
    };
    if let Some(cover_items) = cover_items {
        let max_used = budget.saturating_sub(3);
        for (used, _, rings) in super::ring_dp::split_cover(&cover_items, max_used) {
            dp_options.push((rings, used));
        }
    }
    Some((items, options, dp_options))
}

/// The dynamic program's opaque rings paired with the best of the covering
/// options (by objective: opaque area minus covering area), with that
/// objective. `sharing`: the opaque side may use the positions the covering
/// rings leave of the budget plus those it shares with them
/// ([`super::ring_dp::split_opaque_sharing`]); else the budget minus the
/// covering rings' count.
fn best_pairing(
    items: &[super::ring_dp::Item],
    options: &[CoverOption],
    budget: usize,
    sharing: bool,
) -> Option<(i64, Vec<Ring>, Vec<Ring>)> {
    let mut best: Option<(i64, Vec<Ring>, &[Ring])> = None;
    for (covering, used) in options {
        let cover_area2: i64 = covering.iter().map(|r| geom::twice_area(&r.points)).sum();
        let split = if sharing {
            super::ring_dp::split_opaque_sharing(items, covering, *used, budget)
        } else {
            super::ring_dp::split_opaque(items, budget.saturating_sub(*used))
        };
        let Some((opaque_area2, opaque)) = split else {
            continue;
        };
        let objective = opaque_area2 - cover_area2;
        if best.as_ref().is_none_or(|b| objective > b.0) {
            best = Some((objective, opaque, covering));
        }
    }
    best.map(|(o, opaque, covering)| (o, opaque, covering.to_vec()))
}

/// The best pairing ([`best_pairing`]) refined by the fitter's insertions,
/// exchanges and lattice moves, with `sharing` passed back. With `sharing`,
/// `None` where it pairs the same rings as without.
fn constructed_fit<'a>(
    safe: &'a Prepared,
    cover: &'a Prepared,
    items: &[super::ring_dp::Item],
    options: &[CoverOption],
    budget: usize,
    sharing: bool,
    answers: &'a SharedAnswers,
) -> Option<(i64, Fitter<'a>, bool)> {
    let (objective, opaque, covering) = best_pairing(items, options, budget, sharing)?;
    if sharing {
        let plain = best_pairing(items, options, budget, false);
        if plain.is_some_and(|p| p.0 == objective && p.1 == opaque && p.2 == covering) {
            return None;
        }
    }
    let mut fitter = Fitter::from_rings(safe, cover, opaque, covering);
    fitter.share_answers(answers);
    if fitter.vertices() > budget {
        return None;
    }
    fitter.budget = budget;
    fitter.spend_rest(budget);
    Some((fitter.objective(), fitter, sharing))
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
