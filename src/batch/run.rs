//! Running a plan: the layers on a thread pool, the manifest kept up to
//! date as they finish, one report per layer.
//!
//! Invariants: one run at a time per output folder (its lock, taken
//! before the manifest is read and released after it is written last); the
//! reports come in plan order whatever the number of
//! threads; a layer's manifest entry is inserted only after
//! [`super::layer`] committed all its outputs; the manifest is saved at
//! most once a second while layers finish and always at the end (when it
//! has entries or existed before), so an interrupted run keeps the entries
//! of the layers it finished.

use super::layer::{self, catch_layer};
use super::lock::OutputLock;
use super::manifest::{LayerResult, Manifest};
use super::{Job, Plan};
use crate::error::{FileError, Setting};
use crate::io::ImageLimits;
use serde::Serialize;
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// How to run a plan.
#[derive(Clone, Copy, Debug, Default)]
pub struct RunOptions {
    /// Threads (None: one per core).
    pub jobs: Option<usize>,
    /// Cut every layer, changed or not.
    pub force: bool,
    /// The largest layer accepted.
    pub limits: ImageLimits,
    /// How long to wait for another run that holds the output folder's
    /// lock ([`super::lock`]) before refusing.
    pub lock_wait: Duration,
}

/// What became of a layer.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Status {
    /// Cut and written.
    Cut,
    /// Skipped: nothing changed since the manifest's entry.
    Unchanged,
    /// Not cut: see the error.
    Failed,
}

/// One layer's outcome.
#[derive(Debug)]
pub struct LayerReport {
    /// The layer's path.
    pub input: PathBuf,
    /// What became of it.
    pub status: Status,
    /// Its numbers (cut or unchanged).
    pub result: Option<LayerResult>,
    /// Its output files (cut or unchanged).
    pub outputs: Vec<PathBuf>,
    /// Why it failed.
    pub error: Option<FileError>,
}

/// A batch's outcome.
#[derive(Debug)]
pub struct BatchReport {
    /// The layers, in plan order.
    pub layers: Vec<LayerReport>,
    /// Remarks about the batch (a manifest that could not be used).
    pub notes: Vec<String>,
    /// The manifest could not be written.
    pub manifest_error: Option<FileError>,
}

impl BatchReport {
    /// How many layers ended with `status`.
    pub fn count(&self, status: Status) -> usize {
        self.layers.iter().filter(|l| l.status == status).count()
    }
}

/// Checks that `out` can be created and written to.
pub fn prepare_out(out: &Path) -> Result<(), FileError> {
    let fail = |what: String| {
        FileError::new(
            out,
            what,
            format!(
                "choose a writable {} folder, or fix its permissions",
                Setting::Out
            ),
        )
    };
    std::fs::create_dir_all(out)
        .map_err(|e| fail(format!("the output folder cannot be created ({e})")))?;
    let probe = out.join(format!(".underdraw-probe-{}", std::process::id()));
    std::fs::write(&probe, b"")
        .map_err(|e| fail(format!("the output folder cannot be written to ({e})")))?;
    let _ = std::fs::remove_file(&probe);
    Ok(())
}

/// Runs `plan`: every layer on a pool of `opts.jobs` threads, calling
/// `done` as each finishes, holding the output folder's lock throughout.
/// Errors (nothing is cut): the output folder cannot be created or written,
/// another run holds its lock after `opts.lock_wait`, the thread pool
/// cannot start.
pub fn run(
    plan: &Plan,
    opts: &RunOptions,
    done: &(dyn Fn(&LayerReport) + Sync),
) -> Result<BatchReport, FileError> {
    use rayon::prelude::*;
    prepare_out(&plan.out)?;
    let lock = OutputLock::acquire(&plan.out, opts.lock_wait)?;
    let mut notes = Vec::new();
    if let Some(old) = &lock.took_over {
        notes.push(format!(
            "{}: took over the lock left by {old}, which no longer held it",
            lock.path().display()
        ));
    }
    if lock.waited >= Duration::from_millis(500) {
        notes.push(format!(
            "waited {:.1} s for another run writing {} to finish",
            lock.waited.as_secs_f64(),
            plan.out.display()
        ));
    }
    let (manifest, existed) = match Manifest::load(&plan.out) {
        Ok(Some(m)) => (m, true),
        Ok(None) => (Manifest::new(), false),
        Err(e) => {
            notes.push(format!("{e}; every layer is cut again and it is rewritten"));
            (Manifest::new(), true)
        }
    };
    let previous = manifest.layers.clone();
    let shared = Mutex::new((manifest, Instant::now(), None::<FileError>));
    let one = |j: &Job| -> LayerReport {
        let r = match &j.clash {
            Some(first) => Err(FileError::new(
                &j.input,
                format!(
                    "has the same name as {} and would overwrite its output files",
                    first.display()
                ),
                format!(
                    "rename one of them, or cut them into separate {} folders",
                    Setting::Out
                ),
            )),
            None => catch_layer(&j.input, || {
                layer::run_layer(
                    j,
                    &plan.out,
                    plan.outputs,
                    &opts.limits,
                    previous.get(&j.key),
                    opts.force,
                )
            }),
        };
        let report = match r {
            Ok(d) => {
                let outputs = d
                    .entry
                    .outputs
                    .iter()
                    .map(|o| plan.out.join(&o.path))
                    .collect();
                let result = Some(d.entry.result.clone());
                let mut g = shared.lock().unwrap_or_else(|p| p.into_inner());
                g.0.layers.insert(j.key.clone(), d.entry);
                if g.1.elapsed() > Duration::from_secs(1) {
                    g.2 = g.0.save(&plan.out).err().or(g.2.take());
                    g.1 = Instant::now();
                }
                drop(g);
                LayerReport {
                    input: j.input.clone(),
                    status: if d.cut {
                        Status::Cut
                    } else {
                        Status::Unchanged
                    },
                    result,
                    outputs,
                    error: None,
                }
            }
            Err(e) => LayerReport {
                input: j.input.clone(),
                status: Status::Failed,
                result: None,
                outputs: Vec::new(),
                error: Some(e),
            },
        };
        done(&report);
        report
    };
    let mut builder = rayon::ThreadPoolBuilder::new();
    if let Some(n) = opts.jobs {
        builder = builder.num_threads(n.max(1));
    }
    let pool = builder.build().map_err(|e| {
        FileError::new(
            &plan.out,
            format!("the worker threads cannot start ({e})"),
            format!("try a smaller {}", Setting::Jobs),
        )
    })?;
    let layers: Vec<LayerReport> = pool.install(|| plan.jobs.par_iter().map(one).collect());
    let (manifest, _, mut manifest_error) = shared.into_inner().unwrap_or_else(|p| p.into_inner());
    if existed || !manifest.layers.is_empty() {
        if let Err(e) = manifest.save(&plan.out) {
            manifest_error = Some(e);
        }
    }
    drop(lock);
    Ok(BatchReport {
        layers,
        notes,
        manifest_error,
    })
}
