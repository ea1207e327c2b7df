//! One run at a time per output folder: `OUT/underdraw.lock`.
//!
//! Two batches started at once into one output folder (two build steps)
//! would interleave their outputs and manifest updates. [`OutputLock`]
//! takes an exclusive lock of the operating system on the file
//! `OUT/underdraw.lock` (`flock` on Unix, `LockFileEx` on Windows, through
//! [`std::fs::File::try_lock`]) and writes into it who holds it
//! ([`Holder`]: process id, host, start time), for the message the other
//! run prints. The other run polls until the lock is free or its wait is
//! over, then refuses, naming the holder; it writes nothing.
//!
//! Invariants: the operating system's lock decides, not the file's text:
//! it is released when the holding process ends, however it ends, so a
//! lock file left by a process that died is free and is taken over (with
//! a note naming the old holder); the file is removed on release while
//! still locked, and a run that locked a file another run had just
//! removed notices (the path no longer names the file it locked) and tries
//! again, so two runs never both hold the lock.

use crate::error::{FileError, Setting};
use serde::{Deserialize, Serialize};
use std::fs::{self, File};
use std::io::{Read, Seek, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

/// The lock file's name in the output folder.
pub const FILE_NAME: &str = "underdraw.lock";

/// How often a waiting run looks at the lock again.
const POLL: Duration = Duration::from_millis(100);

/// Who holds the lock: the lock file's content (JSON).
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Holder {
    /// The process id.
    pub pid: u32,
    /// The machine's host name (`?` when unknown).
    pub host: String,
    /// When it took the lock, UTC, `YYYY-MM-DDThh:mm:ssZ`.
    pub started: String,
}

impl Holder {
    /// This process, now.
    pub fn me() -> Holder {
        let secs = SystemTime::now()
            .duration_since(UNIX_EPOCH)
            .map(|d| d.as_secs())
            .unwrap_or(0);
        Holder {
            pid: std::process::id(),
            host: host_name(),
            started: utc(secs),
        }
    }
}

impl std::fmt::Display for Holder {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "process {} on {}, started {}",
            self.pid, self.host, self.started
        )
    }
}

/// The host name, from the environment or the kernel (best effort).
fn host_name() -> String {
    ["/proc/sys/kernel/hostname", "/etc/hostname"]
        .iter()
        .find_map(|p| fs::read_to_string(p).ok())
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .or_else(|| std::env::var("HOSTNAME").ok())
        .or_else(|| std::env::var("COMPUTERNAME").ok())
        .unwrap_or_else(|| "?".into())
}

/// Seconds since the Unix epoch as a UTC date and time (the proleptic
/// Gregorian calendar; days to civil date by the classical era-of-400-years
/// method, from memory).
pub fn utc(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        rem / 60 % 60,
        rem % 60
    )
}

/// The lock of an output folder, held until dropped (which removes the
/// lock file).
#[derive(Debug)]
pub struct OutputLock {
    file: File,
    path: PathBuf,
    /// The holder recorded in a lock file this run took over from a process
    /// that no longer held it, if any.
    pub took_over: Option<String>,
    /// How long this run waited for the lock.
    pub waited: Duration,
}

/// Whether `path` still names the file open as `file`.
fn still_named(file: &File, path: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        match (file.metadata(), fs::metadata(path)) {
            (Ok(a), Ok(b)) => a.dev() == b.dev() && a.ino() == b.ino(),
            _ => false,
        }
    }
    #[cfg(not(unix))]
    {
        let _ = file;
        path.exists()
    }
}

impl OutputLock {
    /// Takes the lock of the folder `out` (which must exist), waiting up to
    /// `wait` for a run that holds it. Errors: the lock file cannot be
    /// created, or another run still holds it after `wait` (the error names
    /// it).
    pub fn acquire(out: &Path, wait: Duration) -> Result<OutputLock, FileError> {
        let path = out.join(FILE_NAME);
        let start = Instant::now();
        let io = |e: std::io::Error| {
            FileError::new(
                &path,
                format!("the lock file cannot be written ({e})"),
                "check that the output folder is writable",
            )
        };
        loop {
            let mut file = fs::OpenOptions::new()
                .read(true)
                .write(true)
                .create(true)
                .truncate(false)
                .open(&path)
                .map_err(io)?;
            match file.try_lock() {
                Ok(()) => {}
                Err(fs::TryLockError::WouldBlock) => {
                    if start.elapsed() >= wait {
                        let mut text = String::new();
                        let _ = file.read_to_string(&mut text);
                        let who = serde_json::from_str::<Holder>(&text)
                            .map(|h| h.to_string())
                            .unwrap_or_else(|_| "another process".into());
                        return Err(FileError::new(
                            &path,
                            format!(
                                "another underdraw run is writing this output folder ({who}){}; two runs into one folder would mix their outputs, so this one wrote nothing",
                                if wait.is_zero() {
                                    String::new()
                                } else {
                                    format!(", still after waiting {} s", wait.as_secs_f64().round())
                                }
                            ),
                            format!("run again when it has finished (or give a longer {}), or cut into another {} folder", Setting::LockWait, Setting::Out),
                        ));
                    }
                    drop(file);
                    std::thread::sleep(POLL);
                    continue;
                }
                Err(fs::TryLockError::Error(e)) => return Err(io(e)),
            }
            if !still_named(&file, &path) {
                // the holder removed it as we opened it: try again
                continue;
            }
            let mut old = String::new();
            let _ = file.read_to_string(&mut old);
            let took_over = serde_json::from_str::<Holder>(&old)
                .ok()
                .map(|h| h.to_string())
                .or_else(|| (!old.trim().is_empty()).then(|| "an unreadable holder".into()));
            let mut text = serde_json::to_vec(&Holder::me()).expect("a holder serializes");
            text.push(b'\n');
            file.set_len(0)
                .and_then(|_| file.rewind())
                .and_then(|_| file.write_all(&text))
                .and_then(|_| file.sync_all())
                .map_err(io)?;
            return Ok(OutputLock {
                file,
                path,
                took_over,
                waited: start.elapsed(),
            });
        }
    }

    /// The lock file's path.
    pub fn path(&self) -> &Path {
        &self.path
    }
}

impl Drop for OutputLock {
    fn drop(&mut self) {
        // removed while still locked; a run waiting on this file notices
        // that the path no longer names it
        let _ = fs::remove_file(&self.path);
        let _ = self.file.unlock();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn utc_dates_match_known_instants() {
        // the Unix epoch; 2000-02-29 (a leap day of a century divisible by
        // 400); 2038-01-19T03:14:07Z, 2^31 - 1 seconds (the 32-bit time_t
        // limit, common practice, no source)
        assert_eq!(utc(0), "1970-01-01T00:00:00Z");
        assert_eq!(utc(951_782_400), "2000-02-29T00:00:00Z");
        assert_eq!(utc(2_147_483_647), "2038-01-19T03:14:07Z");
    }

    #[test]
    fn a_second_lock_waits_then_refuses_and_a_dead_holders_file_is_taken_over() {
        let d = std::env::temp_dir().join(format!("underdraw-lock-{}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        fs::create_dir_all(&d).unwrap();
        let first = OutputLock::acquire(&d, Duration::ZERO).unwrap();
        assert_eq!(first.took_over, None);
        let e = OutputLock::acquire(&d, Duration::from_millis(250)).unwrap_err();
        assert!(
            e.problem
                .contains(&format!("process {}", std::process::id())),
            "{e}"
        );
        drop(first);
        assert!(!d.join(FILE_NAME).exists());
        // a file left by a holder that no longer holds the lock
        let gone = Holder {
            pid: 4_000_000,
            host: "elsewhere".into(),
            started: utc(0),
        };
        fs::write(d.join(FILE_NAME), serde_json::to_vec(&gone).unwrap()).unwrap();
        let next = OutputLock::acquire(&d, Duration::ZERO).unwrap();
        assert_eq!(next.took_over, Some(gone.to_string()));
        let now: Holder = serde_json::from_slice(&fs::read(d.join(FILE_NAME)).unwrap()).unwrap();
        assert_eq!(now.pid, std::process::id());
        drop(next);
        fs::remove_dir_all(&d).unwrap();
    }
}
