//! Cut settings: the vertex budget, the texture filter the layer will be
//! sampled with, the alpha thresholds and the addressing mode.
//!
//! Invariants (enforced by [`CutSettings::validate`]): `budget >= 4`,
//! `visible_min <= opaque_min`, `mip_levels <= 15`.

use serde::{Deserialize, Serialize};

/// How the layer's texture is filtered when drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default, Hash)]
#[serde(rename_all = "lowercase")]
pub enum FilterMode {
    /// Nearest-texel sampling (GL_NEAREST / GL_NEAREST_MIPMAP_NEAREST).
    Nearest,
    /// Bilinear sampling (GL_LINEAR / GL_LINEAR_MIPMAP_*), the default.
    #[default]
    Bilinear,
}

/// The filter the meshes are made safe for.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Hash)]
pub struct Filter {
    /// Nearest or bilinear sampling.
    pub mode: FilterMode,
    /// Highest mip level the layer may be sampled from (0 = no mipmaps).
    pub mip_levels: u32,
}

impl Default for Filter {
    fn default() -> Self {
        Filter {
            mode: FilterMode::Bilinear,
            mip_levels: 0,
        }
    }
}

/// Alpha thresholds, in 8-bit alpha units.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Hash)]
pub struct AlphaThresholds {
    /// A texel is opaque when its alpha is at least this (default 255).
    pub opaque_min: u8,
    /// A texel is visible when its alpha is at least this (default 1).
    pub visible_min: u8,
}

impl Default for AlphaThresholds {
    fn default() -> Self {
        AlphaThresholds {
            opaque_min: 255,
            visible_min: 1,
        }
    }
}

/// Texture addressing: which axes repeat (tiling strips); the others clamp to edge.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default, Hash)]
#[serde(rename_all = "lowercase")]
pub enum Wrap {
    /// No axis repeats: both clamp to the edge texel (the default).
    #[default]
    None,
    /// The texture repeats horizontally (x); y clamps.
    X,
    /// The texture repeats vertically (y); x clamps.
    Y,
    /// The texture repeats on both axes.
    Xy,
}

impl Wrap {
    /// Whether the texture repeats horizontally ([`Wrap::X`] or [`Wrap::Xy`]).
    pub fn x(self) -> bool {
        matches!(self, Wrap::X | Wrap::Xy)
    }
    /// Whether the texture repeats vertically ([`Wrap::Y`] or [`Wrap::Xy`]).
    pub fn y(self) -> bool {
        matches!(self, Wrap::Y | Wrap::Xy)
    }
    /// The name used in files and on the command line: `none`, `x`, `y`, `xy`
    /// (as serialized).
    pub fn as_str(self) -> &'static str {
        match self {
            Wrap::None => "none",
            Wrap::X => "x",
            Wrap::Y => "y",
            Wrap::Xy => "xy",
        }
    }
}

/// Everything that decides a layer's cut.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Hash)]
pub struct CutSettings {
    /// Most vertices the layer's two meshes may use together (shared vertices count once).
    pub budget: usize,
    /// The texture filter and highest mip level the opaque mesh must be safe for.
    pub filter: Filter,
    /// The alpha thresholds from which a texel counts as opaque and as visible.
    pub alpha: AlphaThresholds,
    /// The axes on which the texture repeats.
    pub wrap: Wrap,
}

impl Default for CutSettings {
    fn default() -> Self {
        CutSettings {
            budget: 64,
            filter: Filter::default(),
            alpha: AlphaThresholds::default(),
            wrap: Wrap::None,
        }
    }
}

impl CutSettings {
    /// Checks the settings; the error says what to change.
    pub fn validate(&self) -> Result<(), String> {
        if self.budget < 4 {
            return Err(format!(
                "the vertex budget {} is too small: a mesh needs at least 4 vertices (use --budget 4 or more)",
                self.budget
            ));
        }
        if self.alpha.visible_min > self.alpha.opaque_min {
            return Err(format!(
                "visible-min {} is above opaque-min {}: an opaque texel must also be visible (lower --visible-min or raise --opaque-min)",
                self.alpha.visible_min, self.alpha.opaque_min
            ));
        }
        if self.filter.mip_levels > 15 {
            return Err(format!(
                "{} mip levels is more than any texture has (at most 15)",
                self.filter.mip_levels
            ));
        }
        Ok(())
    }
}
