//! Presentation: what the commands print and write for people and tools.

// --- the commands' results and text tables (`--json` and the tables print
// the same values) ---
pub mod results;
pub mod tables;
// --- end of the results and tables block ---
