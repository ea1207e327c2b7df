//! The names renamed in issue 23, in the files written and in `--help`, and
//! the old names refused with a message naming the new one:
//!
//! * mesh file `stats.interior_edge_length_earcut` ->
//!   `stats.interior_edge_length_unflipped` (mesh file version 2);
//! * scene file and draw list `repeat_x` -> `fill_width` (draw list
//!   version 2);
//! * `--max-pixels` -> `--max-texels`.
//!
//! (The refused scene file and mesh file are in the bad-input corpus,
//! `tests/corpus/old-fill-key.scene.json` and `old-stats-key.mesh.json`.)

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

fn temp(test: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("underdraw-names-{test}-{}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).unwrap();
    d
}

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demo-layers")
        .join(name)
}

fn run(args: &[&std::ffi::OsStr]) -> Output {
    Command::new(BIN)
        .args(args)
        .env("NO_COLOR", "1")
        .output()
        .expect("run the underdraw binary")
}

#[test]
fn the_mesh_file_has_the_new_stats_key_and_version() {
    let dir = temp("mesh");
    let img = demo("ui-button.png");
    let o = run(&[
        "cut".as_ref(),
        img.as_os_str(),
        "--out".as_ref(),
        dir.as_os_str(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = fs::read_to_string(dir.join("ui-button.mesh.json")).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(v["version"], 2);
    assert!(
        v["stats"]["interior_edge_length_unflipped"]
            .as_f64()
            .unwrap()
            > 0.0
    );
    assert!(!text.contains("earcut"), "{text}");
    // the file written is read back
    underdraw::io::load_mesh(&dir.join("ui-button.mesh.json")).unwrap();
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn help_names_max_texels_and_the_old_option_is_refused() {
    let o = run(&["--help".as_ref()]);
    let help = String::from_utf8_lossy(&o.stdout);
    assert!(help.contains("--max-texels"), "{help}");
    assert!(!help.contains("--max-pixels"), "{help}");
    let dir = temp("flag");
    let img = demo("ui-button.png");
    let o = run(&[
        "--max-pixels".as_ref(),
        "100".as_ref(),
        "cut".as_ref(),
        img.as_os_str(),
        "--out".as_ref(),
        dir.as_os_str(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("--max-pixels is now called --max-texels"),
        "{err}"
    );
    assert!(!dir.join("ui-button.mesh.json").exists());
    // the new name works: 128 x 128 = 16384 texels, over a limit of 100
    let o = run(&[
        "--max-texels".as_ref(),
        "100".as_ref(),
        "cut".as_ref(),
        img.as_os_str(),
        "--out".as_ref(),
        dir.as_os_str(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("over the limit of 100 texels"), "{err}");
    assert!(err.contains("--max-texels"), "{err}");
    fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn the_draw_list_says_fill_width_and_refuses_repeat_x() {
    let dir = temp("draw-list");
    let scene = dir.join("s.scene.json");
    fs::write(
        &scene,
        format!(
            r#"{{"viewport": [320, 180], "camera": {{"travel": 50, "samples": 2}},
                "layers": [{{"name": "panel", "image": "{}", "cut": {{"budget": 8}}, "fill_width": true}}]}}"#,
            demo("ui-panel.png").display()
        ),
    )
    .unwrap();
    let export = dir.join("export");
    let o = run(&[
        "scene".as_ref(),
        scene.as_os_str(),
        "--out".as_ref(),
        dir.join("out").as_os_str(),
        "--export".as_ref(),
        export.as_os_str(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let path = export.join("draw-list.json");
    let text = fs::read_to_string(&path).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(v["version"], 2);
    assert_eq!(v["layers"][0]["fill_width"], true);
    assert!(!text.contains("repeat_x"));
    underdraw::scene::export::load_draw_list(&path).unwrap();

    let old = dir.join("old-draw-list.json");
    fs::write(&old, text.replace("\"fill_width\"", "\"repeat_x\"")).unwrap();
    let e = underdraw::scene::export::load_draw_list(&old).unwrap_err();
    let msg = e.to_string();
    assert!(msg.contains("\"repeat_x\""), "{msg}");
    assert!(msg.contains("renamed \"fill_width\""), "{msg}");
    fs::remove_dir_all(&dir).unwrap();
}
