//! [`super::measure`] against [`super::render`] on random frames: the span
//! model must give exactly the totals of the per-pixel one (every
//! [`super::DrawStats`] field per draw and in total, and the largest
//! per-pixel count). `render` is the reference; it follows the model in
//! the module docs pixel by pixel (and is itself checked against a
//! brute-force rasterizer in tests/raster.rs).

use super::{measure, render, Draw, SpanBuffer};
use proptest::prelude::*;

/// A coordinate on the 1/256 grid: mostly pixel corners and centres,
/// where shared edges and the top-left rule meet, some anywhere, a few off
/// screen (the viewports below are at most 40 pixels).
fn coord() -> impl Strategy<Value = f32> {
    prop_oneof![
        4 => (-3i32..44).prop_map(|v| v as f32),
        4 => (-3i32..44).prop_map(|v| v as f32 + 0.5),
        2 => (-768i32..11264).prop_map(|v| v as f32 / 256.0),
        1 => prop_oneof![Just(-1e5f32), Just(1e5f32), Just(-20.0), Just(70.0)],
    ]
}

/// Depths from a small set, so that draws often tie (LESS fails on ties).
fn depth() -> impl Strategy<Value = f32> {
    prop_oneof![Just(0.0f32), Just(0.25), Just(0.5), Just(0.75), Just(1.0)]
}

/// A draw over the frame's shared vertex pool: triangles are random
/// triples of pool vertices (so they share vertices and edges, within and
/// across draws, and some are degenerate), or an axis-aligned rectangle
/// of two triangles, as the scene's rect strategy draws.
fn draw(pool: Vec<f32>) -> impl Strategy<Value = Draw> {
    let n = (pool.len() / 2) as u32;
    let tris = prop::collection::vec(0..n, 3..=36).prop_map(|mut v| {
        v.truncate(v.len() / 3 * 3);
        v
    });
    let rect = (coord(), coord(), coord(), coord()).prop_map(|(x0, y0, x1, y1)| {
        (vec![x0, y0, x1, y0, x1, y1, x0, y1], vec![0, 1, 2, 0, 2, 3])
    });
    let geometry = prop_oneof![
        3 => tris.prop_map(move |i| (pool.clone(), i)),
        1 => rect,
    ];
    (geometry, depth(), any::<bool>(), any::<bool>()).prop_map(
        |((positions, indices), depth, depth_test, depth_write)| Draw {
            layer: "random".into(),
            blend: false,
            depth,
            depth_test,
            depth_write,
            positions,
            indices,
        },
    )
}

fn frame() -> impl Strategy<Value = ([u32; 2], Vec<Draw>)> {
    let pool = prop::collection::vec(coord(), 6..=24).prop_map(|mut v| {
        v.truncate(v.len() / 2 * 2);
        v
    });
    (1u32..=40, 1u32..=40, pool)
        .prop_flat_map(|(w, h, pool)| (Just([w, h]), prop::collection::vec(draw(pool), 1..=6)))
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(5000))]

    #[test]
    fn measure_gives_render_totals((viewport, draws) in frame()) {
        let r = render(viewport, &draws);
        let m = measure(viewport, &draws);
        prop_assert_eq!(&m.per_draw, &r.per_draw);
        prop_assert_eq!(&m.total, &r.total);
        prop_assert_eq!(m.max_pixel, r.counts.iter().copied().max().unwrap_or(0));
        prop_assert_eq!([m.width, m.height], viewport);
    }
}

#[test]
fn a_reused_buffer_forgets_the_previous_frame() {
    // the same frame measured after a different, larger one gives the
    // fresh numbers (render's, which start from a clear frame)
    let square = |x: f32, depth: f32| Draw {
        layer: "sq".into(),
        blend: false,
        depth,
        depth_test: true,
        depth_write: true,
        positions: vec![x, 0.0, x + 5.0, 0.0, x + 5.0, 5.0, x, 5.0],
        indices: vec![0, 1, 2, 0, 2, 3],
    };
    let mut buf = SpanBuffer::new();
    let big = [square(0.0, 0.1), square(2.0, 0.0)];
    assert_eq!(
        buf.measure([16, 12], &big).total,
        render([16, 12], &big).total
    );
    let small = [square(1.0, 0.5), square(1.0, 0.25)];
    let m = buf.measure([9, 7], &small);
    let r = render([9, 7], &small);
    assert_eq!(m.per_draw, r.per_draw);
    assert_eq!(m.max_pixel, 2);
}

#[test]
#[should_panic(expected = "draw 0")]
fn measure_refuses_an_invalid_draw() {
    let d = Draw {
        layer: "bad".into(),
        blend: false,
        depth: 2.0,
        depth_test: false,
        depth_write: false,
        positions: vec![],
        indices: vec![],
    };
    measure([4, 4], &[d]);
}
