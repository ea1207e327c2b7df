//! The exported demo scene drawn by a real engine: LÖVE 11 under a virtual
//! X display (`xvfb-run`, Mesa's software OpenGL) draws it with
//! `integrations/love` the split way (the draw list) and the plain way
//! (every layer's rectangle, blended), at three camera positions, one of
//! them fractional.
//!
//! The `regions` module does the same for regions of a sprite sheet (a
//! button, nine-slice panels, animation frames); the `panels` module checks
//! the loader's panel placement and frame choice.
//!
//! Needs Debian's `love` and `xvfb-run` (`.ci/run` installs them). Without
//! them the test is skipped with a reason, except under `CI=true`, where it
//! fails.
//!
//! Outside references:
//! - LÖVE 11, a real engine: its rasterizer, texture sampling and blending
//!   (on Mesa's llvmpipe) draw both frames; nothing of ours draws pixels.
//! - OpenGL ES 3.0 specification, texture minification/magnification,
//!   LINEAR (from memory): a sample at texture coordinate u reads texels
//!   i0 = floor(u * W - 0.5) and i0 + 1 with weights 1 - a and a,
//!   a = frac(u * W - 0.5); REPEAT wraps i modulo W, CLAMP_TO_EDGE clamps.
//!   The sky is checked against that rule where it alone shows.
//! - The same specification: the weights are applied with limited
//!   precision (implementations commonly quantize them to 8 bits: common
//!   practice, no source), so two draws whose interpolated texture
//!   coordinates differ in the last float bits may differ by one step of
//!   one texel difference: hence 2/255 per channel between split and plain.
//! - "over" with an alpha of exactly 1 stores the source colour, and with
//!   an alpha of exactly 0 leaves the destination unchanged (OpenGL ES
//!   blending equations, from memory): where the frame dump says only the
//!   opaque pass shades a pixel, both frames hold the front layer's sample,
//!   bit for bit.

use image::{ImageReader, Rgba, RgbaImage};
use serde_json::Value;
use std::collections::{HashMap, HashSet};
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};
use underdraw::frame::{render, Draw};
use underdraw::scene::run::load_frame_dump;

mod common;
use common::TempDir;

#[path = "love_render/regions.rs"]
mod regions;

#[path = "love_render/panels.rs"]
mod panels;

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");
/// Camera positions: the start, a sample of the demo scene (128 * 3) and a
/// fractional one that puts every layer off the pixel grid.
const CAMERAS: [f64; 3] = [0.0, 384.0, 1000.25];
/// Most a channel may differ between the split and the plain frame.
const TOLERANCE: u8 = 2;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Whether `tool` runs; else skip (or fail under CI) with the reason.
fn have(tool: &str, arg: &str) -> bool {
    let found = Command::new(tool)
        .arg(arg)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .is_ok();
    if !found {
        let ci = std::env::var("CI").is_ok_and(|v| v == "true");
        assert!(
            !ci,
            "CI needs `{tool}` (.ci/run installs love, xvfb and xauth)"
        );
        eprintln!("skipped: `{tool}` is not installed (apt-get install love xvfb xauth)");
    }
    found
}

fn run_underdraw(args: &[&std::ffi::OsStr]) {
    let o = Command::new(BIN)
        .args(args)
        .output()
        .expect("run underdraw");
    assert!(
        o.status.success(),
        "underdraw {args:?} failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
}

/// `xvfb-run love integrations/love EXPORT --camera X --screenshot OUT
/// [--plain]`, as the README gives it; returns LÖVE's stdout. Killed after
/// two minutes (a LÖVE error screen would wait for ever).
fn love_frame(export: &Path, camera: f64, out: &Path, plain: bool) -> String {
    let (ok, stdout, stderr) = love_run(export, camera, out, plain);
    assert!(
        ok,
        "love on {} failed:\n{stdout}\n{stderr}",
        export.display()
    );
    stdout
}

/// As [`love_frame`]; returns whether LÖVE succeeded, its stdout and its
/// stderr.
fn love_run(export: &Path, camera: f64, out: &Path, plain: bool) -> (bool, String, String) {
    let mut cmd = Command::new("xvfb-run");
    cmd.args(["-a", "-s", "-screen 0 640x480x24", "love"])
        .arg(root().join("integrations/love"))
        .arg(export)
        .args(["--camera", &camera.to_string(), "--screenshot"])
        .arg(out);
    if plain {
        cmd.arg("--plain");
    }
    let mut child = cmd
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run xvfb-run love");
    let start = Instant::now();
    loop {
        if child.try_wait().expect("wait for love").is_some() {
            break;
        }
        if start.elapsed() > Duration::from_secs(120) {
            let _ = child.kill();
            panic!("love did not finish within 2 minutes ({cmd:?})");
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    let o = child.wait_with_output().expect("love's output");
    (
        o.status.success(),
        String::from_utf8_lossy(&o.stdout).to_string(),
        String::from_utf8_lossy(&o.stderr).to_string(),
    )
}

fn read_rgba(path: &Path) -> RgbaImage {
    ImageReader::open(path)
        .unwrap_or_else(|e| panic!("{}: {e}", path.display()))
        .decode()
        .unwrap_or_else(|e| panic!("{}: {e}", path.display()))
        .to_rgba8()
}

fn max_channel_diff(a: &Rgba<u8>, b: &Rgba<u8>) -> u8 {
    (0..4).map(|c| a[c].abs_diff(b[c])).max().unwrap()
}

/// `underdraw scene SCENE --out OUT [--export EXPORT] --dump-frame 1
/// --quiet`: the model's frame at camera sample 1 dumped into `out`.
fn dump_scene(scene: &Path, out: &Path, export: Option<&Path>) {
    use std::ffi::OsStr;
    let mut args: Vec<&OsStr> = vec![
        OsStr::new("scene"),
        scene.as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ];
    if let Some(e) = export {
        args.extend([OsStr::new("--export"), e.as_os_str()]);
    }
    args.extend(["--dump-frame", "1", "--quiet"].map(OsStr::new));
    run_underdraw(&args);
}

/// The model's frame as [`dump_scene`] dumped it into `out`: its draws
/// under the split and rect strategies, the split counts PNG as written,
/// and the split frame's opaque pass alone with its per-pixel counts.
struct ModelFrame {
    viewport: [u32; 2],
    split: Vec<Draw>,
    rect: Vec<Draw>,
    counts: image::ImageBuffer<image::Luma<u16>, Vec<u16>>,
    opaque: Vec<Draw>,
    opaque_counts: Vec<u32>,
}

fn model_frame(out: &Path) -> ModelFrame {
    let mut dump = load_frame_dump(&out.join("frame-1.json")).unwrap();
    let viewport = dump.viewport;
    let mut draws = |s: &str| dump.strategies.remove(s).unwrap().draws;
    let (split, rect) = (draws("split"), draws("rect"));
    let counts = image::open(out.join("counts-1-split.png"))
        .unwrap()
        .to_luma16();
    let opaque: Vec<Draw> = split.iter().filter(|d| d.depth_write).cloned().collect();
    let opaque_counts = replay(viewport, &opaque);
    ModelFrame {
        viewport,
        split,
        rect,
        counts,
        opaque,
        opaque_counts,
    }
}

/// LÖVE's two frames of `export` at `camera`, the split way and the plain
/// way, written as `split-K.png` and `plain-K.png` in `dir`: the frames
/// (checked to be the viewport's size) and what LÖVE said for each.
fn love_frames(
    dir: &TempDir,
    export: &Path,
    camera: f64,
    k: usize,
    viewport: [u32; 2],
) -> ([RgbaImage; 2], [String; 2]) {
    let split_png = dir.path(&format!("split-{k}.png"));
    let plain_png = dir.path(&format!("plain-{k}.png"));
    let said = [
        love_frame(export, camera, &split_png, false),
        love_frame(export, camera, &plain_png, true),
    ];
    let frames = [read_rgba(&split_png), read_rgba(&plain_png)];
    for f in &frames {
        assert_eq!(f.dimensions(), (viewport[0], viewport[1]));
    }
    (frames, said)
}

/// LÖVE said it drew `split` draw calls the split way and `plain` the
/// plain way, at `camera` (`said`: what it said for each).
fn assert_draw_calls(said: &[String; 2], camera: f64, split: usize, plain: usize) {
    assert!(
        said[0].contains(&format!(": split, camera {camera}, {split} draw calls")),
        "LÖVE said {:?}, the model places {split} copies",
        said[0]
    );
    assert!(
        said[1].contains(&format!(": plain, camera {camera}, {plain} draw calls")),
        "LÖVE said {:?}, the model needs {plain} draws",
        said[1]
    );
}

/// The plain frame's draw calls: each rectangle copy of a layer (4
/// vertices) times its pieces (`pieces`: 1, or a nine-slice panel's
/// pieces of non-zero size).
fn plain_draw_calls(rect: &[Draw], pieces: impl Fn(&str) -> usize) -> usize {
    rect.iter()
        .map(|d| d.positions.len() / 2 / 4 * pieces(&d.layer))
        .sum()
}

/// The camera moved the picture: the first two frames differ at more than
/// a tenth of a quarter of their pixels.
fn assert_camera_moved(frames: &[RgbaImage]) {
    let moved = frames[0]
        .pixels()
        .zip(frames[1].pixels())
        .filter(|(a, b)| a != b)
        .count();
    assert!(moved > frames[0].len() / 4 / 10, "{moved}");
}

/// Keeps `frames` for a person to look at, as
/// `target/test-artifacts/PREFIX-K.png`.
fn keep_frames(frames: &[RgbaImage], prefix: &str) {
    let keep = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .parent()
        .unwrap()
        .join("test-artifacts");
    fs::create_dir_all(&keep).unwrap();
    for (k, f) in frames.iter().enumerate() {
        f.save(keep.join(format!("{prefix}-{k}.png"))).unwrap();
    }
}

/// A LÖVE program folder `dir/program`: `main.lua` is `main` after a line
/// setting `UNDERDRAW_DIR` to the loader's folder, `conf.lua` is `conf`
/// when given.
fn love_program(dir: &TempDir, main: &str, conf: Option<&str>) -> PathBuf {
    let program = dir.path("program");
    fs::create_dir_all(&program).unwrap();
    if let Some(c) = conf {
        fs::write(program.join("conf.lua"), c).unwrap();
    }
    let main = format!(
        "UNDERDRAW_DIR = {:?}\n{main}",
        root().join("integrations/love").display().to_string()
    );
    fs::write(program.join("main.lua"), main).unwrap();
    program
}

/// `love PROGRAM ARGS...` without a display (a program whose conf.lua
/// opens no window); checks it succeeded and returns its stdout.
fn love_windowless<I, S>(program: &Path, args: I) -> String
where
    I: IntoIterator<Item = S>,
    S: AsRef<std::ffi::OsStr>,
{
    let o = Command::new("love")
        .arg(program)
        .args(args)
        .output()
        .expect("run love");
    let stdout = String::from_utf8_lossy(&o.stdout).to_string();
    assert!(
        o.status.success(),
        "{stdout}{}",
        String::from_utf8_lossy(&o.stderr)
    );
    stdout
}

/// The demo scene with its layers read from the exported meshes and the
/// camera's only sample at `camera`, so `--dump-frame 0` dumps the frame
/// LÖVE draws (the same meshes, placements and depths as the export). A
/// region of a sprite sheet cannot be read from a mesh file (its mesh is
/// not the sheet's size): it is cut again, at the budget the scene gives
/// it, which makes the exported mesh (the draw counts below check that
/// the vertex counts agree).
fn scene_at(export: &Path, camera: f64, path: &Path) {
    let demo = root().join("demo-layers");
    let mut scene: Value =
        serde_json::from_str(&fs::read_to_string(demo.join("harbour.scene.json")).unwrap())
            .unwrap();
    // one sample at `travel` (samples 2 puts sample 1 at travel)
    scene["camera"] = serde_json::json!({"travel": camera, "samples": 2});
    for l in scene["layers"].as_array_mut().unwrap() {
        let name = l["name"].as_str().unwrap().to_string();
        let image = demo.join(l["image"].as_str().unwrap());
        let o = l.as_object_mut().unwrap();
        o.insert("image".into(), image.display().to_string().into());
        if o.contains_key("region") {
            if let Some(r) = o.get("regions").and_then(|r| r.as_str()) {
                let r = demo.join(r).display().to_string();
                o.insert("regions".into(), r.into());
            }
            continue;
        }
        o.remove("cut");
        let mesh = export.join(format!("{name}.mesh.json"));
        o.insert("mesh".into(), mesh.display().to_string().into());
    }
    fs::write(path, serde_json::to_vec_pretty(&scene).unwrap()).unwrap();
}

/// Per pixel, the fragments the model shades when replaying `draws`.
fn replay(viewport: [u32; 2], draws: &[Draw]) -> Vec<u32> {
    render(viewport, draws).counts
}

/// Layer copies drawn: each dumped draw holds all its layer's copies, each
/// copy the layer's vertex array once (4 vertices for a rectangle).
fn copies(draws: &[Draw], vertices: &HashMap<String, usize>) -> usize {
    draws
        .iter()
        .map(|d| d.positions.len() / 2 / vertices[&d.layer])
        .sum()
}

/// How LÖVE's split frame differs from its plain frame.
struct Comparison {
    /// The largest difference of a channel, and where.
    max_diff: u8,
    where_max: (u32, u32),
    /// Pixels that differ at all, and by more than [`TOLERANCE`].
    differ: usize,
    over: usize,
    /// Pixels the model says only the opaque pass shades (one fragment in
    /// the split frame's counts, one in the opaque pass alone), and how
    /// many of them differ at all.
    opaque_only: usize,
    opaque_diff: usize,
}

impl Comparison {
    /// Split and plain agree within [`TOLERANCE`] everywhere, and exactly
    /// where only the opaque pass shades.
    fn assert_agree(&self, camera: f64) {
        assert_eq!(
            self.over, 0,
            "camera {camera}: split and plain differ by more than {TOLERANCE}/255"
        );
        assert_eq!(
            self.opaque_diff, 0,
            "camera {camera}: split and plain differ where only the opaque pass shades"
        );
    }
}

/// Compares `split` and `plain` pixel by pixel; `counts` is the model's
/// split counts PNG, `opaque_counts` its opaque pass alone.
fn compare(
    split: &RgbaImage,
    plain: &RgbaImage,
    counts: &image::ImageBuffer<image::Luma<u16>, Vec<u16>>,
    opaque_counts: &[u32],
) -> Comparison {
    let mut c = Comparison {
        max_diff: 0,
        where_max: (0, 0),
        differ: 0,
        over: 0,
        opaque_only: 0,
        opaque_diff: 0,
    };
    for (x, y, s) in split.enumerate_pixels() {
        let p = plain.get_pixel(x, y);
        let d = max_channel_diff(s, p);
        if d > c.max_diff {
            c.max_diff = d;
            c.where_max = (x, y);
        }
        c.differ += usize::from(d > 0);
        c.over += usize::from(d > TOLERANCE);
        let i = (y * split.width() + x) as usize;
        if opaque_counts[i] == 1 && counts.get_pixel(x, y)[0] == 1 {
            c.opaque_only += 1;
            c.opaque_diff += usize::from(d != 0);
        }
    }
    c
}

/// The bilinear sample of `img` at texel coordinate (x, y) (not
/// normalized), by the OpenGL ES LINEAR rule: REPEAT in x when `wrap_x`,
/// else CLAMP_TO_EDGE; CLAMP_TO_EDGE in y.
fn bilinear(img: &RgbaImage, x: f64, y: f64, wrap_x: bool) -> [f64; 4] {
    let (w, h) = (img.width() as i64, img.height() as i64);
    let (x, y) = (x - 0.5, y - 0.5);
    let (x0, y0) = (x.floor(), y.floor());
    let (a, b) = (x - x0, y - y0);
    let texel = |i: i64, j: i64| {
        let i = match wrap_x {
            true => i.rem_euclid(w),
            false => i.clamp(0, w - 1),
        };
        *img.get_pixel(i as u32, j.clamp(0, h - 1) as u32)
    };
    let (i0, j0) = (x0 as i64, y0 as i64);
    let mut out = [0.0; 4];
    for (c, o) in out.iter_mut().enumerate() {
        let t = |i, j| texel(i, j)[c] as f64;
        *o = (1.0 - b) * ((1.0 - a) * t(i0, j0) + a * t(i0 + 1, j0))
            + b * ((1.0 - a) * t(i0, j0 + 1) + a * t(i0 + 1, j0 + 1));
    }
    out
}

#[test]
fn love_draws_the_split_frame_as_the_plain_frame() {
    if !have("love", "--version") || !have("xvfb-run", "--help") {
        return;
    }
    let dir = TempDir::new("love");
    let export = dir.path("export");
    run_underdraw(&[
        "scene".as_ref(),
        root().join("demo-layers/harbour.scene.json").as_os_str(),
        "--out".as_ref(),
        dir.path("out").as_os_str(),
        "--export".as_ref(),
        export.as_os_str(),
        "--quiet".as_ref(),
    ]);
    let list: Value =
        serde_json::from_slice(&fs::read(export.join("draw-list.json")).unwrap()).unwrap();
    let mut vertices: HashMap<String, usize> = HashMap::new();
    let mut pieces: HashMap<String, usize> = HashMap::new();
    for l in list["layers"].as_array().unwrap() {
        let name: String = l["name"].as_str().unwrap().into();
        vertices.insert(name.clone(), l["vertices"].as_u64().unwrap() as usize);
        let mesh: Value =
            serde_json::from_slice(&fs::read(export.join(l["mesh"].as_str().unwrap())).unwrap())
                .unwrap();
        pieces.insert(name, regions::plain_pieces(&mesh));
    }
    let sky = read_rgba(&root().join("demo-layers/sky.png"));
    let sky_layer = &list["layers"][0];
    assert_eq!(sky_layer["name"], "sky", "the demo's back layer");

    let mut report = Vec::new();
    let mut split_frames = Vec::new();
    for (k, &camera) in CAMERAS.iter().enumerate() {
        // the model's frame at this camera position
        let scene = dir.path(&format!("at-{k}.scene.json"));
        scene_at(&export, camera, &scene);
        let out = dir.path(&format!("model-{k}"));
        dump_scene(&scene, &out, None);
        let model = model_frame(&out);
        let viewport = model.viewport;
        let rect_counts = replay(viewport, &model.rect);

        // LÖVE's two frames, and as many layer copies drawn as the model
        // places (a nine-slice panel's plain draw is nine pieces)
        let ([split, plain], said) = love_frames(&dir, &export, camera, k, viewport);
        let want_split = copies(&model.split, &vertices);
        let want_plain = plain_draw_calls(&model.rect, |l| pieces[l]);
        assert_draw_calls(&said, camera, want_split, want_plain);

        let c = compare(&split, &plain, &model.counts, &model.opaque_counts);
        let Comparison {
            max_diff,
            where_max,
            differ,
            over,
            opaque_only,
            opaque_diff,
        } = c;
        // not blank: a real frame has many colours
        let distinct: HashSet<[u8; 4]> = split.pixels().map(|p| p.0).collect();
        assert!(
            distinct.len() > 5000,
            "camera {camera}: only {} distinct colours in LÖVE's split frame",
            distinct.len()
        );
        // the sky where only the sky's rectangle lies (the model's rect
        // counts): the LINEAR sample of sky.png, wrapping in x
        let (scale, parallax) = (
            sky_layer["scale"].as_f64().unwrap(),
            sky_layer["parallax"].as_f64().unwrap(),
        );
        let (sx, sy) = (
            sky_layer["position"][0].as_f64().unwrap(),
            sky_layer["position"][1].as_f64().unwrap(),
        );
        let (mut sky_pixels, mut sky_worst) = (0usize, 0.0f64);
        for (x, y, s) in split.enumerate_pixels() {
            if rect_counts[(y * viewport[0] + x) as usize] != 1 {
                continue;
            }
            sky_pixels += 1;
            let tx = (x as f64 + 0.5 - (sx - camera * parallax)) / scale;
            let ty = (y as f64 + 0.5 - sy) / scale;
            let want = bilinear(&sky, tx, ty, true);
            for c in 0..3 {
                sky_worst = sky_worst.max((s[c] as f64 - want[c]).abs());
            }
        }
        assert!(
            sky_pixels > 10_000,
            "camera {camera}: the sky alone shows at {sky_pixels} pixels"
        );
        assert!(
            sky_worst <= 2.0,
            "camera {camera}: LÖVE's sky is {sky_worst} levels off the LINEAR sample of sky.png"
        );
        report.push(format!(
            "camera {camera}: max difference split vs plain {max_diff}/255 at {where_max:?}, \
             {differ} pixels differ, {over} over {TOLERANCE}/255; {opaque_only} pixels shaded by the opaque pass \
             only, {opaque_diff} of them differ; sky alone at {sky_pixels} pixels, at most \
             {sky_worst:.2} levels off; {} colours",
            distinct.len()
        ));
        assert!(opaque_only > 100_000, "camera {camera}: {opaque_only}");
        split_frames.push(split);
        println!("{}", report.last().unwrap());
        c.assert_agree(camera);
    }
    assert_camera_moved(&split_frames);
    keep_frames(&split_frames, "love-split");
    println!("{}", report.join("\n"));
}

/// A LÖVE program without a window (no display needed) that decodes each
/// `case-N.json` of its folder with underdraw.lua's JSON decoder and prints
/// one line per case: `ok <value>` in a canonical JSON form (strings as hex
/// of their bytes, keys sorted, numbers with 17 significant digits) or
/// `error <message>`.
const DECODE_PROGRAM: &str = r#"
function love.conf(t)
  t.window = false
  t.modules.audio, t.modules.sound, t.modules.graphics = false, false, false
end
"#;
const DECODE_MAIN: &str = r#"
package.path = UNDERDRAW_DIR .. "/?.lua;" .. package.path
local underdraw = require("underdraw")
local function hex(s) return (s:gsub(".", function(c) return string.format("%02x", c:byte()) end)) end
local function canon(v)
  local t = type(v)
  if t == "string" then return '"' .. hex(v) .. '"'
  elseif t == "number" then return string.format("%.17g", v)
  elseif t == "boolean" then return tostring(v)
  elseif t == "nil" then return "null" end
  local n = #v
  local keys = {}
  for k in pairs(v) do keys[#keys + 1] = k end
  if n > 0 and #keys == n then
    local out = {}
    for i = 1, n do out[i] = canon(v[i]) end
    return "[" .. table.concat(out, ",") .. "]"
  end
  table.sort(keys)
  local out = {}
  for _, k in ipairs(keys) do out[#out + 1] = '"' .. hex(k) .. '":' .. canon(v[k]) end
  return "{" .. table.concat(out, ",") .. "}"
end
function love.load(args)
  local dir = args[1]
  local i = 0
  while true do
    local f = io.open(dir .. "/case-" .. i .. ".json", "rb")
    if not f then break end
    local text = f:read("*a")
    f:close()
    local ok, v = pcall(underdraw.json.decode, text, "case-" .. i)
    if ok then print("ok " .. canon(v)) else print("error " .. tostring(v)) end
    i = i + 1
  end
  love.event.quit(0)
end
"#;

/// `value` in the canonical form of DECODE_MAIN, from serde_json's reading
/// (RFC 8259; serde_json is the reference decoder). A key whose value is
/// null is left out (the Lua decoder makes null nil), and `{}` and `[]`
/// both print as `{}` (an empty Lua table).
fn canon(value: &Value) -> String {
    let hex = |s: &str| s.bytes().map(|b| format!("{b:02x}")).collect::<String>();
    match value {
        Value::Null => "null".into(),
        Value::Bool(b) => b.to_string(),
        Value::Number(n) => format!("n{}", n.as_f64().unwrap()),
        Value::String(s) => format!("\"{}\"", hex(s)),
        Value::Array(a) if a.is_empty() => "{}".into(),
        Value::Array(a) => format!("[{}]", a.iter().map(canon).collect::<Vec<_>>().join(",")),
        Value::Object(o) => {
            let mut keys: Vec<_> = o.iter().filter(|(_, v)| !v.is_null()).collect();
            keys.sort_by(|a, b| a.0.as_bytes().cmp(b.0.as_bytes()));
            let items: Vec<_> = keys
                .iter()
                .map(|(k, v)| format!("\"{}\":{}", hex(k), canon(v)))
                .collect();
            format!("{{{}}}", items.join(","))
        }
    }
}

/// The Lua side's canonical line with its numbers read back as f64 and
/// printed as `canon` prints them.
fn canon_lua(line: &str) -> String {
    let mut out = String::new();
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        if c == '"' {
            out.push(c);
            for d in chars.by_ref() {
                out.push(d);
                if d == '"' {
                    break;
                }
            }
        } else if c == '-' || c.is_ascii_digit() {
            let mut num = c.to_string();
            while let Some(&d) = chars.peek() {
                if d.is_ascii_digit() || "+-.eE".contains(d) {
                    num.push(d);
                    chars.next();
                } else {
                    break;
                }
            }
            out.push_str(&format!("n{}", num.parse::<f64>().unwrap()));
        } else {
            out.push(c);
        }
    }
    out
}

/// underdraw.lua's own JSON decoder reads what serde_json reads, and
/// refuses what it refuses (RFC 8259, with serde_json as the reference).
#[test]
fn the_lua_json_decoder_agrees_with_serde_json() {
    if !have("love", "--version") {
        return;
    }
    let dir = TempDir::new("love-json");
    let program = love_program(&dir, DECODE_MAIN, Some(DECODE_PROGRAM));
    let good = [
        r#"{"format": "underdraw.layer", "size": [2048, 1024], "x": -0.5, "y": 1.06e0}"#,
        r#"[1, -2, 3.25, 1e-7, 2.5E+3, 0, -0.0, 1234567890123, 0.1]"#,
        r#"  {"a": {"b": [[], {}, [true, false]], "c": null}, "": "empty key"}  "#,
        r#"["\"\\\/\b\f\n\r\t", "\u00e9\u20ac", "\ud83d\ude00", "h\u00E9llo \u0041"]"#,
        "[\"caf\u{e9} \u{1F600} raw UTF-8\"]",
        r#"{"passes": [{"draws": [{"blend": {"enabled": false, "src": null}}]}]}"#,
        "\"just a string\"",
        "  42  ",
    ];
    let bad = [
        r#"{"a": 1,}"#,
        r#"[1 2]"#,
        r#"{"a" 1}"#,
        r#"["unterminated]"#,
        r#"["\x"]"#,
        r#"[1] trailing"#,
        r#"{'a': 1}"#,
        "[01]",
        "[1.]",
        "[.5]",
        "[1e]",
        "[-]",
        "[+1]",
        "[\"tab\tinside\"]",
        r#"["\ud83d alone"]"#,
        "",
    ];
    for (i, text) in good.iter().chain(&bad).enumerate() {
        fs::write(program.join(format!("case-{i}.json")), text).unwrap();
    }
    let stdout = love_windowless(&program, [&program]);
    let lines: Vec<&str> = stdout
        .lines()
        .filter(|l| l.starts_with("ok ") || l.starts_with("error "))
        .collect();
    assert_eq!(lines.len(), good.len() + bad.len(), "{stdout}");
    for (i, text) in good.iter().enumerate() {
        let want = canon(&serde_json::from_str::<Value>(text).unwrap());
        let got = lines[i]
            .strip_prefix("ok ")
            .unwrap_or_else(|| panic!("{text}: {}", lines[i]));
        assert_eq!(canon_lua(got), want, "{text}");
    }
    for (j, text) in bad.iter().enumerate() {
        assert!(
            serde_json::from_str::<Value>(text).is_err(),
            "{text} is JSON"
        );
        let line = lines[good.len() + j];
        assert!(
            line.starts_with("error ") && line.contains("line 1 column"),
            "{text:?} was read: {line}"
        );
    }
}
