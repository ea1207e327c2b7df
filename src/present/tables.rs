//! The commands' text tables, each printed from the value its `--json`
//! serializes ([`super::results`], and the scene's [`SceneReport`]):
//!
//! * `cut`: fixed columns, numbers right-aligned, layer paths short
//!   (relative to the current folder, else to the batch's deepest common
//!   folder) and long ones shortened in the middle, a line under the table
//!   explaining its words, and each layer's warnings and notes on lines of
//!   their own below its row ([`CutResult::text`], [`cut_table`]);
//! * `check`: the texture's levels and the contract ([`CheckResult::text`]);
//! * `sweep`: a row per budget with the knee marked ([`SweepResult::text`],
//!   [`sweep_table`]);
//! * `scene`: the strategies, the layers and the allocation
//!   ([`SceneReport::table`]).

use super::results::{CheckResult, CutResult, SweepResult};
use crate::batch::Status;
use crate::quality::CutNumbers;
use crate::scene::draws::Strategy;
use crate::scene::report::SceneReport;
use crate::sweep::SweepPoint;
use std::path::{Component, Path, PathBuf};

/// Width of the layer column, characters.
pub const LAYER_WIDTH: usize = 32;

/// One layer's row.
#[derive(Clone, Debug, PartialEq)]
pub struct CutRow {
    /// The layer as shown (see [`display_paths`]).
    pub layer: String,
    /// `cut` or `unchanged`.
    pub status: String,
    /// Its numbers.
    pub numbers: CutNumbers,
    /// Warnings, each with what to try.
    pub warnings: Vec<String>,
    /// The cutter's notes.
    pub notes: Vec<String>,
}

/// `s` in at most `width` characters: kept whole when it fits, else its
/// start and end with "…" between (the end, which holds the file name,
/// gets the larger part).
pub fn shorten_middle(s: &str, width: usize) -> String {
    let chars: Vec<char> = s.chars().collect();
    if chars.len() <= width || width < 5 {
        return s.to_string();
    }
    let keep = width - 1;
    let head = keep / 3;
    let tail = keep - head;
    let mut out: String = chars[..head].iter().collect();
    out.push('…');
    out.extend(&chars[chars.len() - tail..]);
    out
}

/// The deepest folder holding every path of `paths` (lexically, by
/// components; empty when they share none).
fn common_folder(paths: &[PathBuf]) -> PathBuf {
    let mut common: Option<Vec<Component>> = None;
    for p in paths {
        let parent: Vec<Component> = p.parent().map_or(vec![], |d| d.components().collect());
        common = Some(match common {
            None => parent,
            Some(c) => c
                .into_iter()
                .zip(parent)
                .take_while(|(a, b)| a == b)
                .map(|(a, _)| a)
                .collect(),
        });
    }
    common.unwrap_or_default().iter().collect()
}

/// The layers' paths as the table shows them: relative to `cwd` where they
/// lie inside it (absolute paths are compared with `cwd` as given), else
/// relative to the deepest folder common to all of them, with `/`
/// separators.
pub fn display_paths(paths: &[PathBuf], cwd: &Path) -> Vec<String> {
    let outside: Vec<PathBuf> = paths
        .iter()
        .filter(|p| p.is_absolute() && !p.starts_with(cwd))
        .cloned()
        .collect();
    let common = common_folder(&outside);
    paths
        .iter()
        .map(|p| {
            let rel = if p.is_absolute() {
                p.strip_prefix(cwd)
                    .or_else(|_| p.strip_prefix(&common))
                    .unwrap_or(p)
            } else {
                p.strip_prefix(".").unwrap_or(p)
            };
            rel.components()
                .map(|c| c.as_os_str().to_string_lossy().into_owned())
                .collect::<Vec<_>>()
                .join("/")
        })
        .collect()
}

/// The header, the rows (with their warnings and notes below them) and the
/// line explaining the columns.
pub fn cut_table(rows: &[CutRow]) -> String {
    let mut s = format!(
        "{:<LAYER_WIDTH$} {:>8} {:>22} {:>13} {:>9}  {}\n",
        "layer", "vertices", "opaque capture", "excess texels", "excess %", "status"
    );
    for r in rows {
        let n = &r.numbers;
        s += &format!(
            "{:<LAYER_WIDTH$} {:>8} {:>22} {:>13.0} {:>8.1}%  {}\n",
            shorten_middle(&r.layer, LAYER_WIDTH),
            n.vertices,
            n.capture_text(),
            n.excess,
            100.0 * n.excess_share(),
            r.status
        );
        for w in &r.warnings {
            s += &format!("  warning: {w}\n");
        }
        for note in &r.notes {
            s += &format!("  note: {note}\n");
        }
    }
    s += "(vertices: both meshes, a shared one once; opaque capture: opaque mesh area / safe-opaque area; excess: area covered beyond the must-cover area, in texels and as % of it)\n";
    s
}

impl CutResult {
    /// The `cut` command's text: the batch's notes, the table of the layers
    /// cut or unchanged (paths shown relative to `cwd`), and the total line.
    pub fn text(&self, cwd: &Path) -> String {
        self.text_with(cwd, &[], None)
    }

    /// [`CutResult::text`] with `regions`' rows (sprite sheets' regions)
    /// after the layers', and `regions_total` after the total line's
    /// layers.
    pub fn text_with(&self, cwd: &Path, regions: &[CutRow], regions_total: Option<&str>) -> String {
        let mut s = String::new();
        for n in &self.notes {
            s += &format!("note: {n}\n");
        }
        let shown: Vec<_> = self
            .layers
            .iter()
            .filter_map(|l| l.cut_numbers.map(|n| (l, n)))
            .collect();
        let paths: Vec<PathBuf> = shown.iter().map(|(l, _)| l.input.clone()).collect();
        let names = display_paths(&paths, cwd);
        let rows: Vec<CutRow> = shown
            .iter()
            .zip(names)
            .map(|((l, numbers), layer)| {
                let n = l.numbers.as_ref().expect("numbers with the cut numbers");
                CutRow {
                    layer,
                    status: status_word(l.status).into(),
                    numbers: *numbers,
                    warnings: n.warnings.clone(),
                    notes: n.notes.clone(),
                }
            })
            .chain(regions.iter().cloned())
            .collect();
        s += &cut_table(&rows);
        let count = |st| self.layers.iter().filter(|l| l.status == st).count();
        let vertices: usize = self
            .layers
            .iter()
            .filter_map(|l| l.numbers.as_ref())
            .map(|n| n.vertices)
            .sum();
        let regions = regions_total.map(|t| format!("; {t}")).unwrap_or_default();
        s += &format!(
            "total: {} layers ({} cut, {} unchanged, {} failed), {vertices} vertices{regions}\n",
            self.layers.len(),
            count(Status::Cut),
            count(Status::Unchanged),
            count(Status::Failed),
        );
        s
    }
}

fn status_word(s: Status) -> &'static str {
    match s {
        Status::Cut => "cut",
        Status::Unchanged => "unchanged",
        Status::Failed => "failed",
    }
}

impl CheckResult {
    /// The `check` command's text: with `levels`, the shipped texture and
    /// each level's result; then whether the contract holds (with its
    /// areas) or each violation.
    pub fn text(&self, levels: bool) -> String {
        let mut s = String::new();
        if let (Some(d), true) = (&self.texture, levels) {
            s += &format!("texture: {d}\n");
            for l in self.levels.iter().flatten() {
                if l.violations.is_empty() {
                    s += &format!("  level {}: holds\n", l.level);
                } else {
                    s += &format!("  level {}: {}\n", l.level, l.violations.join("; "));
                }
            }
        }
        if self.holds {
            s += &format!("contract holds: {}; no overlap\n", self.summary);
        } else {
            s += "contract violated:\n";
            for v in &self.violations {
                s += &format!("  {v}\n");
            }
        }
        s
    }
}

impl SweepResult {
    /// The `sweep` command's text: the table, the knee and the file written.
    pub fn text(&self) -> String {
        let mut s = sweep_table(&self.points, self.knee);
        if let Some(k) = self.knee {
            s += &format!(
                "knee: budget {k} (smallest reaching {:.0}% of the saving at budget {})\n",
                100.0 * self.knee_fraction,
                crate::sweep::BUDGETS[crate::sweep::BUDGETS.len() - 1]
            );
        }
        for o in &self.outputs {
            s += &format!("wrote {o}\n");
        }
        s
    }
}

/// The sweep as a table, with the knee marked.
pub fn sweep_table(points: &[SweepPoint], knee: Option<usize>) -> String {
    let top = points
        .iter()
        .max_by_key(|p| p.budget)
        .map_or(0.0, |p| p.saving);
    let mut s = format!(
        "{:>6} {:>8} {:>12} {:>12} {:>12} {:>7}\n",
        "budget", "vertices", "opaque tx", "covering tx", "saving tx", "of max"
    );
    for p in points {
        s += &format!(
            "{:>6} {:>8} {:>12.0} {:>12.0} {:>12.0} {:>6.1}%{}\n",
            p.budget,
            p.vertices,
            p.opaque_area,
            p.covered_area,
            p.saving,
            if top > 0.0 {
                100.0 * p.saving / top
            } else {
                100.0
            },
            if Some(p.budget) == knee {
                "  <- knee"
            } else {
                ""
            }
        );
        for n in &p.notes {
            s += &format!("  note: {n}\n");
        }
    }
    s
}

fn share(v: Option<f64>) -> String {
    v.map_or("-".to_string(), |v| format!("{v:.2}"))
}

fn opt(v: Option<usize>) -> String {
    v.map_or("file".to_string(), |b| b.to_string())
}

impl SceneReport {
    fn overdraw(&self, s: Strategy) -> Option<f64> {
        self.strategies
            .iter()
            .find(|r| r.strategy == s)
            .map(|r| r.mean_overdraw)
    }

    /// The vertex cost table: vertices shaded per frame with a perfect
    /// post-transform cache and in groups of 4 consecutive indices, and the
    /// vertex bytes fetched per frame with each vertex format.
    fn vertex_costs(&self) -> String {
        let mut s = format!(
            "vertex cost per frame: {:<11} {:>9} {:>15} {:>10} {:>10}\n",
            "strategy", "vertices", "in groups of 4", "f32 bytes", "u16 bytes"
        );
        for r in &self.strategies {
            let bytes = |f: &str| r.vertex_bytes.get(f).copied().unwrap_or(0.0);
            s += &format!(
                "                       {:<11} {:>9.0} {:>15.0} {:>10.0} {:>10.0}\n",
                r.strategy.name(),
                r.per_frame.vertices,
                r.per_frame.vertices_in_groups,
                bytes("f32"),
                bytes("u16")
            );
        }
        s += "(vertices: a perfect post-transform cache; in groups of 4: a GPU that shades every group of 4 consecutive\n \
              indices a draw touches; bytes: those vertices fetched as position + texture coordinate, 16 bytes in f32, 8 in u16;\n \
              exact: its regions' corners, as if perfectly grouped)\n";
        s
    }

    /// The lines under the strategy table: the floor and the share of the
    /// possible saving, and what the layered order gets on each GPU class.
    fn findings(&self) -> String {
        let mut s = String::new();
        if let (Some(rect), Some(split), Some(exact)) = (
            self.overdraw(Strategy::Rect),
            self.overdraw(Strategy::Split),
            self.overdraw(Strategy::Exact),
        ) {
            s += &format!(
                "floor: the exact cut (every layer exactly its regions, unlimited vertices) shades {exact:.3} per pixel;\n\
                 split reaches {} of the possible saving ((rect - split) / (rect - exact) = ({rect:.3} - {split:.3}) / ({rect:.3} - {exact:.3}))\n",
                share(self.saving_share)
            );
        }
        if let (Some(rect), Some(outline), Some(split), Some(plain), Some(hsr)) = (
            self.overdraw(Strategy::Rect),
            self.overdraw(Strategy::Outline),
            self.overdraw(Strategy::Split),
            self.overdraw(Strategy::Layered),
            self.overdraw(Strategy::LayeredHsr),
        ) {
            s += &format!(
                "layered (per layer opaque then blended, back to front, no depth buffer):\n\
                 \x20 GPU without hidden-surface removal: {plain:.3} per pixel (outline {outline:.3}, rect {rect:.3}): the meshes save only the transparent texels\n\
                 \x20 GPU with ideal hidden-surface removal: {hsr:.3} per pixel (split with depth {split:.3}): the opaque meshes hide what lies behind them\n"
            );
        }
        s
    }

    /// The report as the plain-text tables `underdraw scene` prints.
    pub fn table(&self) -> String {
        let mut s = format!(
            "scene {}: {} x {}, {} layers, {} camera samples from x = {} to {}\n\n",
            self.scene,
            self.viewport[0],
            self.viewport[1],
            self.layers.len(),
            self.camera_positions.len(),
            self.camera_positions.first().copied().unwrap_or(0.0),
            self.camera_positions.last().copied().unwrap_or(0.0),
        );
        s += &format!(
            "{:<11} {:>15} {:>22} {:>12} {:>9} {:>6} {:>21}\n",
            "strategy",
            "overdraw (mean)",
            "overdraw peak (sample)",
            "shader lanes",
            "vertices",
            "draws",
            "vertices per triangle"
        );
        for r in &self.strategies {
            s += &format!(
                "{:<11} {:>15.3} {:>16.3} ({:>3}) {:>12.0} {:>9.0} {:>6.0} {:>21.2}\n",
                r.strategy.name(),
                r.mean_overdraw,
                r.peak_overdraw,
                r.peak_sample,
                r.per_frame.lanes,
                r.per_frame.vertices,
                r.per_frame.draws,
                r.vertices_per_triangle
            );
        }
        s += "(overdraw: fragments shaded per pixel of a frame, the mean over the camera samples and the peak; shader lanes (four per 2x2 quad shaded), vertices (vertex shader runs) and draws: per frame, mean over the samples)\n";
        s += &self.findings();
        s += &self.vertex_costs();
        s += "\n";
        s += &format!(
            "{:<16} {:>6} {:>8} {:>16} {:>14} {:>14} {:>16} {:>6}\n",
            "layer",
            "budget",
            "vertices",
            "saved vs outline",
            "saved vs rect",
            "vertices added",
            "saved per vertex",
            "share"
        );
        for l in &self.layers {
            s += &format!(
                "{:<16} {:>6} {:>8} {:>16.0} {:>14.0} {:>14.0} {:>16} {:>6}\n",
                shorten_middle(&l.name, 16),
                opt(l.budget),
                l.mesh_vertices,
                l.saved_vs_outline,
                l.saved_vs_rect,
                l.vertices_added,
                l.saved_per_vertex
                    .map_or("-".to_string(), |v| format!("{v:.0}")),
                share(l.saving_share)
            );
        }
        s += "(per frame, the split strategy against outline and rect: fragments saved, and vertices added against rect; saved per vertex: fragments saved vs rect per vertex added; share: of the saving the exact floor makes on the layer, (rect - split) / (rect - exact); budget \"file\": a mesh read from a file)\n";
        if let Some(a) = &self.allocation {
            s += &format!(
                "\nallocation of {} vertices (split strategy, scored on every sample):\n",
                a.vertex_total
            );
            s += &format!(
                "{:<16} {:>6} {:>8} {:>12} {:>8}\n",
                "layer", "budget", "vertices", "even budget", "vertices"
            );
            for l in &a.layers {
                s += &format!(
                    "{:<16} {:>6} {:>8} {:>12} {:>8}\n",
                    l.name,
                    opt(l.budget),
                    l.vertices,
                    opt(l.even_budget),
                    l.even_vertices
                );
            }
            for (name, r) in [("allocated", &a.allocated), ("even spread", &a.even)] {
                s += &format!(
                    "{:<12} {:>6} vertices, {:>10.0} fragments per frame, overdraw {:.3}\n",
                    name, r.vertices, r.fragments, r.overdraw
                );
            }
            s += &format!(
                "saved against the even spread: {:.0} fragments per frame\n",
                a.saved_vs_even
            );
            s += &format!(
                "the allocated budgets reach {} of the possible saving (rect to exact)\n",
                share(self.allocation_saving_share)
            );
        }
        for n in &self.notes {
            s += &format!("note: {n}\n");
        }
        s += &format!("wrote {}\n", self.outputs.join(", "));
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_names_keep_their_ends() {
        let s = shorten_middle("themes/autumn-harbour/background/far-hills-night.png", 32);
        assert_eq!(s.chars().count(), 32);
        assert!(s.starts_with("themes/au"), "{s}");
        assert!(s.ends_with("far-hills-night.png"), "{s}");
        assert!(s.contains('…'));
        assert_eq!(shorten_middle("fog.png", 32), "fog.png");
    }

    #[test]
    fn paths_are_relative_to_the_folder_or_the_common_folder() {
        let cwd = Path::new("/work/project");
        let shown = display_paths(
            &[
                PathBuf::from("/work/project/art/sky.png"),
                PathBuf::from("art/fog.png"),
                PathBuf::from("./ui.png"),
            ],
            cwd,
        );
        assert_eq!(shown, ["art/sky.png", "art/fog.png", "ui.png"]);
        let shown = display_paths(
            &[
                PathBuf::from("/data/themes/a/horizon.png"),
                PathBuf::from("/data/themes/b/horizon.png"),
            ],
            cwd,
        );
        assert_eq!(shown, ["a/horizon.png", "b/horizon.png"]);
    }

    #[test]
    fn columns_line_up_whatever_the_values() {
        let row = |layer: &str, safe: f64, excess: f64| CutRow {
            layer: layer.into(),
            status: "cut".into(),
            numbers: CutNumbers {
                budget: Some(64),
                vertices: 64,
                safe_opaque_area: Some(safe),
                opaque_capture: 0.979,
                opaque_texels: Some(0),
                excess,
                must_cover_area: 1000.0,
            },
            warnings: vec![],
            notes: vec![],
        };
        let t = cut_table(&[
            row(
                "a-very-long-folder-name/and-a-long-layer-name.png",
                10.0,
                3.0,
            ),
            row("fog.png", 0.0, 760597.0),
        ]);
        let lines: Vec<&str> = t.lines().collect();
        // every number column ends where its header ends
        for head in ["vertices", "opaque capture", "excess texels", "excess %"] {
            let end = lines[0].find(head).unwrap() + head.len();
            for l in &lines[1..3] {
                let cell: String = l.chars().take(end).collect();
                assert!(!cell.ends_with(' '), "{head} misaligned in {l:?}");
                let after: Vec<char> = l.chars().skip(end).take(1).collect();
                assert_eq!(after, [' '], "{head} misaligned in {l:?}");
            }
        }
        assert!(lines[2].contains("n/a (no opaque texels)"));
    }
}
