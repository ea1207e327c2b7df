//! Sheets found by a `cut` batch: a PNG with a sibling `<stem>.regions.json`
//! (in a folder searched, or given directly) is cut per region, a PNG
//! without one as one layer. Each region mesh is re-verified by `check`
//! on the whole sheet, and its texture coordinates are compared with the
//! sheet address computed here (uv = (region origin + position) / sheet
//! size: the glTF 2.0 texture coordinate convention, origin top-left).

mod common;
mod sheet_support;
use common::TempDir;
use sheet_support::{load, pack, regions_file, run, save, status, text};
use std::path::Path;

/// Writes `in/ui/atlas.png` (three sprites, 1 texel of padding) with its
/// regions file, `in/ui/loose.png` without one and a settings file at the
/// folder's root; returns the packed boxes.
fn layout(root: &Path) -> Vec<[u32; 4]> {
    std::fs::create_dir_all(root.join("in/ui")).unwrap();
    let sheet = pack(&[(0, 20, 16), (2, 18, 14), (1, 16, 16)], 1, 80);
    save(&sheet, &root.join("in/ui/atlas.png"));
    let e: Vec<(String, String)> = sheet
        .boxes
        .iter()
        .enumerate()
        .map(|(k, b)| (format!("r{k}"), format!("\"rect\": {b:?}")))
        .collect();
    std::fs::write(root.join("in/ui/atlas.regions.json"), regions_file(&e)).unwrap();
    let loose = pack(&[(1, 20, 20)], 2, 24);
    save(&loose, &root.join("in/ui/loose.png"));
    std::fs::write(
        root.join("in/underdraw.settings.json"),
        r#"{"defaults": {"budget": 20}, "layers": [{"match": "ui/atlas/r1", "budget": 6}]}"#,
    )
    .unwrap();
    sheet.boxes
}

/// A region mesh: `check` holds on the sheet, its `region` key is the
/// regions file's rectangle, and its uvs address the sheet.
fn verify_region(mesh_path: &Path, sheet: &Path, rect: [u32; 4]) {
    let m = load(mesh_path);
    let r = m.region.as_ref().expect("a region key");
    assert_eq!(r.rect, rect, "{mesh_path:?}");
    let [sw, sh] = r.sheet_size;
    for (k, p) in m.positions.chunks(2).enumerate() {
        let want = [
            (rect[0] as f64 + p[0] as f64) / sw as f64,
            (rect[1] as f64 + p[1] as f64) / sh as f64,
        ];
        let got = [m.uvs[2 * k] as f64, m.uvs[2 * k + 1] as f64];
        assert!(
            (got[0] - want[0]).abs() < 1e-6 && (got[1] - want[1]).abs() < 1e-6,
            "{mesh_path:?} vertex {k}: uv {got:?}, the sheet address is {want:?}"
        );
    }
    let o = run(&[
        "check",
        mesh_path.to_str().unwrap(),
        sheet.to_str().unwrap(),
    ]);
    status(&o, 0, &format!("check {mesh_path:?}"));
}

#[test]
fn a_folder_batch_cuts_a_png_with_a_regions_file_per_region() {
    let dir = TempDir::new("sheet-batch-folder");
    let boxes = layout(&dir.0);
    let out = dir.path("out");
    let o = run(&[
        "cut",
        dir.path("in").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    status(&o, 0, "folder batch");
    let table = text(&o.stdout);
    // one row per region, named <stem>/<name>, and the loose layer's row
    for name in ["atlas/r0", "atlas/r1", "atlas/r2", "loose.png"] {
        assert!(
            table
                .lines()
                .any(|l| l.starts_with(name) || l.contains(&format!("/{name} "))),
            "no row for {name}:\n{table}"
        );
    }
    assert!(
        table.contains("3 regions of 1 sheet(s) cut (0 failed)"),
        "{table}"
    );
    // the sheet is not cut as one layer; its regions go below its stem
    assert!(!out.join("ui/atlas.mesh.json").exists());
    assert!(out.join("ui/loose.mesh.json").is_file());
    let sheet = dir.path("in/ui/atlas.png");
    for (k, b) in boxes.iter().enumerate() {
        verify_region(&out.join(format!("ui/atlas/r{k}.mesh.json")), &sheet, *b);
    }
    // the folder's settings file matched against <folder>/<stem>/<name>
    let budget = |n: &str| load(&out.join(format!("ui/atlas/{n}.mesh.json"))).budget;
    assert_eq!(
        (budget("r0"), budget("r1"), budget("r2")),
        (Some(20), Some(6), Some(20))
    );
    // a rerun leaves the region files as they were, times included
    let t = |p: &Path| std::fs::metadata(p).unwrap().modified().unwrap();
    let r0 = out.join("ui/atlas/r0.mesh.json");
    let before = t(&r0);
    std::thread::sleep(std::time::Duration::from_millis(20));
    let o = run(&[
        "cut",
        dir.path("in").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    status(&o, 0, "rerun");
    assert_eq!(t(&r0), before, "an unchanged region mesh is not rewritten");
    // --json: one object per region, with the files written
    let o = run(&[
        "--json",
        "cut",
        dir.path("in").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    status(&o, 0, "--json");
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let regions: Vec<&serde_json::Value> = v
        .as_array()
        .unwrap()
        .iter()
        .filter(|o| o.get("region").is_some())
        .collect();
    assert_eq!(regions.len(), 3, "{v:#}");
    assert_eq!(regions[1]["region"], "r1");
    assert_eq!(regions[1]["outputs"].as_array().unwrap().len(), 1);
}

#[test]
fn files_given_directly_are_cut_as_sheets_too() {
    let dir = TempDir::new("sheet-batch-files");
    let boxes = layout(&dir.0);
    let out = dir.path("out");
    let (sheet, loose) = (dir.path("in/ui/atlas.png"), dir.path("in/ui/loose.png"));
    let o = run(&[
        "cut",
        sheet.to_str().unwrap(),
        loose.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--budget",
        "12",
    ]);
    status(&o, 0, "files");
    assert!(out.join("loose.mesh.json").is_file());
    assert!(!out.join("atlas.mesh.json").exists());
    for (k, b) in boxes.iter().enumerate() {
        let p = out.join(format!("atlas/r{k}.mesh.json"));
        verify_region(&p, &sheet, *b);
        assert_eq!(load(&p).budget, Some(12));
    }
    // a damaged regions file fails that sheet (named), the rest is cut: exit 2
    std::fs::write(dir.path("in/ui/atlas.regions.json"), "{not json").unwrap();
    let out2 = dir.path("out2");
    let o = run(&[
        "cut",
        sheet.to_str().unwrap(),
        loose.to_str().unwrap(),
        "--out",
        out2.to_str().unwrap(),
    ]);
    status(&o, 2, "bad regions file");
    assert!(
        text(&o.stderr).contains("atlas.regions.json"),
        "{}",
        text(&o.stderr)
    );
    assert!(out2.join("loose.mesh.json").is_file());
}
