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

const RIGHT: u8 = 1;
const DOWN: u8 = 2;
const LEFT: u8 = 3;
const UP: u8 = 4;

/// Traces every boundary of `mask`. The mask must have no pinches.
pub fn trace(mask: &Mask) -> Vec<Ring> {
    trace_labelled(mask, &label(mask))
}

/// [`trace`] with the mask's component labels ([`label`]) already made.
pub fn trace_labelled(mask: &Mask, labels: &[u32]) -> Vec<Ring> {
    let w = mask.width;
    trace_by(mask, |x, y| labels[y * w + x])
}

/// [`trace`] with the mask's components labelled run by run
/// ([`Mask::run_labels`]), which take memory by the run, not by the cell.
pub fn trace_runs(mask: &Mask, labels: &RunLabels) -> Vec<Ring> {
    trace_by(mask, |x, y| labels.at(x, y))
}

/// [`trace`], the component of cell (x, y) read from `label_at`.
fn trace_by(mask: &Mask, label_at: impl Fn(usize, usize) -> u32) -> Vec<Ring> {
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

/// 4-connected component labels of the set cells, row-major (0 for unset
/// cells); the numbering [`Ring::component`] uses.
pub fn label(mask: &Mask) -> Vec<u32> {
    mask.components()
}

#[cfg(test)]
mod tests {
    use super::*;

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
}
