//! The `underdraw` command: parses arguments, calls the library, prints.
//!
//! One file a subcommand (`cut`, `check`, `scene`, `sweep`); this one holds
//! the top-level parser, the shared options and the printing conventions.

mod check;
mod cut;
mod scene;
mod sheet;
mod sweep;

use clap::{Args, CommandFactory, FromArgMatches, Parser, Subcommand};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use underdraw::error::Setting;
use underdraw::settings::{CutSettings, FilterMode, PartialSettings, SettingsError, Wrap};

use cut::CutArgs;
use scene::SceneArgs;
use sweep::SweepArgs;

const EXIT_HELP: &str = "Exit status: 0 success; 1 `check` found a contract violation; 2 bad usage or bad input (a batch finishes the good layers first and lists the failures), or an internal error, reported as one.";

/// Cut 2D sprite layers into an opaque mesh (drawn with blending off, so the
/// GPU can cull what lies behind it) and a blended mesh for the remaining
/// visible texels, under a vertex budget, with a guarantee: the opaque mesh
/// never covers a texel that could sample as less than opaque under the
/// chosen filter, and the two meshes never clip a visible texel.
#[derive(Parser)]
#[command(name = "underdraw", version, after_help = EXIT_HELP)]
struct Cli {
    #[command(subcommand)]
    command: Command,
    /// Print nothing but errors (on stderr); no tables, no progress bar.
    #[arg(long, short, global = true)]
    quiet: bool,
    /// Print a machine-readable result on stdout instead of the tables:
    /// `cut`, an array of per-layer objects (layer, status cut / unchanged
    /// / failed, vertices, opaque_capture, excess, notes, outputs); `scene`, the scene report
    /// (as scene-report.json); `check`, the contract's areas and whether it
    /// holds; `sweep`, the points and the knee.
    #[arg(long, global = true, conflicts_with = "quiet")]
    json: bool,
    /// Largest layer accepted, in texels (width x height), checked from the
    /// PNG header before decoding. Each side is also limited to 16384
    /// texels, the largest texture GPUs commonly accept: tile wider layers.
    #[arg(long, global = true, value_name = "N", default_value_t = underdraw::io::MAX_PIXELS)]
    max_texels: u64,
    /// The old name of --max-texels, refused with a message naming it.
    #[arg(long, global = true, value_name = "N", hide = true)]
    max_pixels: Option<u64>,
}

/// How much to print.
#[derive(Clone, Copy)]
pub(crate) struct Print {
    quiet: bool,
    json: bool,
}

impl Print {
    /// Tables and other human-readable lines on stdout.
    pub(crate) fn text(&self) -> bool {
        !self.quiet && !self.json
    }
}

/// Colour on a stream only when it is a terminal and NO_COLOR is unset or
/// empty (the NO_COLOR convention, no-color.org).
pub(crate) fn colour(terminal: bool) -> bool {
    terminal && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
}

/// Print an error on stderr, "error:" in red on a colour terminal.
pub(crate) fn error(msg: impl std::fmt::Display) {
    if colour(std::io::stderr().is_terminal()) {
        eprintln!("\x1b[31merror:\x1b[0m {msg}");
    } else {
        eprintln!("error: {msg}");
    }
}

/// A progress bar on stderr, drawn only when stderr is a terminal and not
/// --quiet or --json; otherwise hidden.
pub(crate) fn bar(print: Print, len: usize, what: &str) -> indicatif::ProgressBar {
    if print.quiet || print.json || !std::io::stderr().is_terminal() {
        return indicatif::ProgressBar::hidden();
    }
    let style = indicatif::ProgressStyle::with_template("{msg:>16} [{bar:32}] {pos}/{len}")
        .expect("a valid progress template")
        .progress_chars("=> ");
    indicatif::ProgressBar::new(len as u64)
        .with_style(style)
        .with_message(what.to_string())
}

#[derive(Subcommand)]
enum Command {
    /// Cut PNG layers, or folders of them, into mesh files
    /// (`<OUT>/<stem>.mesh.json`) or glTF 2.0 assets for an engine
    /// (`--format`); reruns skip the layers that did not change.
    #[command(after_help = EXIT_HELP)]
    Cut(CutArgs),
    /// Re-verify a mesh file against its layer, with code independent of `cut`.
    #[command(after_help = EXIT_HELP)]
    Check {
        /// The mesh file (`.mesh.json`) written by `cut`.
        mesh: PathBuf,
        /// The PNG layer it was cut from (or a .ktx2 / .astc texture, read
        /// as with --texture).
        #[arg(required_unless_present = "texture")]
        image: Option<PathBuf>,
        /// The compressed texture that ships (KTX 2.0 or .astc): check the
        /// mesh against its decoded levels 0 to the mesh's mip levels, and
        /// report the violation areas per level (with IMAGE too: against
        /// both).
        #[arg(long, value_name = "FILE")]
        texture: Option<PathBuf>,
        /// Check the mesh as this region of the sprite sheet given as IMAGE
        /// (its rectangle, slices or frames read from --regions FILE); a
        /// mesh file with a "region" key is checked so without it.
        #[arg(long, value_name = "NAME", requires = "regions")]
        region: Option<String>,
        /// The sheet's regions file, for --region.
        #[arg(long, value_name = "FILE", requires = "region")]
        regions: Option<PathBuf>,
    },
    /// Score a parallax scene on a simulated GPU: overdraw, lanes, vertices
    /// and draws per strategy (rect, outline, split) and per layer, with
    /// heatmaps; optionally choose a vertex budget per layer.
    #[command(after_help = EXIT_HELP)]
    Scene(SceneArgs),
    /// Cut one layer at budgets 4 to 256 and find the knee of its saving curve.
    #[command(after_help = EXIT_HELP)]
    Sweep(SweepArgs),
}

// Every value enum documents each of its values, so `--help` lists every
// option's values the same way (one line a value, with its meaning). The
// settings' value enums are the library's own (`FilterMode`, `Wrap`,
// `VertexFormat`: clap's `ValueEnum` derived under the `cli` feature).

/// The cut settings other than the budget.
#[derive(Args)]
pub(crate) struct CutOptions {
    /// Texture filter the layer is drawn with.
    #[arg(long, value_enum, default_value = "bilinear")]
    filter: FilterMode,
    /// Highest mip level the layer may be sampled from (0: no mipmaps). The
    /// meshes are made safe for every level up to this one; for a texture
    /// (.ktx2), levels 0 to this one of the file, each its own texels.
    #[arg(long, value_name = "L", default_value_t = 0, value_parser = clap::value_parser!(u32).range(0..=15))]
    mip_levels: u32,
    /// Axes on which the layer's texture repeats (tiling strips); the other
    /// axes clamp to the edge texel.
    #[arg(long, value_enum, default_value = "none")]
    wrap: Wrap,
    /// Alpha (0-255) from which a texel counts as opaque.
    #[arg(long, value_name = "A", default_value_t = 255)]
    opaque_min: u8,
    /// Alpha (0-255) from which a texel counts as visible and must be covered.
    #[arg(long, value_name = "A", default_value_t = 1)]
    visible_min: u8,
}

impl CutOptions {
    /// These options (and `budget`) as settings: the ones `given` says were
    /// typed (by argument id), so a settings file keeps the others.
    pub(crate) fn partial(&self, budget: usize, given: impl Fn(&str) -> bool) -> PartialSettings {
        PartialSettings {
            budget: given("budget").then_some(budget),
            filter: given("filter").then_some(self.filter),
            mip_levels: given("mip_levels").then_some(self.mip_levels),
            wrap: given("wrap").then_some(self.wrap),
            opaque_min: given("opaque_min").then_some(self.opaque_min),
            visible_min: given("visible_min").then_some(self.visible_min),
        }
    }

    /// The whole settings: every option's value (typed or default) over the
    /// library's defaults, checked; an error says which flag to change.
    pub(crate) fn settings(&self, budget: usize) -> Result<CutSettings> {
        let s = CutSettings::default().with(&self.partial(budget, |_| true));
        s.validate().map_err(settings_error)?;
        Ok(s)
    }
}

/// A settings error from the command line, said with the flags to change
/// (the library's message names the setting).
fn settings_error(e: SettingsError) -> anyhow::Error {
    let hint = match e {
        SettingsError::Budget(_) => format!("use --budget {} or more", SettingsError::MIN_BUDGET),
        SettingsError::Alpha { .. } => "lower --visible-min or raise --opaque-min".to_string(),
        SettingsError::MipLevels(_) => {
            format!("use --mip-levels {} or less", SettingsError::MAX_MIP_LEVELS)
        }
    };
    anyhow::anyhow!("{e}\n  hint: {hint}")
}

/// What a command ends with when it fails: one error, or (a batch) lines
/// on stderr, some of them errors. [`main`] prints it, in one place.
pub(crate) type Result<T> = std::result::Result<T, anyhow::Error>;

/// A failure reported as several lines (a batch's failed layers and inputs
/// that gave no layer): headings as they are, errors as [`error`] prints
/// them; exit status 2.
#[derive(Debug, Default)]
pub(crate) struct Failures(pub(crate) Vec<Line>);

/// A line of [`Failures`].
#[derive(Debug)]
pub(crate) enum Line {
    /// A plain line ("2 of 7 layers failed:").
    Heading(String),
    /// An error, printed with "error:".
    Error(String),
}

impl std::fmt::Display for Failures {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        for l in &self.0 {
            match l {
                Line::Heading(h) | Line::Error(h) => writeln!(f, "{h}")?,
            }
        }
        Ok(())
    }
}

impl std::error::Error for Failures {}

/// The one place an error is printed and mapped to the exit status (2: bad
/// usage, bad input, or an internal error reported as one).
fn report(e: &anyhow::Error) -> ExitCode {
    match e.downcast_ref::<Failures>() {
        Some(Failures(lines)) => {
            for l in lines {
                match l {
                    Line::Heading(h) => eprintln!("{h}"),
                    Line::Error(m) => error(m),
                }
            }
        }
        None => error(e),
    }
    ExitCode::from(2)
}

/// The last panic's message and place, recorded by the hook [`main`]
/// installs (the default hook's backtrace text is not for artists).
static LAST_PANIC: std::sync::Mutex<Option<String>> = std::sync::Mutex::new(None);

fn main() -> ExitCode {
    std::panic::set_hook(Box::new(|info| {
        let payload = info.payload();
        let msg = payload
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| payload.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown panic".into());
        let place = info
            .location()
            .map(|l| format!(" (at {}:{})", l.file(), l.line()))
            .unwrap_or_default();
        if let Ok(mut last) = LAST_PANIC.lock() {
            *last = Some(format!("{msg}{place}"));
        }
    }));
    // A panic inside one layer of a `cut` batch is that layer's failure
    // (see underdraw::batch); anywhere else it ends the command here, as an
    // internal error with exit status 2, never as a Rust backtrace.
    let result = std::panic::catch_unwind(run).unwrap_or_else(|_| {
        let what = LAST_PANIC
            .lock()
            .ok()
            .and_then(|mut l| l.take())
            .unwrap_or_else(|| "unknown panic".into());
        Err(anyhow::anyhow!(
            "internal error: {what}\n  hint: this is a bug in underdraw, not in your files; please report it with the command line and the input files"
        ))
    });
    result.unwrap_or_else(|e| report(&e))
}

/// The command line's spelling of the settings the library's messages name
/// (the one table of flag names outside clap's own).
fn flag(s: Setting) -> &'static str {
    match s {
        Setting::Out => "--out",
        Setting::Texture => "--texture",
        Setting::Preview => "--preview",
        Setting::Format => "--format",
        Setting::MipLevels => "--mip-levels",
        Setting::VertexFormat => "--vertex-format",
        Setting::Jobs => "--jobs",
        Setting::LockWait => "--lock-wait",
        Setting::Include => "--include",
        Setting::Exclude => "--exclude",
        Setting::MaxTexels => "--max-texels",
        Setting::VertexTotal => "--vertex-total",
        Setting::Export => "--export",
        Setting::Report => "--report",
        Setting::DumpFrame => "--dump-frame",
        Setting::Regions => "--regions",
        Setting::FindRegions => "--find-regions",
        Setting::Force => "--force",
        Setting::PerFrame => "--per-frame",
        Setting::Region => "--region",
        Setting::VisibleMin => "--visible-min",
    }
}

fn run() -> Result<ExitCode> {
    underdraw::error::spell_settings(flag);
    let matches = Cli::command().get_matches();
    let cli = Cli::from_arg_matches(&matches).unwrap_or_else(|e| e.exit());
    if cli.max_pixels.is_some() {
        anyhow::bail!("--max-pixels is now called --max-texels\n  hint: give --max-texels N (the most texels, width x height, of a layer)");
    }
    let limits = underdraw::io::ImageLimits {
        max_pixels: cli.max_texels,
        ..Default::default()
    };
    let print = Print {
        quiet: cli.quiet,
        json: cli.json,
    };
    match cli.command {
        Command::Cut(args) => {
            let sub = matches
                .subcommand_matches("cut")
                .expect("the cut subcommand");
            cut::cut(&args, sub, print, limits)
        }
        Command::Check {
            mesh,
            image,
            texture,
            region,
            regions,
        } => check::check(
            &mesh,
            image.as_deref(),
            texture.as_deref(),
            region.as_deref().zip(regions.as_deref()),
            print,
            limits,
        ),
        Command::Scene(args) => scene::scene(&args, print, limits),
        Command::Sweep(args) => sweep::sweep(&args, print, limits),
    }
}

/// Whether two paths name the same existing file.
pub(crate) fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}
