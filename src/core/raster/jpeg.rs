//! JPEG decoding for colour images, by the `zune-jpeg` crate (a maintained pure-Rust baseline and progressive
//! JPEG decoder), with the same pixel limit and typed errors as the PNG path.
//!
//! Owns: recognising JPEG bytes and turning them into an `RgbImage`.
//! Must not: encode JPEG (sayso writes PNG only) or know what the image shows.

use std::path::Path;

use zune_jpeg::zune_core::bytestream::ZCursor;
use zune_jpeg::zune_core::colorspace::ColorSpace;
use zune_jpeg::zune_core::options::DecoderOptions;
use zune_jpeg::JpegDecoder;

use super::{RasterError, RgbImage};

/// Whether `bytes` begin with a JPEG start-of-image marker followed by another marker (FF D8 FF, ITU-T T.81
/// annex B).
pub fn is_jpeg(bytes: &[u8]) -> bool {
    bytes.len() >= 3 && bytes[0] == 0xFF && bytes[1] == 0xD8 && bytes[2] == 0xFF
}

/// Decodes JPEG bytes to 8-bit sRGB; `origin` names the input in errors. The size is read from the frame
/// header and checked against `limit` before any pixel is decoded.
pub fn decode_rgb_jpeg(bytes: &[u8], origin: &Path, limit: u64) -> Result<RgbImage, RasterError> {
    let decode_error = |message: String| RasterError::Decode {
        path: origin.to_path_buf(),
        format: "JPEG",
        message,
    };
    // The decoder's own size caps are raised to the largest JPEG dimension; our pixel limit decides.
    let options = DecoderOptions::default()
        .set_max_width(usize::from(u16::MAX))
        .set_max_height(usize::from(u16::MAX))
        .jpeg_set_out_colorspace(ColorSpace::RGB);
    let mut decoder = JpegDecoder::new_with_options(ZCursor::new(bytes), options);
    decoder
        .decode_headers()
        .map_err(|error| decode_error(format!("{error:?}")))?;
    let info = decoder
        .info()
        .ok_or_else(|| decode_error("no frame header".to_string()))?;
    let (width, height) = (u32::from(info.width), u32::from(info.height));
    let pixels = u64::from(width) * u64::from(height);
    if pixels > limit {
        return Err(RasterError::TooLarge {
            path: origin.to_path_buf(),
            width,
            height,
            pixels,
            limit,
        });
    }
    let data = decoder
        .decode()
        .map_err(|error| decode_error(format!("{error:?}")))?;
    let count = width as usize * height as usize;
    if data.len() != count * 3 {
        return Err(decode_error(format!(
            "decoded {} bytes for a {width}x{height} RGB image",
            data.len()
        )));
    }
    Ok(RgbImage {
        width,
        height,
        pixels: data
            .chunks_exact(3)
            .map(|pixel| [pixel[0], pixel[1], pixel[2]])
            .collect(),
    })
}
