//! Animation frames: one mesh for every frame of a region, drawn with the
//! texture coordinates moved per frame (`frame_uv_offsets`).
//!
//! The shared mesh's opaque part lies inside the safe-opaque region of
//! every frame (their intersection, each computed on the whole sheet and
//! clipped to its frame) and the two meshes cover the must-cover region of
//! any frame (their union), so whichever frame is drawn the contract holds.
//! What sharing costs is reported against the best frame cut alone.

use super::regions::Rect;
use super::Placement;
use crate::mesh::LayerMesh;

/// An animation's cut: the shared mesh, its notes (the cost against the
/// best single frame's cut) and, when asked for, each frame's own mesh.
pub type FramesCut = (LayerMesh, Vec<String>, Vec<(usize, LayerMesh)>);

/// The shared mesh, its notes (the cost against the best single frame's
/// cut) and, with `per_frame`, each frame's own mesh.
pub fn cut_frames(
    place: &Placement,
    frames: &[Rect],
    per_frame: bool,
) -> Result<FramesCut, super::RegionError> {
    let budget = place.settings.budget;
    let shared = place.cut(frames, budget)?;
    let mut notes = shared.notes;
    let mut alone = Vec::with_capacity(frames.len());
    for f in frames {
        alone.push(place.cut(&[*f], budget)?.mesh);
    }
    // the best single frame: the highest opaque capture, then least excess
    let best = (0..alone.len())
        .max_by(|&i, &j| {
            let (a, b) = (&alone[i].stats, &alone[j].stats);
            a.opaque_capture()
                .total_cmp(&b.opaque_capture())
                .then(b.excess().total_cmp(&a.excess()))
                .then(j.cmp(&i))
        })
        .expect("a frame");
    let b = &alone[best].stats;
    let s = &shared.mesh.stats;
    // the shared opaque mesh against the best frame's own safe-opaque area
    let capture = |opaque: f64| {
        if b.safe_opaque_area > 0.0 {
            format!("{:.1}%", 100.0 * opaque / b.safe_opaque_area)
        } else {
            "n/a".to_string()
        }
    };
    notes.push(format!(
        "one mesh for {} frames: opaque {} texels ({} of frame {best}'s safe-opaque area), excess {} texels, {} vertices; frame {best} cut alone: opaque {} texels ({}), excess {} texels, {} vertices",
        frames.len(),
        s.opaque_area,
        capture(s.opaque_area),
        s.excess(),
        s.vertices,
        b.opaque_area,
        capture(b.opaque_area),
        b.excess(),
        b.vertices,
    ));
    let per = if per_frame {
        alone.into_iter().enumerate().collect()
    } else {
        Vec::new()
    };
    Ok((shared.mesh, notes, per))
}
