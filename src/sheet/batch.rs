//! Sheets in a batch: a PNG of a `cut` batch (a folder searched, or files
//! given) with a sibling `<stem>.regions.json` is a sprite sheet, cut by
//! its regions ([`super::run::run_sheet`], one mesh per region) instead of
//! as one layer.
//!
//! [`take_sheets`] takes those jobs out of a batch's [`Plan`] and gives a
//! [`SheetRequest`] for each: the sheet's outputs go where its layer's
//! would (`OUT/<folder>/<stem>/<name>.mesh.json` for `IN/<folder>/<stem>.png`),
//! with the settings file that applied to it, its patterns matched against
//! `<folder>/<stem>/<name>`. What a sheet of a batch does not get (yet):
//! the manifest's incremental reruns (its outputs are rewritten only when
//! their bytes change, but every region is cut each run), previews, and a
//! shipped texture.

use super::run::{RegionSource, SheetRequest};
use crate::batch::{Plan, Request};
use crate::io::ImageLimits;
use std::path::{Path, PathBuf};

/// The regions file of the sheet `png`: `<stem>.regions.json` beside it,
/// when that is a file.
pub fn regions_beside(png: &Path) -> Option<PathBuf> {
    let stem = png.file_stem()?.to_string_lossy().into_owned();
    let file = png.with_file_name(format!("{stem}.regions.json"));
    file.is_file().then_some(file)
}

/// Takes out of `plan` every job whose PNG has a regions file beside it
/// ([`regions_beside`]) and returns the sheet runs that replace them, in
/// plan order. Jobs cut against a shipped texture and jobs that clash with
/// an earlier one stay in the plan (the batch reports them).
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
        if job.texture.is_some() || job.clash.is_some() {
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
        });
        false
    });
    sheets
}
