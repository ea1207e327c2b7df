//! Regions of a sprite sheet drawn by LÖVE 11 through
//! `integrations/love`: a button, the nine-slice panel at its own size and
//! stretched to two others, and the spark animation, all cut from the demo
//! sheet (`demo-sheets/`) over the demo sky, exported by `underdraw scene
//! --export` and drawn the split and the plain way; and the loader's
//! `place_panel` / `frame_uvs` against the nine-slice rule and the frames'
//! rectangles.
//!
//! The loader reads each region layer's `region` from its mesh file; the
//! draw list's copies of those keys (`region`, `size`, `slices`), written
//! by exports that have them, are checked against it. This test adds them
//! to one export itself (from the mesh files) so both kinds of list are
//! drawn, and breaks them to see the loader refuse.
//!
//! Outside references (beside the parent module's):
//! - Nine-slice scaling (common practice, no source): a panel drawn at
//!   another size keeps its corners unscaled, stretches its edges along
//!   one axis and its centre along both; a drawn point t along an axis of
//!   a panel n texels long with insets lo and hi, drawn N long, shows the
//!   texel coordinate t (t <= lo), n - (N - t) (t >= N - hi), else
//!   lo + (t - lo) * (n - lo - hi) / (N - lo - hi).
//! - OpenGL ES 3.0, LINEAR with CLAMP_TO_EDGE (from memory): the expected
//!   colour where only a region's opaque mesh shades is the bilinear sample
//!   of the sheet PNG at the texel coordinate the rule above gives.

use super::*;

/// The sheet and its regions, as the demo ships them.
fn sheet() -> (PathBuf, PathBuf) {
    let d = root().join("demo-sheets");
    (d.join("ui-sheet.png"), d.join("ui-sheet.regions.json"))
}

/// The UI scene over the demo sky, with its camera's one sample at
/// `camera`: (layer name, region, drawn size, position, scale).
fn ui_scene(camera: f64, path: &Path) {
    let (png, regions) = sheet();
    let sky = root().join("demo-layers/sky.png");
    let region = |name: &str, region: &str, size: Option<[u32; 2]>, pos: [f64; 2], scale: f64| {
        let mut l = serde_json::json!({
            "name": name, "image": png, "regions": regions, "region": region,
            "cut": {"budget": 32}, "position": pos, "scale": scale, "parallax": 0.0,
        });
        if let Some(s) = size {
            l["size"] = serde_json::json!(s);
        }
        l
    };
    let scene = serde_json::json!({
        "viewport": [640, 360],
        "camera": {"travel": camera, "samples": 2},
        "layers": [
            {"name": "sky", "image": sky, "cut": {"budget": 8, "wrap": "x"},
             "position": [0, 0], "scale": 0.5, "parallax": 0.1, "fill_width": true},
            region("panel", "panel", None, [20.0, 20.0], 1.0),
            region("panel-wide", "panel", Some([200, 90]), [100.0, 20.0], 1.0),
            region("panel-tall", "panel", Some([70, 260]), [340.0, 20.0], 1.25),
            region("button", "button-play", None, [130.5, 150.25], 1.5),
            region("spark", "spark", None, [500.0, 250.0], 2.0),
        ],
    });
    fs::write(path, serde_json::to_vec_pretty(&scene).unwrap()).unwrap();
}

/// A JSON file.
fn json(path: &Path) -> Value {
    serde_json::from_slice(&fs::read(path).unwrap_or_else(|e| panic!("{}: {e}", path.display())))
        .unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The nine-slice rule along one axis (see the module docs): the texel
/// coordinate shown at drawn coordinate `t`.
fn unstretch(t: f64, n: f64, lo: f64, hi: f64, to: f64) -> f64 {
    if t <= lo {
        t
    } else if t >= to - hi {
        n - (to - t)
    } else {
        lo + (t - lo) * (n - lo - hi) / (to - lo - hi)
    }
}

/// The same rule the other way: where texel coordinate `s` lands.
fn stretch(s: f64, n: f64, lo: f64, hi: f64, to: f64) -> f64 {
    if s <= lo {
        s
    } else if s >= n - hi {
        to - (n - s)
    } else {
        lo + (s - lo) * (to - lo - hi) / (n - lo - hi)
    }
}

/// The bilinear sample of `img` at texel coordinate (x, y) (not
/// normalized), clamped to the edge (OpenGL ES LINEAR, CLAMP_TO_EDGE).
fn bilinear_clamp(img: &RgbaImage, x: f64, y: f64) -> [f64; 4] {
    let (w, h) = (img.width() as i64, img.height() as i64);
    let (x, y) = (x - 0.5, y - 0.5);
    let (x0, y0) = (x.floor(), y.floor());
    let (a, b) = (x - x0, y - y0);
    let texel = |i: i64, j: i64| *img.get_pixel(i.clamp(0, w - 1) as u32, j.clamp(0, h - 1) as u32);
    let (i0, j0) = (x0 as i64, y0 as i64);
    let mut out = [0.0; 4];
    for (c, o) in out.iter_mut().enumerate() {
        let t = |i, j| texel(i, j)[c] as f64;
        *o = (1.0 - b) * ((1.0 - a) * t(i0, j0) + a * t(i0 + 1, j0))
            + b * ((1.0 - a) * t(i0, j0 + 1) + a * t(i0 + 1, j0 + 1));
    }
    out
}

/// The draw list's region keys as an export that writes them gives them,
/// from each layer's mesh file: `region` {sheet_size, rect} and, for a
/// stretched panel, `size` and `slices`.
fn add_region_keys(export: &Path) {
    let path = export.join("draw-list.json");
    let mut list = json(&path);
    for l in list["layers"].as_array_mut().unwrap() {
        let m = json(&export.join(l["mesh"].as_str().unwrap()));
        let Some(r) = m.get("region") else { continue };
        l["region"] = serde_json::json!({"sheet_size": r["sheet_size"], "rect": r["rect"]});
        let rect_size = serde_json::json!([r["rect"][2], r["rect"][3]]);
        if r.get("slices").is_some() && m["size"] != rect_size {
            l["size"] = m["size"].clone();
            l["slices"] = r["slices"].clone();
        }
    }
    fs::write(&path, serde_json::to_vec_pretty(&list).unwrap()).unwrap();
}

/// Pieces of a layer's plain draw (one draw call each): its rectangle, or
/// a nine-slice panel's pieces of non-zero size.
pub(crate) fn plain_pieces(mesh: &Value) -> usize {
    let Some(s) = mesh.get("region").and_then(|r| r.get("slices")) else {
        return 1;
    };
    let r = &mesh["region"]["rect"];
    let n = |v: &Value| v.as_u64().unwrap();
    let axis = |lo: u64, hi: u64, len: u64, to: u64| {
        [(lo, lo), (len - lo - hi, to - lo - hi), (hi, hi)]
            .iter()
            .filter(|(a, b)| *a > 0 && *b > 0)
            .count()
    };
    axis(n(&s[0]), n(&s[2]), n(&r[2]), n(&mesh["size"][0]))
        * axis(n(&s[1]), n(&s[3]), n(&r[3]), n(&mesh["size"][1]))
}

#[test]
fn love_draws_sheet_regions_split_as_plain() {
    if !have("love", "--version") || !have("xvfb-run", "--help") {
        return;
    }
    let dir = TempDir::new("love-regions");
    let sheet_png = read_rgba(&sheet().0);
    let mut report = Vec::new();
    let mut split_frames = Vec::new();
    for (k, camera) in [0.0, 333.25].into_iter().enumerate() {
        let scene = dir.path(&format!("ui-{k}.scene.json"));
        ui_scene(camera, &scene);
        let (out, export) = (
            dir.path(&format!("out-{k}")),
            dir.path(&format!("export-{k}")),
        );
        run_underdraw(&[
            "scene".as_ref(),
            scene.as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
            "--export".as_ref(),
            export.as_os_str(),
            "--dump-frame".as_ref(),
            "1".as_ref(),
            "--quiet".as_ref(),
        ]);
        let list = json(&export.join("draw-list.json"));
        let meshes: HashMap<String, Value> = list["layers"]
            .as_array()
            .unwrap()
            .iter()
            .map(|l| {
                let name = l["name"].as_str().unwrap().to_string();
                (name, json(&export.join(l["mesh"].as_str().unwrap())))
            })
            .collect();
        let vertices: HashMap<String, usize> = meshes
            .iter()
            .map(|(n, m)| (n.clone(), m["positions"].as_array().unwrap().len() / 2))
            .collect();
        assert!(meshes["panel-wide"]["region"]["slice_positions"].is_array());

        let dump = load_frame_dump(&out.join("frame-1.json")).unwrap();
        let viewport = dump.viewport;
        let split_draws = &dump.strategies["split"].draws;
        let rect_draws = &dump.strategies["rect"].draws;
        let counts = image::open(out.join("counts-1-split.png"))
            .unwrap()
            .to_luma16();
        let opaque: Vec<Draw> = split_draws
            .iter()
            .filter(|d| d.depth_write)
            .cloned()
            .collect();
        let opaque_counts = replay(viewport, &opaque);

        let split_png = dir.path(&format!("split-{k}.png"));
        let plain_png = dir.path(&format!("plain-{k}.png"));
        let said_split = love_frame(&export, camera, &split_png, false);
        let said_plain = love_frame(&export, camera, &plain_png, true);
        let want_split = copies(split_draws, &vertices);
        let rect_vertices: HashMap<String, usize> =
            vertices.keys().map(|n| (n.clone(), 4)).collect();
        // a panel's plain draw is nine pieces, one draw call each
        let want_plain: usize = rect_draws
            .iter()
            .map(|d| {
                copies(std::slice::from_ref(d), &rect_vertices) * plain_pieces(&meshes[&d.layer])
            })
            .sum();
        assert!(
            said_split.contains(&format!(
                ": split, camera {camera}, {want_split} draw calls"
            )),
            "LÖVE said {said_split:?}, the model places {want_split} copies"
        );
        // the sheet's region layers share one texture, the sky has its own
        assert!(
            said_split.contains("draw calls, 2 textures"),
            "LÖVE said {said_split:?}"
        );
        assert!(
            said_plain.contains(&format!(
                ": plain, camera {camera}, {want_plain} draw calls"
            )),
            "LÖVE said {said_plain:?}, the model needs {want_plain} draws"
        );
        let split = read_rgba(&split_png);
        let plain = read_rgba(&plain_png);
        assert_eq!(split.dimensions(), (viewport[0], viewport[1]));
        let c = compare(&split, &plain, &counts, &opaque_counts);

        // each region layer where its opaque mesh alone shades: LÖVE's
        // split frame is the LINEAR sample of the sheet at the texel the
        // nine-slice rule maps the pixel to
        let mut region_pixels = Vec::new();
        let mut worst = 0.0f64;
        for l in list["layers"].as_array().unwrap() {
            let name = l["name"].as_str().unwrap();
            let m = &meshes[name];
            let Some(r) = m.get("region") else { continue };
            let own: Vec<Draw> = opaque.iter().filter(|d| d.layer == name).cloned().collect();
            let own_counts = replay(viewport, &own);
            let f = |v: &Value| v.as_f64().unwrap();
            let (px, py, scale) = (f(&l["position"][0]), f(&l["position"][1]), f(&l["scale"]));
            let (rx, ry, rw, rh) = (
                f(&r["rect"][0]),
                f(&r["rect"][1]),
                f(&r["rect"][2]),
                f(&r["rect"][3]),
            );
            let (dw, dh) = (f(&m["size"][0]), f(&m["size"][1]));
            let sl: [f64; 4] = match r.get("slices") {
                Some(s) => [f(&s[0]), f(&s[1]), f(&s[2]), f(&s[3])],
                None => [0.0; 4],
            };
            let mut n = 0usize;
            for (x, y, s) in split.enumerate_pixels() {
                let i = (y * viewport[0] + x) as usize;
                if own_counts[i] != 1 || counts.get_pixel(x, y)[0] != 1 {
                    continue;
                }
                n += 1;
                let tx = (x as f64 + 0.5 - px) / scale;
                let ty = (y as f64 + 0.5 - py) / scale;
                let sx = rx + unstretch(tx, rw, sl[0], sl[2], dw);
                let sy = ry + unstretch(ty, rh, sl[1], sl[3], dh);
                let want = bilinear_clamp(&sheet_png, sx, sy);
                for ch in 0..3 {
                    let d = (s[ch] as f64 - want[ch]).abs();
                    assert!(
                        d <= 2.0,
                        "camera {camera}: layer {name} at pixel ({x}, {y}) is {:?}, the sheet's LINEAR sample at texel ({sx}, {sy}) is {want:?}",
                        s.0
                    );
                    worst = worst.max(d);
                }
            }
            // every region shows a good part of its opaque inside
            let area =
                scale * scale * m["stats"]["opaque_area"].as_f64().unwrap() * dw * dh / (rw * rh);
            assert!(
                n as f64 > 0.5 * area,
                "camera {camera}: {name}: {n} pixels, opaque area {area}"
            );
            region_pixels.push(format!("{name} {n}"));
        }
        report.push(format!(
            "camera {camera}: max difference split vs plain {}/255 at {:?}, {} pixels differ, {} over {TOLERANCE}/255; \
             {} pixels shaded by the opaque pass only, {} of them differ; region layers' opaque pixels \
             ({}) at most {worst:.2} levels off the sheet's LINEAR sample",
            c.max_diff, c.where_max, c.differ, c.over, c.opaque_only, c.opaque_diff, region_pixels.join(", ")
        ));
        println!("{}", report.last().unwrap());
        assert_eq!(
            c.over, 0,
            "camera {camera}: split and plain differ by more than {TOLERANCE}/255"
        );
        assert_eq!(
            c.opaque_diff, 0,
            "camera {camera}: split and plain differ where only the opaque pass shades"
        );

        if k == 0 {
            draw_list_keys(&dir, &export, camera, &split);
        }
        split_frames.push(split);
    }
    // the camera moved the sky behind the UI
    let moved = split_frames[0]
        .pixels()
        .zip(split_frames[1].pixels())
        .filter(|(a, b)| a != b)
        .count();
    assert!(moved > split_frames[0].len() as usize / 4 / 10, "{moved}");
    let keep = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .parent()
        .unwrap()
        .join("test-artifacts");
    fs::create_dir_all(&keep).unwrap();
    split_frames[0]
        .save(keep.join("love-regions-split-0.png"))
        .unwrap();
    println!("{}", report.join("\n"));
}

/// With the draw list's region keys added (as an export that writes them
/// gives them) LÖVE draws the same frame; with them wrong, or with a region
/// outside its sheet, or the wrong image, the loader refuses, naming the
/// file and what to do.
fn draw_list_keys(dir: &TempDir, export: &Path, camera: f64, split: &RgbaImage) {
    let keyed = dir.path("export-keys");
    copy_dir(export, &keyed);
    add_region_keys(&keyed);
    let list = json(&keyed.join("draw-list.json"));
    let wide = list["layers"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["name"] == "panel-wide")
        .unwrap();
    assert_eq!(wide["size"], serde_json::json!([200, 90]));
    let again = dir.path("split-keys.png");
    love_frame(&keyed, camera, &again, false);
    assert!(
        read_rgba(&again) == *split,
        "the draw list's region keys changed the frame"
    );

    // each case: a broken copy of the keyed export, and what LÖVE must say
    type Edit = fn(&Path);
    let cases: [(&str, Edit, &[&str]); 4] = [
        (
            "rect outside the sheet",
            |d: &Path| {
                edit_json(&d.join("button.mesh.json"), |m| {
                    m["region"]["rect"][0] = 150.into()
                })
            },
            &[
                "button.mesh.json",
                "lies outside its sheet",
                "cut the regions again",
            ],
        ),
        (
            "draw list disagrees",
            |d: &Path| {
                edit_json(&d.join("draw-list.json"), |l| {
                    l["layers"][2]["size"] = serde_json::json!([201, 90])
                })
            },
            &["draw-list.json", "panel-wide", "export the scene again"],
        ),
        (
            "not the sheet",
            |d: &Path| {
                let other = root().join("demo-layers/ui-button.png");
                edit_json(&d.join("draw-list.json"), |l| {
                    l["layers"][4]["image"] = other.display().to_string().into()
                })
            },
            &[
                "ui-button.png",
                "was cut from a sheet of 168x104",
                "point the layer's image at the sheet",
            ],
        ),
        (
            "region missing from the mesh",
            |d: &Path| {
                edit_json(&d.join("button.mesh.json"), |m| {
                    m.as_object_mut().unwrap().remove("region");
                })
            },
            &["draw-list.json", "button", "has no \"region\""],
        ),
    ];
    for (k, (what, edit, said)) in cases.into_iter().enumerate() {
        let broken = dir.path(&format!("export-broken-{k}"));
        copy_dir(&keyed, &broken);
        edit(&broken);
        let (ok, stdout, stderr) = love_run(&broken, camera, &dir.path("broken.png"), false);
        assert!(!ok, "{what}: LÖVE drew it: {stdout}");
        for s in said {
            assert!(
                stderr.contains(s),
                "{what}: LÖVE said {stderr:?}, not {s:?}"
            );
        }
    }
}

fn copy_dir(from: &Path, to: &Path) {
    fs::create_dir_all(to).unwrap();
    for e in fs::read_dir(from).unwrap() {
        let e = e.unwrap();
        fs::copy(e.path(), to.join(e.file_name())).unwrap();
    }
}

fn edit_json(path: &Path, f: impl FnOnce(&mut Value)) {
    let mut v = json(path);
    f(&mut v);
    fs::write(path, serde_json::to_vec_pretty(&v).unwrap()).unwrap();
}

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
    let panel_path = cut.join("ui-sheet/panel.mesh.json");
    let spark_path = cut.join("ui-sheet/spark.mesh.json");
    let program = dir.path("program");
    fs::create_dir_all(&program).unwrap();
    fs::write(program.join("conf.lua"), super::DECODE_PROGRAM).unwrap();
    let main = format!(
        "UNDERDRAW_DIR = {:?}\n{PLACE_MAIN}",
        root().join("integrations/love").display().to_string()
    );
    fs::write(program.join("main.lua"), main).unwrap();
    let sizes: [[u32; 2]; 5] = [[48, 48], [200, 90], [70, 260], [24, 31], [23, 60]];
    let o = Command::new("love")
        .arg(&program)
        .arg(&panel_path)
        .arg(&spark_path)
        .args(sizes.iter().map(|[w, h]| format!("{w}x{h}")))
        .output()
        .expect("run love");
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert!(
        o.status.success(),
        "{stdout}{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let lines: Vec<&str> = stdout.lines().collect();
    let numbers = |l: &str, skip: usize| -> Vec<f64> {
        l.split(' ')
            .skip(skip)
            .map(|v| v.parse().unwrap())
            .collect()
    };

    let panel = json(&panel_path);
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
                    "size {k} {dw} x {dh}: vertex {i} at ({}, {}) placed at {:?}, the rule says {want:?}",
                    p[0],
                    p[1],
                    &got[2 * i..2 * i + 2]
                );
            }
        }
    }

    let spark = json(&spark_path);
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
    let program = dir.path("program");
    fs::create_dir_all(&program).unwrap();
    let main = format!(
        "UNDERDRAW_DIR = {:?}\n{RESIZE_MAIN}",
        root().join("integrations/love").display().to_string()
    );
    fs::write(program.join("main.lua"), main).unwrap();
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
