//! The whole process on one big layer: `underdraw cut layer.png --out DIR
//! --force -q` run as a user runs it (process start, read, decode, alpha
//! analysis, cut, self-check, writing, all threads it uses), timed against
//! a plain PNG decode of the same file in this process, at 1024² and
//! 4096², so the per-megapixel cost of the big layer can be compared with
//! the small one's.
//!
//! Invariants: the layer is the `clouds` kind (wide soft gradients, many
//! partly transparent texels) written once before any timed run; every cut
//! run is forced (`--force`), so it decodes and cuts; the decode is
//! `image::load_from_memory` on the file's bytes, the same decoder the tool
//! uses; times are medians of the runs.

use super::layers::{encode_png, generate, Kind};
use super::{median_ms, Timed};
use std::path::Path;
use std::process::Command;

/// One layer size's numbers.
pub struct ProcessResult {
    /// Side of the square layer, texels.
    pub side: u32,
    /// The plain PNG decode, in this process.
    pub decode: Timed,
    /// `underdraw cut` as a process, one thread a core (the default).
    pub cut_all: Timed,
    /// The same with `--jobs 1` (one thread).
    pub cut_one: Timed,
}

impl ProcessResult {
    /// Whole-process cut / decode.
    pub fn ratio(&self) -> f64 {
        self.cut_all.ms / self.decode.ms
    }
    /// Milliseconds of the whole-process cut per megapixel.
    pub fn ms_per_mp(&self) -> f64 {
        self.cut_all.ms / (self.side as f64 * self.side as f64 / 1048576.0)
    }
}

/// Writes a `clouds` layer of `side`² into `dir` and times the decode and
/// the whole-process cut, `runs` times each.
pub fn run(dir: &Path, side: u32, runs: usize) -> ProcessResult {
    std::fs::create_dir_all(dir).expect("the process folder is created");
    let png = encode_png(&generate(Kind::Clouds, side, side, 7));
    let input = dir.join(format!("clouds-{side}.png"));
    std::fs::write(&input, &png).expect("the layer is written");
    let bytes = std::fs::read(&input).expect("the layer is read back");
    let decode = median_ms(runs, || {
        let img = image::load_from_memory(&bytes).expect("the layer decodes");
        std::hint::black_box(img);
    });
    let out = dir.join(format!("out-{side}"));
    let cut = |jobs: Option<&str>| {
        median_ms(runs, || {
            let mut c = Command::new(env!("CARGO_BIN_EXE_underdraw"));
            c.arg("cut").arg(&input).arg("--out").arg(&out);
            c.args(["--force", "-q"]);
            if let Some(j) = jobs {
                c.args(["-j", j]);
            }
            let status = c.status().expect("the underdraw binary runs");
            assert!(
                status.success(),
                "underdraw cut failed on {}",
                input.display()
            );
        })
    };
    let cut_all = cut(None);
    let cut_one = cut(Some("1"));
    ProcessResult {
        side,
        decode,
        cut_all,
        cut_one,
    }
}

/// Prints the table and the two ratios of the process benchmark.
pub fn print(results: &[ProcessResult]) {
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    println!(
        "\nwhole process, clouds (soft edges): `underdraw cut L.png --out D --force -q`, decode included, against a plain PNG decode in this process ({cores} cores)"
    );
    println!(
        "{:<12} {:>11} {:>14} {:>10} {:>14} {:>12}",
        "layer", "PNG decode", "cut, all cores", "/ decode", "cut, 1 thread", "ms per MP"
    );
    for r in results {
        println!(
            "{:<12} {:>8.1} ms {:>11.1} ms {:>9.2}x {:>11.1} ms {:>12.1}",
            format!("{}²", r.side),
            r.decode.ms,
            r.cut_all.ms,
            r.ratio(),
            r.cut_one.ms,
            r.ms_per_mp()
        );
    }
}

/// The two targets of the whole process: the 4096² cut within 1.5x its
/// decode, and its time per megapixel within 1.5x of the 1024² one's.
pub fn targets(results: &[ProcessResult]) -> Vec<super::report::Target> {
    use super::report::target;
    let find = |side| results.iter().find(|r| r.side == side);
    vec![
        target(
            "whole-process cut of the 4096 x 4096 clouds layer (all cores) / its plain PNG decode"
                .into(),
            find(4096).map(ProcessResult::ratio),
            1.5,
            false,
            "x",
        ),
        target(
            "whole-process cut time per MP, clouds: 4096² / 1024²".into(),
            find(4096)
                .zip(find(1024))
                .map(|(b, s)| b.ms_per_mp() / s.ms_per_mp()),
            1.5,
            false,
            "x",
        ),
    ]
}
