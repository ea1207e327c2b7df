//! A scene's layers made ready to draw: each with its mesh, cut on the fly
//! from its image or read from its mesh file.
//!
//! Invariants of a [`Layer`]: its mesh's indices all name vertices, its
//! positions are finite, whole triangles, and its `size` is the image's.
//! An image used by several layers is decoded once, and a cut shared by
//! several layers (same image, same settings) is made once.

use super::file::{LayerSpec, MeshSource, Scene};
use crate::alpha::AlphaMap;
use crate::cut::cut_layer;
use crate::error::FileError;
use crate::io::{image_size, load_mesh, read_layer_file, ImageLimits, LayerFile};
use crate::mesh::LayerMesh;
use crate::settings::CutSettings;
use rayon::prelude::*;
use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::sync::Arc;

/// A layer of a scene with its mesh.
#[derive(Clone, Debug)]
pub struct Layer {
    /// The layer as the scene file gives it: image, mesh source, placement.
    pub spec: LayerSpec,
    /// The layer's mesh: cut on the fly, or read from its mesh file.
    pub mesh: LayerMesh,
    /// The alpha map of a layer cut on the fly (to cut it again at other
    /// budgets); `None` for a layer read from a mesh file.
    pub alpha: Option<Arc<AlphaMap>>,
    /// The cut's remarks.
    pub notes: Vec<String>,
}

impl Layer {
    /// The settings the layer was cut with (`None` for a mesh file).
    pub fn cut_settings(&self) -> Option<CutSettings> {
        match self.spec.mesh {
            MeshSource::Cut(s) => Some(s),
            MeshSource::Region(ref r) => Some(r.settings),
            MeshSource::File(_) => None,
        }
    }
}

/// The image's file name, recorded as the mesh's `source`.
pub fn source_name(image: &Path) -> String {
    image
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// Decodes the images of the layers cut on the fly, each once, in parallel,
/// with the default [`ImageLimits`].
pub fn decode_images(scene: &Scene) -> Result<HashMap<PathBuf, Arc<AlphaMap>>, FileError> {
    decode_images_with(scene, &ImageLimits::default())
        .map(|m| m.into_iter().map(|(p, (a, _))| (p, a)).collect())
}

/// Decodes the images of the layers cut on the fly, each once, in parallel,
/// within `limits`; each with the warnings about its file.
pub fn decode_images_with(
    scene: &Scene,
    limits: &ImageLimits,
) -> Result<HashMap<PathBuf, (Arc<AlphaMap>, Vec<String>)>, FileError> {
    let mut paths: Vec<&PathBuf> = scene
        .layers
        .iter()
        .filter(|l| matches!(l.mesh, MeshSource::Cut(_) | MeshSource::Region(_)))
        .map(|l| &l.image)
        .collect();
    paths.sort();
    paths.dedup();
    let maps: Vec<Result<_, FileError>> = paths
        .par_iter()
        .map(|p| {
            let file = read_layer_file(p, limits)?;
            if let LayerFile::Texture(_) = &file {
                refuse_texture_mips(scene, p)?;
            }
            let l = file.into_layer();
            Ok(((*p).clone(), (Arc::new(l.alpha), l.warnings)))
        })
        .collect();
    maps.into_iter().collect()
}

/// A shipped texture (KTX 2.0, `.astc`) is cut from its level 0: the
/// guarantee then holds for level 0, so a layer asking for mip levels
/// (whose shipped levels the scene does not analyze yet) is refused.
fn refuse_texture_mips(scene: &Scene, image: &Path) -> Result<(), FileError> {
    for l in scene.layers.iter().filter(|l| l.image == image) {
        if let MeshSource::Cut(s) = l.mesh {
            if s.filter.mip_levels > 0 {
                return Err(FileError::new(
                    image,
                    format!(
                        "is a compressed texture, cut for layer {} from its level 0, but the layer asks for mip levels 0 to {}",
                        l.name, s.filter.mip_levels
                    ),
                    "set the layer's mip_levels to 0, or give its PNG and cut the texture with `underdraw cut --texture`",
                ));
            }
        }
    }
    Ok(())
}

/// Cuts each distinct (image, settings) pair once, in parallel.
pub fn cut_all(
    jobs: &[(PathBuf, CutSettings)],
    maps: &HashMap<PathBuf, Arc<AlphaMap>>,
) -> HashMap<(PathBuf, CutSettings), (LayerMesh, Vec<String>)> {
    let unique: HashSet<&(PathBuf, CutSettings)> = jobs.iter().collect();
    let unique: Vec<_> = unique.into_iter().collect();
    unique
        .par_iter()
        .map(|(path, settings)| {
            let out = cut_layer(&maps[path], &source_name(path), settings);
            ((path.clone(), *settings), (out.mesh, out.notes))
        })
        .collect()
}

/// Loads every layer's mesh: cuts the layers with cut settings (in
/// parallel), reads the mesh files and checks them against their images.
/// Images are read with the default [`ImageLimits`].
pub fn prepare_layers(scene: &Scene) -> Result<Vec<Layer>, FileError> {
    prepare_layers_with(scene, &ImageLimits::default())
}

/// [`prepare_layers`] with images read within `limits`; a warning about an
/// image file (an animated PNG, say) becomes a note of each layer using it.
pub fn prepare_layers_with(scene: &Scene, limits: &ImageLimits) -> Result<Vec<Layer>, FileError> {
    let decoded = decode_images_with(scene, limits)?;
    let maps: HashMap<PathBuf, Arc<AlphaMap>> = decoded
        .iter()
        .map(|(p, (a, _))| (p.clone(), a.clone()))
        .collect();
    let jobs: Vec<(PathBuf, CutSettings)> = scene
        .layers
        .iter()
        .filter_map(|l| match l.mesh {
            MeshSource::Cut(s) => Some((l.image.clone(), s)),
            MeshSource::File(_) | MeshSource::Region(_) => None,
        })
        .collect();
    let cuts = cut_all(&jobs, &maps);
    scene
        .layers
        .iter()
        .map(|spec| match &spec.mesh {
            MeshSource::Cut(s) => {
                let (mesh, mut notes) = cuts[&(spec.image.clone(), *s)].clone();
                notes.splice(0..0, decoded[&spec.image].1.iter().cloned());
                Ok(Layer {
                    spec: spec.clone(),
                    mesh,
                    alpha: Some(maps[&spec.image].clone()),
                    notes,
                })
            }
            MeshSource::Region(r) => {
                // cut the way it ships: from the sheet's texels, whole-sheet regions
                let (mesh, mut notes) =
                    super::region::cut_region_layer(&spec.image, &maps[&spec.image], r)?;
                notes.splice(0..0, decoded[&spec.image].1.iter().cloned());
                Ok(Layer {
                    spec: spec.clone(),
                    mesh,
                    alpha: None,
                    notes,
                })
            }
            MeshSource::File(path) => {
                let mesh = load_mesh(path)?;
                check_mesh_file(path, &mesh, &spec.image)?;
                Ok(Layer {
                    spec: spec.clone(),
                    mesh,
                    alpha: None,
                    notes: Vec::new(),
                })
            }
        })
        .collect()
}

/// What drawing a mesh file needs: whole triangles, indices naming vertices,
/// finite positions, and the size of the layer's image.
fn check_mesh_file(path: &Path, mesh: &LayerMesh, image: &Path) -> Result<(), FileError> {
    let hint = "cut the layer again with `underdraw cut`";
    let n = mesh.positions.len() / 2;
    if !mesh.positions.len().is_multiple_of(2) || mesh.positions.iter().any(|v| !v.is_finite()) {
        return Err(FileError::new(
            path,
            "has an odd number of position coordinates or a coordinate that is not finite",
            hint,
        ));
    }
    for (list, name) in [(&mesh.opaque, "opaque"), (&mesh.blended, "blended")] {
        if !list.indices.len().is_multiple_of(3) {
            return Err(FileError::new(
                path,
                format!("its {name} index list is not a whole number of triangles"),
                hint,
            ));
        }
        if let Some(i) = list.indices.iter().find(|&&i| i as usize >= n) {
            return Err(FileError::new(
                path,
                format!("its {name} index {i} names no vertex (the mesh has {n})"),
                hint,
            ));
        }
    }
    let dims = image_size(image)?;
    if [dims.0, dims.1] != mesh.size {
        return Err(FileError::new(
            path,
            format!(
                "was cut for a {} x {} layer, but {} is {} x {}",
                mesh.size[0],
                mesh.size[1],
                image.display(),
                dims.0,
                dims.1
            ),
            "cut the mesh from this image again, or point the layer at the image it was cut from",
        ));
    }
    Ok(())
}
