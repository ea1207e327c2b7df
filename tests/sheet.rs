//! Sprite sheets through the binary: generated sheets packed with 0, 1 and
//! 2 texels of padding, cut per region from a regions file, every region
//! mesh re-verified by `check`, cross-checked by a texture sampler written
//! here from the GPU rule, the padding warnings against a padding computed
//! here, `--find-regions` against the sprites a sheet was packed from, and
//! the regions file's errors.

use underdraw::mesh::LayerMesh;

mod common;
mod sheet_support;
use common::triangles::{inset, triangles};
use common::{Rng, TempDir};
use sheet_support::{
    check, cut_regions, linear_opaque, load, pack, padding_of, point_in, regions_file, run, save,
    status, text, Sheet,
};

/// Random points of the opaque triangles, moved to the sheet by `offset`,
/// sample fully opaque; returns how many were tried.
fn sample_opaque(sheet: &Sheet, m: &LayerMesh, offset: [f64; 2], rng: &mut Rng) -> usize {
    let mut n = 0;
    for t in triangles(m, &m.opaque.indices) {
        for _ in 0..40 {
            let p = point_in(&t, rng);
            if inset(&t, p) < 1e-6 {
                continue;
            }
            let q = [p[0] + offset[0], p[1] + offset[1]];
            assert!(
                linear_opaque(sheet, q),
                "{}: opaque triangle {t:?} samples non-opaque at {q:?} of the sheet",
                m.source
            );
            n += 1;
        }
    }
    n
}

fn sizes(rng: &mut Rng, n: usize) -> Vec<(u64, u32, u32)> {
    (0..n)
        .map(|k| (k as u64, 8 + rng.below(20) as u32, 8 + rng.below(16) as u32))
        .collect()
}

/// Every region of sheets packed with 0, 1 and 2 texels of padding, at
/// bilinear levels 0 and 1: `check` holds on each mesh (exit 0), uvs
/// address the sheet, opaque triangles sample opaque on the whole sheet
/// (LINEAR rule above), and a padding warning appears exactly where the
/// padding computed here is below the reach (half a texel at level 0, 1.5
/// at level 1: common practice, no source).
#[test]
fn packed_sheets_cut_per_region_pass_check_and_warn_on_padding() {
    let mut rng = Rng(15);
    let dir = TempDir::new("sheet-packed");
    let mut sampled = 0;
    let mut warned = 0;
    let mut quiet = 0;
    for pad in [0u32, 1, 2] {
        let sheet = pack(&sizes(&mut rng, 9), pad, 96);
        let png = dir.path(&format!("ui{pad}.png"));
        save(&sheet, &png);
        let entries: Vec<(String, String)> = sheet
            .boxes
            .iter()
            .enumerate()
            .map(|(k, b)| (format!("s{k}"), format!("\"rect\": {b:?}")))
            .collect();
        let rf = dir.path(&format!("ui{pad}.regions.json"));
        std::fs::write(&rf, regions_file(&entries)).unwrap();
        for mips in [0u32, 1] {
            let out = dir.path(&format!("out{pad}-{mips}"));
            let o = cut_regions(
                &png,
                &rf,
                &out,
                &[
                    "--json",
                    "--budget",
                    "24",
                    "--mip-levels",
                    &mips.to_string(),
                    "--format",
                    "all",
                ],
                0,
                "cut --regions",
            );
            let rows: Vec<serde_json::Value> = serde_json::from_slice(&o.stdout).unwrap();
            assert_eq!(rows.len(), sheet.boxes.len());
            let (reach, band) = if mips == 0 { (0.5, 1) } else { (1.5, 2) };
            for (k, b) in sheet.boxes.iter().enumerate() {
                let name = format!("s{k}");
                let mesh_path = out.join(format!("ui{pad}/{name}.mesh.json"));
                assert!(out.join(format!("ui{pad}/{name}.gltf")).is_file());
                let m = load(&mesh_path);
                let r = m.region.as_ref().expect("a region key");
                assert_eq!(r.rect, *b);
                assert_eq!(r.sheet_size, [sheet.w, sheet.h]);
                assert_eq!(m.size, [b[2], b[3]]);
                for (p, uv) in m.positions.chunks(2).zip(m.uvs.chunks(2)) {
                    assert!(
                        p[0] >= 0.0 && p[0] <= b[2] as f32 && p[1] >= 0.0 && p[1] <= b[3] as f32
                    );
                    let u = (p[0] as f64 + b[0] as f64) / sheet.w as f64;
                    assert!((uv[0] as f64 - u).abs() < 1e-6, "u of {p:?}");
                }
                let c = check(&mesh_path, &png, &[], 0, &format!("check {name}"));
                assert!(text(&c.stdout).contains("contract holds"));
                if mips == 0 {
                    sampled += sample_opaque(&sheet, &m, [b[0] as f64, b[1] as f64], &mut rng);
                }
                // the padding warning, exactly where the padding is short
                let found = padding_of(&sheet, *b, band);
                let row = rows.iter().find(|r| r["region"] == name.as_str()).unwrap();
                let warnings = row["warnings"].as_array().unwrap();
                let has = warnings
                    .iter()
                    .any(|w| w.as_str().unwrap().contains("bleed into this region"));
                assert_eq!(
                    has,
                    (found as f64) < reach,
                    "ui{pad} {name} {b:?} mips {mips}: padding {found}, warnings {warnings:?}"
                );
                if has {
                    warned += 1;
                } else {
                    quiet += 1;
                }
            }
        }
    }
    assert!(sampled > 1000, "only {sampled} points sampled");
    assert!(warned > 5 && quiet > 5, "warned {warned}, quiet {quiet}");
}

/// `--find-regions` finds exactly the boxes a sheet was packed from (1 and
/// 2 texels of padding), names them `<stem>-<n>` in reading order (shelves
/// top to bottom, left to right), writes them to OUT/<stem>.regions.json
/// and cuts them; a second run leaves the file as it is, and refuses to
/// replace one edited by hand without --force.
#[test]
fn find_regions_finds_the_packed_sprites() {
    let mut rng = Rng(7);
    let dir = TempDir::new("sheet-find");
    for pad in [1u32, 2] {
        let sheet = pack(&sizes(&mut rng, 11), pad, 120);
        let png = dir.path(&format!("icons{pad}.png"));
        save(&sheet, &png);
        let out = dir.path(&format!("out{pad}"));
        let args = [
            "cut",
            png.to_str().unwrap(),
            "--find-regions",
            "--out",
            out.to_str().unwrap(),
        ];
        status(&run(&args), 0, "find");
        let file = out.join(format!("icons{pad}.regions.json"));
        let v: serde_json::Value = serde_json::from_slice(&std::fs::read(&file).unwrap()).unwrap();
        let found: Vec<(String, [u32; 4])> = v["regions"]
            .as_array()
            .unwrap()
            .iter()
            .map(|r| {
                (
                    r["name"].as_str().unwrap().to_string(),
                    serde_json::from_value(r["rect"].clone()).unwrap(),
                )
            })
            .collect();
        // the packer places shelves top to bottom, left to right: its order
        // is reading order
        let expected: Vec<(String, [u32; 4])> = sheet
            .boxes
            .iter()
            .enumerate()
            .map(|(k, b)| (format!("icons{pad}-{}", k + 1), *b))
            .collect();
        assert_eq!(found, expected);
        for (name, _) in &found {
            assert!(out.join(format!("icons{pad}/{name}.mesh.json")).is_file());
        }
        // a second run: same file; an edited file is not replaced
        status(&run(&args), 0, "find again");
        std::fs::write(&file, "{\"edited\": true}").unwrap();
        let o = run(&args);
        status(&o, 2, "find over an edited file");
        assert!(text(&o.stderr).contains("--force"), "{}", text(&o.stderr));
        assert_eq!(
            std::fs::read_to_string(&file).unwrap(),
            "{\"edited\": true}"
        );
    }
}

/// A bad regions file is refused before anything is written, naming the
/// file, the region and what to do (exit 2).
#[test]
fn bad_regions_files_name_the_region_and_what_to_do() {
    let dir = TempDir::new("sheet-bad");
    let sheet = pack(&[(0, 10, 10), (2, 10, 10)], 1, 40);
    let png = dir.path("ui.png");
    save(&sheet, &png);
    let cases = [
        (r#""rect": [35, 0, 10, 10]"#, "outside the sheet"),
        (
            r#""frames": [[0, 0, 10, 10], [12, 0, 9, 10]]"#,
            "must be of one size",
        ),
        (
            r#""rect": [0, 0, 10, 10], "slices": [5, 2, 5, 2]"#,
            "do not fit",
        ),
    ];
    for (k, (rest, phrase)) in cases.iter().enumerate() {
        let rf = dir.path(&format!("bad{k}.regions.json"));
        std::fs::write(&rf, regions_file(&[("knob".into(), rest.to_string())])).unwrap();
        let out = dir.path(&format!("out{k}"));
        let o = cut_regions(&png, &rf, &out, &[], 2, phrase);
        let e = text(&o.stderr);
        assert!(
            e.contains(phrase) && e.contains("\"knob\"") && e.contains("hint:"),
            "{e}"
        );
        assert!(e.contains(&format!("bad{k}.regions.json")), "{e}");
        assert!(!out.join("ui").exists());
    }
    // two regions of one name
    let rf = dir.path("dup.regions.json");
    let rect = r#""rect": [1, 1, 10, 10]"#.to_string();
    std::fs::write(
        &rf,
        regions_file(&[("a".into(), rect.clone()), ("a".into(), rect)]),
    )
    .unwrap();
    let o = cut_regions(&png, &rf, &dir.path("o"), &[], 2, "duplicate names");
    assert!(text(&o.stderr).contains("both named \"a\""));
}

/// `check --region NAME --regions FILE` checks a mesh as that region, and
/// a mesh checked as another region of the sheet fails (exit 1).
#[test]
fn check_takes_a_region_from_the_regions_file() {
    let dir = TempDir::new("sheet-check");
    let sheet = pack(&[(0, 16, 12), (1, 16, 12)], 1, 40);
    let png = dir.path("ui.png");
    save(&sheet, &png);
    let rf = dir.path("ui.regions.json");
    let e: Vec<(String, String)> = sheet
        .boxes
        .iter()
        .enumerate()
        .map(|(k, b)| (format!("r{k}"), format!("\"rect\": {b:?}")))
        .collect();
    std::fs::write(&rf, regions_file(&e)).unwrap();
    let out = dir.path("out");
    status(
        &run(&[
            "cut",
            png.to_str().unwrap(),
            "--regions",
            rf.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ]),
        0,
        "cut",
    );
    let mesh = out.join("ui/r0.mesh.json");
    // the same mesh without its region key, checked by name
    let mut v: serde_json::Value = serde_json::from_slice(&std::fs::read(&mesh).unwrap()).unwrap();
    v.as_object_mut().unwrap().remove("region");
    let bare = dir.path("bare.mesh.json");
    std::fs::write(&bare, serde_json::to_vec(&v).unwrap()).unwrap();
    let c = |name: &str| {
        run(&[
            "check",
            bare.to_str().unwrap(),
            png.to_str().unwrap(),
            "--region",
            name,
            "--regions",
            rf.to_str().unwrap(),
        ])
    };
    status(&c("r0"), 0, "as its own region");
    let wrong = c("r1");
    status(&wrong, 1, "as the other region");
    assert!(text(&wrong.stdout).contains("contract violated"));
    let missing = c("r9");
    status(&missing, 2, "no such region");
    assert!(text(&missing.stderr).contains("r0, r1"));
    // and the plain check of a region mesh against the sheet reads its key
    status(
        &run(&["check", mesh.to_str().unwrap(), png.to_str().unwrap()]),
        0,
        "by key",
    );
}

/// A settings file's patterns match `<sheet stem>/<name>`: one region gets
/// its own budget, the others the defaults; explicit options win.
#[test]
fn settings_file_matches_sheet_and_region_names() {
    let dir = TempDir::new("sheet-settings");
    let sheet = pack(&[(0, 20, 16), (2, 20, 16), (1, 20, 16)], 1, 80);
    let png = dir.path("ui.png");
    save(&sheet, &png);
    let e: Vec<(String, String)> = sheet
        .boxes
        .iter()
        .enumerate()
        .map(|(k, b)| (format!("r{k}"), format!("\"rect\": {b:?}")))
        .collect();
    let rf = dir.path("ui.regions.json");
    std::fs::write(&rf, regions_file(&e)).unwrap();
    let sf = dir.path("s.json");
    std::fs::write(
        &sf,
        r#"{"defaults": {"budget": 20}, "layers": [{"match": "ui/r1", "budget": 6}]}"#,
    )
    .unwrap();
    let out = dir.path("out");
    let args = |extra: &[&str]| {
        let mut a = vec![
            "cut",
            png.to_str().unwrap(),
            "--regions",
            rf.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--settings",
            sf.to_str().unwrap(),
        ];
        a.extend_from_slice(extra);
        run(&a)
    };
    status(&args(&[]), 0, "cut with settings");
    let budget = |n: &str| load(&out.join(format!("ui/{n}.mesh.json"))).budget;
    assert_eq!(
        (budget("r0"), budget("r1"), budget("r2")),
        (Some(20), Some(6), Some(20))
    );
    status(&args(&["--budget", "12"]), 0, "explicit budget");
    assert_eq!((budget("r0"), budget("r1")), (Some(12), Some(12)));
}

/// With --per-frame, a frame's output name `<name>.<k>` may not be another
/// region's: refused before anything is written (exit 2).
#[test]
fn per_frame_names_may_not_clash() {
    let dir = TempDir::new("sheet-clash");
    let sheet = pack(&[(0, 10, 10), (2, 10, 10), (1, 10, 10)], 1, 40);
    let png = dir.path("fx.png");
    save(&sheet, &png);
    let [a, b, c] = [sheet.boxes[0], sheet.boxes[1], sheet.boxes[2]];
    let rf = dir.path("fx.regions.json");
    std::fs::write(
        &rf,
        regions_file(&[
            ("spark".into(), format!("\"frames\": [{a:?}, {b:?}]")),
            ("spark.1".into(), format!("\"rect\": {c:?}")),
        ]),
    )
    .unwrap();
    let out = dir.path("out");
    let o = cut_regions(&png, &rf, &out, &["--per-frame"], 2, "clashing names");
    assert!(
        text(&o.stderr).contains("would both write spark.1.mesh.json"),
        "{}",
        text(&o.stderr)
    );
    assert!(!out.join("fx/spark.mesh.json").exists());
}
