//! underdraw: cut 2D sprite layers into a guaranteed opaque mesh and a
//! blended mesh under a vertex budget.
pub mod alpha;
pub mod check;
pub mod cut;
pub mod error;
pub mod fit;
pub mod io;
pub mod mask;
pub mod mesh;
pub mod outline;
pub mod settings;
pub mod triangulate;
