//! Choosing a vertex budget per layer for a vertex total: the layers'
//! sweep curves, scored by what each layer's cut saves *in the scene*, and
//! split by marginal gain ([`super::allocate::allocate`]).
//!
//! **The gain model.** With the split strategy, a pixel p is shaded by layer
//! L when L's meshes cover p and no nearer layer's opaque mesh does. So with
//! the other layers' meshes fixed, changing L's mesh changes the frame's
//! fragments by exactly two terms:
//!
//! * L's own fragments: the pixels its meshes cover, counted where p is not
//!   behind a nearer opaque mesh (weight `vis_L(p)`);
//! * what L's opaque mesh hides: at a pixel of its opaque mesh, the
//!   fragments the layers behind L would shade there (`behind_L(p)`, each
//!   farther layer counted unless a layer between it and L is opaque at p),
//!   again only where `vis_L(p)`.
//!
//! Both weights depend on the other layers only. Rendering every candidate
//! mesh of every layer into the full scene at every camera sample would
//! cost a frame per (layer, budget, sample); instead the weights are
//! rendered once per sample from a reference cut of every layer and pulled
//! back into the layer's texel grid (each screen pixel adds its weights to
//! the texel under its centre), summed over the samples. A candidate mesh
//! is then rendered once, in texel space, and its cost is the weights it
//! covers: `sum(cover * vis) - sum(opaque * vis * behind)`. This is the
//! scene's exact change for one layer at a time when texel centres fall on
//! pixel centres (scale 1 at whole-pixel offsets; tested below), and
//! otherwise off only where they disagree (under a texel at the mesh's
//! edges); it ignores how two layers' changes interact; so the choice is made twice,
//! the second time with the first choice as the reference, and each choice
//! is scored exactly (every sample rendered) and the better one kept. The
//! first reference is the even spread, the choice it is compared against.

use super::allocate::{allocate, CurvePoint};
use super::draws::{copy_origins, layer_depth, layer_draw, Part, Strategy};
use super::file::{MeshSource, Scene};
use super::prepare::{cut_regions_at, source_name, Layer, LayerAlpha};
use super::score::mean_fragments;
use crate::cut::cut_budgets;
use crate::error::{FileError, Setting};
use crate::frame::{coverage_rows_into, Draw, RowSums};
use crate::mesh::LayerMesh;
use crate::settings::CutSettings;
use crate::sweep::BUDGETS;
use rayon::prelude::*;
use serde::Serialize;
use std::collections::HashMap;
use std::ops::Range;
use std::path::PathBuf;
use std::sync::Arc;

/// Choices made, each scored exactly.
const ROUNDS: usize = 2;

/// A layer's choice.
#[derive(Clone, Debug, Serialize)]
pub struct LayerChoice {
    /// The layer's name in the scene file.
    pub name: String,
    /// Budget chosen (`None` for a mesh file, kept as it is).
    pub budget: Option<usize>,
    /// Vertices of the chosen mesh.
    pub vertices: usize,
    /// Budget in the even spread (`None` for a mesh file).
    pub even_budget: Option<usize>,
    /// Vertices of the layer's mesh in the even spread.
    pub even_vertices: usize,
    /// The layer's curve in the round whose choice was kept: fragments
    /// saved per frame against its rectangle, by the gain model, at each
    /// candidate budget (empty for a mesh file).
    pub curve: Vec<CurveEntry>,
}

/// One point of a layer's curve: the layer cut at one budget, and what that
/// cut saves in the scene.
#[derive(Clone, Debug, Serialize)]
pub struct CurveEntry {
    /// The vertex budget the layer was cut at.
    pub budget: usize,
    /// Vertices the cut at that budget actually has (at most `budget`).
    pub vertices: usize,
    /// Fragments saved per frame (mean over the camera samples) against the
    /// layer drawn as a blended rectangle, by the gain model of this module.
    pub gain: f64,
}

/// An assignment of meshes, scored exactly with the split strategy.
#[derive(Clone, Debug, Serialize)]
pub struct Scored {
    /// Vertices of all the scene's meshes together.
    pub vertices: usize,
    /// Mean fragments per frame.
    pub fragments: f64,
    /// Overdraw: mean fragments per frame divided by the viewport's pixels
    /// (fragments shaded per pixel).
    pub overdraw: f64,
}

/// The result of [`allocate_scene`] for the report: the vertex total, each
/// layer's choice, and the chosen and even assignments scored exactly.
#[derive(Clone, Debug, Serialize)]
pub struct AllocationReport {
    /// The vertex total asked for (`--vertex-total`), for all layers together.
    pub vertex_total: usize,
    /// Each layer's choice, in the scene's order.
    pub layers: Vec<LayerChoice>,
    /// The chosen assignment (the best round), scored exactly.
    pub allocated: Scored,
    /// The even spread (every layer cut on the fly gets the same budget), scored
    /// exactly.
    pub even: Scored,
    /// Each round's choice, scored exactly.
    pub rounds: Vec<Scored>,
    /// even.fragments - allocated.fragments, per frame.
    pub saved_vs_even: f64,
}

/// What [`allocate_scene`] returns: the report and the chosen meshes.
pub struct AllocationOutcome {
    /// The choices and their exact scores.
    pub report: AllocationReport,
    /// The chosen mesh of each layer, in the scene's order.
    pub meshes: Vec<LayerMesh>,
}

/// A round's choice: its exact score, the budgets, the curves it was made from.
type Round = (Scored, Vec<Option<usize>>, Vec<Vec<CurveEntry>>);

/// Per layer, texel-space weight sums over the camera samples, as row
/// prefix sums (a candidate's gain sums them over its triangles' spans).
struct Weights {
    /// sum of vis over the pixels whose centre falls in each texel
    vis: Vec<RowSums>,
    /// sum of vis * behind
    hidden: Vec<RowSums>,
}

/// A layer's draw alone (counts per pixel) into `counts`, or a clear
/// frame when it has none; `counts` is zero outside the rows `dirty`
/// (or empty), and the rows written are returned
/// ([`coverage_rows_into`]).
fn draw_counts_into(
    viewport: [u32; 2],
    d: Option<Draw>,
    counts: &mut Vec<u32>,
    dirty: Range<usize>,
) -> Range<usize> {
    match d {
        Some(d) => coverage_rows_into(viewport, &d, counts, dirty),
        None => {
            let (w, h) = (viewport[0] as usize, viewport[1] as usize);
            if counts.len() != w * h {
                counts.clear();
                counts.resize(w * h, 0);
            } else {
                counts[dirty.start.min(h) * w..dirty.end.min(h) * w].fill(0);
            }
            0..0
        }
    }
}

/// The smallest range of rows holding both `a` and `b`.
fn hull(a: &Range<usize>, b: &Range<usize>) -> Range<usize> {
    match (a.is_empty(), b.is_empty()) {
        (true, _) => b.clone(),
        (_, true) => a.clone(),
        _ => a.start.min(b.start)..a.end.max(b.end),
    }
}

/// The pixel rectangle `[x0, x1) x [y0, y1)` a copy of a layer at origin
/// `o` (drawn `s` times its texel size `[w, h]`) spans on a viewport of
/// `vw` x `vh` pixels.
fn copy_pixels(o: [f64; 2], s: f64, [w, h]: [u32; 2], vw: usize, vh: usize) -> [usize; 4] {
    let x0 = o[0].max(0.0).floor() as usize;
    let x1 = (o[0] + s * w as f64).ceil().clamp(0.0, vw as f64) as usize;
    let y0 = o[1].max(0.0).floor() as usize;
    let y1 = (o[1] + s * h as f64).ceil().clamp(0.0, vh as f64) as usize;
    [x0, x1, y0, y1]
}

/// The weights of every layer against the reference `meshes`.
fn weights(scene: &Scene, layers: &[Layer], meshes: &[&LayerMesh]) -> Weights {
    let n = layers.len();
    let vp = scene.viewport;
    let (vw, vh) = (vp[0] as usize, vp[1] as usize);
    let mut vis_sum: Vec<Vec<u64>> = layers
        .iter()
        .map(|l| vec![0; (l.mesh.size[0] * l.mesh.size[1]) as usize])
        .collect();
    let mut hidden_sum = vis_sum.clone();
    // per-pixel buffers, made once and reused at every camera sample
    // (fresh ones per sample cost more in page faults than in drawing);
    // each draw's buffers are cleared and walked only over the rows it
    // touched, and each layer's vis and behind only over the rows its
    // copies span (the only ones read)
    let mut maps: Vec<(Vec<u32>, Vec<u32>)> = vec![(Vec::new(), Vec::new()); n];
    let mut touched: Vec<(Range<usize>, Range<usize>)> = vec![(0..0, 0..0); n];
    let mut vis: Vec<Vec<bool>> = vec![vec![false; vw * vh]; n];
    let mut behind: Vec<Vec<u32>> = vec![vec![0; vw * vh]; n];
    let mut nearer = vec![false; vw * vh];
    let mut acc = vec![0u32; vw * vh];
    for cam in scene.camera_positions() {
        // each layer's opaque and covering pixels, alone
        maps.par_iter_mut()
            .zip(touched.par_iter_mut())
            .enumerate()
            .for_each(|(i, ((o, c), (ro, rc)))| {
                let one =
                    |part| layer_draw(&layers[i].spec, meshes[i], part, layer_depth(i, n), vp, cam);
                *ro = draw_counts_into(vp, one(Part::Opaque), o, ro.clone());
                *rc = draw_counts_into(vp, one(Part::Cover), c, rc.clone());
            });
        // each layer's copies, and the rows they span
        let copies: Vec<Vec<[usize; 4]>> = layers
            .iter()
            .map(|l| {
                copy_origins(&l.spec, l.mesh.size, vp, cam)
                    .into_iter()
                    .map(|o| copy_pixels(o, l.spec.scale, l.mesh.size, vw, vh))
                    .collect()
            })
            .collect();
        let spans: Vec<Range<usize>> = copies
            .iter()
            .map(|c| c.iter().fold(0..0, |r, p| hull(&r, &(p[2]..p[3]))))
            .collect();
        // front to back: is the pixel free of nearer opaque meshes?
        nearer.fill(false);
        for i in (0..n).rev() {
            let rows = spans[i].start * vw..spans[i].end * vw;
            for (v, &b) in vis[i][rows.clone()].iter_mut().zip(&nearer[rows]) {
                *v = !b;
            }
            let rows = touched[i].0.start * vw..touched[i].0.end * vw;
            for (b, &o) in nearer[rows.clone()].iter_mut().zip(&maps[i].0[rows]) {
                *b |= o > 0;
            }
        }
        // back to front: fragments the layers behind would shade
        acc.fill(0);
        for i in 0..n {
            let rows = spans[i].start * vw..spans[i].end * vw;
            behind[i][rows.clone()].copy_from_slice(&acc[rows]);
            let both = hull(&touched[i].0, &touched[i].1);
            let rows = both.start * vw..both.end * vw;
            for ((a, &o), &c) in acc[rows.clone()]
                .iter_mut()
                .zip(&maps[i].0[rows.clone()])
                .zip(&maps[i].1[rows])
            {
                *a = if o > 0 { c } else { *a + c };
            }
        }
        vis_sum
            .par_iter_mut()
            .zip(hidden_sum.par_iter_mut())
            .enumerate()
            .for_each(|(i, (vs, hs))| {
                let spec = &layers[i].spec;
                let [w, h] = layers[i].mesh.size;
                let o_all = copy_origins(spec, [w, h], vp, cam);
                for (o, &[x0, x1, y0, y1]) in o_all.iter().zip(&copies[i]) {
                    let s = spec.scale;
                    // the texel column under each pixel centre of the copy's rows
                    let cols: Vec<(usize, usize)> = (x0..x1)
                        .filter_map(|x| {
                            let tx = ((x as f64 + 0.5 - o[0]) / s).floor();
                            (tx >= 0.0 && tx < w as f64).then_some((x, tx as usize))
                        })
                        .collect();
                    for y in y0..y1 {
                        let ty = ((y as f64 + 0.5 - o[1]) / s).floor();
                        if ty < 0.0 || ty >= h as f64 {
                            continue;
                        }
                        let (row, trow) = (y * vw, ty as usize * w as usize);
                        let (vis_row, behind_row) =
                            (&vis[i][row..row + vw], &behind[i][row..row + vw]);
                        let (vs_row, hs_row) = (
                            &mut vs[trow..trow + w as usize],
                            &mut hs[trow..trow + w as usize],
                        );
                        for &(x, tx) in &cols {
                            if vis_row[x] {
                                vs_row[tx] += 1;
                                hs_row[tx] += behind_row[x] as u64;
                            }
                        }
                    }
                }
            });
    }
    // as row sums, each layer's plain sums dropped as its row sums are made
    let sums = |v: Vec<Vec<u64>>| -> Vec<RowSums> {
        v.into_iter()
            .zip(layers)
            .map(|(v, l)| RowSums::new(l.mesh.size, &v))
            .collect()
    };
    Weights {
        vis: sums(vis_sum),
        hidden: sums(hidden_sum),
    }
}

/// A candidate mesh's gain against the layer's rectangle, summed over the
/// samples: the weights under its covering triangles (each texel once per
/// triangle covering it, as drawn without depth test) and under its opaque
/// ones, summed over the triangles' row spans.
fn gain(mesh: &LayerMesh, vis: &RowSums, hidden: &RowSums) -> f64 {
    let under = |sums: &RowSums, indices: &[u32]| {
        sums.covered(&mesh.positions, indices)
            .unwrap_or_else(|e| panic!("a cut mesh draws: {e}"))
    };
    let rect = vis.total();
    let own = under(vis, &mesh.opaque.indices) + under(vis, &mesh.blended.indices);
    let hides = under(hidden, &mesh.opaque.indices);
    rect as f64 - own as f64 + hides as f64
}

/// Every distinct cut of `jobs` (image, settings), keyed as
/// [`super::prepare::cut_all`] keys them, each layer's budgets cut from one
/// analysis of it ([`cut_budgets`]): exactly the cuts of `cut_all`.
fn cut_curves(
    jobs: &[(PathBuf, CutSettings)],
    maps: &HashMap<PathBuf, Arc<LayerAlpha>>,
) -> HashMap<(PathBuf, CutSettings), (LayerMesh, Vec<String>)> {
    // the budgets of each (image, settings but the budget), in first-seen order
    let mut curves: Vec<((&PathBuf, CutSettings), Vec<usize>)> = Vec::new();
    for (path, s) in jobs {
        let base = CutSettings { budget: 0, ..*s };
        match curves.iter_mut().find(|(k, _)| *k == (path, base)) {
            Some((_, budgets)) if budgets.contains(&s.budget) => {}
            Some((_, budgets)) => budgets.push(s.budget),
            None => curves.push(((path, base), vec![s.budget])),
        }
    }
    curves
        .par_iter()
        .flat_map_iter(|((path, base), budgets)| {
            let alpha = &maps[*path];
            let outs = cut_budgets(alpha.sampled(base), &source_name(path), base, budgets);
            budgets.iter().zip(outs).map(move |(&budget, out)| {
                (
                    ((*path).clone(), CutSettings { budget, ..*base }),
                    (out.mesh, out.notes),
                )
            })
        })
        .collect()
}

fn too_small(scene: &Scene, total: usize, need: usize) -> FileError {
    FileError::new(
        &scene.path,
        format!(
            "a vertex total of {total} cannot hold the scene's smallest meshes ({need} vertices)"
        ),
        format!("give {} or more", Setting::VertexTotal.given(need)),
    )
}

/// Chooses a budget per layer cut on the fly so that all the scene's meshes
/// together have at most `total` vertices (layers read from mesh files keep
/// theirs), saving the most fragments with the split strategy.
pub fn allocate_scene(
    scene: &Scene,
    layers: &[Layer],
    total: usize,
) -> Result<AllocationOutcome, FileError> {
    let free: Vec<usize> = (0..layers.len())
        .filter(|&i| layers[i].alpha.is_some())
        .collect();
    let fixed: usize = layers
        .iter()
        .filter(|l| l.alpha.is_none())
        .map(|l| l.mesh.vertex_count())
        .sum();
    if free.is_empty() {
        return Err(FileError::new(
            &scene.path,
            "every layer is read from a mesh file: there is no budget to choose",
            "give \"cut\" settings (or none) instead of \"mesh\" for the layers to allocate",
        ));
    }
    let avail = total
        .checked_sub(fixed)
        .ok_or_else(|| too_small(scene, total, fixed + 4 * free.len()))?;
    let even = avail / free.len();
    if even < 4 {
        return Err(too_small(scene, total, fixed + 4 * free.len()));
    }
    let max_budget = avail - 4 * (free.len() - 1);
    let mut budgets: Vec<usize> = BUDGETS
        .iter()
        .copied()
        .filter(|&b| b <= max_budget)
        .collect();
    budgets.push(even);
    budgets.sort_unstable();
    budgets.dedup();
    // every candidate cut, each distinct one once
    let setting = |i: usize, budget: usize| match layers[i].spec.mesh {
        MeshSource::Cut(s) => (layers[i].spec.image.clone(), CutSettings { budget, ..s }),
        MeshSource::File(_) | MeshSource::Region(_) => {
            unreachable!("free layers are cut on the fly (regions by cut_regions_at)")
        }
    };
    // a layer's cut at its own settings was made when the scene was read:
    // it is not cut again
    let own: HashMap<(PathBuf, CutSettings), &LayerMesh> = free
        .iter()
        .filter_map(|&i| match layers[i].spec.mesh {
            MeshSource::Cut(s) => Some(((layers[i].spec.image.clone(), s), &layers[i].mesh)),
            MeshSource::File(_) | MeshSource::Region(_) => None,
        })
        .collect();
    let jobs: Vec<(PathBuf, CutSettings)> = free
        .iter()
        .filter(|&&i| !layers[i].is_region())
        .flat_map(|&i| budgets.iter().map(move |&b| (i, b)))
        .map(|(i, b)| setting(i, b))
        .filter(|job| !own.contains_key(job))
        .collect();
    let maps = layers
        .iter()
        .filter_map(|l| l.alpha.clone().map(|a| (l.spec.image.clone(), a)))
        .collect();
    // regions of a sprite sheet: cut on the whole sheet, stretched as drawn;
    // alongside the other layers' curves, so that the regions' many small
    // cuts fill the time a thread would wait for the last large one
    let (cuts, region_cuts) = rayon::join(
        || cut_curves(&jobs, &maps),
        || cut_regions_at(layers, &free, &budgets, even),
    );
    let region_cuts = region_cuts?;
    // a region has no cut below what its pieces need
    let cut_at = |i: usize, b: usize| !layers[i].is_region() || region_cuts.contains_key(&(i, b));
    let candidate = |i: usize, b: usize| {
        if let Some(m) = region_cuts.get(&(i, b)) {
            return m;
        }
        let key = setting(i, b);
        own.get(&key).copied().unwrap_or_else(|| &cuts[&key].0)
    };
    let assign = |choice: &[Option<usize>]| -> Vec<&LayerMesh> {
        (0..layers.len())
            .map(|i| match choice[i] {
                Some(b) => candidate(i, b),
                None => &layers[i].mesh,
            })
            .collect()
    };
    let cams = scene.camera_positions();
    let specs: Vec<_> = layers.iter().map(|l| l.spec.clone()).collect();
    let score = |choice: &[Option<usize>]| {
        let meshes = assign(choice);
        let fragments = mean_fragments(Strategy::Split, &specs, &meshes, scene.viewport, &cams);
        Scored {
            vertices: meshes.iter().map(|m| m.vertex_count()).sum(),
            fragments,
            overdraw: fragments / (scene.viewport[0] as f64 * scene.viewport[1] as f64),
        }
    };
    let even_choice: Vec<Option<usize>> = (0..layers.len())
        .map(|i| layers[i].alpha.is_some().then_some(even))
        .collect();
    // the even spread's exact score and the first round's weights (drawn
    // against the even spread) side by side: the weights' passes in
    // depth order run on one thread
    let (even_score, even_weights) = rayon::join(
        || score(&even_choice),
        || weights(scene, layers, &assign(&even_choice)),
    );
    let mut even_weights = Some(even_weights);
    let mut reference = even_choice.clone();
    let mut scored: Vec<(Vec<Option<usize>>, Scored)> =
        vec![(even_choice.clone(), even_score.clone())];
    let mut rounds = Vec::new();
    // (exact score, budgets, curves) of the best round so far
    let mut best: Option<Round> = None;
    for _ in 0..ROUNDS {
        let w = match even_weights.take() {
            Some(w) => w, // the first round's reference is the even spread
            None => weights(scene, layers, &assign(&reference)),
        };
        let samples = cams.len() as f64;
        let curves: Vec<Vec<CurveEntry>> = free
            .par_iter()
            .map(|&i| {
                budgets
                    .par_iter()
                    .filter(|&&b| cut_at(i, b))
                    .map(|&b| {
                        let m = candidate(i, b);
                        CurveEntry {
                            budget: b,
                            vertices: m.vertex_count(),
                            gain: gain(m, &w.vis[i], &w.hidden[i]) / samples,
                        }
                    })
                    .collect()
            })
            .collect();
        let points: Vec<Vec<CurvePoint>> = curves
            .iter()
            .map(|c| {
                c.iter()
                    .map(|e| CurvePoint {
                        vertices: e.vertices,
                        gain: e.gain,
                    })
                    .collect()
            })
            .collect();
        let pick = allocate(&points, avail)
            .ok_or_else(|| too_small(scene, total, fixed + 4 * free.len()))?;
        let mut choice = vec![None; layers.len()];
        for (k, &i) in free.iter().enumerate() {
            choice[i] = Some(curves[k][pick[k]].budget);
        }
        // a choice already scored (the even spread, or the last round's
        // when this round repeats it) is not rendered again
        let s = match scored.iter().find(|(c, _)| *c == choice) {
            Some((_, s)) => s.clone(),
            None => score(&choice),
        };
        scored.push((choice.clone(), s.clone()));
        rounds.push(s.clone());
        if best.as_ref().is_none_or(|b| s.fragments < b.0.fragments) {
            best = Some((s, choice.clone(), curves));
        }
        if choice == reference {
            break; // the next round would repeat this one
        }
        reference = choice;
    }
    let (allocated, choice, curves) = best.expect("at least one round");
    let meshes: Vec<LayerMesh> = assign(&choice).into_iter().cloned().collect();
    let even_meshes = assign(&even_choice);
    let layers_out = (0..layers.len())
        .map(|i| LayerChoice {
            name: layers[i].spec.name.clone(),
            budget: choice[i],
            vertices: meshes[i].vertex_count(),
            even_budget: even_choice[i],
            even_vertices: even_meshes[i].vertex_count(),
            curve: free
                .iter()
                .position(|&f| f == i)
                .map(|k| curves[k].clone())
                .unwrap_or_default(),
        })
        .collect();
    Ok(AllocationOutcome {
        report: AllocationReport {
            vertex_total: total,
            layers: layers_out,
            saved_vs_even: even_score.fragments - allocated.fragments,
            allocated,
            even: even_score,
            rounds,
        },
        meshes,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::alpha::AlphaMap;
    use crate::cut::cut_layer;
    use crate::scene::file::LayerSpec;
    use crate::scene::prepare::LayerAlpha;
    use crate::settings::CutSettings;
    use std::sync::Arc;

    /// An alpha map from a function of the texel centre.
    fn map(w: u32, h: u32, f: impl Fn(f64, f64) -> f64) -> AlphaMap {
        let a = (0..w * h)
            .map(|i| {
                let (x, y) = ((i % w) as f64 + 0.5, (i / w) as f64 + 0.5);
                (255.0 * f(x, y).clamp(0.0, 1.0)).round() as u8
            })
            .collect();
        AlphaMap::from_raw(w, h, a)
    }

    fn layer(
        name: &str,
        m: AlphaMap,
        position: [f64; 2],
        parallax: f64,
        fill_width: bool,
    ) -> Layer {
        let settings = CutSettings {
            budget: 8,
            ..Default::default()
        };
        let mesh = cut_layer(&m, name, &settings).mesh;
        Layer {
            spec: LayerSpec {
                name: name.into(),
                image: format!("{name}.png").into(),
                mesh: MeshSource::Cut(settings),
                position,
                scale: 1.0,
                parallax,
                fill_width,
            },
            mesh,
            alpha: Some(Arc::new(LayerAlpha::Png(m))),
            notes: Vec::new(),
        }
    }

    /// At scale 1 and whole-pixel placements, texel centres are pixel
    /// centres, so the model's gain difference between two cuts of a layer
    /// must equal the change of the scene's split fragments when only that
    /// layer's cut changes, as rendered.
    #[test]
    fn the_gain_model_is_exact_at_whole_pixel_placements() {
        let back = map(96, 64, |_, y| (y - 20.0) / 8.0);
        let blob = map(48, 40, |x, y| {
            let r = ((x - 24.0).powi(2) + (y - 20.0).powi(2)).sqrt();
            (18.0 - r) / 3.0
        });
        let frame = map(40, 32, |x, y| {
            let edge = x.min(40.0 - x).min(y).min(32.0 - y);
            if edge < 2.0 {
                edge / 2.0
            } else if edge < 8.0 {
                1.0
            } else {
                0.0
            }
        });
        let layers = vec![
            layer("back", back, [0.0, 0.0], 0.25, true),
            layer("blob", blob, [20.0, 10.0], 0.5, false),
            layer("frame", frame, [30.0, 20.0], 1.0, false),
        ];
        let scene = Scene {
            path: "t.scene.json".into(),
            viewport: [96, 64],
            travel: 16.0,
            samples: 3,
            layers: layers.iter().map(|l| l.spec.clone()).collect(),
        };
        let reference: Vec<&LayerMesh> = layers.iter().map(|l| &l.mesh).collect();
        let w = weights(&scene, &layers, &reference);
        let cams = scene.camera_positions();
        for i in [1, 2] {
            let cuts: Vec<LayerMesh> = [4, 6, 16, 64]
                .iter()
                .map(|&budget| {
                    let s = CutSettings {
                        budget,
                        ..Default::default()
                    };
                    cut_layer(layers[i].alpha.as_ref().unwrap().level0(), "x", &s).mesh
                })
                .collect();
            let exact: Vec<f64> = cuts
                .iter()
                .map(|m| {
                    let mut meshes = reference.clone();
                    meshes[i] = m;
                    mean_fragments(
                        Strategy::Split,
                        &scene.layers,
                        &meshes,
                        scene.viewport,
                        &cams,
                    )
                })
                .collect();
            let model: Vec<f64> = cuts
                .iter()
                .map(|m| gain(m, &w.vis[i], &w.hidden[i]) / cams.len() as f64)
                .collect();
            for k in 1..cuts.len() {
                let d_exact = exact[0] - exact[k];
                let d_model = model[k] - model[0];
                assert!(
                    (d_exact - d_model).abs() < 1e-9,
                    "layer {i}, cut {k}: exact {d_exact} vs model {d_model}"
                );
            }
            // and the cuts do differ, or the test would show nothing
            assert!(exact.iter().any(|&e| e != exact[0]), "layer {i}: {exact:?}");
        }
    }
}
