//! The transparent padding around a region, against the filter's reach.
//!
//! A sample drawn near a region's edge reads texels beyond it: bilinear at
//! level 0 reaches half a texel out, and each mip level l adds 2^(l-1)
//! texels (a level-l texel averages a 2^l block, and bilinear at level l
//! reaches half of it). When a visible texel of a neighbour lies within
//! that reach, its colour bleeds into the region's own visible edge,
//! whatever mesh is drawn: only more padding in the sheet helps. The
//! padding found on a side is the number of lines of transparent texels
//! (alpha below `visible_min`) between the rectangle and the nearest
//! visible texel beyond it, over the rectangle's span widened by the reach
//! (the corners count); the sheet's edge (without wrapping) is no
//! neighbour: clamping reads the region's own edge texels.
//!
//! The bleeding happens in the texture the GPU samples: with a shipped
//! texture given for the sheet's PNG, a texel counts as visible when the
//! PNG or the texture's decoded level 0 shows it (block compression can
//! leave alpha in a PNG's transparent padding), and a side whose padding
//! is shorter in the texture says so beside the PNG's. The reach is the
//! box rule's from level 0 at every mip level; a texture's own higher
//! levels are not searched for padding.

use super::regions::{Rect, RegionKind, SheetRegion};
use crate::alpha::AlphaMap;
use crate::settings::{CutSettings, FilterMode, Wrap};

/// How far, in texels, a sample may read beyond the texel it is drawn
/// over: bilinear 1/2 + sum over levels 1..=L of 2^(l-1) = 2^L - 1/2;
/// nearest 2^L - 1 (a level-l texel averages an aligned 2^l block).
pub fn reach(settings: &CutSettings) -> f64 {
    let levels = 2f64.powi(settings.filter.mip_levels as i32);
    match settings.filter.mode {
        FilterMode::Bilinear => levels - 0.5,
        FilterMode::Nearest => levels - 1.0,
    }
}

/// The four sides, in the order [`padding_around`] reports them.
pub const SIDES: [&str; 4] = ["left", "top", "right", "bottom"];

/// Transparent lines beyond each side of `rect` (left, top, right,
/// bottom), counted up to `cap`: `None` where the sheet's edge comes first
/// (no neighbour), `Some(cap)` meaning `cap` or more.
pub fn padding_around(
    sheet: &AlphaMap,
    rect: Rect,
    visible_min: u8,
    wrap: Wrap,
    cap: u32,
) -> [Option<u32>; 4] {
    let (w, h) = (sheet.width as i64, sheet.height as i64);
    let (wrap_x, wrap_y) = match wrap {
        Wrap::None => (false, false),
        Wrap::X => (true, false),
        Wrap::Y => (false, true),
        Wrap::Xy => (true, true),
    };
    // texel (x, y) visible, with wrapping; None outside a clamped edge
    let visible = |x: i64, y: i64| -> Option<bool> {
        let x = if wrap_x { x.rem_euclid(w) } else { x };
        let y = if wrap_y { y.rem_euclid(h) } else { y };
        if x < 0 || y < 0 || x >= w || y >= h {
            return None;
        }
        Some(sheet.get(x as u32, y as u32) >= visible_min)
    };
    let (x0, y0) = (rect.x as i64, rect.y as i64);
    let (x1, y1) = (x0 + rect.w as i64, y0 + rect.h as i64);
    let c = cap as i64;
    let mut out = [None; 4];
    for (side, slot) in out.iter_mut().enumerate() {
        let mut found = Some(cap);
        for k in 0..c {
            // line k beyond the side, over the span widened by the cap
            let line: Vec<(i64, i64)> = match side {
                0 => (y0 - c..y1 + c).map(|y| (x0 - 1 - k, y)).collect(),
                1 => (x0 - c..x1 + c).map(|x| (x, y0 - 1 - k)).collect(),
                2 => (y0 - c..y1 + c).map(|y| (x1 + k, y)).collect(),
                _ => (x0 - c..x1 + c).map(|x| (x, y1 + k)).collect(),
            };
            // the line itself beyond a clamped edge: no neighbour there
            let (lx, ly) = line[c as usize];
            if visible(lx, ly).is_none()
                && ((side % 2 == 0 && !wrap_x) || (side % 2 == 1 && !wrap_y))
            {
                found = if k == 0 { None } else { Some(cap) };
                break;
            }
            if line.iter().any(|&(x, y)| visible(x, y) == Some(true)) {
                found = Some(k as u32);
                break;
            }
        }
        *slot = found;
    }
    out
}

/// The padding warnings of a region (each frame of an animation), empty
/// when every side's padding reaches the filter's reach. `sheet` is the
/// alpha the sheet is cut from (its PNG, or a texture sheet's level 0);
/// `shipped`, the level 0 of a texture shipped for that PNG, whose visible
/// texels count too.
pub fn warnings(
    sheet: &AlphaMap,
    shipped: Option<&AlphaMap>,
    region: &SheetRegion,
    settings: &CutSettings,
) -> Vec<String> {
    let need = reach(settings);
    let cap = need.ceil() as u32;
    let frames = match &region.kind {
        RegionKind::Frames(f) => f.clone(),
        _ => vec![region.rect],
    };
    let (min, wrap) = (settings.alpha.visible_min, settings.wrap);
    let mut out = Vec::new();
    for (k, f) in frames.iter().enumerate() {
        let pad = padding_around(sheet, *f, min, wrap, cap);
        let shipped_pad = shipped.map(|t| padding_around(t, *f, min, wrap, cap));
        let short: Vec<String> = (0..4)
            .filter_map(|i| {
                let (p, t) = (pad[i], shipped_pad.map(|s| s[i]));
                // the padding the GPU samples: the fewer lines of the two
                let n = match (p, t.flatten()) {
                    (Some(a), Some(b)) => a.min(b),
                    (a, b) => a.or(b)?,
                };
                if n as f64 >= need {
                    return None;
                }
                let side = SIDES[i];
                Some(match p {
                    Some(a) if a > n => {
                        let png = match a == cap {
                            true => format!("at least {a}"),
                            false => a.to_string(),
                        };
                        format!("{n} texel(s) on the {side} in the shipped texture's level 0 ({png} in the PNG)")
                    }
                    _ => format!("{n} texel(s) on the {side}"),
                })
            })
            .collect();
        if short.is_empty() {
            continue;
        }
        let what = if frames.len() > 1 {
            format!("frame {k}: ")
        } else {
            String::new()
        };
        let filter = match settings.filter.mode {
            FilterMode::Bilinear => "bilinear",
            FilterMode::Nearest => "nearest",
        };
        out.push(format!(
            "{what}padding of {}, where {filter} sampling up to mip level {} reaches {need} texel(s) beyond the edge: a neighbour's colours bleed into this region's edge whatever mesh is drawn; pack the sheet with at least {cap} transparent texel(s) around it",
            short.join(", "),
            settings.filter.mip_levels,
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::Filter;

    fn bilinear(mip_levels: u32) -> CutSettings {
        CutSettings {
            filter: Filter {
                mode: FilterMode::Bilinear,
                mip_levels,
            },
            ..CutSettings::default()
        }
    }

    /// The reach as the trade states it (common practice, no source):
    /// half a texel at level 0, 2^(l-1) more per level.
    #[test]
    fn reach_adds_per_level() {
        assert_eq!(reach(&bilinear(0)), 0.5);
        assert_eq!(reach(&bilinear(1)), 1.5);
        assert_eq!(reach(&bilinear(2)), 3.5);
        let nearest = CutSettings {
            filter: Filter {
                mode: FilterMode::Nearest,
                mip_levels: 0,
            },
            ..CutSettings::default()
        };
        assert_eq!(reach(&nearest), 0.0);
    }

    #[test]
    fn counts_transparent_lines_to_the_neighbour() {
        // 10 x 3: region columns 0..3, a neighbour at column 5 (2 lines of
        // padding to its right), the sheet's edge on the left
        let mut a = vec![0u8; 30];
        for y in 0..3 {
            for x in 0..3 {
                a[y * 10 + x] = 255;
            }
            a[y * 10 + 5] = 255;
        }
        let sheet = AlphaMap::from_raw(10, 3, a);
        let r = Rect::from_array([0, 0, 3, 3]);
        let p = padding_around(&sheet, r, 1, Wrap::None, 4);
        assert_eq!(p, [None, None, Some(2), None]);
        // wrapping along x: the neighbour is 4 lines away on the left
        let p = padding_around(&sheet, r, 1, Wrap::X, 8);
        assert_eq!(p[0], Some(4));
    }
}
