//! A layer mesh as a glTF 2.0 asset (the glTF 2.0 specification, from
//! memory; sections named below), written as `.gltf` (JSON) + `.bin`, or as
//! one binary `.glb`.
//!
//! What the asset holds:
//!
//! - one scene with one node (named after the layer) and one mesh with up to
//!   two primitives (triangle lists): the opaque mesh with a material whose
//!   `alphaMode` is `"OPAQUE"` (draw with blending off) and the blended mesh
//!   with `"BLEND"` (blending on). Both read one `POSITION` accessor (VEC3
//!   float, with the `min`/`max` the specification requires of it) and one
//!   `TEXCOORD_0` accessor (VEC2 float): the vertices they share are stored
//!   once, as in the mesh file;
//! - indices as unsigned shorts (componentType 5123), or unsigned ints (5125)
//!   past 65,535 vertices (an index may not be the type's largest value,
//!   which is reserved for primitive restart);
//! - the layer's PNG as the base colour texture, by relative URI, with a
//!   sampler for the filter and wrap the mesh was cut for; the materials
//!   also carry `KHR_materials_unlit` (listed in `extensionsUsed`, not
//!   required), as sprites are drawn without lighting.
//!
//! **Coordinates.** Positions are in texels (one glTF unit, nominally a
//! metre, per texel: scale the node to taste). glTF is y up (Coordinate
//! System and Units), so a mesh-file vertex (x, y), y down, becomes
//! (x, -y, 0): the layer's top-left corner at the origin, the layer in the
//! z = 0 plane below the x axis, facing +z. The mirror turns the mesh file's
//! clockwise triangles (as seen on screen, y down) clockwise as seen from
//! +z, and glTF takes counter-clockwise as the front face (Meshes, Materials:
//! doubleSided), so each triangle (a, b, c) of a clockwise mesh file is
//! written (a, c, b); a mesh file already counter-clockwise is written as it
//! is. Texture coordinates are the mesh file's unchanged: glTF's (0, 0) is
//! the top-left of the image, as in the mesh file (Images).
//!
//! **What glTF cannot say.** glTF has no draw order between primitives and
//! no depth ranges: draw the opaque primitives front to back with depth
//! write on, then the blended ones back to front (most engines sort OPAQUE
//! before BLEND on their own). Nor has a sampler a highest mip level: cap it
//! at the mesh's `mip_levels` (GL_TEXTURE_MAX_LEVEL or the engine's
//! equivalent), which the mesh's `extras.underdraw` records with the rest of
//! the cut settings.
//!
//! **16-bit vertices** ([`build_with`], [`VertexFormat::U16`]): glTF's
//! `KHR_mesh_quantization` extension, required by the asset: `POSITION`
//! VEC3 UNSIGNED_SHORT in half-texel units (x, y, 0), the node scaled by
//! (0.5, -0.5, 1) so that it lands on the f32 asset's (x, -y, 0) exactly
//! (the mirror's negative determinant keeps the same front faces), and
//! `TEXCOORD_0` VEC2 normalized UNSIGNED_SHORT. Layers up to
//! [`MAX_U16_SIDE`] texels a side.
//!
//! **Empty meshes.** A primitive must have at least one index (Accessors:
//! count >= 1), so a mesh with no triangles of one kind has no primitive of
//! that kind, and a fully transparent layer has a node without a mesh and no
//! buffer at all (a buffer must have byteLength >= 1): no `.bin` is written
//! for it, and its `.glb` has no BIN chunk.

use crate::error::{FileError, Setting};
use crate::io::{NamedBytes, OutputFolder};
use crate::mesh::{LayerMesh, VertexFormat, Winding};
use crate::settings::FilterMode;
use serde_json::{json, Value};
use std::path::{Component, Path, PathBuf};

/// WebGL / OpenGL ES enums used by glTF (Samplers, Buffers and Buffer Views).
pub mod gl {
    /// Sampler filter `NEAREST` (9728): the nearest texel of the base level.
    pub const NEAREST: u32 = 9728;
    /// Sampler filter `LINEAR` (9729): bilinear in the base level.
    pub const LINEAR: u32 = 9729;
    /// Minification filter `NEAREST_MIPMAP_NEAREST` (9984): the nearest texel of
    /// the nearest mip level.
    pub const NEAREST_MIPMAP_NEAREST: u32 = 9984;
    /// Minification filter `LINEAR_MIPMAP_LINEAR` (9987): bilinear in the two
    /// nearest mip levels, blended (trilinear).
    pub const LINEAR_MIPMAP_LINEAR: u32 = 9987;
    /// Wrap mode `REPEAT` (10497): the texture tiles on that axis.
    pub const REPEAT: u32 = 10497;
    /// Wrap mode `CLAMP_TO_EDGE` (33071): samples past the edge take the edge texel.
    pub const CLAMP_TO_EDGE: u32 = 33071;
    /// Buffer view target `ARRAY_BUFFER` (34962): vertex attributes.
    pub const ARRAY_BUFFER: u32 = 34962;
    /// Buffer view target `ELEMENT_ARRAY_BUFFER` (34963): indices.
    pub const ELEMENT_ARRAY_BUFFER: u32 = 34963;
    /// Accessor component type `FLOAT` (5126): 32-bit IEEE float.
    pub const FLOAT: u32 = 5126;
    /// Accessor component type `UNSIGNED_SHORT` (5123): 16-bit unsigned integer.
    pub const UNSIGNED_SHORT: u32 = 5123;
    /// Accessor component type `UNSIGNED_INT` (5125): 32-bit unsigned integer.
    pub const UNSIGNED_INT: u32 = 5125;
}

/// Most vertices whose indices fit an unsigned short: 65,535 is reserved
/// for primitive restart, so the largest index is 65,534.
pub const MAX_U16_VERTICES: usize = 65_535;

/// A built asset: the glTF JSON and its binary buffer (empty when the layer
/// has no triangles). In the JSON, buffer 0 has no `uri` yet: [`gltf_files`]
/// names the `.bin`, [`glb_file`] leaves it out (the GLB-stored buffer).
#[derive(Clone, Debug)]
pub struct Asset {
    /// The glTF JSON document (the `.gltf` file, or the GLB's JSON chunk).
    pub json: Value,
    /// The binary buffer, little-endian: the positions, the texture
    /// coordinates, then each primitive's indices, every buffer view starting
    /// on a 4-byte boundary; empty when the layer has no triangles.
    pub bin: Vec<u8>,
}

/// The file names written for `stem`: `[<stem>.gltf, <stem>.bin]`.
pub fn gltf_paths(dir: &Path, stem: &str) -> [PathBuf; 2] {
    [
        dir.join(format!("{stem}.gltf")),
        dir.join(format!("{stem}.bin")),
    ]
}

/// The file written for `stem` as GLB: `<stem>.glb`.
pub fn glb_path(dir: &Path, stem: &str) -> PathBuf {
    dir.join(format!("{stem}.glb"))
}

/// Builds the asset of `mesh`. `image_uri` is the layer's PNG as a relative
/// URI reference from the folder of the `.gltf` (see [`relative_uri`]);
/// `name` names the node and mesh.
///
/// ```
/// use underdraw::{alpha::AlphaMap, cut::cut_layer, export::gltf::build, settings::CutSettings};
/// // an 8 x 8 layer: an opaque 6 x 6 square with a soft one-texel rim
/// let alpha = (0..64)
///     .map(|i| if (1..7).contains(&(i % 8)) && (1..7).contains(&(i / 8)) { 255 } else { 100 })
///     .collect();
/// let map = AlphaMap::from_raw(8, 8, alpha);
/// let mesh = cut_layer(&map, "square.png", &CutSettings { budget: 8, ..Default::default() }).mesh;
/// let asset = build(&mesh, "square.png", "square");
/// let j = &asset.json;
/// assert_eq!(j["asset"]["version"], "2.0");
/// // one primitive drawn opaque, one blended (glTF 2.0, Materials: alphaMode)
/// let modes: Vec<&str> = j["materials"].as_array().unwrap().iter()
///     .map(|m| m["alphaMode"].as_str().unwrap()).collect();
/// assert_eq!(modes, ["OPAQUE", "BLEND"]);
/// // every texel is visible, so the meshes span the whole layer; glTF is y up
/// // (Coordinate System and Units), so the layer lies from y = 0 down to -8
/// assert_eq!(j["accessors"][0]["min"][1], -8.0);
/// assert_eq!(j["accessors"][0]["max"][1], 0.0);
/// ```
pub fn build(mesh: &LayerMesh, image_uri: &str, name: &str) -> Asset {
    build_with(mesh, image_uri, name, VertexFormat::F32)
}

/// Largest layer side, in texels, whose positions fit unsigned 16-bit
/// half-texel units (2 x 32767 = 65534).
pub const MAX_U16_SIDE: u32 = 32767;

/// Why `mesh` cannot be written with `format`, if it cannot: a layer side
/// over [`MAX_U16_SIDE`] texels for [`VertexFormat::U16`].
pub fn format_refusal(mesh: &LayerMesh, format: VertexFormat) -> Option<String> {
    (format == VertexFormat::U16 && (mesh.size[0] > MAX_U16_SIDE || mesh.size[1] > MAX_U16_SIDE))
        .then(|| {
            format!(
                "the layer is {} x {} texels; 16-bit vertices hold positions in half texels up to {MAX_U16_SIDE} texels a side",
                mesh.size[0], mesh.size[1]
            )
        })
}

/// [`build`] with the vertices in `format`. With [`VertexFormat::U16`] the
/// asset uses `KHR_mesh_quantization` (listed in `extensionsUsed` and
/// `extensionsRequired`): `POSITION` is VEC3 UNSIGNED_SHORT in half-texel
/// units (x, y, 0) (each vertex padded to 8 bytes, as vertex attributes
/// must be 4-byte aligned: Buffers and Buffer Views, data alignment), and
/// the node's scale (0.5, -0.5, 1) turns them into the f32 asset's
/// positions (x, -y, 0) exactly; `TEXCOORD_0` is VEC2 normalized
/// UNSIGNED_SHORT (round(u * 65535)). The caller has checked
/// [`format_refusal`]; larger positions are clamped.
pub fn build_with(mesh: &LayerMesh, image_uri: &str, name: &str, format: VertexFormat) -> Asset {
    let quantized = format == VertexFormat::U16;
    let n = mesh.vertex_count();
    let mut bin = Vec::new();
    let mut views = Vec::new();
    let mut accessors = Vec::new();

    let reverse = mesh.winding == Winding::Cw;
    let kinds = [
        ("opaque", "OPAQUE", &mesh.opaque),
        ("blended", "BLEND", &mesh.blended),
    ];
    let used: Vec<_> = kinds
        .iter()
        .filter(|(_, _, list)| list.triangle_count() > 0)
        .collect();

    let mut json = json!({
        "asset": {
            "version": "2.0",
            "generator": concat!("underdraw ", env!("CARGO_PKG_VERSION")),
        },
        "scene": 0,
        "scenes": [{"nodes": [0]}],
    });
    let mut node = json!({"name": name});

    if !used.is_empty() && n > 0 {
        if quantized {
            // POSITION: (2x, 2y, 0) half texels, 6 bytes padded to 8
            let half = |v: f32| (2.0 * v).round().clamp(0.0, 65535.0) as u16;
            let (mut min, mut max) = ([u16::MAX; 3], [0u16; 3]);
            let start = bin.len();
            for i in 0..n {
                let [x, y] = mesh.position(i as u32);
                let p = [half(x), half(y), 0];
                for k in 0..3 {
                    min[k] = min[k].min(p[k]);
                    max[k] = max[k].max(p[k]);
                    bin.extend_from_slice(&p[k].to_le_bytes());
                }
                bin.extend_from_slice(&[0, 0]);
            }
            let mut v = view(start, bin.len() - start, gl::ARRAY_BUFFER);
            v["byteStride"] = json!(8);
            views.push(v);
            accessors.push(json!({
                "bufferView": views.len() - 1,
                "componentType": gl::UNSIGNED_SHORT,
                "count": n,
                "type": "VEC3",
                "min": min,
                "max": max,
            }));
            // TEXCOORD_0: normalized, 4 bytes a vertex
            let start = bin.len();
            let unit = |v: f32| (v as f64 * 65535.0).round().clamp(0.0, 65535.0) as u16;
            for i in 0..n {
                bin.extend_from_slice(&unit(mesh.uvs[2 * i]).to_le_bytes());
                bin.extend_from_slice(&unit(mesh.uvs[2 * i + 1]).to_le_bytes());
            }
            views.push(view(start, bin.len() - start, gl::ARRAY_BUFFER));
            accessors.push(json!({
                "bufferView": views.len() - 1,
                "componentType": gl::UNSIGNED_SHORT,
                "normalized": true,
                "count": n,
                "type": "VEC2",
            }));
            node["scale"] = json!([0.5, -0.5, 1.0]);
        } else {
            // POSITION: (x, -y, 0); 0.0 - y keeps +0 for y = 0.
            let (mut min, mut max) = ([f32::INFINITY; 3], [f32::NEG_INFINITY; 3]);
            let start = bin.len();
            for i in 0..n {
                let [x, y] = mesh.position(i as u32);
                let p = [x, 0.0 - y, 0.0];
                for k in 0..3 {
                    min[k] = min[k].min(p[k]);
                    max[k] = max[k].max(p[k]);
                    bin.extend_from_slice(&p[k].to_le_bytes());
                }
            }
            views.push(view(start, bin.len() - start, gl::ARRAY_BUFFER));
            accessors.push(json!({
                "bufferView": views.len() - 1,
                "componentType": gl::FLOAT,
                "count": n,
                "type": "VEC3",
                "min": min,
                "max": max,
            }));
            // TEXCOORD_0, already 4-aligned (12 bytes a vertex before it).
            let start = bin.len();
            for i in 0..n {
                bin.extend_from_slice(&mesh.uvs[2 * i].to_le_bytes());
                bin.extend_from_slice(&mesh.uvs[2 * i + 1].to_le_bytes());
            }
            views.push(view(start, bin.len() - start, gl::ARRAY_BUFFER));
            accessors.push(json!({
                "bufferView": views.len() - 1,
                "componentType": gl::FLOAT,
                "count": n,
                "type": "VEC2",
            }));
        }
        let wide = n > MAX_U16_VERTICES;
        let mut primitives = Vec::new();
        let mut materials = Vec::new();
        for (kind, mode, list) in &used {
            let start = bin.len();
            for t in list.indices.chunks_exact(3) {
                let tri = if reverse {
                    [t[0], t[2], t[1]]
                } else {
                    [t[0], t[1], t[2]]
                };
                for i in tri {
                    if wide {
                        bin.extend_from_slice(&i.to_le_bytes());
                    } else {
                        bin.extend_from_slice(&(i as u16).to_le_bytes());
                    }
                }
            }
            views.push(view(start, bin.len() - start, gl::ELEMENT_ARRAY_BUFFER));
            // every bufferView starts on a 4-byte boundary
            while bin.len() % 4 != 0 {
                bin.push(0);
            }
            accessors.push(json!({
                "bufferView": views.len() - 1,
                "componentType": if wide { gl::UNSIGNED_INT } else { gl::UNSIGNED_SHORT },
                "count": list.triangle_count() * 3,
                "type": "SCALAR",
            }));
            primitives.push(json!({
                "attributes": {"POSITION": 0, "TEXCOORD_0": 1},
                "indices": accessors.len() - 1,
                "material": materials.len(),
                "mode": 4,
            }));
            materials.push(json!({
                "name": kind,
                "alphaMode": mode,
                "pbrMetallicRoughness": {
                    "baseColorTexture": {"index": 0},
                    "metallicFactor": 0.0,
                    "roughnessFactor": 1.0,
                },
                "extensions": {"KHR_materials_unlit": {}},
            }));
        }
        let (mag, min_filter) = sampler_filters(mesh);
        let wrap = |repeat: bool| {
            if repeat {
                gl::REPEAT
            } else {
                gl::CLAMP_TO_EDGE
            }
        };
        let o = json.as_object_mut().expect("an object");
        if quantized {
            o.insert(
                "extensionsUsed".into(),
                json!(["KHR_materials_unlit", "KHR_mesh_quantization"]),
            );
            o.insert(
                "extensionsRequired".into(),
                json!(["KHR_mesh_quantization"]),
            );
        } else {
            o.insert("extensionsUsed".into(), json!(["KHR_materials_unlit"]));
        }
        o.insert(
            "meshes".into(),
            json!([{
                "name": name,
                "primitives": primitives,
                "extras": {"underdraw": cut_extras(mesh, reverse)},
            }]),
        );
        o.insert("materials".into(), Value::Array(materials));
        o.insert("textures".into(), json!([{"sampler": 0, "source": 0}]));
        o.insert("images".into(), json!([{"uri": image_uri}]));
        o.insert(
            "samplers".into(),
            json!([{
                "magFilter": mag,
                "minFilter": min_filter,
                "wrapS": wrap(mesh.wrap.x()),
                "wrapT": wrap(mesh.wrap.y()),
            }]),
        );
        o.insert("accessors".into(), Value::Array(accessors));
        o.insert("bufferViews".into(), Value::Array(views));
        o.insert("buffers".into(), json!([{"byteLength": bin.len()}]));
        node["mesh"] = json!(0);
    }
    json["nodes"] = json!([node]);
    Asset { json, bin }
}

/// The sampler's (magFilter, minFilter) for the filter the mesh was cut for:
/// LINEAR / NEAREST, and for mipmapped layers LINEAR_MIPMAP_LINEAR /
/// NEAREST_MIPMAP_NEAREST as minFilter.
pub fn sampler_filters(mesh: &LayerMesh) -> (u32, u32) {
    let mip = mesh.filter.mip_levels > 0;
    match mesh.filter.mode {
        FilterMode::Bilinear => (
            gl::LINEAR,
            if mip {
                gl::LINEAR_MIPMAP_LINEAR
            } else {
                gl::LINEAR
            },
        ),
        FilterMode::Nearest => (
            gl::NEAREST,
            if mip {
                gl::NEAREST_MIPMAP_NEAREST
            } else {
                gl::NEAREST
            },
        ),
    }
}

/// What makes `mesh` unfit to write (the checks [`build`] relies on), if anything.
pub fn malformed(mesh: &LayerMesh) -> Option<String> {
    let n = mesh.vertex_count();
    if mesh.positions.len() % 2 != 0 || mesh.uvs.len() != mesh.positions.len() {
        return Some(format!(
            "{} position and {} texture coordinate numbers, not two per vertex each",
            mesh.positions.len(),
            mesh.uvs.len()
        ));
    }
    for (kind, list) in [("opaque", &mesh.opaque), ("blended", &mesh.blended)] {
        if list.indices.len() % 3 != 0 {
            return Some(format!(
                "the {kind} list has {} indices, not three per triangle",
                list.indices.len()
            ));
        }
        if let Some(i) = list.indices.iter().find(|&&i| i as usize >= n) {
            return Some(format!(
                "the {kind} list has index {i}, past the {n} vertices"
            ));
        }
    }
    None
}

fn refuse_format(dest: &Path, why: String) -> FileError {
    FileError::new(
        dest,
        format!("cannot be written with 16-bit vertices: {why}"),
        format!(
            "write this layer with {}, or split it into smaller layers",
            Setting::VertexFormat.given("f32")
        ),
    )
}

fn refuse(dest: &Path, why: String) -> FileError {
    FileError::new(
        dest,
        format!("is not written: the mesh is malformed ({why})"),
        "re-cut the layer with `underdraw cut`, or repair the mesh file",
    )
}

fn view(offset: usize, length: usize, target: u32) -> Value {
    json!({"buffer": 0, "byteOffset": offset, "byteLength": length, "target": target})
}

fn cut_extras(mesh: &LayerMesh, reversed: bool) -> Value {
    json!({
        "source": mesh.source,
        "size": mesh.size,
        "filter": mesh.filter,
        "wrap": mesh.wrap,
        "budget": mesh.budget,
        "positions": "texels; mesh-file (x, y) with y down is (x, -y, 0)",
        "winding_reversed": reversed,
        "draw": "opaque primitive front to back, blending off, depth write on; then blended back to front, depth write off",
    })
}

/// The glTF asset of `mesh` as named bytes, for an
/// [`OutputFolder`] to write: `<stem>.bin` (when
/// the layer has triangles; first, so a reader never sees a new `.gltf`
/// with an old `.bin`) and `<stem>.gltf`, with the vertices in `format`
/// ([`build_with`]). `image_uri` is the layer's PNG relative to the folder,
/// as a URI reference (see [`relative_uri`]). Refuses, naming the `.gltf`
/// in `dir`, a malformed mesh or a layer too large for the format.
pub fn gltf_files(
    mesh: &LayerMesh,
    image_uri: &str,
    dir: &Path,
    stem: &str,
    format: VertexFormat,
) -> Result<Vec<NamedBytes>, FileError> {
    let [gltf, _] = gltf_paths(dir, stem);
    malformed(mesh).map_or(Ok(()), |why| Err(refuse(&gltf, why)))?;
    format_refusal(mesh, format).map_or(Ok(()), |why| Err(refuse_format(&gltf, why)))?;
    let mut asset = build_with(mesh, image_uri, stem, format);
    let mut files = Vec::new();
    if !asset.bin.is_empty() {
        asset.json["buffers"][0]["uri"] = json!(encode_uri(&format!("{stem}.bin")));
        files.push((format!("{stem}.bin"), std::mem::take(&mut asset.bin)));
    }
    let text = serde_json::to_vec_pretty(&asset.json).expect("glTF JSON serializes");
    files.push((format!("{stem}.gltf"), text));
    Ok(files)
}

/// The GLB of `mesh` as named bytes, `<stem>.glb` (see [`gltf_files`]).
pub fn glb_file(
    mesh: &LayerMesh,
    image_uri: &str,
    dir: &Path,
    stem: &str,
    format: VertexFormat,
) -> Result<NamedBytes, FileError> {
    let dest = glb_path(dir, stem);
    malformed(mesh).map_or(Ok(()), |why| Err(refuse(&dest, why)))?;
    format_refusal(mesh, format).map_or(Ok(()), |why| Err(refuse_format(&dest, why)))?;
    let asset = build_with(mesh, image_uri, stem, format);
    Ok((format!("{stem}.glb"), to_glb(&asset)))
}

/// Writes [`gltf_files`] into `dir` through an
/// [`OutputFolder`] (each atomically; a file that
/// already holds the same bytes is left untouched) and returns their paths.
pub fn write_gltf(
    mesh: &LayerMesh,
    image_uri: &str,
    dir: &Path,
    stem: &str,
) -> Result<Vec<PathBuf>, FileError> {
    write_gltf_with(mesh, image_uri, dir, stem, VertexFormat::F32)
}

/// [`write_gltf`] with the vertices in `format` ([`build_with`]); refuses,
/// naming the file, a layer too large for the format.
pub fn write_gltf_with(
    mesh: &LayerMesh,
    image_uri: &str,
    dir: &Path,
    stem: &str,
    format: VertexFormat,
) -> Result<Vec<PathBuf>, FileError> {
    let mut out = OutputFolder::open(dir, Vec::new());
    out.write_all(&gltf_files(mesh, image_uri, dir, stem, format)?)?;
    Ok(out.written().to_vec())
}

/// Writes [`glb_file`] into `dir` (as [`write_gltf`]) and returns its path.
pub fn write_glb(
    mesh: &LayerMesh,
    image_uri: &str,
    dir: &Path,
    stem: &str,
) -> Result<Vec<PathBuf>, FileError> {
    write_glb_with(mesh, image_uri, dir, stem, VertexFormat::F32)
}

/// [`write_glb`] with the vertices in `format` ([`build_with`]).
pub fn write_glb_with(
    mesh: &LayerMesh,
    image_uri: &str,
    dir: &Path,
    stem: &str,
    format: VertexFormat,
) -> Result<Vec<PathBuf>, FileError> {
    let mut out = OutputFolder::open(dir, Vec::new());
    out.write_all(&[glb_file(mesh, image_uri, dir, stem, format)?])?;
    Ok(out.written().to_vec())
}

/// The GLB container (Binary glTF Layout): a 12-byte header (magic `glTF`,
/// version 2, total length), a JSON chunk padded with spaces to 4 bytes,
/// then, when the buffer is not empty, a BIN chunk padded with zeros.
pub fn to_glb(asset: &Asset) -> Vec<u8> {
    const MAGIC: u32 = 0x4654_6C67; // "glTF"
    const JSON: u32 = 0x4E4F_534A; // "JSON"
    const BIN: u32 = 0x004E_4942; // "BIN\0"
    let mut json = serde_json::to_vec(&asset.json).expect("glTF JSON serializes");
    while json.len() % 4 != 0 {
        json.push(b' ');
    }
    let mut bin = asset.bin.clone();
    while bin.len() % 4 != 0 {
        bin.push(0);
    }
    let total = 12 + 8 + json.len() + if bin.is_empty() { 0 } else { 8 + bin.len() };
    let mut out = Vec::with_capacity(total);
    out.extend_from_slice(&MAGIC.to_le_bytes());
    out.extend_from_slice(&2u32.to_le_bytes());
    out.extend_from_slice(&(total as u32).to_le_bytes());
    out.extend_from_slice(&(json.len() as u32).to_le_bytes());
    out.extend_from_slice(&JSON.to_le_bytes());
    out.extend_from_slice(&json);
    if !bin.is_empty() {
        out.extend_from_slice(&(bin.len() as u32).to_le_bytes());
        out.extend_from_slice(&BIN.to_le_bytes());
        out.extend_from_slice(&bin);
    }
    out
}

/// The relative URI reference from folder `from_dir` to file `target`
/// (both must exist: they are resolved through symbolic links first), with
/// `/` separators and every byte outside RFC 3986's unreserved characters
/// percent-encoded (glTF URIs are RFC 3986 references: Uniform Resource
/// Identifiers). `None` when the two have no common root (Windows drives).
pub fn relative_uri(from_dir: &Path, target: &Path) -> Option<String> {
    let from = from_dir.canonicalize().ok()?;
    let to = target.canonicalize().ok()?;
    let a: Vec<Component> = from.components().collect();
    let b: Vec<Component> = to.components().collect();
    if a.first() != b.first() {
        return None;
    }
    let common = a.iter().zip(&b).take_while(|(x, y)| x == y).count();
    let mut parts: Vec<String> = vec!["..".to_string(); a.len() - common];
    for c in &b[common..] {
        parts.push(encode_uri(&c.as_os_str().to_string_lossy()));
    }
    Some(parts.join("/"))
}

/// Percent-encodes one path segment (or a `/`-separated path: `/` is kept).
pub fn encode_uri(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for b in s.bytes() {
        if b.is_ascii_alphanumeric() || matches!(b, b'-' | b'.' | b'_' | b'~' | b'/') {
            out.push(b as char);
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uri_encoding_keeps_unreserved_and_escapes_the_rest() {
        // RFC 3986, section Characters: unreserved = ALPHA / DIGIT / "-" / "." / "_" / "~"
        assert_eq!(encode_uri("a-b_c.d~e/f"), "a-b_c.d~e/f");
        assert_eq!(encode_uri("my layer#1.png"), "my%20layer%231.png");
        assert_eq!(encode_uri("é"), "%C3%A9");
    }

    #[test]
    fn malformed_meshes_are_named_not_written() {
        let mut mesh: LayerMesh = serde_json::from_value(json!({
            "format": "underdraw.layer", "version": 1, "source": "a.png", "size": [2, 2],
            "filter": {"mode": "bilinear", "mip_levels": 0},
            "alpha": {"opaque_min": 255, "visible_min": 1}, "wrap": "none", "winding": "cw",
            "positions": [0.0, 0.0, 2.0, 0.0, 0.0, 2.0], "uvs": [0.0, 0.0, 1.0, 0.0, 0.0, 1.0],
            "opaque": {"indices": [0, 1, 2]}, "blended": {"indices": []},
            "stats": {"safe_opaque_area": 0.0, "opaque_area": 0.0, "must_cover_area": 0.0,
                      "covered_area": 0.0, "vertices": 3, "opaque_outline_vertices": 0,
                      "cover_outline_vertices": 0, "opaque_triangles": 1, "blended_triangles": 0}
        }))
        .unwrap();
        assert_eq!(malformed(&mesh), None);
        mesh.blended.indices = vec![0, 1, 3];
        assert!(malformed(&mesh).unwrap().contains("index 3"));
        mesh.blended.indices = vec![0, 1];
        assert!(malformed(&mesh).unwrap().contains("three per triangle"));
        mesh.blended.indices.clear();
        mesh.uvs.pop();
        assert!(malformed(&mesh).is_some());
    }

    /// Half-texel positions up to 2 x 32767 = 65534 fit an unsigned short
    /// (0 to 65535); a larger layer is refused with the way out.
    #[test]
    fn u16_vertices_refuse_layers_past_32767_texels() {
        let mut mesh = crate::cut::cut_layer(
            &crate::alpha::AlphaMap::from_raw(4, 4, vec![255; 16]),
            "a.png",
            &crate::settings::CutSettings::default(),
        )
        .mesh;
        assert_eq!(format_refusal(&mesh, VertexFormat::U16), None);
        mesh.size = [32767, 4];
        assert_eq!(format_refusal(&mesh, VertexFormat::U16), None);
        mesh.size = [4, 32768];
        let why = format_refusal(&mesh, VertexFormat::U16).unwrap();
        assert!(why.contains("4 x 32768") && why.contains("32767"), "{why}");
        assert_eq!(format_refusal(&mesh, VertexFormat::F32), None);
        let dir = std::env::temp_dir().join(format!("underdraw-u16-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let e = write_gltf_with(&mesh, "a.png", &dir, "a", VertexFormat::U16).unwrap_err();
        let text = e.to_string();
        assert!(
            text.contains("a.gltf") && text.contains("`vertex_format` = f32"),
            "{text}"
        );
        assert!(!dir.join("a.gltf").exists());
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn glb_header_and_chunks_are_aligned() {
        // Binary glTF Layout: 12-byte header, chunks 4-byte aligned
        let asset = Asset {
            json: json!({"asset": {"version": "2.0"}}),
            bin: vec![1, 2, 3, 4, 5],
        };
        let glb = to_glb(&asset);
        assert_eq!(&glb[0..4], b"glTF");
        assert_eq!(u32::from_le_bytes(glb[4..8].try_into().unwrap()), 2);
        assert_eq!(
            u32::from_le_bytes(glb[8..12].try_into().unwrap()) as usize,
            glb.len()
        );
        let json_len = u32::from_le_bytes(glb[12..16].try_into().unwrap()) as usize;
        assert_eq!(json_len % 4, 0);
        assert_eq!(&glb[16..20], b"JSON");
        let bin_at = 20 + json_len;
        assert_eq!(&glb[bin_at + 4..bin_at + 8], b"BIN\0");
        assert_eq!(
            u32::from_le_bytes(glb[bin_at..bin_at + 4].try_into().unwrap()),
            8
        );
        assert_eq!(&glb[bin_at + 8..], &[1, 2, 3, 4, 5, 0, 0, 0]);
    }
}
