//! Classical geometry as a yardstick for the fitter, and the geo crate as a
//! reference implementation of the mesh's area statistics.
//!
//! The layer is a hard-edged disc: 420 x 420 texels, centre c = (210, 210),
//! radius 200. Texel (i, j) is the square [i, i+1] x [j, j+1]; it is opaque
//! (alpha 255) iff its centre (i + 1/2, j + 1/2) lies within 200 of c, and
//! fully transparent (alpha 0) otherwise. It is cut for the bilinear filter
//! without mipmaps, so the contract's regions are (see src/check/regions.rs):
//!
//! * S, the safe-opaque region: the points p whose open square
//!   (p - 1/2, p + 1/2)^2 lies in the union of opaque texels;
//! * C, the must-cover region: the points p whose open square
//!   (p - 1/2, p + 1/2)^2 meets a visible texel.
//!
//! The disc stays 10 texels clear of the image edges, farther than the
//! half-texel reach, so clamp addressing plays no part.
//!
//! **Radius bounds, derived by hand.** The open square of half-side 1/2
//! around p meets the interior of texel (i, j) iff that texel's centre lies
//! in the open square of half-side 1 around p; every such centre is less than
//! sqrt(2) from p.
//! * Safe radius: if |p - c| <= 200 - sqrt(2), every texel the square around
//!   p touches has its centre within |p - c| + sqrt(2) <= 200 of c, so it is
//!   opaque, and the square (whose points all lie in touched texels) lies in
//!   opaque texels: p is in S. So the disc of radius R_S = 200 - sqrt(2)
//!   lies inside S (a lower bound on S's inscribed radius).
//! * Must-cover radius: if p is in C, some visible texel has its centre less
//!   than sqrt(2) from p, and that centre is within 200 of c, so
//!   |p - c| < 200 + sqrt(2). So C lies inside the disc of radius
//!   R_C = 200 + sqrt(2) (an upper bound on C's circumradius about c).
//!
//! **The classical extremal polygons** (a classical result of elementary
//! geometry, cited from memory): among all n-gons inscribed in a circle of
//! radius R the regular one has the largest area, (n/2) R^2 sin(2 pi / n);
//! among all n-gons circumscribed about it the regular one has the smallest
//! area, n R^2 tan(pi / n).
//!
//! So the regular n-gon inscribed in the circle of radius R_S is an opaque
//! outline with n vertices that keeps the contract (it lies in S), and the
//! regular m-gon circumscribed about the circle of radius R_C is a cover
//! outline with m vertices that keeps it (it contains C). A fitter that uses
//! n opaque outline vertices and m cover outline vertices should do about as
//! well as these; the tests allow 3% for the half-texel vertex grid and for
//! the budget being shared between the two outlines.

mod common;
use common::triangle_polygons;
use geo::{Area, BooleanOps, MultiPolygon};
use std::f64::consts::PI;
use underdraw::alpha::AlphaMap;
use underdraw::check::check_mesh;
use underdraw::cut::cut_layer;
use underdraw::mesh::{LayerMesh, TriangleList};
use underdraw::settings::{CutSettings, Filter, FilterMode};

const SIZE: u32 = 420;
const RADIUS: u32 = 200;
const BUDGETS: [usize; 4] = [16, 24, 32, 64];

/// The hard-edged disc, sampled at texel centres in exact integer arithmetic
/// (doubled coordinates: centre 2i + 1 against 2 * 210 = SIZE).
fn disc() -> AlphaMap {
    let r2 = (2 * RADIUS as i64).pow(2);
    let alpha = (0..SIZE as i64)
        .flat_map(|y| (0..SIZE as i64).map(move |x| (x, y)))
        .map(|(x, y)| {
            let (dx, dy) = (2 * x + 1 - SIZE as i64, 2 * y + 1 - SIZE as i64);
            if dx * dx + dy * dy <= r2 {
                255
            } else {
                0
            }
        })
        .collect();
    AlphaMap::from_raw(SIZE, SIZE, alpha)
}

fn bilinear(budget: usize) -> CutSettings {
    CutSettings {
        budget,
        filter: Filter {
            mode: FilterMode::Bilinear,
            mip_levels: 0,
        },
        ..CutSettings::default()
    }
}

fn cut(map: &AlphaMap, budget: usize) -> LayerMesh {
    let out = cut_layer(map, "disc.png", &bilinear(budget));
    let report = check_mesh(&out.mesh, map).expect("a cut mesh is well formed");
    assert!(report.holds(), "budget {budget}: {:?}", report.violations());
    assert!(out.mesh.vertex_count() <= budget, "budget {budget}");
    out.mesh
}

/// Area of the largest n-gon inside a circle of radius r (the regular one).
fn inscribed_regular(n: usize, r: f64) -> f64 {
    let n = n as f64;
    n / 2.0 * r * r * (2.0 * PI / n).sin()
}

/// Area of the smallest n-gon around a circle of radius r (the regular one).
fn circumscribed_regular(n: usize, r: f64) -> f64 {
    let n = n as f64;
    n * r * r * (PI / n).tan()
}

const R_SAFE: f64 = RADIUS as f64 - std::f64::consts::SQRT_2;
const R_COVER: f64 = RADIUS as f64 + std::f64::consts::SQRT_2;

#[test]
fn the_extremal_polygon_formulas_are_right() {
    // The formulas themselves, against values known without them: the
    // inscribed square of the unit circle has area 2, the circumscribed one 4,
    // the inscribed regular hexagon 3 sqrt(3) / 2; both tend to pi.
    assert!((inscribed_regular(4, 1.0) - 2.0).abs() < 1e-12);
    assert!((circumscribed_regular(4, 1.0) - 4.0).abs() < 1e-12);
    assert!((inscribed_regular(6, 1.0) - 1.5 * 3f64.sqrt()).abs() < 1e-12);
    assert!((inscribed_regular(100_000, 1.0) - PI).abs() < 1e-8);
    assert!((circumscribed_regular(100_000, 1.0) - PI).abs() < 1e-8);
}

#[test]
fn the_derived_radii_bound_the_regions() {
    // The hand-derived radii against the checker's regions, cell by cell: a
    // half-texel cell lying inside the disc of radius R_S is in S, and a cell
    // in C lies inside the disc of radius R_C.
    let map = disc();
    let s = bilinear(64);
    let (safe, cover, gw, gh) =
        underdraw::check::regions_for_check(&map, s.filter, s.alpha, s.wrap);
    let c = SIZE as f64 / 2.0;
    for b in 0..gh {
        for a in 0..gw {
            let corners = [(a, b), (a + 1, b), (a, b + 1), (a + 1, b + 1)]
                .map(|(x, y)| ((x as f64 / 2.0 - c).powi(2) + (y as f64 / 2.0 - c).powi(2)).sqrt());
            let far = corners.iter().cloned().fold(0.0, f64::max);
            if far <= R_SAFE {
                assert!(
                    safe[b * gw + a],
                    "cell ({a}, {b}) is within R_S but not safe"
                );
            }
            if cover[b * gw + a] {
                assert!(far <= R_COVER, "cell ({a}, {b}) reaches beyond R_C");
            }
        }
    }
}

#[test]
fn disc_meshes_approach_the_regular_polygons() {
    let map = disc();
    let mut lines = Vec::new();
    let mut failures = Vec::new();
    for budget in BUDGETS {
        let mesh = cut(&map, budget);
        let s = &mesh.stats;
        let (n, m) = (s.opaque_outline_vertices, s.cover_outline_vertices);
        assert!(
            n >= 3,
            "budget {budget}: a disc this large must get an opaque mesh"
        );
        assert!(m >= 3, "budget {budget}: the disc must be covered");
        let best_opaque = inscribed_regular(n, R_SAFE);
        let best_cover = circumscribed_regular(m, R_COVER);
        lines.push(format!(
            "budget {budget}: n = {n}, opaque {:.1} vs inscribed {best_opaque:.1} ({:.4}); m = {m}, covered {:.1} vs circumscribed {best_cover:.1} ({:.4})",
            s.opaque_area,
            s.opaque_area / best_opaque,
            s.covered_area,
            s.covered_area / best_cover
        ));
        if s.opaque_area < 0.97 * best_opaque {
            failures.push(format!(
                "budget {budget}: opaque area {} < 0.97 x inscribed regular {n}-gon of radius {R_SAFE} ({best_opaque})",
                s.opaque_area
            ));
        }
        if s.covered_area > 1.03 * best_cover {
            failures.push(format!(
                "budget {budget}: covered area {} > 1.03 x circumscribed regular {m}-gon of radius {R_COVER} ({best_cover})",
                s.covered_area
            ));
        }
    }
    eprintln!("{}", lines.join("\n"));
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// At the budgets artists use (8 to 32), the fit comes within 1% of the
/// classical bounds (classical result, as above; n and m are the cut's own
/// outline vertex counts): the ratios of opaque area to the inscribed
/// regular n-gon of the safe radius and of covered area to the
/// circumscribed regular m-gon of the must-cover radius, per budget.
fn small_budget_ratios() -> Vec<(usize, usize, f64, usize, f64)> {
    let map = disc();
    [8, 12, 16, 24, 32]
        .into_iter()
        .map(|budget| {
            let mesh = cut(&map, budget);
            let s = &mesh.stats;
            let (n, m) = (s.opaque_outline_vertices, s.cover_outline_vertices);
            let best_opaque = inscribed_regular(n.max(3), R_SAFE);
            let best_cover = circumscribed_regular(m.max(3), R_COVER);
            eprintln!(
                "budget {budget}: {} vertices, n = {n} ({:.4} of inscribed), m = {m} ({:.4} of circumscribed)",
                s.vertices,
                s.opaque_area / best_opaque,
                s.covered_area / best_cover
            );
            (budget, n, s.opaque_area / best_opaque, m, s.covered_area / best_cover)
        })
        .collect()
}

/// The opaque half: at 8 to 32 vertices the opaque area is at least 99% of
/// the inscribed regular n-gon of the safe radius.
#[test]
fn opaque_disc_meshes_at_small_budgets_are_within_one_percent() {
    for (budget, n, ro, _, _) in small_budget_ratios() {
        assert!(
            n >= 3 && ro >= 0.99,
            "budget {budget}: n = {n}, {ro:.4} of the inscribed regular n-gon"
        );
    }
}

/// The covering half: at 8 to 32 vertices the covered area is at most 101%
/// of the circumscribed regular m-gon of the must-cover radius.
#[test]
fn covering_disc_meshes_at_small_budgets_are_within_one_percent() {
    for (budget, _, _, m, rc) in small_budget_ratios() {
        assert!(
            m >= 3 && rc <= 1.01,
            "budget {budget}: m = {m}, {rc:.4} of the circumscribed regular m-gon"
        );
    }
}

/// A hard-edged disc drawn with `nearest`: its safe-opaque and must-cover
/// outlines coincide, and the cut still spends its whole budget (each
/// vertex more gains area: a convex outline is never exact at these
/// budgets).
#[test]
fn hard_disc_with_nearest_uses_its_whole_budget() {
    let map = disc();
    for budget in [8, 16, 24, 32, 64] {
        let settings = CutSettings {
            budget,
            filter: Filter {
                mode: FilterMode::Nearest,
                mip_levels: 0,
            },
            ..CutSettings::default()
        };
        let out = cut_layer(&map, "disc.png", &settings);
        assert!(out.notes.is_empty(), "budget {budget}: {:?}", out.notes);
        let report = check_mesh(&out.mesh, &map).expect("well formed");
        assert!(report.holds(), "budget {budget}: {:?}", report.violations());
        assert_eq!(
            out.mesh.vertex_count(),
            budget,
            "budget {budget}: the cut stopped short"
        );
    }
}

/// The union of a triangle list's triangles, by geo's boolean operations.
fn union_of(mesh: &LayerMesh, list: &TriangleList) -> MultiPolygon<f64> {
    let mut acc = MultiPolygon::<f64>::new(Vec::new());
    for tri in triangle_polygons(mesh, &list.indices) {
        acc = acc.union(&tri);
    }
    acc
}

#[test]
fn area_stats_agree_with_geo() {
    let map = disc();
    for budget in BUDGETS {
        let mesh = cut(&map, budget);
        let s = &mesh.stats;
        let opaque = union_of(&mesh, &mesh.opaque);
        let blended = union_of(&mesh, &mesh.blended);
        let both = opaque.union(&blended);
        let close = |got: f64, reference: f64| (got - reference).abs() <= 1e-6 * reference;
        let (geo_opaque, geo_covered) = (opaque.unsigned_area(), both.unsigned_area());
        assert!(
            close(s.opaque_area, geo_opaque),
            "budget {budget}: opaque_area {} but geo's union of the opaque triangles is {geo_opaque}",
            s.opaque_area
        );
        assert!(
            close(s.covered_area, geo_covered),
            "budget {budget}: covered_area {} but geo's union of all triangles is {geo_covered}",
            s.covered_area
        );
        // Zero as the contract counts it: at most 1e-6 texel^2 (float rounding).
        let overlap = opaque.intersection(&blended).unsigned_area();
        assert!(
            overlap <= 1e-6,
            "budget {budget}: geo finds the opaque and blended meshes overlapping by {overlap} texel^2"
        );
    }
}
