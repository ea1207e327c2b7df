//! `underdraw sweep`: one layer at budgets 4 to 256, and its knee.

use crate::{error, same_file, CutOptions, Print};
use clap::Args;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use underdraw::alpha::Sampled;
use underdraw::error::FileError;
use underdraw::io::{is_texture, load_layer, load_texture, ImageLimits, OutputFolder};
use underdraw::sweep::{knee, sweep_sampled, to_csv, to_table, BUDGETS};

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

pub(crate) fn sweep(args: &SweepArgs, print: Print, limits: ImageLimits) -> ExitCode {
    let fail = |e: FileError| {
        error(&e);
        ExitCode::from(2)
    };
    if !(args.knee > 0.0 && args.knee <= 1.0) {
        error(format!(
            "--knee {} is not a fraction in (0, 1]\n  hint: give e.g. --knee 0.8",
            args.knee
        ));
        return ExitCode::from(2);
    }
    let base = args.options.settings(4);
    if let Err(e) = base.validate() {
        error(&e);
        return ExitCode::from(2);
    }
    let image_is_texture = std::fs::read(&args.image).is_ok_and(|b| is_texture(&b));
    let map = if image_is_texture {
        None
    } else {
        match load_layer(&args.image, &limits) {
            Ok(m) => {
                if print.text() {
                    for w in &m.warnings {
                        println!("note: {w}");
                    }
                }
                Some(m.alpha)
            }
            Err(e) => return fail(e),
        }
    };
    let texture_path = if image_is_texture {
        Some(args.image.clone())
    } else {
        args.texture.clone()
    };
    let texture = match texture_path.as_deref().map(|p| load_texture(p, &limits)) {
        Some(Ok(t)) => Some(t),
        Some(Err(e)) => return fail(e),
        None => None,
    };
    let mip = base.filter.mip_levels;
    let shipped = match (&texture, &texture_path) {
        (Some(t), Some(p)) => match t.levels_for(mip) {
            Ok(l) => l,
            Err(why) => {
                return fail(FileError::new(
                    p,
                    why,
                    "lower --mip-levels to the levels the texture holds",
                ))
            }
        },
        _ => &[][..],
    };
    let sampled = Sampled {
        source: map.as_ref(),
        shipped,
    };
    if let (Err(why), Some(p)) = (sampled.validate(), &texture_path) {
        return fail(FileError::new(
            p,
            why,
            "give the texture compressed from this layer, at its size",
        ));
    }
    if let (Some(t), true) = (&texture, print.text()) {
        println!("note: guarantee computed for {}", t.describe(mip));
    }
    let out = args
        .out
        .clone()
        .unwrap_or_else(|| Path::new("out").join("sweep"));
    if let Err(e) = std::fs::create_dir_all(&out) {
        error(format!(
            "{}: the output folder cannot be created ({e})\n  hint: choose a writable --out folder",
            out.display()
        ));
        return ExitCode::from(2);
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
        return fail(FileError::new(
            &args.image,
            "would be overwritten by its own sweep file",
            "choose another --out folder",
        ));
    }
    let points = sweep_sampled(sampled, &name, &base, &BUDGETS);
    let knee_budget = knee(&points, args.knee);
    let mut folder = OutputFolder::open(&out, vec![args.image.clone()]);
    if let Err(e) = folder.write(&format!("{stem}.sweep.csv"), to_csv(&points).as_bytes()) {
        return fail(e);
    }
    if print.json {
        let v = serde_json::json!({
            "points": points,
            "knee": knee_budget,
            "knee_fraction": args.knee,
            "outputs": [dest.display().to_string()],
        });
        println!(
            "{}",
            serde_json::to_string_pretty(&v).expect("plain values serialize")
        );
        return ExitCode::SUCCESS;
    }
    if print.quiet {
        return ExitCode::SUCCESS;
    }
    print!("{}", to_table(&points, knee_budget));
    if let Some(k) = knee_budget {
        println!(
            "knee: budget {k} (smallest reaching {:.0}% of the saving at budget {})",
            100.0 * args.knee,
            BUDGETS[BUDGETS.len() - 1]
        );
    }
    println!("wrote {}", dest.display());
    ExitCode::SUCCESS
}
