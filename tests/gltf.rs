//! glTF 2.0 export (`underdraw cut --format gltf|all [--glb]`), checked from
//! outside the project:
//!
//! - the `gltf` crate (gltf-rs, a general-purpose glTF 2.0 reader) loads every
//!   `.gltf` and `.glb` written for the demo layers at budgets 8 and 256, for
//!   a fully transparent layer and for a layer whose file name needs
//!   percent-encoding, resolving the `.bin` and the PNG by their URIs; each
//!   primitive's triangles must be the mesh file's, mapped back by the
//!   documented convention ((x, y) → (x, -y, 0), triangle (a, b, c) written
//!   (a, c, b)), and front faces counter-clockwise as the glTF 2.0
//!   specification requires (Meshes; from memory);
//! - the Khronos glTF Validator (npm package `gltf-validator`, run by
//!   `tests/gltf_validate.js`) must report 0 errors on every file.
//!
//! Expected values are the glTF 2.0 specification's (from memory, sections
//! named where used), not copied from the writer's output.

use gltf::accessor::DataType;
use gltf::material::AlphaMode;
use gltf::texture::{MagFilter, MinFilter, WrappingMode};
use image::RgbaImage;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;
use underdraw::export::gltf::{write_glb, write_gltf};
use underdraw::mesh::{LayerMesh, MeshStats, TriangleList, Winding, FORMAT, VERSION};
use underdraw::settings::{AlphaThresholds, Filter, Wrap};

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

/// One exported layer: its mesh file and the glTF files written from it.
struct Export {
    mesh: PathBuf,
    gltf: PathBuf,
    glb: PathBuf,
}

/// A run of sampler settings on one layer: the files and what the sampler must say.
struct SamplerCase {
    files: Vec<PathBuf>,
    mag: MagFilter,
    min: MinFilter,
    wrap_s: WrappingMode,
    wrap_t: WrappingMode,
}

struct Exports {
    layers: Vec<Export>,
    samplers: Vec<SamplerCase>,
    /// Hand-made meshes at the unsigned-short limit: (file, vertices).
    wide: Vec<(PathBuf, usize)>,
    /// Layers cut with `--vertex-format u16` (KHR_mesh_quantization): the
    /// mesh file and the .gltf and .glb written beside it.
    quantized: Vec<Export>,
}

fn demo_layers() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers");
    let mut v: Vec<PathBuf> = fs::read_dir(&dir)
        .expect("read demo-layers")
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "png"))
        .collect();
    v.sort();
    assert!(v.len() >= 8, "the demo layers are missing from {dir:?}");
    v
}

fn cut(images: &[PathBuf], out: &Path, args: &[&str]) {
    let o = Command::new(BIN)
        .arg("cut")
        .args(images)
        .arg("--out")
        .arg(out)
        .args(args)
        .output()
        .expect("run the underdraw binary");
    assert!(
        o.status.success(),
        "cut {args:?} failed:\n{}\n{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    );
}

fn stem(p: &Path) -> String {
    p.file_stem().unwrap().to_string_lossy().into_owned()
}

/// Cuts and exports everything once per test binary.
fn exports() -> &'static Exports {
    static E: OnceLock<Exports> = OnceLock::new();
    E.get_or_init(|| {
        let root = Path::new(env!("CARGO_TARGET_TMPDIR"))
            .join(format!("gltf-exports-{}", std::process::id()));
        let _ = fs::remove_dir_all(&root);
        remove_stale(root.parent().unwrap());
        let layers_dir = root.join("layers");
        fs::create_dir_all(&layers_dir).unwrap();
        // a fully transparent layer, and a layer whose name needs percent-encoding in a URI
        let empty = layers_dir.join("empty.png");
        RgbaImage::new(48, 20).save(&empty).unwrap();
        let odd = layers_dir.join("ui button #2.png");
        fs::copy(
            Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers/ui-button.png"),
            &odd,
        )
        .unwrap();
        // copies of the demo layers beside them: files given directly from
        // one folder are written flat, so the outputs are `<stem>.*`
        let mut images: Vec<PathBuf> = demo_layers()
            .iter()
            .map(|d| {
                let copy = layers_dir.join(d.file_name().unwrap());
                fs::copy(d, &copy).unwrap();
                copy
            })
            .collect();
        images.push(empty);
        images.push(odd.clone());

        let mut layers = Vec::new();
        for budget in ["8", "256"] {
            let a = root.join(format!("b{budget}"));
            let b = root.join(format!("b{budget}-glb"));
            cut(&images, &a, &["--budget", budget, "--format", "all"]);
            cut(
                &images,
                &b,
                &["--budget", budget, "--format", "gltf", "--glb"],
            );
            for img in &images {
                let s = stem(img);
                layers.push(Export {
                    mesh: a.join(format!("{s}.mesh.json")),
                    gltf: a.join(format!("{s}.gltf")),
                    glb: b.join(format!("{s}.glb")),
                });
            }
        }

        // 16-bit vertices (KHR_mesh_quantization)
        let mut quantized = Vec::new();
        let q = root.join("u16");
        let qb = root.join("u16-glb");
        let quant = ["--budget", "64", "--vertex-format", "u16"];
        cut(&images, &q, &[&quant[..], &["--format", "all"]].concat());
        cut(
            &images,
            &qb,
            &[&quant[..], &["--format", "gltf", "--glb"]].concat(),
        );
        for img in &images {
            let s = stem(img);
            quantized.push(Export {
                mesh: q.join(format!("{s}.mesh.json")),
                gltf: q.join(format!("{s}.gltf")),
                glb: qb.join(format!("{s}.glb")),
            });
        }

        // sampler per filter, mip levels and wrap (Samplers; the WebGL enums)
        let button = [odd];
        let mut samplers = Vec::new();
        let cases: [(&[&str], MagFilter, MinFilter, WrappingMode, WrappingMode); 3] = [
            (
                &["--filter", "nearest", "--mip-levels", "2", "--wrap", "x"],
                MagFilter::Nearest,
                MinFilter::NearestMipmapNearest,
                WrappingMode::Repeat,
                WrappingMode::ClampToEdge,
            ),
            (
                &["--filter", "nearest", "--wrap", "xy"],
                MagFilter::Nearest,
                MinFilter::Nearest,
                WrappingMode::Repeat,
                WrappingMode::Repeat,
            ),
            (
                &["--filter", "bilinear", "--mip-levels", "1", "--wrap", "y"],
                MagFilter::Linear,
                MinFilter::LinearMipmapLinear,
                WrappingMode::ClampToEdge,
                WrappingMode::Repeat,
            ),
        ];
        for (i, (args, mag, min, wrap_s, wrap_t)) in cases.into_iter().enumerate() {
            let out = root.join(format!("sampler{i}"));
            let mut a: Vec<&str> = vec!["--budget", "8", "--format", "gltf"];
            a.extend(args);
            cut(&button, &out, &a);
            a.push("--glb");
            cut(&button, &out, &a);
            let s = stem(&button[0]);
            samplers.push(SamplerCase {
                files: vec![out.join(format!("{s}.gltf")), out.join(format!("{s}.glb"))],
                mag,
                min,
                wrap_s,
                wrap_t,
            });
        }

        // the index type switches from unsigned short to unsigned int past 65,535 vertices
        let wide_dir = root.join("wide");
        fs::create_dir_all(&wide_dir).unwrap();
        let mut wide = Vec::new();
        for n in [65_535, 65_536] {
            let m = strip_mesh(n);
            let s = format!("strip{n}");
            RgbaImage::new(m.size[0], m.size[1])
                .save(wide_dir.join(format!("{s}.png")))
                .unwrap();
            fs::write(
                wide_dir.join(format!("{s}.mesh.json")),
                serde_json::to_vec(&m).unwrap(),
            )
            .unwrap();
            let png = format!("{s}.png");
            write_gltf(&m, &png, &wide_dir, &s).unwrap();
            write_glb(&m, &png, &wide_dir, &s).unwrap();
            wide.push((wide_dir.join(format!("{s}.gltf")), n));
            wide.push((wide_dir.join(format!("{s}.glb")), n));
        }
        Exports {
            layers,
            samplers,
            wide,
            quantized,
        }
    })
}

/// Removes this test's folders left by runs more than an hour ago (a run
/// cannot know which of its tests ends last, so it leaves its own behind).
fn remove_stale(tmp: &Path) {
    let Ok(entries) = fs::read_dir(tmp) else {
        return;
    };
    for e in entries.flatten() {
        let old = e
            .metadata()
            .and_then(|m| m.modified())
            .ok()
            .and_then(|t| t.elapsed().ok())
            .is_some_and(|age| age.as_secs() > 3600);
        if old && e.file_name().to_string_lossy().starts_with("gltf-exports-") {
            let _ = fs::remove_dir_all(e.path());
        }
    }
}

/// A strip of quads over `n` vertices (two rows; an odd last vertex closes
/// one more triangle), clockwise on screen with y down like the cutter's.
fn strip_mesh(n: usize) -> LayerMesh {
    let cols = n / 2;
    let (w, h) = (cols as f32, 1.0f32);
    let mut positions = Vec::new();
    for i in 0..cols {
        positions.extend([i as f32, 0.0, i as f32, 1.0]);
    }
    let mut indices = Vec::new();
    for i in 0..cols as u32 - 1 {
        let (a, b, c, d) = (2 * i, 2 * i + 1, 2 * i + 2, 2 * i + 3);
        indices.extend([a, c, b, c, d, b]);
    }
    if n % 2 == 1 {
        // one more vertex right of the last column, on the top row
        let last = (cols - 1) as f32;
        positions.extend([last + 1.0, 1.0]);
        let (t, b, e) = (2 * cols as u32 - 2, 2 * cols as u32 - 1, n as u32 - 1);
        indices.extend([t, e, b]);
    }
    let uvs = positions
        .chunks(2)
        .flat_map(|p| [p[0] / (w + 1.0), p[1] / h])
        .collect();
    LayerMesh {
        format: FORMAT.into(),
        version: VERSION,
        source: "strip.png".into(),
        size: [cols as u32 + 1, 1],
        filter: Filter::default(),
        alpha: AlphaThresholds::default(),
        wrap: Wrap::None,
        budget: None,
        winding: Winding::Cw,
        positions,
        uvs,
        opaque: TriangleList { indices },
        blended: TriangleList::default(),
        stats: MeshStats::default(),
        region: None,
    }
}

fn load_mesh(p: &Path) -> LayerMesh {
    serde_json::from_slice(&fs::read(p).unwrap_or_else(|e| panic!("{p:?}: {e}"))).unwrap()
}

/// Loads `file` with the gltf crate and checks it against `mesh`.
fn check_against(file: &Path, mesh: &LayerMesh) {
    let (doc, buffers, images) =
        gltf::import(file).unwrap_or_else(|e| panic!("{file:?} does not load: {e}"));
    let json = doc.as_json();
    // Asset: version "2.0"
    assert_eq!(json.asset.version, "2.0", "{file:?}");
    assert_eq!(
        json.asset.generator.as_deref(),
        Some(concat!("underdraw ", env!("CARGO_PKG_VERSION")))
    );
    assert_eq!(doc.nodes().count(), 1, "{file:?}: one node");
    // the mesh file's clockwise triangles are written reversed
    assert_eq!(mesh.winding, Winding::Cw);
    let opaque = mesh.opaque.triangle_count();
    let blended = mesh.blended.triangle_count();
    let node = doc.nodes().next().unwrap();
    if opaque + blended == 0 {
        // count >= 1 for every accessor: an empty layer has no mesh
        assert!(node.mesh().is_none(), "{file:?}: empty layer with a mesh");
        assert_eq!(doc.meshes().count(), 0);
        return;
    }
    let gmesh = node.mesh().expect("a node with the mesh");
    assert_eq!(doc.meshes().count(), 1);
    let prims: Vec<_> = gmesh.primitives().collect();
    assert_eq!(
        prims.len(),
        (opaque > 0) as usize + (blended > 0) as usize,
        "{file:?}: one primitive per non-empty mesh"
    );
    let mut modes = Vec::new();
    for prim in &prims {
        assert_eq!(prim.mode(), gltf::mesh::Mode::Triangles);
        let mat = prim.material();
        let list = match mat.alpha_mode() {
            AlphaMode::Opaque => &mesh.opaque,
            AlphaMode::Blend => &mesh.blended,
            AlphaMode::Mask => panic!("{file:?}: a MASK material"),
        };
        modes.push(mat.alpha_mode());
        // base colour texture: the layer's PNG, loaded through its URI
        let tex = mat
            .pbr_metallic_roughness()
            .base_color_texture()
            .expect("a base colour texture");
        let img = &images[tex.texture().source().index()];
        assert_eq!(
            [img.width, img.height],
            mesh.size,
            "{file:?}: the wrong image"
        );

        let idx = prim.indices().expect("indexed");
        assert_eq!(
            idx.data_type(),
            if mesh.vertex_count() > 65_535 {
                DataType::U32
            } else {
                DataType::U16
            }
        );
        let pos_acc = prim.get(&gltf::Semantic::Positions).unwrap();
        assert_eq!(pos_acc.dimensions(), gltf::accessor::Dimensions::Vec3);
        assert_eq!(pos_acc.data_type(), DataType::F32);
        let reader = prim.reader(|b| Some(&buffers[b.index()]));
        let pos: Vec<[f32; 3]> = reader.read_positions().unwrap().collect();
        let uv: Vec<[f32; 2]> = reader.read_tex_coords(0).unwrap().into_f32().collect();
        let ind: Vec<u32> = reader.read_indices().unwrap().into_u32().collect();
        assert_eq!(pos.len(), mesh.vertex_count());
        for (i, p) in pos.iter().enumerate() {
            let [x, y] = mesh.position(i as u32);
            assert_eq!([p[0], -p[1], p[2]], [x, y, 0.0], "{file:?}: vertex {i}");
            assert_eq!(uv[i], [mesh.uvs[2 * i], mesh.uvs[2 * i + 1]]);
        }
        // Accessors: POSITION's min and max bound its values
        let (min, max) = (pos_acc.min().unwrap(), pos_acc.max().unwrap());
        for k in 0..3 {
            let lo = pos.iter().map(|p| p[k]).fold(f32::INFINITY, f32::min);
            let hi = pos.iter().map(|p| p[k]).fold(f32::NEG_INFINITY, f32::max);
            assert_eq!(min[k].as_f64().unwrap() as f32, lo);
            assert_eq!(max[k].as_f64().unwrap() as f32, hi);
        }
        assert_eq!(ind.len(), list.indices.len());
        for (k, (g, m)) in ind.chunks(3).zip(list.indices.chunks(3)).enumerate() {
            assert_eq!(g, [m[0], m[2], m[1]], "{file:?}: triangle {k}");
            // front faces are counter-clockwise (Meshes), seen from +z with y up
            let [a, b, c] = [g[0], g[1], g[2]].map(|i| pos[i as usize]);
            let twice_area = (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]);
            assert!(twice_area > 0.0, "{file:?}: triangle {k} is not CCW");
        }
    }
    assert!(modes.contains(&AlphaMode::Opaque) == (opaque > 0));
    assert!(modes.contains(&AlphaMode::Blend) == (blended > 0));
}

#[test]
fn every_export_loads_with_the_triangles_of_its_mesh_file() {
    let e = exports();
    let mut empty_seen = false;
    for l in &e.layers {
        let mesh = load_mesh(&l.mesh);
        check_against(&l.gltf, &mesh);
        check_against(&l.glb, &mesh);
        if mesh.opaque.indices.is_empty() && mesh.blended.indices.is_empty() {
            empty_seen = true;
            // a buffer must have byteLength >= 1: none, so no .bin
            assert!(!l.gltf.with_extension("bin").exists());
        } else {
            assert!(l.gltf.with_extension("bin").exists());
        }
    }
    assert!(empty_seen, "the transparent layer was not exported empty");
}

#[test]
fn sampler_matches_the_filter_and_wrap_cut_for() {
    for case in &exports().samplers {
        for f in &case.files {
            let (doc, _, _) = gltf::import(f).unwrap_or_else(|e| panic!("{f:?}: {e}"));
            let samplers: Vec<_> = doc.samplers().collect();
            assert_eq!(samplers.len(), 1, "{f:?}");
            let s = &samplers[0];
            assert_eq!(s.mag_filter(), Some(case.mag), "{f:?}");
            assert_eq!(s.min_filter(), Some(case.min), "{f:?}");
            assert_eq!(s.wrap_s(), case.wrap_s, "{f:?}");
            assert_eq!(s.wrap_t(), case.wrap_t, "{f:?}");
            for t in doc.textures() {
                assert_eq!(t.sampler().index(), Some(0));
            }
        }
    }
}

#[test]
fn default_sampler_is_bilinear_without_mipmaps_clamped() {
    let e = exports();
    let (doc, _, _) = gltf::import(&e.layers[0].gltf).unwrap();
    let s = doc.samplers().next().expect("a sampler");
    assert_eq!(s.mag_filter(), Some(MagFilter::Linear));
    assert_eq!(s.min_filter(), Some(MinFilter::Linear));
    assert_eq!(s.wrap_s(), WrappingMode::ClampToEdge);
    assert_eq!(s.wrap_t(), WrappingMode::ClampToEdge);
}

#[test]
fn indices_widen_past_65535_vertices() {
    // Accessors / Meshes: indices may not hold the type's largest value
    // (65,535 for unsigned short), so 65,535 vertices is the most u16 can index
    for (f, n) in &exports().wide {
        let mesh = load_mesh(&f.with_extension("mesh.json"));
        assert_eq!(mesh.vertex_count(), *n);
        check_against(f, &mesh);
        let (doc, _, _) = gltf::import(f).unwrap();
        let prim = doc.meshes().next().unwrap().primitives().next().unwrap();
        let want = if *n > 65_535 {
            DataType::U32
        } else {
            DataType::U16
        };
        assert_eq!(prim.indices().unwrap().data_type(), want, "{f:?}");
    }
}

/// Every file the tests wrote, for the validator.
fn all_files() -> Vec<PathBuf> {
    let e = exports();
    let mut v: Vec<PathBuf> = e
        .layers
        .iter()
        .flat_map(|l| [l.gltf.clone(), l.glb.clone()])
        .collect();
    v.extend(e.samplers.iter().flat_map(|c| c.files.clone()));
    v.extend(e.wide.iter().map(|(f, _)| f.clone()));
    v.extend(
        e.quantized
            .iter()
            .flat_map(|l| [l.gltf.clone(), l.glb.clone()]),
    );
    v
}

/// `cut --vertex-format u16` writes glTF's KHR_mesh_quantization (the
/// extension's specification, from memory: POSITION may be UNSIGNED_SHORT,
/// TEXCOORD_0 normalized UNSIGNED_SHORT, the extension listed as required):
/// read with the `gltf` crate (a general-purpose reader; it does not list
/// the extension as supported, so it is read without its validation), the
/// positions scaled by the node's scale are exactly the mesh file's, as the
/// f32 asset has them ((x, y) to (x, -y, 0)); the .glb holds the same
/// values. The validator test above checks every one of these assets too.
#[test]
fn cut_u16_vertices_dequantize_to_the_mesh_positions() {
    let mut checked = 0;
    for l in &exports().quantized {
        let mesh = load_mesh(&l.mesh);
        for file in [&l.gltf, &l.glb] {
            let bytes = fs::read(file).unwrap();
            let doc = gltf::Gltf::from_slice_without_validation(&bytes).unwrap();
            let node = doc.nodes().next().unwrap();
            let Some(gmesh) = node.mesh() else {
                assert_eq!(mesh.vertex_count(), 0, "{file:?}");
                continue;
            };
            assert!(
                doc.extensions_required()
                    .any(|x| x == "KHR_mesh_quantization"),
                "{file:?}"
            );
            let (_, _, scale) = node.transform().decomposed();
            let bin: Vec<u8> = match doc.blob.as_deref() {
                Some(b) => b.to_vec(),
                None => fs::read(file.with_extension("bin")).unwrap(),
            };
            let prim = gmesh.primitives().next().unwrap();
            let acc = prim.get(&gltf::Semantic::Positions).unwrap();
            assert_eq!(acc.data_type(), gltf::accessor::DataType::U16);
            assert_eq!(acc.count(), mesh.vertex_count(), "{file:?}");
            let view = acc.view().unwrap();
            let stride = view.stride().unwrap_or(6);
            let base = view.offset() + acc.offset();
            for i in 0..acc.count() {
                let at = |k: usize| {
                    let o = base + i * stride + 2 * k;
                    u16::from_le_bytes([bin[o], bin[o + 1]]) as f32 * scale[k]
                };
                let [x, y] = mesh.position(i as u32);
                assert_eq!(
                    [at(0), at(1), at(2)],
                    [x, 0.0 - y, 0.0],
                    "{file:?} vertex {i}"
                );
            }
            checked += 1;
        }
    }
    assert!(checked >= 16, "only {checked} quantized assets checked");
}

#[test]
fn vertex_format_without_a_gltf_format_is_refused_with_the_fix() {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join(format!("gltf-u16-json-{}", std::process::id()));
    let _ = fs::remove_dir_all(&dir);
    let o = Command::new(BIN)
        .arg("cut")
        .arg(&demo_layers()[0])
        .arg("--out")
        .arg(&dir)
        .args(["--vertex-format", "u16"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("--format gltf"), "{err}");
    assert!(!dir
        .join(format!("{}.mesh.json", stem(&demo_layers()[0])))
        .exists());
    let _ = fs::remove_dir_all(&dir);
}

#[test]
fn khronos_validator_reports_no_errors() {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/gltf_validate.js");
    let absent = |why: &str| {
        if std::env::var_os("CI").is_some() {
            panic!(
                "the Khronos glTF Validator cannot run ({why}); CI must have it: \
                 .ci/run installs it with `npm install --prefix target/validator --no-save gltf-validator@2.0.0-dev.3.10`"
            );
        }
        eprintln!(
            "skipped: the Khronos glTF Validator cannot run ({why}); install it with \
             `npm install --prefix target/validator --no-save gltf-validator@2.0.0-dev.3.10`"
        );
    };
    if Command::new("node").arg("--version").output().is_err() {
        return absent("no `node` on PATH");
    }
    let files = all_files();
    let out = Command::new("node")
        .arg(&script)
        .args(&files)
        .output()
        .expect("run node");
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    if out.status.code() == Some(3) {
        return absent(stderr.trim());
    }
    // warnings and infos are allowed: show them
    println!("{stdout}");
    eprintln!("{stderr}");
    assert!(
        out.status.success(),
        "the validator found errors:\n{stdout}\n{stderr}"
    );
    for f in &files {
        let line = stdout
            .lines()
            .find(|l| l.starts_with(&format!("{}: ", f.display())))
            .unwrap_or_else(|| panic!("no validator report for {f:?}"));
        assert!(line.contains(": 0 errors,"), "{line}");
    }

    // The harness can fail: a POSITION max below a vertex (Accessors: min and
    // max must bound the values) and an index past the vertex count are errors.
    let good = &exports().layers.iter().find(|l| {
        let m = load_mesh(&l.mesh);
        m.opaque.triangle_count() + m.blended.triangle_count() > 0
    });
    let good = good.expect("a non-empty export");
    let mut json: serde_json::Value =
        serde_json::from_slice(&fs::read(&good.gltf).unwrap()).unwrap();
    json["accessors"][0]["max"][0] = serde_json::json!(-1000.0);
    let bad = good.gltf.with_file_name("broken-max.gltf");
    fs::write(&bad, serde_json::to_vec(&json).unwrap()).unwrap();
    let out = Command::new("node")
        .arg(&script)
        .arg(&bad)
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(
        out.status.code(),
        Some(1),
        "a broken file passed:\n{stdout}"
    );
    assert!(stdout.contains("ACCESSOR_MAX_MISMATCH"), "{stdout}");
}

#[test]
fn glb_without_a_gltf_format_is_refused_with_the_fix() {
    let out =
        Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("gltf-glb-{}", std::process::id()));
    let o = Command::new(BIN)
        .arg("cut")
        .arg(Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers/ui-button.png"))
        .arg("--out")
        .arg(&out)
        .arg("--glb")
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("--format gltf"), "{err}");
    assert!(!out.join("ui-button.glb").exists() && !out.join("ui-button.mesh.json").exists());
    let _ = fs::remove_dir_all(&out);
}

#[test]
fn an_input_is_never_overwritten_by_its_gltf() {
    // a PNG named like the .gltf it would be cut into
    let dir =
        Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("gltf-input-{}", std::process::id()));
    let _ = fs::remove_dir_all(&dir);
    fs::create_dir_all(&dir).unwrap();
    let png =
        fs::read(Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers/ui-button.png")).unwrap();
    for (name, args) in [
        ("layer.gltf", &["--format", "gltf"][..]),
        ("layer.glb", &["--format", "all", "--glb"][..]),
    ] {
        let input = dir.join(name);
        fs::write(&input, &png).unwrap();
        let o = Command::new(BIN)
            .arg("cut")
            .arg(&input)
            .arg("--out")
            .arg(&dir)
            .args(args)
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{name}: {err}");
        assert!(err.contains(name) && err.contains("overwritten"), "{err}");
        assert_eq!(fs::read(&input).unwrap(), png, "{name} was overwritten");
    }
    let _ = fs::remove_dir_all(&dir);
}
