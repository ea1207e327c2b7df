//! Fuzz target `fit_mask`: the property is [`underdraw_fuzz::fit_mask`], shared with
//! `tests/fuzz_regressions.rs` so every committed input is also a test.
#![no_main]

libfuzzer_sys::fuzz_target!(|data: &[u8]| underdraw_fuzz::fit_mask(data));
