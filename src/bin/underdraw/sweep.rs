//! `underdraw sweep`: one layer at budgets 4 to 256, and its knee.

use crate::{same_file, CutOptions, Print, Result};
use clap::Args;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use underdraw::alpha::Sampled;
use underdraw::error::FileError;
use underdraw::io::{is_texture, load_layer, load_texture, ImageLimits, OutputFolder};
use underdraw::present::results::{to_json, SweepResult};
use underdraw::sweep::{knee, sweep_sampled, to_csv, BUDGETS};

#[derive(Args)]
pub(crate) struct SweepArgs {
    /// The PNG layer to cut at each budget (or a .ktx2 / .astc texture, cut
    /// on its decoded levels).
    image: PathBuf,
    /// The compressed texture that ships for the layer (KTX 2.0 or .astc):
    /// each cut holds for both, as `cut --texture`.
    #[arg(long, value_name = "FILE")]
    texture: Option<PathBuf>,
    #[command(flatten)]
    options: CutOptions,
    /// Folder for `<stem>.sweep.csv` (created if missing; default `out/sweep`).
    #[arg(long, short)]
    out: Option<PathBuf>,
    /// The knee is the smallest budget whose saving reaches this fraction of
    /// the saving at the largest budget tried (the 80/20 rule by default).
    #[arg(long, default_value_t = 0.8)]
    knee: f64,
}

pub(crate) fn sweep(args: &SweepArgs, print: Print, limits: ImageLimits) -> Result<ExitCode> {
    if !(args.knee > 0.0 && args.knee <= 1.0) {
        anyhow::bail!(
            "--knee {} is not a fraction in (0, 1]\n  hint: give e.g. --knee 0.8",
            args.knee
        );
    }
    let base = args.options.settings(4)?;
    let image_is_texture = std::fs::read(&args.image).is_ok_and(|b| is_texture(&b));
    let map = if image_is_texture {
        None
    } else {
        let m = load_layer(&args.image, &limits)?;
        if print.text() {
            for w in &m.warnings {
                println!("note: {w}");
            }
        }
        Some(m.alpha)
    };
    let texture_path = if image_is_texture {
        Some(args.image.clone())
    } else {
        args.texture.clone()
    };
    let texture = match texture_path.as_deref() {
        Some(p) => Some(load_texture(p, &limits)?),
        None => None,
    };
    let mip = base.filter.mip_levels;
    let shipped = match (&texture, &texture_path) {
        (Some(t), Some(p)) => t.levels_for(mip).map_err(|why| {
            FileError::new(p, why, "lower --mip-levels to the levels the texture holds")
        })?,
        _ => &[][..],
    };
    let sampled = Sampled {
        source: map.as_ref(),
        shipped,
    };
    if let (Err(why), Some(p)) = (sampled.validate(), &texture_path) {
        return Err(FileError::new(
            p,
            why.to_string(),
            "give the texture compressed from this layer, at its size",
        )
        .into());
    }
    if let (Some(t), true) = (&texture, print.text()) {
        println!("note: guarantee computed for {}", t.describe(mip));
    }
    let out = args
        .out
        .clone()
        .unwrap_or_else(|| Path::new("out").join("sweep"));
    if let Err(e) = std::fs::create_dir_all(&out) {
        anyhow::bail!(
            "{}: the output folder cannot be created ({e})\n  hint: choose a writable --out folder",
            out.display()
        );
    }
    let stem = args
        .image
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "layer".into());
    let name = args
        .image
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let dest = out.join(format!("{stem}.sweep.csv"));
    if same_file(&dest, &args.image) {
        return Err(FileError::new(
            &args.image,
            "would be overwritten by its own sweep file",
            "choose another --out folder",
        )
        .into());
    }
    let points = sweep_sampled(sampled, &name, &base, &BUDGETS);
    let knee_budget = knee(&points, args.knee);
    let mut folder = OutputFolder::open(&out, vec![args.image.clone()]);
    folder.write(&format!("{stem}.sweep.csv"), to_csv(&points).as_bytes())?;
    let result = SweepResult {
        points,
        knee: knee_budget,
        knee_fraction: args.knee,
        outputs: folder
            .written()
            .iter()
            .map(|p| p.display().to_string())
            .collect(),
    };
    if print.json {
        println!("{}", to_json(&result));
    } else if !print.quiet {
        print!("{}", result.text());
    }
    Ok(ExitCode::SUCCESS)
}
