//! The floor: every layer drawn as exactly its regions, with unlimited
//! vertices ([`super::draws::Strategy::Exact`]).
//!
//! A layer's **exact meshes** are its safe-opaque region (drawn opaque)
//! and the rest of its must-cover region (drawn blended), both on the
//! half-texel grid of [`crate::alpha`]. They are built as rectangles: each
//! maximal run of cells in a row of half-texel cells, stacked with the
//! identical runs of the rows below it into one rectangle, two triangles a
//! rectangle. Rectangles tile a region exactly, and under the top-left rule
//! triangles that tile a region cover each pixel centre inside it exactly
//! once, so the fragments of these draws are those of any mesh whose
//! outline is the region's.
//!
//! **Vertices.** An exact mesh needs only its region's corners (a polygon
//! with holes triangulates without added points), so its vertex count is
//! the number of lattice points where the region's boundary turns
//! ([`corner_count`]), not the rectangles' corners; the scorer counts those.
//!
//! **Lanes.** The rectangles' edges inside a region would cost 2x2 quads a
//! real mesh of the region need not pay, so the exact frames are measured
//! with [`crate::frame::SpanBuffer::measure_regions`]: each quad holding
//! one of a draw's fragments counts once, whatever triangle it came from,
//! leaving only the quads the regions' own edges cut.

use super::prepare::Layer;
use crate::alpha::{must_cover_sampled, safe_opaque_sampled, AlphaMap, Sampled};
use crate::error::FileError;
use crate::io::{read_layer_file, ImageLimits, LayerFile};
use crate::mask::RowRuns;
use crate::mesh::{LayerMesh, MeshStats, TriangleList, Winding, FORMAT, VERSION};
use crate::settings::CutSettings;
use rayon::prelude::*;

/// A layer's exact meshes and the vertices a mesh of its regions needs.
#[derive(Clone, Debug)]
pub struct ExactLayer {
    /// The regions as rectangles: `opaque` the safe-opaque region, `blended`
    /// the rest of the must-cover region.
    pub mesh: LayerMesh,
    /// Corners of the safe-opaque region (the opaque draw's vertices).
    pub opaque_vertices: u64,
    /// Corners of the must-cover region less the safe-opaque one (the
    /// blended draw's vertices).
    pub blended_vertices: u64,
}

/// The runs of `a` not in `b`, row by row (both sorted and maximal).
fn difference(a: &RowRuns, b: &RowRuns) -> RowRuns {
    let mut out = RowRuns::new(a.width);
    let mut row = Vec::new();
    for y in 0..a.height {
        row.clear();
        let sub = b.row(y);
        let mut j = 0;
        for &[x0, x1] in a.row(y) {
            let mut x = x0;
            while j < sub.len() && sub[j][1] <= x {
                j += 1;
            }
            let mut k = j;
            while x < x1 {
                match sub.get(k) {
                    Some(&[s0, s1]) if s0 < x1 => {
                        if x < s0 {
                            row.push([x, s0]);
                        }
                        x = x.max(s1);
                        k += 1;
                    }
                    _ => {
                        row.push([x, x1]);
                        x = x1;
                    }
                }
            }
        }
        out.push_row(&row);
    }
    out
}

/// Whether cell `x` of a row's sorted runs is set (`x` may be -1).
fn set(row: &[[u32; 2]], x: i64) -> bool {
    if x < 0 {
        return false;
    }
    let i = row.partition_point(|r| (r[1] as i64) <= x);
    i < row.len() && row[i][0] as i64 <= x
}

/// Lattice points where the region's boundary turns: the points whose four
/// cells are set one or three times, or twice on a diagonal (where two
/// corners touch: one vertex shared by both).
pub fn corner_count(runs: &RowRuns) -> u64 {
    let empty: &[[u32; 2]] = &[];
    let mut n = 0;
    let mut xs = Vec::new();
    for y in 0..=runs.height {
        let above = if y > 0 { runs.row(y - 1) } else { empty };
        let below = if y < runs.height { runs.row(y) } else { empty };
        xs.clear();
        xs.extend(above.iter().chain(below).flat_map(|r| [r[0], r[1]]));
        xs.sort_unstable();
        xs.dedup();
        for &x in &xs {
            let x = x as i64;
            let (a, b, c, d) = (
                set(above, x - 1),
                set(above, x),
                set(below, x - 1),
                set(below, x),
            );
            let k = a as u8 + b as u8 + c as u8 + d as u8;
            if k == 1 || k == 3 || (k == 2 && a == d) {
                n += 1;
            }
        }
    }
    n
}

/// The region's rectangles (in half-texel cells, `[x0, y0, x1, y1]`
/// half-open): each row's runs, stacked with identical runs below.
fn rectangles(runs: &RowRuns) -> Vec<[u32; 4]> {
    let mut done = Vec::new();
    // the rectangles still growing, by their run, sorted
    let mut open: Vec<[u32; 4]> = Vec::new();
    let mut next = Vec::new();
    for y in 0..runs.height as u32 {
        next.clear();
        let mut i = 0;
        for &[x0, x1] in runs.row(y as usize) {
            while i < open.len() && open[i][0] < x0 {
                done.push(open[i]);
                i += 1;
            }
            if i < open.len() && open[i][0] == x0 && open[i][2] == x1 {
                let mut r = open[i];
                r[3] = y + 1;
                next.push(r);
                i += 1;
            } else {
                next.push([x0, y, x1, y + 1]);
            }
        }
        done.extend_from_slice(&open[i..]);
        std::mem::swap(&mut open, &mut next);
    }
    done.extend(open);
    done
}

/// Appends a rectangle's 4 corners (texels) and its 2 triangles, clockwise
/// on screen (y down).
fn push_rect(r: [u32; 4], positions: &mut Vec<f32>, indices: &mut Vec<u32>) {
    let n = (positions.len() / 2) as u32;
    let [x0, y0, x1, y1] = r.map(|v| v as f32 / 2.0);
    positions.extend([x0, y0, x1, y0, x1, y1, x0, y1]);
    indices.extend([n, n + 1, n + 2, n, n + 2, n + 3]);
}

/// The exact meshes of a layer of alpha `map` under `settings` (the budget
/// is ignored). The mesh's stats hold the regions' areas; its `budget` is
/// `None`.
pub fn exact_layer(map: &AlphaMap, source: &str, settings: &CutSettings) -> ExactLayer {
    exact_layer_sampled(Sampled::source(map), source, settings)
}

/// [`exact_layer`] on what the GPU samples ([`Sampled`]): a shipped
/// texture's decoded levels, the regions those of [`crate::cut`]'s stage 1.
pub fn exact_layer_sampled(sampled: Sampled, source: &str, settings: &CutSettings) -> ExactLayer {
    let map = sampled.level0();
    let size = [map.width, map.height];
    let (safe, safe_area) = safe_opaque_sampled(sampled, settings);
    let (cover, cover_area) = must_cover_sampled(sampled, settings);
    exact_runs(
        (safe, safe_area),
        (cover, cover_area),
        size,
        source,
        settings,
    )
}

/// The exact meshes of the regions `safe` and `cover` (half-texel cells of
/// a layer of `size` texels, each with its area in texels), as
/// [`exact_layer`]: two triangles a rectangle, four vertices a rectangle.
pub fn exact_runs(
    (safe, safe_area): (RowRuns, f64),
    (cover, cover_area): (RowRuns, f64),
    size: [u32; 2],
    source: &str,
    settings: &CutSettings,
) -> ExactLayer {
    let rest = difference(&cover, &safe);
    let mut positions = Vec::new();
    let (mut opaque, mut blended) = (Vec::new(), Vec::new());
    for r in rectangles(&safe) {
        push_rect(r, &mut positions, &mut opaque);
    }
    for r in rectangles(&rest) {
        push_rect(r, &mut positions, &mut blended);
    }
    let (w, h) = (size[0] as f32, size[1] as f32);
    let uvs = positions
        .chunks_exact(2)
        .flat_map(|p| [p[0] / w, p[1] / h])
        .collect();
    let mesh = LayerMesh {
        format: FORMAT.to_string(),
        version: VERSION,
        source: source.to_string(),
        size,
        filter: settings.filter,
        alpha: settings.alpha,
        wrap: settings.wrap,
        budget: None,
        winding: Winding::Cw,
        stats: MeshStats {
            safe_opaque_area: safe_area,
            opaque_area: safe_area,
            must_cover_area: cover_area,
            covered_area: cover_area,
            vertices: positions.len() / 2,
            opaque_triangles: opaque.len() / 3,
            blended_triangles: blended.len() / 3,
            ..MeshStats::default()
        },
        positions,
        uvs,
        opaque: TriangleList { indices: opaque },
        blended: TriangleList { indices: blended },
        region: None,
    };
    ExactLayer {
        mesh,
        opaque_vertices: corner_count(&safe),
        blended_vertices: corner_count(&rest),
    }
}

/// The exact meshes of every layer of a scene, in parallel: a layer cut on
/// the fly with its cut settings, a layer read from a mesh file with the
/// settings recorded in it (its image is decoded for that). Fails naming
/// the image when one cannot be read.
pub fn exact_layers(layers: &[Layer]) -> Result<Vec<ExactLayer>, FileError> {
    layers
        .par_iter()
        .map(|l| {
            let settings = l.cut_settings().unwrap_or(CutSettings {
                budget: 4,
                filter: l.mesh.filter,
                alpha: l.mesh.alpha,
                wrap: l.mesh.wrap,
            });
            let source = super::prepare::source_name(&l.spec.image);
            if let Some(e) = super::region::exact_region(l)? {
                return Ok(e);
            }
            match &l.alpha {
                Some(alpha) => Ok(exact_layer_sampled(
                    alpha.sampled(&settings),
                    &source,
                    &settings,
                )),
                None => match read_layer_file(&l.spec.image, &ImageLimits::default())? {
                    // a mesh file over a shipped texture: the texture's
                    // levels when it holds those the mesh was cut for
                    LayerFile::Texture(t) => match t.levels_for(settings.filter.mip_levels) {
                        Ok(levels) => {
                            let sampled = Sampled {
                                source: None,
                                shipped: levels,
                            };
                            Ok(exact_layer_sampled(sampled, &source, &settings))
                        }
                        Err(_) => Ok(exact_layer(
                            &LayerFile::Texture(t).into_layer().alpha,
                            &source,
                            &settings,
                        )),
                    },
                    file => Ok(exact_layer(&file.into_layer().alpha, &source, &settings)),
                },
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mask::Mask;
    use crate::test_rng::Lcg;

    fn runs_of(m: &Mask) -> RowRuns {
        m.row_runs()
    }

    /// The rectangles tile the region: every set cell in exactly one, no
    /// unset cell in any.
    #[test]
    fn rectangles_tile_random_regions() {
        let mut rng = Lcg(7);
        for _ in 0..200 {
            let (w, h) = (1 + rng.below(12) as usize, 1 + rng.below(12) as usize);
            let m = rng.mask(w, h, |_, r| r < 66);
            let mut hit = vec![0u8; w * h];
            for [x0, y0, x1, y1] in rectangles(&runs_of(&m)) {
                for y in y0..y1 {
                    for x in x0..x1 {
                        assert!(m.get(x as usize, y as usize));
                        hit[y as usize * w + x as usize] += 1;
                    }
                }
            }
            for y in 0..h {
                for x in 0..w {
                    assert_eq!(hit[y * w + x], m.get(x, y) as u8);
                }
            }
        }
    }

    /// The difference of runs is the difference of cells.
    #[test]
    fn difference_is_cellwise() {
        let mut rng = Lcg(11);
        for _ in 0..200 {
            let (w, h) = (1 + rng.below(14) as usize, 1 + rng.below(6) as usize);
            let a = rng.mask(w, h, |_, r| r < 66);
            let b = rng.mask(w, h, |_, r| r < 50);
            let d = difference(&runs_of(&a), &runs_of(&b)).to_mask();
            for y in 0..h {
                for x in 0..w {
                    assert_eq!(d.get(x, y), a.get(x, y) && !b.get(x, y), "{x} {y}");
                }
            }
        }
    }

    /// Corners by hand: a rectangle has 4; an L-shape 6 (a rectilinear
    /// polygon has 4 more convex corners than reflex ones, classical
    /// geometry); a rectangle with a rectangular hole 8; two cells touching
    /// at a corner share that point, 7.
    #[test]
    fn corners_of_hand_made_regions() {
        let mask = |w: usize, h: usize, cells: &[(usize, usize)]| {
            let mut m = Mask::new(w, h, false);
            for &(x, y) in cells {
                m.set(x, y, true);
            }
            m.row_runs()
        };
        assert_eq!(corner_count(&Mask::new(5, 3, true).row_runs()), 4);
        assert_eq!(corner_count(&mask(3, 3, &[(0, 0), (0, 1), (1, 1)])), 6);
        let mut ring = Mask::new(4, 4, true);
        ring.set(1, 1, false);
        ring.set(2, 1, false);
        assert_eq!(corner_count(&ring.row_runs()), 8);
        assert_eq!(corner_count(&mask(2, 2, &[(0, 0), (1, 1)])), 7);
        assert_eq!(corner_count(&Mask::new(4, 4, false).row_runs()), 0);
    }
}
