//! The fitter against an independent reference on terrain-like layers: a
//! per-column dynamic program over the layer's profile.
//!
//! A terrain-like layer (skyline, hills, mountains, clouds over a base)
//! is, for this reference, what is solid from its bottom edge up to a
//! profile. The reference cuts it into two polygons that share the two
//! bottom corners of the layer: under the opaque profile, the polygon of
//! largest area whose upper chain has its vertices on a grid of column
//! boundaries (every `STEP` texels), and over the visible profile, the
//! polygon of smallest area likewise. For each chain the best polygon for
//! every vertex count comes from one dynamic program over the valid
//! shortcuts between grid columns (polygonal approximation as a shortest
//! path over valid shortcuts, in the manner of Imai & Iri 1986 and
//! Perez & Vidal 1994, from memory): O(k n^2) for n columns and k vertices.
//! The budget is then split between the two chains in every way.
//!
//! The profiles follow the contract's definitions for `bilinear` at mip
//! level 0 (README, "When the guarantee holds"; the LINEAR filtering rule
//! of the OpenGL ES 3.x specification, from memory): a point is safe when
//! the square of half a texel around it touches only opaque texels, must be
//! covered when that square touches a visible texel; beyond the bottom
//! edge a sample reads the border texel. Column heights are taken
//! conservatively (the worst neighbour, wrapped or clamped), so the
//! reference's polygons keep the contract.
//!
//! The saving of a cut is opaque area + (rectangle area - covered area),
//! texels, as `sweep` defines it.

#[allow(dead_code)]
#[path = "../benches/quality/sets.rs"]
mod sets;

use underdraw::alpha::AlphaMap;
use underdraw::cut::cut_layer;
use underdraw::settings::{CutSettings, Filter, FilterMode};

/// Columns between the reference's candidate vertices, in texels (every
/// texel column boundary).
const STEP: usize = 1;

/// Per texel column: the top of the bottom-anchored run where
/// `keep(alpha)` holds (H when the bottom texel fails), and the first row
/// where any texel passes `any(alpha)` (H when none).
fn columns(map: &AlphaMap) -> (Vec<f64>, Vec<f64>) {
    let (w, h) = (map.width, map.height);
    let mut solid = vec![h as f64; w as usize];
    let mut visible = vec![h as f64; w as usize];
    for x in 0..w {
        let mut y = h;
        while y > 0 && map.get(x, y - 1) == 255 {
            y -= 1;
        }
        solid[x as usize] = y as f64;
        if let Some(first) = (0..h).find(|&y| map.get(x, y) >= 1) {
            visible[x as usize] = first as f64;
        }
    }
    (solid, visible)
}

/// Best chain areas (area between the chain and the bottom edge, texels)
/// for every vertex count 2..=kmax, over candidate columns `xs`; `limit[c]`
/// bounds the chain over texel strip [c, c+1]; `opaque`: the chain must stay
/// at or below the limit (y >= limit) and the area is maximised, else at or
/// above it (y <= limit) and the area minimised. Index = vertex count. A
/// vertex at a candidate column sits at the tightest height both strips
/// beside it allow, or on the layer's bottom edge (opaque) or top edge
/// (covering).
fn best_chains(xs: &[usize], limit: &[f64], h: f64, opaque: bool, kmax: usize) -> Vec<Option<f64>> {
    let height = |x: usize| {
        let l = if x > 0 { limit[x - 1] } else { limit[0] };
        let r = if x < limit.len() {
            limit[x]
        } else {
            limit[x - 1]
        };
        if opaque {
            l.max(r)
        } else {
            l.min(r)
        }
    };
    let edge = if opaque { h } else { 0.0 };
    let states: Vec<(usize, f64)> = xs
        .iter()
        .flat_map(|&x| [(x, height(x)), (x, edge)])
        .collect();
    let n = states.len();
    let (first, last) = (xs[0], *xs.last().unwrap());
    let better = |a: f64, b: f64| if opaque { a > b } else { a < b };
    // best[t][j]: best area of a chain from the first column to state j with t vertices
    let mut best = vec![vec![None::<f64>; n]; kmax + 1];
    for (j, st) in states.iter().enumerate() {
        if st.0 == first {
            best[1][j] = Some(0.0);
        }
    }
    for i in 0..n {
        // the slope bound from state i, tightened strip by strip
        let (xi, yi) = (states[i].0 as f64, states[i].1);
        let mut bound = if opaque {
            f64::NEG_INFINITY
        } else {
            f64::INFINITY
        };
        let mut c = states[i].0;
        for j in i + 1..n {
            if states[j].0 == states[i].0 {
                continue;
            }
            while c < states[j].0 {
                for x in [c as f64, c as f64 + 1.0] {
                    if x > xi {
                        let s = (limit[c] - yi) / (x - xi);
                        bound = if opaque { bound.max(s) } else { bound.min(s) };
                    } else if (opaque && yi < limit[c]) || (!opaque && yi > limit[c]) {
                        bound = if opaque {
                            f64::INFINITY
                        } else {
                            f64::NEG_INFINITY
                        };
                    }
                }
                c += 1;
            }
            let (xj, yj) = (states[j].0 as f64, states[j].1);
            let slope = (yj - yi) / (xj - xi);
            let valid = if opaque {
                slope >= bound - 1e-12
            } else {
                slope <= bound + 1e-12
            };
            if !valid {
                continue;
            }
            let area = (xj - xi) * ((h - yi) + (h - yj)) / 2.0;
            for t in 1..kmax {
                if let Some(a) = best[t][i] {
                    let cand = a + area;
                    if best[t + 1][j].is_none_or(|b| better(cand, b)) {
                        best[t + 1][j] = Some(cand);
                    }
                }
            }
        }
    }
    (0..=kmax)
        .map(|t| {
            (0..n)
                .filter(|&j| states[j].0 == last)
                .filter_map(|j| best[t][j])
                .fold(None, |acc: Option<f64>, a| match acc {
                    Some(b) if !better(a, b) => Some(b),
                    _ => Some(a),
                })
        })
        .collect()
}

/// The reference's best saving at each budget in `budgets`.
fn reference_savings(map: &AlphaMap, wrap_x: bool, budgets: &[usize]) -> Vec<f64> {
    let (w, h) = (map.width as usize, map.height as f64);
    let (solid, visible) = columns(map);
    // neighbours across the side edges: clamped, or wrapped; take the worst
    let at = |v: &Vec<f64>, c: isize, opaque: bool| -> f64 {
        let clamp = v[c.clamp(0, w as isize - 1) as usize];
        let wrapped = v[c.rem_euclid(w as isize) as usize];
        if opaque {
            clamp.max(if wrap_x { wrapped } else { clamp })
        } else {
            clamp.min(if wrap_x { wrapped } else { clamp })
        }
    };
    // safe over strip c: every texel within half a texel of it is opaque
    let safe: Vec<f64> = (0..w as isize)
        .map(|c| {
            let top = (c - 1..=c + 1)
                .map(|d| at(&solid, d, true))
                .fold(0.0, f64::max);
            (top + 0.5).min(h)
        })
        .collect();
    // must-cover over strip c: within half a texel of a visible texel
    let cover: Vec<f64> = (0..w as isize)
        .map(|c| {
            let top = (c - 1..=c + 1)
                .map(|d| at(&visible, d, false))
                .fold(h, f64::min);
            (top - 0.5).max(0.0)
        })
        .collect();
    let mut xs: Vec<usize> = (0..w).step_by(STEP).collect();
    if *xs.last().unwrap() != w {
        xs.push(w);
    }
    let kmax = *budgets.iter().max().unwrap();
    let opaque = best_chains(&xs, &safe, h, true, kmax);
    let covering = best_chains(&xs, &cover, h, false, kmax);
    let rect = w as f64 * h;
    budgets
        .iter()
        .map(|&k| {
            let mut best = f64::NEG_INFINITY;
            // the cover chain alone (no opaque polygon), or both sharing the bottom corners
            for (tc, c) in covering
                .iter()
                .enumerate()
                .take(k.saturating_sub(1))
                .skip(2)
            {
                let Some(c) = *c else { continue };
                best = best.max(rect - c);
                for o in opaque
                    .iter()
                    .take(k.saturating_sub(1 + tc))
                    .skip(2)
                    .flatten()
                {
                    best = best.max(o + rect - c);
                }
            }
            best
        })
        .collect()
}

#[test]
fn reference_dp_on_a_plain_step_is_exact() {
    // a 64 x 32 layer opaque below row 16 and fully transparent above: the
    // reference keeps the whole safe band (rows 16.5 to 32) and covers rows
    // 15.5 to 32, with the four corners, 2 + 2 + 2 = 6 vertices
    let (w, h) = (64u32, 32u32);
    let alpha = (0..h)
        .flat_map(|y| (0..w).map(move |_| if y >= 16 { 255 } else { 0 }))
        .collect();
    let map = AlphaMap::from_raw(w, h, alpha);
    let s = reference_savings(&map, false, &[6]);
    let expected = 64.0 * 15.5 + (64.0 * 32.0 - 64.0 * 16.5);
    assert!((s[0] - expected).abs() < 1e-9, "{} vs {expected}", s[0]);
}

/// On every terrain-like layer of the quality bench, the cut saves at
/// least what the reference saves at budgets 8, 16 and 32 (bilinear).
/// (Met since the opaque tabs of `src/fit/tabs.rs`: before them the three
/// skylines at budget 32 saved 0.15 to 0.52% of their rectangle less than
/// the reference, their opaque outline keeping the ground band alone.)
#[test]
fn cuts_save_at_least_the_column_reference() {
    compare(true);
}

/// The comparison, printed, with a looser floor: the cut saves at least
/// 90% of what the reference saves. (As measured: the greedy fitter alone
/// fell short of the reference in 5 of these 39 cuts, the fitter with its
/// refinement phase in 3, the skylines at 32.)
#[test]
fn cuts_compared_with_the_column_reference() {
    compare(false);
}

fn compare(strict: bool) {
    let budgets = [8, 16, 32];
    let mut failures = Vec::new();
    for layer in sets::terrain() {
        let wrap_x = layer.wrap.x();
        let reference = reference_savings(&layer.map, wrap_x, &budgets);
        let rect = (layer.map.width * layer.map.height) as f64;
        let mut line = format!("{:<12}", layer.name);
        for (k, &budget) in budgets.iter().enumerate() {
            let settings = CutSettings {
                budget,
                filter: Filter {
                    mode: FilterMode::Bilinear,
                    mip_levels: 0,
                },
                wrap: layer.wrap,
                ..CutSettings::default()
            };
            let out = cut_layer(&layer.map, &layer.name, &settings);
            assert!(
                out.notes.iter().all(|n| !n.contains("left out")),
                "{}: {:?}",
                layer.name,
                out.notes
            );
            let s = &out.mesh.stats;
            let saving = s.opaque_area + rect - s.covered_area;
            line += &format!(
                "  {budget}: cut {:.1}% ref {:.1}%",
                100.0 * saving / rect,
                100.0 * reference[k] / rect
            );
            assert!(
                reference[k].is_finite(),
                "{}: no reference polygon",
                layer.name
            );
            let floor = if strict {
                reference[k]
            } else {
                0.9 * reference[k]
            };
            if saving < floor - 1e-6 {
                failures.push(format!(
                    "{} at {budget}: {saving:.0} < {floor:.0}",
                    layer.name
                ));
            }
        }
        eprintln!("{line}");
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Budget left unused: a UI frame (an opaque border around a transparent
/// centre) at budget 8 with `bilinear` keeps only its covering box after
/// the greedy edits; its opaque island, dropped whole, must come back (as
/// its largest rectangle) when the insertions leave room for it, so the
/// cut does not stop more than 2 vertices under its budget while it has
/// opaque area to gain. (Before the rebuild: 4 vertices, capture 0.)
#[test]
fn a_dropped_island_comes_back_when_the_budget_has_room() {
    let layer = sets::sprites()
        .into_iter()
        .find(|l| l.name == "frame-panel")
        .expect("the frame-panel layer");
    let settings = CutSettings {
        budget: 8,
        ..CutSettings::default()
    };
    let out = cut_layer(&layer.map, &layer.name, &settings);
    let s = &out.mesh.stats;
    assert!(
        out.mesh.vertex_count() + 2 >= 8,
        "{} vertices",
        out.mesh.vertex_count()
    );
    assert!(s.opaque_capture() > 0.0, "capture {}", s.opaque_capture());
}
