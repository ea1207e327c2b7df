//! `underdraw check`: re-verify a mesh file against its layer, and/or
//! against the compressed texture that ships.

use crate::{Print, Result};
use anyhow::anyhow;
use std::path::Path;
use std::process::ExitCode;
use underdraw::check::{check_mesh_per_level, check_mesh_sampled};
use underdraw::io::{is_texture, load_layer, load_mesh, load_texture, ImageLimits};
use underdraw::present::results::{to_json, CheckResult};

pub(crate) fn check(
    mesh_path: &Path,
    image_path: Option<&Path>,
    texture_path: Option<&Path>,
    region: Option<(&str, &Path)>,
    print: Print,
    limits: ImageLimits,
) -> Result<ExitCode> {
    let mesh = load_mesh(mesh_path)?;
    if mesh.region.is_some() || region.is_some() {
        let paths = (mesh_path, image_path, texture_path);
        return crate::sheet::check_region(&mesh, paths, region, print, limits);
    }
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
    let result = CheckResult::new(&report, described, &per_level);
    if print.json {
        println!("{}", to_json(&result));
    } else if !(print.quiet && report.holds()) {
        // --quiet prints a violation only
        print!("{}", result.text(!print.quiet));
    }
    Ok(code)
}
