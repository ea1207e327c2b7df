//! A sheet's shipped texture: the KTX 2.0 or `.astc` file given with
//! `--texture` for the sheet's PNG, or the sheet itself when it is one.
//! The whole sheet is analyzed over the texture's own decoded levels
//! 0..=`mip_levels` (with the PNG's block levels, unless the texture is the
//! sheet), as a layer's cut against its texture is
//! ([`crate::alpha::Sampled`]).

use super::run::SheetRequest;
use super::SheetAnalysis;
use crate::batch::manifest::sha256_hex;
use crate::error::{FileError, Setting};
use crate::settings::CutSettings;
use std::path::PathBuf;

/// The shipped texture a sheet is cut against: the sheet itself (a KTX 2.0
/// or `.astc` file) or the texture given for its PNG.
pub(crate) struct ShippedSheet {
    /// The texture's path.
    pub path: PathBuf,
    /// Its decoded levels.
    pub texture: crate::io::Texture,
    /// SHA-256 of its bytes.
    pub sha256: String,
    /// The texture is the sheet (no PNG is read).
    pub is_sheet: bool,
}

impl ShippedSheet {
    /// The texture of `req`, decoded, if there is one.
    pub(crate) fn read(
        req: &SheetRequest,
        sheet_bytes: &[u8],
    ) -> Result<Option<ShippedSheet>, FileError> {
        let (path, bytes, is_sheet) = if crate::io::is_texture(sheet_bytes) {
            if let Some(t) = &req.texture {
                return Err(FileError::new(
                    t,
                    format!(
                        "is given as the shipped texture of {}, which is itself a texture",
                        req.sheet.display()
                    ),
                    format!(
                        "give the sheet's PNG with {}, or the texture alone",
                        Setting::Texture
                    ),
                ));
            }
            (req.sheet.clone(), sheet_bytes.to_vec(), true)
        } else if let Some(t) = &req.texture {
            (t.clone(), crate::io::read_input(t)?, false)
        } else {
            return Ok(None);
        };
        let texture = crate::io::decode_texture(&path, &bytes, &req.limits)?;
        Ok(Some(ShippedSheet {
            sha256: sha256_hex(&bytes),
            path,
            texture,
            is_sheet,
        }))
    }

    /// The whole sheet analyzed for `s` with the texture's levels
    /// 0..=`mip_levels` (and the PNG's, unless the texture is the sheet),
    /// and the note saying what the guarantee was computed for.
    pub(crate) fn analysis(
        &self,
        sheet: &crate::alpha::AlphaMap,
        s: &CutSettings,
    ) -> Result<(SheetAnalysis, String), FileError> {
        let mip = s.filter.mip_levels;
        let levels = self.texture.levels_for(mip).map_err(|why| {
            FileError::new(
                &self.path,
                why.to_string(),
                format!("lower {} to the levels the texture holds, or export it with a full mip chain of sizes W / 2^l", Setting::MipLevels),
            )
        })?;
        let sampled = crate::alpha::Sampled {
            source: (!self.is_sheet).then_some(sheet),
            shipped: levels,
        };
        sampled.validate().map_err(|why| {
            FileError::new(
                &self.path,
                why.to_string(),
                "give the texture compressed from this sheet, at its size",
            )
        })?;
        Ok((
            SheetAnalysis::sampled(sampled, s),
            self.texture.guarantee_note(mip),
        ))
    }
}

/// What a sheet that is itself a shipped texture cannot give: a glTF
/// asset (its image must be a PNG or JPEG) or a preview (drawn from the
/// PNG's colours).
pub(crate) fn texture_sheet_refusals(req: &SheetRequest) -> Result<(), FileError> {
    if req.outputs.gltf || req.outputs.glb {
        return Err(FileError::new(
            &req.sheet,
            "is a compressed texture, and a glTF asset's image must be a PNG or JPEG (core glTF 2.0)",
            format!("cut the sheet's PNG with {} pointing to this file to get glTF assets, or use {}", Setting::Texture, Setting::Format.given("json")),
        ));
    }
    if req.outputs.preview {
        return Err(FileError::new(
            &req.sheet,
            "is a compressed texture, and previews are drawn from the PNG",
            format!(
                "cut the sheet's PNG with {} pointing to this file to get a preview, or leave out {}",
                Setting::Texture,
                Setting::Preview
            ),
        ));
    }
    Ok(())
}
