//! Outline tracing: the exact boundary of a half-grid [`Mask`] as closed
//! rings of lattice points (half-texel units), islands and holes alike.
//!
//! Invariants of the output: every ring has the region on its right as seen
//! on screen with y down, so islands (outer rings) have a positive shoelace
//! area and holes a negative one; rings hold only corner points (no two
//! consecutive edges are collinear); rings are pairwise disjoint provided the
//! mask has no pinches ([`Mask::remove_pinches`] / [`Mask::fill_pinches`]);
//! `component` is shared by an island's outer ring and its holes.

use crate::mask::{Mask, RunLabels};

/// A lattice point in half-texel units.
pub type Point = [i64; 2];

/// A closed ring; the last point connects back to the first.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Ring {
    /// Corner points in order (half-texel units).
    pub points: Vec<Point>,
    /// Whether the ring bounds a hole (negative shoelace area).
    pub hole: bool,
    /// Connected component (4-connected) of the region this ring bounds.
    pub component: u32,
}

/// Twice the signed shoelace area of a ring (positive: clockwise on screen).
pub fn twice_area(points: &[Point]) -> i64 {
    let n = points.len();
    let mut a = 0i64;
    for i in 0..n {
        let p = points[i];
        let q = points[(i + 1) % n];
        a += p[0] * q[1] - q[0] * p[1];
    }
    a
}

/// Traces every boundary of `mask`. The mask must have no pinches.
pub fn trace(mask: &Mask) -> Vec<Ring> {
    trace_runs(&mask.run_labels())
}

/// [`trace`] from the mask's runs and their component labels
/// ([`Mask::run_labels`]): time and memory follow the runs and the corners,
/// not the cells. The runs must come from a mask without pinches.
///
/// Method: a lattice point is a ring corner iff an odd number of its four
/// cells is set, i.e. iff it is a run end in exactly one of the rows above
/// and below it, so lattice row `y`'s corners are the symmetric difference
/// of the run ends of cell rows `y - 1` and `y`. Along a lattice row the
/// horizontal boundary is where those two rows differ, so its corners pair
/// up left to right (first with second, third with fourth); down a lattice
/// column likewise top to bottom. A ring alternates between the two
/// pairings. Each ring starts at its first corner in row-major order, whose
/// outgoing edge runs right (an island) or down (a hole), and rings come in
/// the order of those corners: the same rings, points and order as tracing
/// cell by cell (the module's test `runs_trace_like_cells` compares them).
pub fn trace_runs(labels: &RunLabels) -> Vec<Ring> {
    let runs = &labels.runs;
    let h = runs.height;
    // corners in row-major order; every lattice row holds an even number
    let mut corners: Vec<Point> = Vec::new();
    let mut ends_above: Vec<u32> = Vec::new();
    let mut ends_below: Vec<u32> = Vec::new();
    for y in 0..=h {
        std::mem::swap(&mut ends_above, &mut ends_below);
        ends_below.clear();
        if y < h {
            ends_below.extend(runs.row(y).iter().flatten());
        }
        let (a, b) = (&ends_above, &ends_below);
        let (mut i, mut j) = (0, 0);
        while i < a.len() || j < b.len() {
            let x = match (a.get(i), b.get(j)) {
                (Some(&p), Some(&q)) if p == q => {
                    i += 1;
                    j += 1;
                    continue;
                }
                (Some(&p), Some(&q)) if p < q => {
                    i += 1;
                    p
                }
                (Some(&p), None) => {
                    i += 1;
                    p
                }
                (_, Some(&q)) => {
                    j += 1;
                    q
                }
                (None, None) => unreachable!(),
            };
            corners.push([x as i64, y as i64]);
        }
    }
    let n = corners.len();
    if n == 0 {
        return Vec::new();
    }
    // vertical pairing: corners sorted by column, then row
    let mut by_column: Vec<u32> = (0..n as u32).collect();
    by_column.sort_unstable_by_key(|&i| {
        let [x, y] = corners[i as usize];
        (x, y)
    });
    let mut below = vec![0u32; n];
    for pair in by_column.chunks_exact(2) {
        below[pair[0] as usize] = pair[1];
        below[pair[1] as usize] = pair[0];
    }
    drop(by_column);
    let mut seen = vec![false; n];
    let mut rings = Vec::new();
    for start in 0..n {
        if seen[start] {
            continue;
        }
        let [sx, sy] = corners[start];
        // the cell below-right of the start is set for an island (edge
        // right), unset for a hole (edge down, the cell below-left set)
        let island = labels.at(sx as usize, sy as usize) != 0;
        let component = if island {
            labels.at(sx as usize, sy as usize)
        } else {
            labels.at(sx as usize - 1, sy as usize)
        };
        let mut points = Vec::new();
        let mut i = start;
        let mut horizontal = island;
        while !seen[i] {
            seen[i] = true;
            points.push(corners[i]);
            i = if horizontal { i ^ 1 } else { below[i] as usize };
            horizontal = !horizontal;
        }
        let hole = twice_area(&points) < 0;
        rings.push(Ring {
            points,
            hole,
            component,
        });
    }
    rings
}

/// 4-connected component labels of the set cells, row-major (0 for unset
/// cells); the numbering [`Ring::component`] uses.
pub fn label(mask: &Mask) -> Vec<u32> {
    mask.components()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_rng::Lcg;

    const RIGHT: u8 = 1;
    const DOWN: u8 = 2;
    const LEFT: u8 = 3;
    const UP: u8 = 4;

    /// The definition, cell by cell: every set cell writes the outgoing
    /// boundary direction at the lattice points of its unset sides, then
    /// rings are followed from the first lattice point in row-major order.
    fn trace_cells(mask: &Mask) -> Vec<Ring> {
        let labels = mask.components();
        let label_at = |x: usize, y: usize| labels[y * mask.width + x];
        let (w, h) = (mask.width, mask.height);
        if w == 0 || h == 0 || mask.is_empty() {
            return Vec::new();
        }
        let lw = w + 1;
        // Outgoing boundary direction at each lattice point (0: none).
        let mut out = vec![0u8; lw * (h + 1)];
        let cells = &mask.cells;
        for y in 0..h {
            let row = &cells[y * w..(y + 1) * w];
            let above = if y > 0 {
                Some(&cells[(y - 1) * w..y * w])
            } else {
                None
            };
            let below = if y + 1 < h {
                Some(&cells[(y + 1) * w..(y + 2) * w])
            } else {
                None
            };
            for x in 0..w {
                if row[x] == 0 {
                    continue;
                }
                if above.map_or(true, |r| r[x] == 0) {
                    out[y * lw + x] = RIGHT;
                }
                if x + 1 == w || row[x + 1] == 0 {
                    out[y * lw + x + 1] = DOWN;
                }
                if below.map_or(true, |r| r[x] == 0) {
                    out[(y + 1) * lw + x + 1] = LEFT;
                }
                if x == 0 || row[x - 1] == 0 {
                    out[(y + 1) * lw + x] = UP;
                }
            }
        }
        let mut rings = Vec::new();
        for start in 0..out.len() {
            if out[start] == 0 {
                continue;
            }
            let mut points = Vec::new();
            let mut idx = start;
            let mut prev_dir = 0u8;
            let first_dir = out[start];
            let (sx, sy) = ((start % lw) as i64, (start / lw) as i64);
            // the cell on the right of the first edge names the component
            let cell = match first_dir {
                RIGHT => (sx, sy),
                DOWN => (sx - 1, sy),
                LEFT => (sx - 1, sy - 1),
                _ => (sx, sy - 1),
            };
            let component = label_at(cell.0 as usize, cell.1 as usize);
            loop {
                let dir = out[idx];
                if dir == 0 {
                    break;
                }
                out[idx] = 0;
                let (x, y) = ((idx % lw) as i64, (idx / lw) as i64);
                if dir != prev_dir {
                    points.push([x, y]);
                }
                prev_dir = dir;
                idx = match dir {
                    RIGHT => idx + 1,
                    DOWN => idx + lw,
                    LEFT => idx - 1,
                    _ => idx - lw,
                };
            }
            if prev_dir == first_dir && points.len() > 1 {
                // the start point lies mid-edge: drop it
                points.remove(0);
            }
            let hole = twice_area(&points) < 0;
            rings.push(Ring {
                points,
                hole,
                component,
            });
        }
        rings
    }

    fn mask_from(rows: &[&str]) -> Mask {
        let mut m = Mask::new(rows[0].len(), rows.len(), false);
        for (y, r) in rows.iter().enumerate() {
            for (x, c) in r.chars().enumerate() {
                m.set(x, y, c == '#');
            }
        }
        m
    }

    #[test]
    fn square_with_hole_gives_outer_and_hole_rings() {
        let m = mask_from(&["#####", "#...#", "#...#", "#####"]);
        let rings = trace(&m);
        assert_eq!(rings.len(), 2);
        let outer = rings.iter().find(|r| !r.hole).unwrap();
        let hole = rings.iter().find(|r| r.hole).unwrap();
        assert_eq!(outer.points.len(), 4);
        assert_eq!(twice_area(&outer.points), 2 * 20);
        assert_eq!(twice_area(&hole.points), -2 * 6);
        assert_eq!(outer.component, hole.component);
    }

    #[test]
    fn area_of_rings_equals_cell_count() {
        let m = mask_from(&["##..#", "###.#", ".#..#", "...##", "#...."]);
        let total: i64 = trace(&m).iter().map(|r| twice_area(&r.points)).sum();
        assert_eq!(total, 2 * m.count() as i64);
    }

    /// The run tracer gives exactly the rings of the cell-by-cell
    /// definition (same points, start, order and components) on random
    /// masks with their pinches removed or filled.
    #[test]
    fn runs_trace_like_cells() {
        let mut rng = Lcg(99);
        for case in 0..300 {
            let (w, h) = (1 + case % 17, 1 + case % 13 * 2);
            let density = 20 + case % 7 * 10;
            let mut m = rng.mask(w, h, |_, r| r < density as u64);
            if case % 2 == 0 {
                m.remove_pinches();
            } else {
                m.fill_pinches();
            }
            assert_eq!(trace(&m), trace_cells(&m), "case {case}: {m:?}");
        }
    }
}
