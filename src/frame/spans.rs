//! A frame's totals without per-pixel buffers: [`measure`].
//!
//! [`measure`] runs the model of [`super::render`] (coverage, depth test
//! LESS and write, fragments, 2x2 quad lanes, vertices, triangles) and
//! returns the same [`DrawStats`] per draw and the same most fragments at
//! one pixel, but keeps no buffer per pixel. Instead each row is a sorted
//! list of **stretches**: runs of pixels with one stored depth and one
//! fragment count. Invariants of a row's list:
//!
//! * the first stretch starts at pixel 0, starts strictly increase, and a
//!   stretch ends where the next starts (the last at the viewport's width),
//!   so the stretches tile the row;
//! * two neighbouring stretches differ in depth or count (equal ones are
//!   merged as they form), so a row holds as many stretches as it has
//!   changes of (depth, count), not one per triangle edge ever drawn.
//!
//! A triangle's span on a row ([`Triangle::row_spans`]) splits the
//! stretches it partly covers and updates those inside it: where the depth
//! test passes, the count goes up by one and, with depth write, the depth
//! becomes the draw's. The passing parts are the row's fragments.
//!
//! **Lanes.** A triangle's lanes are 4 x the aligned 2x2 quads holding one
//! of its passing fragments. Per row the passing parts give a sorted list
//! of quad columns (x / 2, as merged ranges); quad row k covers rows 2k and
//! 2k + 1, so the triangle pays for the columns of row 2k plus those of row
//! 2k + 1 not already in row 2k.
//!
//! Cost per triangle row is a binary search and the stretches the span
//! meets, whatever the span's width. [`SpanBuffer`] keeps the rows between
//! frames so that scoring many frames reuses their memory.

use super::{Draw, DrawStats};
use crate::raster::Triangle;

/// A run of pixels of one row with one stored depth and one fragment
/// count. It starts at `start` and ends where the next stretch of its row
/// starts, or at the viewport's width.
#[derive(Clone, Copy, Debug)]
struct Stretch {
    start: u32,
    depth: f32,
    count: u32,
}

impl Stretch {
    fn same(&self, o: &Stretch) -> bool {
        self.depth == o.depth && self.count == o.count
    }
}

/// What [`measure`] returns: the numbers of [`super::FrameResult`] less
/// the per-pixel counts, plus their maximum.
#[derive(Clone, Debug, PartialEq)]
pub struct FrameStats {
    /// Viewport width, in pixels.
    pub width: u32,
    /// Viewport height, in pixels.
    pub height: u32,
    /// Per draw, in the order of the draws.
    pub per_draw: Vec<DrawStats>,
    /// The sum over the draws.
    pub total: DrawStats,
    /// Most fragments shaded at one pixel (0 if none was).
    pub max_pixel: u32,
}

/// How a draw's fragments meet the stored depth.
#[derive(Clone, Copy)]
struct DepthState {
    depth: f32,
    test: bool,
    write: bool,
}

/// The per-row stretches of a frame and the scratch lists of [`measure`],
/// kept between frames to reuse their memory. Its content between calls
/// means nothing: each [`SpanBuffer::measure`] starts from a cleared frame.
#[derive(Clone, Debug, Default)]
pub struct SpanBuffer {
    rows: Vec<Vec<Stretch>>,
    /// The stretches replacing a range of a row, built before being copied in.
    scratch: Vec<Stretch>,
    /// Quad columns (inclusive, merged, increasing) of the current
    /// triangle's passing fragments on the previous and on the current row.
    prev: Vec<(u32, u32)>,
    cur: Vec<(u32, u32)>,
    /// For [`SpanBuffer::measure_regions`]: one bit per quad of the
    /// viewport, set when the current draw holds a fragment in it.
    quads: Vec<u64>,
}

impl SpanBuffer {
    /// An empty buffer; it grows to the viewport on first use.
    pub fn new() -> SpanBuffer {
        SpanBuffer::default()
    }

    /// [`measure`], reusing this buffer's memory.
    ///
    /// # Panics
    /// If a draw fails [`Draw::validate`], like [`super::render`].
    pub fn measure(&mut self, viewport: [u32; 2], draws: &[Draw]) -> FrameStats {
        self.measure_lanes(viewport, draws, false)
    }

    /// [`SpanBuffer::measure`] with each draw's lanes counted as if the draw
    /// were one primitive: 4 per aligned 2x2 quad holding at least one of
    /// the draw's fragments, whichever triangles they come from. Every other
    /// number is [`SpanBuffer::measure`]'s. For draws that tile a region
    /// with triangles of no meaning of their own (the exact floor's
    /// rectangles, [`crate::scene::exact`]): only the region's own edges
    /// cut quads.
    pub fn measure_regions(&mut self, viewport: [u32; 2], draws: &[Draw]) -> FrameStats {
        self.measure_lanes(viewport, draws, true)
    }

    fn measure_lanes(&mut self, viewport: [u32; 2], draws: &[Draw], whole: bool) -> FrameStats {
        let [width, height] = viewport;
        // per quad, whether the current draw holds a fragment in it
        let quad_cols = (width as usize).div_ceil(2);
        if whole {
            self.quads.clear();
            self.quads
                .resize((quad_cols * (height as usize).div_ceil(2)).div_ceil(64), 0);
        }
        self.rows.truncate(height as usize);
        self.rows.resize_with(height as usize, Vec::new);
        for row in &mut self.rows {
            row.clear();
            row.push(Stretch {
                start: 0,
                depth: 1.0,
                count: 0,
            });
        }
        let mut per_draw = Vec::with_capacity(draws.len());
        let mut total = DrawStats::default();
        let mut max_pixel = 0;
        for (n, d) in draws.iter().enumerate() {
            if let Err(e) = d.validate() {
                panic!("measure: draw {n}: {e}");
            }
            let mut st = DrawStats {
                vertices: d.distinct_vertices(),
                vertices_in_groups: d.vertices_in_groups(super::VERTEX_GROUP),
                triangles: (d.indices.len() / 3) as u64,
                ..DrawStats::default()
            };
            let state = DepthState {
                depth: d.depth,
                test: d.depth_test,
                write: d.depth_write,
            };
            if whole {
                self.quads.fill(0);
            }
            for t in d.indices.chunks_exact(3) {
                let (a, b, c) = (d.vertex(t[0]), d.vertex(t[1]), d.vertex(t[2]));
                let Some(tri) = Triangle::new(a, b, c, viewport) else {
                    continue;
                };
                let first = tri.rows().start;
                self.prev.clear();
                for (y, span) in tri.row_spans() {
                    self.cur.clear();
                    if !span.is_empty() {
                        st.fragments += update_row(
                            &mut self.rows[y as usize],
                            width,
                            span,
                            state,
                            &mut self.scratch,
                            &mut self.cur,
                            &mut max_pixel,
                        );
                    }
                    if whole {
                        let base = (y / 2) as usize * quad_cols;
                        for &(c0, c1) in &self.cur {
                            for c in c0..=c1 {
                                let bit = base + c as usize;
                                let (word, mask) = (bit / 64, 1u64 << (bit % 64));
                                if self.quads[word] & mask == 0 {
                                    self.quads[word] |= mask;
                                    st.lanes += 4;
                                }
                            }
                        }
                        continue;
                    }
                    let mut quads = columns(&self.cur);
                    if y % 2 == 1 && y != first {
                        // row y - 1 of this triangle is in the same quad row
                        quads -= overlap(&self.prev, &self.cur);
                    }
                    st.lanes += 4 * quads;
                    std::mem::swap(&mut self.prev, &mut self.cur);
                }
            }
            total.add(&st);
            per_draw.push(st);
        }
        FrameStats {
            width,
            height,
            per_draw,
            total,
            max_pixel,
        }
    }
}

/// Draws `draws` in order into a viewport of [width, height] pixels and
/// returns the totals [`super::render`] would: the same per-draw
/// [`DrawStats`], the same total and the maximum of its per-pixel counts.
///
/// # Panics
/// If a draw fails [`Draw::validate`].
///
/// # Example
/// ```
/// use underdraw::frame::{measure, render, Draw};
/// let square = Draw {
///     layer: "square".into(),
///     blend: false,
///     depth: 0.5,
///     depth_test: true,
///     depth_write: true,
///     positions: vec![0.0, 0.0, 4.0, 0.0, 4.0, 4.0, 0.0, 4.0],
///     indices: vec![0, 1, 2, 0, 2, 3],
/// };
/// let draws = [square.clone(), square];
/// let (m, r) = (measure([8, 8], &draws), render([8, 8], &draws));
/// assert_eq!(m.per_draw, r.per_draw);
/// assert_eq!(m.max_pixel, 1);
/// ```
pub fn measure(viewport: [u32; 2], draws: &[Draw]) -> FrameStats {
    SpanBuffer::new().measure(viewport, draws)
}

/// Pushes `s` onto `out`, merged into the last stretch if they are equal.
fn push(out: &mut Vec<Stretch>, s: Stretch) {
    match out.last() {
        Some(last) if last.same(&s) => {}
        _ => out.push(s),
    }
}

/// Adds the quad columns of pixels `a..b` (a < b) to `cols`, whose last
/// range starts at or before `a / 2`.
fn push_columns(cols: &mut Vec<(u32, u32)>, a: u32, b: u32) {
    let (c0, c1) = (a / 2, (b - 1) / 2);
    match cols.last_mut() {
        Some(last) if c0 <= last.1 + 1 => last.1 = last.1.max(c1),
        _ => cols.push((c0, c1)),
    }
}

/// Columns in inclusive ranges.
fn columns(cols: &[(u32, u32)]) -> u64 {
    cols.iter().map(|&(a, b)| (b - a + 1) as u64).sum()
}

/// Columns in both lists of disjoint increasing inclusive ranges.
fn overlap(p: &[(u32, u32)], q: &[(u32, u32)]) -> u64 {
    let (mut i, mut j, mut n) = (0, 0, 0u64);
    while i < p.len() && j < q.len() {
        let (lo, hi) = (p[i].0.max(q[j].0), p[i].1.min(q[j].1));
        if lo <= hi {
            n += (hi - lo + 1) as u64;
        }
        if p[i].1 < q[j].1 {
            i += 1;
        } else {
            j += 1;
        }
    }
    n
}

/// Draws pixels `span` (non-empty, inside [0, width)) of one row: updates
/// its stretches, adds the quad columns of the passing pixels to `cols`,
/// raises `max_pixel` to any new count, and returns the passing pixels.
fn update_row(
    row: &mut Vec<Stretch>,
    width: u32,
    span: std::ops::Range<u32>,
    d: DepthState,
    scratch: &mut Vec<Stretch>,
    cols: &mut Vec<(u32, u32)>,
    max_pixel: &mut u32,
) -> u64 {
    let (a, b) = (span.start, span.end);
    // row[0].start = 0 <= a, so the stretch holding a exists
    let i = row.partition_point(|s| s.start <= a) - 1;
    // stretches i..j meet the span; j, if any, starts at or after b (a
    // span meets few stretches: walk, don't search)
    let mut j = i + 1;
    let mut any = !d.test || d.depth < row[i].depth;
    while j < row.len() && row[j].start < b {
        any |= !d.test || d.depth < row[j].depth;
        j += 1;
    }
    if !any {
        // every pixel fails the depth test: nothing changes
        return 0;
    }
    // rewrite one more stretch on each side, so that equal neighbours merge
    let lo = i.saturating_sub(1);
    let hi = (j + 1).min(row.len());
    scratch.clear();
    let mut fragments = 0u64;
    for k in lo..hi {
        let s = row[k];
        let end = row.get(k + 1).map_or(width, |n| n.start);
        if s.start < a {
            push(scratch, s);
        }
        let (pa, pb) = (s.start.max(a), end.min(b));
        if pa < pb {
            if !d.test || d.depth < s.depth {
                let count = s.count + 1;
                *max_pixel = (*max_pixel).max(count);
                fragments += (pb - pa) as u64;
                push_columns(cols, pa, pb);
                let depth = if d.write { d.depth } else { s.depth };
                push(
                    scratch,
                    Stretch {
                        start: pa,
                        depth,
                        count,
                    },
                );
            } else {
                push(scratch, Stretch { start: pa, ..s });
            }
        }
        let after = s.start.max(b);
        if after < end {
            push(scratch, Stretch { start: after, ..s });
        }
    }
    if scratch.len() == hi - lo {
        row[lo..hi].copy_from_slice(scratch);
    } else {
        row.splice(lo..hi, scratch.iter().copied());
    }
    fragments
}
