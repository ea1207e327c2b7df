//! Animation frames and nine-slice panels of a generated sheet, through the
//! binary, cross-checked with a texture sampler written here from the
//! OpenGL ES 3.0 LINEAR rule (specification section 3.8.10, from memory;
//! `sheet_support::linear_opaque`).

use underdraw::mesh::LayerMesh;

mod common;
mod sheet_support;
use common::triangles::{inset, triangles, Tri};
use common::{Rng, TempDir};
use sheet_support::{
    anchored_positions, check, cut_regions, linear_opaque, linear_visible, load, point_in,
    regions_file, run, save, status, text, Sheet,
};

const FRAME: u32 = 24;
const PANEL: [u32; 4] = [2, 30, 40, 32];
const SLICES: [u32; 4] = [8, 7, 9, 8];

/// Six frames of a spark (a growing core, a turning ray) in a row with one
/// texel of padding, and a panel (a rounded box, soft rim) below with two.
fn spark_and_panel() -> Sheet {
    let (w, h) = (152u32, 64u32);
    let mut alpha = vec![0u8; (w * h) as usize];
    let mut boxes = Vec::new();
    for k in 0..6u32 {
        let (x0, y0) = (1 + k * (FRAME + 1), 1);
        boxes.push([x0, y0, FRAME, FRAME]);
        let r = 5.0 + k as f64 * 0.8;
        let ang = k as f64 * 0.4;
        for y in 0..FRAME {
            for x in 0..FRAME {
                let (px, py) = (x as f64 + 0.5 - 12.0, y as f64 + 0.5 - 12.0);
                let core = ((r - px.hypot(py)) * 255.0).clamp(0.0, 255.0);
                let along = px * ang.cos() + py * ang.sin();
                let across = (-px * ang.sin() + py * ang.cos()).abs();
                let ray = if (0.0..11.0).contains(&along) && across < 1.0 {
                    160.0
                } else {
                    0.0
                };
                alpha[((y0 + y) * w + x0 + x) as usize] = core.max(ray) as u8;
            }
        }
    }
    let [px, py, pw, ph] = PANEL;
    for y in 0..ph {
        for x in 0..pw {
            let (cx, cy) = (
                x as f64 + 0.5 - pw as f64 / 2.0,
                y as f64 + 0.5 - ph as f64 / 2.0,
            );
            let (qx, qy) = (
                cx.abs() - (pw as f64 / 2.0 - 6.0),
                cy.abs() - (ph as f64 / 2.0 - 6.0),
            );
            let outside = qx.max(0.0).hypot(qy.max(0.0)) + qx.max(qy).min(0.0) - 6.0;
            let a = ((0.5 - outside) * 255.0).clamp(0.0, 255.0);
            alpha[((py + y) * w + px + x) as usize] = a as u8;
        }
    }
    boxes.push(PANEL);
    Sheet { w, h, alpha, boxes }
}

fn cut(
    dir: &TempDir,
    sheet: &Sheet,
) -> (
    std::path::PathBuf,
    std::path::PathBuf,
    Vec<serde_json::Value>,
) {
    let png = dir.path("fx.png");
    save(sheet, &png);
    let frames: Vec<String> = sheet.boxes[..6].iter().map(|b| format!("{b:?}")).collect();
    let rf = dir.path("fx.regions.json");
    std::fs::write(
        &rf,
        regions_file(&[
            (
                "spark".into(),
                format!("\"frames\": [{}]", frames.join(", ")),
            ),
            (
                "panel".into(),
                format!("\"rect\": {PANEL:?}, \"slices\": {SLICES:?}"),
            ),
            ("panel-whole".into(), format!("\"rect\": {PANEL:?}")),
        ]),
    )
    .unwrap();
    let out = dir.path("out");
    let o = cut_regions(
        &png,
        &rf,
        &out,
        &["--json", "--budget", "40", "--per-frame"],
        0,
        "cut",
    );
    (png, out, serde_json::from_slice(&o.stdout).unwrap())
}

/// One mesh for six frames: `check` holds (S intersected over the frames,
/// C united), and at every frame's offset its opaque triangles sample
/// opaque and the texels outside both meshes sample transparent; the
/// shared safe area is within every frame's and its must-cover area holds
/// every frame's (definitions); per-frame meshes are written and hold.
#[test]
fn one_mesh_serves_every_frame() {
    let dir = TempDir::new("sheet-frames");
    let sheet = spark_and_panel();
    let (png, out, rows) = cut(&dir, &sheet);
    let mesh_path = out.join("fx/spark.mesh.json");
    let m = load(&mesh_path);
    let r = m.region.as_ref().unwrap();
    assert_eq!(r.frames.as_ref().unwrap().len(), 6);
    let offsets = r.frame_uv_offsets.as_ref().unwrap();
    status(
        &run(&["check", mesh_path.to_str().unwrap(), png.to_str().unwrap()]),
        0,
        "check spark",
    );
    let mut rng = Rng(6);
    let opaque = triangles(&m, &m.opaque.indices);
    let all: Vec<Tri> = opaque
        .iter()
        .copied()
        .chain(triangles(&m, &m.blended.indices))
        .collect();
    assert!(!opaque.is_empty(), "the spark's common core is opaque");
    let (mut inside, mut outside) = (0, 0);
    for (k, b) in sheet.boxes[..6].iter().enumerate() {
        // the offset moves frame 0's texture coordinates onto frame k
        let du = offsets[k][0] as f64 * sheet.w as f64;
        assert!((du - (b[0] as f64 - sheet.boxes[0][0] as f64)).abs() < 1e-3);
        let at = |p: [f64; 2]| [p[0] + b[0] as f64, p[1] + b[1] as f64];
        for t in &opaque {
            for _ in 0..60 {
                let p = point_in(t, &mut rng);
                if inset(t, p) > 1e-6 {
                    assert!(
                        linear_opaque(&sheet, at(p)),
                        "frame {k}: opaque at {p:?} samples non-opaque"
                    );
                    inside += 1;
                }
            }
        }
        for _ in 0..3000 {
            let p = [rng.range(0.0, FRAME as f64), rng.range(0.0, FRAME as f64)];
            if all.iter().all(|t| inset(t, p) < -1e-6) {
                assert!(
                    !linear_visible(&sheet, at(p)),
                    "frame {k}: {p:?} outside both meshes samples visible"
                );
                outside += 1;
            }
        }
        let own = load(&out.join(format!("fx/spark.{k}.mesh.json")));
        assert!(m.stats.safe_opaque_area <= own.stats.safe_opaque_area);
        assert!(m.stats.must_cover_area >= own.stats.must_cover_area);
        let p = out.join(format!("fx/spark.{k}.mesh.json"));
        status(
            &run(&["check", p.to_str().unwrap(), png.to_str().unwrap()]),
            0,
            "check a frame",
        );
    }
    assert!(inside > 500 && outside > 500, "{inside} {outside}");
    let row = rows.iter().find(|r| r["region"] == "spark").unwrap();
    let notes = row["notes"].to_string();
    assert!(notes.contains("one mesh for 6 frames"), "{notes}");
}

/// The texel of the region a point of the stretched panel shows (the
/// nine-slice rule: corners unscaled, the centre scaled).
fn unstretch(p: [f64; 2], slices: [u32; 4], region: [f64; 2], size: [f64; 2]) -> [f64; 2] {
    let [l, t, r, b] = slices.map(|v| v as f64);
    let axis = |x: f64, lo: f64, hi: f64, n: f64, to: f64| {
        if x <= lo {
            x
        } else if x >= to - hi {
            n - (to - x)
        } else {
            lo + (x - lo) * (n - lo - hi) / (to - lo - hi)
        }
    };
    [
        axis(p[0], l, r, region[0], size[0]),
        axis(p[1], t, b, region[1], size[1]),
    ]
}

/// Failures of the stretched panel at `size`: an interpolated texture
/// coordinate that is not the nine-slice rule's texel, an opaque triangle
/// sampling non-opaque, a visible sample outside both meshes.
fn stretched_failures(
    sheet: &Sheet,
    m: &LayerMesh,
    size: [f64; 2],
    rng: &mut Rng,
) -> (usize, usize) {
    let pos = anchored_positions(m, size);
    let slices = m.region.as_ref().unwrap().slices.unwrap();
    let region = [m.size[0] as f64, m.size[1] as f64];
    let uv = |i: u32| {
        let i = i as usize;
        [
            m.uvs[2 * i] as f64 * sheet.w as f64,
            m.uvs[2 * i + 1] as f64 * sheet.h as f64,
        ]
    };
    let [rx, ry, _, _] = PANEL.map(|v| v as f64);
    let (mut fails, mut tried) = (0, 0);
    let mut tris = Vec::new();
    for (opaque, list) in [(true, &m.opaque.indices), (false, &m.blended.indices)] {
        for c in list.chunks(3) {
            let t: Tri = [pos[c[0] as usize], pos[c[1] as usize], pos[c[2] as usize]];
            tris.push(t);
            let area = ((t[1][0] - t[0][0]) * (t[2][1] - t[0][1])
                - (t[2][0] - t[0][0]) * (t[1][1] - t[0][1]))
                / 2.0;
            for _ in 0..40 {
                let p = point_in(&t, rng);
                if area.abs() < 1e-9 || inset(&t, p) < 1e-6 {
                    continue;
                }
                // barycentric coordinates of p, then the GPU's interpolation
                let d = |a: [f64; 2], b: [f64; 2], c: [f64; 2]| {
                    (b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1])
                };
                let (l1, l2) = (
                    d(t[0], p, t[2]) / d(t[0], t[1], t[2]),
                    d(t[0], t[1], p) / d(t[0], t[1], t[2]),
                );
                let l0 = 1.0 - l1 - l2;
                let (a, b, cc) = (uv(c[0]), uv(c[1]), uv(c[2]));
                let q = [0, 1].map(|k| l0 * a[k] + l1 * b[k] + l2 * cc[k]);
                let want = unstretch(p, slices, region, size);
                tried += 1;
                let shows_rule =
                    (q[0] - (want[0] + rx)).abs() < 1e-4 && (q[1] - (want[1] + ry)).abs() < 1e-4;
                if !shows_rule || (opaque && !linear_opaque(sheet, q)) {
                    fails += 1;
                }
            }
        }
    }
    for _ in 0..4000 {
        let p = [rng.range(0.0, size[0]), rng.range(0.0, size[1])];
        if tris.iter().all(|t| inset(t, p) < -1e-6) {
            let want = unstretch(p, slices, region, size);
            tried += 1;
            if linear_visible(sheet, [want[0] + rx, want[1] + ry]) {
                fails += 1;
            }
        }
    }
    (fails, tried)
}

/// The nine-slice panel passes `check` (no triangle across a slice line,
/// anchors that give back the positions) and, stretched to several sizes
/// from its anchors, shows the nine-slice rule's texels, samples opaque in
/// its opaque mesh and transparent outside both meshes (LINEAR rule). The
/// same rect cut whole, given anchors by the same rule, fails that at some
/// size (so the check can fail).
#[test]
fn nine_slice_panel_holds_at_every_stretch() {
    let dir = TempDir::new("sheet-slices");
    let sheet = spark_and_panel();
    let (png, out, rows) = cut(&dir, &sheet);
    let mesh_path = out.join("fx/panel.mesh.json");
    let c = check(&mesh_path, &png, &[], 0, "check panel");
    assert!(text(&c.stdout).contains("nine-slice"));
    let m = load(&mesh_path);
    assert!(m.vertex_count() <= 40);
    let row = rows.iter().find(|r| r["region"] == "panel").unwrap();
    assert_eq!(row["vertices"], m.vertex_count());
    let mut rng = Rng(9);
    let sizes = [[40.0, 32.0], [64.0, 48.0], [120.0, 40.0], [33.5, 200.0]];
    for size in sizes {
        let (fails, tried) = stretched_failures(&sheet, &m, size, &mut rng);
        assert_eq!(
            fails, 0,
            "panel at {size:?}: {fails} of {tried} points fail"
        );
        assert!(tried > 1000);
    }
    // the control: the whole rect, anchored by the same rule
    let mut whole = load(&out.join("fx/panel-whole.mesh.json"));
    let cols = [0, SLICES[0], PANEL[2] - SLICES[2], PANEL[2]];
    let rws = [0, SLICES[1], PANEL[3] - SLICES[3], PANEL[3]];
    let anchor = |lines: [u32; 4], at: f32| {
        let k = (0..3).rev().find(|&k| lines[k] as f32 <= at).unwrap();
        (k as f32, at - lines[k] as f32)
    };
    let anchors = whole
        .positions
        .chunks(2)
        .map(|p| {
            let (c, dx) = anchor(cols, p[0]);
            let (r, dy) = anchor(rws, p[1]);
            [c, r, dx, dy]
        })
        .collect();
    let r = whole.region.as_mut().unwrap();
    r.slices = Some(SLICES);
    r.slice_positions = Some(anchors);
    let bad: usize = sizes[1..]
        .iter()
        .map(|&s| stretched_failures(&sheet, &whole, s, &mut rng).0)
        .sum();
    assert!(bad > 0, "the whole-rect cut should bend when stretched");
}
