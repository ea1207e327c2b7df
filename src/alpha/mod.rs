//! Alpha analysis: the layer's alpha channel, texel classes, and the two
//! regions every mesh is held to.
//!
//! * [`AlphaMap`] is the alpha channel alone, 8 bits a texel (the decoded
//!   image is dropped once it is extracted).
//! * [`Regions::analyze`] builds, on the half-texel grid ([`Mask`]), the
//!   **safe-opaque** region (where the opaque mesh may lie) and the
//!   **must-cover** region (what opaque + blended must cover) for a filter,
//!   its mip levels and the addressing mode.
//! * [`Sampled`] extends the analysis to what ships: a compressed texture's
//!   decoded levels, each classified by its own texels (a level texel spans
//!   W / w_l x H / h_l level-0 texels; bilinear erodes or dilates by half of
//!   it), alone or together with the source's block levels (the regions
//!   then hold for both: intersected safe, united must-cover).
//!
//! Invariants: `safe` ⊂ opaque texels ⊂ visible texels ⊂ `cover` (as long as
//! `visible_min <= opaque_min`); `cover` lies inside the image rectangle.

use crate::mask::{Mask, RowRuns};
use crate::settings::{AlphaThresholds, CutSettings, FilterMode};
use runs::Row;

#[cfg(test)]
mod reference;
pub mod runs;
use image::DynamicImage;

/// The alpha channel of a layer, row-major, one byte a texel.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct AlphaMap {
    /// Texels per row.
    pub width: u32,
    /// Rows.
    pub height: u32,
    /// Alpha of texel (x, y) at `y * width + x`.
    pub alpha: Vec<u8>,
}

impl AlphaMap {
    /// Extracts alpha the way the `image` crate converts to 8-bit RGBA:
    /// images without alpha are fully opaque, 16-bit alpha is scaled to 8
    /// bits, palette images use their tRNS transparency (the PNG decoder
    /// expands it).
    pub fn from_image(image: &DynamicImage) -> AlphaMap {
        let (width, height) = (image.width(), image.height());
        let alpha = if !image.color().has_alpha() {
            vec![255u8; width as usize * height as usize]
        } else {
            match image {
                DynamicImage::ImageRgba8(buf) => buf.pixels().map(|p| p.0[3]).collect(),
                DynamicImage::ImageLumaA8(buf) => buf.pixels().map(|p| p.0[1]).collect(),
                other => other.to_rgba8().pixels().map(|p| p.0[3]).collect(),
            }
        };
        AlphaMap {
            width,
            height,
            alpha,
        }
    }

    /// A map from raw alpha values (row-major, `width * height` bytes).
    pub fn from_raw(width: u32, height: u32, alpha: Vec<u8>) -> AlphaMap {
        assert_eq!(
            alpha.len(),
            width as usize * height as usize,
            "alpha length must be width * height"
        );
        AlphaMap {
            width,
            height,
            alpha,
        }
    }

    /// Alpha of texel (x, y).
    pub fn get(&self, x: u32, y: u32) -> u8 {
        self.alpha[y as usize * self.width as usize + x as usize]
    }

    /// Counts of (opaque, partial, transparent) texels (counted in bands
    /// of rows on rayon's pool; sums, so the same whatever the threads).
    pub fn class_counts(&self, t: AlphaThresholds) -> (u64, u64, u64) {
        use rayon::prelude::*;
        let band = (self.width as usize).max(1) * BAND_ROWS as usize;
        let (o, v) = self
            .alpha
            .par_chunks(band)
            .map(|texels| {
                let (mut o, mut v) = (0u64, 0u64);
                for &a in texels {
                    o += (a >= t.opaque_min) as u64;
                    v += (a >= t.visible_min) as u64;
                }
                (o, v)
            })
            .reduce(|| (0, 0), |a, b| (a.0 + b.0, a.1 + b.1));
        // with opaque_min >= visible_min (validated) every opaque texel is
        // visible; otherwise no texel is partial, as in the definition above
        let all = self.alpha.len() as u64;
        let partial = v.saturating_sub(o);
        (o, partial, all - o - partial)
    }
}

/// What the GPU samples a layer from, for the regions: the source alpha
/// (the PNG), whose mip levels the block rules build, and/or the decoded
/// levels of the texture that ships (a KTX 2.0 or `.astc` file). With both,
/// the regions hold for both: safe where both are safe, must-cover where
/// either must be covered.
#[derive(Clone, Copy, Debug)]
pub struct Sampled<'a> {
    /// The source's alpha: levels 0..=`mip_levels` by the block rules
    /// ([`Regions::analyze`]); `None` when only the shipped levels count.
    pub source: Option<&'a AlphaMap>,
    /// The shipped texture's decoded levels in use, level 0 first (all of
    /// them are used: pass levels 0..=`mip_levels`). Level 0 has the
    /// layer's size; level l's width and height must divide level 0's, so
    /// a level-l texel spans whole level-0 texels (`sx` x `sy` of them).
    pub shipped: &'a [AlphaMap],
}

impl<'a> Sampled<'a> {
    /// The source alone (today's PNG analysis).
    pub fn source(map: &'a AlphaMap) -> Sampled<'a> {
        Sampled {
            source: Some(map),
            shipped: &[],
        }
    }

    /// The map the layer's size and texel classes come from: the source, or
    /// else the shipped level 0.
    pub fn level0(&self) -> &'a AlphaMap {
        self.source
            .or(self.shipped.first())
            .expect("a source or a shipped level")
    }

    /// Checks that the shipped levels can be analyzed with the source: level
    /// 0 the source's size, every level's size dividing level 0's.
    pub fn validate(&self) -> Result<(), SampledError> {
        let Some(first) = self.shipped.first() else {
            return match self.source {
                Some(_) => Ok(()),
                None => Err(SampledError::Nothing),
            };
        };
        let (w, h) = (first.width, first.height);
        if let Some(s) = self.source {
            if (s.width, s.height) != (w, h) {
                return Err(SampledError::Size {
                    texture: [w, h],
                    layer: [s.width, s.height],
                });
            }
        }
        for (l, m) in self.shipped.iter().enumerate() {
            if m.width == 0 || m.height == 0 || w % m.width != 0 || h % m.height != 0 {
                return Err(SampledError::Level {
                    level: l,
                    size: [m.width, m.height],
                    base: [w, h],
                });
            }
        }
        Ok(())
    }
}

/// Why a layer and its shipped levels cannot be analyzed together.
#[derive(Clone, Copy, Debug, PartialEq, Eq, thiserror::Error)]
pub enum SampledError {
    /// Neither was given.
    #[error("neither a source nor a shipped level was given")]
    Nothing,
    /// Level 0 is not the layer's size.
    #[error("the texture is {} x {} texels but the layer is {} x {}", texture[0], texture[1], layer[0], layer[1])]
    Size {
        /// Level 0's size.
        texture: [u32; 2],
        /// The layer's size.
        layer: [u32; 2],
    },
    /// A level's size does not divide level 0's.
    #[error("mip level {level} is {} x {} texels, which does not divide level 0's {} x {}", size[0], size[1], base[0], base[1])]
    Level {
        /// The mip level.
        level: usize,
        /// Its size.
        size: [u32; 2],
        /// Level 0's size.
        base: [u32; 2],
    },
}

/// Areas of a layer's classes and regions, in texels.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct RegionStats {
    /// Texels with alpha at least `opaque_min`.
    pub opaque_texels: u64,
    /// Visible texels that are not opaque.
    pub partial_texels: u64,
    /// Texels with alpha below `visible_min`.
    pub transparent_texels: u64,
    /// Area of the safe-opaque region, texels.
    pub safe_opaque_area: f64,
    /// Area of the must-cover region, texels.
    pub must_cover_area: f64,
}

/// The two regions of the contract on the half-texel grid.
#[derive(Clone, Debug)]
pub struct Regions {
    /// Where the opaque mesh may lie.
    pub safe: Mask,
    /// What the two meshes must cover.
    pub cover: Mask,
    /// Their areas and the texel classes.
    pub stats: RegionStats,
}

impl Regions {
    /// Builds the safe-opaque and must-cover regions for `settings`.
    ///
    /// Level l's blocks are classified (opaque: all texels opaque; visible:
    /// any visible), expanded to the half grid, then for `bilinear` eroded
    /// (a min filter) or dilated (a max filter) by 2^(l-1) texels, i.e.
    /// 2^l half cells, with clamp or repeat addressing beyond the edges.
    pub fn analyze(map: &AlphaMap, settings: &CutSettings) -> Regions {
        Regions::from_runs(&analyze_runs(map, settings))
    }
    /// The regions as masks from their runs ([`analyze_runs`]).
    pub fn from_runs((safe, cover, stats): &(RowRuns, RowRuns, RegionStats)) -> Regions {
        Regions {
            safe: safe.to_mask(),
            cover: cover.to_mask(),
            stats: *stats,
        }
    }
}

/// The safe-opaque and must-cover regions as runs, built side by side,
/// with their areas and the texel classes.
pub fn analyze_runs(map: &AlphaMap, settings: &CutSettings) -> (RowRuns, RowRuns, RegionStats) {
    analyze_sampled_runs(Sampled::source(map), settings)
}

/// [`analyze_runs`] for what the GPU samples: the source's block levels
/// and/or a shipped texture's decoded levels ([`Sampled`], which must
/// [validate](Sampled::validate)).
pub fn analyze_sampled_runs(
    sampled: Sampled,
    settings: &CutSettings,
) -> (RowRuns, RowRuns, RegionStats) {
    let ((safe, safe_area), (cover, cover_area)) = rayon::join(
        || safe_opaque_sampled(sampled, settings),
        || must_cover_sampled(sampled, settings),
    );
    let stats = RegionStats::new(sampled.level0(), settings.alpha, safe_area, cover_area);
    (safe, cover, stats)
}

impl RegionStats {
    /// The texel classes of `map` under `t`, with the regions' areas.
    pub fn new(
        map: &AlphaMap,
        t: AlphaThresholds,
        safe_opaque_area: f64,
        must_cover_area: f64,
    ) -> Self {
        let (opaque_texels, partial_texels, transparent_texels) = map.class_counts(t);
        RegionStats {
            opaque_texels,
            partial_texels,
            transparent_texels,
            safe_opaque_area,
            must_cover_area,
        }
    }
}

/// The safe-opaque region alone (as [`Regions::analyze`] builds it) and its
/// area in texels, for a caller that holds one region at a time.
pub fn safe_opaque(map: &AlphaMap, settings: &CutSettings) -> (RowRuns, f64) {
    safe_opaque_sampled(Sampled::source(map), settings)
}

/// [`safe_opaque`] for what the GPU samples ([`Sampled`]): the intersection
/// over the source's block levels and the shipped levels.
pub fn safe_opaque_sampled(sampled: Sampled, settings: &CutSettings) -> (RowRuns, f64) {
    let runs = region(sampled, settings, settings.alpha.opaque_min, true);
    let area = runs.cells_set() as f64 * 0.25;
    (runs, area)
}

/// The must-cover region alone (as [`Regions::analyze`] builds it) and its
/// area in texels.
pub fn must_cover(map: &AlphaMap, settings: &CutSettings) -> (RowRuns, f64) {
    must_cover_sampled(Sampled::source(map), settings)
}

/// [`must_cover`] for what the GPU samples ([`Sampled`]): the union over
/// the source's block levels and the shipped levels.
pub fn must_cover_sampled(sampled: Sampled, settings: &CutSettings) -> (RowRuns, f64) {
    let runs = region(sampled, settings, settings.alpha.visible_min, false);
    let area = runs.cells_set() as f64 * 0.25;
    (runs, area)
}

/// Grid rows per band of the final pass of [`region`], each band run as
/// one task (a few tasks a thread on big layers, one on small ones).
const BAND_ROWS: u32 = 256;

/// One level's cell rows, filtered along the row, and how many level-0
/// texels a level texel spans vertically (`sy`): cell row `y` reads level
/// row `y / (2 sy)`, and bilinear's vertical window reaches `sy` cells
/// (half a level texel).
struct LevelRows {
    rows: Vec<Row>,
    sy: u32,
}

/// The source's levels 0..=`mip_levels` by the block rules: level l's
/// aligned 2^l x 2^l blocks (edge blocks partial) of level-0 texels, set
/// when every texel (`all`) or any texel reaches `min`, as cells, eroded
/// (`all`) or dilated along the row by 2^l cells under bilinear. Rows are
/// independent, so they are built in parallel and collected in order.
fn block_levels(map: &AlphaMap, settings: &CutSettings, min: u8, all: bool) -> Vec<LevelRows> {
    use rayon::prelude::*;
    let w = map.width as usize;
    let cw = 2 * map.width;
    let bilinear = settings.filter.mode == FilterMode::Bilinear;
    let texel_rows: Vec<Row> = map
        .alpha
        .par_chunks_exact(w)
        .map(|texels| {
            let mut r = Row::new();
            runs::threshold(texels, min, &mut r);
            r
        })
        .collect();
    (0..=settings.filter.mip_levels)
        .map(|level| {
            let s = 1usize << level;
            let rows = texel_rows
                .par_chunks(s)
                .map_init(Row::new, |scratch, rows| {
                    let mut acc = rows[0].clone();
                    for r in &rows[1..] {
                        runs::combine(&mut acc, r, all, scratch);
                    }
                    let mut cells = Row::new();
                    runs::blocks_to_cells(&acc, s as u32, map.width, all, &mut cells);
                    if bilinear {
                        // 2^(l-1) texels = 2^l half cells
                        runs::filter_row(&cells, s as u32, cw, settings.wrap.x(), all, &mut acc);
                        acc
                    } else {
                        cells
                    }
                })
                .collect();
            LevelRows { rows, sy: s as u32 }
        })
        .collect()
}

/// A shipped level's decoded texels (`level`, each spanning `sx` x `sy`
/// level-0 texels of a `w0`-wide layer) set where they reach `min`, as
/// cells (2 sx a texel), eroded (`all`) or dilated along the row by `sx`
/// cells (half a level texel) under bilinear.
fn shipped_level(
    level: &AlphaMap,
    w0: u32,
    h0: u32,
    settings: &CutSettings,
    min: u8,
    all: bool,
) -> LevelRows {
    use rayon::prelude::*;
    let (sx, sy) = (w0 / level.width, h0 / level.height);
    let cw = 2 * w0;
    let bilinear = settings.filter.mode == FilterMode::Bilinear;
    let rows = level
        .alpha
        .par_chunks_exact(level.width as usize)
        .map_init(Row::new, |texels, row| {
            runs::threshold(row, min, texels);
            let cells: Row = texels
                .iter()
                .map(|&[a, b]| [2 * sx * a, 2 * sx * b])
                .collect();
            if bilinear {
                let mut out = Row::new();
                runs::filter_row(&cells, sx, cw, settings.wrap.x(), all, &mut out);
                out
            } else {
                cells
            }
        })
        .collect();
    LevelRows { rows, sy }
}

/// The safe-opaque region (`all`: every texel of a block at least `min`)
/// or the must-cover region (`!all`: any texel), and its set cells, built
/// row by row as runs ([`runs`]), over every level of what is sampled:
/// intersected (`all`) or united.
///
/// Every step maps rows to rows independently (texel rows, level rows,
/// then bands of grid rows, each band with its own memo of the last
/// window), so the steps run in parallel on rayon's pool and the rows are
/// assembled in order: the result is the same whatever the thread count.
fn region(sampled: Sampled, settings: &CutSettings, min: u8, all: bool) -> RowRuns {
    use rayon::prelude::*;
    let map = sampled.level0();
    let (w, h) = (map.width as usize, map.height as usize);
    let (cw, ch) = (2 * map.width, 2 * map.height);
    let mut out = RowRuns::new(cw as usize);
    if w == 0 || h == 0 {
        for _ in 0..ch {
            out.push_row(&[]);
        }
        return out;
    }
    let bilinear = settings.filter.mode == FilterMode::Bilinear;
    // per level, its rows as cells, filtered along the row
    let mut levels: Vec<LevelRows> = match sampled.source {
        Some(source) => block_levels(source, settings, min, all),
        None => Vec::new(),
    };
    for level in sampled.shipped {
        levels.push(shipped_level(
            level, map.width, map.height, settings, min, all,
        ));
    }
    let bands: Vec<(u32, u32)> = (0..ch)
        .step_by(BAND_ROWS as usize)
        .map(|y0| (y0, (y0 + BAND_ROWS).min(ch)))
        .collect();
    let rows: Vec<Vec<Row>> = bands
        .par_iter()
        .map(|&(y0, y1)| grid_rows(&levels, y0..y1, ch, settings, bilinear, all))
        .collect();
    for row in rows.iter().flatten() {
        out.push_row(row);
    }
    out
}

/// Grid rows `ys` of a region from its levels' filtered rows: per row,
/// each level's window of level rows combined (down the columns for
/// bilinear), then the levels combined.
fn grid_rows(
    levels: &[LevelRows],
    ys: std::ops::Range<u32>,
    ch: u32,
    settings: &CutSettings,
    bilinear: bool,
    all: bool,
) -> Vec<Row> {
    let mut scratch = Row::new();
    // per level, the last window's level rows and their combination
    let mut cache: Vec<([usize; 4], Row)> = vec![([usize::MAX; 4], Row::new()); levels.len()];
    let mut acc = Row::new();
    let mut out = Vec::with_capacity(ys.len());
    for y in ys {
        for (i, level) in levels.iter().enumerate() {
            let (rows, s) = (&level.rows, level.sy);
            let level_row = |r: u32| (r / (2 * s)) as usize;
            let row: &Row = if !bilinear {
                &rows[level_row(y)]
            } else {
                let [(a0, b0), (a1, b1)] = runs::window_rows(y, s, ch, settings.wrap.y());
                let key = if a1 <= b1 {
                    [level_row(a0), level_row(b0), level_row(a1), level_row(b1)]
                } else {
                    [level_row(a0), level_row(b0), 1, 0]
                };
                let (last, combined) = &mut cache[i];
                if *last != key {
                    *last = key;
                    combined.clone_from(&rows[key[0]]);
                    let more = (key[0] + 1..=key[1]).chain(key[2]..=key[3]);
                    for b in more {
                        runs::combine(combined, &rows[b], all, &mut scratch);
                    }
                }
                &cache[i].1
            };
            if i == 0 {
                acc.clone_from(row);
            } else {
                runs::combine(&mut acc, row, all, &mut scratch);
            }
        }
        out.push(acc.clone());
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::check::regions_for_check;
    use crate::settings::{Filter, Wrap};
    use crate::test_rng::Lcg;

    /// Random cut settings: the filter by `case` (bilinear when even), mip
    /// levels below `mips`, thresholds and addressing drawn from `rnd`.
    fn random_settings(rnd: &mut impl FnMut() -> u32, case: u32, mips: u32) -> CutSettings {
        CutSettings {
            budget: 64,
            filter: Filter {
                mode: if case % 2 == 0 {
                    FilterMode::Bilinear
                } else {
                    FilterMode::Nearest
                },
                mip_levels: rnd() % mips,
            },
            alpha: AlphaThresholds {
                opaque_min: 200 + (rnd() % 56) as u8,
                visible_min: 1 + (rnd() % 100) as u8,
            },
            wrap: [Wrap::None, Wrap::X, Wrap::Y, Wrap::Xy][(rnd() % 4) as usize],
        }
    }

    /// One texel's alpha: opaque with `density` percent, partial with ten
    /// percent more, else transparent.
    fn noisy_alpha(rnd: &mut impl FnMut() -> u32, density: u32) -> u8 {
        match rnd() % 100 {
            r if r < density => 255,
            r if r < density + 10 => (rnd() % 255) as u8,
            _ => 0,
        }
    }

    /// The builder's separable filters give exactly the regions that the
    /// independent checker derives from the definitions, cell by cell.
    #[test]
    fn regions_match_the_checker_definitions() {
        let mut rng = Lcg(99);
        let mut rnd = move || rng.next() as u32;
        for case in 0..300 {
            let (w, h) = (1 + rnd() % 19, 1 + rnd() % 17);
            let density = rnd() % 100;
            let alpha: Vec<u8> = (0..w * h).map(|_| noisy_alpha(&mut rnd, density)).collect();
            let map = AlphaMap::from_raw(w, h, alpha);
            let settings = random_settings(&mut rnd, case, 4);
            let ours = Regions::analyze(&map, &settings);
            let (s, c, gw, gh) =
                regions_for_check(&map, settings.filter, settings.alpha, settings.wrap);
            assert_eq!((gw, gh), (ours.safe.width, ours.safe.height));
            for i in 0..gw * gh {
                assert_eq!(
                    s[i],
                    ours.safe.cells[i] != 0,
                    "case {case}: safe cell {i} differs ({settings:?})"
                );
                assert_eq!(
                    c[i],
                    ours.cover.cells[i] != 0,
                    "case {case}: cover cell {i} differs ({settings:?})"
                );
            }
        }
    }

    /// A layer tall enough for several bands of the final pass: the runs
    /// equal the cell-by-cell reference on one thread and on three, at
    /// every filter, with mip levels and with wrapping down the columns
    /// (where a band's first window reaches rows of other bands).
    #[test]
    fn bands_give_the_reference_regions_whatever_the_threads() {
        let mut rng = Lcg(77);
        let mut rnd = move || rng.next() as u32;
        let (w, h) = (37, 3 * BAND_ROWS / 2 + 29);
        let alpha: Vec<u8> = (0..w * h).map(|_| noisy_alpha(&mut rnd, 80)).collect();
        let map = AlphaMap::from_raw(w, h, alpha);
        let pool = |n| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(n)
                .build()
                .unwrap()
        };
        for case in 0..6 {
            let mut settings = random_settings(&mut rnd, case, 4);
            if case < 2 {
                settings.wrap = Wrap::Xy;
            }
            let t = settings.alpha;
            for (min, all) in [(t.opaque_min, true), (t.visible_min, false)] {
                let theirs = reference::region(&map, &settings, min, all);
                for threads in [1, 3] {
                    let ours = pool(threads)
                        .install(|| region(Sampled::source(&map), &settings, min, all));
                    assert_eq!(
                        ours.to_mask(),
                        theirs,
                        "case {case}, {threads} threads: all={all} {settings:?}"
                    );
                }
            }
            let counts = pool(3).install(|| map.class_counts(t));
            let one = pool(1).install(|| map.class_counts(t));
            assert_eq!(counts, one);
            assert_eq!(counts.0 + counts.1 + counts.2, (w * h) as u64);
        }
    }

    /// The run-based analysis gives exactly the cell-by-cell transcription
    /// of the definition ([`reference`]) on random layers, shapes from 1 x 1
    /// to ones narrower than their mip blocks, every filter, up to five mip
    /// levels, every addressing mode, and reports the set cells it built.
    #[test]
    fn runs_match_the_cell_by_cell_reference() {
        let mut rng = Lcg(2024);
        let mut rnd = move || rng.next() as u32;
        for case in 0..600 {
            let (w, h) = match case % 5 {
                0 => (1, 1 + rnd() % 40),
                1 => (1 + rnd() % 40, 1),
                _ => (1 + rnd() % 37, 1 + rnd() % 29),
            };
            let density = rnd() % 100;
            let blobs = case % 3 == 0;
            let alpha: Vec<u8> = (0..w * h)
                .map(|i| {
                    if blobs {
                        // large shapes: long runs and repeated rows
                        let (x, y) = (i % w, i / w);
                        if (x / 5 + y / 4) % 3 == 0 {
                            0
                        } else {
                            255
                        }
                    } else {
                        noisy_alpha(&mut rnd, density)
                    }
                })
                .collect();
            let map = AlphaMap::from_raw(w, h, alpha);
            let settings = random_settings(&mut rnd, case, 6);
            let t = settings.alpha;
            for (min, all) in [(t.opaque_min, true), (t.visible_min, false)] {
                let ours = region(Sampled::source(&map), &settings, min, all);
                let theirs = reference::region(&map, &settings, min, all);
                assert_eq!(
                    ours.to_mask(),
                    theirs,
                    "case {case}: {w}x{h} all={all} {settings:?}"
                );
                assert_eq!(ours.cells_set(), theirs.count() as u64);
            }
        }
    }

    /// Random shipped mip chains (level sizes dividing level 0's, alpha
    /// drawn level by level, not derived from level 0), alone and with the
    /// source: the builder's regions equal the checker's, which it derives
    /// from the sampling rule with its own code, cell for cell.
    #[test]
    fn shipped_levels_match_the_checker_definitions() {
        use crate::check::regions_for_check_sampled;
        let mut rng = Lcg(1616);
        let mut rnd = move || rng.next() as u32;
        for case in 0..400 {
            let (w, h) = (1 + rnd() % 24, 1 + rnd() % 20);
            let density = rnd() % 100;
            let settings = random_settings(&mut rnd, case, 4);
            // level l: W >> l by H >> l (at least 1), or any divisor
            let levels: Vec<AlphaMap> = (0..=settings.filter.mip_levels)
                .map(|l| {
                    let (lw, lh) = if case % 3 == 0 && l > 0 {
                        let divisors =
                            |n: u32| (1..=n).filter(|d| n.is_multiple_of(*d)).collect::<Vec<_>>();
                        let (dw, dh) = (divisors(w), divisors(h));
                        (
                            dw[(rnd() as usize) % dw.len()],
                            dh[(rnd() as usize) % dh.len()],
                        )
                    } else {
                        ((w >> l).max(1), (h >> l).max(1))
                    };
                    let (lw, lh) = if l == 0 { (w, h) } else { (lw, lh) };
                    let lw = if w % lw == 0 { lw } else { 1 };
                    let lh = if h % lh == 0 { lh } else { 1 };
                    let alpha = (0..lw * lh)
                        .map(|_| noisy_alpha(&mut rnd, density))
                        .collect();
                    AlphaMap::from_raw(lw, lh, alpha)
                })
                .collect();
            let png = AlphaMap::from_raw(
                w,
                h,
                (0..w * h).map(|_| noisy_alpha(&mut rnd, density)).collect(),
            );
            let with_source = case % 2 == 0;
            let sampled = Sampled {
                source: with_source.then_some(&png),
                shipped: &levels,
            };
            sampled.validate().unwrap();
            let t = settings.alpha;
            let (s, c, gw, gh) = regions_for_check_sampled(
                sampled.source,
                &levels,
                settings.filter,
                t,
                settings.wrap,
            );
            for (min, all, theirs) in [(t.opaque_min, true, &s), (t.visible_min, false, &c)] {
                let ours = region(sampled, &settings, min, all).to_mask();
                assert_eq!((ours.width, ours.height), (gw, gh));
                for (i, &cell) in theirs.iter().enumerate() {
                    assert_eq!(
                        cell,
                        ours.cells[i] != 0,
                        "case {case}: {} cell {i} differs ({settings:?}, levels {:?})",
                        if all { "safe" } else { "cover" },
                        levels
                            .iter()
                            .map(|m| (m.width, m.height))
                            .collect::<Vec<_>>()
                    );
                }
            }
        }
    }
}
