//! The contract checker, independent of the builder: it recomputes the
//! safe-opaque region S and the must-cover region C from the alpha channel
//! and the definitions (see [`regions_for_check`]) and measures every
//! violation of a mesh as an area, by polygon clipping (not by sampling).
//!
//! [`check_mesh_sampled`] and [`check_mesh_per_level`] check against a
//! shipped texture's decoded levels too, their regions derived from the
//! sampling rule in `check/levels.rs`.
//!
//! The contract, for a [`LayerMesh`] cut from an image W x H texels:
//! * the opaque mesh lies inside S (which lies inside the image);
//! * opaque + blended cover C; the blended mesh lies inside the image;
//! * the two meshes do not overlap, nor do triangles within one mesh;
//! * every triangle has the file's winding and a non-zero area.
//!
//! **Tolerance.** Areas are computed in f64 from the f32 positions; an area
//! of at most [`AREA_TOLERANCE`] = 1e-6 texel² is float rounding and counts
//! as zero. A triangle is degenerate when its doubled signed area, computed
//! in f64 from the f32 coordinates, is exactly 0 (for practical coordinates
//! the sign of that cross product is exact); degenerate triangles add
//! nothing to any area and are not counted as wrongly wound.
//!
//! **How areas are combined.** Triangles are split into disjoint convex
//! pieces (each triangle minus the earlier triangles it overlaps; opaque
//! triangles come first and only subtract opaque ones), so `opaque_area`,
//! `covered_area`, `opaque_outside_safe` and `uncovered` are exact for the
//! union even when triangles overlap. If one triangle would split into more
//! than [`MAX_PIECES`] pieces the subtraction stops for it and `uncovered`
//! becomes a lower bound — this needs massive overlap, which is reported.
//! Overlap areas are sums over triangle pairs (pairs overlapping by at most
//! 1e-12 texel², e.g. along a shared edge, add nothing); `blended_outside_image`
//! is a sum over blended triangles.

mod geom;
mod levels;
mod regions;
mod runs;
mod sheet;
#[cfg(test)]
mod tests;

pub use regions::regions_for_check;
pub use sheet::{check_region_mesh, check_region_mesh_sampled, RegionReport};

use crate::alpha::AlphaMap;
use crate::mesh::{LayerMesh, Winding, FORMAT, VERSION};
use crate::settings::{AlphaThresholds, Filter, Wrap};
use geom::Pt;

/// Areas (texel²) at or below this are float rounding and count as zero.
pub const AREA_TOLERANCE: f64 = 1e-6;
/// Most convex pieces one triangle is split into while resolving overlaps.
pub const MAX_PIECES: usize = 10_000;
/// Pieces and overlaps below this (texel²) are dropped as clipping noise.
const NOISE: f64 = 1e-12;

/// What [`check_mesh`] measured. Areas in texels.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ContractReport {
    /// Area of the opaque mesh outside S (includes outside the image).
    pub opaque_outside_safe: f64,
    /// Area of C covered by neither mesh.
    pub uncovered: f64,
    /// Area of the blended mesh outside [0, W] x [0, H].
    pub blended_outside_image: f64,
    /// Area covered by both an opaque and a blended triangle (drawn twice).
    pub overlap_opaque_blended: f64,
    /// Area covered by two opaque triangles.
    pub overlap_within_opaque: f64,
    /// Area covered by two blended triangles (blended twice: visibly wrong).
    pub overlap_within_blended: f64,
    /// Triangles with zero area.
    pub degenerate_triangles: usize,
    /// Triangles whose winding differs from the file's.
    pub wrong_winding: usize,
    /// Area of the safe-opaque region S, texels.
    pub safe_area: f64,
    /// Area of the must-cover region C, texels.
    pub must_cover_area: f64,
    /// Area of the opaque mesh, texels.
    pub opaque_area: f64,
    /// Area covered by the two meshes together, texels.
    pub covered_area: f64,
}

/// Formats an area with at most 6 decimals, trailing zeros trimmed.
fn texels(a: f64) -> String {
    let s = format!("{a:.6}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

impl ContractReport {
    /// Area of the must-cover region the meshes cover, texels.
    pub fn must_cover_covered(&self) -> f64 {
        self.must_cover_area - self.uncovered
    }

    /// Area the meshes cover beyond the must-cover region, texels.
    pub fn beyond_must_cover(&self) -> f64 {
        self.covered_area - self.must_cover_covered()
    }

    /// True when the contract holds (areas within [`AREA_TOLERANCE`]).
    pub fn holds(&self) -> bool {
        self.violations().is_empty()
    }

    /// One human-readable line per violated clause.
    pub fn violations(&self) -> Vec<String> {
        let areas = [
            (
                self.opaque_outside_safe,
                "opaque mesh covers",
                " outside the safe-opaque region",
            ),
            (
                self.uncovered,
                "the must-cover region has",
                " covered by neither mesh",
            ),
            (
                self.blended_outside_image,
                "blended mesh covers",
                " outside the image rectangle",
            ),
            (
                self.overlap_opaque_blended,
                "the opaque and blended meshes overlap by",
                "",
            ),
            (
                self.overlap_within_opaque,
                "opaque triangles overlap each other by",
                "",
            ),
            (
                self.overlap_within_blended,
                "blended triangles overlap each other by",
                "",
            ),
        ];
        let mut v: Vec<String> = areas
            .iter()
            .filter(|(a, _, _)| *a > AREA_TOLERANCE)
            .map(|&(a, before, after)| format!("{before} {} texels{after}", texels(a)))
            .collect();
        if self.degenerate_triangles > 0 {
            v.push(format!(
                "{} triangle(s) have zero area",
                self.degenerate_triangles
            ));
        }
        if self.wrong_winding > 0 {
            v.push(format!(
                "{} triangle(s) are wound against the file's winding",
                self.wrong_winding
            ));
        }
        v
    }
}

/// A mesh file that cannot be checked at all. Its message is the problem,
/// then a line `  hint: ...` saying what to do (the layout of
/// [`crate::error::FileError`], so the caller only prefixes the file).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CheckError {
    /// The `format` field is not [`FORMAT`].
    #[error("the file's format is {found:?}, not {FORMAT:?}: it is not a layer mesh file\n  hint: pass a .mesh.json file written by `underdraw cut`")]
    WrongFormat {
        /// The format the file gives.
        found: String,
    },
    /// The `version` field is not [`VERSION`].
    #[error("the file is format version {found}, but this underdraw reads version {VERSION}\n  hint: cut the layer again with this underdraw")]
    WrongVersion {
        /// The version the file gives.
        found: u32,
    },
    /// The mesh's `size` is not the image's.
    #[error("the mesh is for a {mesh_w}x{mesh_h} image but the image is {image_w}x{image_h}\n  hint: check the mesh against the image it was cut from, or cut this image again")]
    SizeMismatch {
        /// Width the mesh was cut for.
        mesh_w: u32,
        /// Height the mesh was cut for.
        mesh_h: u32,
        /// Width of the image given.
        image_w: u32,
        /// Height of the image given.
        image_h: u32,
    },
    /// The alpha map's buffer does not hold width x height values.
    #[error("the alpha map holds {len} values but is {width}x{height}\n  hint: build it with AlphaMap::from_raw or from_image")]
    BadAlphaMap {
        /// Values in the buffer.
        len: usize,
        /// Width claimed.
        width: u32,
        /// Height claimed.
        height: u32,
    },
    /// `positions` has an odd length.
    #[error("positions holds {len} numbers, an odd count, but it must be x, y pairs\n  hint: fix the mesh file or cut the layer again")]
    OddPositions {
        /// Numbers in `positions`.
        len: usize,
    },
    /// `uvs` and `positions` differ in length.
    #[error("uvs holds {uvs} numbers but positions holds {positions}: there must be one u, v pair per vertex\n  hint: fix the mesh file or cut the layer again")]
    UvLengthMismatch {
        /// Numbers in `positions`.
        positions: usize,
        /// Numbers in `uvs`.
        uvs: usize,
    },
    /// An index list's length is not a multiple of 3.
    #[error("the {list} index list holds {len} indices, not a multiple of 3 (3 per triangle)\n  hint: fix the mesh file or cut the layer again")]
    IndicesNotTriangles {
        /// `opaque` or `blended`.
        list: &'static str,
        /// Indices in the list.
        len: usize,
    },
    /// An index names no vertex.
    #[error("{list} triangle {triangle} uses vertex {index} but there are only {vertices} vertices\n  hint: fix the index or cut the layer again")]
    IndexOutOfRange {
        /// `opaque` or `blended`.
        list: &'static str,
        /// The triangle's place in its list.
        triangle: usize,
        /// The index.
        index: u32,
        /// Vertices in the mesh.
        vertices: usize,
    },
    /// The shipped texture's levels do not fit the layer.
    #[error("{why}\n  hint: check the mesh against the texture made from its layer, with mip levels of sizes W / 2^l")]
    BadLevels {
        /// What does not fit.
        why: String,
    },
    /// A region mesh's `region` does not fit the sheet (or is missing).
    #[error("{why}\n  hint: check a region mesh against the sheet it was cut from (with {} {} for a mesh without a \"region\" key), or cut the sheet again", crate::error::Setting::Region.given("NAME"), crate::error::Setting::Regions.given("FILE"))]
    BadRegion {
        /// What does not fit.
        why: String,
    },
    /// A position is NaN or infinite.
    #[error("vertex {vertex} has a non-finite position ({x}, {y}), but positions must be finite texel coordinates\n  hint: fix the mesh file or cut the layer again")]
    NonFinitePosition {
        /// The vertex.
        vertex: usize,
        /// Its x.
        x: f32,
        /// Its y.
        y: f32,
    },
}

fn validate(mesh: &LayerMesh, alpha: &AlphaMap) -> Result<(), CheckError> {
    if mesh.format != FORMAT {
        return Err(CheckError::WrongFormat {
            found: mesh.format.clone(),
        });
    }
    if mesh.version != VERSION {
        return Err(CheckError::WrongVersion {
            found: mesh.version,
        });
    }
    if alpha.alpha.len() != alpha.width as usize * alpha.height as usize {
        return Err(CheckError::BadAlphaMap {
            len: alpha.alpha.len(),
            width: alpha.width,
            height: alpha.height,
        });
    }
    if mesh.size != [alpha.width, alpha.height] {
        return Err(CheckError::SizeMismatch {
            mesh_w: mesh.size[0],
            mesh_h: mesh.size[1],
            image_w: alpha.width,
            image_h: alpha.height,
        });
    }
    validate_structure(mesh)
}

/// The checks of [`validate`] that do not depend on the image: positions,
/// texture coordinates, index lists.
fn validate_structure(mesh: &LayerMesh) -> Result<(), CheckError> {
    if !mesh.positions.len().is_multiple_of(2) {
        return Err(CheckError::OddPositions {
            len: mesh.positions.len(),
        });
    }
    if mesh.uvs.len() != mesh.positions.len() {
        return Err(CheckError::UvLengthMismatch {
            positions: mesh.positions.len(),
            uvs: mesh.uvs.len(),
        });
    }
    for (vertex, p) in mesh.positions.chunks(2).enumerate() {
        if !p[0].is_finite() || !p[1].is_finite() {
            return Err(CheckError::NonFinitePosition {
                vertex,
                x: p[0],
                y: p[1],
            });
        }
    }
    let vertices = mesh.vertex_count();
    for (list, tl) in [("opaque", &mesh.opaque), ("blended", &mesh.blended)] {
        if !tl.indices.len().is_multiple_of(3) {
            return Err(CheckError::IndicesNotTriangles {
                list,
                len: tl.indices.len(),
            });
        }
        if let Some(k) = tl.indices.iter().position(|&i| i as usize >= vertices) {
            return Err(CheckError::IndexOutOfRange {
                list,
                triangle: k / 3,
                index: tl.indices[k],
                vertices,
            });
        }
    }
    Ok(())
}

/// A non-degenerate triangle, positively oriented.
struct Tri {
    p: [Pt; 3],
    opaque: bool,
    bbox: [f64; 4],
}

/// Checks `mesh` against the contract for the layer whose alpha is `alpha`.
pub fn check_mesh(mesh: &LayerMesh, alpha: &AlphaMap) -> Result<ContractReport, CheckError> {
    check_mesh_sampled(mesh, Some(alpha), &[])
}

/// Checks `mesh` against what the GPU samples: the source's alpha (`source`,
/// its mip levels 0..=`mip_levels` by the block rules) and/or the decoded
/// levels of the texture that ships (`shipped`, level 0 first, every one
/// used: pass levels 0..=`mip_levels`). The regions hold for all of them:
/// S is the intersection, C the union. Level 0's size must be the mesh's;
/// each shipped level's size must divide it.
pub fn check_mesh_sampled(
    mesh: &LayerMesh,
    source: Option<&AlphaMap>,
    shipped: &[AlphaMap],
) -> Result<ContractReport, CheckError> {
    let level0 = validate_sampled(mesh, source, shipped)?;
    let size = (level0.width, level0.height);
    let t = mesh.alpha;
    let mut regions = source.map(|a| regions::region_runs(a, mesh.filter, t, mesh.wrap));
    for level in shipped {
        let (s, c) = levels::level_runs(level, size, mesh.filter.mode, t, mesh.wrap);
        regions = Some(match regions {
            None => (s, c),
            Some((s0, c0)) => (
                levels::combine(&s0, &s, true),
                levels::combine(&c0, &c, false),
            ),
        });
    }
    let (safe, cover) = regions.expect("a source or a shipped level");
    Ok(measure(mesh, size, &safe, &cover))
}

/// [`regions_for_check`] over what the GPU samples: the source's block
/// levels (when given) and the shipped levels, S intersected and C united
/// over all of them (the regions [`check_mesh_sampled`] uses), as half-grid
/// masks `2W` x `2H`. The levels must fit as [`check_mesh_sampled`] says.
pub fn regions_for_check_sampled(
    source: Option<&AlphaMap>,
    shipped: &[AlphaMap],
    filter: Filter,
    t: AlphaThresholds,
    wrap: Wrap,
) -> (Vec<bool>, Vec<bool>, usize, usize) {
    let level0 = source
        .or(shipped.first())
        .expect("a source or a shipped level");
    let size = (level0.width, level0.height);
    let (safe, cover) = sampled_runs(source, shipped, size, (filter, t, wrap));
    (
        safe.to_mask(),
        cover.to_mask(),
        2 * size.0 as usize,
        2 * size.1 as usize,
    )
}

/// Checks `mesh` against each shipped level alone (level 0 first): the
/// violation areas per level.
pub fn check_mesh_per_level(
    mesh: &LayerMesh,
    shipped: &[AlphaMap],
) -> Result<Vec<ContractReport>, CheckError> {
    let level0 = validate_sampled(mesh, None, shipped)?;
    let size = (level0.width, level0.height);
    Ok(shipped
        .iter()
        .map(|level| {
            let (s, c) = levels::level_runs(level, size, mesh.filter.mode, mesh.alpha, mesh.wrap);
            measure(mesh, size, &s, &c)
        })
        .collect())
}

/// S and C over the source's block levels and the shipped levels, for a
/// filter, thresholds and addressing.
fn sampled_runs(
    source: Option<&AlphaMap>,
    shipped: &[AlphaMap],
    size: (u32, u32),
    (filter, t, wrap): (Filter, AlphaThresholds, Wrap),
) -> (runs::CellRuns, runs::CellRuns) {
    let mut regions = source.map(|a| regions::region_runs(a, filter, t, wrap));
    for level in shipped {
        let (s, c) = levels::level_runs(level, size, filter.mode, t, wrap);
        regions = Some(match regions {
            None => (s, c),
            Some((s0, c0)) => (
                levels::combine(&s0, &s, true),
                levels::combine(&c0, &c, false),
            ),
        });
    }
    regions.expect("a source or a shipped level")
}

/// Validates the mesh against level 0 (the source, or else the first shipped
/// level) and the shipped levels' sizes; returns level 0.
fn validate_sampled<'a>(
    mesh: &LayerMesh,
    source: Option<&'a AlphaMap>,
    shipped: &'a [AlphaMap],
) -> Result<&'a AlphaMap, CheckError> {
    let Some(level0) = source.or(shipped.first()) else {
        return Err(CheckError::BadLevels {
            why: "neither an image nor a texture level was given".into(),
        });
    };
    validate(mesh, level0)?;
    for (l, m) in shipped.iter().enumerate() {
        if m.alpha.len() != m.width as usize * m.height as usize {
            return Err(CheckError::BadAlphaMap {
                len: m.alpha.len(),
                width: m.width,
                height: m.height,
            });
        }
        let fits = m.width > 0
            && m.height > 0
            && level0.width % m.width == 0
            && level0.height % m.height == 0;
        if !fits || (l == 0 && (m.width, m.height) != (level0.width, level0.height)) {
            return Err(CheckError::BadLevels {
                why: format!(
                    "texture level {l} is {} x {} texels, which does not divide the layer's {} x {}",
                    m.width, m.height, level0.width, level0.height
                ),
            });
        }
    }
    Ok(level0)
}

/// The contract's areas for `mesh` against the regions `safe` and `cover`
/// of a layer of `size` texels (the mesh already validated).
fn measure(
    mesh: &LayerMesh,
    size: (u32, u32),
    safe: &runs::CellRuns,
    cover: &runs::CellRuns,
) -> ContractReport {
    let mut rep = ContractReport::default();
    let (w, h) = (size.0 as f64, size.1 as f64);

    // Triangles: degenerate and winding counts; opaque first, then blended.
    let pos = |i: u32| {
        let [x, y] = mesh.position(i);
        [x as f64, y as f64]
    };
    let mut tris = Vec::new();
    for (opaque, tl) in [(true, &mesh.opaque), (false, &mesh.blended)] {
        for t in tl.indices.chunks(3) {
            let (a, b, c) = (pos(t[0]), pos(t[1]), pos(t[2]));
            let twice = (b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1]);
            if twice == 0.0 {
                rep.degenerate_triangles += 1;
                continue;
            }
            // "cw" = positive shoelace area with y down.
            if (twice > 0.0) != (mesh.winding == Winding::Cw) {
                rep.wrong_winding += 1;
            }
            let p = if twice > 0.0 { [a, b, c] } else { [a, c, b] };
            tris.push(Tri {
                p,
                opaque,
                bbox: geom::bbox(&p),
            });
        }
    }

    // Pairwise overlaps, bounding boxes swept in x order.
    let mut earlier: Vec<Vec<usize>> = vec![Vec::new(); tris.len()];
    let mut order: Vec<usize> = (0..tris.len()).collect();
    order.sort_by(|&i, &j| tris[i].bbox[0].total_cmp(&tris[j].bbox[0]));
    for (k, &i) in order.iter().enumerate() {
        for &j in &order[k + 1..] {
            if tris[j].bbox[0] >= tris[i].bbox[2] {
                break;
            }
            if !geom::boxes_meet(&tris[i].bbox, &tris[j].bbox) {
                continue;
            }
            let a = geom::area(&geom::intersect(&tris[i].p, &tris[j].p));
            if a <= NOISE {
                continue;
            }
            match (tris[i].opaque, tris[j].opaque) {
                (true, true) => rep.overlap_within_opaque += a,
                (false, false) => rep.overlap_within_blended += a,
                _ => rep.overlap_opaque_blended += a,
            }
            earlier[i.max(j)].push(i.min(j));
        }
    }

    // Regions, as runs of half-grid cells.
    rep.safe_area = safe.cell_count() as f64 * 0.25;
    rep.must_cover_area = cover.cell_count() as f64 * 0.25;
    // Mask rows (none for an empty image, even when the grid height is not 0).
    let rows = safe.height();
    let mut covered_in_row = vec![0.0f64; rows];
    // Opaque area above / below the mask rows is outside S.
    let mask_h = rows as f64 * 0.5;

    for (i, t) in tris.iter().enumerate() {
        if !t.opaque {
            rep.blended_outside_image += geom::area_outside_rect(&t.p, w, h);
        }
        // The part of t not in earlier triangles, as disjoint convex pieces.
        let mut pieces = vec![t.p.to_vec()];
        for &j in &earlier[i] {
            if !t.opaque || tris[j].opaque {
                let next: Vec<Vec<Pt>> = pieces
                    .iter()
                    .flat_map(|p| geom::subtract(p, &tris[j].p, NOISE))
                    .collect();
                if next.len() > MAX_PIECES {
                    break;
                }
                pieces = next;
            }
        }
        for piece in &pieces {
            let a = geom::area(piece);
            rep.covered_area += a;
            if t.opaque {
                rep.opaque_area += a;
                rep.opaque_outside_safe += geom::area(&geom::clip_axis(piece, 1, 0.0, false))
                    + geom::area(&geom::clip_axis(piece, 1, mask_h, true));
            }
            geom::for_rows(piece, rows, |row, strip, strip_area| {
                if t.opaque {
                    rep.opaque_outside_safe +=
                        strip_area - geom::area_in_runs(strip, strip_area, safe.row(row));
                }
                covered_in_row[row] += geom::area_in_runs(strip, strip_area, cover.row(row));
            });
        }
    }
    // Per row, C's area is exact (a multiple of 0.25), so the difference only
    // carries the row's rounding, not the whole image's.
    let uncovered: f64 = covered_in_row
        .iter()
        .enumerate()
        .map(|(row, covered)| {
            let runs = cover.row(row);
            runs.iter().map(|r| geom::run_width(*r)).sum::<f64>() - covered
        })
        .sum();
    rep.uncovered = uncovered.max(0.0);
    rep.opaque_outside_safe = rep.opaque_outside_safe.max(0.0);
    rep
}
