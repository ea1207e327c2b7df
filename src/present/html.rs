//! The scene report as one self-contained web page, `index.html`: inline
//! CSS, no script, no external font, every image a file beside the page
//! named by a relative path. The page is well-formed XML (XHTML syntax:
//! every element closed, attributes quoted) so it can be read back by an
//! XML parser, and prints on paper (a print style sheet keeps cards whole).
//! [`write_report_page`] writes it with its images (`scene --report DIR`).

use crate::error::FileError;
use crate::plot::xml_escape as esc;
use crate::scene::draws::Strategy;
use crate::scene::file::Scene;
use crate::scene::report::SceneReport;
use crate::scene::run::SceneOptions;
use std::fmt::Write;
use std::path::{Path, PathBuf};

/// One layer's card.
#[derive(Clone, Debug, Default)]
pub struct LayerCard {
    /// The layer's name in the scene file: the card's heading and its
    /// `data-layer` attribute.
    pub name: String,
    /// The preview image's file name beside the page.
    pub preview: Option<String>,
    /// The budget plot's file name beside the page.
    pub plot: Option<String>,
    /// (label, value) rows.
    pub numbers: Vec<(String, String)>,
    /// What the artist should look at.
    pub warnings: Vec<String>,
}

/// A region layer narrower than this (texels) is previewed enlarged by a
/// whole factor, so its cut and caption can be read.
const PREVIEW_MIN_WIDTH: u32 = 240;

/// The texels a region layer draws, for its preview: the region's
/// rectangle of the sheet (an animation's first frame), and for a nine-slice
/// panel drawn stretched, its slices stretched to the drawn size (corners as
/// they are, the middle slices sampled nearest). `None` for a mesh without
/// a `region` key or a rectangle outside the sheet.
fn region_texels(
    sheet: &image::RgbaImage,
    mesh: &crate::mesh::LayerMesh,
) -> Option<image::RgbaImage> {
    let r = mesh.region.as_ref()?;
    let [x, y, w, h] = r.rect;
    if x + w > sheet.width() || y + h > sheet.height() {
        return None;
    }
    let crop = image::imageops::crop_imm(sheet, x, y, w, h).to_image();
    let [dw, dh] = mesh.size;
    if [dw, dh] == [w, h] {
        return Some(crop);
    }
    let [left, top, right, bottom] = r.slices?;
    // the region texel a drawn texel shows, along one axis
    let back = |p: u32, n: u32, lo: u32, hi: u32, to: u32| -> u32 {
        if p < lo {
            p
        } else if p >= to - hi {
            n - (to - p)
        } else {
            lo + ((p - lo) as u64 * (n - lo - hi) as u64 / (to - lo - hi) as u64) as u32
        }
    };
    Some(image::RgbaImage::from_fn(dw, dh, |px, py| {
        *crop.get_pixel(back(px, w, left, right, dw), back(py, h, top, bottom, dh))
    }))
}

const STYLE: &str = "
body { font-family: sans-serif; margin: 24px; color: #1b1b1b; background: #ffffff; }
h1 { font-size: 22px; } h2 { font-size: 18px; margin-top: 28px; }
table { border-collapse: collapse; margin: 8px 0; }
th, td { border: 1px solid #c8c8c8; padding: 3px 8px; text-align: right; }
th:first-child, td:first-child { text-align: left; }
.pair { display: flex; flex-wrap: wrap; gap: 16px; }
.pair figure { margin: 0; flex: 1 1 420px; }
img { max-width: 100%; height: auto; border: 1px solid #c8c8c8; }
.cards { display: flex; flex-wrap: wrap; gap: 16px; }
.card { border: 1px solid #a0a0a0; border-radius: 6px; padding: 12px; flex: 1 1 520px; }
.warning { color: #8a3b00; font-weight: bold; }
.share { width: 420px; max-width: 100%; height: 18px; border: 1px solid #555555; background: #e6e6e6; }
.share div { height: 100%; background: #2f6fb0; }
.swatch { display: inline-block; width: 12px; height: 12px; border: 1px solid #555555; vertical-align: middle; }
@media print { .card, figure, table { break-inside: avoid; } body { margin: 0; } }
";

/// The floor and the share of the possible saving, drawn as bars (overall,
/// allocated, per layer), and what the layered order gets on each GPU class.
fn floor_section(s: &mut String, report: &SceneReport) {
    let bar = |s: &mut String, id: &str, label: &str, v: f64| {
        let _ = writeln!(
            s,
            "<p>{label}: {v:.2}</p><div class=\"share\" id=\"{id}\" data-share=\"{v}\"><div style=\"width: {:.1}%\"></div></div>",
            100.0 * v.clamp(0.0, 1.0)
        );
    };
    let Some(share) = report.saving_share else {
        return;
    };
    let _ = writeln!(s, "<h2>Share of the possible saving</h2>");
    let _ = writeln!(
        s,
        "<p>The exact strategy draws every layer as exactly its safe-opaque region (opaque) and the rest of its must-cover region (blended), with unlimited vertices: the floor any cut can reach. The share is (rect - split) / (rect - exact), in fragments per frame: how much of what cutting can save the meshes save.</p>"
    );
    bar(s, "saving-share", "split, the whole frame", share);
    if let Some(a) = report.allocation_saving_share {
        bar(s, "allocation-saving-share", "the allocated budgets", a);
    }
    let _ = writeln!(s, "<table id=\"layer-shares\"><tr><th>layer</th><th>share</th><th>fragments / frame: rect</th><th>split</th><th>exact</th></tr>");
    for l in &report.layers {
        let v = l.saving_share;
        let _ = writeln!(
            s,
            "<tr data-layer=\"{0}\"><td>{0}</td><td>{1}</td><td>{2:.0}</td><td>{3:.0}</td><td>{4:.0}</td></tr>",
            esc(&l.name),
            v.map_or("-".to_string(), |v| format!("<div class=\"share\" data-share=\"{v}\" title=\"{v:.2}\"><div style=\"width: {:.1}%\"></div></div>{v:.2}", 100.0 * v.clamp(0.0, 1.0))),
            l.rect.fragments,
            l.split.fragments,
            l.exact.fragments
        );
    }
    let _ = writeln!(s, "</table>");
    let find = |st: Strategy| {
        report
            .strategies
            .iter()
            .find(|r| r.strategy == st)
            .map(|r| r.mean_overdraw)
    };
    if let (Some(plain), Some(hsr), Some(split)) = (
        find(Strategy::Layered),
        find(Strategy::LayeredHsr),
        find(Strategy::Split),
    ) {
        let _ = writeln!(
            s,
            "<h2>Without a depth buffer</h2>\n<p id=\"layered\">Drawn layer by layer, back to front, each layer's opaque triangles (blending off) then its blended ones, with no depth: {plain:.3} fragments per pixel on a GPU that shades every fragment (the meshes save only the transparent texels), {hsr:.3} on one with ideal hidden-surface removal (a fragment is shaded only when no later opaque fragment covers its pixel; split with depth: {split:.3}).</p>"
        );
    }
}

fn hex(c: [u8; 3]) -> String {
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

/// The page for `report`: the summary table of strategies, the heatmaps
/// (`heatmaps`: file name and caption) side by side with their legend, one
/// card per layer, and the settings used (label, value).
pub fn index_html(
    report: &SceneReport,
    heatmaps: &[(String, String)],
    cards: &[LayerCard],
    settings: &[(String, String)],
) -> String {
    let mut s = String::new();
    let _ = write!(
        s,
        "<!DOCTYPE html>\n<html xmlns=\"http://www.w3.org/1999/xhtml\" lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n<title>underdraw: {}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n",
        esc(&report.scene)
    );
    let _ = writeln!(s, "<h1>Overdraw report: {}</h1>", esc(&report.scene));
    let _ = writeln!(
        s,
        "<p>{} x {} pixels, {} layers, {} camera samples. Overdraw: fragments shaded per pixel of a frame, mean over the samples.</p>",
        report.viewport[0],
        report.viewport[1],
        report.layers.len(),
        report.camera_positions.len()
    );

    let _ = writeln!(s, "<h2>Strategies</h2>");
    let _ = writeln!(
        s,
        "<table id=\"strategies\"><tr><th>strategy</th><th>overdraw (mean)</th><th>overdraw peak (sample)</th><th>shader lanes</th><th>vertices</th><th>draws</th></tr>"
    );
    for r in &report.strategies {
        let _ = writeln!(
            s,
            "<tr class=\"strategy\" data-strategy=\"{0}\" data-mean-overdraw=\"{1}\"><td>{0}</td><td>{1:.3}</td><td>{2:.3} ({3})</td><td>{4:.0}</td><td>{5:.0}</td><td>{6:.0}</td></tr>",
            r.strategy.name(),
            r.mean_overdraw,
            r.peak_overdraw,
            r.peak_sample,
            r.per_frame.lanes,
            r.per_frame.vertices,
            r.per_frame.draws
        );
    }
    let _ = writeln!(
        s,
        "</table>\n<p>Shader lanes (four per 2x2 quad shaded), vertices (vertex shader runs) and draws are per frame, the mean over the camera samples.</p>"
    );
    floor_section(&mut s, report);

    if !heatmaps.is_empty() {
        let _ = writeln!(s, "<h2>Overdraw heatmaps</h2>\n<div class=\"pair\">");
        for (file, caption) in heatmaps {
            let _ = writeln!(
                s,
                "<figure><img src=\"{0}\" alt=\"{1}\"/><figcaption>{1}</figcaption></figure>",
                esc(file),
                esc(caption)
            );
        }
        let top = report.heatmaps.first().map_or(1, |h| h.top);
        let _ = writeln!(
            s,
            "</div>\n<p class=\"legend\">Colour: fragments per pixel, on one scale for both: black 0, then blue, purple, red, orange, yellow, white for {top} and more (the strip under each map labels every count).</p>"
        );
    }

    let _ = writeln!(s, "<h2>Layers</h2>");
    let _ = writeln!(
        s,
        "<p>Previews: <span class=\"swatch\" style=\"background: {}\"></span> opaque mesh (drawn with blending off), <span class=\"swatch\" style=\"background: {}\"></span> blended mesh, over the layer on a checkerboard; dotted white: the safe-opaque outline, dotted black: the must-cover outline. A layer wider than tall is shown plain above its cut.</p>",
        hex(crate::preview::OPAQUE_TINT),
        hex(crate::preview::BLENDED_TINT)
    );
    let _ = writeln!(s, "<div class=\"cards\">");
    for c in cards {
        let _ = writeln!(
            s,
            "<section class=\"card\" data-layer=\"{0}\"><h3>{0}</h3>",
            esc(&c.name)
        );
        for w in &c.warnings {
            let _ = writeln!(s, "<p class=\"warning\">{}</p>", esc(w));
        }
        if let Some(p) = &c.preview {
            let _ = writeln!(
                s,
                "<img src=\"{}\" alt=\"preview of {}\"/>",
                esc(p),
                esc(&c.name)
            );
        }
        if let Some(p) = &c.plot {
            let _ = writeln!(
                s,
                "<img src=\"{}\" alt=\"budget plot of {}\"/>",
                esc(p),
                esc(&c.name)
            );
        }
        let _ = writeln!(s, "<table class=\"numbers\">");
        for (k, v) in &c.numbers {
            let _ = writeln!(s, "<tr><td>{}</td><td>{}</td></tr>", esc(k), esc(v));
        }
        let _ = writeln!(s, "</table></section>");
    }
    let _ = writeln!(s, "</div>");

    let _ = writeln!(s, "<h2>Settings used</h2>\n<table id=\"settings\">");
    for (k, v) in settings {
        let _ = writeln!(s, "<tr><td>{}</td><td>{}</td></tr>", esc(k), esc(v));
    }
    let _ = writeln!(s, "</table>");
    for n in &report.notes {
        let _ = writeln!(s, "<p class=\"note\">note: {}</p>", esc(n));
    }
    s.push_str("</body>\n</html>\n");
    s
}

/// Writes the web page report into `dir`: `index.html`, the heatmaps, and
/// per layer `<name>.preview.png` and (for a layer cut on the fly) its
/// budget plot `<name>.plot.svg` from a sweep at [`crate::sweep::BUDGETS`].
/// Returns every file written, in the order written (`index.html` last), for
/// the report's `outputs`: the page does not show them, so the caller writes
/// it before `scene-report.json`.
pub fn write_report_page(
    dir: &Path,
    scene: &Scene,
    layers: &[crate::scene::prepare::Layer],
    report: &SceneReport,
    heatmap_files: &[(String, Vec<u8>)],
    opts: &SceneOptions,
) -> Result<Vec<PathBuf>, FileError> {
    use crate::plot::{sweep_svg, Marks};
    use crate::sweep::{knee, sweep_sampled, BUDGETS};
    /// The knee's fraction, as `underdraw sweep`'s default.
    const KNEE: f64 = 0.8;
    let mut out = crate::scene::run::scene_folder(
        scene,
        dir,
        "report folder",
        crate::error::Setting::Report,
    )?;
    let mut shown = Vec::new();
    for ((file, bytes), info) in heatmap_files.iter().zip(&report.heatmaps) {
        out.write(file, bytes)?;
        let strategy = file.trim_start_matches("heatmap-").trim_end_matches(".png");
        shown.push((
            file.clone(),
            format!(
                "{strategy}: camera sample {} (x = {}), where plain rectangles peak",
                info.sample, info.camera_x
            ),
        ));
    }
    let mut cards = Vec::new();
    // layers drawn from one image with one cut share their sweep
    let mut sweeps = std::collections::HashMap::new();
    let progress = opts.progress.as_deref();
    if let Some(p) = progress {
        p.start("budget sweeps", layers.len());
    }
    for (layer, lr) in layers.iter().zip(&report.layers) {
        if let Some(p) = progress {
            p.step();
        }
        let name = &layer.spec.name;
        let mesh = &layer.mesh;
        let s = &mesh.stats;
        let mut card = LayerCard {
            name: name.clone(),
            ..Default::default()
        };
        // a preview is drawn over a PNG (a shipped texture has none)
        let bytes = crate::io::read_input(&layer.spec.image)?;
        let rgba = match crate::io::is_texture(&bytes) {
            false => Some(crate::io::decode_rgba(
                &layer.spec.image,
                &bytes,
                &opts.limits,
            )?),
            true => None,
        };
        // a region of a sheet: the texels it draws, stretched as drawn
        let rgba = match layer.is_region() {
            true => rgba.and_then(|sheet| region_texels(&sheet, mesh)),
            false => rgba,
        };
        if let Some(rgba) = rgba.filter(|r| r.dimensions() == (mesh.size[0], mesh.size[1])) {
            let file = format!("{name}.preview.png");
            // a small region (an icon) is shown enlarged, whole texels
            let img = match rgba.width() < PREVIEW_MIN_WIDTH && layer.is_region() {
                true => {
                    let k = PREVIEW_MIN_WIDTH.div_ceil(rgba.width());
                    let big = image::imageops::resize(
                        &rgba,
                        rgba.width() * k,
                        rgba.height() * k,
                        image::imageops::FilterType::Nearest,
                    );
                    let mut m = mesh.clone();
                    m.positions.iter_mut().for_each(|p| *p *= k as f32);
                    m.size = [m.size[0] * k, m.size[1] * k];
                    crate::preview::render_preview(&big, &m, 1024)
                }
                false => crate::preview::render_preview(&rgba, mesh, 1024),
            };
            out.write(&file, &super::png::rgba_png(img))?;
            card.preview = Some(file);
        }
        let mut knee_budget = None;
        // a region layer's alpha is the whole sheet: no plot of the sheet
        let own = layer.alpha.as_ref().filter(|_| !layer.is_region());
        if let (Some(alpha), Some(settings)) = (own, layer.cut_settings()) {
            let source = crate::scene::prepare::source_name(&layer.spec.image);
            let points: &Vec<_> = sweeps
                .entry((layer.spec.image.clone(), settings))
                .or_insert_with(|| {
                    sweep_sampled(alpha.sampled(&settings), &source, &settings, &BUDGETS)
                });
            knee_budget = knee(points, KNEE);
            let svg = sweep_svg(
                &format!("{name}: saving against vertices"),
                points,
                Marks {
                    knee: knee_budget.map(|k| (k, KNEE)),
                    chosen: mesh.budget,
                },
            );
            let file = format!("{name}.plot.svg");
            out.write(&file, svg.as_bytes())?;
            card.plot = Some(file);
        }
        let n = crate::quality::CutNumbers::of_mesh(s, mesh.budget, mesh.vertex_count());
        let opt = |v: Option<usize>| v.map_or("-".to_string(), |b| b.to_string());
        card.numbers = vec![
            ("budget".into(), opt(mesh.budget)),
            ("vertices".into(), mesh.vertex_count().to_string()),
            (
                "triangles, opaque and blended".into(),
                format!(
                    "{} and {}",
                    mesh.opaque.triangle_count(),
                    mesh.blended.triangle_count()
                ),
            ),
            ("opaque capture".into(), n.capture_text()),
            (
                "excess".into(),
                format!(
                    "{:.0} texels ({:.1}% of the must-cover area)",
                    n.excess,
                    100.0 * n.excess_share()
                ),
            ),
            (
                "saved vs rect (fragments per frame)".into(),
                format!("{:.0}", lr.saved_vs_rect),
            ),
            (
                "saved vs outline (fragments per frame)".into(),
                format!("{:.0}", lr.saved_vs_outline),
            ),
            (
                "share of the possible saving, (rect - split) / (rect - exact)".into(),
                lr.saving_share
                    .map_or("-".to_string(), |v| format!("{v:.2}")),
            ),
            (
                "saved per vertex added (fragments per frame)".into(),
                lr.saved_per_vertex
                    .map_or("-".to_string(), |v| format!("{v:.0}")),
            ),
            ("knee (80% of the largest saving)".into(), opt(knee_budget)),
            (
                "filter".into(),
                match mesh.filter.mip_levels {
                    0 => format!("{:?}, no mip levels", mesh.filter.mode),
                    l => format!("{:?}, mip levels 0 to {l}", mesh.filter.mode),
                }
                .to_lowercase(),
            ),
            ("wrap".into(), mesh.wrap.as_str().to_string()),
            (
                "alpha".into(),
                format!(
                    "opaque from {}, visible from {}",
                    mesh.alpha.opaque_min, mesh.alpha.visible_min
                ),
            ),
        ];
        if mesh.opaque.indices.is_empty() && s.safe_opaque_area > 0.0 {
            card.warnings.push(
                "opaque mesh empty at this budget: the layer hides nothing behind it; try a larger budget"
                    .into(),
            );
        }
        // a shipped texture: what the guarantee was computed for, as a row
        // (the same wording as `cut`'s note, which is then not repeated)
        let mut shown_note = None;
        if let (Some(t), Some(settings)) = (own.and_then(|a| a.texture()), layer.cut_settings()) {
            let mip = settings.filter.mip_levels;
            card.numbers
                .push(("guarantee computed for".into(), t.describe(mip)));
            shown_note = Some(t.guarantee_note(mip));
        }
        card.warnings.extend(n.warnings(knee_budget));
        card.warnings.extend(
            layer
                .notes
                .iter()
                .filter(|n| Some(*n) != shown_note.as_ref())
                .cloned(),
        );
        cards.push(card);
    }
    let settings = vec![
        ("scene file".to_string(), scene.path.display().to_string()),
        (
            "viewport".into(),
            format!("{} x {} pixels", scene.viewport[0], scene.viewport[1]),
        ),
        (
            "camera".into(),
            format!(
                "{} samples over {} pixels of travel",
                scene.samples, scene.travel
            ),
        ),
        (
            "vertex total".into(),
            opts.vertex_total
                .map_or("- (each layer its own budget)".into(), |t| t.to_string()),
        ),
        (
            "budget sweep".into(),
            format!("budgets {BUDGETS:?}, knee at {KNEE} of the largest saving"),
        ),
    ];
    let page = index_html(report, &shown, &cards, &settings);
    out.write("index.html", page.as_bytes())?;
    Ok(out.written().to_vec())
}
