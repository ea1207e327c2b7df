//! The contract for a region of a sprite sheet, with the checker's own
//! code: S and C are computed on the WHOLE sheet (a filtered sample near the
//! region's edge reads the neighbours, the padding or the sheet's edge),
//! then clipped to the region's rectangle (for an animation: S intersected
//! over the frames, C united), and the mesh, whose positions are local to
//! the rectangle, is measured against them as a layer of the rectangle's
//! size. Besides: the texture coordinates must address the sheet at the
//! region (and each frame by its offset), and a nine-slice panel's
//! triangles must each lie within one slice, with anchors that give back
//! their positions.
//!
//! A nine-slice panel drawn stretched (a mesh whose `size` is not the
//! region's, as `scene --export` writes a panel given a `size`) is checked
//! by undoing the stretch exactly: each vertex's `slice_positions` anchor
//! gives its place in the region, where the contract is checked as above,
//! and its stretched position must be where that anchor lands at the drawn
//! size (corners unscaled, the middle slices scaled). Since no triangle
//! crosses a slice line and each slice is moved by an affine map of its
//! own, the stretched panel is that map's image of the checked geometry.

use super::regions::region_runs;
use super::runs::{intersect_into, union_into, CellRuns};
use super::{measure, validate_structure, CheckError, ContractReport};
use crate::alpha::AlphaMap;
use crate::mesh::{LayerMesh, MeshRegion, FORMAT, VERSION};

/// Texture coordinates farther than this from the sheet position they
/// should address count as wrong (f32 rounding of `(x + rx) / W` is far
/// below it for sheets up to 16384 texels).
pub const UV_TOLERANCE: f64 = 1e-6;

/// A stretched panel's vertex counts as misplaced when it lies farther than
/// this share of its distance from the panel's corner (at least a texel's
/// share) from where its anchor lands: f32 rounding of the stretch is far
/// below it.
pub const STRETCH_TOLERANCE: f64 = 1e-6;

/// What [`check_region_mesh`] measured.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RegionReport {
    /// The contract's areas within the region's rectangle.
    pub contract: ContractReport,
    /// For a nine-slice panel drawn stretched, the size it is drawn at
    /// (the contract is checked on the panel unstretched).
    pub stretched_to: Option<[u32; 2]>,
    /// Vertices whose texture coordinate is not (position + rect corner) /
    /// sheet size, or frame offsets that are not the frames' distances.
    pub wrong_uvs: usize,
    /// Triangles of a nine-slice panel reaching into more than one slice
    /// column or row (stretching would bend them).
    pub across_slices: usize,
    /// Vertices whose `slice_positions` anchor does not give back their
    /// position (or is missing).
    pub wrong_anchors: usize,
}

impl RegionReport {
    /// True when the contract and the region's own rules hold.
    pub fn holds(&self) -> bool {
        self.violations().is_empty()
    }
    /// One line per violated rule.
    pub fn violations(&self) -> Vec<String> {
        let mut v = self.contract.violations();
        if self.wrong_uvs > 0 {
            v.push(format!(
                "{} texture coordinate(s) or frame offsets do not address the region in the sheet",
                self.wrong_uvs
            ));
        }
        if self.across_slices > 0 {
            v.push(format!(
                "{} triangle(s) cross a slice line of the nine-slice panel",
                self.across_slices
            ));
        }
        if self.wrong_anchors > 0 {
            v.push(format!(
                "{} vertex anchor(s) in slice_positions do not give back the vertex's position",
                self.wrong_anchors
            ));
        }
        v
    }
}

/// Checks a region mesh (one with a `region` key, or `region` given for
/// one without) against its sheet's alpha.
pub fn check_region_mesh(
    mesh: &LayerMesh,
    sheet: &AlphaMap,
    region: Option<&MeshRegion>,
) -> Result<RegionReport, CheckError> {
    check_region_mesh_sampled(mesh, Some(sheet), &[], region)
}

/// [`check_region_mesh`] against what the GPU samples from the sheet: the
/// sheet's alpha (`source`, its mip levels by the block rules) and/or the
/// decoded levels of the texture that ships (`shipped`, level 0 first,
/// every one used); S intersected and C united over all of them on the
/// whole sheet (as [`super::check_mesh_sampled`] does for a layer), then
/// clipped to the region. Level 0 (the source, else the first shipped
/// level) is the sheet; each shipped level's size must divide it.
pub fn check_region_mesh_sampled(
    mesh: &LayerMesh,
    source: Option<&AlphaMap>,
    shipped: &[AlphaMap],
    region: Option<&MeshRegion>,
) -> Result<RegionReport, CheckError> {
    let Some(sheet) = source.or(shipped.first()) else {
        return Err(CheckError::BadLevels {
            why: "neither a sheet nor a texture level was given".into(),
        });
    };
    for (l, m) in shipped.iter().enumerate() {
        let fits = m.alpha.len() == m.width as usize * m.height as usize
            && m.width > 0
            && m.height > 0
            && sheet.width % m.width == 0
            && sheet.height % m.height == 0;
        if !fits || (l == 0 && (m.width, m.height) != (sheet.width, sheet.height)) {
            return Err(CheckError::BadLevels {
                why: format!(
                    "texture level {l} is {} x {} texels, which does not divide the sheet's {} x {}",
                    m.width, m.height, sheet.width, sheet.height
                ),
            });
        }
    }
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
    let Some(region) = region.or(mesh.region.as_ref()) else {
        return Err(CheckError::BadRegion {
            why: "the mesh has no \"region\" key: it was cut from a whole layer, not a region of a sheet".into(),
        });
    };
    if sheet.alpha.len() != sheet.width as usize * sheet.height as usize {
        return Err(CheckError::BadAlphaMap {
            len: sheet.alpha.len(),
            width: sheet.width,
            height: sheet.height,
        });
    }
    let (sw, sh) = (sheet.width, sheet.height);
    if region.sheet_size != [sw, sh] {
        return Err(CheckError::BadRegion {
            why: format!(
                "the mesh is for a region of a {} x {} sheet but the sheet given is {sw} x {sh}",
                region.sheet_size[0], region.sheet_size[1]
            ),
        });
    }
    let mut frames = vec![region.rect];
    if let Some(f) = &region.frames {
        if f.first() != Some(&region.rect) {
            return Err(CheckError::BadRegion {
                why: "the region's rect is not its first frame".into(),
            });
        }
        frames = f.clone();
    }
    let [_, _, w, h] = region.rect;
    for f in &frames {
        let [x, y, fw, fh] = *f;
        if fw == 0
            || fh == 0
            || x as u64 + fw as u64 > sw as u64
            || y as u64 + fh as u64 > sh as u64
        {
            return Err(CheckError::BadRegion {
                why: format!(
                    "the rectangle {f:?} is empty or reaches outside the {sw} x {sh} sheet"
                ),
            });
        }
        if (fw, fh) != (w, h) {
            return Err(CheckError::BadRegion {
                why: format!("frame {f:?} is not of the first frame's size {w} x {h}"),
            });
        }
    }
    // a panel drawn stretched: back to the region's own geometry
    let mut stretch_errors = 0;
    let unstretched;
    let mut stretched_to = None;
    let mesh = match region.slices {
        Some(slices) if mesh.size != [w, h] => {
            let (m, wrong) = unstretch(mesh, [w, h], slices, region)?;
            unstretched = m;
            stretch_errors = wrong;
            stretched_to = Some(mesh.size);
            &unstretched
        }
        _ => mesh,
    };
    if mesh.size != [w, h] {
        return Err(CheckError::SizeMismatch {
            mesh_w: mesh.size[0],
            mesh_h: mesh.size[1],
            image_w: w,
            image_h: h,
        });
    }
    validate_structure(mesh)?;

    // S and C on the whole sheet, then clipped to each frame.
    let (safe, cover) = match shipped {
        [] => region_runs(sheet, mesh.filter, mesh.alpha, mesh.wrap),
        _ => super::sampled_runs(
            source,
            shipped,
            (sw, sh),
            (mesh.filter, mesh.alpha, mesh.wrap),
        ),
    };
    let mut s: Option<CellRuns> = None;
    let mut c: Option<CellRuns> = None;
    for f in &frames {
        let (fs, fc) = (clip(&safe, *f), clip(&cover, *f));
        s = Some(match s {
            None => fs,
            Some(a) => rowwise(&a, &fs, intersect_into),
        });
        c = Some(match c {
            None => fc,
            Some(a) => rowwise(&a, &fc, union_into),
        });
    }
    let (s, c) = (s.expect("a frame"), c.expect("a frame"));
    let mut report = RegionReport {
        contract: measure(mesh, (w, h), &s, &c),
        stretched_to,
        wrong_anchors: stretch_errors,
        ..Default::default()
    };

    // Texture coordinates: the sheet at the region, frames by offsets.
    let (swf, shf) = (sw as f64, sh as f64);
    let [rx, ry, _, _] = region.rect;
    for (p, uv) in mesh.positions.chunks(2).zip(mesh.uvs.chunks(2)) {
        let u = (p[0] as f64 + rx as f64) / swf;
        let v = (p[1] as f64 + ry as f64) / shf;
        if (uv[0] as f64 - u).abs() > UV_TOLERANCE || (uv[1] as f64 - v).abs() > UV_TOLERANCE {
            report.wrong_uvs += 1;
        }
    }
    if frames.len() > 1 {
        match &region.frame_uv_offsets {
            Some(offsets) if offsets.len() == frames.len() => {
                for (o, f) in offsets.iter().zip(&frames) {
                    let du = (f[0] as f64 - rx as f64) / swf;
                    let dv = (f[1] as f64 - ry as f64) / shf;
                    if (o[0] as f64 - du).abs() > UV_TOLERANCE
                        || (o[1] as f64 - dv).abs() > UV_TOLERANCE
                    {
                        report.wrong_uvs += 1;
                    }
                }
            }
            _ => report.wrong_uvs += frames.len(),
        }
    }

    // Nine-slice: every triangle within one slice; anchors give positions.
    if let Some([l, t, r, b]) = region.slices {
        let cols = [0.0, l as f64, w as f64 - r as f64, w as f64];
        let rows = [0.0, t as f64, h as f64 - b as f64, h as f64];
        let slot = |lines: &[f64; 4], lo: f64, hi: f64| {
            (0..3).any(|k| lines[k] <= lo && hi <= lines[k + 1])
        };
        for tri in mesh
            .opaque
            .indices
            .chunks(3)
            .chain(mesh.blended.indices.chunks(3))
        {
            let ps: Vec<[f32; 2]> = tri.iter().map(|&i| mesh.position(i)).collect();
            let xs = ps.iter().map(|p| p[0] as f64);
            let ys = ps.iter().map(|p| p[1] as f64);
            let (x0, x1) = (
                xs.clone().fold(f64::MAX, f64::min),
                xs.fold(f64::MIN, f64::max),
            );
            let (y0, y1) = (
                ys.clone().fold(f64::MAX, f64::min),
                ys.fold(f64::MIN, f64::max),
            );
            if !slot(&cols, x0, x1) || !slot(&rows, y0, y1) {
                report.across_slices += 1;
            }
        }
        match &region.slice_positions {
            Some(anchors) if anchors.len() == mesh.vertex_count() => {
                for (i, a) in anchors.iter().enumerate() {
                    let p = mesh.position(i as u32);
                    let ok = |k: f32, d: f32, lines: &[f64; 4], at: f32| {
                        let k = k as usize;
                        k < 3
                            && d >= 0.0
                            && (d as f64) <= lines[k + 1] - lines[k]
                            && lines[k] + d as f64 == at as f64
                    };
                    let whole = a[0].fract() == 0.0 && a[1].fract() == 0.0;
                    if !whole || !ok(a[0], a[2], &cols, p[0]) || !ok(a[1], a[3], &rows, p[1]) {
                        report.wrong_anchors += 1;
                    }
                }
            }
            _ => report.wrong_anchors += mesh.vertex_count(),
        }
    }
    Ok(report)
}

/// A nine-slice panel mesh drawn stretched to `mesh.size`, brought back to
/// the region's own size `[w, h]`: each vertex at its anchor's place in the
/// region (slice line + offset). Also counts the vertices whose stretched
/// position is not where their anchor lands at the drawn size, or whose
/// anchor is not a slice and an offset inside it.
fn unstretch(
    mesh: &LayerMesh,
    [w, h]: [u32; 2],
    [l, t, r, b]: [u32; 4],
    region: &MeshRegion,
) -> Result<(LayerMesh, usize), CheckError> {
    let [sw, sh] = mesh.size;
    if sw < l + r || sh < t + b {
        return Err(CheckError::BadRegion {
            why: format!(
                "the panel is drawn {sw} x {sh}, smaller than its corners ({} x {})",
                l + r,
                t + b
            ),
        });
    }
    let anchors = match &region.slice_positions {
        Some(a) if a.len() == mesh.vertex_count() => a,
        _ => {
            return Err(CheckError::BadRegion {
                why: format!(
                    "the panel is drawn stretched to {sw} x {sh} but has no slice_positions for every vertex, so its stretch cannot be undone"
                ),
            })
        }
    };
    // slice lines of one axis: in the region and as drawn
    let axis = |n: u32, lo: u32, hi: u32, to: u32| {
        let own = [0.0, lo as f64, (n - hi) as f64, n as f64];
        let drawn = [0.0, lo as f64, (to - hi) as f64, to as f64];
        (own, drawn)
    };
    let (cols, dcols) = axis(w, l, r, sw);
    let (rows, drows) = axis(h, t, b, sh);
    // where offset d inside slice k lands as drawn
    let land = |own: &[f64; 4], drawn: &[f64; 4], k: usize, d: f64| {
        let (n, to) = (own[k + 1] - own[k], drawn[k + 1] - drawn[k]);
        if k == 1 && n > 0.0 {
            drawn[1] + d * to / n
        } else {
            drawn[k] + d
        }
    };
    let mut out = mesh.clone();
    out.size = [w, h];
    let mut wrong = 0;
    for (i, a) in anchors.iter().enumerate() {
        let p = mesh.position(i as u32);
        let mut fine = a[0].fract() == 0.0 && a[1].fract() == 0.0;
        let mut at = [0.0f32; 2];
        for (axis_k, (own, drawn)) in [(&cols, &dcols), (&rows, &drows)].into_iter().enumerate() {
            let (k, d) = (a[axis_k], a[2 + axis_k] as f64);
            let k = (k.max(0.0) as usize).min(2);
            fine &= d >= 0.0 && d <= own[k + 1] - own[k];
            let e = land(own, drawn, k, d);
            fine &= (p[axis_k] as f64 - e).abs() <= STRETCH_TOLERANCE * e.abs().max(1.0);
            at[axis_k] = (own[k] + d) as f32;
        }
        out.positions[2 * i] = at[0];
        out.positions[2 * i + 1] = at[1];
        if !fine {
            wrong += 1;
        }
    }
    Ok((out, wrong))
}

/// The cells of `runs` (a sheet's half-texel grid) inside `rect` (texels),
/// moved so the rectangle's top-left corner is cell (0, 0).
fn clip(runs: &CellRuns, [x, y, w, h]: [u32; 4]) -> CellRuns {
    let (x0, x1) = (2 * x, 2 * (x + w));
    let mut out = CellRuns::new(2 * w as usize);
    let mut row = Vec::new();
    for b in 2 * y as usize..2 * (y + h) as usize {
        row.clear();
        if b < runs.height() {
            for r in runs.row(b) {
                let (s, e) = (r[0].max(x0), r[1].min(x1));
                if s < e {
                    row.push([s - x0, e - x0]);
                }
            }
        }
        out.push_row(&row);
    }
    out
}

/// A row operation on runs: intersection or union into the last argument.
type RunOp = fn(&[[u32; 2]], &[[u32; 2]], &mut Vec<[u32; 2]>);

/// Row by row `op` (intersection or union) of two regions of one size.
fn rowwise(a: &CellRuns, b: &CellRuns, op: RunOp) -> CellRuns {
    let mut out = CellRuns::new(a.width());
    let mut row = Vec::new();
    for k in 0..a.height() {
        op(a.row(k), b.row(k), &mut row);
        out.push_row(&row);
    }
    out
}
