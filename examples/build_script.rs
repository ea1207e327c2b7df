//! A `build.rs` for a game crate: cut every PNG layer of an asset folder
//! into glTF meshes at build time, and rebuild when a layer changes.
//!
//! Copy this file to your crate's `build.rs`, add underdraw to
//! `[build-dependencies]`, and set `LAYERS` to your folder. As an example
//! here it takes the folders as arguments instead:
//!
//! ```sh
//! cargo run --release --example build_script -- demo-layers out/build-script
//! ```
//!
//! It writes, per layer, `<stem>.gltf` + `<stem>.bin` (one mesh: primitive
//! OPAQUE to draw with blending off, primitive BLEND to draw blended) and
//! `<stem>.mesh.json`; a layer that fails stops the build with underdraw's
//! message (file, problem, hint), which Cargo shows.

use std::path::{Path, PathBuf};
use underdraw::cut::cut_layer;
use underdraw::export::gltf::{relative_uri, write_gltf};
use underdraw::io::{load_layer, write_atomic, ImageLimits};
use underdraw::settings::CutSettings;

/// The asset folder, relative to the crate, when run as a build script.
const LAYERS: &str = "assets/layers";

fn main() {
    let (layers, out) = match std::env::var_os("OUT_DIR") {
        // as build.rs: Cargo sets OUT_DIR and the crate's folder
        Some(out) => {
            let dir = PathBuf::from(std::env::var_os("CARGO_MANIFEST_DIR").unwrap_or_default());
            println!("cargo:rerun-if-changed={LAYERS}");
            (dir.join(LAYERS), PathBuf::from(out).join("layers"))
        }
        // as an example: the folders from the command line
        None => {
            let mut args = std::env::args_os().skip(1).map(PathBuf::from);
            match (args.next(), args.next()) {
                (Some(l), Some(o)) => (l, o),
                _ => {
                    eprintln!("usage: build_script <LAYER FOLDER> <OUTPUT FOLDER>");
                    std::process::exit(2);
                }
            }
        }
    };
    match cut_folder(&layers, &out, &CutSettings::default()) {
        Ok(written) => {
            for w in written {
                println!("wrote {}", w.display());
            }
        }
        Err(e) => {
            // Cargo prints a build script's stderr when it fails
            eprintln!("error: {e}");
            std::process::exit(1);
        }
    }
}

/// Cuts every `*.png` directly inside `layers` into `out`, returning the
/// files written.
fn cut_folder(
    layers: &Path,
    out: &Path,
    settings: &CutSettings,
) -> Result<Vec<PathBuf>, Box<dyn std::error::Error>> {
    std::fs::create_dir_all(out)?;
    let mut pngs: Vec<PathBuf> = std::fs::read_dir(layers)
        .map_err(|e| format!("{}: cannot be listed ({e})", layers.display()))?
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x.eq_ignore_ascii_case("png")))
        .collect();
    pngs.sort();
    let mut written = Vec::new();
    for png in pngs {
        let layer = load_layer(&png, &ImageLimits::default())?;
        for w in &layer.warnings {
            println!("cargo:warning={}: {w}", png.display());
        }
        let name = png.file_name().unwrap_or_default().to_string_lossy();
        let stem = png.file_stem().unwrap_or_default().to_string_lossy();
        let cut = cut_layer(&layer.alpha, &name, settings);
        for n in &cut.notes {
            println!("cargo:warning={}: {n}", png.display());
        }
        let mesh_file = out.join(format!("{stem}.mesh.json"));
        write_atomic(&mesh_file, &serde_json::to_vec_pretty(&cut.mesh)?)?;
        written.push(mesh_file);
        let uri = relative_uri(out, &png).ok_or("the layers and the output have no common root")?;
        written.extend(write_gltf(&cut.mesh, &uri, out, &stem)?);
    }
    Ok(written)
}
