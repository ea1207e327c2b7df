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
