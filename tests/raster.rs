//! The simulated GPU (src/raster.rs, src/frame.rs) against its definitions.
//!
//! Coverage follows the top-left rule of the Direct3D 11 rasterization
//! rules (from memory; Vulkan implementations follow the same convention):
//! a pixel is covered when its centre (x + 1/2, y + 1/2) lies strictly inside
//! the triangle, or exactly on a top edge (horizontal, triangle below it,
//! y down) or a left edge (not horizontal, triangle to its right). Expected
//! pixel sets below are derived by hand from that rule, and the brute-force
//! rasterizer at the end is written from it with no code of the crate.
//!
//! All test vertices are multiples of 1/256 pixel, so the GPU's snapping to
//! 8 sub-pixel bits (Direct3D 11, from memory) leaves them where they are.

use std::collections::{BTreeSet, HashSet};
use underdraw::frame::{render, Draw, DrawStats};

fn draw(positions: Vec<f32>, indices: Vec<u32>) -> Draw {
    Draw {
        layer: "test".into(),
        blend: true,
        depth: 0.5,
        depth_test: false,
        depth_write: false,
        positions,
        indices,
    }
}

/// The pixels (x, y) covered at least once, and whether any twice.
fn covered(viewport: [u32; 2], draws: &[Draw]) -> (BTreeSet<(u32, u32)>, bool) {
    let r = render(viewport, draws);
    let mut set = BTreeSet::new();
    for (i, &c) in r.counts.iter().enumerate() {
        if c > 0 {
            set.insert((i as u32 % viewport[0], i as u32 / viewport[0]));
        }
    }
    (set, r.counts.iter().any(|&c| c > 1))
}

fn pixels(f: impl Fn(u32, u32) -> bool, w: u32, h: u32) -> BTreeSet<(u32, u32)> {
    (0..h)
        .flat_map(|y| (0..w).map(move |x| (x, y)))
        .filter(|&(x, y)| f(x, y))
        .collect()
}

fn tri(p: [[f32; 2]; 3]) -> Draw {
    draw(p.iter().flatten().copied().collect(), vec![0, 1, 2])
}

#[test]
fn top_and_left_edges_through_centres_are_covered() {
    // Top edge y = 1/2 (row 0's centres on it), left edge x = 1/2 (column 0's
    // centres on it): both covered. The hypotenuse x + y = 4 is a right
    // edge: centres on it, (x + 1/2) + (y + 1/2) = 4, are not. Vertex (1/2,
    // 1/2) joins a top and a left edge: covered. Vertices (7/2, 1/2) and
    // (1/2, 7/2) each touch the right edge: not covered.
    let (got, twice) = covered([6, 6], &[tri([[0.5, 0.5], [3.5, 0.5], [0.5, 3.5]])]);
    assert_eq!(got, pixels(|x, y| x + y <= 2, 6, 6));
    assert!(!twice);
}

#[test]
fn bottom_and_right_edges_through_centres_are_not_covered() {
    // Bottom edge y = 7/2, right edge x = 7/2: centres on them are out. The
    // hypotenuse x + y = 4 is now a left edge: centres on it are in.
    let (got, _) = covered([6, 6], &[tri([[3.5, 3.5], [0.5, 3.5], [3.5, 0.5]])]);
    let want = [(1, 2), (2, 1), (2, 2)]
        .into_iter()
        .collect::<BTreeSet<_>>();
    assert_eq!(got, want);
}

#[test]
fn axis_aligned_rectangle_on_half_pixels() {
    // [1/2, 5/2] x [3/2, 7/2]: centres x + 1/2 in [1/2, 5/2), y + 1/2 in
    // [3/2, 7/2).
    let (x0, y0, x1, y1) = (0.5, 1.5, 2.5, 3.5);
    let d = draw(vec![x0, y0, x1, y0, x1, y1, x0, y1], vec![0, 1, 2, 0, 2, 3]);
    let (got, twice) = covered([5, 5], &[d]);
    assert_eq!(got, pixels(|x, y| x < 2 && (1..3).contains(&y), 5, 5));
    assert!(!twice);
}

#[test]
fn apex_on_a_centre_between_left_and_right_edges_is_not_covered() {
    // Apex (5/2, 3/2) is the centre of pixel (2, 1): on the left edge (in)
    // and the right edge (out), so out. Row 2 (centre y 5/2): left edge
    // x >= 3/2, right edge x < 7/2: centres 3/2 and 5/2. Row 3's centres lie
    // on the bottom edge: out.
    let (got, _) = covered([6, 6], &[tri([[2.5, 1.5], [4.5, 3.5], [0.5, 3.5]])]);
    let want = [(1, 2), (2, 2)].into_iter().collect::<BTreeSet<_>>();
    assert_eq!(got, want);
}

#[test]
fn shared_diagonal_through_centres_covers_each_pixel_once() {
    // The two triangles of the first two tests share the hypotenuse, which
    // runs through the centres of (1, 2) and (2, 1) and the vertex pixels
    // (0, 3) and (3, 0): together they cover the 3 x 3 block once.
    let a = tri([[0.5, 0.5], [3.5, 0.5], [0.5, 3.5]]);
    let b = tri([[3.5, 3.5], [0.5, 3.5], [3.5, 0.5]]);
    let (got, twice) = covered([6, 6], &[a, b]);
    assert_eq!(got, pixels(|x, y| x < 3 && y < 3, 6, 6));
    assert!(!twice);
}

#[test]
fn pinwheel_around_a_centre_covers_it_once() {
    // The square [1/2, 9/2]^2 cut into 4 triangles at (5/2, 5/2), the centre
    // of pixel (2, 2), where all four meet, in mixed windings.
    let p = vec![0.5, 0.5, 4.5, 0.5, 4.5, 4.5, 0.5, 4.5, 2.5, 2.5];
    let d = draw(p, vec![0, 1, 4, 4, 2, 1, 2, 3, 4, 4, 0, 3]);
    let (got, twice) = covered([6, 6], &[d]);
    assert_eq!(got, pixels(|x, y| x < 4 && y < 4, 6, 6));
    assert!(!twice);
}

#[test]
fn snapped_vertex_moves_to_the_sub_pixel_grid() {
    // The rectangle [x0, 7/2] x [1/2, 7/2], its left edge x = x0 near the
    // centres of column 0. Snapping to 1/256 (8 sub-pixel bits) rounds to the
    // nearest grid point: 1/1024 right of x = 1/2 goes back onto it, so
    // column 0 is covered (exact arithmetic without snapping would leave it
    // out); 3/1024 right goes to 1/2 + 1/256, leaving column 0 out.
    for (x0, first) in [(0.5 + 1.0 / 1024.0, 0), (0.5 + 3.0 / 1024.0, 1)] {
        let (got, _) = covered([6, 6], &[rect(x0, 0.5, 3.5, 3.5)]);
        assert_eq!(
            got,
            pixels(|x, y| x >= first && x < 3 && y < 3, 6, 6),
            "x0 = {x0}"
        );
    }
}

/// Small deterministic generator (xorshift64*, Marsaglia's xorshift with a
/// multiplier, from memory).
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_f491_4f6c_dd1d)
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
    /// A multiple of 1/256 in [lo, hi].
    fn fine(&mut self, lo: f32, hi: f32) -> f32 {
        let steps = ((hi - lo) * 256.0) as u64;
        lo + self.below(steps + 1) as f32 / 256.0
    }
    /// A multiple of 1/2 in [lo, hi].
    fn half(&mut self, lo: f32, hi: f32) -> f32 {
        let steps = ((hi - lo) * 2.0) as u64;
        lo + self.below(steps + 1) as f32 / 2.0
    }
}

/// A mesh tiling the rectangle [x0, x1] x [y0, y1]: a grid of cells whose
/// interior nodes are jittered, each cell cut along a random diagonal, and
/// triangles in random windings.
fn tiled_rectangle(rng: &mut Rng, r: [f32; 4], cells: [usize; 2]) -> Draw {
    let [x0, y0, x1, y1] = r;
    let [nx, ny] = cells;
    let (cw, ch) = ((x1 - x0) / nx as f32, (y1 - y0) / ny as f32);
    let mut p = Vec::new();
    for j in 0..=ny {
        for i in 0..=nx {
            let (mut x, mut y) = (x0 + i as f32 * cw, y0 + j as f32 * ch);
            if i == 0 || i == nx {
                x = [x0, x1][i.min(1)];
            } else {
                // round to the 1/256 grid, then jitter by up to 3/4 px:
                // half-pixel steps often (ties with centres), else 1/256
                x = (x * 256.0).round() / 256.0;
                x += if rng.below(2) == 0 {
                    rng.half(-0.5, 0.5)
                } else {
                    rng.fine(-0.75, 0.75)
                };
            }
            if j == 0 || j == ny {
                y = [y0, y1][j.min(1)];
            } else {
                y = (y * 256.0).round() / 256.0;
                y += if rng.below(2) == 0 {
                    rng.half(-0.5, 0.5)
                } else {
                    rng.fine(-0.75, 0.75)
                };
            }
            p.extend([x, y]);
        }
    }
    let id = |i: usize, j: usize| (j * (nx + 1) + i) as u32;
    let mut ix = Vec::new();
    for j in 0..ny {
        for i in 0..nx {
            let (a, b, c, d) = (id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1));
            let tris = if rng.below(2) == 0 {
                [[a, b, c], [a, c, d]]
            } else {
                [[a, b, d], [b, c, d]]
            };
            for [u, v, w] in tris {
                ix.extend(if rng.below(2) == 0 {
                    [u, v, w]
                } else {
                    [u, w, v]
                });
            }
        }
    }
    draw(p, ix)
}

/// Pixels of a viewport whose centres lie in [x0, x1) x [y0, y1).
fn centres_in(r: [f32; 4], w: u32, h: u32) -> BTreeSet<(u32, u32)> {
    let [x0, y0, x1, y1] = r;
    pixels(
        |x, y| {
            let (cx, cy) = (x as f32 + 0.5, y as f32 + 0.5);
            x0 <= cx && cx < x1 && y0 <= cy && cy < y1
        },
        w,
        h,
    )
}

#[test]
fn tiled_rectangles_cover_each_pixel_once() {
    // A conforming triangulation of a rectangle covers each centre in it
    // once: the half-open [x0, x1) x [y0, y1) from the top-left rule applied
    // to the rectangle's own edges. Cells are over 4 px and interior nodes
    // move at most 3/4 px a coordinate, so every cell stays strictly convex
    // and both its diagonals lie inside it.
    let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
    let rects = [
        [0.5, 0.5, 40.5, 30.5],
        [0.0, 0.0, 48.0, 40.0],
        [3.25, 1.5, 37.75, 33.0],
        [-10.5, -6.0, 30.5, 60.0], // clipped by the viewport
    ];
    for r in rects {
        for _ in 0..8 {
            let d = tiled_rectangle(&mut rng, r, [8, 6]);
            let (got, twice) = covered([48, 40], &[d]);
            assert_eq!(got, centres_in(r, 48, 40), "rectangle {r:?}");
            assert!(!twice, "rectangle {r:?}");
        }
    }
}

#[test]
fn fan_from_an_interior_point_covers_each_pixel_once() {
    // The rectangle's boundary through many points (corners, half-pixel and
    // 1/256 positions, some on centres' rows and columns), fanned from an
    // interior point.
    let mut rng = Rng(7);
    let r = [1.5f32, 2.5, 29.5, 21.5];
    let [x0, y0, x1, y1] = r;
    for _ in 0..20 {
        let mut edge = |a: f32, b: f32| {
            let mut v: Vec<f32> = (0..6)
                .map(|k| {
                    if k % 2 == 0 {
                        rng.half(a, b)
                    } else {
                        rng.fine(a, b)
                    }
                })
                .filter(|&t| a < t && t < b)
                .collect();
            v.sort_by(|p, q| p.partial_cmp(q).unwrap());
            v.dedup();
            v
        };
        let (top, right, bottom, left) = (edge(x0, x1), edge(y0, y1), edge(x0, x1), edge(y0, y1));
        let mut ring = vec![[x0, y0]];
        ring.extend(top.iter().map(|&x| [x, y0]));
        ring.push([x1, y0]);
        ring.extend(right.iter().map(|&y| [x1, y]));
        ring.push([x1, y1]);
        ring.extend(bottom.iter().rev().map(|&x| [x, y1]));
        ring.push([x0, y1]);
        ring.extend(left.iter().rev().map(|&y| [x0, y]));
        let centre = [rng.half(x0 + 1.0, x1 - 1.0), rng.fine(y0 + 1.0, y1 - 1.0)];
        let n = ring.len() as u32;
        let mut p: Vec<f32> = ring.iter().flatten().copied().collect();
        p.extend(centre);
        let ix = (0..n).flat_map(|i| [n, i, (i + 1) % n]).collect();
        let (got, twice) = covered([32, 24], &[draw(p, ix)]);
        assert_eq!(got, centres_in(r, 32, 24));
        assert!(!twice);
    }
}

fn rect(x0: f32, y0: f32, x1: f32, y1: f32) -> Draw {
    draw(vec![x0, y0, x1, y0, x1, y1, x0, y1], vec![0, 1, 2, 0, 2, 3])
}

#[test]
fn two_triangles_pay_for_the_diagonal_quads_one_triangle_does_not() {
    // Quads straddling the shared diagonal are shaded by both triangles
    // (2x2 quad shading, common practice, no source): 0.5% to 1.5% extra
    // lanes over the 65,536 of the area.
    let area = 256u64 * 256;
    let r = render([256, 256], &[rect(0.0, 0.0, 256.0, 256.0)]);
    assert_eq!(r.total.fragments, area);
    let extra = (r.total.lanes - area) as f64 / area as f64;
    assert!((0.005..=0.015).contains(&extra), "extra lanes {extra}");
    // One triangle reaching well outside, clipped to the same square.
    let big = tri([[-100.0, -100.0], [700.0, -100.0], [-100.0, 700.0]]);
    let r = render([256, 256], &[big]);
    assert_eq!((r.total.fragments, r.total.lanes), (area, area));
}

#[test]
fn grid_mesh_vertices_per_triangle() {
    // 10 x 10 cells: 11^2 = 121 vertices, 2 x 100 = 200 triangles, each
    // vertex shaded once with a perfect post-transform cache.
    let mut d = tiled_rectangle(&mut Rng(3), [0.0, 0.0, 40.0, 40.0], [10, 10]);
    d.positions.extend([1.0, 1.0, 2.0, 2.0]); // unreferenced vertices
    let r = render([40, 40], &[d]);
    let s = &r.per_draw[0];
    assert_eq!((s.vertices, s.triangles), (121, 200));
    assert_eq!(s.vertices as f64 / s.triangles as f64, 0.605);
}

#[test]
fn full_screen_layers_front_to_back_shade_each_pixel_once() {
    let (w, h, n) = (1920u32, 1080u32, 4);
    let layer = |i: usize, depth_on: bool| Draw {
        blend: !depth_on,
        depth: 0.1 * (i + 1) as f32,
        depth_test: depth_on,
        depth_write: depth_on,
        ..rect(0.0, 0.0, w as f32, h as f32)
    };
    // Opaque, front to back, depth test and write: the nearest hides the rest.
    let front: Vec<Draw> = (0..n).map(|i| layer(i, true)).collect();
    let r = render([w, h], &front);
    assert!(r.counts.iter().all(|&c| c == 1));
    assert_eq!(r.fragments_per_pixel(), 1.0);
    // Back to front with depth: each layer is nearer than the last, all pass.
    let back: Vec<Draw> = (0..n).rev().map(|i| layer(i, true)).collect();
    assert_eq!(render([w, h], &back).fragments_per_pixel(), n as f64);
    // Blended, no depth: every layer is shaded everywhere.
    let blended: Vec<Draw> = (0..n).map(|i| layer(i, false)).collect();
    let r = render([w, h], &blended);
    assert!(r.counts.iter().all(|&c| c == n as u32));
    assert_eq!(r.fragments_per_pixel(), n as f64);
}

#[test]
fn quads_are_formed_from_fragments_passing_the_depth_test() {
    // A near occluder over columns 0..100 hides them from a far full-screen
    // layer, whose fragments and quads are the 156 columns left.
    let mut near = rect(0.0, 0.0, 100.0, 64.0);
    (near.depth, near.depth_test, near.depth_write) = (0.2, true, true);
    let mut far = tri([[-10.0, -10.0], [600.0, -10.0], [-10.0, 600.0]]);
    (far.depth, far.depth_test) = (0.7, true);
    let r = render([256, 64], &[near, far]);
    assert_eq!(r.per_draw[1].fragments, 156 * 64);
    assert_eq!(r.per_draw[1].lanes, 156 * 64);
}

// ---- brute force, written from the definition, no code of the crate ----

type P = [i128; 2];

/// A coordinate in units of 1/512 pixel, exact for multiples of 1/256, so
/// pixel centres (x + 1/2) are integers too.
fn exact(v: f32) -> i128 {
    let s = v as f64 * 512.0;
    assert_eq!(s.fract(), 0.0, "test vertex {v} is off the 1/256 grid");
    s as i128
}

fn cross(o: P, a: P, b: P) -> i128 {
    (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])
}

/// Edge u-v of a triangle with third vertex w is a top edge: horizontal,
/// triangle below it (y down).
fn is_top(u: P, v: P, w: P) -> bool {
    u[1] == v[1] && w[1] > u[1]
}

/// Edge u-v is a left edge: not horizontal, and the triangle (its third
/// vertex w) lies right of the edge's line at w's height.
fn is_left(u: P, v: P, w: P) -> bool {
    if u[1] == v[1] {
        return false;
    }
    // the line's x at height w.y is u.x + num / den
    let (num, den) = ((v[0] - u[0]) * (w[1] - u[1]), v[1] - u[1]);
    let dx = w[0] - u[0];
    if den > 0 {
        dx * den > num
    } else {
        dx * den < num
    }
}

fn covers(t: [P; 3], p: P) -> bool {
    if cross(t[0], t[1], t[2]) == 0 {
        return false;
    }
    (0..3).all(|i| {
        let (u, v, w) = (t[i], t[(i + 1) % 3], t[(i + 2) % 3]);
        let (sp, sw) = (cross(u, v, p), cross(u, v, w));
        if sp == 0 {
            is_top(u, v, w) || is_left(u, v, w)
        } else {
            (sp > 0) == (sw > 0)
        }
    })
}

fn brute_render(viewport: [u32; 2], draws: &[Draw]) -> (Vec<u32>, Vec<DrawStats>) {
    let [w, h] = viewport;
    let mut counts = vec![0u32; (w * h) as usize];
    let mut depth = vec![1.0f32; counts.len()];
    let mut stats = Vec::new();
    for d in draws {
        let mut s = DrawStats {
            vertices: d.indices.iter().collect::<BTreeSet<_>>().len() as u64,
            // groups of 4 consecutive indices (common practice on tile-based
            // GPUs, no source), the last group only as long as the array
            vertices_in_groups: d
                .indices
                .iter()
                .map(|i| i / 4)
                .collect::<BTreeSet<_>>()
                .iter()
                .map(|&g| (d.positions.len() as u64 / 2 - 4 * g as u64).min(4))
                .sum(),
            triangles: d.indices.len() as u64 / 3,
            ..DrawStats::default()
        };
        for t in d.indices.chunks(3) {
            let v = |i: u32| {
                [
                    exact(d.positions[2 * i as usize]),
                    exact(d.positions[2 * i as usize + 1]),
                ]
            };
            let t = [v(t[0]), v(t[1]), v(t[2])];
            let mut shaded = Vec::new();
            for y in 0..h {
                for x in 0..w {
                    let k = (y * w + x) as usize;
                    let centre = [512 * x as i128 + 256, 512 * y as i128 + 256];
                    if covers(t, centre) && (!d.depth_test || d.depth < depth[k]) {
                        shaded.push((x, y, k));
                    }
                }
            }
            let quads: HashSet<(u32, u32)> =
                shaded.iter().map(|&(x, y, _)| (x / 2, y / 2)).collect();
            s.fragments += shaded.len() as u64;
            s.lanes += 4 * quads.len() as u64;
            for (_, _, k) in shaded {
                counts[k] += 1;
                if d.depth_write {
                    depth[k] = d.depth;
                }
            }
        }
        stats.push(s);
    }
    (counts, stats)
}

#[test]
fn render_matches_a_brute_force_rasterizer() {
    let mut rng = Rng(0x5eed);
    for case in 0..400 {
        let viewport = [1 + rng.below(24) as u32, 1 + rng.below(20) as u32];
        let (w, h) = (viewport[0] as f32, viewport[1] as f32);
        let mut draws = Vec::new();
        for _ in 0..1 + rng.below(5) {
            let mut p: Vec<[f32; 2]> = Vec::new();
            for _ in 0..3 + rng.below(6) {
                let mut c = |m: f32| match rng.below(100) {
                    0..=54 => rng.half(-2.0, m + 2.0),
                    55..=84 => rng.fine(-2.0, m + 2.0),
                    85..=94 => rng.half(-60.0, m + 60.0).round(),
                    _ => (rng.below(2_000_000) as f32 - 1e6).round(),
                };
                let q = [c(w), c(h)];
                p.push(q);
            }
            // a collinear vertex, 2b - a (stays on the 1/256 grid)
            // (when f32 holds it exactly)
            let (a, b) = (p[0], p[1]);
            let q = [0, 1].map(|k| 2.0 * b[k] as f64 - a[k] as f64);
            if q.iter().all(|&v| v as f32 as f64 == v) {
                p.push(q.map(|v| v as f32));
            }
            let n = p.len() as u64;
            let ix: Vec<u32> = (0..3 * (1 + rng.below(8)))
                .map(|_| rng.below(n) as u32)
                .collect();
            draws.push(Draw {
                depth: [0.0, 0.25, 0.5, 0.5, 1.0][rng.below(5) as usize],
                depth_test: rng.below(3) != 0,
                depth_write: rng.below(3) != 0,
                ..draw(p.iter().flatten().copied().collect(), ix)
            });
        }
        let r = render(viewport, &draws);
        let (counts, stats) = brute_render(viewport, &draws);
        assert_eq!(r.counts, counts, "case {case}: {draws:?}");
        assert_eq!(r.per_draw, stats, "case {case}: {draws:?}");
        let sum = |f: fn(&DrawStats) -> u64| stats.iter().map(f).sum::<u64>();
        assert_eq!(r.total.fragments, sum(|s| s.fragments));
        assert_eq!(r.total.lanes, sum(|s| s.lanes));
    }
}
