//! Presentation: what underdraw shows people, apart from the numbers'
//! values themselves.
//!
//! * [`html`]: the scene report as a self-contained web page and its images.
//! * [`png`]: pictures as PNG bytes (heatmaps, previews, count dumps).
//! * [`glyphs`]: text in pictures, from the embedded font.
pub mod glyphs;
pub mod html;
pub mod png;
