//! Sheets in a batch: a PNG of a `cut` batch (a folder searched, or files
//! given) with a sibling `<stem>.regions.json` is a sprite sheet, cut by
//! its regions ([`super::run::run_sheet`], one mesh per region) instead of
//! as one layer.
//!
//! [`take_sheets`] takes those jobs out of a batch's [`Plan`] and gives a
//! [`SheetRequest`] for each: the sheet's outputs go where its layer's
//! would (`OUT/<folder>/<stem>/<name>.mesh.json` for `IN/<folder>/<stem>.png`),
//! with the settings file that applied to it, its patterns matched against
//! `<folder>/<stem>/<name>`, and it is recorded in the batch's manifest by
//! the key its layer would have (`<folder>/<stem>`, in the manifest's
//! `sheets`), so a rerun skips a sheet whose bytes, regions file and
//! settings did not change ([`run_sheets`]).

use super::run::{run_sheet_since, RegionSource, SheetReport, SheetRequest};
use crate::batch::lock::OutputLock;
use crate::batch::manifest::Manifest;
use crate::batch::{Plan, Request};
use crate::error::{FileError, Setting};
use crate::io::{ImageLimits, OutputFolder};
use std::path::{Path, PathBuf};
use std::time::Duration;

/// The regions file of the sheet `png`: `<stem>.regions.json` beside it,
/// when that is a file.
pub fn regions_beside(png: &Path) -> Option<PathBuf> {
    let stem = png.file_stem()?.to_string_lossy().into_owned();
    let file = png.with_file_name(format!("{stem}.regions.json"));
    file.is_file().then_some(file)
}

/// Takes out of `plan` every job whose PNG has a regions file beside it
/// ([`regions_beside`]) and returns the sheet runs that replace them, in
/// plan order (a job's shipped texture goes with it: the sheet is cut
/// against it). Jobs that clash with an earlier one stay in the plan (the
/// batch reports them).
pub fn take_sheets(
    plan: &mut Plan,
    request: &Request,
    per_frame: bool,
    limits: ImageLimits,
) -> Vec<SheetRequest> {
    let mut sheets = Vec::new();
    let out = plan.out.clone();
    let outputs = plan.outputs;
    plan.jobs.retain(|job| {
        if job.clash.is_some() {
            return true;
        }
        let Some(regions) = regions_beside(&job.input) else {
            return true;
        };
        let folder = job
            .key
            .strip_suffix(job.stem.as_str())
            .expect("a job's key ends with its stem");
        let pattern_folder = job
            .relative
            .rsplit_once('/')
            .map(|(f, _)| format!("{f}/"))
            .unwrap_or_default();
        sheets.push(SheetRequest {
            sheet: job.input.clone(),
            regions: RegionSource::File(regions),
            out: out.join(folder),
            settings_file: job.settings_file.clone(),
            match_prefix: pattern_folder,
            base: request.base,
            overrides: request.overrides,
            outputs,
            per_frame,
            limits,
            key: Some(job.key.clone()),
            texture: job.texture.clone(),
        });
        false
    });
    sheets
}

/// What [`run_sheets`] did.
#[derive(Debug)]
pub struct SheetsRun {
    /// Per sheet, in the order given: its report, or why it stopped.
    pub sheets: Vec<Result<SheetReport, FileError>>,
    /// Remarks (a manifest that could not be used).
    pub notes: Vec<String>,
    /// The manifest could not be written.
    pub manifest_error: Option<FileError>,
}

/// Runs `sheets` whose outputs lie in the output folder `out` (each
/// request's own `out` is `out` or a folder inside it), holding `out`'s
/// lock: a sheet with a manifest key is skipped when its entry in
/// `OUT/underdraw-manifest.json` shows it unchanged (unless `force`), and
/// its entry is recorded when all its regions were cut, removed when one
/// failed (so the next run cuts it again). The manifest's other entries are
/// kept. Errors (nothing is cut): the output folder cannot be created or
/// written, or another run holds its lock after `lock_wait`.
pub fn run_sheets(
    sheets: &[SheetRequest],
    out: &Path,
    force: bool,
    lock_wait: Duration,
) -> Result<SheetsRun, FileError> {
    crate::batch::prepare_out(out)?;
    let lock = OutputLock::acquire(out, lock_wait)?;
    let mut notes = Vec::new();
    let keyed = sheets.iter().any(|s| s.key.is_some());
    let (mut manifest, existed) = match Manifest::load(out) {
        Ok(Some(m)) => (m, true),
        Ok(None) => (Manifest::new(), false),
        Err(e) if keyed => {
            notes.push(format!("{e}; every sheet is cut again and it is rewritten"));
            (Manifest::new(), true)
        }
        // a run without keyed sheets leaves a manifest it cannot read alone
        Err(_) => (Manifest::new(), false),
    };
    let before = manifest.clone();
    let mut reports = Vec::with_capacity(sheets.len());
    for req in sheets {
        let previous = match (&req.key, force) {
            (Some(k), false) => manifest.sheets.get(k),
            _ => None,
        };
        let r = crate::batch::catch_layer(&req.sheet, || run_sheet_since(req, previous));
        if let Some(k) = &req.key {
            match r.as_ref().ok().and_then(|r| r.entry.clone()) {
                Some(e) => manifest.sheets.insert(k.clone(), e),
                None => manifest.sheets.remove(k),
            };
        }
        reports.push(r);
    }
    let mut manifest_error = None;
    if keyed && (existed || !manifest.sheets.is_empty()) && manifest != before {
        let inputs = sheets
            .iter()
            .flat_map(|s| {
                let regions = match &s.regions {
                    RegionSource::File(p) => Some(p.clone()),
                    RegionSource::Find { .. } => None,
                };
                std::iter::once(s.sheet.clone())
                    .chain(regions)
                    .chain(s.settings_file.clone())
            })
            .collect();
        let mut folder = OutputFolder::open(out, inputs).with_refusal(
            "is one of the inputs and would be overwritten by the manifest",
            &format!("choose another {} folder", Setting::Out),
        );
        manifest_error = manifest.save(&mut folder).err();
    }
    drop(lock);
    Ok(SheetsRun {
        sheets: reports,
        notes,
        manifest_error,
    })
}
