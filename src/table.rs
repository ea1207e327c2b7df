//! The `cut` table as printed: fixed columns, numbers right-aligned, layer
//! paths short (relative to the current folder, else to the batch's
//! deepest common folder) and long ones shortened in the middle, a line
//! under the table explaining its words, and each layer's warnings and
//! notes on lines of their own below its row.

use crate::quality::CutNumbers;
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
