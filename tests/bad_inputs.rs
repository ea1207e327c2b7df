//! The bad-input corpus (`tests/corpus/`, described in its README.md) run
//! through the binary as a user would: each file's exit status (2 bad input,
//! 0 fine), and for bad input a stderr that names the file, states the
//! problem and gives a `hint:`. The valid images' alpha channels are checked
//! against what the PNG specification says they hold (computed in
//! `bad_inputs/generate.rs` from the samples written), and each is cut and
//! its mesh checked.
//!
//! The corpus is written by `cargo test --test bad_inputs -- --ignored
//! regenerate_corpus`; `committed_corpus_is_what_the_generator_writes` keeps
//! the committed bytes equal to it. Related cases already in other files
//! are not repeated here: a batch going on past bad files (tests/cli.rs),
//! scene-file errors with their line and column (tests/scene.rs).

#[path = "bad_inputs/generate.rs"]
mod generate;

use generate::{corpus, Entry};
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use underdraw::check::check_mesh;
use underdraw::cut::cut_layer;
use underdraw::io::{decode_layer, ImageLimits};
use underdraw::scene::file::{load_scene, MAX_SCENE_BYTES};
use underdraw::settings::CutSettings;

const BIN: &str = env!("CARGO_BIN_EXE_underdraw");

fn corpus_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/corpus")
}

mod common;
use common::TempDir;

fn run(args: &[&Path]) -> Output {
    Command::new(BIN)
        .args(args)
        .output()
        .expect("run the underdraw binary")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// How a corpus file is given to the binary.
#[derive(Clone, Copy, Debug)]
enum Via {
    /// `underdraw cut FILE --out DIR`
    Cut,
    /// `underdraw scene FILE --out DIR`
    Scene,
    /// `underdraw check FILE IMAGE`
    Check(&'static str),
}

/// Every corpus file, how it is run, the exit status, and the key phrase of
/// its error (empty for exit 0). The README's table must say the same.
const CASES: &[(&str, Via, i32, &str)] = &[
    ("empty.png", Via::Cut, 2, "is empty"),
    ("noise.png", Via::Cut, 2, "is not a PNG"),
    ("jpeg.png", Via::Cut, 2, "is a JPEG image, not a PNG"),
    (
        "truncated.png",
        Via::Cut,
        2,
        "is a damaged PNG: it is cut short",
    ),
    (
        "bad-crc.png",
        Via::Cut,
        2,
        "its IDAT chunk at byte 33 fails its CRC check",
    ),
    ("huge-header.png", Via::Cut, 2, "refused before decoding"),
    ("zero-width.png", Via::Cut, 2, "has no texels"),
    ("one-by-one.png", Via::Cut, 0, ""),
    (
        "tall-1x65536.png",
        Via::Cut,
        2,
        "over the limit of 16384 texels per side",
    ),
    ("rgba16.png", Via::Cut, 0, ""),
    ("gray.png", Via::Cut, 0, ""),
    ("gray-alpha.png", Via::Cut, 0, ""),
    ("palette-trns.png", Via::Cut, 0, ""),
    ("palette.png", Via::Cut, 0, ""),
    ("interlaced.png", Via::Cut, 0, ""),
    ("animated.png", Via::Cut, 0, ""),
    ("rgb.png", Via::Cut, 0, ""),
    ("ok.scene.json", Via::Scene, 0, ""),
    (
        "syntax-error.scene.json",
        Via::Scene,
        2,
        "is not valid JSON",
    ),
    (
        "unknown-key.scene.json",
        Via::Scene,
        2,
        "has a key the scene format does not know",
    ),
    ("missing-image.scene.json", Via::Scene, 2, "does not exist"),
    (
        "negative-scale.scene.json",
        Via::Scene,
        2,
        "is not a positive number",
    ),
    // the key renamed in issue 23: the message names the new key
    (
        "old-fill-key.scene.json",
        Via::Scene,
        2,
        "the key \"repeat_x\" is now called \"fill_width\"",
    ),
    (
        "zero-samples.scene.json",
        Via::Scene,
        2,
        "needs at least one camera position",
    ),
    (
        "duplicate-layer.scene.json",
        Via::Scene,
        2,
        "the name is used by an earlier layer",
    ),
    (
        "too-many-layers.scene.json",
        Via::Scene,
        2,
        "layers, over the limit of 256",
    ),
    (
        "too-many-samples.scene.json",
        Via::Scene,
        2,
        "over the limit of 1024",
    ),
    ("rgb-rectangle.mesh.json", Via::Check("rgb.png"), 0, ""),
    (
        "index-out-of-range.mesh.json",
        Via::Check("rgb.png"),
        2,
        "uses vertex 7 but there are only 4 vertices",
    ),
    (
        "wrong-size.mesh.json",
        Via::Check("rgb.png"),
        2,
        "the mesh is for a 64x48 image but the image is 12x10",
    ),
    (
        "old-stats-key.mesh.json",
        Via::Check("rgb.png"),
        2,
        "renamed stats.interior_edge_length_unflipped",
    ),
    ("rgba8-mips.ktx2", Via::Cut, 0, ""),
    (
        "truncated.ktx2",
        Via::Cut,
        2,
        "fewer than the 80 of a KTX 2.0 header",
    ),
    (
        "level-past-end.ktx2",
        Via::Cut,
        2,
        "level 0's data at bytes 996 to 1476, past the end of the file (896 bytes)",
    ),
    ("basislz.ktx2", Via::Cut, 2, "BasisLZ supercompressed"),
    ("uastc.ktx2", Via::Cut, 2, "holds UASTC texels"),
    (
        "bc1.ktx2",
        Via::Cut,
        2,
        "its format (VkFormat 131) is not one underdraw reads",
    ),
    ("block-7x7.astc", Via::Cut, 2, "its ASTC block size is 7x7"),
    ("astc-4x4.ktx2", Via::Cut, 0, ""),
];

#[test]
#[ignore = "writes tests/corpus/; run it after changing the generator"]
fn regenerate_corpus() {
    let dir = corpus_dir();
    fs::create_dir_all(&dir).unwrap();
    for Entry { name, bytes, .. } in corpus() {
        underdraw::io::write_atomic(&dir.join(name), &bytes).unwrap();
    }
}

#[test]
fn committed_corpus_is_what_the_generator_writes() {
    let dir = corpus_dir();
    let entries = corpus();
    for e in &entries {
        let committed = fs::read(dir.join(e.name))
            .unwrap_or_else(|err| panic!("tests/corpus/{}: {err}; run regenerate_corpus", e.name));
        assert!(
            committed == e.bytes,
            "tests/corpus/{} differs from its generator; run regenerate_corpus",
            e.name
        );
    }
    let mut on_disk: Vec<String> = fs::read_dir(&dir)
        .unwrap()
        .map(|d| d.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n != "README.md")
        .collect();
    on_disk.sort();
    let mut made: Vec<String> = entries.iter().map(|e| e.name.to_string()).collect();
    made.sort();
    assert_eq!(on_disk, made, "files in tests/corpus/ besides README.md");
    let cased: Vec<&str> = CASES.iter().map(|c| c.0).collect();
    let named: Vec<&str> = entries.iter().map(|e| e.name).collect();
    assert_eq!(
        cased, named,
        "CASES lists the corpus in the generator's order"
    );
}

#[test]
fn readme_table_matches_the_cases() {
    let readme = fs::read_to_string(corpus_dir().join("README.md")).unwrap();
    for &(name, _, code, phrase) in CASES {
        let row = readme
            .lines()
            .find(|l| l.starts_with(&format!("| `{name}` |")))
            .unwrap_or_else(|| panic!("README.md has no row for {name}"));
        let cells: Vec<&str> = row.split('|').map(str::trim).collect();
        // | file | what | exit | message |
        assert_eq!(
            cells[3],
            code.to_string(),
            "exit status of {name} in README.md"
        );
        let message = if phrase.is_empty() {
            "-".to_string()
        } else {
            format!("`{phrase}`")
        };
        assert_eq!(cells[4], message, "key phrase of {name} in README.md");
    }
}

#[test]
fn every_corpus_file_gets_its_exit_status_and_message() {
    let dir = corpus_dir();
    let tmp = TempDir::new("cases");
    let mut failures = Vec::new();
    for (k, &(name, via, code, phrase)) in CASES.iter().enumerate() {
        let file = dir.join(name);
        let out = tmp.0.join(format!("out-{k}"));
        let r = match via {
            Via::Cut => run(&[Path::new("cut"), &file, Path::new("--out"), &out]),
            Via::Scene => run(&[Path::new("scene"), &file, Path::new("--out"), &out]),
            Via::Check(image) => run(&[Path::new("check"), &file, &dir.join(image)]),
        };
        let stderr = text(&r.stderr);
        let ok = if code == 0 {
            r.status.code() == Some(0)
        } else {
            // the file, the problem and the hint on one error
            r.status.code() == Some(code)
                && stderr
                    .lines()
                    .any(|l| l.contains(name) && l.contains(phrase))
                && stderr.contains("hint:")
                && !stderr.contains("panicked")
        };
        if !ok {
            failures.push(format!(
                "{name}: expected exit {code} and {phrase:?}, got {:?}\nstderr:\n{stderr}",
                r.status.code()
            ));
        }
        // a layer cut fine is cut by the book and holds under `check`
        if code == 0 && matches!(via, Via::Cut) {
            let stem = Path::new(name).file_stem().unwrap().to_str().unwrap();
            let mesh = out.join(format!("{stem}.mesh.json"));
            let c = run(&[Path::new("check"), &mesh, &file]);
            if c.status.code() != Some(0) || text(&r.stdout).contains("left out") {
                failures.push(format!(
                    "{name}: cut then check: {:?}\n{}{}",
                    c.status.code(),
                    text(&r.stdout),
                    text(&c.stdout)
                ));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n\n"));
}

#[test]
fn valid_images_decode_to_the_alpha_the_png_standard_gives() {
    // raised side limit for the 1 x 65536 strip, refused by default
    let limits = ImageLimits {
        max_side: 65536,
        ..ImageLimits::default()
    };
    let mut checked = 0;
    for e in corpus() {
        let Some(want) = &e.alpha else { continue };
        let path = corpus_dir().join(e.name);
        let layer = decode_layer(&path, &e.bytes, &limits)
            .unwrap_or_else(|err| panic!("{}: {err}", e.name));
        let map = &layer.alpha;
        assert_eq!(
            (map.width, map.height),
            (want.width, want.height),
            "{}",
            e.name
        );
        if let Some(i) = (0..want.alpha.len()).find(|&i| map.alpha[i] != want.alpha[i]) {
            panic!(
                "{}: texel ({}, {}) has alpha {}, the standard gives {}",
                e.name,
                i as u32 % want.width,
                i as u32 / want.width,
                map.alpha[i],
                want.alpha[i]
            );
        }
        checked += 1;
    }
    assert_eq!(checked, 10, "valid images in the corpus");
}

#[test]
fn the_tall_strip_cuts_within_raised_limits() {
    let path = corpus_dir().join("tall-1x65536.png");
    let bytes = fs::read(&path).unwrap();
    let limits = ImageLimits {
        max_side: 65536,
        ..ImageLimits::default()
    };
    let map = decode_layer(&path, &bytes, &limits).unwrap().alpha;
    let out = cut_layer(&map, "tall-1x65536.png", &CutSettings::default());
    assert!(
        out.notes.iter().all(|n| !n.contains("left out")),
        "{:?}",
        out.notes
    );
    assert!(check_mesh(&out.mesh, &map).unwrap().holds());
}

#[test]
fn an_animated_png_yields_its_first_frame_with_a_warning() {
    let path = corpus_dir().join("animated.png");
    let bytes = fs::read(&path).unwrap();
    let layer = decode_layer(&path, &bytes, &ImageLimits::default()).unwrap();
    assert_eq!(
        layer.warnings,
        vec![format!(
            "{} is an animated PNG (3 frames): only its first frame is cut",
            path.display()
        )]
    );
    // a still PNG has no warning
    let still = corpus_dir().join("gray-alpha.png");
    let layer = decode_layer(&still, &fs::read(&still).unwrap(), &ImageLimits::default()).unwrap();
    assert!(layer.warnings.is_empty(), "{:?}", layer.warnings);
}

#[test]
fn the_pixel_limit_is_checked_from_the_header() {
    // 12 x 10 = 120 texels: at the limit it decodes, one below it is refused
    let path = corpus_dir().join("rgb.png");
    let bytes = fs::read(&path).unwrap();
    let at = ImageLimits {
        max_pixels: 120,
        ..ImageLimits::default()
    };
    assert!(decode_layer(&path, &bytes, &at).is_ok());
    let below = ImageLimits {
        max_pixels: 119,
        ..ImageLimits::default()
    };
    let e = decode_layer(&path, &bytes, &below).unwrap_err();
    assert!(
        e.problem.contains("over the limit of 119 texels in all"),
        "{e}"
    );
    // the library names the setting; the command line spells it as its
    // flag (tests/names.rs checks `--max-texels` in the command's message)
    assert!(e.hint.contains("`max_texels`"), "{e}");
    assert!(!e.hint.contains("--"), "{e}");
    // 100000 x 100000 RGBA8 would take 40 GB decoded; it is refused from
    // the header (this process would otherwise fail to allocate it)
    let huge = corpus_dir().join("huge-header.png");
    let e = decode_layer(&huge, &fs::read(&huge).unwrap(), &ImageLimits::default()).unwrap_err();
    assert!(e.problem.contains("100000 x 100000"), "{e}");
}

#[test]
fn a_scene_file_over_the_size_limit_is_refused_and_one_at_it_loads() {
    let tmp = TempDir::new("size");
    let ok = fs::read_to_string(corpus_dir().join("ok.scene.json")).unwrap();
    for image in ["rgb.png", "gray-alpha.png"] {
        fs::copy(corpus_dir().join(image), tmp.0.join(image)).unwrap();
    }
    // JSON allows any whitespace after the value (RFC 8259)
    let padded = |n: usize| format!("{ok}{}", " ".repeat(n - ok.len()));
    let at = tmp.0.join("at-limit.scene.json");
    fs::write(&at, padded(MAX_SCENE_BYTES)).unwrap();
    assert!(
        load_scene(&at).is_ok(),
        "a scene of exactly the limit loads"
    );
    let over = tmp.0.join("oversized.scene.json");
    fs::write(&over, padded(MAX_SCENE_BYTES + 1)).unwrap();
    let r = run(&[
        Path::new("scene"),
        &over,
        Path::new("--out"),
        &tmp.0.join("out"),
    ]);
    assert_eq!(r.status.code(), Some(2));
    let stderr = text(&r.stderr);
    assert!(
        stderr.contains("oversized.scene.json: is larger than 1 MiB") && stderr.contains("hint:"),
        "{stderr}"
    );
}

/// Mip levels beyond those a texture holds, a texture of another size than
/// its layer, and --texture with several layers: exit 2, the file named,
/// a hint.
#[test]
fn texture_levels_and_sizes_that_do_not_fit_are_refused() {
    let dir = corpus_dir();
    let tmp = TempDir::new("texture_fit");
    let out = tmp.0.join("out");
    let ktx = dir.join("rgba8-mips.ktx2");
    let p = |s: &str| PathBuf::from(s);
    let cases: [(Vec<PathBuf>, &str, &str); 3] = [
        (
            vec![
                p("cut"),
                ktx.clone(),
                p("--mip-levels"),
                p("4"),
                p("--out"),
                out.clone(),
            ],
            "rgba8-mips.ktx2",
            "holds 4 mip level(s) (0 to 3), but the guarantee was asked for levels 0 to 4",
        ),
        (
            vec![
                p("cut"),
                dir.join("one-by-one.png"),
                p("--texture"),
                ktx.clone(),
                p("--out"),
                out.clone(),
            ],
            "rgba8-mips.ktx2",
            "the texture is 12 x 10 texels but the layer is 1 x 1",
        ),
        (
            vec![
                p("cut"),
                dir.join("rgb.png"),
                dir.join("gray.png"),
                p("--texture"),
                ktx.clone(),
                p("--out"),
                out.clone(),
            ],
            "rgba8-mips.ktx2",
            "is one texture, but 2 layers were given",
        ),
    ];
    for (args, name, phrase) in cases {
        let refs: Vec<&Path> = args.iter().map(|a| a.as_path()).collect();
        let r = run(&refs);
        let stderr = text(&r.stderr);
        assert_eq!(r.status.code(), Some(2), "{stderr}");
        assert!(
            stderr
                .lines()
                .any(|l| l.contains(name) && l.contains(phrase))
                && stderr.contains("hint:"),
            "{stderr}"
        );
    }
}
