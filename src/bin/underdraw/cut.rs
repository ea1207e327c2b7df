//! `underdraw cut`: layers and folders in, mesh files and glTF assets out
//! (the work is `underdraw::batch`; this parses, calls it and prints).

use crate::{bar, CutOptions, Failures, Line, Print, Result};
use clap::parser::ValueSource;
use clap::{ArgMatches, Args, ValueEnum};
use std::path::PathBuf;
use std::process::ExitCode;
use underdraw::batch::{self, LayerReport, Outputs, Status};
use underdraw::io::ImageLimits;
use underdraw::mesh::VertexFormat;
use underdraw::present::results::{to_json, CutResult};

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
pub(crate) struct CutArgs {
    /// PNG layers (RGBA; images without alpha count as fully opaque),
    /// compressed textures (.ktx2, .astc: cut on their decoded levels) and
    /// folders: a folder is searched recursively for `*.png`, and its
    /// layout is mirrored in the output folder (`in/town/houses.png` →
    /// `OUT/town/houses.mesh.json`); files given directly are laid out
    /// below their deepest common folder (files of one folder: `OUT/<stem>.*`;
    /// `T/Art/h.png` and `T/Bath/h.png`: `OUT/Art/h.*` and `OUT/Bath/h.*`).
    /// An input that gives no layer is an error.
    #[arg(required = true, value_name = "PATH")]
    images: Vec<PathBuf>,
    /// Folder for the output files (created if missing) and the manifest
    /// `underdraw-manifest.json`. It may not be an input folder; inside one,
    /// it is skipped when the folder is searched.
    #[arg(long, short)]
    out: PathBuf,
    /// Take only the folders' layers matching this pattern (repeatable),
    /// matched against the path relative to the input folder: `*` within a
    /// folder name, `**` across folders, e.g. `ui/*.png`, `**/fog*.png`.
    #[arg(long, value_name = "GLOB")]
    include: Vec<String>,
    /// Leave out the folders' layers matching this pattern (repeatable).
    #[arg(long, value_name = "GLOB")]
    exclude: Vec<String>,
    /// Settings file for every input, instead of the `underdraw.settings.json`
    /// found at the root of each input folder: {"defaults": {...},
    /// "layers": [{"match": GLOB, ...}]}. Options given on the command line
    /// override it.
    #[arg(long, value_name = "FILE")]
    settings: Option<PathBuf>,
    /// Layers cut at once (default: one per core).
    #[arg(long, short, value_name = "N", value_parser = clap::value_parser!(u32).range(1..))]
    jobs: Option<u32>,
    /// Cut every layer, even those the manifest shows unchanged.
    #[arg(long)]
    force: bool,
    /// Seconds to wait for another run writing the same --out folder (it
    /// holds `OUT/underdraw.lock`, which names it) before refusing; 0
    /// refuses at once.
    #[arg(long, value_name = "S", default_value_t = 10)]
    lock_wait: u64,
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
    /// How the glTF assets store their vertices. Needs `--format gltf` or
    /// `all`.
    #[arg(long, value_enum, default_value = "f32")]
    vertex_format: VertexFormat,
    /// Also write `<OUT>/<stem>.preview.png`: the layer over a checkerboard
    /// with the opaque mesh tinted blue and the blended one orange (lightly,
    /// so the art shows), their edges on top, the regions' outlines dotted,
    /// and a caption in words; a layer wider than tall is shown plain above
    /// its cut. At most 1024 pixels wide. For a sprite sheet, one
    /// `<OUT>/<sheet stem>.preview.png`: the whole sheet with every
    /// region's meshes at its rectangle and the whole sheet's outlines.
    #[arg(long)]
    preview: bool,
    /// The compressed texture that ships for the one PNG layer given (KTX
    /// 2.0: RGBA8, ETC2 RGBA8 / RGB8A1, ASTC LDR 4x4 to 12x12, optionally
    /// Zstandard-supercompressed; or a raw .astc file): the layer is cut on
    /// both, safe where both sample opaque and covering what either shows,
    /// with --mip-levels counting the texture's own levels. A .ktx2 or .astc
    /// file can also be cut alone, given as the layer. With --regions: the
    /// texture of the sheet, every region cut against it.
    #[arg(long, value_name = "FILE")]
    texture: Option<PathBuf>,
    /// Most vertices per layer, both meshes together (a vertex they share
    /// counts once). At least 4.
    #[arg(long, value_name = "N", default_value_t = 64, value_parser = clap::value_parser!(u32).range(4..))]
    budget: u32,
    /// Cut the named regions of a sprite sheet (the one PNG given), each
    /// as its own layer, from this regions file ({"format":
    /// "underdraw.regions", "version": 1, "regions": [{"name": ..., "rect":
    /// [x, y, w, h]}, ...]}; "slices" for a nine-slice panel, "frames" for
    /// an animation): writes `OUT/<sheet stem>/<name>.mesh.json` (and glTF)
    /// per region, positions local to the region, texture coordinates
    /// addressing the sheet.
    #[arg(long, value_name = "FILE", conflicts_with = "find_regions")]
    regions: Option<PathBuf>,
    /// Find the sheets' regions (each group of visible texels separated
    /// from the others by a transparent texel, its bounding box, named
    /// `<sheet stem>-<n>` in reading order), write them to
    /// `OUT/<sheet stem>.regions.json` to rename and edit, and cut them as
    /// with --regions.
    #[arg(long)]
    find_regions: bool,
    /// With --regions: also cut each frame of an animation alone, as
    /// `<name>.<frame>.mesh.json`, for engines that switch meshes per frame.
    #[arg(long)]
    per_frame: bool,
    #[command(flatten)]
    options: CutOptions,
}

pub(crate) fn cut(
    args: &CutArgs,
    m: &ArgMatches,
    print: Print,
    limits: ImageLimits,
) -> Result<ExitCode> {
    let defaults = args.options.settings(args.budget as usize)?;
    if args.glb && args.format == FormatArg::Json {
        anyhow::bail!("--glb chooses how the glTF asset is written, but --format json writes none\n  hint: add --format gltf (the .glb alone) or --format all (the mesh file and the .glb)");
    }
    if args.vertex_format != VertexFormat::F32 && args.format == FormatArg::Json {
        anyhow::bail!("--vertex-format chooses how the glTF asset stores its vertices, but --format json writes none\n  hint: add --format gltf or --format all");
    }
    // the options typed on the command line override a settings file
    let typed = |id: &str| m.value_source(id) == Some(ValueSource::CommandLine);
    let gltf = args.format != FormatArg::Json;
    if args.regions.is_some() || args.find_regions || args.per_frame {
        let outputs = Outputs {
            json: args.format != FormatArg::Gltf,
            gltf: gltf && !args.glb,
            glb: gltf && args.glb,
            preview: args.preview,
            vertex_format: args.vertex_format,
        };
        let unsupported = [
            ("--include", !args.include.is_empty()),
            ("--exclude", !args.exclude.is_empty()),
        ];
        return crate::sheet::cut_sheets(
            &crate::sheet::SheetArgs {
                images: &args.images,
                out: &args.out,
                regions: args.regions.as_deref(),
                find: args.find_regions,
                per_frame: args.per_frame,
                force: args.force,
                settings: args.settings.as_deref(),
                base: defaults,
                overrides: args.options.partial(args.budget as usize, typed),
                outputs,
                lock_wait: std::time::Duration::from_secs(args.lock_wait),
                texture: args.texture.as_deref(),
                unsupported: unsupported.iter().filter(|u| u.1).map(|u| u.0).collect(),
            },
            print,
            limits,
        );
    }
    let request = batch::Request {
        inputs: args.images.clone(),
        out: args.out.clone(),
        include: args.include.clone(),
        exclude: args.exclude.clone(),
        settings_file: args.settings.clone(),
        base: defaults,
        overrides: args.options.partial(args.budget as usize, typed),
        outputs: Outputs {
            json: args.format != FormatArg::Gltf,
            gltf: gltf && !args.glb,
            glb: gltf && args.glb,
            preview: args.preview,
            vertex_format: args.vertex_format,
        },
        texture: args.texture.clone(),
    };
    let mut plan = batch::plan(&request)?;
    // PNGs with a `<stem>.regions.json` beside them are cut as sheets
    let sheets = underdraw::sheet::batch::take_sheets(&mut plan, &request, false, limits);
    if plan.jobs.is_empty() && sheets.is_empty() {
        // nothing to cut: a typo in a path or a pattern must not pass silently
        let mut lines: Vec<Line> = plan
            .empty
            .iter()
            .map(|e| Line::Error(e.to_string()))
            .collect();
        lines.push(Line::Error("no layer found: nothing was cut\n  hint: give PNG files or folders that hold them; see `underdraw cut --help` for --include and --exclude".into()));
        return Err(Failures(lines).into());
    }
    let options = batch::RunOptions {
        jobs: args.jobs.map(|n| n as usize),
        force: args.force,
        limits,
        lock_wait: std::time::Duration::from_secs(args.lock_wait),
    };
    // a bar only for a batch
    let progress = if plan.jobs.len() > 1 {
        bar(print, plan.jobs.len(), "layers cut")
    } else {
        indicatif::ProgressBar::hidden()
    };
    let report = if plan.jobs.is_empty() {
        Ok(batch::BatchReport {
            layers: Vec::new(),
            notes: Vec::new(),
            manifest_error: None,
        })
    } else {
        batch::run(&plan, &options, &|_| progress.inc(1))
    };
    progress.finish_and_clear();
    let report = report?;
    let crate::sheet::SheetsDone {
        reports: sheet_reports,
        errors: sheet_errors,
        notes: sheet_notes,
    } = crate::sheet::run_found(&sheets, &plan.out, args.force, options.lock_wait);
    let result = CutResult::new(&report, &plan.empty);
    let (region_rows, regions_total) = crate::sheet::region_rows(&sheet_reports);
    if print.json {
        let mut objects = serde_json::to_value(&result).expect("plain values serialize");
        if let Some(list) = objects.as_array_mut() {
            list.extend(
                crate::sheet::found_json(&sheet_reports)
                    .iter()
                    .map(|l| serde_json::to_value(l).expect("plain values serialize")),
            );
        }
        println!("{}", to_json(&objects));
    } else if print.text() {
        let cwd = std::env::current_dir().unwrap_or_default();
        for n in &sheet_notes {
            println!("note: {n}");
        }
        print!(
            "{}",
            result.text_with(&cwd, &region_rows, regions_total.as_deref())
        );
    }
    let failed: Vec<&LayerReport> = report
        .layers
        .iter()
        .filter(|l| l.status == Status::Failed)
        .collect();
    let mut lines = Vec::new();
    if let Some(e) = &report.manifest_error {
        lines.push(Line::Error(e.to_string()));
    }
    if !plan.empty.is_empty() {
        lines.push(Line::Heading(format!(
            "{} of {} inputs gave no layer:",
            plan.empty.len(),
            args.images.len()
        )));
        lines.extend(plan.empty.iter().map(|e| Line::Error(e.to_string())));
    }
    if !failed.is_empty() {
        lines.push(Line::Heading(format!(
            "{} of {} layers failed:",
            failed.len(),
            report.layers.len()
        )));
        lines.extend(
            failed
                .iter()
                .filter_map(|l| l.error.as_ref())
                .map(|e| Line::Error(e.to_string())),
        );
    }
    lines.extend(sheet_errors);
    if lines.is_empty() {
        Ok(ExitCode::SUCCESS)
    } else {
        Err(Failures(lines).into())
    }
}
