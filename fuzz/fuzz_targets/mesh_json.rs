//! Fuzz target `mesh_json`: the property is [`underdraw_fuzz::mesh_json`], shared with
//! `tests/fuzz_regressions.rs` so every committed input is also a test.
#![no_main]

libfuzzer_sys::fuzz_target!(|data: &[u8]| underdraw_fuzz::mesh_json(data));
