//! The batch settings file, `underdraw.settings.json`: cut settings for a
//! folder of layers, with per-pattern overrides.
//!
//! ```text
//! {"defaults": {"budget": 48, "filter": "bilinear"},
//!  "layers": [{"match": "ui/*.png", "budget": 16},
//!             {"match": "**/fog*.png", "wrap": "x"}]}
//! ```
//!
//! Both keys are optional. A block may set any of `budget`, `filter`
//! (`nearest`, `bilinear`), `mip_levels`, `wrap` (`none`, `x`, `y`, `xy`),
//! `opaque_min` and `visible_min`, the `cut` command's options by their long
//! names. A pattern is matched against the layer's path relative to the
//! input folder, with `/` separators; `*` does not cross a `/`, `**` does.
//!
//! Invariants: unknown keys are refused (naming the file); every block is a
//! [`PartialSettings`], checked by the one validation of the settings
//! ([`PartialSettings::validate`]); blocks apply
//! in order (defaults, then every matching entry in file order), so a later
//! match overrides an earlier one, key by key.

use crate::error::FileError;
use crate::settings::{CutSettings, PartialSettings};
use globset::{GlobBuilder, GlobMatcher};
use serde::Deserialize;
use std::path::{Path, PathBuf};

/// The name of the settings file looked for at the root of an input folder.
pub const FILE_NAME: &str = "underdraw.settings.json";

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileForm {
    #[serde(default)]
    defaults: PartialSettings,
    /// Each entry is `"match"` and the keys of a [`PartialSettings`].
    #[serde(default)]
    layers: Vec<serde_json::Map<String, serde_json::Value>>,
}

/// A parsed settings file.
#[derive(Clone, Debug)]
pub struct SettingsFile {
    /// Where it was read from (named in errors and reports).
    pub path: PathBuf,
    /// The values for every layer.
    pub defaults: PartialSettings,
    /// Per-pattern values, in file order.
    pub layers: Vec<(String, GlobMatcher, PartialSettings)>,
}

const HINT: &str = "the settings file is {\"defaults\": {...}, \"layers\": [{\"match\": \"pattern\", ...}]} with the keys budget, filter, mip_levels, wrap, opaque_min, visible_min (see README, Batches)";

impl SettingsFile {
    /// Reads and checks a settings file.
    pub fn load(path: &Path) -> Result<SettingsFile, FileError> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            FileError::new(
                path,
                format!("the settings file cannot be read ({e})"),
                "check the path and the file's permissions",
            )
        })?;
        Self::parse(path, &text)
    }

    /// Parses the text of a settings file (`path` only names it in errors).
    pub fn parse(path: &Path, text: &str) -> Result<SettingsFile, FileError> {
        let bad = |what: String| FileError::new(path, what, HINT);
        let form: FileForm = serde_json::from_str(text)
            .map_err(|e| bad(format!("is not a valid settings file: {e}")))?;
        form.defaults
            .validate()
            .map_err(|e| bad(format!("in \"defaults\": {e}")))?;
        let mut layers = Vec::new();
        for (i, mut entry) in form.layers.into_iter().enumerate() {
            let pattern_text = match entry.remove("match") {
                Some(serde_json::Value::String(p)) => p,
                Some(other) => {
                    return Err(bad(format!(
                        "in layers[{i}]: \"match\" is {other}, not a pattern in quotes"
                    )))
                }
                None => return Err(bad(format!("in layers[{i}]: missing field `match`"))),
            };
            let which = format!("in layers[{i}] (\"match\": {pattern_text:?})");
            let values = PartialSettings::deserialize(serde_json::Value::Object(entry))
                .map_err(|e| bad(format!("{which}: {e}")))?;
            values
                .validate()
                .map_err(|m| bad(format!("{which}: {m}")))?;
            let glob = pattern(&pattern_text).map_err(|m| bad(format!("{which}: {m}")))?;
            layers.push((pattern_text, glob, values));
        }
        Ok(SettingsFile {
            path: path.to_path_buf(),
            defaults: form.defaults,
            layers,
        })
    }

    /// Applies the defaults, then every entry matching `relative` (a path
    /// with `/` separators), to `s`.
    pub fn apply(&self, relative: &str, s: &mut CutSettings) {
        self.defaults.apply(s);
        for (_, glob, values) in &self.layers {
            if glob.is_match(relative) {
                values.apply(s);
            }
        }
    }
}

/// A pattern that is not a valid glob.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("the pattern {pattern:?} is not valid ({reason})")]
pub struct PatternError {
    /// The pattern as given.
    pub pattern: String,
    /// What the glob parser found wrong.
    pub reason: String,
}

/// Compiles a pattern as the batch matches it: `*` and `?` stay within one
/// path component, `**` crosses them.
pub fn pattern(p: &str) -> Result<GlobMatcher, PatternError> {
    GlobBuilder::new(p)
        .literal_separator(true)
        .build()
        .map(|g| g.compile_matcher())
        .map_err(|e| PatternError {
            pattern: p.to_string(),
            reason: e.to_string(),
        })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::{FilterMode, Wrap};

    fn parse(text: &str) -> Result<SettingsFile, FileError> {
        SettingsFile::parse(Path::new("in/underdraw.settings.json"), text)
    }

    #[test]
    fn later_matches_override_earlier_ones_key_by_key() {
        let f = parse(
            r#"{"defaults": {"budget": 48, "wrap": "x"},
                "layers": [{"match": "ui/*.png", "budget": 16, "filter": "nearest"},
                           {"match": "ui/b*.png", "budget": 8}]}"#,
        )
        .unwrap();
        let at = |rel: &str| {
            let mut s = CutSettings::default();
            f.apply(rel, &mut s);
            s
        };
        let plain = at("sky.png");
        assert_eq!((plain.budget, plain.wrap), (48, Wrap::X));
        assert_eq!(plain.filter.mode, FilterMode::Bilinear);
        let panel = at("ui/panel.png");
        assert_eq!((panel.budget, panel.filter.mode), (16, FilterMode::Nearest));
        let button = at("ui/button.png");
        assert_eq!(
            (button.budget, button.filter.mode),
            (8, FilterMode::Nearest)
        );
        // `*` stays within one folder (glob(7) pathname rule, from memory)
        assert_eq!(at("ui/deep/panel.png").budget, 48);
    }

    #[test]
    fn unknown_keys_and_bad_values_are_refused_naming_the_file() {
        for (text, says) in [
            (r#"{"defaults": {"budgt": 4}}"#, "budgt"),
            (r#"{"default": {}}"#, "default"),
            (r#"{"layers": [{"match": "*.png", "colour": 1}]}"#, "colour"),
            (r#"{"defaults": {"budget": 3}}"#, "at least 4"),
            (r#"{"defaults": {"mip_levels": 16}}"#, "at most 15"),
            (r#"{"defaults": {"filter": "trilinear"}}"#, "trilinear"),
            (r#"{"defaults": {"opaque_min": 300}}"#, "300"),
            (r#"{"layers": [{"match": "a/[b.png"}]}"#, "not valid"),
            (r#"{"layers": [{"budget": 8}]}"#, "match"),
        ] {
            let e = parse(text).expect_err(text).to_string();
            assert!(e.starts_with("in/underdraw.settings.json: "), "{e}");
            assert!(e.contains(says), "{text}: {e}");
        }
    }
}
