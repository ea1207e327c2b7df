//! `underdraw scene --export DIR`: the meshes an engine loads and the draw
//! list it follows, through the binary as a user runs it.
//!
//! Outside references:
//! - glTF 2.0 specification, materials: `alphaMode` OPAQUE ignores alpha,
//!   BLEND composites with the "over" operator; read with the `gltf` crate
//!   (a general-purpose reader) and the Khronos glTF Validator when present.
//! - OpenGL ES 3.0 specification, blending and the depth test (from memory):
//!   `glBlendFunc(GL_SRC_ALPHA, GL_ONE_MINUS_SRC_ALPHA)` is "over" for
//!   colour not premultiplied by alpha, which is how PNG stores it (PNG
//!   specification, alpha channel: "not premultiplied", from memory); LESS
//!   passes a fragment nearer than the stored depth.
//! - Drawing opaque geometry front to back and blended geometry back to
//!   front after it: common practice, no source ("over" is not commutative,
//!   and front to back lets the depth test reject hidden fragments early).

use serde_json::Value;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use underdraw::io::{load_alpha, load_mesh};
use underdraw::scene::export::{load_draw_list, DrawList};
use underdraw::scene::run::load_frame_dump;

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demo-layers")
        .join(name)
}

fn fresh(test: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("underdraw-export-{test}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&dir);
    fs::create_dir_all(&dir).unwrap();
    dir
}

/// A small scene over demo layers: a repeated strip, a layer with no
/// opaque texels (fog), a panel and one image used by two layers.
fn write_scene(dir: &Path) -> PathBuf {
    let p = |n: &str| demo(n).display().to_string();
    let text = format!(
        r#"{{"viewport": [960, 540], "camera": {{"travel": 600, "samples": 4}},
  "layers": [
    {{"name": "pier", "image": "{}", "cut": {{"budget": 24}}, "position": [0, 300], "scale": 0.5, "parallax": 1.0, "fill_width": true}},
    {{"name": "fog", "image": "{}", "cut": {{"budget": 12}}, "position": [0, 200], "scale": 0.5, "parallax": 0.8, "fill_width": true}},
    {{"name": "panel", "image": "{}", "cut": {{"budget": 16}}, "position": [20, 20], "parallax": 0.0}},
    {{"name": "button-a", "image": "{}", "cut": {{"budget": 12}}, "position": [700, 400], "parallax": 0.0}},
    {{"name": "button-b", "image": "{}", "cut": {{"budget": 12}}, "position": [820, 400], "parallax": 0.0}}
  ]}}"#,
        p("pier.png"),
        p("fog.png"),
        p("ui-panel.png"),
        p("ui-button.png"),
        p("ui-button.png")
    );
    let path = dir.join("small.scene.json");
    fs::write(&path, text).unwrap();
    path
}

fn run(args: &[&std::ffi::OsStr]) -> Output {
    Command::new(BIN)
        .args(args)
        .output()
        .expect("run underdraw")
}

fn ok(o: &Output) {
    assert!(
        o.status.success(),
        "failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
}

struct Exported {
    _dir: PathBuf,
    out: PathBuf,
    export: PathBuf,
    list: DrawList,
}

fn exported(test: &str, extra: &[&str]) -> Exported {
    let dir = fresh(test);
    let scene = write_scene(&dir);
    let out = dir.join("out");
    let export = dir.join("export");
    let mut args: Vec<&std::ffi::OsStr> = vec![
        "scene".as_ref(),
        scene.as_os_str(),
        "--out".as_ref(),
        out.as_os_str(),
        "--export".as_ref(),
        export.as_os_str(),
        "--dump-frame".as_ref(),
        "0".as_ref(),
        "--quiet".as_ref(),
    ];
    args.extend(extra.iter().map(|s| std::ffi::OsStr::new(s)));
    ok(&run(&args));
    let list = load_draw_list(&export.join("draw-list.json")).expect("the draw list loads");
    Exported {
        _dir: dir,
        out,
        export,
        list,
    }
}

#[test]
fn passes_are_ordered_for_the_depth_test_and_for_over() {
    let e = exported("order", &[]);
    let [opaque, blended] = &e.list.passes[..] else {
        panic!("two passes expected, got {}", e.list.passes.len());
    };
    assert_eq!(
        (opaque.name.as_str(), blended.name.as_str()),
        ("opaque", "blended")
    );
    // front to back: depths increase (0 nearest); back to front: decrease
    assert!(opaque.draws.windows(2).all(|w| w[0].depth < w[1].depth));
    assert!(blended.draws.windows(2).all(|w| w[0].depth > w[1].depth));
    for d in &opaque.draws {
        assert!(!d.blend.enabled && d.depth_test && d.depth_write, "{d:?}");
        assert_eq!(d.triangles, "opaque");
    }
    for d in &blended.draws {
        assert!(d.blend.enabled && d.depth_test && !d.depth_write, "{d:?}");
        assert_eq!(d.blend.src.as_deref(), Some("SRC_ALPHA"));
        assert_eq!(d.blend.dst.as_deref(), Some("ONE_MINUS_SRC_ALPHA"));
        assert_eq!(d.triangles, "blended");
    }
    // fog has no fully opaque texel: it is in the blended pass only
    assert!(opaque.draws.iter().all(|d| d.layer != "fog"));
    assert!(blended.draws.iter().any(|d| d.layer == "fog"));
    // every layer's depth is the one its draws use, and layers listed back
    // to front get nearer
    let depth_of = |name: &str| e.list.layers.iter().find(|l| l.name == name).unwrap().depth;
    for d in opaque.draws.iter().chain(&blended.draws) {
        assert_eq!(d.depth, depth_of(&d.layer));
    }
    assert!(e.list.layers.windows(2).all(|w| w[0].depth > w[1].depth));
}

/// The list is the frame the scorer scored: the split strategy's draws of
/// the dumped sample are the list's entries, in its order, with its state.
#[test]
fn the_list_is_the_scored_split_frame() {
    let e = exported("scored", &[]);
    let dump = load_frame_dump(&e.out.join("frame-0.json")).unwrap();
    let scored: Vec<_> = dump.strategies["split"]
        .draws
        .iter()
        .map(|d| {
            (
                d.layer.clone(),
                d.blend,
                d.depth,
                d.depth_test,
                d.depth_write,
            )
        })
        .collect();
    let listed: Vec<_> = e
        .list
        .passes
        .iter()
        .flat_map(|p| &p.draws)
        .map(|d| {
            (
                d.layer.clone(),
                d.blend.enabled,
                d.depth,
                d.depth_test,
                d.depth_write,
            )
        })
        .collect();
    // every layer is on screen at camera 0 in this scene
    assert_eq!(scored, listed);
}

/// The `layered` order is the scored layered frame: per layer, back to
/// front, its opaque draw (blending off) then its blended one, no depth
/// test or write (drawing back to front with "over" needs no depth buffer:
/// common practice, no source).
#[test]
fn the_layered_order_is_the_scored_layered_frame() {
    let e = exported("layered", &[]);
    let dump = load_frame_dump(&e.out.join("frame-0.json")).unwrap();
    let scored: Vec<_> = dump.strategies["layered"]
        .draws
        .iter()
        .map(|d| (d.layer.clone(), d.blend, d.depth_test, d.depth_write))
        .collect();
    let listed: Vec<_> = e
        .list
        .layered
        .draws
        .iter()
        .map(|d| {
            (
                d.layer.clone(),
                d.blend.enabled,
                d.depth_test,
                d.depth_write,
            )
        })
        .collect();
    assert_eq!(scored, listed);
    assert_eq!(e.list.layered.name, "layered");
    // every draw of the two passes is in the layered order once
    let n: usize = e.list.passes.iter().map(|p| p.draws.len()).sum();
    assert_eq!(n, e.list.layered.draws.len());
    for d in &e.list.layered.draws {
        assert_eq!(d.blend.enabled, d.triangles == "blended", "{d:?}");
    }
}

#[test]
fn each_entry_names_its_triangles_in_the_mesh_file_and_the_gltf() {
    let e = exported("files", &[]);
    for d in e.list.passes.iter().flat_map(|p| &p.draws) {
        let mesh = load_mesh(&e.export.join(&d.mesh)).unwrap();
        let list = if d.triangles == "opaque" {
            &mesh.opaque
        } else {
            &mesh.blended
        };
        assert!(!list.indices.is_empty(), "{d:?} draws nothing");
        let layer = e.list.layers.iter().find(|l| l.name == d.layer).unwrap();
        let (doc, buffers, _) = gltf::import(e.export.join(&layer.gltf)).expect("gltf loads");
        let gmesh = doc.meshes().next().expect("one mesh");
        let prim = gmesh
            .primitives()
            .nth(d.gltf_primitive)
            .expect("the primitive named");
        let mode = prim.material().alpha_mode();
        let want = if d.triangles == "opaque" {
            gltf::material::AlphaMode::Opaque
        } else {
            gltf::material::AlphaMode::Blend
        };
        assert_eq!(mode, want, "{d:?}");
        let reader = prim.reader(|b| Some(&buffers[b.index()]));
        let n = reader.read_indices().expect("indices").into_u32().count();
        assert_eq!(n, list.indices.len(), "{d:?}");
    }
    // the exported meshes hold the contract for their images
    for l in &e.list.layers {
        let mesh = load_mesh(&e.export.join(&l.mesh)).unwrap();
        let img = e.export.join(percent_decode(&l.image));
        let map = load_alpha(&img).unwrap();
        let report = underdraw::check::check_mesh(&mesh, &map).unwrap();
        assert!(report.holds(), "{}: {:?}", l.name, report.violations());
        assert_eq!(l.budget, mesh.budget);
    }
}

/// Our demo paths need no escapes but `%`-sequences would be decoded here.
fn percent_decode(uri: &str) -> String {
    let b = uri.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        if b[i] == b'%' && i + 2 < b.len() {
            out.push(u8::from_str_radix(&uri[i + 1..i + 3], 16).unwrap());
            i += 3;
        } else {
            out.push(b[i]);
            i += 1;
        }
    }
    String::from_utf8(out).unwrap()
}

#[test]
fn a_vertex_total_exports_the_budgets_it_chose() {
    let e = exported("total", &["--vertex-total", "60"]);
    let report: Value =
        serde_json::from_slice(&fs::read(e.out.join("scene-report.json")).unwrap()).unwrap();
    let chosen = report["allocation"]["layers"]
        .as_array()
        .expect("allocation layers");
    let mut used = 0;
    for l in &e.list.layers {
        let c = chosen
            .iter()
            .find(|c| c["name"] == l.name.as_str())
            .unwrap_or_else(|| panic!("{} not in the allocation", l.name));
        assert_eq!(
            l.budget,
            c["budget"].as_u64().map(|b| b as usize),
            "{}",
            l.name
        );
        used += l.vertices;
    }
    assert!(used <= 60, "{used} vertices exported for a total of 60");
}

/// The report lists exactly the files the run wrote: every file now in
/// the output and export folders (both fresh), the export's glTF assets
/// (`.gltf` and `.bin`) included, and nothing that is not there.
#[test]
fn the_report_lists_every_file_written_the_gltf_assets_too() {
    let e = exported("listed", &[]);
    let report: Value =
        serde_json::from_slice(&fs::read(e.out.join("scene-report.json")).unwrap()).unwrap();
    let mut listed: Vec<PathBuf> = report["outputs"]
        .as_array()
        .expect("outputs")
        .iter()
        .map(|v| PathBuf::from(v.as_str().expect("a path")))
        .collect();
    listed.sort();
    let mut present: Vec<PathBuf> = [&e.out, &e.export]
        .iter()
        .flat_map(|d| fs::read_dir(d).unwrap().map(|f| f.unwrap().path()))
        .collect();
    present.sort();
    assert_eq!(listed, present);
    for l in &e.list.layers {
        for ext in ["gltf", "bin"] {
            let f = e.export.join(format!("{}.{ext}", l.name));
            assert!(listed.contains(&f), "{} is not listed", f.display());
        }
    }
}

#[test]
fn the_report_lists_the_web_page_files_too() {
    // the page's folder of its own, beside the scene's
    let page = fresh("listed-page-report");
    let e = exported(
        "listed-page",
        &["--report", page.to_str().expect("a UTF-8 temp path")],
    );
    let report: Value =
        serde_json::from_slice(&fs::read(e.out.join("scene-report.json")).unwrap()).unwrap();
    let listed: Vec<PathBuf> = report["outputs"]
        .as_array()
        .expect("outputs")
        .iter()
        .map(|v| PathBuf::from(v.as_str().expect("a path")))
        .collect();
    // the report itself is written last, so it is listed last
    assert_eq!(listed.last(), Some(&e.out.join("scene-report.json")));
    let mut sorted = listed.clone();
    sorted.sort();
    let mut present: Vec<PathBuf> = [&e.out, &e.export, &page]
        .iter()
        .flat_map(|d| fs::read_dir(d).unwrap().map(|f| f.unwrap().path()))
        .collect();
    present.sort();
    assert_eq!(sorted, present);
    for f in ["index.html", "heatmap-rect.png", "heatmap-split.png"] {
        assert!(listed.contains(&page.join(f)), "{f} is not listed");
    }
    assert!(
        listed
            .iter()
            .any(|p| p.starts_with(&page) && p.to_string_lossy().ends_with(".preview.png")),
        "no preview listed: {listed:?}"
    );
    let _ = fs::remove_dir_all(&page);
}

#[test]
fn export_never_overwrites_a_mesh_the_scene_reads() {
    let dir = fresh("protect");
    // a mesh file cut before, read by the scene, in the export folder
    ok(&run(&[
        "cut".as_ref(),
        demo("ui-button.png").as_os_str(),
        "--out".as_ref(),
        dir.as_os_str(),
        "--quiet".as_ref(),
    ]));
    let mesh = dir.join("ui-button.mesh.json");
    let before = fs::read(&mesh).unwrap();
    let scene = dir.join("p.scene.json");
    fs::write(
        &scene,
        format!(
            r#"{{"viewport": [256, 256], "camera": {{"travel": 0, "samples": 1}},
  "layers": [{{"name": "ui-button", "image": "{}", "mesh": "ui-button.mesh.json"}}]}}"#,
            demo("ui-button.png").display()
        ),
    )
    .unwrap();
    let o = run(&[
        "scene".as_ref(),
        scene.as_os_str(),
        "--out".as_ref(),
        dir.join("out").as_os_str(),
        "--export".as_ref(),
        dir.as_os_str(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("ui-button.mesh.json") && err.contains("inputs"),
        "{err}"
    );
    assert!(err.contains("hint:"), "{err}");
    assert_eq!(
        fs::read(&mesh).unwrap(),
        before,
        "the input mesh was changed"
    );
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn khronos_validator_accepts_the_exported_assets() {
    let e = exported("validator", &[]);
    let files: Vec<PathBuf> = e
        .list
        .layers
        .iter()
        .map(|l| e.export.join(&l.gltf))
        .collect();
    validate(&files);
}

/// The Khronos glTF Validator reports 0 errors on every file (skipped with
/// a message when it is not installed, failing under CI).
fn validate(files: &[PathBuf]) {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/gltf_validate.js");
    let out = match Command::new("node").arg(&script).args(files).output() {
        Ok(o) => o,
        Err(err) => {
            assert!(std::env::var_os("CI").is_none(), "CI needs node: {err}");
            eprintln!("skipped: no node ({err})");
            return;
        }
    };
    if out.status.code() == Some(3) {
        assert!(
            std::env::var_os("CI").is_none(),
            "CI needs the validator (.ci/run installs it)"
        );
        eprintln!("skipped: {}", String::from_utf8_lossy(&out.stderr));
        return;
    }
    let stdout = String::from_utf8_lossy(&out.stdout);
    println!("{stdout}");
    assert!(out.status.success(), "validator errors:\n{stdout}");
    for f in files {
        assert!(
            stdout
                .lines()
                .any(|l| l.starts_with(&format!("{}: ", f.display())) && l.contains(": 0 errors,")),
            "no clean report for {f:?}:\n{stdout}"
        );
    }
}

/// `--vertex-format u16` writes glTF's KHR_mesh_quantization (the
/// extension's specification, from memory): positions UNSIGNED_SHORT,
/// texture coordinates normalized UNSIGNED_SHORT, the extension required.
/// The Khronos validator accepts every asset. The `gltf` crate (a
/// general-purpose reader; it does not list the extension as supported, so
/// it is read without its validation) gives the accessors, buffer views and
/// the node's transform: the positions dequantized by the node's scale are
/// exactly the mesh file's positions, as the f32 export writes them
/// ((x, y) to (x, -y, 0)), and the texture coordinates are within half a
/// step (1 / 65535) of the mesh file's.
#[test]
fn quantized_export_dequantizes_to_the_mesh_positions() {
    let e = exported("quantized", &["--vertex-format", "u16"]);
    let files: Vec<PathBuf> = e
        .list
        .layers
        .iter()
        .map(|l| e.export.join(&l.gltf))
        .collect();
    validate(&files);
    let mut checked = 0;
    for l in &e.list.layers {
        let mesh = load_mesh(&e.export.join(&l.mesh)).unwrap();
        let path = e.export.join(&l.gltf);
        let doc = gltf::Gltf::from_slice_without_validation(&fs::read(&path).unwrap()).unwrap();
        assert!(doc
            .extensions_required()
            .any(|x| x == "KHR_mesh_quantization"));
        let node = doc.nodes().next().unwrap();
        let (_, _, scale) = node.transform().decomposed();
        let Some(gmesh) = node.mesh() else {
            continue;
        };
        let bin = fs::read(path.with_extension("bin")).unwrap();
        let prim = gmesh.primitives().next().unwrap();
        let read = |semantic: gltf::Semantic, dims: usize| -> Vec<Vec<u16>> {
            let acc = prim.get(&semantic).unwrap();
            assert_eq!(acc.data_type(), gltf::accessor::DataType::U16);
            let view = acc.view().unwrap();
            let stride = view.stride().unwrap_or(2 * dims);
            let base = view.offset() + acc.offset();
            (0..acc.count())
                .map(|i| {
                    (0..dims)
                        .map(|k| {
                            let at = base + i * stride + 2 * k;
                            u16::from_le_bytes([bin[at], bin[at + 1]])
                        })
                        .collect()
                })
                .collect()
        };
        assert!(prim
            .get(&gltf::Semantic::TexCoords(0))
            .unwrap()
            .normalized());
        let positions = read(gltf::Semantic::Positions, 3);
        let uvs = read(gltf::Semantic::TexCoords(0), 2);
        assert_eq!(positions.len(), mesh.vertex_count());
        for (i, (p, t)) in positions.iter().zip(&uvs).enumerate() {
            let world = [
                p[0] as f32 * scale[0],
                p[1] as f32 * scale[1],
                p[2] as f32 * scale[2],
            ];
            let [x, y] = mesh.position(i as u32);
            assert_eq!(world, [x, 0.0 - y, 0.0], "{} vertex {i}", l.name);
            for k in 0..2 {
                let u = t[k] as f64 / 65535.0;
                assert!((u - mesh.uvs[2 * i + k] as f64).abs() <= 0.5 / 65535.0 + 1e-9);
            }
        }
        checked += 1;
    }
    assert!(checked > 0);
}
