//! Property tests of `cut_layer` on random masks, checked by the independent
//! checker (`check_mesh`), plus worked examples whose answers follow from the
//! contract by hand.
//!
//! The number of random cases per property is `PROPTEST_CASES` (default
//! [`DEFAULT_CASES`]: the two properties run side by side, about 160 s of CPU
//! in the test profile, so roughly 80-90 s on two free cores).
//!
//! Soak mode, by hand, for as long as you like (it is ignored by
//! `cargo test`): fresh random cases on every core until the time is up,
//! each batch's seed printed so a failure can be replayed.
//!
//! ```sh
//! UNDERDRAW_SOAK_MINUTES=60 cargo test --release --test contract_props -- --ignored soak
//! UNDERDRAW_SOAK_SEED=1234 ...   # start from another seed
//! ```

use geo::{Area, BooleanOps, Coord, LineString, MultiPolygon, Polygon};
use proptest::prelude::*;
use underdraw::alpha::AlphaMap;
use underdraw::check::check_mesh;
use underdraw::cut::{cut_layer, CutOutcome};
use underdraw::settings::{AlphaThresholds, CutSettings, Filter, FilterMode, Wrap};

/// Cases per random property when `PROPTEST_CASES` is not set.
const DEFAULT_CASES: u32 = 25_000;

/// Side of the speckled corner: a whole 96x96 speckle takes seconds to cut
/// (thousands of one-texel islands), which would swamp the run time.
const SPECKLE: u32 = 40;

const BUDGETS: [usize; 9] = [4, 5, 6, 8, 12, 16, 32, 64, 256];

// ---------------------------------------------------------------- masks

/// A random layer, described by parameters (fractions of the size where
/// possible, so shrinking the size keeps the shape).
#[derive(Clone, Debug)]
enum Shape {
    /// Union of discs (cx, cy as fractions, radius in texels); `soft` is the
    /// width of the alpha ramp at the rim in texels (0 = hard edge).
    Blobs {
        discs: Vec<(f64, f64, f64)>,
        soft: f64,
    },
    /// Smooth value noise on a lattice of `cell` texels, thresholded at
    /// `level` with a ramp `band` wide (0 = hard).
    Noise {
        cell: u32,
        level: f64,
        band: f64,
        seed: u64,
    },
    /// Antialiased segments (endpoints as fractions) `width` texels wide.
    Lines {
        segs: Vec<(f64, f64, f64, f64)>,
        width: f64,
    },
    /// Checkerboard of `cell`-texel squares with alphas a and b.
    Checker {
        cell: u32,
        a: u8,
        b: u8,
    },
    /// One texel of alpha `a` on a background of alpha `bg`.
    Single {
        fx: f64,
        fy: f64,
        a: u8,
        bg: u8,
    },
    /// Opaque rectangle (fractions) with transparent disc holes inside.
    Holes {
        rect: (f64, f64, f64, f64),
        holes: Vec<(f64, f64, f64)>,
        soft: f64,
    },
    /// Discs centred on the border (side 0..4, position as a fraction) and
    /// an optional opaque band `band` texels deep along `side`.
    Border {
        discs: Vec<(u8, f64, f64)>,
        side: u8,
        band: u32,
    },
    /// Texels random from a few alphas (salt and pepper) in the top-left
    /// SPECKLE x SPECKLE corner, transparent elsewhere.
    Speckle {
        density: f64,
        seed: u64,
    },
    Opaque,
    Transparent,
}

mod common;
use common::{triangle_polygons as triangles, Rng};

fn ramp(t: f64) -> u8 {
    (t.clamp(0.0, 1.0) * 255.0).round() as u8
}

/// Alpha of a texel whose centre is `inside` texels inside an edge (negative
/// outside), with a ramp `soft` texels wide (0 = hard).
fn edge(inside: f64, soft: f64) -> u8 {
    if soft <= 0.0 {
        if inside >= 0.0 {
            255
        } else {
            0
        }
    } else {
        ramp(inside / soft + 0.5)
    }
}

fn seg_dist(p: (f64, f64), a: (f64, f64), b: (f64, f64)) -> f64 {
    let (dx, dy) = (b.0 - a.0, b.1 - a.1);
    let len2 = dx * dx + dy * dy;
    let t = if len2 > 0.0 {
        (((p.0 - a.0) * dx + (p.1 - a.1) * dy) / len2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    ((p.0 - a.0 - t * dx).powi(2) + (p.1 - a.1 - t * dy).powi(2)).sqrt()
}

fn render(shape: &Shape, w: u32, h: u32) -> AlphaMap {
    let (wf, hf) = (w as f64, h as f64);
    let lattice = |cell: u32, seed: u64| {
        let (lw, lh) = (w / cell + 2, h / cell + 2);
        let mut rng = Rng(seed);
        let v: Vec<f64> = (0..lw * lh).map(|_| rng.unit()).collect();
        (lw, v)
    };
    let noise = match shape {
        Shape::Noise { cell, seed, .. } => Some(lattice(*cell, *seed)),
        _ => None,
    };
    let mut speckle = Rng(match shape {
        Shape::Speckle { seed, .. } => *seed,
        _ => 0,
    });
    let mut alpha = Vec::with_capacity((w * h) as usize);
    for y in 0..h {
        for x in 0..w {
            let p = (x as f64 + 0.5, y as f64 + 0.5);
            let a = match shape {
                Shape::Blobs { discs, soft } => discs
                    .iter()
                    .map(|&(cx, cy, r)| {
                        let d = ((p.0 - cx * wf).powi(2) + (p.1 - cy * hf).powi(2)).sqrt();
                        edge(r - d, *soft)
                    })
                    .max()
                    .unwrap_or(0),
                Shape::Noise {
                    cell, level, band, ..
                } => {
                    let (lw, v) = noise.as_ref().unwrap();
                    let (gx, gy) = (p.0 / *cell as f64, p.1 / *cell as f64);
                    let (ix, iy) = (gx as u32, gy as u32);
                    let s = |t: f64| t * t * (3.0 - 2.0 * t); // smoothstep
                    let (fx, fy) = (s(gx.fract()), s(gy.fract()));
                    let at = |i: u32, j: u32| v[(j * lw + i) as usize];
                    let top = at(ix, iy) * (1.0 - fx) + at(ix + 1, iy) * fx;
                    let bot = at(ix, iy + 1) * (1.0 - fx) + at(ix + 1, iy + 1) * fx;
                    let n = top * (1.0 - fy) + bot * fy;
                    edge(n - level, *band)
                }
                Shape::Lines { segs, width } => segs
                    .iter()
                    .map(|&(x0, y0, x1, y1)| {
                        let d = seg_dist(p, (x0 * wf, y0 * hf), (x1 * wf, y1 * hf));
                        // coverage of a texel by a band of half-width width/2,
                        // approximated by a one-texel ramp (common practice, no source)
                        ramp(width / 2.0 + 0.5 - d)
                    })
                    .max()
                    .unwrap_or(0),
                Shape::Checker { cell, a, b } => {
                    if (x / cell + y / cell) % 2 == 0 {
                        *a
                    } else {
                        *b
                    }
                }
                Shape::Single { fx, fy, a, bg } => {
                    let (sx, sy) = ((fx * wf) as u32, (fy * hf) as u32);
                    if (x, y) == (sx.min(w - 1), sy.min(h - 1)) {
                        *a
                    } else {
                        *bg
                    }
                }
                Shape::Holes { rect, holes, soft } => {
                    let (x0, x1) = (rect.0.min(rect.1) * wf, rect.0.max(rect.1) * wf);
                    let (y0, y1) = (rect.2.min(rect.3) * hf, rect.2.max(rect.3) * hf);
                    let inside = (p.0 - x0).min(x1 - p.0).min(p.1 - y0).min(y1 - p.1);
                    let island = edge(inside, *soft);
                    let hole = holes
                        .iter()
                        .map(|&(hx, hy, r)| {
                            let (cx, cy) = (x0 + hx * (x1 - x0), y0 + hy * (y1 - y0));
                            let d = ((p.0 - cx).powi(2) + (p.1 - cy).powi(2)).sqrt();
                            edge(r - d, *soft)
                        })
                        .max()
                        .unwrap_or(0);
                    island.min(255 - hole)
                }
                Shape::Border { discs, side, band } => {
                    let centre = |s: u8, t: f64| match s % 4 {
                        0 => (t * wf, 0.0),
                        1 => (wf, t * hf),
                        2 => (t * wf, hf),
                        _ => (0.0, t * hf),
                    };
                    let from_side = match side % 4 {
                        0 => p.1,
                        1 => wf - p.0,
                        2 => hf - p.1,
                        _ => p.0,
                    };
                    let b = if from_side < *band as f64 { 255 } else { 0 };
                    discs
                        .iter()
                        .map(|&(s, t, r)| {
                            let c = centre(s, t);
                            let d = ((p.0 - c.0).powi(2) + (p.1 - c.1).powi(2)).sqrt();
                            edge(r - d, 1.0)
                        })
                        .fold(b, u8::max)
                }
                Shape::Speckle { density, .. } => {
                    if x < SPECKLE && y < SPECKLE && speckle.unit() < *density {
                        [255, 255, 128, 1, speckle.next() as u8][(speckle.next() % 5) as usize]
                    } else {
                        0
                    }
                }
                Shape::Opaque => 255,
                Shape::Transparent => 0,
            };
            alpha.push(a);
        }
    }
    AlphaMap::from_raw(w, h, alpha)
}

fn frac() -> impl Strategy<Value = f64> {
    0.0..=1.0f64
}

fn alpha_pair() -> impl Strategy<Value = (u8, u8)> {
    prop_oneof![
        Just((255u8, 0u8)),
        (any::<u8>(), any::<u8>()),
        (Just(255u8), any::<u8>())
    ]
}

fn shape() -> impl Strategy<Value = Shape> {
    let soft = prop_oneof![Just(0.0), 0.5..6.0f64];
    prop_oneof![
        3 => (prop::collection::vec((frac(), frac(), 0.5..30.0f64), 1..6), soft.clone())
            .prop_map(|(discs, soft)| Shape::Blobs { discs, soft }),
        3 => (2u32..16, 0.2..0.8f64, prop_oneof![Just(0.0), 0.01..0.3f64], any::<u64>())
            .prop_map(|(cell, level, band, seed)| Shape::Noise { cell, level, band, seed }),
        2 => (prop::collection::vec((frac(), frac(), frac(), frac()), 1..4), 1.0..=2.0f64)
            .prop_map(|(segs, width)| Shape::Lines { segs, width }),
        1 => (1u32..9, alpha_pair()).prop_map(|(cell, (a, b))| Shape::Checker { cell, a, b }),
        1 => (frac(), frac(), prop_oneof![Just(255u8), any::<u8>()], prop_oneof![Just(0u8), Just(255u8)])
            .prop_map(|(fx, fy, a, bg)| Shape::Single { fx, fy, a, bg }),
        2 => ((0.0..0.45f64, 0.55..=1.0f64, 0.0..0.45f64, 0.55..=1.0f64),
              prop::collection::vec((0.1..0.9f64, 0.1..0.9f64, 0.5..8.0f64), 1..5), soft)
            .prop_map(|(rect, holes, soft)| Shape::Holes { rect, holes, soft }),
        2 => (prop::collection::vec((0u8..4, frac(), 1.0..25.0f64), 0..4), 0u8..4, 0u32..6)
            .prop_map(|(discs, side, band)| Shape::Border { discs, side, band }),
        1 => (0.05..0.9f64, any::<u64>()).prop_map(|(density, seed)| Shape::Speckle { density, seed }),
        1 => Just(Shape::Opaque),
        1 => Just(Shape::Transparent),
    ]
}

fn side() -> impl Strategy<Value = u32> {
    prop_oneof![1 => 1u32..=4, 1 => 5u32..=32, 3 => 33u32..=96]
}

fn wrap() -> impl Strategy<Value = Wrap> {
    prop_oneof![
        Just(Wrap::None),
        Just(Wrap::X),
        Just(Wrap::Y),
        Just(Wrap::Xy)
    ]
}

fn thresholds() -> impl Strategy<Value = AlphaThresholds> {
    prop_oneof![
        Just(AlphaThresholds::default()),
        (1u8..=255, 1u8..=255).prop_map(|(a, b)| AlphaThresholds {
            opaque_min: a.max(b),
            visible_min: a.min(b),
        }),
    ]
}

fn settings(mode: FilterMode) -> impl Strategy<Value = CutSettings> {
    (
        0u32..=3,
        wrap(),
        prop::sample::select(&BUDGETS[..]),
        thresholds(),
    )
        .prop_map(move |(mip_levels, wrap, budget, alpha)| CutSettings {
            budget,
            filter: Filter { mode, mip_levels },
            alpha,
            wrap,
        })
}

// ---------------------------------------------------------------- checks

/// Everything a cut must satisfy; `Err` says what failed.
fn verify(map: &AlphaMap, s: &CutSettings, out: &CutOutcome) -> Result<(), String> {
    let m = &out.mesh;
    let report = check_mesh(m, map).map_err(|e| format!("check_mesh error: {e}"))?;
    if !report.holds() {
        return Err(format!("contract violated: {:?}", report.violations()));
    }
    if m.vertex_count() > s.budget {
        return Err(format!(
            "{} vertices > budget {}",
            m.vertex_count(),
            s.budget
        ));
    }
    if let Some(n) = out.notes.iter().find(|n| n.contains("left out")) {
        return Err(format!("fallback used: {n}"));
    }
    let st = &m.stats;
    let t = s.alpha;
    let count = |f: &dyn Fn(u8) -> bool| map.alpha.iter().filter(|&&a| f(a)).count() as u64;
    let texels = (
        count(&|a| a >= t.opaque_min),
        count(&|a| a >= t.visible_min && a < t.opaque_min),
        count(&|a| a < t.visible_min),
    );
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-6 * (1.0 + a.abs().max(b.abs()));
    let facts = [
        (
            st.opaque_triangles * 3 == m.opaque.indices.len(),
            "opaque_triangles",
        ),
        (
            st.blended_triangles * 3 == m.blended.indices.len(),
            "blended_triangles",
        ),
        (st.vertices == m.vertex_count(), "vertices"),
        (
            (st.opaque_texels, st.partial_texels, st.transparent_texels) == texels,
            "texel counts",
        ),
        (st.safe_opaque_area == report.safe_area, "safe_opaque_area"),
        (
            st.must_cover_area == report.must_cover_area,
            "must_cover_area",
        ),
        (close(st.opaque_area, report.opaque_area), "opaque_area"),
        (close(st.covered_area, report.covered_area), "covered_area"),
        (m.uvs.len() == m.positions.len(), "uv count"),
        (m.budget == Some(s.budget), "budget"),
        (m.size == [map.width, map.height], "size"),
        (
            (m.filter, m.alpha, m.wrap) == (s.filter, s.alpha, s.wrap),
            "settings",
        ),
    ];
    if let Some((_, what)) = facts.iter().find(|(ok, _)| !ok) {
        return Err(format!("stats/metadata inconsistent: {what}: {st:?}"));
    }
    for (k, (p, uv)) in m.positions.iter().zip(&m.uvs).enumerate() {
        let size = m.size[k % 2] as f32;
        if (p / size - uv).abs() > 1e-6 {
            return Err(format!("uv {k} is {uv}, position/size is {}", p / size));
        }
    }
    if texels.0 + texels.1 == 0 && !(m.opaque.indices.is_empty() && m.blended.indices.is_empty()) {
        return Err("a layer with no visible texel got triangles".into());
    }
    Ok(())
}

fn config() -> ProptestConfig {
    let cases = std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(DEFAULT_CASES);
    ProptestConfig {
        cases,
        max_shrink_iters: 2000,
        ..ProptestConfig::default()
    }
}

fn run(shape: &Shape, w: u32, h: u32, s: &CutSettings) -> Result<(), TestCaseError> {
    let map = render(shape, w, h);
    let out = cut_layer(&map, "prop.png", s);
    verify(&map, s, &out).map_err(|e| TestCaseError::fail(format!("{w}x{h} {s:?}: {e}")))
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn nearest_cuts_hold_the_contract(shape in shape(), w in side(), h in side(),
                                      s in settings(FilterMode::Nearest)) {
        run(&shape, w, h, &s)?;
    }

    #[test]
    fn bilinear_cuts_hold_the_contract(shape in shape(), w in side(), h in side(),
                                       s in settings(FilterMode::Bilinear)) {
        run(&shape, w, h, &s)?;
    }
}

/// The soak mode (see the module docs): both filters, every core, random
/// seeds from `UNDERDRAW_SOAK_SEED` (default: the clock) counted up per
/// batch of 256 cases. The time only bounds how long it runs; what it
/// asserts is the contract, as the properties above.
#[test]
#[ignore = "soak mode: run by hand with --ignored soak"]
fn soak() {
    use proptest::test_runner::{RngAlgorithm, TestRng, TestRunner};
    use std::sync::atomic::{AtomicU64, Ordering};
    use std::time::{Duration, Instant};
    let minutes: f64 = std::env::var("UNDERDRAW_SOAK_MINUTES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(10.0);
    let base: u64 = std::env::var("UNDERDRAW_SOAK_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(0, |d| d.as_secs())
        });
    let deadline = Instant::now() + Duration::from_secs_f64(minutes * 60.0);
    let next = AtomicU64::new(base);
    let cases = AtomicU64::new(0);
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    println!("soak: {minutes} minutes on {threads} threads from seed {base}");
    std::thread::scope(|scope| {
        for _ in 0..threads {
            scope.spawn(|| {
                while Instant::now() < deadline {
                    let seed = next.fetch_add(1, Ordering::Relaxed);
                    let mut bytes = [0u8; 32];
                    bytes[..8].copy_from_slice(&seed.to_le_bytes());
                    let config = ProptestConfig {
                        cases: 256,
                        failure_persistence: None,
                        ..config()
                    };
                    let rng = TestRng::from_seed(RngAlgorithm::ChaCha, &bytes);
                    let mut runner = TestRunner::new_with_rng(config, rng);
                    let strategy = (
                        shape(),
                        side(),
                        side(),
                        prop_oneof![
                            settings(FilterMode::Nearest),
                            settings(FilterMode::Bilinear)
                        ],
                    );
                    if let Err(e) = runner.run(&strategy, |(shape, w, h, s)| run(&shape, w, h, &s))
                    {
                        panic!("soak seed {seed}: {e}\n  replay: UNDERDRAW_SOAK_SEED={seed}");
                    }
                    cases.fetch_add(256, Ordering::Relaxed);
                }
            });
        }
    });
    println!(
        "soak: {} cases, no violation (seeds {base} to {})",
        cases.load(Ordering::Relaxed),
        next.load(Ordering::Relaxed) - 1
    );
}

// ---------------------------------------------------------- worked examples

fn all_settings() -> impl Iterator<Item = CutSettings> {
    let modes = [FilterMode::Nearest, FilterMode::Bilinear];
    let wraps = [Wrap::None, Wrap::X, Wrap::Y, Wrap::Xy];
    modes.into_iter().flat_map(move |mode| {
        wraps.into_iter().flat_map(move |wrap| {
            (0..=3).flat_map(move |mip_levels| {
                BUDGETS.into_iter().map(move |budget| CutSettings {
                    budget,
                    filter: Filter { mode, mip_levels },
                    alpha: AlphaThresholds::default(),
                    wrap,
                })
            })
        })
    })
}

#[test]
fn fully_transparent_layer_has_no_triangles() {
    for (w, h) in [(1, 1), (37, 23), (64, 64)] {
        // alpha 0 everywhere, and with visible_min 200 also alpha 199
        for (a, visible_min) in [(0u8, 1u8), (199, 200)] {
            let map = AlphaMap::from_raw(w, h, vec![a; (w * h) as usize]);
            for mut s in all_settings() {
                s.alpha.visible_min = visible_min;
                let out = cut_layer(&map, "empty.png", &s);
                let m = &out.mesh;
                assert!(
                    m.opaque.indices.is_empty() && m.blended.indices.is_empty(),
                    "{w}x{h} alpha {a} {s:?}: got triangles"
                );
                assert_eq!(m.vertex_count(), 0, "{w}x{h} {s:?}: unused vertices");
                assert!(
                    out.notes.iter().any(|n| n.contains("fully transparent")),
                    "{w}x{h} {s:?}: notes {:?}",
                    out.notes
                );
                verify(&map, &s, &out).unwrap();
            }
        }
    }
}

#[test]
fn fully_opaque_layer_is_one_opaque_quad() {
    let (w, h) = (37u32, 23u32);
    let map = AlphaMap::from_raw(w, h, vec![255; (w * h) as usize]);
    let budgets = (4..=20).chain([32, 64, 100, 256, 1000]);
    for budget in budgets {
        for mut s in all_settings().filter(|s| s.budget == 4) {
            s.budget = budget;
            let out = cut_layer(&map, "opaque.png", &s);
            let m = &out.mesh;
            let ctx = format!("budget {budget} {s:?}");
            assert_eq!(m.vertex_count(), 4, "{ctx}");
            assert_eq!(m.opaque.triangle_count(), 2, "{ctx}");
            assert_eq!(m.blended.triangle_count(), 0, "{ctx}");
            // Two triangles covering the whole image: the 4 vertices are its corners.
            let mut corners: Vec<(f32, f32)> =
                m.positions.chunks(2).map(|p| (p[0], p[1])).collect();
            corners.sort_by(|a, b| a.partial_cmp(b).unwrap());
            let (wf, hf) = (w as f32, h as f32);
            assert_eq!(
                corners,
                [(0.0, 0.0), (0.0, hf), (wf, 0.0), (wf, hf)],
                "{ctx}"
            );
            verify(&map, &s, &out).unwrap_or_else(|e| panic!("{ctx}: {e}"));
        }
    }
}

fn square(x0: f64, y0: f64, x1: f64, y1: f64) -> Polygon<f64> {
    let c = |x, y| Coord { x, y };
    Polygon::new(
        LineString::new(vec![c(x0, y0), c(x1, y0), c(x1, y1), c(x0, y1), c(x0, y0)]),
        vec![],
    )
}

#[test]
fn slab_with_hole_keeps_opaque_out_of_the_unsafe_zone() {
    // 64x64 opaque, 16x16 transparent hole at [24, 40]^2. Bilinear at level 0
    // reads texels within half a texel, so the opaque mesh must stay out of
    // [23.5, 40.5]^2, and the meshes must cover all but [24.5, 39.5]^2.
    let n = 64u32;
    let alpha = (0..n * n)
        .map(|k| {
            let (x, y) = (k % n, k / n);
            if (24..40).contains(&x) && (24..40).contains(&y) {
                0
            } else {
                255
            }
        })
        .collect();
    let map = AlphaMap::from_raw(n, n, alpha);
    // Independent reference: the geo crate (general-purpose reference library).
    let unsafe_zone = square(23.5, 23.5, 40.5, 40.5);
    let must_cover = MultiPolygon::new(vec![square(0.0, 0.0, 64.0, 64.0)])
        .difference(&MultiPolygon::new(vec![square(24.5, 24.5, 39.5, 39.5)]));
    for budget in 4..=256 {
        let s = CutSettings {
            budget,
            filter: Filter {
                mode: FilterMode::Bilinear,
                mip_levels: 0,
            },
            ..CutSettings::default()
        };
        let out = cut_layer(&map, "slab.png", &s);
        verify(&map, &s, &out).unwrap_or_else(|e| panic!("budget {budget}: {e}"));
        let m = &out.mesh;
        let mut opaque_area = 0.0;
        for (k, t) in triangles(m, &m.opaque.indices).iter().enumerate() {
            opaque_area += t.unsigned_area();
            let inside = t.intersection(&unsafe_zone).unsigned_area();
            assert!(
                inside <= 1e-9,
                "budget {budget}: opaque triangle {k} has {inside} texels in the unsafe zone"
            );
        }
        // With 8 or more vertices a frame around the zone fits, and the
        // opaque mesh can't be empty: the slab's corners are far from the hole.
        if budget >= 8 {
            assert!(opaque_area > 0.0, "budget {budget}: no opaque mesh");
        }
        let all: Vec<Polygon<f64>> = triangles(m, &m.opaque.indices)
            .into_iter()
            .chain(triangles(m, &m.blended.indices))
            .collect();
        let union = all.iter().fold(MultiPolygon::new(vec![]), |u, t| {
            u.union(&MultiPolygon::new(vec![t.clone()]))
        });
        let missing = must_cover.difference(&union).unsigned_area();
        assert!(
            missing <= 1e-6,
            "budget {budget}: {missing} texels uncovered"
        );
    }
}
