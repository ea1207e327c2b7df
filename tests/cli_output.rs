//! The binary's output conventions: `--json` prints a result that parses
//! (serde_json) and agrees with the files written, `--quiet` prints nothing
//! on success, and no colour escape codes reach a stream that is not a
//! terminal or when NO_COLOR is set (the NO_COLOR convention, no-color.org).
//! Under `Command::output` neither stdout nor stderr is a terminal.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

fn temp(test: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("underdraw-cliout-{test}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).unwrap();
    d
}

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demo-layers")
        .join(name)
}

fn run(args: &[&std::ffi::OsStr], no_color: bool) -> Output {
    let mut c = Command::new(BIN);
    c.args(args);
    if no_color {
        c.env("NO_COLOR", "1");
    } else {
        c.env_remove("NO_COLOR");
    }
    c.output().expect("run the underdraw binary")
}

/// Area of a triangle list by the shoelace formula (exact here: positions
/// are multiples of half a texel).
fn area(pos: &[f64], idx: &[u64]) -> f64 {
    idx.chunks(3)
        .map(|t| {
            let p = |i: u64| (pos[2 * i as usize], pos[2 * i as usize + 1]);
            let (a, b, c) = (p(t[0]), p(t[1]), p(t[2]));
            ((b.0 - a.0) * (c.1 - a.1) - (c.0 - a.0) * (b.1 - a.1)).abs() / 2.0
        })
        .sum()
}

#[test]
fn cut_json_matches_the_mesh_files() {
    let dir = temp("cut-json");
    let out = dir.join("m");
    let (a, b) = (demo("ui-button.png"), demo("ui-panel.png"));
    let o = run(
        &[
            "--json".as_ref(),
            "cut".as_ref(),
            a.as_os_str(),
            b.as_os_str(),
            "--budget".as_ref(),
            "20".as_ref(),
            "--out".as_ref(),
            out.as_os_str(),
        ],
        false,
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("stdout is JSON");
    let layers = v.as_array().expect("an array of layers");
    assert_eq!(layers.len(), 2);
    for (l, stem) in layers.iter().zip(["ui-button", "ui-panel"]) {
        assert!(l["layer"]
            .as_str()
            .unwrap()
            .ends_with(&format!("{stem}.png")));
        let file = out.join(format!("{stem}.mesh.json"));
        let outputs: Vec<&str> = l["outputs"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s.as_str().unwrap())
            .collect();
        assert_eq!(outputs, [file.display().to_string()]);
        let m: serde_json::Value =
            serde_json::from_str(&fs::read_to_string(&file).unwrap()).unwrap();
        let pos: Vec<f64> = m["positions"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap())
            .collect();
        let idx = |k: &str| -> Vec<u64> {
            m[k]["indices"]
                .as_array()
                .unwrap()
                .iter()
                .map(|x| x.as_u64().unwrap())
                .collect()
        };
        // vertices: the shared vertex array's length
        assert_eq!(l["vertices"].as_u64().unwrap() as usize, pos.len() / 2);
        assert!(pos.len() / 2 <= 20);
        // vertex bytes: x, y, u, v as 4-byte floats (16) or 2-byte shorts (8)
        let n = pos.len() as u64 / 2;
        assert_eq!(l["vertex_bytes"]["f32"].as_u64(), Some(16 * n));
        assert_eq!(l["vertex_bytes"]["u16"].as_u64(), Some(8 * n));
        let st = &m["stats"];
        let opaque = area(&pos, &idx("opaque"));
        let covered = opaque + area(&pos, &idx("blended"));
        let safe = st["safe_opaque_area"].as_f64().unwrap();
        // null where the safe-opaque region is empty
        match l["opaque_capture"].as_f64() {
            Some(c) => assert!(safe > 0.0 && (c - opaque / safe).abs() < 1e-9),
            None => assert_eq!(safe, 0.0, "{l}"),
        }
        let excess = covered - st["must_cover_area"].as_f64().unwrap();
        assert!((l["excess"].as_f64().unwrap() - excess).abs() < 1e-6);
        assert!(l["notes"].as_array().unwrap().is_empty(), "{l}");
    }
    fs::remove_dir_all(&dir).unwrap();
}

/// The demo's `cut --json` warns about exactly the layers whose numbers
/// (read from their mesh files) deserve it: excess larger than the
/// must-cover area, or opaque capture under one half where there is
/// safe-opaque area (the thresholds of `underdraw::quality`); at budget 64
/// that is at least the houses (capture about 20%) and the masts (excess
/// about twice the must-cover area), and not the sky.
#[test]
fn cut_json_warns_about_the_poor_cuts_only() {
    let dir = temp("warnings");
    let out = dir.join("m");
    let o = run(
        &[
            "--json".as_ref(),
            "cut".as_ref(),
            demo("").as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
        ],
        true,
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("stdout is JSON");
    let mut warned = Vec::new();
    for l in v.as_array().unwrap() {
        let layer = l["layer"].as_str().unwrap();
        let stem = Path::new(layer).file_stem().unwrap().to_string_lossy();
        let mesh: serde_json::Value = serde_json::from_str(
            &fs::read_to_string(out.join(format!("{stem}.mesh.json"))).unwrap(),
        )
        .unwrap();
        let st = &mesh["stats"];
        let f = |k: &str| st[k].as_f64().unwrap();
        let poor = f("covered_area") - f("must_cover_area") > f("must_cover_area")
            || (f("safe_opaque_area") > 0.0 && f("opaque_area") / f("safe_opaque_area") < 0.5);
        let warnings = l["warnings"].as_array().unwrap();
        assert_eq!(!warnings.is_empty(), poor, "{stem}: {l}");
        for w in warnings {
            assert!(w.as_str().unwrap().contains("try"), "{stem}: {w}");
        }
        if poor {
            warned.push(stem.to_string());
        }
    }
    warned.sort();
    assert_eq!(warned, ["houses", "masts"]);
    fs::remove_dir_all(&dir).unwrap();
}

fn small_scene(dir: &Path) -> PathBuf {
    let scene = dir.join("s.scene.json");
    fs::write(
        &scene,
        format!(
            r#"{{"viewport": [320, 180], "camera": {{"travel": 50, "samples": 2}},
                "layers": [{{"name": "button", "image": "{}", "cut": {{"budget": 12}}}}]}}"#,
            demo("ui-button.png").display()
        ),
    )
    .unwrap();
    scene
}

#[test]
fn scene_json_is_the_report_file() {
    let dir = temp("scene-json");
    let (scene, out) = (small_scene(&dir), dir.join("out"));
    let o = run(
        &[
            "scene".as_ref(),
            scene.as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
            "--json".as_ref(),
        ],
        false,
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let printed: serde_json::Value = serde_json::from_slice(&o.stdout).expect("stdout is JSON");
    let file: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("scene-report.json")).unwrap()).unwrap();
    assert_eq!(printed, file);
    // rect, outline, split, exact, layered, layered-hsr
    assert_eq!(printed["strategies"].as_array().unwrap().len(), 6);
    // both heatmaps show one camera sample, named in the report: the one
    // where the rect strategy peaks
    let sample = printed["heatmap_sample"].as_u64().unwrap();
    let rect = printed["strategies"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["strategy"] == "rect")
        .unwrap();
    assert_eq!(rect["peak_sample"].as_u64(), Some(sample));
    let maps = printed["heatmaps"].as_array().unwrap();
    assert_eq!(maps.len(), 2);
    for m in maps {
        assert_eq!(m["sample"].as_u64(), Some(sample), "{m}");
    }
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn quiet_prints_nothing_on_success_and_errors_still_show() {
    let dir = temp("quiet");
    let (scene, out) = (small_scene(&dir), dir.join("out"));
    let img = demo("ui-button.png");
    for args in [
        vec![
            "--quiet".as_ref(),
            "cut".as_ref(),
            img.as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
        ],
        vec![
            "scene".as_ref(),
            scene.as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
            "--quiet".as_ref(),
        ],
    ] {
        let o = run(&args, false);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        assert!(
            o.stdout.is_empty(),
            "{}",
            String::from_utf8_lossy(&o.stdout)
        );
        assert!(
            o.stderr.is_empty(),
            "{}",
            String::from_utf8_lossy(&o.stderr)
        );
    }
    assert!(out.join("ui-button.mesh.json").is_file());
    let missing = dir.join("missing.png");
    let o = run(
        &[
            "--quiet".as_ref(),
            "cut".as_ref(),
            missing.as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
        ],
        false,
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(o.stdout.is_empty());
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("missing.png"), "{err}");
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn no_escape_codes_off_a_terminal_or_with_no_color() {
    let dir = temp("colour");
    let out = dir.join("out");
    let (img, missing) = (demo("ui-button.png"), dir.join("missing.png"));
    for no_color in [false, true] {
        let o = run(
            &[
                "cut".as_ref(),
                img.as_os_str(),
                missing.as_os_str(),
                "--out".as_ref(),
                out.as_os_str(),
            ],
            no_color,
        );
        assert_eq!(o.status.code(), Some(2));
        let (so, se) = (
            String::from_utf8_lossy(&o.stdout),
            String::from_utf8_lossy(&o.stderr),
        );
        assert!(
            so.contains("ui-button.png") && se.contains("error:"),
            "{so}\n{se}"
        );
        // ESC (0x1b) starts every ANSI escape sequence (ECMA-48)
        assert!(
            !o.stdout.contains(&0x1b) && !o.stderr.contains(&0x1b),
            "{so:?}\n{se:?}"
        );
    }
    fs::remove_dir_all(&dir).unwrap();
}
