//! The chunk layout of a PNG file, read by hand for what must be known
//! before the image is decoded: its size (from `IHDR`) and whether it is
//! animated (an `acTL` chunk before the first `IDAT`).
//!
//! The layout (PNG specification, W3C Second Edition, and the APNG
//! extension it later took in; from memory): the 8-byte signature, then
//! chunks, each a 4-byte big-endian data length, a 4-byte type, the data and
//! a 4-byte CRC; `IHDR` comes first, with width and height as 4-byte
//! big-endian numbers; an animated PNG has `acTL` (frame count, then play
//! count) before the first `IDAT`, and an `fcTL` before `IDAT` makes the
//! `IDAT` image the animation's first frame (without one, the `IDAT` image
//! is a still image outside the animation).
//!
//! Invariants: [`read_header`] reads at most the chunk headers up to the
//! first `IDAT` and allocates nothing in proportion to what the file claims;
//! CRCs are left to the decoder. [`diagnose`], run only once the decoder
//! has failed, walks every chunk to say in plain words what is damaged: a
//! file cut short, or a chunk whose CRC-32 (ISO 3309, the one PNG uses; from
//! memory) does not match its type and data.

/// The 8 bytes every PNG file starts with.
pub(super) const SIGNATURE: [u8; 8] = [0x89, b'P', b'N', b'G', 0x0D, 0x0A, 0x1A, 0x0A];

/// What the chunks before the image data say.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct Header {
    /// Width from `IHDR`, texels.
    pub width: u32,
    /// Height from `IHDR`, texels.
    pub height: u32,
    /// `Some` when an `acTL` chunk comes before the first `IDAT`.
    pub animation: Option<Animation>,
}

/// An APNG's animation control, as far as the first `IDAT`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct Animation {
    /// Frames announced by `acTL`.
    pub frames: u32,
    /// An `fcTL` comes before the first `IDAT`: the still image is frame 0.
    pub still_is_first_frame: bool,
}

fn be32(b: &[u8]) -> u32 {
    u32::from_be_bytes([b[0], b[1], b[2], b[3]])
}

/// Reads the header chunks of `bytes`, which start with [`SIGNATURE`].
/// The error says what is wrong, in words for the user.
pub(super) fn read_header(bytes: &[u8]) -> Result<Header, String> {
    if !bytes.starts_with(&SIGNATURE) {
        return Err("its first bytes are not the PNG signature".into());
    }
    let mut at = SIGNATURE.len();
    let mut header: Option<Header> = None;
    loop {
        let Some(head) = bytes.get(at..at + 8) else {
            return match header {
                None => Err("the file ends before its IHDR header chunk".into()),
                Some(_) => Err("the file ends before its image data (no IDAT chunk)".into()),
            };
        };
        let len = be32(head) as usize;
        let kind = &head[4..8];
        let data_at = at + 8;
        match &mut header {
            None => {
                if kind != b"IHDR" || len != 13 {
                    return Err("its first chunk is not a 13-byte IHDR header".into());
                }
                let Some(data) = bytes.get(data_at..data_at + 13) else {
                    return Err("the file ends inside its IHDR header chunk".into());
                };
                header = Some(Header {
                    width: be32(&data[0..4]),
                    height: be32(&data[4..8]),
                    animation: None,
                });
            }
            Some(h) if kind == b"IDAT" => return Ok(*h),
            Some(h) if kind == b"acTL" || kind == b"fcTL" => {
                let frames = if kind == b"acTL" {
                    match bytes.get(data_at..data_at + 4) {
                        Some(d) if len >= 8 => be32(d),
                        _ => return Err("its acTL animation chunk is cut short".into()),
                    }
                } else {
                    h.animation.map_or(0, |a| a.frames)
                };
                let still = kind == b"fcTL" || h.animation.is_some_and(|a| a.still_is_first_frame);
                h.animation = Some(Animation {
                    frames,
                    still_is_first_frame: still,
                });
            }
            Some(_) => {}
        }
        // length, type, data, CRC
        at = match data_at.checked_add(len).and_then(|e| e.checked_add(4)) {
            Some(next) => next,
            None => return Err("a chunk claims more bytes than a file can hold".into()),
        };
    }
}

/// CRC-32 as PNG computes it: reflected polynomial 0xEDB88320, initial
/// value and final XOR all ones.
fn crc32(parts: &[&[u8]]) -> u32 {
    let mut c = !0u32;
    for &b in parts.iter().flat_map(|p| p.iter()) {
        c ^= b as u32;
        for _ in 0..8 {
            c = if c & 1 != 0 {
                (c >> 1) ^ 0xEDB8_8320
            } else {
                c >> 1
            };
        }
    }
    !c
}

/// What is damaged in a PNG the decoder refused, when the chunk layout
/// shows it: the file cut short, or a chunk failing its CRC. `None` when the
/// chunks look whole (the fault is inside the image data).
pub(super) fn diagnose(bytes: &[u8]) -> Option<String> {
    let mut at = SIGNATURE.len();
    loop {
        let Some(head) = bytes.get(at..at + 8) else {
            return Some(format!(
                "it is cut short: it ends at byte {} without its IEND chunk",
                bytes.len()
            ));
        };
        let len = be32(head) as usize;
        let kind = String::from_utf8_lossy(&head[4..8]).into_owned();
        let end = (at + 12).checked_add(len).filter(|&e| e <= bytes.len());
        let Some(end) = end else {
            return Some(format!(
                "it is cut short: its {kind} chunk at byte {at} holds {len} bytes, but the file ends at byte {}",
                bytes.len()
            ));
        };
        let stored = be32(&bytes[end - 4..end]);
        if crc32(&[&head[4..8], &bytes[at + 8..end - 4]]) != stored {
            return Some(format!(
                "its {kind} chunk at byte {at} fails its CRC check (its bytes changed after it was written)"
            ));
        }
        if &head[4..8] == b"IEND" {
            return None;
        }
        at = end;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn chunk(kind: &[u8; 4], data: &[u8]) -> Vec<u8> {
        let mut v = (data.len() as u32).to_be_bytes().to_vec();
        v.extend_from_slice(kind);
        v.extend_from_slice(data);
        v.extend_from_slice(&[0; 4]); // CRC: not read here
        v
    }

    fn ihdr(w: u32, h: u32) -> Vec<u8> {
        let mut d = w.to_be_bytes().to_vec();
        d.extend_from_slice(&h.to_be_bytes());
        d.extend_from_slice(&[8, 6, 0, 0, 0]);
        chunk(b"IHDR", &d)
    }

    #[test]
    fn size_and_animation_come_from_the_chunks_before_idat() {
        let mut png = SIGNATURE.to_vec();
        png.extend(ihdr(100_000, 7));
        let mut actl = 5u32.to_be_bytes().to_vec();
        actl.extend_from_slice(&0u32.to_be_bytes());
        png.extend(chunk(b"acTL", &actl));
        png.extend(chunk(b"fcTL", &[0; 26]));
        png.extend(chunk(b"IDAT", &[1, 2, 3]));
        // an acTL after IDAT is not read
        png.extend(chunk(b"acTL", &[0, 0, 0, 9, 0, 0, 0, 0]));
        let h = read_header(&png).unwrap();
        assert_eq!((h.width, h.height), (100_000, 7));
        assert_eq!(
            h.animation,
            Some(Animation {
                frames: 5,
                still_is_first_frame: true
            })
        );
    }

    #[test]
    fn a_still_image_outside_the_animation_is_told_apart() {
        let mut png = SIGNATURE.to_vec();
        png.extend(ihdr(4, 4));
        png.extend(chunk(b"acTL", &[0, 0, 0, 2, 0, 0, 0, 1]));
        png.extend(chunk(b"IDAT", &[0; 5]));
        assert_eq!(
            read_header(&png).unwrap().animation,
            Some(Animation {
                frames: 2,
                still_is_first_frame: false
            })
        );
    }

    #[test]
    fn crc32_of_the_standard_check_string() {
        // CRC-32/ISO-HDLC of "123456789" is 0xCBF43926 (the catalogue's check
        // value, from memory)
        assert_eq!(crc32(&[b"1234", b"56789"]), 0xCBF4_3926);
    }

    #[test]
    fn a_still_png_has_no_animation_and_a_cut_file_is_an_error() {
        let mut png = SIGNATURE.to_vec();
        png.extend(ihdr(3, 2));
        png.extend(chunk(b"IDAT", &[0; 5]));
        assert_eq!(read_header(&png).unwrap().animation, None);
        assert!(read_header(&png[..20]).unwrap_err().contains("IHDR"));
        assert!(read_header(&png[..33]).unwrap_err().contains("IDAT"));
        let mut bad = SIGNATURE.to_vec();
        bad.extend(chunk(b"tEXt", b"x"));
        assert!(read_header(&bad).unwrap_err().contains("IHDR"));
    }
}
