//! `underdraw check`: re-verify a mesh file against its layer.

use crate::{error, Print};
use std::path::Path;
use std::process::ExitCode;
use underdraw::check::check_mesh;
use underdraw::io::{load_layer, load_mesh, ImageLimits};

pub(crate) fn check(
    mesh_path: &Path,
    image_path: &Path,
    print: Print,
    limits: ImageLimits,
) -> ExitCode {
    let mesh = match load_mesh(mesh_path) {
        Ok(m) => m,
        Err(e) => {
            error(&e);
            return ExitCode::from(2);
        }
    };
    let map = match load_layer(image_path, &limits) {
        Ok(m) => m.alpha,
        Err(e) => {
            error(&e);
            return ExitCode::from(2);
        }
    };
    match check_mesh(&mesh, &map) {
        Err(e) => {
            error(format!("{}: {e}", mesh_path.display()));
            ExitCode::from(2)
        }
        Ok(report) if print.json => {
            let violations: Vec<String> =
                report.violations().iter().map(|v| v.to_string()).collect();
            let v = serde_json::json!({
                "holds": report.holds(),
                "opaque_area": report.opaque_area,
                "safe_area": report.safe_area,
                "covered_area": report.covered_area,
                "must_cover_area": report.must_cover_area,
                "must_cover_covered": report.must_cover_area - report.uncovered,
                "beyond_must_cover": report.covered_area - (report.must_cover_area - report.uncovered),
                "violations": violations,
            });
            println!(
                "{}",
                serde_json::to_string_pretty(&v).expect("plain values serialize")
            );
            ExitCode::from(if report.holds() { 0 } else { 1 })
        }
        Ok(report) if report.holds() => {
            if print.quiet {
                return ExitCode::SUCCESS;
            }
            println!(
                "contract holds: {}; no overlap",
                underdraw::quality::check_summary(&report)
            );
            ExitCode::SUCCESS
        }
        Ok(report) => {
            println!("contract violated:");
            for v in report.violations() {
                println!("  {v}");
            }
            ExitCode::from(1)
        }
    }
}
