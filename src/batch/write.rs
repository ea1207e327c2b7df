//! Writing one layer's outputs all together.
//!
//! [`commit`] writes every file of a layer to a temporary file beside its
//! destination (`.<name>.underdraw-new`, synced), and only when all are
//! written renames them into place, one after another. Before the renames,
//! each destination that exists is kept as `.<name>.underdraw-old` (a hard
//! link, or a copy where links are not supported); when a rename fails, the
//! ones done are undone from those, so an error leaves the layer's old
//! outputs (or none) and no temporary file.
//!
//! What it does not guarantee: a process killed between two renames leaves
//! some outputs new and some old (plus the `.underdraw-new` / `-old` files
//! of the others). The batch updates its manifest only after all renames,
//! so the next run sees hashes that differ from the manifest, cuts the
//! layer again, and removes those leftovers first. A reader looking at the
//! folder during the renames can see such a mix; each file on its own is
//! always whole.

use crate::error::FileError;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

/// The temporary file a new output is written to before it is renamed.
pub fn staged_path(dest: &Path) -> PathBuf {
    beside(dest, "underdraw-new")
}

/// Where the previous version of an output is kept during the renames.
pub fn backup_path(dest: &Path) -> PathBuf {
    beside(dest, "underdraw-old")
}

fn beside(dest: &Path, tag: &str) -> PathBuf {
    let name = dest
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    dest.with_file_name(format!(".{name}.{tag}"))
}

fn io_error(path: &Path, what: &str, e: std::io::Error) -> FileError {
    FileError::new(
        path,
        format!("{what} ({e})"),
        "check that the output folder is writable and has space",
    )
}

/// Writes `files` (destination, bytes) so that either all are replaced or,
/// on an error, none is (see the module doc for an interruption).
pub fn commit(files: &[(PathBuf, Vec<u8>)]) -> Result<(), FileError> {
    for (dest, _) in files {
        // leftovers of an interrupted run
        let _ = fs::remove_file(staged_path(dest));
        let _ = fs::remove_file(backup_path(dest));
    }
    let mut staged: Vec<PathBuf> = Vec::new();
    let mut backups: Vec<Option<PathBuf>> = Vec::new();
    let clean = |staged: &[PathBuf], backups: &[Option<PathBuf>]| {
        for p in staged.iter().chain(backups.iter().flatten()) {
            let _ = fs::remove_file(p);
        }
    };
    for (dest, bytes) in files {
        if let Err(e) = stage(dest, bytes, &mut staged) {
            clean(&staged, &backups);
            return Err(e);
        }
    }
    for (dest, _) in files {
        match keep_old(dest) {
            Ok(b) => backups.push(b),
            Err(e) => {
                clean(&staged, &backups);
                return Err(e);
            }
        }
    }
    for (k, (dest, _)) in files.iter().enumerate() {
        if let Err(e) = fs::rename(&staged[k], dest) {
            // undo the renames done, newest first
            for i in (0..k).rev() {
                let back = match &backups[i] {
                    Some(old) => fs::rename(old, &files[i].0),
                    None => fs::remove_file(&files[i].0),
                };
                let _ = back;
            }
            clean(&staged[k..], &backups);
            return Err(io_error(dest, "cannot be replaced", e));
        }
    }
    clean(&[], &backups);
    sync_folders(files);
    Ok(())
}

fn stage(dest: &Path, bytes: &[u8], staged: &mut Vec<PathBuf>) -> Result<(), FileError> {
    if fs::symlink_metadata(dest).is_ok_and(|m| m.is_dir()) {
        return Err(FileError::new(
            dest,
            "is a folder, where an output file should be written",
            "move or remove that folder, then run again",
        ));
    }
    let tmp = staged_path(dest);
    let mut f = fs::File::create(&tmp).map_err(|e| io_error(dest, "cannot be written", e))?;
    staged.push(tmp);
    f.write_all(bytes)
        .and_then(|_| f.sync_all())
        .map_err(|e| io_error(dest, "cannot be written", e))
}

/// Keeps the current `dest`, if any, as its backup.
fn keep_old(dest: &Path) -> Result<Option<PathBuf>, FileError> {
    if fs::symlink_metadata(dest).is_err() {
        return Ok(None);
    }
    let old = backup_path(dest);
    if fs::hard_link(dest, &old).is_err() {
        fs::copy(dest, &old).map_err(|e| io_error(dest, "cannot be kept while replaced", e))?;
    }
    Ok(Some(old))
}

/// Syncs the folders of `files`, so the renames are on disk before the
/// manifest records them (best effort: not every platform can open a folder).
fn sync_folders(files: &[(PathBuf, Vec<u8>)]) {
    let mut dirs: Vec<&Path> = files.iter().filter_map(|(d, _)| d.parent()).collect();
    dirs.dedup();
    for d in dirs {
        if let Ok(f) = fs::File::open(d) {
            let _ = f.sync_all();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn folder(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("underdraw-write-{name}-{}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        fs::create_dir_all(&d).unwrap();
        d
    }

    fn names(d: &Path) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(d)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn all_files_replace_their_old_versions_and_nothing_else_is_left() {
        let d = folder("ok");
        fs::write(d.join("a.json"), b"old a").unwrap();
        fs::write(staged_path(&d.join("b.bin")), b"a leftover").unwrap();
        let files = vec![
            (d.join("a.json"), b"new a".to_vec()),
            (d.join("b.bin"), b"new b".to_vec()),
        ];
        commit(&files).unwrap();
        assert_eq!(fs::read(d.join("a.json")).unwrap(), b"new a");
        assert_eq!(fs::read(d.join("b.bin")).unwrap(), b"new b");
        assert_eq!(names(&d), ["a.json", "b.bin"]);
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn a_folder_in_the_way_replaces_nothing_and_leaves_no_temporary_file() {
        let d = folder("obstacle");
        fs::write(d.join("a.json"), b"old a").unwrap();
        fs::create_dir(d.join("b.bin")).unwrap();
        let files = vec![
            (d.join("a.json"), b"new a".to_vec()),
            (d.join("b.bin"), b"new b".to_vec()),
            (d.join("c.png"), b"new c".to_vec()),
        ];
        let e = commit(&files).unwrap_err().to_string();
        assert!(e.contains("b.bin") && e.contains("is a folder"), "{e}");
        assert_eq!(fs::read(d.join("a.json")).unwrap(), b"old a");
        assert_eq!(names(&d), ["a.json", "b.bin"]);
        fs::remove_dir_all(&d).unwrap();
    }
}
