//! Sheets found by a `cut` batch: a PNG with a sibling `<stem>.regions.json`
//! (in a folder searched, or given directly) is cut per region, a PNG
//! without one as one layer. Each region mesh is re-verified by `check`
//! on the whole sheet, and its texture coordinates are compared with the
//! sheet address computed here (uv = (region origin + position) / sheet
//! size: the glTF 2.0 texture coordinate convention, origin top-left).

mod common;
mod sheet_support;
use common::TempDir;
use sheet_support::{check, cut_regions, load, pack, regions_file, run, save, status, text};
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
    check(mesh_path, sheet, &[], 0, &format!("check {mesh_path:?}"));
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
        table.contains("3 regions of 1 sheet(s) (3 cut, 0 unchanged, 0 failed)"),
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
    // a region's object has every key of a layer's, so scripts read both
    // the same way: the numbers, vertex_bytes, layer, status, outputs
    let layer = v
        .as_array()
        .unwrap()
        .iter()
        .find(|o| o.get("region").is_none())
        .expect("the loose layer's object");
    for r in &regions {
        for key in layer.as_object().unwrap().keys() {
            assert!(r.get(key).is_some(), "region object lacks {key:?}: {r:#}");
        }
        // the vertex array's bytes: 16 a vertex for f32, 8 for u16 (2D
        // position + texture coordinate, as a layer's)
        let n = r["vertices"].as_u64().unwrap();
        assert_eq!(r["vertex_bytes"]["f32"].as_u64(), Some(16 * n));
        assert_eq!(r["vertex_bytes"]["u16"].as_u64(), Some(8 * n));
    }
    assert_eq!(regions[1]["layer"], "atlas/r1");
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

/// The statuses of the `--json` objects of a batch's regions, in order.
fn region_statuses(o: &std::process::Output) -> Vec<String> {
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    v.as_array()
        .unwrap()
        .iter()
        .filter(|o| o.get("region").is_some())
        .map(|o| o["status"].as_str().unwrap().to_string())
        .collect()
}

#[test]
fn a_rerun_skips_an_unchanged_sheet_and_cuts_it_again_when_its_regions_change() {
    let dir = TempDir::new("sheet-batch-manifest");
    let boxes = layout(&dir.0);
    let out = dir.path("out");
    let input = dir.path("in");
    let cut = |extra: &[&str]| {
        let mut a = vec![
            "--json",
            "cut",
            input.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ];
        a.extend_from_slice(extra);
        run(&a)
    };
    let o = cut(&[]);
    status(&o, 0, "first run");
    assert_eq!(region_statuses(&o), ["cut", "cut", "cut"]);
    let first: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    // the manifest records the sheet by its outputs' folder, beside the layers
    let manifest: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("underdraw-manifest.json")).unwrap())
            .unwrap();
    let entry = &manifest["sheets"]["ui/atlas"];
    assert_eq!(entry["input"], "ui/atlas.png", "{manifest:#}");
    assert_eq!(entry["regions"].as_array().unwrap().len(), 3);
    assert!(manifest["layers"]["ui/loose"].is_object());
    // unchanged: skipped, with the numbers recorded, nothing rewritten
    let r1 = out.join("ui/atlas/r1.mesh.json");
    let t = |p: &Path| std::fs::metadata(p).unwrap().modified().unwrap();
    let before = t(&r1);
    let o = cut(&[]);
    status(&o, 0, "rerun");
    assert_eq!(region_statuses(&o), ["unchanged", "unchanged", "unchanged"]);
    assert_eq!(t(&r1), before);
    let again: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    for k in [
        "vertices",
        "vertex_bytes",
        "opaque_capture",
        "excess",
        "outputs",
    ] {
        let pick = |v: &serde_json::Value| -> Vec<serde_json::Value> {
            v.as_array()
                .unwrap()
                .iter()
                .filter(|o| o.get("region").is_some())
                .map(|o| o[k].clone())
                .collect()
        };
        assert_eq!(pick(&first), pick(&again), "{k}");
    }
    // the text says so too
    let o = run(&[
        "cut",
        dir.path("in").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(
        text(&o.stdout).contains("3 regions of 1 sheet(s) (0 cut, 3 unchanged, 0 failed)"),
        "{}",
        text(&o.stdout)
    );
    // a changed regions file (r2 renamed) cuts the sheet again
    let e: Vec<(String, String)> = boxes
        .iter()
        .enumerate()
        .map(|(k, b)| {
            let name = if k == 2 {
                "star".into()
            } else {
                format!("r{k}")
            };
            (name, format!("\"rect\": {b:?}"))
        })
        .collect();
    std::fs::write(dir.path("in/ui/atlas.regions.json"), regions_file(&e)).unwrap();
    let o = cut(&[]);
    status(&o, 0, "changed regions");
    assert_eq!(region_statuses(&o), ["cut", "cut", "cut"]);
    verify_region(
        &out.join("ui/atlas/star.mesh.json"),
        &dir.path("in/ui/atlas.png"),
        boxes[2],
    );
    // a changed setting too; and a deleted output
    let o = cut(&["--budget", "16"]);
    assert_eq!(region_statuses(&o), ["cut", "cut", "cut"]);
    let o = cut(&["--budget", "16"]);
    assert_eq!(region_statuses(&o), ["unchanged", "unchanged", "unchanged"]);
    std::fs::remove_file(out.join("ui/atlas/r0.mesh.json")).unwrap();
    let o = cut(&["--budget", "16"]);
    assert_eq!(region_statuses(&o), ["cut", "cut", "cut"]);
    assert!(out.join("ui/atlas/r0.mesh.json").is_file());
    // --force cuts it whatever the manifest says
    let o = cut(&["--budget", "16", "--force"]);
    assert_eq!(region_statuses(&o), ["cut", "cut", "cut"]);
}

#[test]
fn a_broken_regions_file_in_a_batch_is_named_and_the_batch_goes_on() {
    let dir = TempDir::new("sheet-batch-broken");
    layout(&dir.0);
    let out = dir.path("out");
    // a rectangle reaching outside the 80-texel-wide sheet
    std::fs::write(
        dir.path("in/ui/atlas.regions.json"),
        regions_file(&[("wide".into(), "\"rect\": [70, 0, 20, 8]".into())]),
    )
    .unwrap();
    let o = run(&[
        "cut",
        dir.path("in").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    status(&o, 2, "broken regions file");
    let err = text(&o.stderr);
    assert!(err.contains("atlas.regions.json"), "{err}");
    assert!(err.contains("wide"), "{err}");
    assert!(err.contains("hint"), "{err}");
    assert!(out.join("ui/loose.mesh.json").is_file());
    // nothing recorded for the sheet: the next run tries it again
    let manifest = std::fs::read_to_string(out.join("underdraw-manifest.json")).unwrap();
    assert!(!manifest.contains("ui/atlas"), "{manifest}");
}

#[test]
fn preview_draws_every_regions_meshes_over_the_whole_sheet() {
    let dir = TempDir::new("sheet-preview");
    let boxes = layout(&dir.0);
    let out = dir.path("out");
    let sheet = dir.path("in/ui/atlas.png");
    let regions = dir.path("in/ui/atlas.regions.json");
    let cut = || {
        cut_regions(
            &sheet,
            &regions,
            &out,
            &["--json", "--preview"],
            0,
            "--preview",
        )
    };
    let o = cut();
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let preview = out.join("atlas.preview.png");
    assert_eq!(v[0]["sheet_preview"].as_str(), preview.to_str(), "{v:#}");
    // read back with the png crate (a reference decoder of the PNG
    // specification): the sheet's width (80 texels, under the 1024 limit),
    // the plain sheet above its cut (wider than tall), a caption below
    let decoder = png::Decoder::new(std::io::BufReader::new(
        std::fs::File::open(&preview).unwrap(),
    ));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!(info.color_type, png::ColorType::Rgba);
    let (w, h) = (info.width, info.height);
    assert_eq!(w, 80);
    let sheet_img = image::open(&sheet).unwrap().to_rgba8();
    let sh = sheet_img.height();
    assert!(h > 2 * sh, "plain panel, cut panel and a caption: {h}");
    // every region's rectangle is tinted by its meshes in the cut panel
    // (6 pixels below the plain panel), where the plain panel is not
    let px = |x: u32, y: u32| {
        let i = 4 * (y * w + x) as usize;
        [buf[i], buf[i + 1], buf[i + 2]]
    };
    for b in &boxes {
        let changed = (b[1]..b[1] + b[3])
            .flat_map(|y| (b[0]..b[0] + b[2]).map(move |x| (x, y)))
            .filter(|&(x, y)| px(x, y) != px(x, y + sh + 6))
            .count();
        assert!(
            changed as u32 > b[2] * b[3] / 2,
            "region {b:?}: {changed} pixels tinted"
        );
    }
    // recorded in the manifest: an unchanged rerun keeps it and says where
    let o = cut();
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v[0]["status"], "unchanged");
    assert_eq!(v[0]["sheet_preview"].as_str(), preview.to_str());
    std::fs::remove_file(&preview).unwrap();
    let o = cut();
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(
        v[0]["status"], "cut",
        "a deleted preview cuts the sheet again"
    );
    assert!(preview.is_file());
}
