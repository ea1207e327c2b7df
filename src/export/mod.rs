//! Handing the meshes to an engine: the layer mesh written in interchange
//! formats that engines import as they are.
//!
//! - [`gltf`]: a glTF 2.0 asset (`.gltf` + `.bin`, or one `.glb`), one mesh
//!   with an opaque and a blended primitive over one vertex array.
pub mod gltf;
