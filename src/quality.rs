//! How good a cut is, in the words every output uses (the `cut` table and
//! its `--json`, the preview caption, the report card), and warnings where
//! it is poor, each with what to try.
//!
//! The vocabulary, one name and one unit per quantity:
//!
//! * **vertices**: vertices of the two meshes together, a shared one
//!   counted once (an integer);
//! * **opaque capture**: opaque mesh area / safe-opaque area, a share
//!   (printed as a percentage); none where the safe-opaque region is empty
//!   ("n/a", `null` in JSON);
//! * **excess**: area the two meshes cover beyond the must-cover region,
//!   in texels; **excess share**: the same as a share of the must-cover
//!   area (printed as a percentage).
//!
//! Warnings (common practice, no source, for the thresholds):
//!
//! * the excess is larger than the must-cover area itself (the meshes shade
//!   more than twice what must be drawn);
//! * the opaque capture is under one half while there is safe-opaque area
//!   (most of what could be drawn opaque is drawn blended);
//! * the budget is below the knee of the layer's saving curve, when the
//!   curve is known (`underdraw scene --report`).

use crate::mesh::MeshStats;

/// The numbers of one cut that the outputs print.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct CutNumbers {
    /// The budget the cut was fitted to, when known.
    pub budget: Option<usize>,
    /// Vertices of the two meshes together.
    pub vertices: usize,
    /// Area of the safe-opaque region, texels; `None` when not recorded.
    pub safe_opaque_area: Option<f64>,
    /// Opaque mesh area / safe-opaque area (1 where there is none, as
    /// [`MeshStats::opaque_capture`] gives it).
    pub opaque_capture: f64,
    /// Texels with alpha at least `opaque_min`, when recorded.
    pub opaque_texels: Option<u64>,
    /// Area covered beyond the must-cover region, texels.
    pub excess: f64,
    /// Area of the must-cover region, texels.
    pub must_cover_area: f64,
}

impl CutNumbers {
    /// The numbers of a mesh's stats (and its budget).
    pub fn of_mesh(stats: &MeshStats, budget: Option<usize>, vertices: usize) -> Self {
        CutNumbers {
            budget,
            vertices,
            safe_opaque_area: Some(stats.safe_opaque_area),
            opaque_capture: stats.opaque_capture(),
            // mesh files without texel counts read them as 0 for all three
            opaque_texels: (stats.opaque_texels + stats.partial_texels + stats.transparent_texels
                > 0)
            .then_some(stats.opaque_texels),
            excess: stats.excess(),
            must_cover_area: stats.must_cover_area,
        }
    }

    /// The numbers a batch recorded for a layer (its budget unknown there).
    pub fn of_result(r: &crate::batch::manifest::LayerResult) -> Self {
        CutNumbers {
            budget: None,
            vertices: r.vertices,
            safe_opaque_area: r.safe_opaque_area,
            opaque_capture: r.opaque_capture,
            opaque_texels: r.opaque_texels,
            excess: r.excess,
            must_cover_area: r.must_cover_area,
        }
    }

    /// The opaque capture, `None` where the safe-opaque region is empty.
    pub fn capture(&self) -> Option<f64> {
        match self.safe_opaque_area {
            Some(a) if a <= 0.0 => None,
            _ => Some(self.opaque_capture),
        }
    }

    /// Why there is no capture: "no opaque texels", or "no safe-opaque
    /// area" where opaque texels exist but none is far enough from the
    /// others for the filter.
    pub fn no_capture_reason(&self) -> &'static str {
        match self.opaque_texels {
            Some(n) if n > 0 => "no safe-opaque area",
            _ => "no opaque texels",
        }
    }

    /// The capture as printed: `97.9%`, or `n/a (no opaque texels)`.
    pub fn capture_text(&self) -> String {
        match self.capture() {
            Some(c) => format!("{:.1}%", 100.0 * c),
            None => format!("n/a ({})", self.no_capture_reason()),
        }
    }

    /// The excess as a share of the must-cover area (0 when that is empty).
    pub fn excess_share(&self) -> f64 {
        if self.must_cover_area > 0.0 {
            self.excess / self.must_cover_area
        } else {
            0.0
        }
    }

    /// Warnings about this cut, each with what to try; `knee` is the knee
    /// of the layer's saving curve when it is known.
    pub fn warnings(&self, knee: Option<usize>) -> Vec<String> {
        let mut w = Vec::new();
        if self.must_cover_area > 0.0 && self.excess > self.must_cover_area {
            w.push(format!(
                "excess {:.0} texels is {:.0}% of the must-cover area: the meshes shade more than twice what must be drawn; try a larger budget, or split the layer into parts that each have fewer islands",
                self.excess,
                100.0 * self.excess_share()
            ));
        }
        if let Some(c) = self.capture() {
            if c < 0.5 {
                w.push(format!(
                    "opaque capture {:.1}%: most of what could be drawn opaque is drawn blended; try a larger budget, or fill or remove small holes in the art's opaque parts",
                    100.0 * c
                ));
            }
        }
        if let (Some(k), Some(b)) = (knee, self.budget) {
            if b < k {
                w.push(format!(
                    "budget {b} is below the knee ({k}): more vertices would still save much; try budget {k}"
                ));
            }
        }
        w
    }
}

/// What `check` says of a mesh's areas: the opaque mesh against the
/// safe-opaque area, how much of the must-cover area the meshes cover, and
/// how much they cover beyond it (texels, whole numbers; areas are
/// multiples of a quarter texel, so rounding hides at most half a texel).
pub fn check_summary(r: &crate::check::ContractReport) -> String {
    let inside = r.must_cover_covered();
    let beyond = r.beyond_must_cover().max(0.0);
    let share = |a: f64, of: f64| {
        if of > 0.0 {
            format!("{:.1}%", 100.0 * a / of)
        } else {
            "n/a".to_string()
        }
    };
    format!(
        "opaque mesh {:.0} texels, {} of the {:.0} safe-opaque texels; the meshes cover {:.0} of the {:.0} must-cover texels ({}) and {:.0} texels beyond them",
        r.opaque_area,
        share(r.opaque_area, r.safe_area),
        r.safe_area,
        inside,
        r.must_cover_area,
        share(inside, r.must_cover_area),
        beyond
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn numbers(safe: f64, capture: f64, excess: f64, cover: f64) -> CutNumbers {
        CutNumbers {
            budget: Some(64),
            vertices: 64,
            safe_opaque_area: Some(safe),
            opaque_capture: capture,
            opaque_texels: Some(if safe > 0.0 { 10 } else { 0 }),
            excess,
            must_cover_area: cover,
        }
    }

    #[test]
    fn capture_is_missing_without_safe_area() {
        let fog = numbers(0.0, 1.0, 10.0, 1000.0);
        assert_eq!(fog.capture(), None);
        assert_eq!(fog.capture_text(), "n/a (no opaque texels)");
        assert!(fog.warnings(None).is_empty());
        let cliffs = numbers(500.0, 0.979, 11.0, 1000.0);
        assert_eq!(cliffs.capture_text(), "97.9%");
        assert!(cliffs.warnings(None).is_empty());
    }

    #[test]
    fn poor_cuts_are_warned_about_with_what_to_try() {
        let masts = numbers(100.0, 0.8, 2177.0, 1000.0);
        let w = masts.warnings(None);
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("218%") && w[0].contains("try"), "{w:?}");
        let houses = numbers(100.0, 0.197, 91.0, 1000.0);
        let w = houses.warnings(None);
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("19.7%") && w[0].contains("try"), "{w:?}");
        // the knee only when known, and only above the budget
        assert_eq!(houses.warnings(Some(48)).len(), 1);
        let w = houses.warnings(Some(96));
        assert!(w[1].contains("below the knee (96)"), "{w:?}");
        // exactly at the thresholds: no warning
        assert!(numbers(100.0, 0.5, 1000.0, 1000.0)
            .warnings(None)
            .is_empty());
    }
}
