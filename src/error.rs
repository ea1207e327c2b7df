//! The error type: which file, what is wrong with it, and what to do.

use std::path::{Path, PathBuf};

/// An error about one file, phrased for the user.
#[derive(Clone, Debug, thiserror::Error)]
#[error("{}: {problem}\n  hint: {hint}", path.display())]
pub struct FileError {
    /// The file the error is about.
    pub path: PathBuf,
    /// What is wrong with the file, in one phrase.
    pub problem: String,
    /// What to do about it.
    pub hint: String,
}

impl FileError {
    /// An error about the file at `path`: what is wrong (`problem`) and what to
    /// do (`hint`). Shown as `<path>: <problem>` with `  hint: <hint>` on the
    /// next line.
    pub fn new(path: &Path, problem: impl Into<String>, hint: impl Into<String>) -> FileError {
        FileError {
            path: path.to_path_buf(),
            problem: problem.into(),
            hint: hint.into(),
        }
    }
}

/// A setting a message may name (in a hint: "choose another `out`
/// folder"). The library names a setting by its key; a front end with its
/// own spelling (the command line's flags) installs it once, at its start,
/// with [`spell_settings`], and every message built after uses it. So the
/// library never speaks in flags, and the flags are written in one place,
/// the binary.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Setting {
    /// The output folder.
    Out,
    /// The shipped texture of a PNG layer.
    Texture,
    /// Writing the preview PNG.
    Preview,
    /// What to write per layer (`json`, `gltf`, `all`).
    Format,
    /// The highest mip level sampled.
    MipLevels,
    /// How glTF assets store their vertices.
    VertexFormat,
    /// Layers cut at once.
    Jobs,
    /// Seconds to wait for another run on the output folder.
    LockWait,
    /// Patterns of the layers to take.
    Include,
    /// Patterns of the layers to leave out.
    Exclude,
    /// The largest layer accepted, in texels.
    MaxTexels,
    /// The vertex total a scene's budgets are chosen for.
    VertexTotal,
    /// The scene's export folder.
    Export,
    /// The scene's web page report folder.
    Report,
    /// The camera sample whose frame is dumped.
    DumpFrame,
    /// A sprite sheet's regions file.
    Regions,
    /// Finding a sprite sheet's regions from its alpha.
    FindRegions,
    /// Replacing an existing file of found regions.
    Force,
    /// Writing a mesh per animation frame as well.
    PerFrame,
    /// The region of a sheet a mesh is checked for.
    Region,
    /// The least alpha of a visible texel.
    VisibleMin,
}

impl Setting {
    /// The setting's key, as the library (and its files) name it.
    pub fn key(self) -> &'static str {
        match self {
            Setting::Out => "out",
            Setting::Texture => "texture",
            Setting::Preview => "preview",
            Setting::Format => "format",
            Setting::MipLevels => "mip_levels",
            Setting::VertexFormat => "vertex_format",
            Setting::Jobs => "jobs",
            Setting::LockWait => "lock_wait",
            Setting::Include => "include",
            Setting::Exclude => "exclude",
            Setting::MaxTexels => "max_texels",
            Setting::VertexTotal => "vertex_total",
            Setting::Export => "export",
            Setting::Report => "report",
            Setting::DumpFrame => "dump_frame",
            Setting::Regions => "regions",
            Setting::FindRegions => "find_regions",
            Setting::Force => "force",
            Setting::PerFrame => "per_frame",
            Setting::Region => "region",
            Setting::VisibleMin => "visible_min",
        }
    }

    /// The setting given a value: `` `key` = value ``, or with a front
    /// end's spelling, e.g. `--mip-levels 2`.
    pub fn given(self, value: impl std::fmt::Display) -> String {
        match SPELLING.get() {
            Some(spell) => format!("{} {value}", spell(self)),
            None => format!("`{}` = {value}", self.key()),
        }
    }
}

impl std::fmt::Display for Setting {
    /// The front end's spelling when one is installed, else `` `key` ``.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match SPELLING.get() {
            Some(spell) => f.write_str(spell(*self)),
            None => write!(f, "`{}`", self.key()),
        }
    }
}

static SPELLING: std::sync::OnceLock<fn(Setting) -> &'static str> = std::sync::OnceLock::new();

/// Installs a front end's spelling of the settings in messages (the
/// command line: `Setting::Out` → `--out`). Once per process; a second
/// call is ignored.
pub fn spell_settings(spell: fn(Setting) -> &'static str) {
    let _ = SPELLING.set(spell);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_library_names_settings_by_key() {
        // no front end installs a spelling in the library's tests
        assert_eq!(Setting::MipLevels.to_string(), "`mip_levels`");
        assert_eq!(Setting::VertexTotal.given(12), "`vertex_total` = 12");
    }
}
