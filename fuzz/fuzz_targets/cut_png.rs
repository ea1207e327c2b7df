//! Fuzz target `cut_png`: the property is [`underdraw_fuzz::cut_png`], shared with
//! `tests/fuzz_regressions.rs` so every committed input is also a test.
#![no_main]

libfuzzer_sys::fuzz_target!(|data: &[u8]| underdraw_fuzz::cut_png(data));
