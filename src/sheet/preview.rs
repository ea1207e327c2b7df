//! A sheet's preview: the whole sheet with every region's meshes at its
//! rectangle, drawn by [`crate::preview::render_preview`] (the sheet over
//! a checkerboard, the meshes tinted, their edges, the dotted outlines of
//! the safe-opaque and must-cover regions and a caption in words).
//!
//! One picture of the sheet rather than one per region: the contract on a
//! sheet is computed on the whole sheet, so the outlines drawn are the
//! whole sheet's (a region's outline near its edge shows what its
//! neighbours and the padding do to it), and an artist sees every region,
//! its padding and its neighbours at once. An animation's one mesh is drawn
//! at its first frame only, so the caption's vertices are the regions'
//! meshes' together, each counted once.

use crate::mesh::{LayerMesh, MeshStats, TriangleList};
use image::RgbaImage;

/// The meshes of a sheet's regions (each with its `region` key) placed at
/// their rectangles in one mesh of the sheet's size: positions moved by
/// the rectangle's corner, triangles kept, vertices appended region after
/// region; the areas and texel counts summed, so the caption gives the
/// regions' vertices, opaque capture and excess together. The filter,
/// thresholds and addressing (what the outlines are drawn for) are the
/// first mesh's; the budget is kept only when every region has the same.
/// `None` without meshes.
pub fn placed_meshes(sheet_size: [u32; 2], meshes: &[&LayerMesh]) -> Option<LayerMesh> {
    let first = meshes.first()?;
    let mut all = LayerMesh {
        size: sheet_size,
        positions: Vec::new(),
        uvs: Vec::new(),
        opaque: TriangleList::default(),
        blended: TriangleList::default(),
        stats: MeshStats::default(),
        region: None,
        budget: first
            .budget
            .filter(|b| meshes.iter().all(|m| m.budget == Some(*b))),
        ..(*first).clone()
    };
    for m in meshes {
        let [x, y, _, _] = m.region.as_ref().map_or([0; 4], |r| r.rect);
        let base = all.vertex_count() as u32;
        for p in m.positions.chunks(2) {
            all.positions.push(p[0] + x as f32);
            all.positions.push(p[1] + y as f32);
        }
        all.uvs.extend_from_slice(&m.uvs);
        all.opaque
            .indices
            .extend(m.opaque.indices.iter().map(|i| i + base));
        all.blended
            .indices
            .extend(m.blended.indices.iter().map(|i| i + base));
        let (s, t) = (&mut all.stats, &m.stats);
        s.safe_opaque_area += t.safe_opaque_area;
        s.opaque_area += t.opaque_area;
        s.must_cover_area += t.must_cover_area;
        s.covered_area += t.covered_area;
        s.vertices += t.vertices;
        s.opaque_triangles += t.opaque_triangles;
        s.blended_triangles += t.blended_triangles;
        s.opaque_texels += t.opaque_texels;
        s.partial_texels += t.partial_texels;
        s.transparent_texels += t.transparent_texels;
    }
    Some(all)
}

/// The preview PNG of a sheet (`rgba`, its colours) with its regions'
/// meshes ([`placed_meshes`]), at most `max_width` pixels wide; `None`
/// without meshes.
pub fn sheet_preview(rgba: &RgbaImage, meshes: &[&LayerMesh], max_width: u32) -> Option<Vec<u8>> {
    let all = placed_meshes([rgba.width(), rgba.height()], meshes)?;
    let img = crate::preview::render_preview(rgba, &all, max_width);
    Some(crate::present::png::rgba_png(img))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn meshes_are_placed_at_their_rectangles_with_their_triangles() {
        // a fully opaque 4 x 4 layer: two triangles over its four corners
        let alpha = crate::alpha::AlphaMap::from_raw(4, 4, vec![255; 16]);
        let settings = crate::settings::CutSettings {
            budget: 4,
            ..Default::default()
        };
        let square = crate::cut::cut_layer(&alpha, "q.png", &settings).mesh;
        assert_eq!(square.vertex_count(), 4);
        let quad = |rect: [u32; 4]| {
            let mut m = square.clone();
            m.region = Some(crate::mesh::MeshRegion {
                sheet: "s.png".into(),
                sheet_size: [16, 16],
                rect,
                slices: None,
                slice_positions: None,
                frames: None,
                frame_uv_offsets: None,
            });
            m
        };
        let (a, b) = (quad([0, 0, 4, 4]), quad([8, 5, 4, 4]));
        let all = placed_meshes([16, 16], &[&a, &b]).unwrap();
        assert_eq!(all.size, [16, 16]);
        assert_eq!(all.vertex_count(), 8);
        for k in 0..4 {
            let [x, y] = square.position(k);
            assert_eq!(all.position(k + 4), [x + 8.0, y + 5.0]);
        }
        let n = square.opaque.indices.len();
        assert_eq!(all.opaque.indices.len(), 2 * n);
        let moved: Vec<u32> = square.opaque.indices.iter().map(|i| i + 4).collect();
        assert_eq!(&all.opaque.indices[n..], &moved[..]);
        // the caption's numbers: both regions together
        assert_eq!(all.stats.opaque_area, 2.0 * square.stats.opaque_area);
        assert_eq!(
            all.stats.safe_opaque_area,
            2.0 * square.stats.safe_opaque_area
        );
        assert_eq!(all.budget, Some(4));
        assert!(all.region.is_none());
        assert!(placed_meshes([16, 16], &[]).is_none());
    }
}
