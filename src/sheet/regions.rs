//! The regions file (`<sheet>.regions.json`, our own format
//! `"underdraw.regions"`, version 1): the named rectangles of a sprite
//! sheet, a plain rectangle, a nine-slice panel (`slices`) or an animation's
//! frames (`frames`, all of one size).
//!
//! ```text
//! {"format": "underdraw.regions", "version": 1,
//!  "regions": [{"name": "button", "rect": [x, y, w, h]},
//!              {"name": "panel", "rect": [x, y, w, h], "slices": [left, top, right, bottom]},
//!              {"name": "spark", "frames": [[x, y, w, h], [x, y, w, h]]}]}
//! ```
//!
//! Invariants of the [`SheetRegion`]s [`parse_regions`] returns: every
//! rectangle is non-empty and lies inside the sheet; names are unique and
//! usable as file names; frames are of one size; slices leave a centre of
//! at least one texel each way.

use crate::error::{FileError, Setting};
use serde::{Deserialize, Serialize};
use std::path::Path;

/// The regions file's `format`.
pub const REGIONS_FORMAT: &str = "underdraw.regions";
/// The regions file's `version`.
pub const REGIONS_VERSION: u32 = 1;
/// Largest regions file read, in bytes.
const MAX_BYTES: u64 = 16 << 20;

/// A rectangle of texels: left, top, width, height.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Rect {
    /// Left column.
    pub x: u32,
    /// Top row.
    pub y: u32,
    /// Columns.
    pub w: u32,
    /// Rows.
    pub h: u32,
}

impl Rect {
    /// `[x, y, w, h]` as a rectangle.
    pub fn from_array([x, y, w, h]: [u32; 4]) -> Rect {
        Rect { x, y, w, h }
    }
    /// The rectangle as `[x, y, w, h]`.
    pub fn to_array(self) -> [u32; 4] {
        [self.x, self.y, self.w, self.h]
    }
    /// Texels inside.
    pub fn area(self) -> u64 {
        self.w as u64 * self.h as u64
    }
}

/// What a region is drawn as.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum RegionKind {
    /// One rectangle drawn as it is.
    Plain,
    /// A nine-slice panel: insets from the left, top, right and bottom
    /// edges in texels.
    Sliced([u32; 4]),
    /// An animation: its frames, all of the first one's size (the first is
    /// the region's `rect`).
    Frames(Vec<Rect>),
}

/// One named region of a sheet, validated.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SheetRegion {
    /// Its name, which names its output files.
    pub name: String,
    /// Its rectangle (an animation's first frame).
    pub rect: Rect,
    /// Plain, nine-slice or frames.
    pub kind: RegionKind,
}

/// The file as written: a list of entries.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RegionsFile {
    /// Always [`REGIONS_FORMAT`].
    pub format: String,
    /// Always [`REGIONS_VERSION`].
    pub version: u32,
    /// The regions, in the order their outputs are listed.
    pub regions: Vec<RegionEntry>,
}

/// One entry of the file, before validation.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RegionEntry {
    /// The region's name.
    pub name: String,
    /// `[x, y, w, h]` in texels (not with `frames`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rect: Option<[u32; 4]>,
    /// Nine-slice insets `[left, top, right, bottom]` (with `rect`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub slices: Option<[u32; 4]>,
    /// An animation's frames, `[x, y, w, h]` each, all of one size.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub frames: Option<Vec<[u32; 4]>>,
}

impl RegionsFile {
    /// A file listing plain rectangles named `names[i]`.
    pub fn plain(regions: &[(String, Rect)]) -> RegionsFile {
        RegionsFile {
            format: REGIONS_FORMAT.into(),
            version: REGIONS_VERSION,
            regions: regions
                .iter()
                .map(|(name, r)| RegionEntry {
                    name: name.clone(),
                    rect: Some(r.to_array()),
                    slices: None,
                    frames: None,
                })
                .collect(),
        }
    }

    /// The file's text: pretty JSON, one region a line, ending in a newline.
    pub fn to_text(&self) -> String {
        let lines: Vec<String> = self
            .regions
            .iter()
            .map(|r| format!("  {}", serde_json::to_string(r).expect("plain values")))
            .collect();
        format!(
            "{{\"format\": {:?}, \"version\": {},\n \"regions\": [\n{}\n ]}}\n",
            self.format,
            self.version,
            lines.join(",\n")
        )
    }
}

/// Reads and validates a regions file for a sheet of `sheet_size` texels.
pub fn load_regions(path: &Path, sheet_size: (u32, u32)) -> Result<Vec<SheetRegion>, FileError> {
    use std::io::Read;
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .and_then(|f| f.take(MAX_BYTES + 1).read_to_end(&mut bytes))
        .map_err(|e| FileError::new(path, format!("cannot be read ({e})"), "check the path"))?;
    if bytes.len() as u64 > MAX_BYTES {
        return Err(FileError::new(
            path,
            "is larger than 16 MiB, too large for a regions file",
            "give the sheet's .regions.json file",
        ));
    }
    let text = String::from_utf8(bytes).map_err(|_| {
        FileError::new(
            path,
            "is not UTF-8 text",
            format!(
                "give a JSON regions file (the format is in the README, section Sprite sheets; {})",
                Setting::Regions
            ),
        )
    })?;
    parse_regions(path, &text, sheet_size)
}

/// Parses and validates a regions file's text (`path` names it in errors).
pub fn parse_regions(
    path: &Path,
    text: &str,
    (sw, sh): (u32, u32),
) -> Result<Vec<SheetRegion>, FileError> {
    let bad = |problem: String, hint: &str| FileError::new(path, problem, hint);
    let file: RegionsFile = serde_json::from_str(text).map_err(|e| {
        bad(
            format!("is not a valid regions file: {e}"),
            &format!("write {{\"format\": \"underdraw.regions\", \"version\": 1, \"regions\": [{{\"name\": ..., \"rect\": [x, y, w, h]}}, ...]}}, or make one with {}", Setting::FindRegions),
        )
    })?;
    if file.format != REGIONS_FORMAT {
        return Err(bad(
            format!("has format {:?}, not {REGIONS_FORMAT:?}", file.format),
            &format!(
                "give a regions file written for underdraw (or made by {})",
                Setting::FindRegions
            ),
        ));
    }
    if file.version != REGIONS_VERSION {
        return Err(bad(
            format!(
                "is regions file version {}, but this underdraw reads version {REGIONS_VERSION}",
                file.version
            ),
            "set \"version\": 1 and check the keys against the README's Sprite sheets section",
        ));
    }
    if file.regions.is_empty() {
        return Err(bad(
            "lists no region".into(),
            &format!(
                "add {{\"name\": ..., \"rect\": [x, y, w, h]}} entries, or make them with {}",
                Setting::FindRegions
            ),
        ));
    }
    let mut out: Vec<SheetRegion> = Vec::with_capacity(file.regions.len());
    for (i, e) in file.regions.iter().enumerate() {
        let which = format!("region {} ({:?})", i + 1, e.name);
        if let Some(why) = name_problem(&e.name) {
            return Err(bad(
                format!("{which}: the name {why}, but it names the region's output files"),
                "use letters, digits, '-', '_' and '.' (not first)",
            ));
        }
        if let Some(j) = out.iter().position(|r| r.name == e.name) {
            return Err(bad(
                format!(
                    "regions {} and {} are both named {:?}: each region's outputs are named after it",
                    j + 1,
                    i + 1,
                    e.name
                ),
                "give each region its own name",
            ));
        }
        let inside = |r: [u32; 4], what: &str| -> Result<Rect, FileError> {
            let [x, y, w, h] = r;
            if w == 0 || h == 0 {
                return Err(bad(
                    format!("{which}: {what} {r:?} is empty ({w} x {h} texels)"),
                    "give [x, y, w, h] with a width and height of at least 1",
                ));
            }
            if x as u64 + w as u64 > sw as u64 || y as u64 + h as u64 > sh as u64 {
                return Err(bad(
                    format!(
                        "{which}: {what} {r:?} reaches column {} and row {}, outside the sheet of {sw} x {sh} texels",
                        x as u64 + w as u64 - 1,
                        y as u64 + h as u64 - 1
                    ),
                    &format!("fix the rectangle: it must lie within columns 0 to {} and rows 0 to {} (is this the right sheet?)", sw.saturating_sub(1), sh.saturating_sub(1)),
                ));
            }
            Ok(Rect::from_array(r))
        };
        let region = match (&e.rect, &e.frames) {
            (Some(_), Some(_)) | (None, None) => {
                return Err(bad(
                    format!("{which} has {}", if e.rect.is_some() { "both \"rect\" and \"frames\"" } else { "neither \"rect\" nor \"frames\"" }),
                    "give \"rect\": [x, y, w, h] for one image, or \"frames\": [[x, y, w, h], ...] for an animation",
                ))
            }
            (Some(r), None) => {
                let rect = inside(*r, "the rect")?;
                let kind = match e.slices {
                    None => RegionKind::Plain,
                    Some(s) => {
                        let [l, t, r, b] = s;
                        let fits_w = (l as u64 + r as u64) < rect.w as u64;
                        let fits_h = (t as u64 + b as u64) < rect.h as u64;
                        if !fits_w || !fits_h {
                            let (axis, sum, side) = if !fits_w {
                                ("left + right", l as u64 + r as u64, format!("width {}", rect.w))
                            } else {
                                ("top + bottom", t as u64 + b as u64, format!("height {}", rect.h))
                            };
                            return Err(bad(
                                format!("{which}: the slices {s:?} do not fit: {axis} = {sum} texels is not below the region's {side}, so no centre is left to stretch"),
                                "give insets [left, top, right, bottom] that leave at least one texel of centre each way",
                            ));
                        }
                        RegionKind::Sliced(s)
                    }
                };
                SheetRegion {
                    name: e.name.clone(),
                    rect,
                    kind,
                }
            }
            (None, Some(frames)) => {
                if e.slices.is_some() {
                    return Err(bad(
                        format!("{which} has both \"frames\" and \"slices\""),
                        "cut a stretched panel and an animation as two regions",
                    ));
                }
                if frames.is_empty() {
                    return Err(bad(
                        format!("{which}: \"frames\" is empty"),
                        "list the frames as [[x, y, w, h], ...]",
                    ));
                }
                let mut rects = Vec::with_capacity(frames.len());
                for (k, f) in frames.iter().enumerate() {
                    let r = inside(*f, &format!("frame {k}"))?;
                    if let Some(first) = rects.first() {
                        let first: &Rect = first;
                        if (r.w, r.h) != (first.w, first.h) {
                            return Err(bad(
                                format!(
                                    "{which}: frame {k} is {} x {} texels but frame 0 is {} x {}: one mesh serves every frame, so the frames must be of one size",
                                    r.w, r.h, first.w, first.h
                                ),
                                "give every frame the same width and height (pad the smaller ones with transparent texels)",
                            ));
                        }
                    }
                    rects.push(r);
                }
                SheetRegion {
                    name: e.name.clone(),
                    rect: rects[0],
                    kind: RegionKind::Frames(rects),
                }
            }
        };
        out.push(region);
    }
    Ok(out)
}

/// Why `name` cannot name output files, if it cannot.
fn name_problem(name: &str) -> Option<&'static str> {
    if name.is_empty() {
        Some("is empty")
    } else if name.starts_with('.') {
        Some("starts with '.'")
    } else if name.len() > 200 {
        Some("is longer than 200 bytes")
    } else if !name
        .chars()
        .all(|c| c.is_alphanumeric() || matches!(c, '-' | '_' | '.' | ' '))
    {
        Some("holds a character other than letters, digits, '-', '_', '.' and spaces")
    } else {
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(text: &str) -> Result<Vec<SheetRegion>, String> {
        parse_regions(Path::new("ui.regions.json"), text, (64, 32)).map_err(|e| {
            assert!(e.path.ends_with("ui.regions.json"));
            format!("{}; {}", e.problem, e.hint)
        })
    }

    fn file(regions: &str) -> String {
        format!("{{\"format\": \"underdraw.regions\", \"version\": 1, \"regions\": [{regions}]}}")
    }

    #[test]
    fn reads_the_three_kinds() {
        let r = parse(&file(
            r#"{"name": "button", "rect": [0, 0, 16, 8]},
               {"name": "panel", "rect": [16, 0, 32, 32], "slices": [4, 4, 4, 4]},
               {"name": "spark", "frames": [[48, 0, 8, 8], [56, 0, 8, 8]]}"#,
        ))
        .unwrap();
        assert_eq!(r.len(), 3);
        assert_eq!(r[0].kind, RegionKind::Plain);
        assert_eq!(r[1].kind, RegionKind::Sliced([4, 4, 4, 4]));
        assert_eq!(r[2].rect, Rect::from_array([48, 0, 8, 8]));
        assert!(matches!(&r[2].kind, RegionKind::Frames(f) if f.len() == 2));
    }

    #[test]
    fn refuses_with_the_region_and_what_to_do() {
        let cases = [
            (
                r#"{"name": "a", "rect": [60, 0, 8, 8]}"#,
                "reaches column 67",
            ),
            (
                r#"{"name": "a", "rect": [0, 0, 8, 8]}, {"name": "a", "rect": [8, 0, 8, 8]}"#,
                "regions 1 and 2 are both named \"a\"",
            ),
            (
                r#"{"name": "s", "frames": [[0, 0, 8, 8], [8, 0, 8, 7]]}"#,
                "frame 1 is 8 x 7 texels but frame 0 is 8 x 8",
            ),
            (
                r#"{"name": "p", "rect": [0, 0, 8, 8], "slices": [4, 1, 4, 1]}"#,
                "left + right = 8 texels is not below the region's width 8",
            ),
            (
                r#"{"name": "a/x", "rect": [0, 0, 8, 8]}"#,
                "holds a character",
            ),
            (r#"{"name": "../x", "rect": [0, 0, 8, 8]}"#, "starts with"),
            (r#"{"name": "e", "rect": [0, 0, 0, 8]}"#, "is empty"),
            (r#"{"name": "n"}"#, "neither \"rect\" nor \"frames\""),
        ];
        for (regions, phrase) in cases {
            let e = parse(&file(regions)).unwrap_err();
            assert!(e.contains(phrase), "{regions}: {e}");
            assert!(e.contains("; "), "a hint: {e}");
        }
        assert!(
            parse("{\"format\": \"x\", \"version\": 1, \"regions\": []}")
                .unwrap_err()
                .contains("format \"x\"")
        );
        assert!(parse(&file("")).unwrap_err().contains("lists no region"));
        assert!(parse("{").unwrap_err().contains("line 1"));
    }

    #[test]
    fn the_written_text_reads_back() {
        let f = RegionsFile::plain(&[
            ("ui-1".into(), Rect::from_array([0, 0, 4, 4])),
            ("ui-2".into(), Rect::from_array([5, 0, 4, 4])),
        ]);
        let r = parse(&f.to_text()).unwrap();
        assert_eq!(r[1].name, "ui-2");
        assert_eq!(r[1].rect, Rect::from_array([5, 0, 4, 4]));
    }
}
