//! `underdraw cut` on folders: mirrored layouts, include/exclude, the
//! settings file and its precedence, the manifest and reruns that skip
//! unchanged layers, refusals, and a batch with one layer that cannot be
//! written.
//!
//! Each test works in its own folder under the system temp dir, removed when
//! the test ends. Layers are small generated PNGs so the tests stay quick.

use image::{ImageFormat, Rgba, RgbaImage};
use serde_json::Value;
use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

mod common;
use common::TempDir;

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

fn run(args: &[&str], paths: &[&Path]) -> Output {
    // paths first (the inputs), then the options
    Command::new(BIN)
        .arg("cut")
        .args(paths)
        .args(args)
        .output()
        .expect("run the underdraw binary")
}

fn assert_status(o: &Output, code: i32, what: &str) {
    assert_eq!(
        o.status.code(),
        Some(code),
        "{what}: stdout:\n{}\nstderr:\n{}",
        text(&o.stdout),
        text(&o.stderr)
    );
}

/// A layer: an opaque disc of radius `r` with a soft rim, in a 40x36 image.
fn write_blob(path: &Path, r: f64) {
    fs::create_dir_all(path.parent().unwrap()).unwrap();
    RgbaImage::from_fn(40, 36, |x, y| {
        let d = ((x as f64 - 20.0).powi(2) + (y as f64 - 18.0).powi(2)).sqrt();
        let a = if d < r {
            255
        } else if d < r + 4.0 {
            90
        } else {
            0
        };
        Rgba([100, 140, 180, a])
    })
    .save_with_format(path, ImageFormat::Png)
    .expect("write a test PNG");
}

/// `in/` with three layers in two levels, and a text file that is no layer.
fn layers(dir: &TempDir) -> PathBuf {
    let root = dir.path("in");
    write_blob(&root.join("sky.png"), 14.0);
    write_blob(&root.join("town/houses.png"), 10.0);
    write_blob(&root.join("town/ui/button.PNG"), 6.0);
    fs::write(root.join("town/notes.txt"), "not a layer").unwrap();
    root
}

/// `--json cut ...`: the status of each layer, by the layer's path relative to `root`.
fn statuses(o: &Output, root: &Path) -> BTreeMap<String, String> {
    let v: Value = serde_json::from_slice(&o.stdout)
        .unwrap_or_else(|e| panic!("stdout is not JSON ({e}):\n{}", text(&o.stdout)));
    v.as_array()
        .expect("an array of layers")
        .iter()
        .map(|l| {
            let p = PathBuf::from(l["layer"].as_str().unwrap());
            let rel = p
                .strip_prefix(root)
                .unwrap_or(&p)
                .to_string_lossy()
                .replace('\\', "/");
            (rel, l["status"].as_str().unwrap().to_string())
        })
        .collect()
}

fn cut_json(root: &Path, out: &Path, extra: &[&str]) -> BTreeMap<String, String> {
    let mut args = vec!["--json", "--out", out.to_str().unwrap()];
    args.extend(extra);
    let o = run(&args, &[root]);
    assert_status(&o, 0, "cut --json");
    statuses(&o, root)
}

fn all(status: &str, names: &[&str]) -> BTreeMap<String, String> {
    names
        .iter()
        .map(|n| (n.to_string(), status.to_string()))
        .collect()
}

const THREE: [&str; 3] = ["sky.png", "town/houses.png", "town/ui/button.PNG"];

/// Every file under `dir`, by relative path, with its bytes.
fn tree(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    fn go(root: &Path, d: &Path, acc: &mut BTreeMap<String, Vec<u8>>) {
        for e in fs::read_dir(d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                go(root, &p, acc);
            } else {
                let rel = p
                    .strip_prefix(root)
                    .unwrap()
                    .to_string_lossy()
                    .replace('\\', "/");
                acc.insert(rel, fs::read(&p).unwrap());
            }
        }
    }
    let mut acc = BTreeMap::new();
    go(dir, dir, &mut acc);
    acc
}

fn mesh_budget(path: &Path) -> u64 {
    let v: Value = serde_json::from_slice(&fs::read(path).unwrap()).unwrap();
    v["budget"].as_u64().unwrap()
}

#[test]
fn a_folder_is_mirrored_and_files_given_directly_stay_flat() {
    let dir = TempDir::new("mirror");
    let root = layers(&dir);
    let single = dir.path("single.png");
    write_blob(&single, 12.0);
    let out = dir.path("out");
    let o = run(&["--out", out.to_str().unwrap()], &[&root, &single]);
    assert_status(&o, 0, "cut a folder and a file");
    let files: Vec<String> = tree(&out).into_keys().collect();
    assert_eq!(
        files,
        [
            "single.mesh.json",
            "sky.mesh.json",
            "town/houses.mesh.json",
            "town/ui/button.mesh.json",
            "underdraw-manifest.json"
        ]
    );
    // every mesh holds against its layer by the independent checker
    for (mesh, png) in [
        ("sky.mesh.json", root.join("sky.png")),
        ("town/houses.mesh.json", root.join("town/houses.png")),
        ("town/ui/button.mesh.json", root.join("town/ui/button.PNG")),
        ("single.mesh.json", single.clone()),
    ] {
        let c = Command::new(BIN)
            .arg("check")
            .arg(out.join(mesh))
            .arg(&png)
            .output()
            .unwrap();
        assert_status(&c, 0, mesh);
    }
    let summary = text(&o.stdout);
    assert!(
        summary.contains("4 layers (4 cut, 0 unchanged, 0 failed)"),
        "{summary}"
    );
}

#[test]
fn include_and_exclude_filter_the_relative_paths() {
    let dir = TempDir::new("filter");
    let root = layers(&dir);
    let out = dir.path("out");
    let got = cut_json(
        &root,
        &out,
        &["--include", "town/**", "--exclude", "**/ui/*"],
    );
    assert_eq!(got, all("cut", &["town/houses.png"]));
    let out2 = dir.path("out2");
    // `*` does not cross a folder: only the top-level layer
    let got = cut_json(&root, &out2, &["--include", "*.png"]);
    assert_eq!(got, all("cut", &["sky.png"]));
}

#[test]
fn jobs_1_and_jobs_2_write_byte_identical_trees() {
    let dir = TempDir::new("jobs");
    let root = layers(&dir);
    let trees: Vec<BTreeMap<String, Vec<u8>>> = ["1", "2"]
        .iter()
        .map(|n| {
            let out = dir.path(&format!("out-{n}"));
            let o = run(
                &[
                    "--out",
                    out.to_str().unwrap(),
                    "--jobs",
                    n,
                    "--format",
                    "all",
                    "--preview",
                ],
                &[&root],
            );
            assert_status(&o, 0, "cut --jobs");
            tree(&out)
        })
        .collect();
    // 3 layers x (mesh, gltf, bin, preview) + the manifest
    assert_eq!(trees[0].len(), 13, "{:?}", trees[0].keys());
    assert_eq!(
        trees[0].keys().collect::<Vec<_>>(),
        trees[1].keys().collect::<Vec<_>>()
    );
    for (name, bytes) in &trees[0] {
        assert!(
            trees[1][name] == *bytes,
            "{name} differs between --jobs 1 and 2"
        );
    }
}

#[test]
fn reruns_cut_only_what_changed() {
    let dir = TempDir::new("rerun");
    let root = layers(&dir);
    let out = dir.path("out");
    assert_eq!(cut_json(&root, &out, &[]), all("cut", &THREE));
    // nothing changed: nothing is cut
    assert_eq!(cut_json(&root, &out, &[]), all("unchanged", &THREE));
    // one layer's bytes change: only it is cut
    write_blob(&root.join("town/houses.png"), 11.0);
    let mut want = all("unchanged", &THREE);
    want.insert("town/houses.png".into(), "cut".into());
    assert_eq!(cut_json(&root, &out, &[]), want);
    // an output edited by hand no longer has its recorded hash: cut again
    fs::write(out.join("sky.mesh.json"), b"{}").unwrap();
    let mut want = all("unchanged", &THREE);
    want.insert("sky.png".into(), "cut".into());
    assert_eq!(cut_json(&root, &out, &[]), want);
    // other settings on the command line: all are cut
    assert_eq!(
        cut_json(&root, &out, &["--budget", "12"]),
        all("cut", &THREE)
    );
    assert_eq!(
        cut_json(&root, &out, &["--budget", "12"]),
        all("unchanged", &THREE)
    );
    // --force: all are cut
    assert_eq!(
        cut_json(&root, &out, &["--budget", "12", "--force"]),
        all("cut", &THREE)
    );
}

#[test]
fn manifest_records_hashes_that_sha256sum_agrees_with() {
    let dir = TempDir::new("manifest");
    let root = layers(&dir);
    let out = dir.path("out");
    cut_json(&root, &out, &[]);
    // a run over part of the folder keeps the other layers' entries
    cut_json(&root, &out, &["--include", "sky.png", "--budget", "8"]);
    let m: Value =
        serde_json::from_slice(&fs::read(out.join("underdraw-manifest.json")).unwrap()).unwrap();
    assert_eq!(m["format"], "underdraw.manifest");
    assert_eq!(m["version"], 1);
    let layers = m["layers"].as_object().unwrap();
    let keys: Vec<&String> = layers.keys().collect();
    assert_eq!(keys, ["sky", "town/houses", "town/ui/button"]);
    assert_eq!(layers["town/ui/button"]["input"], "town/ui/button.PNG");
    assert_eq!(layers["sky"]["settings"]["cut"]["budget"], 8);
    assert_eq!(layers["town/houses"]["settings"]["cut"]["budget"], 64);
    assert_eq!(layers["sky"]["underdraw"], env!("CARGO_PKG_VERSION"));
    // SHA-256 (FIPS 180-4) as computed by coreutils' sha256sum, when installed
    let Ok(probe) = Command::new("sha256sum").arg("--version").output() else {
        eprintln!("sha256sum is not installed: the hashes are not cross-checked");
        return;
    };
    assert!(probe.status.success());
    let sum = |p: &Path| {
        let o = Command::new("sha256sum").arg(p).output().unwrap();
        text(&o.stdout)
            .split_whitespace()
            .next()
            .unwrap()
            .to_string()
    };
    for (_, e) in layers {
        let input = root.join(e["input"].as_str().unwrap());
        assert_eq!(e["input_sha256"].as_str().unwrap(), sum(&input));
        for o in e["outputs"].as_array().unwrap() {
            let file = out.join(o["path"].as_str().unwrap());
            assert_eq!(
                o["sha256"].as_str().unwrap(),
                sum(&file),
                "{}",
                file.display()
            );
        }
    }
}

#[test]
fn settings_file_precedence_and_reruns_of_the_layers_it_matches() {
    let dir = TempDir::new("settings");
    let root = layers(&dir);
    let file = root.join("underdraw.settings.json");
    let write = |ui_budget: u32| {
        fs::write(
            &file,
            format!(
                r#"{{"defaults": {{"budget": 20}},
                    "layers": [{{"match": "town/**", "budget": 16, "filter": "nearest"}},
                               {{"match": "town/ui/*", "budget": {ui_budget}}}]}}"#
            ),
        )
        .unwrap();
    };
    write(8);
    let out = dir.path("out");
    assert_eq!(cut_json(&root, &out, &[]), all("cut", &THREE));
    // defaults, then the matching entries in order (the later wins)
    assert_eq!(mesh_budget(&out.join("sky.mesh.json")), 20);
    assert_eq!(mesh_budget(&out.join("town/houses.mesh.json")), 16);
    assert_eq!(mesh_budget(&out.join("town/ui/button.mesh.json")), 8);
    let v: Value =
        serde_json::from_slice(&fs::read(out.join("town/ui/button.mesh.json")).unwrap()).unwrap();
    assert_eq!(v["filter"]["mode"], "nearest");
    // one entry changes: only the layers it matches are cut again
    write(12);
    let mut want = all("unchanged", &THREE);
    want.insert("town/ui/button.PNG".into(), "cut".into());
    assert_eq!(cut_json(&root, &out, &[]), want);
    assert_eq!(mesh_budget(&out.join("town/ui/button.mesh.json")), 12);
    // an option given on the command line overrides the file; others keep it
    let out2 = dir.path("out2");
    cut_json(&root, &out2, &["--budget", "6"]);
    for m in [
        "sky.mesh.json",
        "town/houses.mesh.json",
        "town/ui/button.mesh.json",
    ] {
        assert_eq!(mesh_budget(&out2.join(m)), 6, "{m}");
    }
    let v: Value =
        serde_json::from_slice(&fs::read(out2.join("town/houses.mesh.json")).unwrap()).unwrap();
    assert_eq!(v["filter"]["mode"], "nearest");
    // --settings FILE instead of the folder's own
    let other = dir.path("other.settings.json");
    fs::write(&other, r#"{"defaults": {"budget": 10}}"#).unwrap();
    let out3 = dir.path("out3");
    cut_json(&root, &out3, &["--settings", other.to_str().unwrap()]);
    assert_eq!(mesh_budget(&out3.join("town/ui/button.mesh.json")), 10);
}

#[test]
fn a_bad_settings_file_is_refused_naming_it() {
    let dir = TempDir::new("bad-settings");
    let root = layers(&dir);
    let file = root.join("underdraw.settings.json");
    for (body, says) in [
        (r#"{"defaults": {"budget": 16, "colour": "red"}}"#, "colour"),
        (
            r#"{"layers": [{"match": "*.png", "budget": 2}]}"#,
            "at least 4",
        ),
        (r#"{"defaults": {"wrap": "z"}}"#, "unknown variant"),
        (
            r#"{"defaults": {"visible_min": 200, "opaque_min": 100}}"#,
            "visible_min",
        ),
    ] {
        fs::write(&file, body).unwrap();
        let out = dir.path("out");
        let o = run(&["--out", out.to_str().unwrap()], &[&root]);
        assert_status(&o, 2, body);
        let err = text(&o.stderr);
        assert!(
            err.lines()
                .any(|l| l.contains("underdraw.settings.json") && l.contains(says)),
            "{body}: {err}"
        );
        assert!(!out.exists(), "nothing is written for a bad settings file");
    }
}

#[test]
fn out_equal_to_an_input_folder_is_refused() {
    let dir = TempDir::new("out-is-in");
    let root = layers(&dir);
    let before = tree(&root);
    let o = run(&["--out", root.to_str().unwrap()], &[&root]);
    assert_status(&o, 2, "--out is the input folder");
    let err = text(&o.stderr);
    assert!(err.contains("is an input folder"), "{err}");
    assert_eq!(tree(&root), before, "nothing was written into the input");
    // a folder inside the input is fine, and is not read back as input
    let inner = root.join("meshes");
    let o = run(&["--out", inner.to_str().unwrap(), "--preview"], &[&root]);
    assert_status(&o, 0, "--out inside the input");
    let again = cut_json(&root, &inner, &["--preview"]);
    assert_eq!(
        again,
        all("unchanged", &THREE),
        "previews are not taken as layers"
    );
}

#[test]
fn an_unwritable_output_folder_is_refused_naming_it() {
    let dir = TempDir::new("readonly");
    let root = layers(&dir);
    let out = dir.path("locked");
    fs::create_dir(&out).unwrap();
    let mut perm = fs::metadata(&out).unwrap().permissions();
    perm.set_readonly(true);
    fs::set_permissions(&out, perm.clone()).unwrap();
    // root (or a filesystem ignoring permissions) writes anyway: then there
    // is nothing to refuse
    let probe = out.join("probe");
    if fs::write(&probe, b"").is_ok() {
        let _ = fs::remove_file(&probe);
        eprintln!("the read-only folder is writable here (root?): assertion skipped");
    } else {
        let o = run(&["--out", out.to_str().unwrap()], &[&root]);
        assert_status(&o, 2, "a read-only --out");
        let err = text(&o.stderr);
        assert!(
            err.contains(out.to_str().unwrap()) && err.contains("cannot be written"),
            "{err}"
        );
    }
    #[allow(clippy::permissions_set_readonly_false)]
    perm.set_readonly(false);
    fs::set_permissions(&out, perm).unwrap();
    // an output folder that cannot be created: a file stands in its place
    let file = dir.path("a-file");
    fs::write(&file, b"").unwrap();
    let o = run(&["--out", file.join("sub").to_str().unwrap()], &[&root]);
    assert_status(&o, 2, "--out under a file");
    assert!(
        text(&o.stderr).contains("cannot be created"),
        "{}",
        text(&o.stderr)
    );
}

/// No temporary or backup file anywhere under `dir`.
fn assert_no_temporaries(dir: &Path) {
    for name in tree(dir).into_keys() {
        assert!(
            !name.contains(".underdraw-") && !name.contains(".tmp"),
            "a temporary file is left: {name}"
        );
    }
}

#[test]
fn a_layer_that_cannot_be_written_fails_alone_and_the_next_run_finishes_it() {
    let dir = TempDir::new("obstacle");
    let root = layers(&dir);
    let out = dir.path("out");
    let opts = ["--format", "all", "--budget", "16"];
    assert_eq!(cut_json(&root, &out, &opts), all("cut", &THREE));
    let first = tree(&out);
    // one destination of houses becomes a folder: its outputs cannot all be
    // replaced, so none is
    let obstacle = out.join("town/houses.gltf");
    fs::remove_file(&obstacle).unwrap();
    fs::create_dir(&obstacle).unwrap();
    fs::write(obstacle.join("keep"), b"someone's file").unwrap();
    let o = run(
        &[
            "--json",
            "--out",
            out.to_str().unwrap(),
            "--format",
            "all",
            "--budget",
            "8",
        ],
        &[&root],
    );
    assert_status(&o, 2, "a batch with one unwritable layer");
    let mut want = all("cut", &THREE);
    want.insert("town/houses.png".into(), "failed".into());
    assert_eq!(statuses(&o, &root), want);
    let err = text(&o.stderr);
    assert!(err.contains("1 of 3 layers failed"), "{err}");
    assert!(
        err.contains("houses.gltf") && err.contains("is a folder"),
        "{err}"
    );
    assert_no_temporaries(&out);
    let now = tree(&out);
    // the failed layer's other outputs are the first run's, not a mix
    for f in ["town/houses.mesh.json", "town/houses.bin"] {
        assert!(now[f] == first[f], "{f} was replaced");
    }
    // the other layers are complete, at the new budget
    for stem in ["sky", "town/ui/button"] {
        for ext in ["mesh.json", "gltf", "bin"] {
            assert!(now.contains_key(&format!("{stem}.{ext}")), "{stem}.{ext}");
        }
        assert_eq!(mesh_budget(&out.join(format!("{stem}.mesh.json"))), 8);
    }
    // the obstacle removed, the next run finishes that layer only
    fs::remove_dir_all(&obstacle).unwrap();
    let mut want = all("unchanged", &THREE);
    want.insert("town/houses.png".into(), "cut".into());
    assert_eq!(
        cut_json(&root, &out, &["--format", "all", "--budget", "8"]),
        want
    );
    assert_eq!(mesh_budget(&out.join("town/houses.mesh.json")), 8);
    assert!(out.join("town/houses.gltf").is_file());
    assert_no_temporaries(&out);
}

/// Every file under `dir` (relative path, `/`) with its modification time.
fn times(dir: &Path) -> BTreeMap<String, std::time::SystemTime> {
    tree(dir)
        .into_keys()
        .map(|rel| {
            let t = fs::metadata(dir.join(&rel)).unwrap().modified().unwrap();
            (rel, t)
        })
        .collect()
}

/// Sets every file under `dir` to a modification time long past, so a file
/// rewritten later shows a new time whatever the file system's resolution.
fn age(dir: &Path) {
    let past = std::time::UNIX_EPOCH + std::time::Duration::from_secs(1_000_000_000);
    for rel in tree(dir).into_keys() {
        let f = fs::File::options().write(true).open(dir.join(rel)).unwrap();
        f.set_modified(past).unwrap();
    }
}

#[test]
fn a_rerun_with_nothing_to_do_touches_no_file() {
    let dir = TempDir::new("noop");
    let root = layers(&dir);
    let out = dir.path("out");
    let extra = ["--format", "all"];
    assert_eq!(cut_json(&root, &out, &extra), all("cut", &THREE));
    age(&out);
    let (bytes, before) = (tree(&out), times(&out));
    assert!(before.contains_key("underdraw-manifest.json"));
    assert_eq!(cut_json(&root, &out, &extra), all("unchanged", &THREE));
    // same files, same bytes, same modification times: a file watcher on
    // the output folder sees nothing (the manifest included)
    assert_eq!(tree(&out), bytes);
    assert_eq!(times(&out), before);
    // a real change still rewrites the manifest (the control: this test
    // would fail if the times were not read back)
    write_blob(&root.join("sky.png"), 13.0);
    cut_json(&root, &out, &extra);
    let after = times(&out);
    assert_ne!(
        after["underdraw-manifest.json"],
        before["underdraw-manifest.json"]
    );
    assert_eq!(after["town/houses.gltf"], before["town/houses.gltf"]);
}

#[test]
fn an_input_that_gives_no_layer_is_an_error_naming_it() {
    let dir = TempDir::new("empty");
    let root = layers(&dir);
    let bare = dir.path("bare");
    fs::create_dir_all(bare.join("sub")).unwrap();
    fs::write(bare.join("sub/readme.txt"), "no layer here").unwrap();
    // a folder whose name ends in .png is searched, and holds nothing
    let named = dir.path("sky.png");
    fs::create_dir_all(&named).unwrap();
    let out = dir.path("out");
    let o = run(&["--out", out.to_str().unwrap()], &[&bare, &named]);
    assert_status(&o, 2, "folders without layers");
    let err = text(&o.stderr);
    assert!(
        err.contains(&format!("{}: is a folder with no layer", bare.display())),
        "{err}"
    );
    assert!(
        err.contains(&format!(
            "{}: is a folder (its name ends in .png",
            named.display()
        )),
        "{err}"
    );
    assert!(
        err.contains("no *.png file") && err.contains("nothing was cut"),
        "{err}"
    );
    // nothing found, nothing written: not even the output folder
    assert!(!out.exists());
    // patterns that take none of a folder's PNG files: named, with the
    // patterns tried; the other input's layers are still cut
    let single = dir.path("single.png");
    write_blob(&single, 12.0);
    let o = run(
        &["--out", out.to_str().unwrap(), "--include", "ui/*.png"],
        &[&root, &single],
    );
    assert_status(&o, 2, "patterns that take nothing");
    let err = text(&o.stderr);
    assert!(err.contains("1 of 2 inputs gave no layer"), "{err}");
    assert!(
        err.contains(&format!(
            "{}: is a folder with 3 PNG file(s)",
            root.display()
        )) && err.contains("--include 'ui/*.png'"),
        "{err}"
    );
    assert!(out.join("single.mesh.json").is_file());
    // the same folder with a pattern that takes its layers: no error
    let o = run(
        &["--out", out.to_str().unwrap(), "--include", "**/ui/*"],
        &[&root],
    );
    assert_status(&o, 0, "a pattern that takes a layer");
}

#[test]
fn files_given_directly_keep_the_layout_below_their_common_folder() {
    let dir = TempDir::new("common");
    // one file of the same name per theme folder
    let themes = ["Art", "Bath", "Cave/Deep"];
    let files: Vec<PathBuf> = themes
        .iter()
        .map(|t| dir.path(&format!("Themes/{t}/horizont.png")))
        .collect();
    for (k, f) in files.iter().enumerate() {
        write_blob(f, 8.0 + k as f64);
    }
    let out = dir.path("out");
    let paths: Vec<&Path> = files.iter().map(PathBuf::as_path).collect();
    let o = run(&["--out", out.to_str().unwrap()], &paths);
    assert_status(&o, 0, "same-name files of several folders");
    assert!(
        !text(&o.stderr).contains("same name"),
        "{}",
        text(&o.stderr)
    );
    let names: Vec<String> = tree(&out).into_keys().collect();
    assert_eq!(
        names,
        [
            "Art/horizont.mesh.json",
            "Bath/horizont.mesh.json",
            "Cave/Deep/horizont.mesh.json",
            "underdraw-manifest.json"
        ]
    );
    // each is the cut of its own file (their discs differ)
    for (t, f) in themes.iter().zip(&files) {
        let c = Command::new(BIN)
            .arg("check")
            .arg(out.join(format!("{t}/horizont.mesh.json")))
            .arg(f)
            .output()
            .unwrap();
        assert_status(&c, 0, t);
    }
    // files of one folder stay flat, as before
    let flat = dir.path("flat");
    let o = run(&["--out", flat.to_str().unwrap()], &paths[..1]);
    assert_status(&o, 0, "one file");
    assert_eq!(
        tree(&flat).into_keys().collect::<Vec<_>>(),
        ["horizont.mesh.json", "underdraw-manifest.json"]
    );
    // the same file twice still clashes (the later one fails)
    let o = run(&["--out", flat.to_str().unwrap()], &[paths[0], paths[0]]);
    assert_status(&o, 2, "the same file twice");
    assert!(text(&o.stderr).contains("same name"), "{}", text(&o.stderr));
}

#[test]
fn short_options_and_a_status_column_that_keeps_the_numbers_aligned() {
    let dir = TempDir::new("short");
    let root = layers(&dir);
    let out = dir.path("out");
    let o = run(&["-o", out.to_str().unwrap(), "-j", "1", "-q"], &[&root]);
    assert_status(&o, 0, "-j 1 -q");
    // -q: nothing on stdout (Rust tools' convention, common practice, no source)
    assert!(o.stdout.is_empty(), "{}", text(&o.stdout));
    write_blob(&root.join("sky.png"), 13.0);
    let o = run(&["-o", out.to_str().unwrap(), "-j", "2"], &[&root]);
    assert_status(&o, 0, "-j 2");
    let table = text(&o.stdout);
    let lines: Vec<&str> = table.lines().take(4).collect();
    assert!(lines[0].ends_with("status"), "{table}");
    assert!(
        lines[1].ends_with("  cut") && lines[2].ends_with("  unchanged"),
        "{table}"
    );
    // every column ends where its header ends: the numbers stay aligned
    // whatever the status
    let ends = |l: &str| -> Vec<usize> {
        let mut v = Vec::new();
        let b = l.as_bytes();
        for i in 1..b.len() {
            if b[i - 1] != b' ' && b[i] == b' ' {
                v.push(i);
            }
        }
        v
    };
    // the header's words: layer, vertices, opaque capture, excess texels,
    // excess %, status; a row's fields: layer, vertices, capture, excess,
    // excess %, status (the layer paths here hold no space)
    let header = ends(lines[0]);
    let columns = [header[1], header[3], header[5], header[7]];
    for l in &lines[1..] {
        let e = ends(l);
        assert_eq!(&e[1..5], &columns[..], "{table}");
    }
    // -j 0 is refused as --jobs 0 is
    let o = run(&["-o", out.to_str().unwrap(), "-j", "0"], &[&root]);
    assert_status(&o, 2, "-j 0");
}

#[test]
fn a_second_run_into_a_locked_output_folder_waits_or_refuses_and_never_mixes() {
    use std::time::Duration;
    use underdraw::batch::lock::{Holder, OutputLock, FILE_NAME};
    let dir = TempDir::new("lock");
    let root = layers(&dir);
    let out = dir.path("out");
    fs::create_dir_all(&out).unwrap();
    // the first run: this test process holds the folder's lock
    let held = OutputLock::acquire(&out, Duration::ZERO).unwrap();
    let o = run(
        &["--out", out.to_str().unwrap(), "--lock-wait", "0"],
        &[&root],
    );
    assert_status(&o, 2, "a run into a locked folder");
    let err = text(&o.stderr);
    assert!(
        err.contains(FILE_NAME)
            && err.contains(&format!("process {}", std::process::id()))
            && err.contains("wrote nothing"),
        "{err}"
    );
    // it wrote nothing: the lock file is all there is
    assert_eq!(tree(&out).into_keys().collect::<Vec<_>>(), [FILE_NAME]);
    // a run that waits: it finishes once the first lets go
    let child = Command::new(BIN)
        .arg("cut")
        .arg(&root)
        .args(["--out", out.to_str().unwrap(), "--lock-wait", "120"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    std::thread::sleep(Duration::from_millis(1000));
    assert_eq!(
        tree(&out).len(),
        1,
        "the waiting run wrote while the lock was held"
    );
    drop(held);
    let o = child.wait_with_output().unwrap();
    assert_status(&o, 0, "the waiting run");
    assert!(
        text(&o.stdout).contains("note: waited"),
        "{}",
        text(&o.stdout)
    );
    assert!(text(&o.stdout).contains("3 cut"), "{}", text(&o.stdout));
    // a lock file left by a process that died is taken over, with a note
    let gone = Holder {
        pid: 4_000_000,
        host: "build-agent-7".into(),
        started: "2026-01-02T03:04:05Z".into(),
    };
    fs::write(out.join(FILE_NAME), serde_json::to_vec(&gone).unwrap()).unwrap();
    let o = run(
        &["--out", out.to_str().unwrap(), "--lock-wait", "0"],
        &[&root],
    );
    assert_status(&o, 0, "a stale lock");
    assert!(
        text(&o.stdout).contains("took over the lock left by process 4000000 on build-agent-7"),
        "{}",
        text(&o.stdout)
    );
    assert!(!out.join(FILE_NAME).exists());
}

#[test]
fn a_batch_of_one_writes_the_same_bytes_whatever_the_threads() {
    // one layer tall enough for several row bands of the alpha analysis and
    // of the self-check, with soft edges and holes
    let dir = TempDir::new("one-layer");
    let layer = dir.path("in/big.png");
    fs::create_dir_all(layer.parent().unwrap()).unwrap();
    RgbaImage::from_fn(300, 700, |x, y| {
        let (fx, fy) = (x as f64, y as f64);
        let wave = 150.0 + 90.0 * (fy / 37.0).sin() + 20.0 * (fy / 7.0).cos();
        let d = fx - wave;
        let a = if (x / 23 + y / 31) % 5 == 0 {
            0 // holes
        } else if d < -6.0 {
            255
        } else if d < 6.0 {
            (127.0 - 21.0 * d) as u8 // a soft edge
        } else {
            0
        };
        Rgba([90, 120, 200, a])
    })
    .save_with_format(&layer, ImageFormat::Png)
    .unwrap();
    let runs: [(&str, &[&str], Option<&str>); 4] = [
        ("j1", &["--jobs", "1"], None),
        ("j2", &["-j", "2"], None),
        ("rayon1", &[], Some("1")),
        ("rayon3", &[], Some("3")),
    ];
    let mut trees = Vec::new();
    for (name, extra, rayon) in runs {
        let out = dir.path(name);
        let mut c = Command::new(BIN);
        c.arg("cut").arg(&layer).arg("--out").arg(&out);
        c.args(["--format", "all", "--mip-levels", "2", "--budget", "48"]);
        c.args(extra);
        if let Some(n) = rayon {
            c.env("RAYON_NUM_THREADS", n);
        }
        let o = c.output().unwrap();
        assert_status(&o, 0, name);
        trees.push((name, tree(&out)));
    }
    assert_eq!(trees[0].1.len(), 4, "{:?}", trees[0].1.keys());
    for (name, t) in &trees[1..] {
        for (file, bytes) in &trees[0].1 {
            assert!(t[file] == *bytes, "{file} differs between j1 and {name}");
        }
    }
    let c = Command::new(BIN)
        .arg("check")
        .arg(dir.path("j2/big.mesh.json"))
        .arg(&layer)
        .output()
        .unwrap();
    assert_status(&c, 0, "check of the one layer");
}
