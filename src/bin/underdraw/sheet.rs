//! `underdraw cut SHEET.png --regions FILE` / `--find-regions`: a sprite
//! sheet's regions, each cut as its own layer (the work is
//! `underdraw::sheet::run`; this checks the flags, calls it and prints).

use crate::{Failures, Line, Print};
use anyhow::{bail, Result};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use underdraw::batch::Outputs;
use underdraw::io::ImageLimits;
use underdraw::present::results::{to_json, SheetRegionLine};
use underdraw::present::tables as table;
use underdraw::quality::CutNumbers;
use underdraw::settings::CutSettings;
use underdraw::settings::PartialSettings;
use underdraw::sheet::batch::run_sheets;
use underdraw::sheet::run::{RegionSource, SheetReport, SheetRequest};

/// The `cut` options a sheet run uses.
pub(crate) struct SheetArgs<'a> {
    pub(crate) images: &'a [PathBuf],
    pub(crate) out: &'a Path,
    pub(crate) regions: Option<&'a Path>,
    pub(crate) find: bool,
    pub(crate) per_frame: bool,
    pub(crate) force: bool,
    pub(crate) settings: Option<&'a Path>,
    pub(crate) base: CutSettings,
    pub(crate) overrides: PartialSettings,
    pub(crate) outputs: Outputs,
    pub(crate) lock_wait: std::time::Duration,
    pub(crate) texture: Option<&'a Path>,
    /// Flags given that a sheet run does not take.
    pub(crate) unsupported: Vec<&'static str>,
}

pub(crate) fn cut_sheets(args: &SheetArgs, print: Print, limits: ImageLimits) -> Result<ExitCode> {
    if args.regions.is_none() && !args.find {
        bail!("--per-frame cuts each frame of an animation region alone, but no regions were given\n  hint: add --regions FILE (a regions file with \"frames\")");
    }
    if let Some(flag) = args.unsupported.first() {
        bail!("{flag} is not taken with --regions or --find-regions\n  hint: cut the sheet's regions without it, or cut the layer without regions");
    }
    if args.regions.is_some() && args.images.len() != 1 {
        bail!("--regions gives the regions of one sheet, but {} inputs were given\n  hint: cut one sheet a run with its regions file, or use --find-regions for several", args.images.len());
    }
    if args.texture.is_some() && args.images.len() != 1 {
        bail!("--texture gives the shipped texture of one sheet, but {} inputs were given\n  hint: cut one sheet a run with its texture", args.images.len());
    }
    if let Some(dir) = args.images.iter().find(|p| p.is_dir()) {
        bail!("{}: is a folder, but --regions and --find-regions take sheets (PNG files)\n  hint: give the sheet's PNG file", dir.display());
    }
    let requests: Vec<SheetRequest> = args
        .images
        .iter()
        .map(|sheet| SheetRequest {
            sheet: sheet.clone(),
            regions: match args.regions {
                Some(p) => RegionSource::File(p.to_path_buf()),
                None => RegionSource::Find {
                    replace: args.force,
                },
            },
            out: args.out.to_path_buf(),
            settings_file: args.settings.map(Path::to_path_buf),
            match_prefix: String::new(),
            base: args.base,
            overrides: args.overrides,
            outputs: args.outputs,
            per_frame: args.per_frame,
            limits,
            texture: args.texture.map(Path::to_path_buf),
            // a regions file's sheet is recorded in the manifest; found
            // regions are found again every run
            key: args
                .regions
                .and(sheet.file_stem().map(|s| s.to_string_lossy().into_owned())),
        })
        .collect();
    let SheetsDone {
        reports,
        errors,
        notes,
    } = run_found(&requests, args.out, args.force, args.lock_wait);
    if print.json {
        let lines: Vec<SheetRegionLine> =
            reports.iter().flat_map(SheetRegionLine::of_sheet).collect();
        println!("{}", to_json(&lines));
    } else if print.text() {
        for n in &notes {
            println!("note: {n}");
        }
        for r in &reports {
            if let Some(p) = &r.preview {
                println!(
                    "note: the preview of {}'s regions is {}",
                    r.sheet.display(),
                    p.display()
                );
            }
            for w in &r.warnings {
                println!("note: {}: {w}", r.sheet.display());
            }
            if let Some(p) = &r.regions_written {
                println!(
                    "note: {} regions found in {}, written to {} (rename and edit them, then cut with --regions)",
                    r.regions.len(),
                    r.sheet.display(),
                    p.display()
                );
            }
        }
        if !reports.is_empty() {
            print_table(&reports);
        }
    }
    if errors.is_empty() {
        Ok(ExitCode::SUCCESS)
    } else {
        Err(Failures(errors).into())
    }
}

fn print_table(reports: &[SheetReport]) {
    let (rows, _) = region_rows(reports);
    print!("{}", table::cut_table(&rows));
    let (_, total) = region_rows(reports);
    println!("total: {}", total.unwrap_or_default());
}

/// Regions cut (or unchanged), failed, and the vertices of those cut.
fn region_counts(reports: &[SheetReport]) -> (usize, usize, usize) {
    let cut = reports
        .iter()
        .flat_map(|r| &r.regions)
        .filter_map(|g| g.cut.as_ref().ok());
    let vertices = cut.clone().map(|c| c.vertices).sum();
    let failed = reports.iter().map(|r| r.failed()).sum();
    (cut.count(), failed, vertices)
}

/// What running sheets gave: the reports, the errors of the sheets and
/// regions that failed (and of a manifest that could not be written), and
/// the notes to print.
pub(crate) struct SheetsDone {
    pub(crate) reports: Vec<SheetReport>,
    pub(crate) errors: Vec<Line>,
    pub(crate) notes: Vec<String>,
}

/// Runs sheets (given with `--regions` / `--find-regions`, or found by a
/// `cut` batch as PNGs with a `<stem>.regions.json` beside them) into the
/// output folder `out`, skipping those the manifest shows unchanged
/// (unless `force`).
pub(crate) fn run_found(
    requests: &[SheetRequest],
    out: &Path,
    force: bool,
    lock_wait: std::time::Duration,
) -> SheetsDone {
    let mut done = SheetsDone {
        reports: Vec::new(),
        errors: Vec::new(),
        notes: Vec::new(),
    };
    if requests.is_empty() {
        return done;
    }
    let run = match run_sheets(requests, out, force, lock_wait) {
        Ok(r) => r,
        Err(e) => {
            done.errors.push(Line::Error(e.to_string()));
            return done;
        }
    };
    done.notes = run.notes;
    for r in run.sheets {
        match r {
            Ok(r) => done.reports.push(r),
            Err(e) => done.errors.push(Line::Error(e.to_string())),
        }
    }
    for r in &done.reports {
        for g in &r.regions {
            if let Err(e) = &g.cut {
                done.errors.push(Line::Error(format!(
                    "{}: region {:?}: {e}",
                    r.sheet.display(),
                    g.region.name
                )));
            }
        }
    }
    if let Some(e) = run.manifest_error {
        done.errors.push(Line::Error(e.to_string()));
    }
    done
}

/// The `--json` objects of the regions of sheets a batch found.
pub(crate) fn found_json(reports: &[SheetReport]) -> Vec<SheetRegionLine> {
    reports.iter().flat_map(SheetRegionLine::of_sheet).collect()
}

/// One table row per region cut or unchanged (`<stem>/<name>`), with the
/// numbers, warnings and notes of its `--json` object, and the total
/// line's words for them (none without sheets).
pub(crate) fn region_rows(reports: &[SheetReport]) -> (Vec<table::CutRow>, Option<String>) {
    let mut rows = Vec::new();
    for r in reports {
        for (g, line) in r.regions.iter().zip(SheetRegionLine::of_sheet(r)) {
            let (Ok(result), Some(n)) = (&g.cut, &line.numbers) else {
                continue;
            };
            rows.push(table::CutRow {
                layer: line.layer.clone(),
                status: if r.unchanged { "unchanged" } else { "cut" }.into(),
                numbers: CutNumbers::of_result(result),
                warnings: n.warnings.clone(),
                notes: n.notes.clone(),
            });
        }
    }
    let (count, failed, vertices) = region_counts(reports);
    let unchanged: usize = reports
        .iter()
        .filter(|r| r.unchanged)
        .map(|r| r.regions.len())
        .sum();
    let total = (!reports.is_empty()).then(|| {
        format!(
            "{count} regions of {} sheet(s) ({} cut, {unchanged} unchanged, {failed} failed), {vertices} vertices",
            reports.len(),
            count - unchanged
        )
    });
    (rows, total)
}

/// `check MESH SHEET` for a region mesh (a `region` key, or `--region NAME
/// --regions FILE`): the contract within the region, on the whole sheet.
pub(crate) fn check_region(
    mesh: &underdraw::mesh::LayerMesh,
    (mesh_path, image_path, texture_path): (&Path, Option<&Path>, Option<&Path>),
    named: Option<(&str, &Path)>,
    print: Print,
    limits: ImageLimits,
) -> Result<ExitCode> {
    let Some(image_path) = image_path else {
        bail!("a region mesh is checked against its sheet, but no IMAGE was given\n  hint: give the sheet's PNG after the mesh file");
    };
    // the sheet's PNG and/or the texture that ships (a texture sheet alone)
    let bytes = underdraw::io::read_input(image_path)?;
    let (png, texture) = if underdraw::io::is_texture(&bytes) {
        if let Some(t) = texture_path {
            bail!("{}: is given as the shipped texture of {}, which is itself a texture\n  hint: check against the sheet's PNG with --texture, or the texture alone", t.display(), image_path.display());
        }
        let t = underdraw::io::decode_texture(image_path, &bytes, &limits)?;
        (None, Some((image_path, t)))
    } else {
        let png = underdraw::io::decode_layer(image_path, &bytes, &limits)?.alpha;
        let t = match texture_path {
            Some(p) => Some((p, underdraw::io::load_texture(p, &limits)?)),
            None => None,
        };
        (Some(png), t)
    };
    let mip = mesh.filter.mip_levels;
    let shipped = match &texture {
        Some((p, t)) => t.levels_for(mip).map_err(|why| {
            anyhow::anyhow!(
                "{}: {why}\n  hint: check a mesh cut for the levels the texture holds",
                p.display()
            )
        })?,
        None => &[],
    };
    let sheet = png
        .clone()
        .unwrap_or_else(|| shipped.first().cloned().expect("a texture's level 0"));
    let region = match named {
        None => mesh.region.clone().expect("a region key"),
        Some((name, file)) => {
            let size = (sheet.width, sheet.height);
            let regions = underdraw::sheet::regions::load_regions(file, size)?;
            let Some(r) = regions.iter().find(|r| r.name == name) else {
                let names: Vec<&str> = regions.iter().map(|r| r.name.as_str()).collect();
                bail!(
                    "{}: has no region named {name:?}\n  hint: give one of its regions: {}",
                    file.display(),
                    names.join(", ")
                );
            };
            let from_mesh = mesh.region.clone();
            let (slices, frames) = match &r.kind {
                underdraw::sheet::regions::RegionKind::Plain => (None, None),
                underdraw::sheet::regions::RegionKind::Sliced(s) => (Some(*s), None),
                underdraw::sheet::regions::RegionKind::Frames(f) => {
                    (None, Some(f.iter().map(|f| f.to_array()).collect()))
                }
            };
            underdraw::mesh::MeshRegion {
                sheet: image_path
                    .file_name()
                    .map(|n| n.to_string_lossy().into_owned())
                    .unwrap_or_default(),
                sheet_size: [sheet.width, sheet.height],
                rect: r.rect.to_array(),
                slices,
                frames,
                // the anchors and frame offsets are the mesh's own
                slice_positions: from_mesh.as_ref().and_then(|m| m.slice_positions.clone()),
                frame_uv_offsets: from_mesh.and_then(|m| m.frame_uv_offsets),
            }
        }
    };
    let report =
        underdraw::check::check_region_mesh_sampled(mesh, png.as_ref(), shipped, Some(&region))
            .map_err(|e| anyhow::anyhow!("{}: {e}", mesh_path.display()))?;
    let c = &report.contract;
    let code = ExitCode::from(if report.holds() { 0 } else { 1 });
    if print.json {
        let v = serde_json::json!({
            "holds": report.holds(),
            "region": {"sheet": region.sheet, "rect": region.rect},
            "stretched_to": report.stretched_to,
            "opaque_area": c.opaque_area,
            "safe_area": c.safe_area,
            "covered_area": c.covered_area,
            "must_cover_area": c.must_cover_area,
            "must_cover_covered": c.must_cover_covered(),
            "beyond_must_cover": c.beyond_must_cover(),
            "violations": report.violations(),
        });
        println!(
            "{}",
            serde_json::to_string_pretty(&v).expect("plain values serialize")
        );
        return Ok(code);
    }
    if print.quiet && report.holds() {
        return Ok(code);
    }
    let [x, y, w, h] = region.rect;
    let what = match (&region.frames, &region.slices) {
        (Some(f), _) => format!(" and {} frames", f.len()),
        (_, Some(_)) => match report.stretched_to {
            Some([sw, sh]) => format!(
                " as a nine-slice panel drawn stretched to {sw} x {sh} (brought back to its own size through its slice anchors)"
            ),
            None => " as a nine-slice panel".to_string(),
        },
        _ => String::new(),
    };
    println!(
        "region {w} x {h} at ({x}, {y}) of {}{what}, regions computed on the whole sheet",
        image_path.display()
    );
    if report.holds() {
        println!(
            "contract holds: {}; no overlap",
            underdraw::quality::check_summary(c)
        );
    } else {
        println!("contract violated:");
        for v in report.violations() {
            println!("  {v}");
        }
    }
    Ok(code)
}
