//! `underdraw check`: re-verify a mesh file against its layer, and/or
//! against the compressed texture that ships.

use crate::{Print, Result};
use anyhow::anyhow;
use std::path::Path;
use std::process::ExitCode;
use underdraw::check::{check_mesh_per_level, check_mesh_sampled, ContractReport};
use underdraw::io::{is_texture, load_layer, load_mesh, load_texture, ImageLimits};

pub(crate) fn check(
    mesh_path: &Path,
    image_path: Option<&Path>,
    texture_path: Option<&Path>,
    print: Print,
    limits: ImageLimits,
) -> Result<ExitCode> {
    let mesh = load_mesh(mesh_path)?;
    // an IMAGE that is a texture file is read as --texture
    let (image_path, texture_path) = match (image_path, texture_path) {
        (Some(i), None) if std::fs::read(i).is_ok_and(|b| is_texture(&b)) => (None, Some(i)),
        other => other,
    };
    let map = match image_path {
        Some(p) => Some(load_layer(p, &limits)?.alpha),
        None => None,
    };
    let texture = match texture_path {
        Some(p) => Some(load_texture(p, &limits)?),
        None => None,
    };
    let mip = mesh.filter.mip_levels;
    let levels = match (&texture, texture_path) {
        (Some(t), Some(p)) => t.levels_for(mip).map_err(|why| {
            anyhow!(
                "{}: {why} (the mesh was cut for mip levels 0 to {mip})\n  hint: check against a texture with those levels, or cut the mesh again for fewer",
                p.display()
            )
        })?,
        _ => &[][..],
    };
    let whole = check_mesh_sampled(&mesh, map.as_ref(), levels);
    let per_level = if levels.is_empty() {
        Ok(Vec::new())
    } else {
        check_mesh_per_level(&mesh, levels)
    };
    let (report, per_level) = match (whole, per_level) {
        (Ok(r), Ok(p)) => (r, p),
        (Err(e), _) | (_, Err(e)) => return Err(anyhow!("{}: {e}", mesh_path.display())),
    };
    let described = texture.as_ref().map(|t| t.describe(mip));
    let code = ExitCode::from(if report.holds() { 0 } else { 1 });
    if print.json {
        let violations: Vec<String> = report.violations().iter().map(|v| v.to_string()).collect();
        let mut v = serde_json::json!({
            "holds": report.holds(),
            "opaque_area": report.opaque_area,
            "safe_area": report.safe_area,
            "covered_area": report.covered_area,
            "must_cover_area": report.must_cover_area,
            "must_cover_covered": report.must_cover_covered(),
            "beyond_must_cover": report.beyond_must_cover(),
            "violations": violations,
        });
        if let Some(d) = &described {
            v["texture"] = d.clone().into();
            v["levels"] = per_level
                .iter()
                .enumerate()
                .map(|(l, r)| level_json(l, r))
                .collect();
        }
        println!(
            "{}",
            serde_json::to_string_pretty(&v).expect("plain values serialize")
        );
        return Ok(code);
    }
    if print.quiet && report.holds() {
        return Ok(code);
    }
    if let (Some(d), false) = (&described, print.quiet) {
        println!("texture: {d}");
        for (l, r) in per_level.iter().enumerate() {
            let v = r.violations();
            if v.is_empty() {
                println!("  level {l}: holds");
            } else {
                println!("  level {l}: {}", v.join("; "));
            }
        }
    }
    if report.holds() {
        println!(
            "contract holds: {}; no overlap",
            underdraw::quality::check_summary(&report)
        );
    } else {
        println!("contract violated:");
        for v in report.violations() {
            println!("  {v}");
        }
    }
    Ok(code)
}

fn level_json(level: usize, r: &ContractReport) -> serde_json::Value {
    serde_json::json!({
        "level": level,
        "holds": r.holds(),
        "opaque_outside_safe": r.opaque_outside_safe,
        "uncovered": r.uncovered,
        "safe_area": r.safe_area,
        "must_cover_area": r.must_cover_area,
        "violations": r.violations(),
    })
}
