//! Scene layers that are regions of a sprite sheet
//! ([`MeshSource::Region`]): cut the way they ship, from the sheet's texels
//! with the contract on the whole sheet, positions local to the region and
//! uvs into the sheet ([`crate::sheet::cut_region`]); a nine-slice region
//! given a `size` is drawn stretched, each vertex placed by its
//! `slice_positions` anchor.
//!
//! The floor of a region layer ([`exact_region`]) is the whole sheet's
//! safe-opaque and must-cover regions clipped to the rectangle, as
//! rectangles; a stretched panel's rectangles are split at the slice lines
//! and each piece stretched as the panel is.
//!
//! Invariant: a region layer's mesh `size` is what it is drawn at (the
//! region's size, or the stretched size), so the plain rectangle strategy
//! draws the same rectangle.

use super::exact::{exact_runs, ExactLayer};
use super::file::{MeshSource, RegionLayer};
use super::prepare::{source_name, Layer};
use crate::alpha::AlphaMap;
use crate::error::FileError;
use crate::mesh::LayerMesh;
use crate::sheet::regions::{load_regions, RegionKind, SheetRegion};
use crate::sheet::{clip, cut_region, SheetAnalysis};
use std::path::Path;

/// The region named by `r` in its regions file. A name the file does not
/// have, or a `size` the region cannot be drawn at, is the asking layer's
/// error: it names the scene file and the layer, the regions file and what
/// it has, and what to do.
pub fn find_region(
    image: &Path,
    sheet: &AlphaMap,
    r: &RegionLayer,
) -> Result<SheetRegion, FileError> {
    let regions = load_regions(&r.regions, (sheet.width, sheet.height))?;
    let (scene, at) = &r.asked_by;
    let Some(region) = regions.iter().find(|g| g.name == r.name) else {
        let names: Vec<&str> = regions.iter().map(|g| g.name.as_str()).collect();
        return Err(FileError::new(
            scene,
            format!(
                "{at}: region {:?} is not in the regions file {} (of the sheet {}), which has: {}",
                r.name,
                r.regions.display(),
                image.display(),
                names.join(", ")
            ),
            format!(
                "give the layer's \"region\" one of those names, or add a region {:?} to {}",
                r.name,
                r.regions.display()
            ),
        ));
    };
    if let Some([w, h]) = r.size {
        let RegionKind::Sliced([left, top, right, bottom]) = region.kind else {
            return Err(FileError::new(
                scene,
                format!(
                    "{at}: gives a \"size\" to stretch region {:?} to, but the region has no \"slices\" in the regions file {}",
                    r.name,
                    r.regions.display()
                ),
                "remove the layer's \"size\", or give the region \"slices\" in the regions file",
            ));
        };
        if w < left + right || h < top + bottom {
            return Err(FileError::new(
                scene,
                format!(
                    "{at}: region {:?} cannot be drawn {w} x {h}: its corners alone take {} x {} (slices in the regions file {})",
                    r.name,
                    left + right,
                    top + bottom,
                    r.regions.display()
                ),
                "give the layer a \"size\" at least as large as the panel's corners",
            ));
        }
    }
    Ok(region.clone())
}

/// Cuts the region layer `r` of the sheet `image` (alpha `sheet`): its mesh
/// (checked on the whole sheet; stretched to `r.size` for a panel) and its
/// notes (the cut's, the padding warnings, the stretch).
pub fn cut_region_layer(
    image: &Path,
    sheet: &AlphaMap,
    r: &RegionLayer,
) -> Result<(LayerMesh, Vec<String>), FileError> {
    let region = find_region(image, sheet, r)?;
    let analysis = SheetAnalysis::new(sheet, &r.settings);
    let (mut mesh, mut notes) = cut_unstretched(image, sheet, &analysis, &region, r)?;
    if let Some(note) = stretch_region_mesh(&mut mesh, &region, r) {
        notes.push(note);
    }
    Ok((mesh, notes))
}

/// Cuts `region` (found for the region layer `r`) of the sheet `image`
/// (alpha `sheet`, analysed under `r`'s settings as `analysis`, whose
/// budget does not matter) at `r`'s budget, not yet stretched: the same
/// for every layer drawing that region with those settings, whatever its
/// `size`. Its notes are the cut's and the padding warnings.
pub fn cut_unstretched(
    image: &Path,
    sheet: &AlphaMap,
    analysis: &SheetAnalysis,
    region: &SheetRegion,
    r: &RegionLayer,
) -> Result<(LayerMesh, Vec<String>), FileError> {
    let cut = cut_region(
        sheet,
        &source_name(image),
        analysis,
        region,
        &r.settings,
        false,
    )
    .map_err(|e| {
        FileError::new(
            image,
            format!("region {:?} cannot be cut: {e}", r.name),
            "check the region's rectangle and the cut settings",
        )
    })?;
    let notes: Vec<String> = cut.notes.into_iter().chain(cut.warnings).collect();
    Ok((cut.mesh, notes))
}

/// Stretches a nine-slice `region`'s mesh to the layer `r`'s `size` when
/// it gives one, returning the note saying so (and that the mesh's numbers,
/// its stats, stay those of the region's own size); leaves any other mesh
/// as it is.
pub fn stretch_region_mesh(
    mesh: &mut LayerMesh,
    region: &SheetRegion,
    r: &RegionLayer,
) -> Option<String> {
    let (Some(size), RegionKind::Sliced(insets)) = (r.size, &region.kind) else {
        return None;
    };
    stretch_mesh(mesh, *insets, size);
    let (w, h) = (region.rect.w, region.rect.h);
    Some(format!(
        "nine-slice region {:?} ({w} x {h}) drawn stretched to {} x {}: its opaque capture and excess are given at the region's {w} x {h}, the fragments saved as drawn",
        r.name, size[0], size[1]
    ))
}

/// Where a panel's texel coordinate `t` along one axis (of a region `n`
/// texels long with insets `lo` and `hi`) lands when drawn `to` long: the
/// corners unscaled, the middle stretched.
pub fn stretch_axis(t: f64, n: u32, lo: u32, hi: u32, to: u32) -> f64 {
    let (n, lo, hi, to) = (n as f64, lo as f64, hi as f64, to as f64);
    if t <= lo {
        t
    } else if t >= n - hi {
        to - (n - t)
    } else {
        lo + (t - lo) * (to - lo - hi) / (n - lo - hi)
    }
}

/// Moves a panel mesh's vertices to where its `slice_positions` anchors put
/// them at `size` ([column, row, dx, dy]: column 0 at dx, 1 at
/// `left + dx * (W' - left - right) / (w - left - right)`, 2 at
/// `W' - right + dx`; rows alike), and sets its `size`; uvs are unchanged.
pub fn stretch_mesh(mesh: &mut LayerMesh, [left, top, right, bottom]: [u32; 4], size: [u32; 2]) {
    let [w, h] = mesh.size;
    let anchors = mesh
        .region
        .as_ref()
        .and_then(|r| r.slice_positions.clone())
        .expect("a nine-slice mesh has slice_positions");
    let place = |c: f32, d: f32, n: u32, lo: u32, hi: u32, to: u32| -> f32 {
        let (d, lo_f, hi_f) = (d as f64, lo as f64, hi as f64);
        (match c as u32 {
            0 => d,
            1 => lo_f + d * (to as f64 - lo_f - hi_f) / (n as f64 - lo_f - hi_f),
            _ => to as f64 - hi_f + d,
        }) as f32
    };
    for (k, [c, r, dx, dy]) in anchors.into_iter().enumerate() {
        mesh.positions[2 * k] = place(c, dx, w, left, right, size[0]);
        mesh.positions[2 * k + 1] = place(r, dy, h, top, bottom, size[1]);
    }
    mesh.size = size;
}

/// The floor of a region layer: the whole sheet's regions under the
/// layer's settings clipped to its rectangle; for a stretched panel, each
/// rectangle split at the slice lines and stretched.
pub fn exact_region(layer: &Layer) -> Result<Option<ExactLayer>, FileError> {
    let MeshSource::Region(r) = &layer.spec.mesh else {
        return Ok(None);
    };
    let image = &layer.spec.image;
    let sheet = crate::io::read_layer_file(image, &crate::io::ImageLimits::default())?
        .into_layer()
        .alpha;
    let region = find_region(image, &sheet, r)?;
    let analysis = SheetAnalysis::new(&sheet, &r.settings);
    let (safe, cover) = (
        clip(&analysis.safe, region.rect),
        clip(&analysis.cover, region.rect),
    );
    let cells = |r: &crate::mask::RowRuns| -> f64 {
        (0..r.height)
            .flat_map(|y| r.row(y).iter().map(|s| (s[1] - s[0]) as f64))
            .sum::<f64>()
            / 4.0
    };
    let (safe_area, cover_area) = (cells(&safe), cells(&cover));
    let mut exact = exact_runs(
        (safe, safe_area),
        (cover, cover_area),
        [region.rect.w, region.rect.h],
        &source_name(image),
        &r.settings,
    );
    if let (Some(size), RegionKind::Sliced(insets)) = (r.size, &region.kind) {
        stretch_rectangles(&mut exact.mesh, insets, size);
    }
    Ok(Some(exact))
}

/// Splits each rectangle of an exact mesh (four vertices a rectangle, as
/// [`exact_runs`] writes them) at the slice lines and stretches the pieces.
fn stretch_rectangles(
    mesh: &mut LayerMesh,
    &[left, top, right, bottom]: &[u32; 4],
    size: [u32; 2],
) {
    let [w, h] = mesh.size;
    let xs = [0.0, left as f64, (w - right) as f64, w as f64];
    let ys = [0.0, top as f64, (h - bottom) as f64, h as f64];
    let mut positions = Vec::new();
    let (mut opaque, mut blended) = (Vec::new(), Vec::new());
    for (list, out) in [
        (&mesh.opaque.indices, &mut opaque),
        (&mesh.blended.indices, &mut blended),
    ] {
        for tri in list.chunks_exact(6) {
            let a = tri[0] as usize;
            let c = tri[2] as usize;
            let (x0, y0) = (
                mesh.positions[2 * a] as f64,
                mesh.positions[2 * a + 1] as f64,
            );
            let (x1, y1) = (
                mesh.positions[2 * c] as f64,
                mesh.positions[2 * c + 1] as f64,
            );
            for i in 0..3 {
                let (sx0, sx1) = (x0.max(xs[i]), x1.min(xs[i + 1]));
                if sx0 >= sx1 {
                    continue;
                }
                for j in 0..3 {
                    let (sy0, sy1) = (y0.max(ys[j]), y1.min(ys[j + 1]));
                    if sy0 >= sy1 {
                        continue;
                    }
                    let px = |t| stretch_axis(t, w, left, right, size[0]) as f32;
                    let py = |t| stretch_axis(t, h, top, bottom, size[1]) as f32;
                    let n = (positions.len() / 2) as u32;
                    let (ax, bx, ay, by) = (px(sx0), px(sx1), py(sy0), py(sy1));
                    positions.extend([ax, ay, bx, ay, bx, by, ax, by]);
                    out.extend([n, n + 1, n + 2, n, n + 2, n + 3]);
                }
            }
        }
    }
    let (fw, fh) = (size[0] as f32, size[1] as f32);
    mesh.uvs = positions
        .chunks_exact(2)
        .flat_map(|p| [p[0] / fw, p[1] / fh])
        .collect();
    mesh.positions = positions;
    mesh.opaque.indices = opaque;
    mesh.blended.indices = blended;
    mesh.size = size;
}
