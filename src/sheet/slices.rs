//! Nine-slice panels: a region drawn stretched, its corners unscaled, its
//! edges stretched along one axis and its centre along both.
//!
//! Stretching moves each slice by its own affine map, so a triangle that
//! lies within one slice samples, at any panel size, exactly the texture
//! points it samples unstretched (barycentric coordinates survive an
//! affine map); a triangle across a slice line would bend. So each of the
//! nine pieces is cut on its own (the whole sheet's regions clipped to the
//! piece), under budgets that share the region's budget, and the pieces'
//! meshes are joined into one vertex array (a vertex on a slice line that
//! two pieces share counts once). Every vertex records its anchor,
//! `slice_positions`: [column, row, dx, dy], the slice and the offset in
//! texels inside it, so an engine places it at any panel size.

use super::regions::Rect;
use super::Placement;
use super::RegionError;
use crate::check::check_region_mesh;
use crate::mesh::{LayerMesh, MeshStats, TriangleList};
use crate::outline::Point;
use crate::triangulate::Triangulation;
use crate::vertex_order::order_vertices;
use std::collections::HashMap;

/// Smallest budget a piece with something to cover is given.
const PIECE_MIN: usize = 4;

/// The slice lines along one axis: [0, inset_lo, size - inset_hi, size].
pub fn slice_lines(size: u32, lo: u32, hi: u32) -> [u32; 4] {
    [0, lo, size - hi, size]
}

/// The anchor of a coordinate along one axis: (slice, offset inside it),
/// the last slice whose start is at or before `at` (a coordinate on a line
/// belongs to the slice after it, except the far edge).
pub fn anchor(lines: &[u32; 4], at: f32) -> (usize, f32) {
    let k = (0..3).rev().find(|&k| lines[k] as f32 <= at).unwrap_or(0);
    (k, at - lines[k] as f32)
}

/// Cuts a nine-slice region `rect` with insets [left, top, right, bottom]:
/// the joined mesh (checked with its slices) and notes.
pub fn cut_sliced(
    place: &Placement,
    rect: Rect,
    [l, t, r, b]: [u32; 4],
) -> Result<(LayerMesh, Vec<String>), RegionError> {
    let cols = slice_lines(rect.w, l, r);
    let rows = slice_lines(rect.h, t, b);
    let mut pieces = Vec::new();
    for row in 0..3 {
        for col in 0..3 {
            let (x0, x1, y0, y1) = (cols[col], cols[col + 1], rows[row], rows[row + 1]);
            if x1 > x0 && y1 > y0 {
                pieces.push(Rect {
                    x: rect.x + x0,
                    y: rect.y + y0,
                    w: x1 - x0,
                    h: y1 - y0,
                });
            }
        }
    }
    let budget = place.settings.budget;
    // Every piece at the whole budget first: when the joined mesh fits, done.
    // Otherwise every piece starts at the least budget, and the budget is
    // spent greedily: each step raises the one piece whose next budget
    // gains most (opaque area minus covered area, the fitter's own measure)
    // per vertex it adds to the joined mesh, while the joined mesh fits.
    let mut cache: HashMap<(usize, usize), (LayerMesh, Vec<String>)> = HashMap::new();
    let mut cut_at = |k: usize, b: usize| -> Result<(LayerMesh, Vec<String>), RegionError> {
        if let Some(c) = cache.get(&(k, b)) {
            return Ok(c.clone());
        }
        let out = place.cut(&[pieces[k]], b)?;
        cache.insert((k, b), (out.mesh.clone(), out.notes.clone()));
        Ok((out.mesh, out.notes))
    };
    let score = |m: &LayerMesh| m.stats.opaque_area - m.stats.covered_area;
    let assemble = |cuts: &[(LayerMesh, Vec<String>)]| {
        let meshes: Vec<LayerMesh> = cuts.iter().map(|c| c.0.clone()).collect();
        join(place, rect, [l, t, r, b], &pieces, &meshes)
    };
    let mut budgets = vec![budget; pieces.len()];
    let mut cuts = (0..pieces.len())
        .map(|k| cut_at(k, budget))
        .collect::<Result<Vec<_>, RegionError>>()?;
    let mut mesh = assemble(&cuts);
    if mesh.vertex_count() > budget {
        budgets = vec![PIECE_MIN; pieces.len()];
        cuts = (0..pieces.len())
            .map(|k| cut_at(k, PIECE_MIN))
            .collect::<Result<Vec<_>, RegionError>>()?;
        mesh = assemble(&cuts);
        if mesh.vertex_count() > budget {
            return Err(RegionError::SlicesOverBudget {
                pieces: pieces.len(),
                needed: mesh.vertex_count(),
                per_piece: PIECE_MIN,
                budget,
            });
        }
        loop {
            let mut best: Option<(f64, usize, usize, LayerMesh)> = None;
            for k in 0..pieces.len() {
                // the next budget that changes this piece's cut
                for step in 1..=4 {
                    let nb = budgets[k] + step;
                    if nb > budget {
                        break;
                    }
                    let c = cut_at(k, nb)?;
                    if c.0.vertex_count() == cuts[k].0.vertex_count()
                        && score(&c.0) <= score(&cuts[k].0)
                    {
                        continue;
                    }
                    let mut trial = cuts.clone();
                    trial[k] = c.clone();
                    let joined = assemble(&trial);
                    if joined.vertex_count() > budget {
                        break;
                    }
                    let gain = score(&c.0) - score(&cuts[k].0);
                    let added = joined
                        .vertex_count()
                        .saturating_sub(mesh.vertex_count())
                        .max(1);
                    let rate = gain / added as f64;
                    if gain > 0.0 && best.as_ref().is_none_or(|b| rate > b.0) {
                        best = Some((rate, k, nb, joined));
                    }
                    break;
                }
            }
            let Some((_, k, nb, joined)) = best else {
                break;
            };
            budgets[k] = nb;
            cuts[k] = cut_at(k, nb)?;
            mesh = joined;
        }
    }
    let notes: Vec<String> = cuts
        .iter()
        .flat_map(|c| c.1.clone())
        .filter(|n| !n.starts_with("fully transparent"))
        .collect();
    let report =
        check_region_mesh(&mesh, place.sheet, None).map_err(|e| RegionError::FailsCheck {
            what: "joined nine-slice mesh",
            why: e.to_string(),
        })?;
    if !report.holds() {
        return Err(RegionError::FailsCheck {
            what: "joined nine-slice mesh",
            why: report.violations().join("; "),
        });
    }
    Ok((mesh, notes))
}

/// Joins the pieces' meshes (each local to its piece, `pieces[i]` in sheet
/// texels) into one mesh local to `rect`, vertices shared where they meet,
/// with its `region` key, slices and anchors.
fn join(
    place: &Placement,
    rect: Rect,
    insets: [u32; 4],
    pieces: &[Rect],
    cuts: &[LayerMesh],
) -> LayerMesh {
    let mut index: HashMap<Point, u32> = HashMap::new();
    let mut t = Triangulation::default();
    let mut stats = MeshStats::default();
    for (p, m) in pieces.iter().zip(cuts) {
        let (dx, dy) = (2 * (p.x - rect.x) as i64, 2 * (p.y - rect.y) as i64);
        let ids: Vec<u32> = m
            .positions
            .chunks(2)
            .map(|q| {
                // positions are multiples of half a texel: exact in f32
                let pt = [(q[0] * 2.0) as i64 + dx, (q[1] * 2.0) as i64 + dy];
                *index.entry(pt).or_insert_with(|| {
                    t.positions.push(pt);
                    t.positions.len() as u32 - 1
                })
            })
            .collect();
        let tris = |l: &TriangleList| -> Vec<[u32; 3]> {
            l.indices
                .chunks(3)
                .map(|c| [ids[c[0] as usize], ids[c[1] as usize], ids[c[2] as usize]])
                .collect()
        };
        t.opaque.extend(tris(&m.opaque));
        t.blended.extend(tris(&m.blended));
        let s = &m.stats;
        stats.safe_opaque_area += s.safe_opaque_area;
        stats.opaque_area += s.opaque_area;
        stats.must_cover_area += s.must_cover_area;
        stats.covered_area += s.covered_area;
        stats.opaque_outline_vertices += s.opaque_outline_vertices;
        stats.cover_outline_vertices += s.cover_outline_vertices;
        stats.opaque_texels += s.opaque_texels;
        stats.partial_texels += s.partial_texels;
        stats.transparent_texels += s.transparent_texels;
        stats.interior_edge_length_unflipped += s.interior_edge_length_unflipped;
        stats.interior_edge_length += s.interior_edge_length;
    }
    order_vertices(&mut t);
    stats.vertices = t.positions.len();
    stats.opaque_triangles = t.opaque.len();
    stats.blended_triangles = t.blended.len();
    let first = &cuts[0];
    let positions: Vec<f32> = t
        .positions
        .iter()
        .flat_map(|p| [p[0] as f32 / 2.0, p[1] as f32 / 2.0])
        .collect();
    let flat = |tris: &[[u32; 3]]| TriangleList {
        indices: tris.iter().flatten().copied().collect(),
    };
    let mut mesh = LayerMesh {
        format: first.format.clone(),
        version: first.version,
        source: first.source.clone(),
        size: [rect.w, rect.h],
        filter: first.filter,
        alpha: first.alpha,
        wrap: first.wrap,
        budget: Some(place.settings.budget),
        winding: first.winding,
        uvs: Vec::new(),
        opaque: flat(&t.opaque),
        blended: flat(&t.blended),
        positions,
        stats,
        region: None,
    };
    let cols = slice_lines(rect.w, insets[0], insets[2]);
    let rows = slice_lines(rect.h, insets[1], insets[3]);
    let anchors = mesh
        .positions
        .chunks(2)
        .map(|p| {
            let (c, dx) = anchor(&cols, p[0]);
            let (r, dy) = anchor(&rows, p[1]);
            [c as f32, r as f32, dx, dy]
        })
        .collect();
    let mut key = place.region_key(&[rect]);
    key.slices = Some(insets);
    key.slice_positions = Some(anchors);
    place.locate(&mut mesh, key);
    mesh
}
