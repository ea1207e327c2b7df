//! Presentation: what underdraw shows people, apart from the numbers'
//! values themselves.
//!
//! * [`html`]: the scene report as a self-contained web page and its images.
//! * [`png`]: pictures as PNG bytes (heatmaps, previews, count dumps).
//! * [`glyphs`]: text in pictures, from the embedded font.
//! * [`results`]: each command's result as a value (what `--json` prints).
//! * [`tables`]: the text tables, printed from those same values.
pub mod glyphs;
pub mod html;
pub mod png;

// --- the commands' results and text tables (`--json` and the tables print
// the same values) ---
pub mod results;
pub mod tables;
// --- end of the results and tables block ---
