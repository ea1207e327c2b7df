//! The opaque side's share of the budget when the two outlines share
//! positions.
//!
//! The budget counts a position both meshes use once. Where the safe and
//! the must-cover regions reach the same corner (a strip's two bottom
//! corners on a clamped image edge, the convex corners of a hard-edged
//! outline), the opaque and covering polygons of the dynamic program can
//! run through the same points, and the opaque side may then use more
//! vertices than the budget minus the covering side's count. Here the
//! opaque rings are split ([`split_opaque`]) at that count plus `0..=`
//! [`MAX_EXTRA`] more, and the largest total whose positions, with those
//! of the covering rings counted once, fit in the budget is kept.
//!
//! What this gives up: the opaque dynamic program does not know which of
//! its candidates the covering rings use, so a shared position is counted
//! once only where the best polygon for its count happens to use it
//! (corners both outlines keep, such as the extreme corners of a strip,
//! usually are); a slightly smaller polygon that would share more is not
//! sought.

use super::{split_opaque, Item};
use crate::fit::PointMap;
use crate::outline::Ring;

/// Vertices beyond the budget's remainder the opaque split may try.
pub const MAX_EXTRA: usize = 8;

/// The opaque rings of largest total area (twice the area) to pair with
/// `covering` (which uses `used` distinct positions), such that the
/// distinct positions of both together are at most `budget`.
pub fn split_opaque_sharing(
    items: &[Item],
    covering: &[Ring],
    used: usize,
    budget: usize,
) -> Option<(i64, Vec<Ring>)> {
    let base = budget.checked_sub(used)?;
    let mut on_cover: PointMap<()> = PointMap::default();
    for r in covering {
        for &p in &r.points {
            on_cover.insert(p, ());
        }
    }
    let mut best: Option<(i64, Vec<Ring>)> = None;
    let mut last_total = None;
    for extra in 0..=MAX_EXTRA.min(on_cover.len()) {
        let Some((total, rings)) = split_opaque(items, base + extra) else {
            continue;
        };
        if last_total == Some(total) {
            // the same rings as for the count before (a curve may have no
            // polygon for some counts, so larger counts are still tried)
            continue;
        }
        last_total = Some(total);
        // positions of one class are distinct (rings simple, pairwise apart)
        let opaque: usize = rings.iter().map(|r| r.points.len()).sum();
        let shared = rings
            .iter()
            .flat_map(|r| r.points.iter())
            .filter(|p| on_cover.contains_key(*p))
            .count();
        if used + opaque - shared <= budget && best.as_ref().is_none_or(|b| total > b.0) {
            best = Some((total, rings));
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::outline::Point;

    fn ring(points: Vec<Point>) -> Ring {
        Ring {
            points,
            hole: false,
            component: 0,
        }
    }

    /// A worked example: the covering rings use 6 positions of a budget of
    /// 10, two of them also corners of the opaque curve's hexagon. Counted
    /// apart, the opaque side has 4 vertices (its square, twice-area 100);
    /// counted once, the hexagon (150) fits: 6 + 6 - 2 = 10 positions. A
    /// hexagon sharing nothing does not fit, and the square is kept.
    #[test]
    fn a_shared_position_counts_once() {
        let square = vec![[0, 0], [10, 0], [10, 10], [0, 10]];
        let hexagon = vec![[0, 0], [10, 0], [12, 5], [10, 10], [0, 10], [-2, 5]];
        let item = |hex: Vec<Point>| Item {
            curve: (0..=8)
                .map(|k| match k {
                    4 => Some((100, square.clone())),
                    6 => Some((150, hex.clone())),
                    _ => None,
                })
                .collect(),
            component: 0,
        };
        let covering = vec![ring(vec![
            [0, 0],
            [10, 0],
            [20, -5],
            [30, 0],
            [30, 30],
            [-5, 30],
        ])];
        let shared = split_opaque_sharing(&[item(hexagon.clone())], &covering, 6, 10);
        assert_eq!(shared.map(|s| s.0), Some(150));
        assert_eq!(split_opaque(&[item(hexagon)], 4).map(|s| s.0), Some(100));
        let apart: Vec<Point> = vec![[1, 1], [9, 1], [11, 5], [9, 9], [1, 9], [-1, 5]];
        let alone = split_opaque_sharing(&[item(apart)], &covering, 6, 10);
        assert_eq!(alone.map(|s| s.0), Some(100));
    }
}
