//! Hand-derived cases, a brute-force region oracle, and cross-checks
//! against the geo crate (reference implementation).

use super::*;
use crate::mesh::{MeshStats, TriangleList};
use crate::settings::{AlphaThresholds, Filter, FilterMode, Wrap};
use crate::test_rng::Lcg;

const EPS: f64 = 1e-9;

fn layer(w: u32, h: u32, f: impl Fn(u32, u32) -> u8) -> AlphaMap {
    let alpha = (0..h)
        .flat_map(|y| (0..w).map(move |x| (x, y)))
        .map(|(x, y)| f(x, y))
        .collect();
    AlphaMap::from_raw(w, h, alpha)
}

fn filter(mode: FilterMode, mip_levels: u32) -> Filter {
    Filter { mode, mip_levels }
}

/// Builds a mesh file; every triangle gets 3 vertices of its own (a quad, 2 cw triangles, 6).
#[derive(Default)]
struct Build {
    positions: Vec<f32>,
    opaque: Vec<u32>,
    blended: Vec<u32>,
}

impl Build {
    fn vertex(&mut self, p: [f32; 2]) -> u32 {
        self.positions.extend_from_slice(&p);
        (self.positions.len() / 2 - 1) as u32
    }
    fn tri(&mut self, opaque: bool, a: [f32; 2], b: [f32; 2], c: [f32; 2]) -> &mut Self {
        let idx = [self.vertex(a), self.vertex(b), self.vertex(c)];
        if opaque {
            &mut self.opaque
        } else {
            &mut self.blended
        }
        .extend_from_slice(&idx);
        self
    }
    /// [x0, x1] x [y0, y1]; (x0,y0) -> (x1,y0) -> (x1,y1) is clockwise on a y-down screen.
    fn quad(&mut self, opaque: bool, x0: f32, y0: f32, x1: f32, y1: f32) -> &mut Self {
        self.tri(opaque, [x0, y0], [x1, y0], [x1, y1])
            .tri(opaque, [x0, y0], [x1, y1], [x0, y1])
    }
    fn mesh(&self, alpha: &AlphaMap, filter: Filter, wrap: Wrap) -> LayerMesh {
        let (w, h) = (alpha.width as f32, alpha.height as f32);
        LayerMesh {
            format: FORMAT.to_string(),
            version: VERSION,
            source: "test.png".to_string(),
            size: [alpha.width, alpha.height],
            filter,
            alpha: AlphaThresholds::default(),
            wrap,
            budget: None,
            winding: Winding::Cw,
            uvs: self
                .positions
                .chunks(2)
                .flat_map(|p| [p[0] / w, p[1] / h])
                .collect(),
            positions: self.positions.clone(),
            opaque: TriangleList {
                indices: self.opaque.clone(),
            },
            blended: TriangleList {
                indices: self.blended.clone(),
            },
            stats: MeshStats::default(),
            region: None,
        }
    }
}

fn check(b: &Build, alpha: &AlphaMap, f: Filter, wrap: Wrap) -> ContractReport {
    check_mesh(&b.mesh(alpha, f, wrap), alpha).expect("structurally valid mesh")
}

fn areas(alpha: &AlphaMap, f: Filter, wrap: Wrap) -> (f64, f64) {
    let (s, c, gw, gh) = regions_for_check(alpha, f, AlphaThresholds::default(), wrap);
    assert_eq!(
        (gw, gh),
        (2 * alpha.width as usize, 2 * alpha.height as usize)
    );
    let count = |m: &[bool]| m.iter().filter(|&&x| x).count() as f64 * 0.25;
    (count(&s), count(&c))
}

#[test]
fn fully_opaque_quad_passes() {
    let alpha = layer(4, 4, |_, _| 255);
    let r = check(
        Build::default().quad(true, 0.0, 0.0, 4.0, 4.0),
        &alpha,
        Filter::default(),
        Wrap::None,
    );
    assert!(r.holds(), "{:?}", r.violations());
    assert_eq!((r.safe_area, r.must_cover_area), (16.0, 16.0));
    assert!((r.opaque_area - 16.0).abs() < EPS && (r.covered_area - 16.0).abs() < EPS);
    assert!(r.opaque_outside_safe.abs() < EPS && r.uncovered.abs() < EPS);
}

#[test]
fn transparent_corner_texel_measured_by_hand() {
    // 4x4, all opaque but texel (3,3) = [3,4]^2, bilinear, no mipmaps, clamp.
    // Clamp extends (3,3)'s status over x >= 3, y >= 3 outside the image, so
    // the extended O_0 is the plane minus the quadrant {x >= 3, y >= 3}.
    // Eroding by 0.5: p stays iff [p-0.5, p+0.5]^2 misses that quadrant's
    // interior, i.e. p.x <= 2.5 or p.y <= 2.5. So S = [0,4]^2 minus
    // (2.5,4] x (2.5,4]: 16 - 1.5^2 = 13.75, and the full quad lies 2.25
    // texels outside S (9 half-cells). C is the whole image (every texel
    // but one is visible, dilated), so coverage is complete.
    let alpha = layer(4, 4, |x, y| if (x, y) == (3, 3) { 0 } else { 255 });
    let mut b = Build::default();
    b.quad(true, 0.0, 0.0, 4.0, 4.0);
    let r = check(&b, &alpha, Filter::default(), Wrap::None);
    assert_eq!(r.safe_area, 13.75);
    assert!((r.opaque_outside_safe - 2.25).abs() < EPS, "{r:?}");
    assert!(r.uncovered.abs() < EPS);
    assert!(!r.holds());
    assert_eq!(
        r.violations(),
        vec!["opaque mesh covers 2.25 texels outside the safe-opaque region".to_string()]
    );
    // Nearest: no erosion, only the texel itself is unsafe.
    let r = check(&b, &alpha, filter(FilterMode::Nearest, 0), Wrap::None);
    assert_eq!(r.safe_area, 15.0);
    assert!((r.opaque_outside_safe - 1.0).abs() < EPS);
}

#[test]
fn mip_levels_by_hand() {
    let alpha = layer(4, 4, |x, y| if (x, y) == (3, 3) { 0 } else { 255 });
    // Nearest, level 1: the 2x2 block [2,4]^2 holds (3,3), so O_1 = image minus [2,4]^2: 12.
    assert_eq!(
        areas(&alpha, filter(FilterMode::Nearest, 1), Wrap::None).0,
        12.0
    );
    // Bilinear, level 1, r = 1: O_1 extended is the plane minus {x>=2, y>=2};
    // eroded by 1 it loses {x>1, y>1}, which contains level 0's loss: 16 - 9 = 7.
    assert_eq!(
        areas(&alpha, filter(FilterMode::Bilinear, 1), Wrap::None).0,
        7.0
    );
    // 3x3 with partial edge blocks, nearest, level 1. Transparent (2,2) is
    // alone in its block: S = 9 - 1. Transparent (1,1) spoils block [0,2]^2: 9 - 4.
    let corner = layer(3, 3, |x, y| if (x, y) == (2, 2) { 0 } else { 255 });
    assert_eq!(
        areas(&corner, filter(FilterMode::Nearest, 1), Wrap::None).0,
        8.0
    );
    let centre = layer(3, 3, |x, y| if (x, y) == (1, 1) { 0 } else { 255 });
    assert_eq!(
        areas(&centre, filter(FilterMode::Nearest, 1), Wrap::None).0,
        5.0
    );
    // Visible texel (1,1) only, bilinear, level 1: block [0,2]^2 is visible,
    // dilated by 1 and clipped: [0,3]^2 = 9 (level 0 gives [0.5,2.5]^2 inside it).
    let dot = layer(4, 4, |x, y| if (x, y) == (1, 1) { 255 } else { 0 });
    assert_eq!(
        areas(&dot, filter(FilterMode::Bilinear, 1), Wrap::None).1,
        9.0
    );
}

#[test]
fn addressing_by_hand() {
    // Column 0 transparent, 4x4, bilinear. Clamp: x < 0 reads column 0
    // (transparent), x > 4 reads column 3 (opaque): O = [1, inf), eroded
    // [1.5, inf), in the image 2.5 x 4 = 10. Wrap x: O = [1,4] + 4k, eroded
    // [1.5, 3.5]: 2 x 4 = 8. Wrap y does not change a column pattern: 10.
    let alpha = layer(4, 4, |x, _| if x == 0 { 0 } else { 255 });
    let f = Filter::default();
    assert_eq!(areas(&alpha, f, Wrap::None).0, 10.0);
    assert_eq!(areas(&alpha, f, Wrap::X).0, 8.0);
    assert_eq!(areas(&alpha, f, Wrap::Y).0, 10.0);
    assert_eq!(areas(&alpha, f, Wrap::Xy).0, 8.0);
    // One visible texel: (1,1) dilated by 0.5 is [0.5,2.5]^2 = 4; nearest 1.
    let dot = layer(4, 4, |x, y| if (x, y) == (1, 1) { 255 } else { 0 });
    assert_eq!(areas(&dot, f, Wrap::None).1, 4.0);
    assert_eq!(
        areas(&dot, filter(FilterMode::Nearest, 0), Wrap::None).1,
        1.0
    );
    // Corner (0,0): clamp extends it to {x<=1, y<=1}, dilated {x<=1.5, y<=1.5},
    // clipped [0,1.5]^2 = 2.25. Wrap xy: [-0.5,1.5] + 4k per axis meets the
    // image in [0,1.5] u [3.5,4], length 2, so 2 x 2 = 4.
    let corner = layer(4, 4, |x, y| if (x, y) == (0, 0) { 255 } else { 0 });
    assert_eq!(areas(&corner, f, Wrap::None).1, 2.25);
    assert_eq!(areas(&corner, f, Wrap::Xy).1, 4.0);
}

#[test]
fn missed_visible_texel_is_uncovered() {
    // Every texel visible (partial), nearest: C is the image. The blended
    // mesh covers [0,4]x[0,3] and [0,3]x[3,4], missing texel (3,3).
    let alpha = layer(4, 4, |_, _| 128);
    let mut b = Build::default();
    b.quad(false, 0.0, 0.0, 4.0, 3.0)
        .quad(false, 0.0, 3.0, 3.0, 4.0);
    let r = check(&b, &alpha, filter(FilterMode::Nearest, 0), Wrap::None);
    assert!((r.uncovered - 1.0).abs() < EPS, "{r:?}");
    assert_eq!(r.safe_area, 0.0);
    assert!((r.covered_area - 15.0).abs() < EPS);
    assert_eq!(
        r.violations(),
        vec!["the must-cover region has 1 texels covered by neither mesh".to_string()]
    );
}

// T1 = (0,0),(4,0),(0,4); T2 = (3,4),(-1,4),(3,0), both cw. T1 ∩ T2 is the
// band 3 <= x+y <= 4 in the quadrant x,y >= 0 ((16-9)/2 = 3.5) minus its part
// with x > 3 (triangle (3,0),(4,0),(3,1), 0.5): 3.0. T2's part with x < 0 is
// the triangle (-1,4),(0,3),(0,4): 0.5.
const T1: [[f32; 2]; 3] = [[0.0, 0.0], [4.0, 0.0], [0.0, 4.0]];
const T2: [[f32; 2]; 3] = [[3.0, 4.0], [-1.0, 4.0], [3.0, 0.0]];

#[test]
fn overlaps_are_measured_per_mesh() {
    let alpha = layer(4, 4, |_, _| 0);
    let f = Filter::default();
    let mut b = Build::default();
    b.tri(false, T1[0], T1[1], T1[2])
        .tri(false, T2[0], T2[1], T2[2]);
    let r = check(&b, &alpha, f, Wrap::None);
    assert!((r.overlap_within_blended - 3.0).abs() < EPS, "{r:?}");
    assert_eq!(
        (r.overlap_within_opaque, r.overlap_opaque_blended),
        (0.0, 0.0)
    );
    assert!((r.blended_outside_image - 0.5).abs() < EPS);
    assert!((r.covered_area - 13.0).abs() < EPS, "union = 8 + 8 - 3");

    let mut b = Build::default();
    b.tri(true, T1[0], T1[1], T1[2])
        .tri(true, T2[0], T2[1], T2[2]);
    let r = check(&b, &alpha, f, Wrap::None);
    assert!((r.overlap_within_opaque - 3.0).abs() < EPS);
    assert!((r.opaque_area - 13.0).abs() < EPS);
    // Nothing is safe on a transparent layer: the whole union is outside S.
    assert!((r.opaque_outside_safe - 13.0).abs() < EPS);

    let mut b = Build::default();
    b.tri(true, T1[0], T1[1], T1[2])
        .tri(false, T2[0], T2[1], T2[2]);
    let r = check(&b, &alpha, f, Wrap::None);
    assert!((r.overlap_opaque_blended - 3.0).abs() < EPS);
    assert_eq!(
        (r.overlap_within_opaque, r.overlap_within_blended),
        (0.0, 0.0)
    );
    assert!(r
        .violations()
        .iter()
        .any(|v| v == "the opaque and blended meshes overlap by 3 texels"));
}

#[test]
fn uncovered_is_exact_with_duplicate_triangles() {
    // T1 twice on an all-visible layer: it covers 8 of 16, so 8 are uncovered
    // (a plain sum of triangle areas would claim 16 covered).
    let alpha = layer(4, 4, |_, _| 128);
    let mut b = Build::default();
    b.tri(false, T1[0], T1[1], T1[2])
        .tri(false, T1[0], T1[1], T1[2]);
    let r = check(&b, &alpha, filter(FilterMode::Nearest, 0), Wrap::None);
    assert!((r.uncovered - 8.0).abs() < EPS, "{r:?}");
    assert!((r.overlap_within_blended - 8.0).abs() < EPS);
    assert!((r.covered_area - 8.0).abs() < EPS);
}

#[test]
fn opaque_outside_the_image_is_unsafe() {
    // Fully opaque: S is the image; the quad [-1,4]x[0,4] has 4 texels left of it.
    let alpha = layer(4, 4, |_, _| 255);
    let r = check(
        Build::default().quad(true, -1.0, 0.0, 4.0, 4.0),
        &alpha,
        Filter::default(),
        Wrap::None,
    );
    assert!((r.opaque_outside_safe - 4.0).abs() < EPS, "{r:?}");
    // Below the image: [0,4]x[0,6] has 8 texels outside.
    let r = check(
        Build::default().quad(true, 0.0, 0.0, 4.0, 6.0),
        &alpha,
        Filter::default(),
        Wrap::Xy,
    );
    assert!((r.opaque_outside_safe - 8.0).abs() < EPS);
}

#[test]
fn winding_and_degenerate_triangles_are_counted() {
    let alpha = layer(4, 4, |_, _| 0);
    let mut b = Build::default();
    b.tri(false, [0.0, 0.0], [1.0, 0.0], [1.0, 1.0]); // cw
    b.tri(false, [2.0, 0.0], [3.0, 1.0], [3.0, 0.0]); // ccw
    b.tri(true, [0.0, 2.0], [1.0, 3.0], [2.0, 4.0]); // collinear
    b.tri(true, [0.0, 2.0], [0.0, 2.0], [2.0, 4.0]); // repeated vertex
    let mut m = b.mesh(&alpha, Filter::default(), Wrap::None);
    let r = check_mesh(&m, &alpha).unwrap();
    assert_eq!((r.wrong_winding, r.degenerate_triangles), (1, 2));
    assert!(r
        .violations()
        .contains(&"1 triangle(s) are wound against the file's winding".to_string()));
    assert!(r
        .violations()
        .contains(&"2 triangle(s) have zero area".to_string()));
    m.winding = Winding::Ccw;
    assert_eq!(check_mesh(&m, &alpha).unwrap().wrong_winding, 1);
    m.blended.indices.truncate(3);
    assert_eq!(check_mesh(&m, &alpha).unwrap().wrong_winding, 1);
}

#[test]
fn structural_errors() {
    let alpha = layer(4, 4, |_, _| 255);
    let good = Build::default().quad(false, 0.0, 0.0, 4.0, 4.0).mesh(
        &alpha,
        Filter::default(),
        Wrap::None,
    );
    assert!(check_mesh(&good, &alpha).is_ok());
    let bad = |f: &dyn Fn(&mut LayerMesh)| {
        let mut m = good.clone();
        f(&mut m);
        check_mesh(&m, &alpha).unwrap_err()
    };
    let e = bad(&|m| m.blended.indices[4] = 9);
    assert_eq!(
        e,
        CheckError::IndexOutOfRange {
            list: "blended",
            triangle: 1,
            index: 9,
            vertices: 6
        }
    );
    assert!(e
        .to_string()
        .contains("uses vertex 9 but there are only 6 vertices"));
    assert!(matches!(
        bad(&|m| m.opaque.indices = vec![0, 1]),
        CheckError::IndicesNotTriangles {
            list: "opaque",
            len: 2
        }
    ));
    assert!(matches!(
        bad(&|m| {
            m.positions.pop();
        }),
        CheckError::OddPositions { len: 11 }
    ));
    assert!(matches!(
        bad(&|m| {
            m.uvs.pop();
        }),
        CheckError::UvLengthMismatch {
            positions: 12,
            uvs: 11
        }
    ));
    assert!(matches!(
        bad(&|m| m.size = [4, 5]),
        CheckError::SizeMismatch { mesh_h: 5, .. }
    ));
    assert!(matches!(
        bad(&|m| m.positions[3] = f32::NAN),
        CheckError::NonFinitePosition { vertex: 1, .. }
    ));
    assert!(matches!(
        bad(&|m| m.positions[0] = f32::INFINITY),
        CheckError::NonFinitePosition { vertex: 0, .. }
    ));
    assert!(matches!(
        bad(&|m| m.format = "x".into()),
        CheckError::WrongFormat { .. }
    ));
    assert!(matches!(
        bad(&|m| m.version = VERSION + 1),
        CheckError::WrongVersion { found } if found == VERSION + 1
    ));
}

#[test]
fn big_layer_full_quad() {
    // 1024^2 opaque but texel (500,500): bilinear erosion removes [499.5,501.5]^2 = 4.
    let alpha = layer(
        1024,
        1024,
        |x, y| if (x, y) == (500, 500) { 0 } else { 255 },
    );
    let r = check(
        Build::default().quad(true, 0.0, 0.0, 1024.0, 1024.0),
        &alpha,
        Filter::default(),
        Wrap::None,
    );
    assert!((r.opaque_outside_safe - 4.0).abs() < 1e-6, "{r:?}");
    assert!(r.uncovered.abs() < 1e-6);
    assert_eq!(r.safe_area, 1024.0 * 1024.0 - 4.0);
}

/// A second, point-wise reading of the definition: the half-cell's centre c
/// is in erode(O_l) iff every extended texel whose square meets the open
/// square (c-r, c+r)^2 belongs to an opaque block (status found by scanning
/// the block's texels), and in dilate(V_l) iff one belongs to a visible block.
fn brute_regions(alpha: &AlphaMap, f: Filter, wrap: Wrap) -> (Vec<bool>, Vec<bool>) {
    let t = AlphaThresholds::default();
    let (w, h) = (alpha.width as i64, alpha.height as i64);
    let map = |i: i64, n: i64, wr: bool| {
        if wr {
            i.rem_euclid(n)
        } else {
            i.clamp(0, n - 1)
        }
    };
    let (mut s, mut c) = (Vec::new(), Vec::new());
    for b in 0..2 * h {
        for a in 0..2 * w {
            let (cx, cy) = ((a as f64 + 0.5) / 2.0, (b as f64 + 0.5) / 2.0);
            let (mut safe, mut cover) = (true, false);
            for l in 0..=f.mip_levels {
                let r = match f.mode {
                    FilterMode::Nearest => 0.0,
                    FilterMode::Bilinear => 2f64.powi(l as i32 - 1),
                };
                let k = 1i64 << l;
                for j in (cy - r).floor() as i64..(cy + r).ceil() as i64 {
                    for i in (cx - r).floor() as i64..(cx + r).ceil() as i64 {
                        let (bx, by) = (map(i, w, wrap.x()) / k * k, map(j, h, wrap.y()) / k * k);
                        let texels: Vec<u8> = (by..(by + k).min(h))
                            .flat_map(|y| (bx..(bx + k).min(w)).map(move |x| (x, y)))
                            .map(|(x, y)| alpha.get(x as u32, y as u32))
                            .collect();
                        safe &= texels.iter().all(|&v| v >= t.opaque_min);
                        cover |= texels.iter().any(|&v| v >= t.visible_min);
                    }
                }
            }
            s.push(safe);
            c.push(cover);
        }
    }
    (s, c)
}

#[test]
fn regions_match_pointwise_definition() {
    let mut rng = Lcg(7);
    for case in 0..300 {
        let (w, h) = (1 + rng.below(9) as u32, 1 + rng.below(9) as u32);
        let density = rng.below(4);
        let alpha = layer(w, h, |_, _| 0);
        let alpha = AlphaMap::from_raw(
            w,
            h,
            alpha
                .alpha
                .iter()
                .map(|_| [0, 100, 255, 255][(rng.below(4) + density).min(3) as usize])
                .collect(),
        );
        let mode = if rng.below(2) == 0 {
            FilterMode::Nearest
        } else {
            FilterMode::Bilinear
        };
        let f = filter(mode, rng.below(5) as u32);
        let wrap = [Wrap::None, Wrap::X, Wrap::Y, Wrap::Xy][rng.below(4) as usize];
        let (s, c, _, _) = regions_for_check(&alpha, f, AlphaThresholds::default(), wrap);
        let (bs, bc) = brute_regions(&alpha, f, wrap);
        assert_eq!(s, bs, "safe, case {case}: {w}x{h} {f:?} {wrap:?}");
        assert_eq!(c, bc, "cover, case {case}: {w}x{h} {f:?} {wrap:?}");
    }
}

/// Random alpha for a `w x h` layer: a mix of transparent, translucent and
/// opaque texels, denser in opaque ones as `density` grows (0..4).
fn random_layer(rng: &mut Lcg, w: u32, h: u32, density: u64) -> AlphaMap {
    let alpha = (0..w * h)
        .map(|_| [0, 100, 255, 255][(rng.below(4) + density).min(3) as usize])
        .collect();
    AlphaMap::from_raw(w, h, alpha)
}

/// The cases run code is most likely to get wrong, against the same
/// point-wise definition: one-texel-wide strips (1xN, Nx1), mip levels up
/// to two beyond the one whose single block covers the image (so blocks
/// larger than the image, which the checker stops at), with and without
/// wrap on each axis.
#[test]
fn regions_match_pointwise_definition_at_the_edges() {
    let mut rng = Lcg(31);
    let mut shapes: Vec<(u32, u32)> = (1..=12).flat_map(|n| [(1, n), (n, 1)]).collect();
    shapes.extend([(2, 3), (3, 2), (3, 5), (4, 4), (5, 3)]);
    let mut cases = 0;
    for &(w, h) in &shapes {
        // Smallest level whose block covers the image.
        let top = (0..).find(|&l| (1u32 << l) >= w.max(h)).unwrap();
        for density in 0..4 {
            let alpha = random_layer(&mut rng, w, h, density);
            for mode in [FilterMode::Nearest, FilterMode::Bilinear] {
                for wrap in [Wrap::None, Wrap::X, Wrap::Y, Wrap::Xy] {
                    let below_top = rng.below(top as u64 + 1) as u32;
                    for levels in [below_top, top + 1, top + 2] {
                        let f = filter(mode, levels);
                        let (s, c, _, _) =
                            regions_for_check(&alpha, f, AlphaThresholds::default(), wrap);
                        let (bs, bc) = brute_regions(&alpha, f, wrap);
                        assert_eq!(s, bs, "safe: {w}x{h} {f:?} {wrap:?} {:?}", alpha.alpha);
                        assert_eq!(c, bc, "cover: {w}x{h} {f:?} {wrap:?} {:?}", alpha.alpha);
                        cases += 1;
                    }
                }
            }
        }
    }
    assert_eq!(cases, shapes.len() * 4 * 2 * 4 * 3);
}

mod reference {
    //! geo crate, reference implementation (geo 0.29 BooleanOps / Area,
    //! polygon boolean operations via i_overlay).
    use super::*;
    use geo::{Area, BooleanOps, LineString, MultiPolygon, Polygon};

    fn poly(pts: &[[f64; 2]]) -> Polygon<f64> {
        Polygon::new(
            LineString::from(pts.iter().map(|p| (p[0], p[1])).collect::<Vec<_>>()),
            vec![],
        )
    }
    fn rect(x0: f64, y0: f64, x1: f64, y1: f64) -> Polygon<f64> {
        poly(&[[x0, y0], [x1, y0], [x1, y1], [x0, y1]])
    }
    fn union(tris: &[[[f64; 2]; 3]]) -> MultiPolygon<f64> {
        tris.iter()
            .fold(MultiPolygon::new(vec![]), |u, t| u.union(&poly(t)))
    }
    /// Area of `u` inside the half-grid cells set in `mask`.
    fn area_in_mask(u: &MultiPolygon<f64>, mask: &[bool], gw: usize) -> f64 {
        mask.iter()
            .enumerate()
            .filter(|(_, &m)| m)
            .map(|(k, _)| {
                let (a, b) = ((k % gw) as f64 * 0.5, (k / gw) as f64 * 0.5);
                u.intersection(&rect(a, b, a + 0.5, b + 0.5))
                    .unsigned_area()
            })
            .sum()
    }

    fn random_tri(rng: &mut Lcg, w: f64, h: f64) -> [[f32; 2]; 3] {
        let mut p = || {
            [
                (rng.unit() * (w + 2.0) - 1.0) as f32,
                (rng.unit() * (h + 2.0) - 1.0) as f32,
            ]
        };
        [p(), p(), p()]
    }
    fn f64s(t: &[[f32; 2]; 3]) -> [[f64; 2]; 3] {
        t.map(|p| [p[0] as f64, p[1] as f64])
    }

    #[test]
    fn triangle_overlap_matches_geo() {
        let mut rng = Lcg(11);
        let alpha = layer(6, 6, |_, _| 0);
        let mut nonzero = 0;
        for _ in 0..200 {
            let (a, b) = (
                random_tri(&mut rng, 6.0, 6.0),
                random_tri(&mut rng, 6.0, 6.0),
            );
            let mut m = Build::default();
            m.tri(false, a[0], a[1], a[2]).tri(false, b[0], b[1], b[2]);
            let r = check(&m, &alpha, Filter::default(), Wrap::None);
            let expect = poly(&f64s(&a))
                .intersection(&poly(&f64s(&b)))
                .unsigned_area();
            assert!(
                (r.overlap_within_blended - expect).abs() < 1e-7,
                "{a:?} {b:?}: {} vs {expect}",
                r.overlap_within_blended
            );
            nonzero += (expect > 0.01) as usize;
        }
        assert!(
            nonzero > 20,
            "the random pairs must overlap often enough to test something"
        );
    }

    #[test]
    fn mesh_areas_match_geo() {
        let mut rng = Lcg(23);
        for case in 0..40 {
            let (w, h) = (2 + rng.below(6) as u32, 2 + rng.below(6) as u32);
            let alpha = AlphaMap::from_raw(
                w,
                h,
                (0..w * h)
                    .map(|_| [0, 90, 255, 255][rng.below(4) as usize])
                    .collect(),
            );
            let f = filter(
                if case % 2 == 0 {
                    FilterMode::Bilinear
                } else {
                    FilterMode::Nearest
                },
                rng.below(3) as u32,
            );
            let wrap = [Wrap::None, Wrap::X, Wrap::Y, Wrap::Xy][rng.below(4) as usize];
            let mut m = Build::default();
            let (mut op, mut bl) = (Vec::new(), Vec::new());
            for k in 0..2 + rng.below(5) {
                let t = random_tri(&mut rng, w as f64, h as f64);
                let opaque = k % 2 == 0;
                m.tri(opaque, t[0], t[1], t[2]);
                if opaque { &mut op } else { &mut bl }.push(f64s(&t));
            }
            let r = check(&m, &alpha, f, wrap);
            let (s, c, gw, _) = regions_for_check(&alpha, f, AlphaThresholds::default(), wrap);
            let all: Vec<_> = op.iter().chain(&bl).copied().collect();
            let (u_op, u_all) = (union(&op), union(&all));
            let image = rect(0.0, 0.0, w as f64, h as f64);
            let outside_image: f64 = bl
                .iter()
                .map(|t| poly(t).unsigned_area() - poly(t).intersection(&image).unsigned_area())
                .sum();
            let close = |got: f64, want: f64, what: &str| {
                assert!(
                    (got - want).abs() < 1e-6,
                    "case {case} {what}: {got} vs geo {want}; {r:?}"
                );
            };
            close(r.opaque_area, u_op.unsigned_area(), "opaque_area");
            close(r.covered_area, u_all.unsigned_area(), "covered_area");
            close(
                r.opaque_outside_safe,
                u_op.unsigned_area() - area_in_mask(&u_op, &s, gw),
                "opaque_outside_safe",
            );
            close(
                r.uncovered,
                r.must_cover_area - area_in_mask(&u_all, &c, gw),
                "uncovered",
            );
            close(
                r.blended_outside_image,
                outside_image,
                "blended_outside_image",
            );
        }
    }
}

#[test]
fn empty_image_has_nothing_safe() {
    // 0x3 image: S and C are empty, the whole triangle (area 2) is unsafe.
    let alpha = AlphaMap::from_raw(0, 3, vec![]);
    let mut b = Build::default();
    b.tri(true, [0.0, 0.0], [2.0, 0.0], [2.0, 2.0]);
    let r = check(&b, &alpha, Filter::default(), Wrap::None);
    assert!((r.opaque_outside_safe - 2.0).abs() < EPS, "{r:?}");
    assert_eq!(
        (r.safe_area, r.must_cover_area, r.uncovered),
        (0.0, 0.0, 0.0)
    );
}
