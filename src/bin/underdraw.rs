//! The `underdraw` command: parses arguments, calls the library, prints.

use clap::{Args, Parser, Subcommand, ValueEnum};
use rayon::prelude::*;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::{Arc, Mutex};
use underdraw::check::check_mesh;
use underdraw::cut::cut_layer;
use underdraw::error::FileError;
use underdraw::export::gltf::{glb_path, gltf_paths, relative_uri, write_glb, write_gltf};
use underdraw::io::{load_alpha, load_mesh, write_atomic};
use underdraw::scene::run::{run_scene, Progress, SceneOptions};
use underdraw::settings::{AlphaThresholds, CutSettings, Filter, FilterMode, Wrap};
use underdraw::sweep::{knee, sweep_layer, to_csv, to_table, BUDGETS};

const EXIT_HELP: &str = "Exit status: 0 success; 1 `check` found a contract violation; 2 bad usage or bad input (a batch finishes the good layers first and lists the failures).";

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
    #[arg(long, global = true)]
    quiet: bool,
    /// Print a machine-readable result on stdout instead of the tables:
    /// `cut`, an array of per-layer objects (layer, vertices,
    /// opaque_capture, excess, notes, outputs); `scene`, the scene report
    /// (as scene-report.json); `check`, the contract's areas and whether it
    /// holds; `sweep`, the points and the knee.
    #[arg(long, global = true, conflicts_with = "quiet")]
    json: bool,
}

/// How much to print.
#[derive(Clone, Copy)]
struct Print {
    quiet: bool,
    json: bool,
}

impl Print {
    /// Tables and other human-readable lines on stdout.
    fn text(&self) -> bool {
        !self.quiet && !self.json
    }
}

/// Colour on a stream only when it is a terminal and NO_COLOR is unset or
/// empty (the NO_COLOR convention, no-color.org).
fn colour(terminal: bool) -> bool {
    terminal && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
}

/// Print an error on stderr, "error:" in red on a colour terminal.
fn error(msg: impl std::fmt::Display) {
    if colour(std::io::stderr().is_terminal()) {
        eprintln!("\x1b[31merror:\x1b[0m {msg}");
    } else {
        eprintln!("error: {msg}");
    }
}

/// A progress bar on stderr, drawn only when stderr is a terminal and not
/// --quiet or --json; otherwise hidden.
fn bar(print: Print, len: usize, what: &str) -> indicatif::ProgressBar {
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

/// `run_scene`'s steps shown as one bar per step.
struct SceneBar {
    print: Print,
    current: Mutex<Option<indicatif::ProgressBar>>,
}

impl Progress for SceneBar {
    fn start(&self, what: &str, total: usize) {
        let mut c = self.current.lock().unwrap();
        if let Some(b) = c.take() {
            b.finish_and_clear();
        }
        *c = Some(bar(self.print, total, what));
    }
    fn step(&self) {
        if let Some(b) = &*self.current.lock().unwrap() {
            b.inc(1);
        }
    }
}

impl SceneBar {
    fn clear(&self) {
        if let Some(b) = self.current.lock().unwrap().take() {
            b.finish_and_clear();
        }
    }
}

#[derive(Subcommand)]
enum Command {
    /// Cut PNG layers into `<OUT>/<stem>.mesh.json` mesh files, or glTF 2.0
    /// assets for an engine (`--format`).
    #[command(after_help = EXIT_HELP)]
    Cut(CutArgs),
    /// Re-verify a mesh file against its layer, with code independent of `cut`.
    #[command(after_help = EXIT_HELP)]
    Check {
        /// The mesh file (`.mesh.json`) written by `cut`.
        mesh: PathBuf,
        /// The PNG layer it was cut from.
        image: PathBuf,
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

#[derive(Clone, Copy, ValueEnum)]
enum FilterArg {
    Nearest,
    Bilinear,
}

#[derive(Clone, Copy, ValueEnum)]
enum WrapArg {
    None,
    X,
    Y,
    Xy,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum FormatArg {
    /// `<stem>.mesh.json`, underdraw's own mesh file (what `check` reads).
    Json,
    /// A glTF 2.0 asset: `<stem>.gltf` + `<stem>.bin` (or `<stem>.glb` with `--glb`).
    Gltf,
    /// Both the mesh file and the glTF asset.
    All,
}

#[derive(Args)]
struct CutArgs {
    /// PNG layers to cut (RGBA; images without alpha count as fully opaque).
    #[arg(required = true)]
    images: Vec<PathBuf>,
    /// Folder for the output files (created if missing).
    #[arg(long, short)]
    out: PathBuf,
    /// What to write per layer. `gltf`: a glTF 2.0 asset for an engine, one
    /// mesh with two primitives over one vertex array: the opaque one with
    /// alphaMode OPAQUE (draw with blending off), the blended one with BLEND;
    /// the PNG as base colour texture by a URI relative to the output folder,
    /// with a sampler for --filter, --mip-levels and --wrap; positions in
    /// texels, glTF's y up: (x, y) becomes (x, -y, 0), triangles wound
    /// counter-clockwise.
    #[arg(long, value_enum, default_value = "json")]
    format: FormatArg,
    /// Write the glTF asset as one binary `<stem>.glb` (JSON and buffer in
    /// one file; the PNG stays outside it, by URI) instead of `<stem>.gltf`
    /// + `<stem>.bin`. Needs `--format gltf` or `all`.
    #[arg(long)]
    glb: bool,
    /// Also write `<OUT>/<stem>.preview.png`: the layer over a checkerboard
    /// with the opaque mesh tinted blue and the blended one orange, their
    /// edges, the regions' outlines dotted, and a caption (B budget, V
    /// vertices, C opaque capture, E excess); at most 1024 pixels wide.
    #[arg(long)]
    preview: bool,
    /// Most vertices per layer, both meshes together (a vertex they share
    /// counts once). At least 4.
    #[arg(long, default_value_t = 64, value_parser = clap::value_parser!(u32).range(4..))]
    budget: u32,
    #[command(flatten)]
    options: CutOptions,
}

/// The cut settings other than the budget.
#[derive(Args)]
struct CutOptions {
    /// Texture filter the layer is drawn with: `nearest` keeps the opaque mesh
    /// inside opaque texels; `bilinear` also keeps it half a texel (at mip
    /// level l, 2^(l-1) texels) away from any texel that is not opaque.
    #[arg(long, value_enum, default_value = "bilinear")]
    filter: FilterArg,
    /// Highest mip level the layer may be sampled from (0: no mipmaps). The
    /// meshes are made safe for every level up to this one.
    #[arg(long, default_value_t = 0, value_parser = clap::value_parser!(u32).range(0..=15))]
    mip_levels: u32,
    /// Axes on which the layer's texture repeats (tiling strips); other axes
    /// clamp to the edge texel.
    #[arg(long, value_enum, default_value = "none")]
    wrap: WrapArg,
    /// Alpha (0-255) from which a texel counts as opaque.
    #[arg(long, default_value_t = 255)]
    opaque_min: u8,
    /// Alpha (0-255) from which a texel counts as visible and must be covered.
    #[arg(long, default_value_t = 1)]
    visible_min: u8,
}

impl CutOptions {
    fn settings(&self, budget: usize) -> CutSettings {
        CutSettings {
            budget,
            filter: Filter {
                mode: match self.filter {
                    FilterArg::Nearest => FilterMode::Nearest,
                    FilterArg::Bilinear => FilterMode::Bilinear,
                },
                mip_levels: self.mip_levels,
            },
            alpha: AlphaThresholds {
                opaque_min: self.opaque_min,
                visible_min: self.visible_min,
            },
            wrap: match self.wrap {
                WrapArg::None => Wrap::None,
                WrapArg::X => Wrap::X,
                WrapArg::Y => Wrap::Y,
                WrapArg::Xy => Wrap::Xy,
            },
        }
    }
}

impl CutArgs {
    fn settings(&self) -> CutSettings {
        self.options.settings(self.budget as usize)
    }
}

/// Widest preview `cut --preview` writes, pixels.
const PREVIEW_WIDTH: u32 = 1024;

/// What `cut` writes for each layer.
#[derive(Clone, Copy)]
struct Outputs {
    json: bool,
    gltf: bool,
    glb: bool,
    preview: bool,
}

impl Outputs {
    fn of(args: &CutArgs) -> Outputs {
        let gltf = args.format != FormatArg::Json;
        Outputs {
            json: args.format != FormatArg::Gltf,
            gltf: gltf && !args.glb,
            glb: gltf && args.glb,
            preview: args.preview,
        }
    }
    /// The files written for `stem` in `out`.
    fn paths(&self, out: &Path, stem: &str) -> Vec<PathBuf> {
        let mut v = Vec::new();
        if self.json {
            v.push(out.join(format!("{stem}.mesh.json")));
        }
        if self.gltf {
            v.extend(gltf_paths(out, stem));
        }
        if self.glb {
            v.push(glb_path(out, stem));
        }
        if self.preview {
            v.push(out.join(format!("{stem}.preview.png")));
        }
        v
    }
}

#[derive(Args)]
struct SceneArgs {
    /// The scene file (`.scene.json`, see the README's Scenes section).
    scene: PathBuf,
    /// Folder for the report, heatmaps and meshes (created if missing;
    /// default `out/<scene name>`).
    #[arg(long, short)]
    out: Option<PathBuf>,
    /// Also write camera sample K's draws (`frame-K.json`) and per-pixel
    /// fragment counts (`counts-K-<strategy>.png`, 16-bit grey).
    #[arg(long, value_name = "K")]
    dump_frame: Option<usize>,
    /// Split N vertices over the layers cut on the fly to save the most
    /// fragments with the split strategy; writes `<layer>.mesh.json` and
    /// compares against the same total spread evenly.
    #[arg(long, value_name = "N")]
    vertex_total: Option<usize>,
    /// Also write a self-contained web page report, `DIR/index.html`, with
    /// its images beside it: the strategies, the heatmaps side by side, and
    /// a card per layer (preview, budget plot from a sweep, numbers,
    /// warnings).
    #[arg(long, value_name = "DIR")]
    report: Option<PathBuf>,
}

#[derive(Args)]
struct SweepArgs {
    /// The PNG layer to cut at each budget.
    image: PathBuf,
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

fn main() -> ExitCode {
    let cli = Cli::parse();
    let print = Print {
        quiet: cli.quiet,
        json: cli.json,
    };
    match cli.command {
        Command::Cut(args) => cut(&args, print),
        Command::Check { mesh, image } => check(&mesh, &image, print),
        Command::Scene(args) => scene(&args, print),
        Command::Sweep(args) => sweep(&args, print),
    }
}

struct LayerLine {
    name: String,
    vertices: usize,
    capture: f64,
    excess: f64,
    must_cover: f64,
    notes: Vec<String>,
    /// The files written.
    outputs: Vec<String>,
}

fn cut(args: &CutArgs, print: Print) -> ExitCode {
    let settings = args.settings();
    if let Err(e) = settings.validate() {
        error(&e);
        return ExitCode::from(2);
    }
    if args.glb && args.format == FormatArg::Json {
        error("--glb chooses how the glTF asset is written, but --format json writes none\n  hint: add --format gltf (the .glb alone) or --format all (the mesh file and the .glb)");
        return ExitCode::from(2);
    }
    let outputs = Outputs::of(args);
    if let Err(e) = std::fs::create_dir_all(&args.out) {
        error(format!(
            "{}: the output folder cannot be created ({e})\n  hint: choose a writable --out folder",
            args.out.display()
        ));
        return ExitCode::from(2);
    }
    // two layers with one stem would write one mesh file: refuse the later ones
    let mut seen = std::collections::HashMap::new();
    let clash: Vec<Option<PathBuf>> = args
        .images
        .iter()
        .map(|p| {
            let stem = p.file_stem().map(|s| s.to_os_string()).unwrap_or_default();
            match seen.get(&stem) {
                Some(first) => Some(PathBuf::clone(first)),
                None => {
                    seen.insert(stem, p.clone());
                    None
                }
            }
        })
        .collect();
    // a bar only for a batch
    let progress = if args.images.len() > 1 {
        bar(print, args.images.len(), "layers cut")
    } else {
        indicatif::ProgressBar::hidden()
    };
    let results: Vec<Result<LayerLine, FileError>> = args
        .images
        .par_iter()
        .zip(clash.par_iter())
        .map(|(path, clash)| match clash {
            Some(first) => Err(FileError::new(
                path,
                format!(
                    "has the same name as {} and would overwrite its output files",
                    first.display()
                ),
                "rename one of them, or cut them into separate --out folders",
            )),
            None => cut_one(path, &args.out, &settings, outputs),
        })
        .inspect(|_| progress.inc(1))
        .collect();
    progress.finish_and_clear();
    if print.text() {
        println!(
            "{:<28} {:>8} {:>9} {:>12}",
            "layer", "vertices", "capture", "excess"
        );
    }
    let (mut ok, mut vertices, mut failures) = (0usize, 0usize, Vec::new());
    let mut objects = Vec::new();
    for r in results {
        match r {
            Ok(l) if !print.text() => {
                objects.push(serde_json::json!({
                    "layer": l.name,
                    "vertices": l.vertices,
                    "opaque_capture": l.capture,
                    "excess": l.excess,
                    "notes": l.notes,
                    "outputs": l.outputs,
                }));
                ok += 1;
                vertices += l.vertices;
            }
            Ok(l) => {
                println!(
                    "{:<28} {:>8} {:>8.1}% {:>8.0} tx ({:.1}%)",
                    l.name,
                    l.vertices,
                    100.0 * l.capture,
                    l.excess,
                    if l.must_cover > 0.0 {
                        100.0 * l.excess / l.must_cover
                    } else {
                        0.0
                    }
                );
                for n in &l.notes {
                    println!("  note: {n}");
                }
                ok += 1;
                vertices += l.vertices;
            }
            Err(e) => failures.push(e),
        }
    }
    if print.json {
        println!(
            "{}",
            serde_json::to_string_pretty(&objects).expect("plain values serialize")
        );
    } else if print.text() {
        println!("total: {ok} layers, {vertices} vertices");
    }
    if failures.is_empty() {
        return ExitCode::SUCCESS;
    }
    eprintln!("{} of {} layers failed:", failures.len(), args.images.len());
    for e in &failures {
        error(&e);
    }
    ExitCode::from(2)
}

fn cut_one(
    path: &Path,
    out: &Path,
    settings: &CutSettings,
    outputs: Outputs,
) -> Result<LayerLine, FileError> {
    let map = load_alpha(path)?;
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "layer".into());
    let name = path
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    if outputs.paths(out, &stem).iter().any(|d| same_file(d, path)) {
        return Err(FileError::new(
            path,
            "would be overwritten by its own output file",
            "choose another --out folder",
        ));
    }
    let outcome = cut_layer(&map, &name, settings);
    if outputs.json {
        let json = serde_json::to_vec_pretty(&outcome.mesh).expect("a mesh serializes");
        write_atomic(&out.join(format!("{stem}.mesh.json")), &json)?;
    }
    if outputs.gltf || outputs.glb {
        // the PNG by a URI relative to the folder of the .gltf / .glb
        let uri = relative_uri(out, path).ok_or_else(|| {
            FileError::new(
                path,
                format!(
                    "has no path relative to the output folder {} for the glTF image URI",
                    out.display()
                ),
                "put the --out folder on the same drive as the layers",
            )
        })?;
        if outputs.gltf {
            write_gltf(&outcome.mesh, &uri, out, &stem)?;
        }
        if outputs.glb {
            write_glb(&outcome.mesh, &uri, out, &stem)?;
        }
    }
    if outputs.preview {
        let rgba = image::open(path)
            .map_err(|e| FileError::new(path, format!("cannot be read ({e})"), "check the file"))?
            .to_rgba8();
        let img = underdraw::preview::render_preview(&rgba, &outcome.mesh, PREVIEW_WIDTH);
        let dest = out.join(format!("{stem}.preview.png"));
        write_atomic(&dest, &underdraw::heatmap::rgba_png(img))?;
    }
    let s = &outcome.mesh.stats;
    let written = outputs
        .paths(out, &stem)
        .iter()
        .map(|p| p.display().to_string())
        .collect();
    Ok(LayerLine {
        name: path.display().to_string(),
        vertices: s.vertices,
        capture: s.opaque_capture(),
        excess: s.excess(),
        must_cover: s.must_cover_area,
        notes: outcome.notes,
        outputs: written,
    })
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}

fn check(mesh_path: &Path, image_path: &Path, print: Print) -> ExitCode {
    let mesh = match load_mesh(mesh_path) {
        Ok(m) => m,
        Err(e) => {
            error(&e);
            return ExitCode::from(2);
        }
    };
    let map = match load_alpha(image_path) {
        Ok(m) => m,
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
                "contract holds: opaque mesh {:.1} of {:.1} safe texels, meshes cover {:.1} of {:.1} must-cover texels, no overlap",
                report.opaque_area, report.safe_area, report.covered_area, report.must_cover_area
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

fn scene(args: &SceneArgs, print: Print) -> ExitCode {
    let out = args.out.clone().unwrap_or_else(|| {
        let stem = args
            .scene
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        let stem = stem.trim_end_matches(".json").trim_end_matches(".scene");
        Path::new("out").join(stem)
    });
    let opts = SceneOptions {
        scene: args.scene.clone(),
        out,
        dump_frame: args.dump_frame,
        vertex_total: args.vertex_total,
        report: args.report.clone(),
        progress: None,
    };
    let progress = Arc::new(SceneBar {
        print,
        current: Mutex::new(None),
    });
    let opts = SceneOptions {
        progress: Some(progress.clone()),
        ..opts
    };
    let result = run_scene(&opts);
    progress.clear();
    match result {
        Ok(report) => {
            if print.json {
                println!(
                    "{}",
                    serde_json::to_string_pretty(&report).expect("the report serializes")
                );
            } else if print.text() {
                print!("{}", report.table());
                if let Some(dir) = &args.report {
                    println!("report: {}", dir.join("index.html").display());
                }
            }
            ExitCode::SUCCESS
        }
        Err(e) => {
            error(&e);
            ExitCode::from(2)
        }
    }
}

fn sweep(args: &SweepArgs, print: Print) -> ExitCode {
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
    let map = match load_alpha(&args.image) {
        Ok(m) => m,
        Err(e) => return fail(e),
    };
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
    let points = sweep_layer(&map, &name, &base, &BUDGETS);
    let knee_budget = knee(&points, args.knee);
    if let Err(e) = write_atomic(&dest, to_csv(&points).as_bytes()) {
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
