//! `scene --report DIR` as a browser shows it: Chromium, headless, loads
//! the page from disk, every image decodes, the console stays clean, no
//! request leaves the disk, and the summary table shows the numbers of
//! `scene-report.json`. A screenshot is kept as
//! `target/test-artifacts/report.png` for a person to look at.
//!
//! Needs Debian's `chromium` (`.ci/run` installs it). Without it the test
//! is skipped with a reason, except under `CI=true`, where it fails.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

fn chromium() -> Option<PathBuf> {
    for c in ["/usr/bin/chromium", "/usr/bin/chromium-browser"] {
        if Path::new(c).is_file() {
            return Some(PathBuf::from(c));
        }
    }
    None
}

fn target_dir() -> PathBuf {
    // CARGO_TARGET_TMPDIR is <target>/tmp
    Path::new(env!("CARGO_TARGET_TMPDIR"))
        .parent()
        .expect("the target tmp dir has a parent")
        .to_path_buf()
}

fn fresh(dir: &Path) -> PathBuf {
    let _ = fs::remove_dir_all(dir);
    fs::create_dir_all(dir).unwrap();
    dir.to_path_buf()
}

/// Chromium headless with nothing of its own on the network (no updates,
/// sync, QUIC or first-run pages), a new empty profile, and every host name
/// resolving to nothing, so a request for anything not on disk fails.
fn browse(browser: &Path, work: &Path, run: &str, args: &[String], page: &Path) -> Output {
    let profile = fresh(&work.join(format!("profile-{run}")));
    let url = format!("file://{}", page.display());
    Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--host-resolver-rules=MAP * ~NOTFOUND",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(args)
        .arg(url)
        .output()
        .expect("run chromium")
}

/// Console messages the page raised. Chromium, with
/// `--enable-logging=stderr`, logs each as `...:CONSOLE:<line>] "<text>"`
/// (console.error and uncaught exceptions alike, the latter with
/// "Uncaught"; as observed with Debian's chromium, no source). The page has
/// no script and the probe logs nothing, so any console line is a fault.
fn console_errors(stderr: &str) -> Vec<&str> {
    stderr
        .lines()
        .filter(|l| l.contains("Uncaught") || l.contains(":CONSOLE"))
        .collect()
}

/// The text of each `<td>` in `row` (a serialized `<tr>`), tags stripped.
fn cells(row: &str) -> Vec<String> {
    row.split("<td")
        .skip(1)
        .map(|c| {
            let body = &c[c.find('>').unwrap() + 1..];
            body[..body.find("</td>").unwrap()].trim().to_string()
        })
        .collect()
}

/// A test-only script that, on load, writes into the DOM how many images
/// decoded (natural width > 0) of how many, and how many resources the page
/// fetched from anywhere but the disk. The shipped page has no script.
const PROBE: &str = "<script>window.addEventListener('load', function () {
  var imgs = Array.prototype.slice.call(document.images);
  var ok = imgs.filter(function (i) { return i.complete && i.naturalWidth > 0; }).length;
  var remote = performance.getEntriesByType('resource').filter(function (r) {
    return r.name.indexOf('file:') !== 0 && r.name.indexOf('data:') !== 0; }).length;
  document.body.dataset.images = ok + '/' + imgs.length;
  document.body.dataset.remote = String(remote);
});</script>";

#[test]
fn chromium_shows_the_report_with_every_image_and_no_errors() {
    let Some(browser) = chromium() else {
        if std::env::var("CI").is_ok_and(|v| v == "true") {
            panic!("/usr/bin/chromium is missing under CI: install it (apt-get install -y chromium), as .ci/run does");
        }
        eprintln!(
            "skipped: /usr/bin/chromium is missing (apt-get install -y chromium to run this test)"
        );
        return;
    };
    let work = fresh(&target_dir().join("report-browser"));
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-layers");
    // two small demo layers, two camera samples: the page has every part
    // (table, heatmaps, cards with preview and plot) at little cost
    let scene = work.join("small.scene.json");
    fs::write(
        &scene,
        format!(
            r#"{{"viewport": [640, 360], "camera": {{"travel": 200, "samples": 2}},
                "layers": [
                  {{"name": "panel", "image": "{}", "cut": {{"budget": 24}}, "position": [40, 20], "parallax": 0.5}},
                  {{"name": "button", "image": "{}", "cut": {{"budget": 16}}, "position": [300, 200]}}]}}"#,
            demo.join("ui-panel.png").display(),
            demo.join("ui-button.png").display()
        ),
    )
    .unwrap();
    let (out, rep) = (work.join("out"), work.join("report"));
    let st = Command::new(BIN)
        .arg("scene")
        .arg(&scene)
        .arg("--out")
        .arg(&out)
        .arg("--report")
        .arg(&rep)
        .output()
        .unwrap();
    assert!(
        st.status.success(),
        "{}",
        String::from_utf8_lossy(&st.stderr)
    );
    let page = rep.join("index.html").canonicalize().unwrap();
    let html = fs::read_to_string(&page).unwrap();

    // no URL on the network in any src or href
    for attr in ["src=\"", "href=\""] {
        for part in html.split(attr).skip(1) {
            let v = &part[..part.find('"').unwrap()];
            assert!(
                !v.starts_with("http://") && !v.starts_with("https://") && !v.starts_with("//"),
                "{attr}{v}\" points to the network"
            );
        }
    }

    // (a) a screenshot, kept for a person to look at
    let artifacts = target_dir().join("test-artifacts");
    fs::create_dir_all(&artifacts).unwrap();
    let shot = artifacts.join("report.png");
    let _ = fs::remove_file(&shot);
    let o = browse(
        &browser,
        &work,
        "shot",
        &[
            format!("--screenshot={}", shot.display()),
            "--window-size=1280,2000".into(),
        ],
        &page,
    );
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(
        o.status.success(),
        "chromium --screenshot failed:\n{stderr}"
    );
    let png = image::open(&shot).expect("the screenshot is a PNG");
    assert_eq!((png.width(), png.height()), (1280, 2000));
    assert!(
        console_errors(&stderr).is_empty(),
        "{:?}",
        console_errors(&stderr)
    );

    // (b, c) a copy of the page with the probe script, its DOM after load
    let probed = fresh(&work.join("probed"));
    for e in fs::read_dir(&rep).unwrap() {
        let e = e.unwrap();
        fs::copy(e.path(), probed.join(e.file_name())).unwrap();
    }
    let probed_page = probed.join("index.html");
    assert!(html.contains("</body>"));
    fs::write(
        &probed_page,
        html.replacen("</body>", &format!("{PROBE}</body>"), 1),
    )
    .unwrap();
    let o = browse(
        &browser,
        &work,
        "dom",
        &["--dump-dom".into(), "--virtual-time-budget=5000".into()],
        &probed_page,
    );
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "chromium --dump-dom failed:\n{stderr}");
    assert!(
        console_errors(&stderr).is_empty(),
        "{:?}",
        console_errors(&stderr)
    );
    let dom = String::from_utf8_lossy(&o.stdout).into_owned();
    let attr = |name: &str| -> String {
        let key = format!("{name}=\"");
        let at = dom
            .find(&key)
            .unwrap_or_else(|| panic!("the probe did not run: no {name} in the DOM"));
        let v = &dom[at + key.len()..];
        v[..v.find('"').unwrap()].to_string()
    };
    let images = attr("data-images");
    let (ok, total) = images.split_once('/').unwrap();
    let total: usize = total.parse().unwrap();
    // two heatmaps, and a preview and a budget plot per layer
    assert!(total >= 6, "{images}");
    assert_eq!(ok, total.to_string(), "images decoded / shown: {images}");
    assert_eq!(
        attr("data-remote"),
        "0",
        "resources fetched from off the disk"
    );

    // the summary table shows the numbers of scene-report.json, as rounded
    // for the page (3 decimals for overdraw, whole lanes and vertices,
    // whole draws)
    let report: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("scene-report.json")).unwrap()).unwrap();
    let strategies = report["strategies"].as_array().unwrap();
    let rows: Vec<&str> = dom
        .split("<tr class=\"strategy\"")
        .skip(1)
        .map(|r| &r[..r.find("</tr>").unwrap()])
        .collect();
    assert_eq!(rows.len(), strategies.len());
    for (row, st) in rows.iter().zip(strategies) {
        let c = cells(row);
        assert_eq!(c.len(), 6, "{row}");
        assert_eq!(Some(c[0].as_str()), st["strategy"].as_str());
        let num = |s: &str| -> f64 { s.parse().unwrap_or_else(|_| panic!("{s:?} in {row}")) };
        let near = |shown: f64, v: &serde_json::Value, half_step: f64| {
            let v = v.as_f64().unwrap();
            assert!(
                (shown - v).abs() <= half_step + 1e-9,
                "{shown} shown for {v} in {row}"
            );
        };
        near(num(&c[1]), &st["mean_overdraw"], 0.0005);
        let (peak, sample) = c[2].split_once(" (").unwrap();
        near(num(peak), &st["peak_overdraw"], 0.0005);
        assert_eq!(
            sample.trim_end_matches(')').parse::<u64>().unwrap(),
            st["peak_sample"].as_u64().unwrap()
        );
        near(num(&c[3]), &st["per_frame"]["lanes"], 0.5);
        near(num(&c[4]), &st["per_frame"]["vertices"], 0.5);
        near(num(&c[5]), &st["per_frame"]["draws"], 0.5);
        assert!(!c[5].contains('.'), "draws are a count: {row}");
    }
}
