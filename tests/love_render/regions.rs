//! Regions of a sprite sheet drawn by LÖVE 11 through
//! `integrations/love`: a button, the nine-slice panel at its own size and
//! stretched to two others, and the spark animation, all cut from the demo
//! sheet (`demo-sheets/`) over the demo sky, exported by `underdraw scene
//! --export` and drawn the split and the plain way (the loader's panel
//! placement and frame choice: the `panels` module).
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
pub(super) fn sheet() -> (PathBuf, PathBuf) {
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
pub(super) fn json(path: &Path) -> Value {
    serde_json::from_slice(&fs::read(path).unwrap_or_else(|e| panic!("{}: {e}", path.display())))
        .unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The nine-slice rule along one axis (see the module docs): the texel
/// coordinate shown at drawn coordinate `t`.
pub(super) fn unstretch(t: f64, n: f64, lo: f64, hi: f64, to: f64) -> f64 {
    if t <= lo {
        t
    } else if t >= to - hi {
        n - (to - t)
    } else {
        lo + (t - lo) * (n - lo - hi) / (to - lo - hi)
    }
}

/// The same rule the other way: where texel coordinate `s` lands.
pub(super) fn stretch(s: f64, n: f64, lo: f64, hi: f64, to: f64) -> f64 {
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
pub(super) fn bilinear_clamp(img: &RgbaImage, x: f64, y: f64) -> [f64; 4] {
    bilinear(img, x, y, false)
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
pub(super) fn plain_pieces(mesh: &Value) -> usize {
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
        dump_scene(&scene, &out, Some(&export));
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

        let model = model_frame(&out);
        let viewport = model.viewport;
        let ([split, plain], said) = love_frames(&dir, &export, camera, k, viewport);
        // a panel's plain draw is nine pieces, one draw call each
        let want_split = copies(&model.split, &vertices);
        let want_plain = plain_draw_calls(&model.rect, |l| plain_pieces(&meshes[l]));
        assert_draw_calls(&said, camera, want_split, want_plain);
        // the sheet's region layers share one texture, the sky has its own
        assert!(
            said[0].contains("draw calls, 2 textures"),
            "LÖVE said {:?}",
            said[0]
        );
        let (counts, opaque) = (&model.counts, &model.opaque);
        let c = compare(&split, &plain, counts, &model.opaque_counts);

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
        c.assert_agree(camera);

        if k == 0 {
            draw_list_keys(&dir, &export, camera, &split);
        }
        split_frames.push(split);
    }
    // the camera moved the sky behind the UI
    assert_camera_moved(&split_frames);
    keep_frames(&split_frames[..1], "love-regions-split");
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
