//! The one gate out: an output folder that every command writes through
//! (`batch`, `scene`, `scene --report`, `scene --export`, `sweep --csv`,
//! the glTF writers).
//!
//! Invariants of an [`OutputFolder`]: it never writes over one of the
//! inputs it was given (the file is refused, naming it, before anything of
//! the write happens); every file is written atomically (a temporary file
//! beside it, synced, renamed over it) and a file that already holds the
//! same bytes is left untouched, time included ([`OutputFolder::write`]);
//! a group of files is committed together ([`OutputFolder::commit`]: all
//! replaced or, on an error, none); [`OutputFolder::written`] lists every
//! file written through it, in the order written, and nothing else.
//!
//! A group commit writes every file to `.<name>.underdraw-new` (synced),
//! and only when all are written renames them into place, one after
//! another. Before the renames, each destination that exists is kept as
//! `.<name>.underdraw-old` (a hard link, or a copy where links are not
//! supported); when a rename fails, the ones done are undone from those, so
//! an error leaves the group's old files (or none) and no temporary file.
//! What it does not guarantee: a process killed between two renames leaves
//! some files new and some old (plus the `.underdraw-new` / `-old` files of
//! the others); the batch finds those on its next run through its manifest,
//! and the next commit of the group removes the leftovers first. Each file
//! on its own is always whole.

use super::write_if_changed;
use crate::error::FileError;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

/// A file's name (a path relative to the output folder, `/`-separated
/// subfolders allowed) and its bytes: what export functions return and
/// the folder writes.
pub type NamedBytes = (String, Vec<u8>);

/// An output folder; see the module documentation for its invariants.
#[derive(Debug)]
pub struct OutputFolder {
    dir: PathBuf,
    inputs: Vec<PathBuf>,
    refusal: (String, String),
    written: Vec<PathBuf>,
}

impl OutputFolder {
    /// The folder `dir` (created when missing: `hint` says what to do when
    /// it cannot be, `what` names it, such as "output folder"), refusing to
    /// write over any of `inputs`.
    pub fn create(
        dir: &Path,
        inputs: Vec<PathBuf>,
        what: &str,
        hint: &str,
    ) -> Result<OutputFolder, FileError> {
        fs::create_dir_all(dir).map_err(|e| {
            FileError::new(dir, format!("the {what} cannot be created ({e})"), hint)
        })?;
        Ok(OutputFolder::open(dir, inputs))
    }

    /// The folder `dir`, assumed to exist, refusing to write over any of
    /// `inputs`.
    pub fn open(dir: &Path, inputs: Vec<PathBuf>) -> OutputFolder {
        OutputFolder {
            dir: dir.to_path_buf(),
            inputs,
            refusal: (
                "is one of the inputs and would be overwritten".into(),
                "choose another output folder".into(),
            ),
            written: Vec::new(),
        }
    }

    /// The error for a file that would overwrite an input: `what` is said
    /// of the file (e.g. "is one of the scene's inputs and would be
    /// overwritten"), `hint` what to do.
    pub fn with_refusal(mut self, what: &str, hint: &str) -> OutputFolder {
        self.refusal = (what.into(), hint.into());
        self
    }

    /// The folder's path.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Where `name` is written.
    pub fn path(&self, name: &str) -> PathBuf {
        self.dir.join(name)
    }

    /// Checks that files can be created in the folder, before anything is
    /// written: creates an empty `.underdraw-probe-<process id>` and removes
    /// it. Fails as "the `what` cannot be written to", with `hint`.
    pub fn probe(&self, what: &str, hint: &str) -> Result<(), FileError> {
        let probe = self
            .dir
            .join(format!(".underdraw-probe-{}", std::process::id()));
        fs::write(&probe, b"").map_err(|e| {
            FileError::new(
                &self.dir,
                format!("the {what} cannot be written to ({e})"),
                hint,
            )
        })?;
        let _ = fs::remove_file(&probe);
        Ok(())
    }

    /// Every file written through this folder, in the order written.
    pub fn written(&self) -> &[PathBuf] {
        &self.written
    }

    /// Fails, naming the file, when writing `name` would overwrite one of
    /// the inputs.
    pub fn refuse_inputs(&self, name: &str) -> Result<(), FileError> {
        let dest = self.path(name);
        if let Ok(d) = dest.canonicalize() {
            if self
                .inputs
                .iter()
                .any(|i| i.canonicalize().is_ok_and(|i| i == d))
            {
                return Err(FileError::new(&dest, &self.refusal.0, &self.refusal.1));
            }
        }
        Ok(())
    }

    /// Writes one file atomically; one that already holds `bytes` is left
    /// untouched (its time too), and is listed as written all the same.
    ///
    /// ```
    /// use underdraw::io::OutputFolder;
    /// let dir = std::env::temp_dir().join(format!("underdraw-doc-write-{}", std::process::id()));
    /// let input = dir.join("layer.png");
    /// let mut out = OutputFolder::create(&dir, vec![input.clone()], "output folder", "choose another").unwrap();
    /// std::fs::write(&input, b"the art").unwrap();
    /// out.write("layer.mesh.json", b"{}").unwrap();
    /// assert_eq!(std::fs::read(dir.join("layer.mesh.json")).unwrap(), b"{}");
    /// // an input is never written over: refused, naming it, and left as it was
    /// let e = out.write("layer.png", b"a mesh").unwrap_err();
    /// assert!(e.to_string().contains("layer.png"));
    /// assert_eq!(std::fs::read(&input).unwrap(), b"the art");
    /// assert_eq!(out.written(), [dir.join("layer.mesh.json")]);
    /// std::fs::remove_dir_all(&dir).unwrap();
    /// ```
    pub fn write(&mut self, name: &str, bytes: &[u8]) -> Result<(), FileError> {
        self.refuse_inputs(name)?;
        let dest = self.path(name);
        write_if_changed(&dest, bytes)?;
        self.written.push(dest);
        Ok(())
    }

    /// Writes every file of `files` (see [`OutputFolder::write`]), in order.
    pub fn write_all(&mut self, files: &[NamedBytes]) -> Result<(), FileError> {
        for (name, bytes) in files {
            self.write(name, bytes)?;
        }
        Ok(())
    }

    /// Writes `files` as one group: either all are replaced or, on an
    /// error, none is (see the module documentation for an interruption).
    ///
    /// ```
    /// use underdraw::io::OutputFolder;
    /// let dir = std::env::temp_dir().join(format!("underdraw-doc-commit-{}", std::process::id()));
    /// let mut out = OutputFolder::create(&dir, Vec::new(), "output folder", "choose another").unwrap();
    /// out.commit(&[("a.gltf".into(), b"{}".to_vec()), ("a.bin".into(), vec![0; 8])]).unwrap();
    /// assert_eq!(std::fs::read(dir.join("a.bin")).unwrap(), [0; 8]);
    /// // a group with a file that cannot be written (a folder stands where
    /// // `b.bin` should go) replaces none of them: `a.gltf` keeps its bytes
    /// std::fs::create_dir_all(dir.join("b.bin")).unwrap();
    /// let group = [("a.gltf".to_string(), b"new".to_vec()), ("b.bin".to_string(), vec![1])];
    /// assert!(out.commit(&group).is_err());
    /// assert_eq!(std::fs::read(dir.join("a.gltf")).unwrap(), b"{}");
    /// assert_eq!(out.written(), [dir.join("a.gltf"), dir.join("a.bin")]);
    /// std::fs::remove_dir_all(&dir).unwrap();
    /// ```
    pub fn commit(&mut self, files: &[NamedBytes]) -> Result<(), FileError> {
        for (name, _) in files {
            self.refuse_inputs(name)?;
        }
        let dests: Vec<(PathBuf, &[u8])> = files
            .iter()
            .map(|(n, b)| (self.path(n), b.as_slice()))
            .collect();
        commit_files(&dests)?;
        self.written.extend(dests.into_iter().map(|(d, _)| d));
        Ok(())
    }

    /// [`OutputFolder::commit`] of the files of `files` whose bytes differ
    /// from what is there; a file already holding its bytes is left
    /// untouched (its time too), and every file of `files` is listed as
    /// written, in order. For outputs that are rewritten on every run (no
    /// manifest), so an unchanged one makes an engine reimport nothing.
    pub fn commit_changed(&mut self, files: &[NamedBytes]) -> Result<(), FileError> {
        for (name, _) in files {
            self.refuse_inputs(name)?;
        }
        let changed: Vec<NamedBytes> = files
            .iter()
            .filter(|(n, b)| !super::same_bytes(&self.path(n), b))
            .cloned()
            .collect();
        let dests: Vec<(PathBuf, &[u8])> = changed
            .iter()
            .map(|(n, b)| (self.path(n), b.as_slice()))
            .collect();
        commit_files(&dests)?;
        self.written
            .extend(files.iter().map(|(n, _)| self.dir.join(n)));
        Ok(())
    }
}

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

fn commit_files(files: &[(PathBuf, &[u8])]) -> Result<(), FileError> {
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

/// Syncs the folders of `files`, so the renames are on disk before a
/// manifest records them (best effort: not every platform can open a folder).
fn sync_folders(files: &[(PathBuf, &[u8])]) {
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

    fn named(files: &[(&str, &[u8])]) -> Vec<NamedBytes> {
        files
            .iter()
            .map(|(n, b)| (n.to_string(), b.to_vec()))
            .collect()
    }

    #[test]
    fn all_files_replace_their_old_versions_and_nothing_else_is_left() {
        let d = folder("ok");
        fs::write(d.join("a.json"), b"old a").unwrap();
        fs::write(staged_path(&d.join("b.bin")), b"a leftover").unwrap();
        let mut out = OutputFolder::open(&d, Vec::new());
        out.commit(&named(&[("a.json", b"new a"), ("b.bin", b"new b")]))
            .unwrap();
        assert_eq!(fs::read(d.join("a.json")).unwrap(), b"new a");
        assert_eq!(fs::read(d.join("b.bin")).unwrap(), b"new b");
        assert_eq!(names(&d), ["a.json", "b.bin"]);
        assert_eq!(out.written(), [d.join("a.json"), d.join("b.bin")]);
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn commit_changed_leaves_equal_files_untouched_and_lists_all() {
        let d = folder("changed");
        fs::write(d.join("same.json"), b"same").unwrap();
        fs::write(d.join("old.bin"), b"old").unwrap();
        let t0 = fs::metadata(d.join("same.json"))
            .unwrap()
            .modified()
            .unwrap();
        std::thread::sleep(std::time::Duration::from_millis(20));
        let mut out = OutputFolder::open(&d, vec![d.join("in.png")]);
        out.commit_changed(&named(&[("same.json", b"same"), ("old.bin", b"new")]))
            .unwrap();
        let t1 = fs::metadata(d.join("same.json"))
            .unwrap()
            .modified()
            .unwrap();
        assert_eq!(t0, t1, "an equal file is not rewritten");
        assert_eq!(fs::read(d.join("old.bin")).unwrap(), b"new");
        assert_eq!(out.written(), [d.join("same.json"), d.join("old.bin")]);
        fs::write(d.join("in.png"), b"art").unwrap();
        let e = out
            .commit_changed(&named(&[("in.png", b"art")]))
            .unwrap_err()
            .to_string();
        assert!(e.contains("in.png"), "{e}");
        assert_eq!(names(&d), ["in.png", "old.bin", "same.json"]);
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn a_folder_in_the_way_replaces_nothing_and_leaves_no_temporary_file() {
        let d = folder("obstacle");
        fs::write(d.join("a.json"), b"old a").unwrap();
        fs::create_dir(d.join("b.bin")).unwrap();
        let mut out = OutputFolder::open(&d, Vec::new());
        let files = named(&[
            ("a.json", b"new a"),
            ("b.bin", b"new b"),
            ("c.png", b"new c"),
        ]);
        let e = out.commit(&files).unwrap_err().to_string();
        assert!(e.contains("b.bin") && e.contains("is a folder"), "{e}");
        assert_eq!(fs::read(d.join("a.json")).unwrap(), b"old a");
        assert_eq!(names(&d), ["a.json", "b.bin"]);
        assert!(out.written().is_empty());
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn an_input_is_never_written_over_and_not_listed() {
        let d = folder("input");
        fs::write(d.join("layer.png"), b"the art").unwrap();
        let mut out = OutputFolder::open(&d, vec![d.join("layer.png")])
            .with_refusal("is an input", "choose another folder");
        let e = out.write("layer.png", b"not art").unwrap_err().to_string();
        assert!(e.contains("layer.png") && e.contains("is an input"), "{e}");
        let e = out
            .commit(&named(&[("a.json", b"a"), ("layer.png", b"x")]))
            .unwrap_err()
            .to_string();
        assert!(e.contains("is an input"), "{e}");
        assert_eq!(fs::read(d.join("layer.png")).unwrap(), b"the art");
        assert_eq!(names(&d), ["layer.png"]);
        out.write("sub.json", b"s").unwrap();
        assert_eq!(out.written(), [d.join("sub.json")]);
        fs::remove_dir_all(&d).unwrap();
    }
}
