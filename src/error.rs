//! The error type: which file, what is wrong with it, and what to do.

use std::path::{Path, PathBuf};

/// An error about one file, phrased for the user.
#[derive(Debug, thiserror::Error)]
#[error("{}: {problem}\n  hint: {hint}", path.display())]
pub struct FileError {
    pub path: PathBuf,
    pub problem: String,
    pub hint: String,
}

impl FileError {
    pub fn new(path: &Path, problem: impl Into<String>, hint: impl Into<String>) -> FileError {
        FileError {
            path: path.to_path_buf(),
            problem: problem.into(),
            hint: hint.into(),
        }
    }
}
