//! The `underdraw` binary as a user runs it: exit statuses (0 ok, 1 contract
//! violation, 2 bad usage or input), messages that name the file and what is
//! wrong, batches that go on past bad files, atomic and deterministic output.
//!
//! Each test works in its own folder under the system temp dir, removed when
//! the test ends.

use image::{ImageFormat, Rgba, RgbaImage};
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use underdraw::mesh::LayerMesh;

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

mod common;
use common::TempDir;

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demo-layers")
        .join(name)
}

fn run(args: &[&Path]) -> Output {
    Command::new(BIN)
        .args(args)
        .output()
        .expect("run the underdraw binary")
}

fn p(s: &str) -> &Path {
    Path::new(s)
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// Asserts the exit status, showing the output when it differs.
fn assert_status(out: &Output, code: i32, what: &str) {
    assert_eq!(
        out.status.code(),
        Some(code),
        "{what}: stdout:\n{}\nstderr:\n{}",
        text(&out.stdout),
        text(&out.stderr)
    );
}

/// Writes a PNG whose alpha at (x, y) is `alpha(x, y)` (colour mid grey).
fn write_png(path: &Path, w: u32, h: u32, alpha: impl Fn(u32, u32) -> u8) {
    RgbaImage::from_fn(w, h, |x, y| Rgba([128, 128, 128, alpha(x, y)]))
        .save_with_format(path, ImageFormat::Png)
        .expect("write a test PNG");
}

/// A small layer with an opaque disc and a soft rim.
fn write_blob(path: &Path) {
    write_png(path, 48, 40, |x, y| {
        let d = ((x as f64 - 24.0).powi(2) + (y as f64 - 20.0).powi(2)).sqrt();
        if d < 12.0 {
            255
        } else if d < 17.0 {
            100
        } else {
            0
        }
    });
}

fn read_mesh(path: &Path) -> LayerMesh {
    let bytes = fs::read(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    serde_json::from_slice(&bytes).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn write_mesh(path: &Path, mesh: &LayerMesh) {
    fs::write(path, serde_json::to_vec_pretty(mesh).unwrap()).unwrap();
}

/// The folder holds exactly these files: no temporary or stray files.
fn assert_only(dir: &Path, expected: &[&str]) {
    let mut names: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    let mut expected: Vec<String> = expected.iter().map(|s| s.to_string()).collect();
    expected.sort();
    assert_eq!(names, expected, "contents of {}", dir.display());
}

/// The stderr line naming `file` says `problem`.
fn assert_names(stderr: &str, file: &str, problem: &str) {
    assert!(
        stderr
            .lines()
            .any(|l| l.contains(file) && l.contains(problem)),
        "no stderr line names {file} with {problem:?}:\n{stderr}"
    );
}

#[test]
fn cut_then_check_holds() {
    let dir = TempDir::new("roundtrip");
    let out = dir.path("out");
    let layer = demo("ui-button.png");
    let cut = run(&[p("cut"), &layer, p("--out"), &out]);
    assert_status(&cut, 0, "cut");
    assert!(text(&cut.stdout).contains("ui-button.png"));
    assert_only(&out, &["ui-button.mesh.json", "underdraw-manifest.json"]);
    let check = run(&[p("check"), &out.join("ui-button.mesh.json"), &layer]);
    assert_status(&check, 0, "check");
    assert!(text(&check.stdout).contains("contract holds"));
}

#[test]
fn shifted_mesh_fails_check_by_the_hand_measured_areas() {
    // A fully opaque 64 x 32 layer: S and C are both the rectangle
    // [0, 64] x [0, 32] (clamp addressing, so bilinear erosion removes
    // nothing). Shifting every vertex 2 texels right puts the opaque mesh on
    // [2, 66] x [0, 32]: 2 x 32 = 64 texels lie outside S and the strip
    // [0, 2] x [0, 32], 64 texels, is left uncovered.
    let dir = TempDir::new("shift");
    let layer = dir.path("solid.png");
    write_png(&layer, 64, 32, |_, _| 255);
    let cut = run(&[p("cut"), &layer, p("--out"), &dir.0]);
    assert_status(&cut, 0, "cut");
    let mesh_path = dir.path("solid.mesh.json");
    let mut mesh = read_mesh(&mesh_path);
    assert_eq!(
        mesh.blended.triangle_count(),
        0,
        "a fully opaque layer needs no blending"
    );
    for x in mesh.positions.iter_mut().step_by(2) {
        *x += 2.0;
    }
    write_mesh(&mesh_path, &mesh);
    let check = run(&[p("check"), &mesh_path, &layer]);
    assert_status(&check, 1, "check of the shifted mesh");
    let stdout = text(&check.stdout);
    assert!(stdout.contains("contract violated"), "{stdout}");
    assert!(
        stdout.contains("opaque mesh covers 64 texels outside the safe-opaque region"),
        "{stdout}"
    );
    assert!(
        stdout.contains("the must-cover region has 64 texels covered by neither mesh"),
        "{stdout}"
    );
}

#[test]
fn vertex_moved_outward_fails_check() {
    // The opaque vertex farthest from the image centre is on the opaque
    // outline's convex hull; moving it 4 texels farther out makes its opaque
    // triangles reach past every other opaque vertex, into the blended mesh
    // or past the must-cover region (hence outside S): either is a violation.
    let dir = TempDir::new("moved");
    let layer = demo("ui-button.png");
    let cut = run(&[p("cut"), &layer, p("--out"), &dir.0]);
    assert_status(&cut, 0, "cut");
    let mesh_path = dir.path("ui-button.mesh.json");
    let mut mesh = read_mesh(&mesh_path);
    assert!(
        mesh.opaque.triangle_count() > 0,
        "the button has an opaque body"
    );
    let c = [mesh.size[0] as f32 / 2.0, mesh.size[1] as f32 / 2.0];
    let dist = |v: [f32; 2]| ((v[0] - c[0]).powi(2) + (v[1] - c[1]).powi(2)).sqrt();
    let far = *mesh
        .opaque
        .indices
        .iter()
        .max_by(|&&a, &&b| dist(mesh.position(a)).total_cmp(&dist(mesh.position(b))))
        .unwrap();
    let v = mesh.position(far);
    let d = dist(v);
    let k = far as usize * 2;
    mesh.positions[k] = c[0] + (v[0] - c[0]) * (d + 4.0) / d;
    mesh.positions[k + 1] = c[1] + (v[1] - c[1]) * (d + 4.0) / d;
    write_mesh(&mesh_path, &mesh);
    let check = run(&[p("check"), &mesh_path, &layer]);
    assert_status(&check, 1, "check of the tampered mesh");
    let stdout = text(&check.stdout);
    assert!(stdout.contains("contract violated"), "{stdout}");
    // Each area violation is printed with its size, a positive number of texels.
    let areas: Vec<f64> = stdout
        .lines()
        .filter_map(|l| {
            let words: Vec<&str> = l.split_whitespace().collect();
            let at = words.iter().position(|&w| w == "texels")?;
            words.get(at.checked_sub(1)?)?.parse().ok()
        })
        .collect();
    assert!(
        !areas.is_empty() && areas.iter().all(|&a| a > 0.0),
        "{stdout}"
    );
}

#[test]
fn budget_below_four_is_a_usage_error() {
    let dir = TempDir::new("budget");
    let out = dir.path("out");
    let r = run(&[
        p("cut"),
        &demo("ui-button.png"),
        p("--out"),
        &out,
        p("--budget"),
        p("3"),
    ]);
    assert_status(&r, 2, "--budget 3");
    assert!(text(&r.stderr).contains("--budget"), "{}", text(&r.stderr));
    assert!(!out.exists(), "nothing is written on a usage error");
}

#[test]
fn a_settings_error_names_the_setting_and_the_flags_to_change() {
    // the library's SettingsError names the setting; the command adds the
    // flags (the alpha rule is the one clap's ranges cannot catch)
    let dir = TempDir::new("alpha-rule");
    let out = dir.path("out");
    let r = run(&[
        p("cut"),
        &demo("ui-button.png"),
        p("--out"),
        &out,
        p("--visible-min"),
        p("200"),
        p("--opaque-min"),
        p("100"),
    ]);
    assert_status(&r, 2, "--visible-min above --opaque-min");
    let err = text(&r.stderr);
    assert!(
        err.contains("visible_min 200 is above opaque_min 100")
            && err.contains("hint: lower --visible-min or raise --opaque-min"),
        "{err}"
    );
    assert_eq!(err.matches("error:").count(), 1, "printed once: {err}");
    assert!(!out.exists(), "nothing is written on a usage error");
}

#[test]
fn batch_goes_on_past_bad_files_and_names_them() {
    let dir = TempDir::new("batch");
    let out = dir.path("out");
    let good = dir.path("good.png");
    write_blob(&good);
    let bad = dir.path("bad.png");
    fs::write(&bad, b"").unwrap();
    // Pseudo-random bytes from a fixed LCG (Knuth's MMIX constants, from memory).
    let mut state: u64 = 0x5eed;
    let noise_bytes: Vec<u8> = (0..4096)
        .map(|_| {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 56) as u8
        })
        .collect();
    let noise = dir.path("noise.png");
    fs::write(&noise, &noise_bytes).unwrap();
    let good_bytes = fs::read(&good).unwrap();
    let truncated = dir.path("truncated.png");
    fs::write(&truncated, &good_bytes[..good_bytes.len() / 2]).unwrap();

    let r = run(&[p("cut"), &good, &bad, &noise, &truncated, p("--out"), &out]);
    assert_status(&r, 2, "a batch with bad files");
    let stderr = text(&r.stderr);
    assert!(stderr.contains("3 of 4 layers failed"), "{stderr}");
    assert_names(&stderr, "bad.png", "empty");
    assert_names(&stderr, "noise.png", "not a PNG");
    assert_names(&stderr, "truncated.png", "damaged");
    assert!(!stderr.contains("good.png"), "{stderr}");
    // The good layer was cut all the same, and only it; no temporary files.
    assert_only(&out, &["good.mesh.json", "underdraw-manifest.json"]);
    let check = run(&[p("check"), &out.join("good.mesh.json"), &good]);
    assert_status(&check, 0, "check of the good layer's mesh");
}

#[test]
fn jpeg_named_png_is_not_a_png() {
    let dir = TempDir::new("jpeg");
    let fake = dir.path("photo.png");
    // The JPEG start-of-image marker FF D8 followed by an APP0 "JFIF" segment
    // header (JPEG/JFIF file layout, from memory), then filler.
    let mut bytes = vec![0xFF, 0xD8, 0xFF, 0xE0, 0x00, 0x10];
    bytes.extend_from_slice(b"JFIF\0");
    bytes.resize(512, 0x55);
    fs::write(&fake, &bytes).unwrap();
    let r = run(&[p("cut"), &fake, p("--out"), &dir.path("out")]);
    assert_status(&r, 2, "a JPEG named .png");
    assert_names(&text(&r.stderr), "photo.png", "not a PNG");
}

#[test]
fn output_onto_an_input_is_refused() {
    let dir = TempDir::new("clobber");
    let layer = dir.path("layer.png");
    write_blob(&layer);
    let before = fs::read(&layer).unwrap();

    // --out naming the input file itself.
    let r = run(&[p("cut"), &layer, p("--out"), &layer]);
    assert_status(&r, 2, "--out is the input file");
    assert!(text(&r.stderr).contains("layer.png"), "{}", text(&r.stderr));
    assert_eq!(fs::read(&layer).unwrap(), before, "the input is untouched");

    // The mesh file's path resolving to the input (a symlink in --out).
    #[cfg(unix)]
    {
        let out = dir.path("out");
        fs::create_dir(&out).unwrap();
        std::os::unix::fs::symlink(&layer, out.join("layer.mesh.json")).unwrap();
        let r = run(&[p("cut"), &layer, p("--out"), &out]);
        assert_status(&r, 2, "the mesh path is the input");
        assert_names(&text(&r.stderr), "layer.png", "overwritten");
        assert_eq!(fs::read(&layer).unwrap(), before, "the input is untouched");
        assert_only(&out, &["layer.mesh.json"]);
    }
}

#[test]
fn outputs_are_deterministic_and_leave_no_temporary_files() {
    // Three runs on the same inputs must write the same bytes (a difference
    // may show in only some runs, so more than two are compared).
    let dir = TempDir::new("determinism");
    let blob = dir.path("blob.png");
    write_blob(&blob);
    // files given directly from one folder are written flat
    let layers = [dir.path("ui-button.png"), dir.path("ui-panel.png"), blob];
    for name in ["ui-button.png", "ui-panel.png"] {
        fs::copy(demo(name), dir.path(name)).unwrap();
    }
    let names = [
        "ui-button.mesh.json",
        "ui-panel.mesh.json",
        "blob.mesh.json",
        // the batch manifest: the same bytes too (no time, no absolute path)
        "underdraw-manifest.json",
    ];
    let outs = [dir.path("a"), dir.path("b"), dir.path("c")];
    for out in &outs {
        let mut args: Vec<&Path> = vec![p("cut")];
        args.extend(layers.iter().map(PathBuf::as_path));
        args.extend([p("--out"), out, p("--budget"), p("24")]);
        assert_status(&run(&args), 0, "cut");
        assert_only(out, &names);
    }
    let mut differ = Vec::new();
    for name in names {
        let first = fs::read(outs[0].join(name)).unwrap();
        for out in &outs[1..] {
            let other = fs::read(out.join(name)).unwrap();
            if other != first {
                let (a, b) = (text(&first), text(&other));
                let line = a
                    .lines()
                    .zip(b.lines())
                    .find(|(x, y)| x != y)
                    .map(|(x, y)| format!("{} vs {}", x.trim(), y.trim()))
                    .unwrap_or_else(|| "lengths differ".into());
                differ.push(format!("{name}: {line}"));
            }
        }
    }
    assert!(
        differ.is_empty(),
        "outputs differ between runs:\n{}",
        differ.join("\n")
    );
}

#[test]
fn cut_help_mentions_every_option() {
    let r = run(&[p("cut"), p("--help")]);
    assert_status(&r, 0, "cut --help");
    let help = text(&r.stdout);
    for option in [
        "--out",
        "--budget",
        "--filter",
        "--mip-levels",
        "--wrap",
        "--opaque-min",
        "--visible-min",
        "nearest",
        "bilinear",
    ] {
        assert!(help.contains(option), "cut --help lacks {option}:\n{help}");
    }
}

#[test]
fn index_out_of_range_is_bad_input_naming_the_file() {
    let dir = TempDir::new("index");
    let layer = demo("ui-button.png");
    assert_status(&run(&[p("cut"), &layer, p("--out"), &dir.0]), 0, "cut");
    let mut mesh = read_mesh(&dir.path("ui-button.mesh.json"));
    let beyond = mesh.vertex_count() as u32 + 5;
    let list = if mesh.opaque.indices.is_empty() {
        &mut mesh.blended.indices
    } else {
        &mut mesh.opaque.indices
    };
    list[0] = beyond;
    let broken = dir.path("broken.mesh.json");
    write_mesh(&broken, &mesh);
    let r = run(&[p("check"), &broken, &layer]);
    assert_status(&r, 2, "check of a mesh with a bad index");
    let stderr = text(&r.stderr);
    assert_names(&stderr, "broken.mesh.json", &beyond.to_string());
}

#[test]
fn every_value_list_in_help_is_written_the_same_way() {
    // clap writes a value enum's values as a list, one line a value with its
    // meaning, when every value is documented, and as one bracketed line
    // otherwise: only the list may appear
    for cmd in ["cut", "sweep", "scene"] {
        let r = run(&[p(cmd), p("--help")]);
        assert_status(&r, 0, cmd);
        let help = text(&r.stdout);
        assert!(!help.contains("[possible values"), "{cmd} --help:\n{help}");
        if cmd != "scene" {
            for value in ["- nearest: ", "- bilinear: ", "- xy: "] {
                assert!(help.contains(value), "{cmd} --help lacks {value}:\n{help}");
            }
        }
    }
}

/// Every file under `dir` (relative path) with its bytes and modification time.
fn files_with_times(dir: &Path) -> Vec<(String, Vec<u8>, std::time::SystemTime)> {
    let mut v = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p);
            } else {
                let rel = p.strip_prefix(dir).unwrap().display().to_string();
                let t = fs::metadata(&p).unwrap().modified().unwrap();
                v.push((rel, fs::read(&p).unwrap(), t));
            }
        }
    }
    v.sort();
    v
}

#[test]
fn scene_export_again_with_nothing_changed_touches_no_file() {
    let dir = TempDir::new("scene-noop");
    write_blob(&dir.path("a.png"));
    write_png(
        &dir.path("b.png"),
        32,
        24,
        |x, _| if x < 20 { 255 } else { 0 },
    );
    let scene = dir.path("s.scene.json");
    fs::write(
        &scene,
        r#"{"viewport": [64, 48], "camera": {"travel": 16, "samples": 2},
  "layers": [{"name": "a", "image": "a.png", "cut": {"budget": 12}},
             {"name": "b", "image": "b.png", "cut": {"budget": 8}, "position": [10, 10]}]}"#,
    )
    .unwrap();
    let (out, export) = (dir.path("out"), dir.path("export"));
    let args = [
        p("scene"),
        &scene,
        p("--out"),
        &out,
        p("--export"),
        &export,
        p("-q"),
    ];
    assert_status(&run(&args), 0, "scene --export");
    // long past, so a rewrite shows whatever the file system's time resolution
    let past = std::time::UNIX_EPOCH + std::time::Duration::from_secs(1_000_000_000);
    for d in [&out, &export] {
        for (rel, _, _) in files_with_times(d) {
            let f = fs::File::options().write(true).open(d.join(rel)).unwrap();
            f.set_modified(past).unwrap();
        }
    }
    let before = [files_with_times(&out), files_with_times(&export)];
    assert!(before[1].iter().any(|(r, _, _)| r == "draw-list.json"));
    assert_status(&run(&args), 0, "scene --export again");
    // same files, same bytes, same times (the draw list included)
    assert_eq!([files_with_times(&out), files_with_times(&export)], before);
    // a changed layer rewrites its mesh (the control)
    write_png(
        &dir.path("b.png"),
        32,
        24,
        |x, _| if x < 18 { 255 } else { 0 },
    );
    assert_status(&run(&args), 0, "scene --export after a change");
    let after = files_with_times(&export);
    let time = |v: &[(String, Vec<u8>, std::time::SystemTime)], n: &str| {
        v.iter().find(|(r, _, _)| r == n).unwrap().2
    };
    assert_ne!(time(&after, "b.mesh.json"), past);
    assert_eq!(time(&after, "a.mesh.json"), past);
}
