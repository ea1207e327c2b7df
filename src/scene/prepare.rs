//! A scene's layers made ready to draw: each with its mesh, cut on the fly
//! from its image or read from its mesh file.
//!
//! Invariants of a [`Layer`]: its mesh's indices all name vertices, its
//! positions are finite, whole triangles, and its `size` is the image's.
//! An image used by several layers is decoded once, and a cut shared by
//! several layers (same image, same settings) is made once.
//!
//! A layer whose image is a shipped texture (KTX 2.0, `.astc`) is cut on
//! the decoded texels of the levels its settings name (levels 0 to
//! `mip_levels` of the file, [`Texture::levels_for`]); a layer asking for
//! levels the file does not hold is refused, naming the layer and the file.

use super::file::{LayerSpec, MeshSource, RegionLayer, Scene};
use crate::alpha::{AlphaMap, Sampled};
use crate::cut::cut_sampled;
use crate::error::FileError;
use crate::io::{image_size, load_mesh, read_layer_file, ImageLimits, LayerFile, Texture};
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
    /// What a layer cut on the fly is cut from (to cut it again at other
    /// budgets): its image, or for a region of a sprite sheet the whole
    /// sheet; `None` for a layer read from a mesh file.
    pub alpha: Option<Arc<LayerAlpha>>,
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

    /// True for a layer that is a region of a sprite sheet
    /// ([`MeshSource::Region`]).
    pub fn is_region(&self) -> bool {
        matches!(self.spec.mesh, MeshSource::Region(_))
    }

    /// A region layer cut again at `budget` (the way [`prepare_layers`]
    /// cut it: on the whole sheet, stretched for a panel given a `size`);
    /// `None` for a layer that is not a region of a sheet.
    pub fn region_cut_at(&self, budget: usize) -> Option<Result<LayerMesh, FileError>> {
        let (MeshSource::Region(r), Some(sheet)) = (&self.spec.mesh, &self.alpha) else {
            return None;
        };
        let mut r = r.clone();
        r.settings.budget = budget;
        Some(
            super::region::cut_region_layer(&self.spec.image, sheet.level0(), &r)
                .map(|(mesh, _)| mesh),
        )
    }
}

/// Every region layer among `free` cut at each of `budgets`
/// ([`Layer::region_cut_at`]), in parallel, keyed by (layer index,
/// budget); the other layers are cut through [`cut_all`]. A budget a
/// region cannot be cut at (below what a nine-slice panel's pieces need)
/// has no entry; the error is returned only when the region cannot be cut
/// at `required` (the even share of the vertex total).
///
/// The cuts are exactly those of [`Layer::region_cut_at`], made with less
/// work: the sheet is analysed once per image and settings (the analysis
/// does not depend on the budget), and layers drawing the same region with
/// the same settings (a panel drawn at several sizes) share one cut per
/// budget, each layer stretching its copy to its own size.
pub fn cut_regions_at(
    layers: &[Layer],
    free: &[usize],
    budgets: &[usize],
    required: usize,
) -> Result<HashMap<(usize, usize), LayerMesh>, FileError> {
    use super::region::{cut_unstretched, find_region, stretch_region_mesh};
    use crate::sheet::regions::SheetRegion;
    use crate::sheet::SheetAnalysis;
    // each region layer (with its sheet) and its region, found once
    let located: Vec<(
        usize,
        &RegionLayer,
        &LayerAlpha,
        Result<SheetRegion, FileError>,
    )> = free
        .iter()
        .filter_map(|&i| match (&layers[i].spec.mesh, &layers[i].alpha) {
            (MeshSource::Region(r), Some(sheet)) => Some((
                i,
                r,
                &**sheet,
                find_region(&layers[i].spec.image, sheet.level0(), r),
            )),
            _ => None,
        })
        .collect();
    // the sheet's analysis per image and settings (budget aside)
    let mut analysis_keys: Vec<(&Path, CutSettings, &LayerAlpha)> = Vec::new();
    for &(i, r, sheet, _) in &located {
        let key = (
            layers[i].spec.image.as_path(),
            CutSettings {
                budget: 0,
                ..r.settings
            },
        );
        if !analysis_keys.iter().any(|k| (k.0, k.1) == key) {
            analysis_keys.push((key.0, key.1, sheet));
        }
    }
    let analyses: Vec<SheetAnalysis> = analysis_keys
        .par_iter()
        .map(|&(_, s, sheet)| SheetAnalysis::new(sheet.level0(), &s))
        .collect();
    // one cut per image, region and settings, before stretching
    type CutKey<'a> = (&'a Path, &'a Path, &'a str, CutSettings);
    let mut cut_keys: Vec<(CutKey, usize, &SheetRegion, usize)> = Vec::new();
    for (k, (i, r, _, region)) in located.iter().enumerate() {
        let Ok(region) = region else { continue };
        let image = layers[*i].spec.image.as_path();
        let a = analysis_keys
            .iter()
            .position(|x| {
                x.0 == image
                    && x.1
                        == CutSettings {
                            budget: 0,
                            ..r.settings
                        }
            })
            .expect("every located layer's analysis was made");
        for &b in budgets {
            let key = (
                image,
                r.regions.as_path(),
                r.name.as_str(),
                CutSettings {
                    budget: b,
                    ..r.settings
                },
            );
            if !cut_keys.iter().any(|c| c.0 == key) {
                cut_keys.push((key, k, region, a));
            }
        }
    }
    let cuts: Vec<Result<(LayerMesh, Vec<String>), FileError>> = cut_keys
        .par_iter()
        .map(|&((image, _, _, settings), k, region, a)| {
            let (_, r, sheet, _) = &located[k];
            let r = RegionLayer {
                settings,
                ..(*r).clone()
            };
            cut_unstretched(image, sheet.level0(), &analyses[a], region, &r)
        })
        .collect();
    let mut out = HashMap::new();
    for (i, r, _, region) in &located {
        for &b in budgets {
            let m = region.clone().and_then(|region| {
                let image = layers[*i].spec.image.as_path();
                let settings = CutSettings {
                    budget: b,
                    ..r.settings
                };
                let c = cut_keys
                    .iter()
                    .position(|c| c.0 == (image, r.regions.as_path(), r.name.as_str(), settings))
                    .expect("every located layer's cut was made");
                let (mut mesh, _) = cuts[c].clone()?;
                let r = RegionLayer {
                    settings,
                    ..(*r).clone()
                };
                stretch_region_mesh(&mut mesh, &region, &r);
                Ok(mesh)
            });
            match m {
                Ok(m) => {
                    out.insert((*i, b), m);
                }
                Err(e) if b == required => return Err(e),
                Err(_) => {}
            }
        }
    }
    Ok(out)
}

/// What a layer is cut from: a PNG's alpha, or a shipped texture's decoded
/// levels.
///
/// Invariant: a texture holds at least one level, and every layer cut from
/// it through [`prepare_layers`] asks for levels the texture holds whole
/// ([`Texture::levels_for`]).
#[derive(Clone, Debug)]
pub enum LayerAlpha {
    /// A PNG's alpha: the regions come from it and, for mip levels, from the
    /// levels built from it by block averaging.
    Png(AlphaMap),
    /// A shipped texture: the regions come from its decoded levels 0 to the
    /// settings' `mip_levels`.
    Texture(Texture),
}

impl LayerAlpha {
    /// Level 0's alpha (the layer's size and texel classes).
    pub fn level0(&self) -> &AlphaMap {
        match self {
            LayerAlpha::Png(map) => map,
            LayerAlpha::Texture(t) => &t.levels[0],
        }
    }

    /// The shipped texture, if the layer's image is one.
    pub fn texture(&self) -> Option<&Texture> {
        match self {
            LayerAlpha::Png(_) => None,
            LayerAlpha::Texture(t) => Some(t),
        }
    }

    /// What the GPU samples under `settings`: the PNG's alpha, or the
    /// texture's decoded levels 0 to `settings.filter.mip_levels`.
    ///
    /// Panics when the texture cannot give those levels
    /// ([`Texture::levels_for`]); [`prepare_layers`] refuses such a layer
    /// before anything is cut.
    pub fn sampled(&self, settings: &CutSettings) -> Sampled<'_> {
        match self {
            LayerAlpha::Png(map) => Sampled::source(map),
            LayerAlpha::Texture(t) => Sampled {
                source: None,
                shipped: t
                    .levels_for(settings.filter.mip_levels)
                    .expect("the layer's levels were checked when the scene was read"),
            },
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
pub fn decode_images(scene: &Scene) -> Result<HashMap<PathBuf, Arc<LayerAlpha>>, FileError> {
    decode_images_with(scene, &ImageLimits::default())
        .map(|m| m.into_iter().map(|(p, (a, _))| (p, a)).collect())
}

/// Decodes the images of the layers cut on the fly, each once, in parallel,
/// within `limits`; each with the warnings about its file. A shipped
/// texture must hold the levels each layer cut from it asks for.
pub fn decode_images_with(
    scene: &Scene,
    limits: &ImageLimits,
) -> Result<HashMap<PathBuf, (Arc<LayerAlpha>, Vec<String>)>, FileError> {
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
            let alpha = match read_layer_file(p, limits)? {
                LayerFile::Png(l) => (LayerAlpha::Png(l.alpha), l.warnings),
                LayerFile::Texture(t) => {
                    check_texture_levels(scene, p, &t)?;
                    (LayerAlpha::Texture(t), Vec::new())
                }
            };
            Ok(((*p).clone(), (Arc::new(alpha.0), alpha.1)))
        })
        .collect();
    maps.into_iter().collect()
}

/// Each layer cut from the shipped texture at `image` asks for levels the
/// texture holds whole ([`Texture::levels_for`]), or the scene is refused
/// naming the layer and the file.
fn check_texture_levels(scene: &Scene, image: &Path, texture: &Texture) -> Result<(), FileError> {
    for l in scene.layers.iter().filter(|l| l.image == image) {
        if let MeshSource::Cut(s) = l.mesh {
            if let Err(why) = texture.levels_for(s.filter.mip_levels) {
                return Err(FileError::new(
                    image,
                    format!(
                        "{why} (layer {} is cut with mip levels 0 to {})",
                        l.name, s.filter.mip_levels
                    ),
                    format!(
                        "set layer {}'s mip_levels to the levels the file holds (at most {}), or export the texture with a full mip chain of sizes W / 2^l",
                        l.name,
                        texture.levels.len() - 1
                    ),
                ));
            }
        }
    }
    Ok(())
}

/// The notes of a layer cut from a shipped texture: the format, block size
/// and levels its guarantee was computed for (the same note `cut` prints,
/// [`Texture::guarantee_note`]), and the levels the file holds beyond those.
fn texture_notes(texture: &Texture, settings: &CutSettings) -> Vec<String> {
    let mip = settings.filter.mip_levels;
    let mut notes = vec![texture.guarantee_note(mip)];
    let held = texture.levels.len() as u32;
    if held > mip + 1 {
        notes.push(format!(
            "the texture holds {held} mip levels; the meshes are safe for levels 0 to {mip} only (set the layer's mip_levels to {} if the GPU samples them all)",
            held - 1
        ));
    }
    notes
}

/// Cuts each distinct (image, settings) pair once, in parallel.
pub fn cut_all(
    jobs: &[(PathBuf, CutSettings)],
    maps: &HashMap<PathBuf, Arc<LayerAlpha>>,
) -> HashMap<(PathBuf, CutSettings), (LayerMesh, Vec<String>)> {
    let unique: HashSet<&(PathBuf, CutSettings)> = jobs.iter().collect();
    let unique: Vec<_> = unique.into_iter().collect();
    unique
        .par_iter()
        .map(|(path, settings)| {
            let alpha = &maps[path];
            let out = cut_sampled(alpha.sampled(settings), &source_name(path), settings);
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
    let maps: HashMap<PathBuf, Arc<LayerAlpha>> = decoded
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
                if let Some(t) = maps[&spec.image].texture() {
                    notes.splice(0..0, texture_notes(t, s));
                }
                Ok(Layer {
                    spec: spec.clone(),
                    mesh,
                    alpha: Some(maps[&spec.image].clone()),
                    notes,
                })
            }
            MeshSource::Region(r) if r.mesh.is_some() => region_mesh_file(spec, r),
            MeshSource::Region(r) => {
                // cut the way it ships: from the sheet's texels, whole-sheet regions
                let (mesh, mut notes) =
                    super::region::cut_region_layer(&spec.image, maps[&spec.image].level0(), r)?;
                notes.splice(0..0, decoded[&spec.image].1.iter().cloned());
                Ok(Layer {
                    spec: spec.clone(),
                    mesh,
                    alpha: Some(maps[&spec.image].clone()),
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

/// A region layer read from its mesh file (`"region"` with `"mesh"`): the
/// file must be a mesh of that region of the sheet (its `region` key's
/// rectangle and sheet size), drawn at the layer's size (a mesh of the
/// region's own size is stretched to a panel's `size` here; one exported
/// stretched is used as it is). Its floor and report use the settings the
/// file records; the allocation of a vertex total keeps it as it is.
fn region_mesh_file(spec: &LayerSpec, r: &super::file::RegionLayer) -> Result<Layer, FileError> {
    let path = r.mesh.as_ref().expect("a region mesh file");
    let mut mesh = load_mesh(path)?;
    check_mesh_structure(path, &mesh)?;
    let sheet = image_size(&spec.image)?;
    let regions = crate::sheet::regions::load_regions(&r.regions, sheet)?;
    let region = regions.iter().find(|g| g.name == r.name).ok_or_else(|| {
        FileError::new(
            &r.regions,
            format!("has no region named {:?}", r.name),
            "give a region of the regions file",
        )
    })?;
    let g = &region.rect;
    let rect = [g.x, g.y, g.w, g.h];
    let hint = "cut the region again with `underdraw cut --regions`, or point the layer at the region it was cut from";
    match &mesh.region {
        Some(m) if m.rect == rect && m.sheet_size == [sheet.0, sheet.1] => {}
        _ => {
            return Err(FileError::new(
                path,
                format!(
                    "is not a mesh of region {:?} ({rect:?}) of the {} x {} sheet {}",
                    r.name,
                    sheet.0,
                    sheet.1,
                    spec.image.display()
                ),
                hint,
            ))
        }
    }
    let own = [g.w, g.h];
    let slices = mesh.region.as_ref().and_then(|m| m.slices);
    match (r.size, slices) {
        (Some(size), Some(insets)) if mesh.size == own && size != own => {
            super::region::stretch_mesh(&mut mesh, insets, size)
        }
        _ => {}
    }
    let want = r.size.unwrap_or(own);
    if mesh.size != want {
        return Err(FileError::new(
            path,
            format!(
                "is drawn {} x {}, but the layer draws region {:?} at {} x {}",
                mesh.size[0], mesh.size[1], r.name, want[0], want[1]
            ),
            hint,
        ));
    }
    let mut spec = spec.clone();
    if let MeshSource::Region(r) = &mut spec.mesh {
        r.settings = CutSettings {
            budget: mesh.budget.unwrap_or(r.settings.budget),
            filter: mesh.filter,
            alpha: mesh.alpha,
            wrap: mesh.wrap,
        };
    }
    Ok(Layer {
        spec,
        mesh,
        alpha: None,
        notes: Vec::new(),
    })
}

/// What drawing a mesh file needs: whole triangles, indices naming vertices,
/// finite positions, and the size of the layer's image.
fn check_mesh_file(path: &Path, mesh: &LayerMesh, image: &Path) -> Result<(), FileError> {
    check_mesh_structure(path, mesh)?;
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

/// Whole triangles, indices naming vertices, finite positions.
fn check_mesh_structure(path: &Path, mesh: &LayerMesh) -> Result<(), FileError> {
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
    Ok(())
}
