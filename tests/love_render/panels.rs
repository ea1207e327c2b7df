//! The LÖVE loader's nine-slice placement and animation frames:
//! `underdraw.place_panel` and `frame_uvs` (computed, no display), and
//! `set_panel_size` and `set_frame` drawn by LÖVE 11 under `xvfb-run`, on
//! the demo sheet's panel and spark cut by `underdraw cut --regions`.
//!
//! Outside references: the nine-slice rule (common practice, no source)
//! and OpenGL ES 3.0's LINEAR with CLAMP_TO_EDGE (from memory), as stated
//! in the `regions` module; "over" on opaque black stores the colour times
//! its alpha (OpenGL ES blending equations, from memory).

use super::regions::{bilinear_clamp, json, sheet, stretch, unstretch};
use super::*;

/// A LÖVE program without a window: prints, for the panel mesh file (its
/// first argument) at each size ("WxH", the arguments after the second),
/// `panel W H x1 y1 ...` from underdraw.place_panel, or `refused W H
/// <message>`; and for the animation mesh file (the second argument) one
/// line `frame i u1 v1 ...` per frame from underdraw.frame_uvs.
const PLACE_MAIN: &str = r#"
package.path = UNDERDRAW_DIR .. "/?.lua;" .. package.path
local underdraw = require("underdraw")
local function read(p)
  local f = assert(io.open(p, "rb"))
  local t = f:read("*a")
  f:close()
  return underdraw.json.decode(t, p)
end
local function line(head, list)
  local out = {}
  for i, v in ipairs(list) do out[i] = string.format("%.17g", v) end
  print(head .. " " .. table.concat(out, " "))
end
function love.load(args)
  local panel, spark = read(args[1]), read(args[2])
  for i = 3, #args do
    local w, h = args[i]:match("^(%d+)x(%d+)$")
    w, h = tonumber(w), tonumber(h)
    local ok, pos = pcall(underdraw.place_panel, panel, { w, h })
    if ok then line(string.format("panel %d %d", w, h), pos)
    else print(string.format("refused %d %d %s", w, h, tostring(pos))) end
  end
  for i = 1, #spark.region.frames do line("frame " .. i, underdraw.frame_uvs(spark, i)) end
  love.event.quit(0)
end
"#;

/// The demo sheet's regions cut by `underdraw cut --regions` (the default
/// cut settings) into `dir/cut`; returns that folder.
fn cut_demo_sheet(dir: &TempDir) -> PathBuf {
    let (png, regions) = sheet();
    let cut = dir.path("cut");
    run_underdraw(&[
        "cut".as_ref(),
        png.as_os_str(),
        "--regions".as_ref(),
        regions.as_os_str(),
        "--out".as_ref(),
        cut.as_os_str(),
        "--quiet".as_ref(),
    ]);
    cut
}

/// underdraw.lua's place_panel puts a panel's vertices where the nine-slice
/// rule puts them (computed here from the vertices' positions as cut, not
/// from their anchors) at three sizes and the panel's own, and refuses a
/// size smaller than the corners; frame_uvs moves the uvs onto each
/// frame's rectangle of the sheet.
#[test]
fn love_places_panels_and_frames_by_the_rules() {
    if !have("love", "--version") {
        return;
    }
    let dir = TempDir::new("love-place");
    let cut = cut_demo_sheet(&dir);
    // the demo panel's vertices in the middle slices all sit on the slice
    // lines (offset 0), where any stretch factor places them alike: add
    // vertices inside them (used by no triangle) so the factor shows
    let panel_path = dir.path("panel.mesh.json");
    let mut panel = json(&cut.join("ui-sheet/panel.mesh.json"));
    add_middle_vertices(&mut panel);
    fs::write(&panel_path, serde_json::to_vec(&panel).unwrap()).unwrap();
    let spark_path = cut.join("ui-sheet/spark.mesh.json");
    let program = love_program(&dir, PLACE_MAIN, Some(super::DECODE_PROGRAM));
    // the panel as a stretched scene layer exports it (its positions at
    // 200 x 90, its anchors as cut): placing starts from either the same
    let mut stretched: underdraw::mesh::LayerMesh =
        serde_json::from_slice(&fs::read(&panel_path).unwrap()).unwrap();
    let insets = stretched.region.as_ref().unwrap().slices.unwrap();
    underdraw::scene::region::stretch_mesh(&mut stretched, insets, [200, 90]);
    let stretched_path = dir.path("stretched.mesh.json");
    fs::write(&stretched_path, serde_json::to_vec(&stretched).unwrap()).unwrap();
    for placed in [&panel_path, &stretched_path] {
        place_and_check(&program, placed, &panel_path, &spark_path);
    }
}

/// Adds to a panel mesh (decoded, at the region's own size) vertices
/// inside its middle slices, each with its anchor [column, row, dx, dy]
/// and its position and uv as cut.
fn add_middle_vertices(panel: &mut Value) {
    let f = |v: &Value| v.as_f64().unwrap();
    let r = panel["region"].clone();
    let (w, h) = (f(&r["rect"][2]), f(&r["rect"][3]));
    let s: Vec<f64> = r["slices"].as_array().unwrap().iter().map(f).collect();
    let (sw, sh) = (f(&r["sheet_size"][0]), f(&r["sheet_size"][1]));
    let at = |c: f64, d: f64, n: f64, lo: f64, hi: f64| match c as u32 {
        0 => d,
        1 => lo + d,
        _ => n - hi + d,
    };
    for a in [
        [1.0, 1.0, 7.5, 3.0],
        [1.0, 0.0, 0.5, 5.0],
        [2.0, 1.0, 4.0, 23.5],
        [0.0, 2.0, 11.0, 6.5],
        [1.0, 2.0, 12.25, 0.0],
    ] {
        let (x, y) = (at(a[0], a[2], w, s[0], s[2]), at(a[1], a[3], h, s[1], s[3]));
        let push = |key: &str, v: Vec<f64>, p: &mut Value| {
            let list = p[key].as_array_mut().unwrap();
            list.extend(v.into_iter().map(Value::from));
        };
        push("positions", vec![x, y], panel);
        let uv = vec![(f(&r["rect"][0]) + x) / sw, (f(&r["rect"][1]) + y) / sh];
        push("uvs", uv, panel);
        panel["region"]["slice_positions"]
            .as_array_mut()
            .unwrap()
            .push(serde_json::json!(a));
    }
}

/// Runs the PLACE_MAIN program in `program` on the panel mesh file
/// `placed` and the animation `spark_path`, and checks its lines against
/// the nine-slice rule applied to the positions of the panel as cut
/// (`panel_path`) and against the frames' rectangles.
fn place_and_check(program: &Path, placed: &Path, panel_path: &Path, spark_path: &Path) {
    let sizes: [[u32; 2]; 5] = [[48, 48], [200, 90], [70, 260], [24, 31], [23, 60]];
    let mut args = vec![
        placed.as_os_str().to_owned(),
        spark_path.as_os_str().to_owned(),
    ];
    args.extend(sizes.iter().map(|[w, h]| format!("{w}x{h}").into()));
    let stdout = love_windowless(program, args);
    let lines: Vec<&str> = stdout.lines().collect();
    let numbers = |l: &str, skip: usize| -> Vec<f64> {
        l.split(' ')
            .skip(skip)
            .map(|v| v.parse().unwrap())
            .collect()
    };

    let panel = json(panel_path);
    let r = &panel["region"];
    let f = |v: &Value| v.as_f64().unwrap();
    let (w, h) = (f(&r["rect"][2]), f(&r["rect"][3]));
    let s: Vec<f64> = r["slices"].as_array().unwrap().iter().map(f).collect();
    let pos: Vec<f64> = panel["positions"]
        .as_array()
        .unwrap()
        .iter()
        .map(f)
        .collect();
    for (k, &[dw, dh]) in sizes.iter().enumerate() {
        let head = format!("panel {dw} {dh} ");
        if (dw as f64) < s[0] + s[2] || (dh as f64) < s[1] + s[3] {
            let l = lines
                .iter()
                .find(|l| l.starts_with(&format!("refused {dw} {dh} ")));
            assert!(
                l.is_some_and(|l| l.contains("smaller than the panel's corners")),
                "{dw} x {dh} is smaller than the corners: {stdout}"
            );
            continue;
        }
        let got = numbers(
            lines
                .iter()
                .find(|l| l.starts_with(&head))
                .unwrap_or_else(|| panic!("{head}: {stdout}")),
            3,
        );
        assert_eq!(got.len(), pos.len(), "{head}");
        for (i, p) in pos.chunks_exact(2).enumerate() {
            let want = [
                stretch(p[0], w, s[0], s[2], dw as f64),
                stretch(p[1], h, s[1], s[3], dh as f64),
            ];
            for a in 0..2 {
                assert!(
                    (got[2 * i + a] - want[a]).abs() <= 1e-4,
                    "{}: size {k} {dw} x {dh}: vertex {i} at ({}, {}) placed at {:?}, the rule says {want:?}",
                    placed.display(),
                    p[0],
                    p[1],
                    &got[2 * i..2 * i + 2]
                );
            }
        }
    }

    let spark = json(spark_path);
    let frames = spark["region"]["frames"].as_array().unwrap();
    let sheet_size = [
        f(&spark["region"]["sheet_size"][0]),
        f(&spark["region"]["sheet_size"][1]),
    ];
    let uvs: Vec<f64> = spark["uvs"].as_array().unwrap().iter().map(f).collect();
    assert!(frames.len() > 1);
    for (i, fr) in frames.iter().enumerate() {
        let head = format!("frame {} ", i + 1);
        let got = numbers(
            lines
                .iter()
                .find(|l| l.starts_with(&head))
                .unwrap_or_else(|| panic!("{head}: {stdout}")),
            2,
        );
        assert_eq!(got.len(), uvs.len());
        let d = [f(&fr[0]) - f(&frames[0][0]), f(&fr[1]) - f(&frames[0][1])];
        for (j, (&g, &u)) in got.iter().zip(&uvs).enumerate() {
            let a = j % 2;
            let want = u + d[a] / sheet_size[a];
            assert!(
                (g - want).abs() <= 1e-6,
                "frame {i}: uv {j} is {g}, want {want}"
            );
            // and it addresses that frame's rectangle of the sheet
            let t = g * sheet_size[a];
            assert!(
                t >= f(&fr[a]) - 1e-3 && t <= f(&fr[a]) + f(&fr[a + 2]) + 1e-3,
                "frame {i}: uv {j} reads texel {t}, outside the frame {fr}"
            );
        }
    }
}

/// A LÖVE program (needs a display: run under xvfb-run) that loads the
/// panel mesh (argument 1, cut at the panel's own size) and the animation
/// mesh (argument 3) over the sheet (argument 2), and writes into the
/// folder (argument 4): the panel resized by underdraw.set_panel_size to
/// each size of the arguments after the fourth ("WxH"), drawn the split
/// and the plain way at (MARGIN, MARGIN), scale 1 (`panel-W-H-split.png`,
/// `...-plain.png`); and each frame of the animation chosen by
/// underdraw.set_frame, drawn both ways at scale 2 (`frame-I-split.png`,
/// `...-plain.png`); all over opaque black.
const RESIZE_MAIN: &str = r#"
package.path = UNDERDRAW_DIR .. "/?.lua;" .. package.path
local underdraw = require("underdraw")
local MARGIN = 4
local function shot(layer, how, scale, path)
  local w = math.ceil(layer.size[1] * scale) + 2 * MARGIN
  local h = math.ceil(layer.size[2] * scale) + 2 * MARGIN
  local canvas = love.graphics.newCanvas(w, h, { format = "normal", msaa = 0 })
  love.graphics.push("all")
  love.graphics.setCanvas(canvas)
  love.graphics.clear(0, 0, 0, 1)
  love.graphics.setColor(1, 1, 1, 1)
  if how == "plain" then underdraw.draw_plain(layer, MARGIN, MARGIN, scale)
  else underdraw.draw_split(layer, MARGIN, MARGIN, scale) end
  love.graphics.pop()
  underdraw.write_png(canvas, path)
end
function love.load(args)
  love.errorhandler = function(msg)
    io.stderr:write("error: " .. tostring(msg) .. "\n")
    return function() return 1 end
  end
  local out = args[4]
  local panel = underdraw.load_mesh(args[1], args[2])
  for i = 5, #args do
    local w, h = args[i]:match("^(%d+)x(%d+)$")
    underdraw.set_panel_size(panel, { tonumber(w), tonumber(h) })
    for _, how in ipairs({ "split", "plain" }) do
      shot(panel, how, 1, string.format("%s/panel-%s-%s-%s.png", out, w, h, how))
    end
  end
  local spark = underdraw.load_mesh(args[3], args[2])
  for i = 1, #spark.region.frames do
    underdraw.set_frame(spark, i)
    for _, how in ipairs({ "split", "plain" }) do
      shot(spark, how, 2, string.format("%s/frame-%d-%s.png", out, i, how))
    end
  end
  print("done")
  love.event.quit(0)
end
"#;

/// The loader's set_panel_size and set_frame in the real engine: a panel
/// cut at its own size and resized in LÖVE draws the split way as the
/// plain way, and the plain way (nine Quads) shows at every pixel the
/// sheet's LINEAR sample where the nine-slice rule maps it, composited
/// over black; each animation frame alike, from that frame's rectangle.
#[test]
fn love_draws_resized_panels_and_frames_by_the_rules() {
    if !have("love", "--version") || !have("xvfb-run", "--help") {
        return;
    }
    const MARGIN: f64 = 4.0;
    let dir = TempDir::new("love-resize");
    let png = sheet().0;
    let cut = cut_demo_sheet(&dir);
    let program = love_program(&dir, RESIZE_MAIN, None);
    let frames_dir = dir.path("frames");
    fs::create_dir_all(&frames_dir).unwrap();
    let panel_path = cut.join("ui-sheet/panel.mesh.json");
    let spark_path = cut.join("ui-sheet/spark.mesh.json");
    let sizes: [[u32; 2]; 3] = [[200, 90], [70, 260], [24, 31]];
    let o = Command::new("xvfb-run")
        .args(["-a", "-s", "-screen 0 640x480x24", "love"])
        .arg(&program)
        .arg(&panel_path)
        .arg(&png)
        .arg(&spark_path)
        .arg(&frames_dir)
        .args(sizes.iter().map(|[w, h]| format!("{w}x{h}")))
        .output()
        .expect("run xvfb-run love");
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert!(
        o.status.success() && stdout.contains("done"),
        "{stdout}{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let sheet_png = read_rgba(&png);
    // the plain frame against the rule, and the split frame against the
    // plain one: the worst channel differences
    let check = |name: &str, rect: [f64; 4], slices: [f64; 4], size: [f64; 2], scale: f64| {
        let split = read_rgba(&frames_dir.join(format!("{name}-split.png")));
        let plain = read_rgba(&frames_dir.join(format!("{name}-plain.png")));
        assert_eq!(split.dimensions(), plain.dimensions(), "{name}");
        let (mut rule, mut ways, mut inside) = (0.0f64, 0u8, 0usize);
        for (x, y, p) in plain.enumerate_pixels() {
            ways = ways.max(max_channel_diff(p, split.get_pixel(x, y)));
            let tx = (x as f64 + 0.5 - MARGIN) / scale;
            let ty = (y as f64 + 0.5 - MARGIN) / scale;
            let want = if tx < 0.0 || ty < 0.0 || tx >= size[0] || ty >= size[1] {
                [0.0; 4]
            } else {
                inside += 1;
                let sx = rect[0] + unstretch(tx, rect[2], slices[0], slices[2], size[0]);
                let sy = rect[1] + unstretch(ty, rect[3], slices[1], slices[3], size[1]);
                let s = bilinear_clamp(&sheet_png, sx, sy);
                // "over" on opaque black: colour times alpha
                [
                    s[0] * s[3] / 255.0,
                    s[1] * s[3] / 255.0,
                    s[2] * s[3] / 255.0,
                    255.0,
                ]
            };
            for c in 0..3 {
                rule = rule.max((p[c] as f64 - want[c]).abs());
            }
        }
        assert!(
            inside as f64 >= size[0] * size[1] * scale * scale * 0.99,
            "{name}"
        );
        assert!(
            rule <= 3.0,
            "{name}: the plain draw is {rule} levels off the sheet's LINEAR sample under the nine-slice rule"
        );
        assert!(
            ways <= TOLERANCE,
            "{name}: split and plain differ by {ways}/255"
        );
        println!("{name}: plain at most {rule:.2} levels off the rule, split vs plain at most {ways}/255");
    };
    let panel = json(&panel_path);
    let f = |v: &Value| v.as_f64().unwrap();
    let four = |v: &Value| [f(&v[0]), f(&v[1]), f(&v[2]), f(&v[3])];
    let (rect, slices) = (
        four(&panel["region"]["rect"]),
        four(&panel["region"]["slices"]),
    );
    for [w, h] in sizes {
        check(
            &format!("panel-{w}-{h}"),
            rect,
            slices,
            [w as f64, h as f64],
            1.0,
        );
    }
    let spark = json(&spark_path);
    for (i, fr) in spark["region"]["frames"]
        .as_array()
        .unwrap()
        .iter()
        .enumerate()
    {
        let rect = four(fr);
        check(
            &format!("frame-{}", i + 1),
            rect,
            [0.0; 4],
            [rect[2], rect[3]],
            2.0,
        );
    }
}
