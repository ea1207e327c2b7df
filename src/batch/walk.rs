//! Finding the layers of an input folder.
//!
//! Invariants: the walk is recursive and in sorted order (by file name at
//! each level, so the layers come in the byte order of their relative
//! paths); it yields files whose extension is `png` in any case, following
//! symbolic links to files but not to folders (so a link cannot make it loop);
//! it never enters the output folder, so outputs written inside an input
//! folder are not read back as layers; relative paths use `/` separators
//! whatever the platform, as the patterns do.

use crate::error::{FileError, Setting};
use globset::GlobMatcher;
use std::path::{Path, PathBuf};

/// Which layers of a folder to take: a relative path is taken when it
/// matches one of `include` (or `include` is empty) and none of `exclude`.
#[derive(Clone, Debug, Default)]
pub struct Filter {
    /// Patterns of the layers to take (all when empty).
    pub include: Vec<GlobMatcher>,
    /// Patterns of the layers to leave out.
    pub exclude: Vec<GlobMatcher>,
}

impl Filter {
    /// Whether the layer at `relative` (with `/` separators) is taken.
    pub fn takes(&self, relative: &str) -> bool {
        (self.include.is_empty() || self.include.iter().any(|g| g.is_match(relative)))
            && !self.exclude.iter().any(|g| g.is_match(relative))
    }
}

/// `path` relative to `root`, with `/` separators.
pub fn relative(root: &Path, path: &Path) -> String {
    let rel = path.strip_prefix(root).unwrap_or(path);
    rel.components()
        .map(|c| c.as_os_str().to_string_lossy().into_owned())
        .collect::<Vec<_>>()
        .join("/")
}

/// The PNG layers under `root` that `filter` takes, in sorted order, never
/// looking into `skip` (the output folder, canonical, when it exists).
pub fn walk(root: &Path, filter: &Filter, skip: Option<&Path>) -> Result<Vec<PathBuf>, FileError> {
    walk_counted(root, filter, skip).map(|(found, _)| found)
}

/// As [`walk`], with the number of PNG files seen before `filter` chose
/// among them (to tell an empty folder from one whose layers the patterns
/// all left out).
pub fn walk_counted(
    root: &Path,
    filter: &Filter,
    skip: Option<&Path>,
) -> Result<(Vec<PathBuf>, usize), FileError> {
    let mut found = Vec::new();
    let mut seen = 0;
    let entries = walkdir::WalkDir::new(root)
        .sort_by_file_name()
        .into_iter()
        .filter_entry(|e| {
            !(e.file_type().is_dir()
                && skip.is_some_and(|s| e.path().canonicalize().is_ok_and(|c| c == s)))
        });
    for entry in entries {
        let entry = entry.map_err(|e| {
            let at = e.path().unwrap_or(root).to_path_buf();
            FileError::new(
                &at,
                format!("cannot be read while looking for layers ({e})"),
                format!(
                    "check the folder's permissions, or leave it out with {}",
                    Setting::Exclude
                ),
            )
        })?;
        let path = entry.path();
        let png = path
            .extension()
            .is_some_and(|x| x.to_string_lossy().eq_ignore_ascii_case("png"));
        if png && path.is_file() {
            seen += 1;
            if filter.takes(&relative(root, path)) {
                found.push(path.to_path_buf());
            }
        }
    }
    Ok((found, seen))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::batch::settings_file::pattern;
    use std::fs;

    #[test]
    fn sorted_recursive_case_insensitive_and_skipping_the_output() {
        let root = std::env::temp_dir().join(format!("underdraw-walk-{}", std::process::id()));
        let _ = fs::remove_dir_all(&root);
        for f in [
            "b.png",
            "a/z.PNG",
            "a/y.txt",
            "a/b/x.png",
            "out/old.png",
            "c.png.bak",
        ] {
            let p = root.join(f);
            fs::create_dir_all(p.parent().unwrap()).unwrap();
            fs::write(&p, b"").unwrap();
        }
        let out = root.join("out").canonicalize().unwrap();
        let all = walk(&root, &Filter::default(), Some(&out)).unwrap();
        let rel: Vec<String> = all.iter().map(|p| relative(&root, p)).collect();
        assert_eq!(rel, ["a/b/x.png", "a/z.PNG", "b.png"]);
        let filter = Filter {
            include: vec![pattern("a/**").unwrap()],
            exclude: vec![pattern("**/x.png").unwrap()],
        };
        let some = walk(&root, &filter, Some(&out)).unwrap();
        assert_eq!(some, [root.join("a/z.PNG")]);
        fs::remove_dir_all(&root).unwrap();
    }
}
