//! Cut settings: the vertex budget, the texture filter the layer will be
//! sampled with, the alpha thresholds and the addressing mode.
//!
//! Invariants (enforced by [`CutSettings::validate`]): `budget >= 4`,
//! `visible_min <= opaque_min`, `mip_levels <= 15`. Each rule is written
//! once ([`SettingsError::budget`], [`SettingsError::alpha`],
//! [`SettingsError::mip_levels`]) and applied both to whole
//! settings and to [`PartialSettings`] (the keys a settings file, a scene
//! file or the command line gave), so every source refuses the same values
//! with the same typed [`SettingsError`]. Its messages name the setting by
//! its key (`budget`, `mip_levels`, `visible_min`, `opaque_min`, as in the
//! files); the command line adds its flag names itself.
//!
//! Where to add a setting: a field here (in [`CutSettings`] and
//! [`PartialSettings`], with [`PartialSettings::apply`]), its rule in
//! [`SettingsError`], then its flag in the binary's `CutOptions`.

use serde::{Deserialize, Serialize};

/// How the layer's texture is filtered when drawn.
///
/// With the `cli` feature (on by default) it is also the command line's
/// value enum; `value(help)` is the one line `--help` shows per value.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default, Hash)]
#[cfg_attr(feature = "cli", derive(clap::ValueEnum))]
#[serde(rename_all = "lowercase")]
pub enum FilterMode {
    /// Nearest-texel sampling (GL_NEAREST / GL_NEAREST_MIPMAP_NEAREST).
    #[cfg_attr(
        feature = "cli",
        value(help = "The opaque mesh stays inside opaque texels")
    )]
    Nearest,
    /// Bilinear sampling (GL_LINEAR / GL_LINEAR_MIPMAP_*), the default.
    #[default]
    #[cfg_attr(
        feature = "cli",
        value(
            help = "The opaque mesh also stays half a texel (2^(l-1) at mip level l) from any texel that is not opaque"
        )
    )]
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
///
/// With the `cli` feature it is also the command line's value enum.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default, Hash)]
#[cfg_attr(feature = "cli", derive(clap::ValueEnum))]
#[serde(rename_all = "lowercase")]
pub enum Wrap {
    /// No axis repeats: both clamp to the edge texel (the default).
    #[default]
    #[cfg_attr(feature = "cli", value(help = "Both axes clamp to the edge texel"))]
    None,
    /// The texture repeats horizontally (x); y clamps.
    #[cfg_attr(
        feature = "cli",
        value(help = "The texture repeats horizontally (a strip tiled side by side)")
    )]
    X,
    /// The texture repeats vertically (y); x clamps.
    #[cfg_attr(feature = "cli", value(help = "The texture repeats vertically"))]
    Y,
    /// The texture repeats on both axes.
    #[cfg_attr(feature = "cli", value(help = "The texture repeats on both axes"))]
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
    /// Checks the settings: the first rule broken, as a typed error that
    /// names the setting.
    pub fn validate(&self) -> Result<(), SettingsError> {
        SettingsError::budget(self.budget)?;
        SettingsError::alpha(self.alpha.visible_min, self.alpha.opaque_min)?;
        SettingsError::mip_levels(self.filter.mip_levels)
    }

    /// These settings with every key given in `partial` set.
    pub fn with(mut self, partial: &PartialSettings) -> CutSettings {
        partial.apply(&mut self);
        self
    }
}

/// A cut setting out of its range: the one validation of every source
/// (settings file, scene file, command line). The message names the setting
/// by its key and says what is wrong; each front end adds how to change it
/// (a flag, a file key).
#[derive(Clone, Copy, Debug, PartialEq, Eq, thiserror::Error)]
pub enum SettingsError {
    /// `budget` below 4.
    #[error("budget {0}: a mesh needs at least 4 vertices")]
    Budget(usize),
    /// `visible_min` above `opaque_min`.
    #[error("visible_min {visible_min} is above opaque_min {opaque_min}: an opaque texel must also be visible")]
    Alpha {
        /// The visible threshold given.
        visible_min: u8,
        /// The opaque threshold given.
        opaque_min: u8,
    },
    /// `mip_levels` above 15.
    #[error("mip_levels {0} is more than any texture has (at most 15)")]
    MipLevels(u32),
}

impl SettingsError {
    /// The smallest budget a mesh can have.
    pub const MIN_BUDGET: usize = 4;
    /// The highest mip level any texture has (a 32768-texel side).
    pub const MAX_MIP_LEVELS: u32 = 15;

    /// The budget rule: at least [`Self::MIN_BUDGET`] vertices.
    pub fn budget(budget: usize) -> Result<(), SettingsError> {
        if budget < Self::MIN_BUDGET {
            return Err(SettingsError::Budget(budget));
        }
        Ok(())
    }

    /// The alpha rule: an opaque texel must also be visible.
    pub fn alpha(visible_min: u8, opaque_min: u8) -> Result<(), SettingsError> {
        if visible_min > opaque_min {
            return Err(SettingsError::Alpha {
                visible_min,
                opaque_min,
            });
        }
        Ok(())
    }

    /// The mip rule: at most [`Self::MAX_MIP_LEVELS`].
    pub fn mip_levels(mip_levels: u32) -> Result<(), SettingsError> {
        if mip_levels > Self::MAX_MIP_LEVELS {
            return Err(SettingsError::MipLevels(mip_levels));
        }
        Ok(())
    }
}

/// Some cut settings, each optional: the keys a block of the settings file,
/// a scene layer's `"cut"` or the command line gave. Merged over whole
/// settings by [`PartialSettings::apply`] (the one merge), checked by
/// [`PartialSettings::validate`] (the rules of [`CutSettings::validate`] on
/// the keys given). The keys are the files' names; unknown keys are refused.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PartialSettings {
    /// Most vertices per layer (at least 4).
    pub budget: Option<usize>,
    /// The texture filter.
    pub filter: Option<FilterMode>,
    /// Highest mip level sampled (at most 15).
    pub mip_levels: Option<u32>,
    /// The repeating axes.
    pub wrap: Option<Wrap>,
    /// Alpha from which a texel is opaque.
    pub opaque_min: Option<u8>,
    /// Alpha from which a texel is visible.
    pub visible_min: Option<u8>,
}

impl PartialSettings {
    /// Sets in `s` every value given here.
    pub fn apply(&self, s: &mut CutSettings) {
        if let Some(b) = self.budget {
            s.budget = b;
        }
        if let Some(f) = self.filter {
            s.filter.mode = f;
        }
        if let Some(m) = self.mip_levels {
            s.filter.mip_levels = m;
        }
        if let Some(w) = self.wrap {
            s.wrap = w;
        }
        if let Some(a) = self.opaque_min {
            s.alpha.opaque_min = a;
        }
        if let Some(a) = self.visible_min {
            s.alpha.visible_min = a;
        }
    }

    /// The rules of [`CutSettings::validate`] on the keys given (the alpha
    /// rule when both thresholds are given).
    pub fn validate(&self) -> Result<(), SettingsError> {
        if let Some(b) = self.budget {
            SettingsError::budget(b)?;
        }
        if let Some(m) = self.mip_levels {
            SettingsError::mip_levels(m)?;
        }
        if let (Some(v), Some(o)) = (self.visible_min, self.opaque_min) {
            SettingsError::alpha(v, o)?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn errors_name_the_setting_not_a_flag() {
        let small = CutSettings {
            budget: 3,
            ..CutSettings::default()
        };
        let e = small.validate().unwrap_err();
        assert_eq!(e, SettingsError::Budget(3));
        assert_eq!(e.to_string(), "budget 3: a mesh needs at least 4 vertices");
        let partial = PartialSettings {
            visible_min: Some(200),
            opaque_min: Some(100),
            ..PartialSettings::default()
        };
        let e = CutSettings::default()
            .with(&partial)
            .validate()
            .unwrap_err();
        assert_eq!(partial.validate(), Err(e));
        assert!(!e.to_string().contains("--"), "{e}");
        // one key alone is checked against the rules it can break by itself
        let mip = PartialSettings {
            mip_levels: Some(16),
            ..PartialSettings::default()
        };
        assert_eq!(mip.validate(), Err(SettingsError::MipLevels(16)));
    }
}
