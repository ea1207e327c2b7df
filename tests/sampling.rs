//! A sampling cross-check of the contract, independent of the builder's
//! regions and of the checker: a texture sampler written here from the GPU
//! rule is run at random points of the cut meshes.
//!
//! The rule (OpenGL ES 3.0 specification, section 3.8.10 texture
//! minification, LINEAR, from memory): at level l a point p in level-0
//! texel units is u = p.x / 2^l - 1/2 in level-l texels; i0 = floor(u),
//! i1 = i0 + 1 with weights 1 - frac(u) and frac(u) (same for y), each index
//! mapped by the addressing mode (clamp to [0, n_l - 1], or repeat mod n_l).
//! NEAREST reads the one texel floor(p.x / 2^l). LINEAR_MIPMAP_NEAREST and
//! NEAREST_MIPMAP_NEAREST do this at one level l <= mip_levels, so every
//! level is checked. Unlike the specification's floor(n / 2^l) level sizes,
//! level l follows the project's partial-block convention: its texels are
//! the aligned 2^l x 2^l blocks of level 0 (n_l = ceil(n / 2^l), edge blocks
//! partial), opaque when all their texels are, visible when any is.
//!
//! Checked: inside opaque triangles every texel with non-zero weight is
//! opaque (the sample is fully opaque); outside both meshes, inside the
//! image, every such texel is invisible (the sample is fully transparent).

use std::path::Path;
use underdraw::alpha::AlphaMap;
use underdraw::check::regions_for_check;
use underdraw::cut::cut_layer;
use underdraw::io::load_alpha;
use underdraw::settings::{AlphaThresholds, CutSettings, Filter, FilterMode, Wrap};

/// Points closer than this to a triangle edge are skipped (measure zero).
const EDGE_EPS: f64 = 1e-6;

mod common;
use common::triangles::{inset, triangles, Tri};
use common::Rng;

// ------------------------------------------------------------- the sampler

/// One mip level: which level texels (blocks) are opaque / visible.
struct Level {
    scale: f64,
    w: i64,
    h: i64,
    opaque: Vec<bool>,
    visible: Vec<bool>,
}

struct Sampler {
    levels: Vec<Level>,
    mode: FilterMode,
    wrap: Wrap,
}

fn address(i: i64, n: i64, repeat: bool) -> i64 {
    if repeat {
        i.rem_euclid(n)
    } else {
        i.clamp(0, n - 1)
    }
}

impl Sampler {
    fn new(map: &AlphaMap, filter: Filter, t: AlphaThresholds, wrap: Wrap) -> Sampler {
        let (w, h) = (map.width as usize, map.height as usize);
        let levels = (0..=filter.mip_levels)
            .map(|l| {
                let s = 1usize << l;
                let (lw, lh) = (w.div_ceil(s), h.div_ceil(s));
                let mut opaque = vec![true; lw * lh];
                let mut visible = vec![false; lw * lh];
                for y in 0..h {
                    for x in 0..w {
                        let a = map.alpha[y * w + x];
                        let k = (y / s) * lw + x / s;
                        opaque[k] &= a >= t.opaque_min;
                        visible[k] |= a >= t.visible_min;
                    }
                }
                Level {
                    scale: s as f64,
                    w: lw as i64,
                    h: lh as i64,
                    opaque,
                    visible,
                }
            })
            .collect();
        Sampler {
            levels,
            mode: filter.mode,
            wrap,
        }
    }

    /// The level texels read with non-zero weight at `p` on level `l`.
    fn taps(&self, l: usize, p: [f64; 2]) -> Vec<usize> {
        let lv = &self.levels[l];
        let (ax, ay) = (self.wrap_x(), self.wrap_y());
        let pick = |i: i64, j: i64| (address(j, lv.h, ay) * lv.w + address(i, lv.w, ax)) as usize;
        match self.mode {
            FilterMode::Nearest => {
                let (i, j) = ((p[0] / lv.scale).floor(), (p[1] / lv.scale).floor());
                vec![pick(i as i64, j as i64)]
            }
            FilterMode::Bilinear => {
                let (u, v) = (p[0] / lv.scale - 0.5, p[1] / lv.scale - 0.5);
                let (i0, j0) = (u.floor(), v.floor());
                let (a, b) = (u - i0, v - j0);
                let (i0, j0) = (i0 as i64, j0 as i64);
                let mut out = Vec::with_capacity(4);
                for (di, wx) in [(0, 1.0 - a), (1, a)] {
                    for (dj, wy) in [(0, 1.0 - b), (1, b)] {
                        if wx * wy > 0.0 {
                            out.push(pick(i0 + di, j0 + dj));
                        }
                    }
                }
                out
            }
        }
    }

    fn wrap_x(&self) -> bool {
        matches!(self.wrap, Wrap::X | Wrap::Xy)
    }
    fn wrap_y(&self) -> bool {
        matches!(self.wrap, Wrap::Y | Wrap::Xy)
    }

    /// Fully opaque at every level.
    fn all_opaque(&self, p: [f64; 2]) -> Option<String> {
        self.first_failing(p, |lv, k| lv.opaque[k], "non-opaque")
    }

    /// Fully transparent at every level.
    fn all_invisible(&self, p: [f64; 2]) -> Option<String> {
        self.first_failing(p, |lv, k| !lv.visible[k], "visible")
    }

    fn first_failing(
        &self,
        p: [f64; 2],
        ok: impl Fn(&Level, usize) -> bool,
        what: &str,
    ) -> Option<String> {
        for (l, lv) in self.levels.iter().enumerate() {
            if let Some(k) = self.taps(l, p).into_iter().find(|&k| !ok(lv, k)) {
                let (i, j) = (k as i64 % lv.w, k as i64 / lv.w);
                return Some(format!(
                    "{:?} at ({}, {}) reads {what} level-{l} texel ({i}, {j})",
                    self.mode, p[0], p[1]
                ));
            }
        }
        None
    }
}

// ------------------------------------------------------------- triangles

fn area(t: &Tri) -> f64 {
    ((t[1][0] - t[0][0]) * (t[2][1] - t[0][1]) - (t[2][0] - t[0][0]) * (t[1][1] - t[0][1])).abs()
        / 2.0
}

fn point_in(t: &Tri, rng: &mut Rng) -> [f64; 2] {
    let (mut r, mut s) = (rng.unit(), rng.unit());
    if r + s > 1.0 {
        (r, s) = (1.0 - r, 1.0 - s);
    }
    [0, 1].map(|c| t[0][c] + r * (t[1][c] - t[0][c]) + s * (t[2][c] - t[0][c]))
}

/// How many sampled points were checked (so a run can't pass vacuously).
#[derive(Default, Debug)]
struct Tally {
    inside_opaque: usize,
    outside: usize,
}

/// Samples the cut of `map` under `s`; panics with the first failure.
fn sample_cut(map: &AlphaMap, s: &CutSettings, rng: &mut Rng, name: &str, tally: &mut Tally) {
    let out = cut_layer(map, name, s);
    let m = &out.mesh;
    let sampler = Sampler::new(map, s.filter, s.alpha, s.wrap);
    let opaque = triangles(m, &m.opaque.indices);
    let all: Vec<Tri> = opaque
        .iter()
        .copied()
        .chain(triangles(m, &m.blended.indices))
        .collect();
    let ctx = |what: String| format!("{name} {}x{} {s:?}: {what}", map.width, map.height);
    for (k, t) in opaque.iter().enumerate() {
        let area = area(t);
        for _ in 0..32 + (2.0 * area).min(4000.0) as usize {
            let p = point_in(t, rng);
            if inset(t, p) < EDGE_EPS {
                continue;
            }
            tally.inside_opaque += 1;
            if let Some(e) = sampler.all_opaque(p) {
                panic!("{}", ctx(format!("opaque triangle {k} {t:?}: {e}")));
            }
        }
    }
    let (w, h) = (map.width as f64, map.height as f64);
    let n = (400.0 + 4.0 * w * h).min(6000.0) as usize;
    for _ in 0..n {
        let p = [rng.range(0.0, w), rng.range(0.0, h)];
        if all.iter().any(|t| inset(t, p) > -EDGE_EPS) {
            continue;
        }
        tally.outside += 1;
        if let Some(e) = sampler.all_invisible(p) {
            panic!("{}", ctx(format!("outside both meshes: {e}")));
        }
    }
}

// ------------------------------------------------------------- layers

fn random_settings(rng: &mut Rng) -> CutSettings {
    let budgets = [4, 5, 6, 8, 12, 16, 32, 64, 256];
    let (a, b) = (1 + rng.below(255) as u8, 1 + rng.below(255) as u8);
    let alpha = if rng.below(2) == 0 {
        AlphaThresholds::default()
    } else {
        AlphaThresholds {
            opaque_min: a.max(b),
            visible_min: a.min(b),
        }
    };
    CutSettings {
        budget: budgets[rng.below(budgets.len() as u64) as usize],
        filter: Filter {
            mode: [FilterMode::Nearest, FilterMode::Bilinear][rng.below(2) as usize],
            mip_levels: rng.below(4) as u32,
        },
        alpha,
        wrap: [Wrap::None, Wrap::X, Wrap::Y, Wrap::Xy][rng.below(4) as usize],
    }
}

/// Soft-edged discs, minus soft holes, plus an antialiased line.
fn random_layer(rng: &mut Rng) -> AlphaMap {
    let side = |rng: &mut Rng| match rng.below(4) {
        0 => 1 + rng.below(6),
        _ => 1 + rng.below(80),
    } as u32;
    let (w, h) = (side(rng), side(rng));
    let (wf, hf) = (w as f64, h as f64);
    let disc = |rng: &mut Rng, rmax: f64| {
        let r = rng.range(0.5, rmax);
        (
            rng.range(-0.1, 1.1) * wf,
            rng.range(-0.1, 1.1) * hf,
            r,
            rng.range(0.0, 5.0),
        )
    };
    let discs: Vec<_> = (0..1 + rng.below(4)).map(|_| disc(rng, 30.0)).collect();
    let holes: Vec<_> = (0..rng.below(4)).map(|_| disc(rng, 8.0)).collect();
    let line = (rng.below(2) == 0).then(|| {
        let p = [0, 1, 2, 3].map(|k| rng.unit() * if k % 2 == 0 { wf } else { hf });
        (p, rng.range(1.0, 2.0))
    });
    let cover = |d: f64, r: f64, soft: f64| {
        // alpha ramp `soft` texels wide across the rim (0 = hard edge)
        let t = if soft < 0.5 {
            (d <= r) as u8 as f64
        } else {
            ((r - d) / soft + 0.5).clamp(0.0, 1.0)
        };
        (t * 255.0).round()
    };
    let mut alpha = Vec::with_capacity((w * h) as usize);
    for y in 0..h {
        for x in 0..w {
            let p = (x as f64 + 0.5, y as f64 + 0.5);
            let d = |c: &(f64, f64, f64, f64)| ((p.0 - c.0).powi(2) + (p.1 - c.1).powi(2)).sqrt();
            let mut a = discs
                .iter()
                .map(|c| cover(d(c), c.2, c.3))
                .fold(0.0, f64::max);
            for c in &holes {
                a = a.min(255.0 - cover(d(c), c.2, c.3));
            }
            if let Some((q, lw)) = line {
                let (dx, dy) = (q[2] - q[0], q[3] - q[1]);
                let len2 = (dx * dx + dy * dy).max(1e-12);
                let t = (((p.0 - q[0]) * dx + (p.1 - q[1]) * dy) / len2).clamp(0.0, 1.0);
                let dist = ((p.0 - q[0] - t * dx).powi(2) + (p.1 - q[1] - t * dy).powi(2)).sqrt();
                a = a.max(((lw / 2.0 + 0.5 - dist).clamp(0.0, 1.0) * 255.0).round());
            }
            alpha.push(a as u8);
        }
    }
    AlphaMap::from_raw(w, h, alpha)
}

fn crop(map: &AlphaMap, x0: u32, y0: u32, w: u32, h: u32) -> AlphaMap {
    let alpha = (y0..y0 + h)
        .flat_map(|y| (x0..x0 + w).map(move |x| (x, y)))
        .map(|(x, y)| map.get(x, y))
        .collect();
    AlphaMap::from_raw(w, h, alpha)
}

// ------------------------------------------------------------- tests

#[test]
fn random_layers_sample_opaque_inside_and_transparent_outside() {
    let mut rng = Rng(0x5EED_0001);
    let mut tally = Tally::default();
    for case in 0..6000 {
        let map = random_layer(&mut rng);
        let s = random_settings(&mut rng);
        sample_cut(
            &map,
            &s,
            &mut rng,
            &format!("random layer {case}"),
            &mut tally,
        );
    }
    // Not a vacuous pass: many points on both sides were sampled.
    assert!(
        tally.inside_opaque > 200_000 && tally.outside > 200_000,
        "{tally:?}"
    );
}

#[test]
fn demo_layers_sample_opaque_inside_and_transparent_outside() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers");
    let mut rng = Rng(0x5EED_0002);
    let mut tally = Tally::default();
    let button = load_alpha(&dir.join("ui-button.png")).unwrap();
    let panel = load_alpha(&dir.join("ui-panel.png")).unwrap();
    let masts = load_alpha(&dir.join("masts.png")).unwrap();
    let houses = load_alpha(&dir.join("houses.png")).unwrap();
    // Windows of the big layers keep the run short: thin masts and rigging,
    // window holes in the houses.
    let layers = [
        ("ui-button.png", button),
        ("ui-panel.png", panel),
        ("masts.png window", crop(&masts, 700, 300, 256, 256)),
        ("houses.png window", crop(&houses, 400, 200, 256, 256)),
    ];
    for (name, map) in &layers {
        for _ in 0..6 {
            let s = random_settings(&mut rng);
            sample_cut(map, &s, &mut rng, name, &mut tally);
        }
    }
    assert!(
        tally.inside_opaque > 10_000 && tally.outside > 10_000,
        "{tally:?}"
    );
}

/// The checker's regions against the sampler, cell by cell: every point of a
/// half-texel cell reads the same texels as its centre (region boundaries
/// lie on the half grid), so the centre stands for the cell. Safe cells must
/// sample fully opaque, cells outside must-cover fully transparent; and
/// where the two wrap alike (see `tiles`) the regions are no larger than
/// the sampler needs: a cell left out of S samples something non-opaque,
/// a cell in C samples something visible.
#[test]
fn checker_regions_match_the_sampler() {
    let mut rng = Rng(0x5EED_0003);
    for case in 0..3000 {
        let map = random_layer(&mut rng);
        let s = random_settings(&mut rng);
        let (safe, cover, gw, gh) = regions_for_check(&map, s.filter, s.alpha, s.wrap);
        let sampler = Sampler::new(&map, s.filter, s.alpha, s.wrap);
        // Repeat wraps at the level's size in blocks, the contract at the
        // image size: they agree when the blocks tile the axis exactly (or
        // one block spans it); elsewhere the contract may be larger.
        let tiles = |n: u32, repeat: bool| {
            !repeat || (0..=s.filter.mip_levels).all(|l| n % (1 << l) == 0 || n <= 1 << l)
        };
        let exact = tiles(map.width, sampler.wrap_x()) && tiles(map.height, sampler.wrap_y());
        for b in 0..gh {
            for a in 0..gw {
                let p = [a as f64 / 2.0 + 0.25, b as f64 / 2.0 + 0.25];
                let k = b * gw + a;
                let ctx = || {
                    format!(
                        "case {case} {}x{} {s:?} cell ({a}, {b})",
                        map.width, map.height
                    )
                };
                let opaque = sampler.all_opaque(p);
                let invisible = sampler.all_invisible(p);
                if safe[k] {
                    assert!(opaque.is_none(), "{}: safe but {}", ctx(), opaque.unwrap());
                } else if exact {
                    assert!(opaque.is_some(), "{}: samples opaque but not safe", ctx());
                }
                if !cover[k] {
                    assert!(
                        invisible.is_none(),
                        "{}: not covered but {}",
                        ctx(),
                        invisible.unwrap()
                    );
                } else if exact {
                    assert!(
                        invisible.is_some(),
                        "{}: samples transparent but must be covered",
                        ctx()
                    );
                }
            }
        }
    }
}
