//! Plain raster containers and their file encodings: RGB images, 16-bit depth maps, index (label) maps.
//!
//! Owns: `RgbImage`, `DepthImage`, `IndexImage`, reading and writing them as PNG (by the `png` crate; index
//! maps also as palette PNG with colours the caller gives) and reading colour images from JPEG (`jpeg`,
//! by `zune-jpeg`), with typed errors and a pixel limit checked before decoding.
//! Must not: know about segments, classes or scenes; a raster is only numbers on a grid.

use std::fs::File;
use std::io::{BufReader, BufWriter, Read, Write};
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

pub mod jpeg;

pub use jpeg::is_jpeg;

/// The largest image sayso accepts by default (about 16.8 megapixels).
pub const DEFAULT_PIXEL_LIMIT: u64 = 4096 * 4096;

/// An 8-bit sRGB image, row-major.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RgbImage {
    pub width: u32,
    pub height: u32,
    pub pixels: Vec<[u8; 3]>,
}

/// A depth map in millimetres, row-major; 0 means "no reading".
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct DepthImage {
    pub width: u32,
    pub height: u32,
    pub millimetres: Vec<u16>,
}

/// A map of small integers per pixel (class ids, instance ids), row-major.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct IndexImage {
    pub width: u32,
    pub height: u32,
    pub values: Vec<u16>,
}

/// What went wrong reading or writing a raster.
#[derive(Debug, thiserror::Error)]
pub enum RasterError {
    #[error("cannot open {path}: {source}")]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("{path} is not a readable {format}: {message}")]
    Decode {
        path: PathBuf,
        /// "PNG" or "JPEG".
        format: &'static str,
        message: String,
    },
    #[error("cannot write {path}: {message}")]
    Encode { path: PathBuf, message: String },
    #[error("{path} is {width}x{height} = {pixels} pixels, above the limit of {limit}")]
    TooLarge {
        path: PathBuf,
        width: u32,
        height: u32,
        pixels: u64,
        limit: u64,
    },
    #[error("{path} has colour type {found}, expected {expected}")]
    WrongFormat {
        path: PathBuf,
        found: String,
        expected: &'static str,
    },
    #[error(
        "{path} is {found_width}x{found_height} but must be {width}x{height} to match the image"
    )]
    SizeMismatch {
        path: PathBuf,
        width: u32,
        height: u32,
        found_width: u32,
        found_height: u32,
    },
}

macro_rules! grid_accessors {
    ($type:ty, $field:ident, $pixel:ty) => {
        impl $type {
            /// Number of pixels.
            pub fn pixel_count(&self) -> usize {
                self.width as usize * self.height as usize
            }

            /// The value at column `x`, row `y`; callers keep `x < width`, `y < height`.
            #[inline]
            pub fn get(&self, x: u32, y: u32) -> $pixel {
                self.$field[y as usize * self.width as usize + x as usize]
            }

            /// Sets the value at column `x`, row `y`.
            #[inline]
            pub fn set(&mut self, x: u32, y: u32, value: $pixel) {
                let index = y as usize * self.width as usize + x as usize;
                self.$field[index] = value;
            }
        }
    };
}

grid_accessors!(RgbImage, pixels, [u8; 3]);
grid_accessors!(DepthImage, millimetres, u16);
grid_accessors!(IndexImage, values, u16);

impl RgbImage {
    /// A new image filled with one colour.
    pub fn filled(width: u32, height: u32, colour: [u8; 3]) -> RgbImage {
        RgbImage {
            width,
            height,
            pixels: vec![colour; width as usize * height as usize],
        }
    }
}

impl IndexImage {
    /// A new map filled with one value.
    pub fn filled(width: u32, height: u32, value: u16) -> IndexImage {
        IndexImage {
            width,
            height,
            values: vec![value; width as usize * height as usize],
        }
    }
}

struct Decoded {
    width: u32,
    height: u32,
    color: png::ColorType,
    depth: png::BitDepth,
    bytes: Vec<u8>,
}

fn decode_png(path: &Path, limit: u64) -> Result<Decoded, RasterError> {
    let file = File::open(path).map_err(|source| RasterError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    decode_png_from(BufReader::new(file), path, limit)
}

fn decode_png_from<R: Read>(reader: R, path: &Path, limit: u64) -> Result<Decoded, RasterError> {
    decode_png_with(reader, path, limit, png::Transformations::EXPAND)
}

fn decode_png_with<R: Read>(
    reader: R,
    path: &Path,
    limit: u64,
    transformations: png::Transformations,
) -> Result<Decoded, RasterError> {
    let decode_error = |message: String| RasterError::Decode {
        path: path.to_path_buf(),
        format: "PNG",
        message,
    };
    let mut decoder = png::Decoder::new(reader);
    // By default: expand palettes and sub-byte depths, keep 16-bit samples as they are.
    decoder.set_transformations(transformations);
    let mut reader = decoder
        .read_info()
        .map_err(|error| decode_error(error.to_string()))?;
    let info = reader.info();
    let (width, height) = (info.width, info.height);
    let pixels = width as u64 * height as u64;
    if pixels > limit {
        return Err(RasterError::TooLarge {
            path: path.to_path_buf(),
            width,
            height,
            pixels,
            limit,
        });
    }
    let mut bytes = vec![0u8; reader.output_buffer_size()];
    let frame = reader
        .next_frame(&mut bytes)
        .map_err(|error| decode_error(error.to_string()))?;
    bytes.truncate(frame.buffer_size());
    Ok(Decoded {
        width,
        height,
        color: frame.color_type,
        depth: frame.bit_depth,
        bytes,
    })
}

fn sample(decoded: &Decoded, index: usize) -> u16 {
    match decoded.depth {
        png::BitDepth::Sixteen => {
            u16::from_be_bytes([decoded.bytes[2 * index], decoded.bytes[2 * index + 1]])
        }
        _ => decoded.bytes[index] as u16,
    }
}

fn single_channel(decoded: &Decoded, path: &Path) -> Result<Vec<u16>, RasterError> {
    if decoded.color != png::ColorType::Grayscale {
        return Err(RasterError::WrongFormat {
            path: path.to_path_buf(),
            found: format!("{:?}", decoded.color),
            expected: "single-channel greyscale",
        });
    }
    let count = decoded.width as usize * decoded.height as usize;
    Ok((0..count).map(|index| sample(decoded, index)).collect())
}

/// Reads an RGB (or RGBA / greyscale, converted) PNG.
pub fn read_rgb_png(path: &Path, limit: u64) -> Result<RgbImage, RasterError> {
    let file = File::open(path).map_err(|source| RasterError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    decode_rgb_png_rows(BufReader::new(file), path, limit)
}

/// Decodes a colour PNG once, row by row, straight into the image's pixels: past the header's size check
/// (against `limit`, before any pixel is decoded) the only buffer the size of the image is the result
/// (3 bytes a pixel), whatever the file's colour type and depth (16-bit samples are cut to 8 by the
/// decoder). An interlaced PNG, whose rows come in seven passes, is decoded whole first.
fn decode_rgb_png_rows<R: Read>(
    reader: R,
    path: &Path,
    limit: u64,
) -> Result<RgbImage, RasterError> {
    let decode_error = |message: String| RasterError::Decode {
        path: path.to_path_buf(),
        format: "PNG",
        message,
    };
    let mut decoder = png::Decoder::new(reader);
    decoder.set_transformations(png::Transformations::EXPAND | png::Transformations::STRIP_16);
    let mut reader = decoder
        .read_info()
        .map_err(|error| decode_error(error.to_string()))?;
    let info = reader.info();
    let (width, height, interlaced) = (info.width, info.height, info.interlaced);
    let pixels = width as u64 * height as u64;
    if pixels > limit {
        return Err(RasterError::TooLarge {
            path: path.to_path_buf(),
            width,
            height,
            pixels,
            limit,
        });
    }
    let (color, _) = reader.output_color_type();
    let channels = match color {
        png::ColorType::Rgb => 3,
        png::ColorType::Rgba => 4,
        png::ColorType::Grayscale => 1,
        png::ColorType::GrayscaleAlpha => 2,
        other => {
            return Err(RasterError::WrongFormat {
                path: path.to_path_buf(),
                found: format!("{other:?}"),
                expected: "RGB, RGBA or greyscale",
            })
        }
    };
    let to_rgb = |sample: &[u8]| -> [u8; 3] {
        if channels >= 3 {
            [sample[0], sample[1], sample[2]]
        } else {
            [sample[0]; 3]
        }
    };
    let count = pixels as usize;
    if interlaced {
        let mut bytes = vec![0u8; reader.output_buffer_size()];
        let frame = reader
            .next_frame(&mut bytes)
            .map_err(|error| decode_error(error.to_string()))?;
        bytes.truncate(frame.buffer_size());
        let pixels: Vec<[u8; 3]> = bytes
            .chunks_exact(channels)
            .take(count)
            .map(to_rgb)
            .collect();
        if pixels.len() != count {
            return Err(decode_error("the image data ends early".into()));
        }
        return Ok(RgbImage {
            width,
            height,
            pixels,
        });
    }
    let mut pixels = Vec::with_capacity(count);
    while let Some(row) = reader
        .next_row()
        .map_err(|error| decode_error(error.to_string()))?
    {
        pixels.extend(
            row.data()
                .chunks_exact(channels)
                .take(width as usize)
                .map(to_rgb),
        );
    }
    if pixels.len() != count {
        return Err(decode_error(format!(
            "the image data ends after {} of {count} pixels",
            pixels.len()
        )));
    }
    Ok(RgbImage {
        width,
        height,
        pixels,
    })
}

/// Reads a colour image from PNG or JPEG bytes (told apart by their signatures); `origin` names it in errors.
pub fn decode_rgb_image(bytes: &[u8], origin: &Path, limit: u64) -> Result<RgbImage, RasterError> {
    if is_jpeg(bytes) {
        jpeg::decode_rgb_jpeg(bytes, origin, limit)
    } else {
        decode_rgb_png(bytes, origin, limit)
    }
}

/// Reads a colour image file, PNG or JPEG (told apart by content, not by the file name).
pub fn read_rgb_image(path: &Path, limit: u64) -> Result<RgbImage, RasterError> {
    let bytes = std::fs::read(path).map_err(|source| RasterError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    decode_rgb_image(&bytes, path, limit)
}

/// Reads an RGB PNG from bytes; `origin` names it in errors.
pub fn decode_rgb_png(bytes: &[u8], origin: &Path, limit: u64) -> Result<RgbImage, RasterError> {
    decode_rgb_png_rows(bytes, origin, limit)
}

/// Reads a 16-bit (or 8-bit) single-channel depth PNG in millimetres.
pub fn read_depth_png(path: &Path, limit: u64) -> Result<DepthImage, RasterError> {
    let decoded = decode_png(path, limit)?;
    let millimetres = single_channel(&decoded, path)?;
    Ok(DepthImage {
        width: decoded.width,
        height: decoded.height,
        millimetres,
    })
}

/// Reads a single-channel index PNG (8- or 16-bit greyscale, or an 8-bit palette PNG whose pixel values are
/// the indices, as `write_palette_png` writes).
pub fn read_index_png(path: &Path, limit: u64) -> Result<IndexImage, RasterError> {
    let bytes = std::fs::read(path).map_err(|source| RasterError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    decode_index_png(&bytes, path, limit)
}

/// Reads an index PNG from bytes; `origin` names it in errors.
pub fn decode_index_png(
    bytes: &[u8],
    origin: &Path,
    limit: u64,
) -> Result<IndexImage, RasterError> {
    let mut header = png::Decoder::new(bytes);
    let palette_indices = header.read_header_info().is_ok_and(|info| {
        info.color_type == png::ColorType::Indexed && info.bit_depth == png::BitDepth::Eight
    });
    if palette_indices {
        let raw = decode_png_with(bytes, origin, limit, png::Transformations::IDENTITY)?;
        return Ok(IndexImage {
            width: raw.width,
            height: raw.height,
            values: raw.bytes.iter().map(|&value| u16::from(value)).collect(),
        });
    }
    let decoded = decode_png_from(bytes, origin, limit)?;
    let values = single_channel(&decoded, origin)?;
    Ok(IndexImage {
        width: decoded.width,
        height: decoded.height,
        values,
    })
}

fn encode_png<W: Write>(
    writer: W,
    width: u32,
    height: u32,
    color: png::ColorType,
    depth: png::BitDepth,
    data: &[u8],
) -> Result<(), String> {
    let mut encoder = png::Encoder::new(writer, width, height);
    encoder.set_color(color);
    encoder.set_depth(depth);
    encoder.set_compression(png::Compression::Best);
    let mut writer = encoder.write_header().map_err(|error| error.to_string())?;
    writer
        .write_image_data(data)
        .map_err(|error| error.to_string())?;
    writer.finish().map_err(|error| error.to_string())
}

fn write_file(
    path: &Path,
    encode: impl FnOnce(&mut Vec<u8>) -> Result<(), String>,
) -> Result<(), RasterError> {
    let mut bytes = Vec::new();
    encode(&mut bytes).map_err(|message| RasterError::Encode {
        path: path.to_path_buf(),
        message,
    })?;
    let file = File::create(path).map_err(|source| RasterError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    let mut writer = BufWriter::new(file);
    writer
        .write_all(&bytes)
        .and_then(|_| writer.flush())
        .map_err(|source| RasterError::Io {
            path: path.to_path_buf(),
            source,
        })
}

/// Encodes an RGB image as PNG bytes.
pub fn encode_rgb_png(image: &RgbImage) -> Result<Vec<u8>, String> {
    let mut bytes = Vec::new();
    encode_png(
        &mut bytes,
        image.width,
        image.height,
        png::ColorType::Rgb,
        png::BitDepth::Eight,
        image.pixels.as_flattened(),
    )?;
    Ok(bytes)
}

/// Encodes an index map as an 8-bit PNG when every value fits, else 16-bit.
pub fn encode_index_png(image: &IndexImage) -> Result<Vec<u8>, String> {
    let mut bytes = Vec::new();
    if image.values.iter().all(|&value| value <= 255) {
        let data: Vec<u8> = image.values.iter().map(|&value| value as u8).collect();
        encode_png(
            &mut bytes,
            image.width,
            image.height,
            png::ColorType::Grayscale,
            png::BitDepth::Eight,
            &data,
        )?;
    } else {
        let data: Vec<u8> = image
            .values
            .iter()
            .flat_map(|value| value.to_be_bytes())
            .collect();
        encode_png(
            &mut bytes,
            image.width,
            image.height,
            png::ColorType::Grayscale,
            png::BitDepth::Sixteen,
            &data,
        )?;
    }
    Ok(bytes)
}

/// Encodes an index map as an 8-bit palette PNG: pixel value `v` shows as `palette[v]`. Every value must be
/// below 256 and have a colour; `palette` holds at most 256 colours.
pub fn encode_palette_png(image: &IndexImage, palette: &[[u8; 3]]) -> Result<Vec<u8>, String> {
    if palette.is_empty() || palette.len() > 256 {
        return Err(format!(
            "a palette PNG holds 1 to 256 colours, not {}",
            palette.len()
        ));
    }
    let mut data = Vec::with_capacity(image.values.len());
    for &value in &image.values {
        if value as usize >= palette.len() {
            return Err(format!(
                "value {value} has no colour in a palette of {}",
                palette.len()
            ));
        }
        data.push(value as u8);
    }
    let mut bytes = Vec::new();
    let mut encoder = png::Encoder::new(&mut bytes, image.width, image.height);
    encoder.set_color(png::ColorType::Indexed);
    encoder.set_depth(png::BitDepth::Eight);
    encoder.set_palette(palette.iter().flatten().copied().collect::<Vec<u8>>());
    encoder.set_compression(png::Compression::Best);
    let mut writer = encoder.write_header().map_err(|error| error.to_string())?;
    writer
        .write_image_data(&data)
        .map_err(|error| error.to_string())?;
    writer.finish().map_err(|error| error.to_string())?;
    Ok(bytes)
}

/// Writes an index map as a palette PNG (see `encode_palette_png`).
pub fn write_palette_png(
    path: &Path,
    image: &IndexImage,
    palette: &[[u8; 3]],
) -> Result<(), RasterError> {
    write_file(path, |bytes| {
        *bytes = encode_palette_png(image, palette)?;
        Ok(())
    })
}

/// Writes an RGB PNG.
pub fn write_rgb_png(path: &Path, image: &RgbImage) -> Result<(), RasterError> {
    write_file(path, |bytes| {
        *bytes = encode_rgb_png(image)?;
        Ok(())
    })
}

/// Writes a 16-bit depth PNG in millimetres.
pub fn write_depth_png(path: &Path, image: &DepthImage) -> Result<(), RasterError> {
    let data: Vec<u8> = image
        .millimetres
        .iter()
        .flat_map(|value| value.to_be_bytes())
        .collect();
    write_file(path, |bytes| {
        encode_png(
            bytes,
            image.width,
            image.height,
            png::ColorType::Grayscale,
            png::BitDepth::Sixteen,
            &data,
        )
    })
}

/// Writes an index PNG (8-bit when every value fits).
pub fn write_index_png(path: &Path, image: &IndexImage) -> Result<(), RasterError> {
    write_file(path, |bytes| {
        *bytes = encode_index_png(image)?;
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rgb_round_trip() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("a.png");
        let mut image = RgbImage::filled(5, 3, [1, 2, 3]);
        image.set(4, 2, [250, 0, 9]);
        write_rgb_png(&path, &image).unwrap();
        assert_eq!(read_rgb_png(&path, DEFAULT_PIXEL_LIMIT).unwrap(), image);
    }

    #[test]
    fn depth_round_trip_keeps_sixteen_bits() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("d.png");
        let image = DepthImage {
            width: 2,
            height: 2,
            millimetres: vec![0, 1000, 65535, 4321],
        };
        write_depth_png(&path, &image).unwrap();
        assert_eq!(read_depth_png(&path, DEFAULT_PIXEL_LIMIT).unwrap(), image);
    }

    #[test]
    fn truncated_png_is_a_decode_error_naming_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("cut.png");
        let bytes = encode_rgb_png(&RgbImage::filled(40, 40, [9, 9, 9])).unwrap();
        std::fs::write(&path, &bytes[..bytes.len() / 2]).unwrap();
        let error = read_rgb_png(&path, DEFAULT_PIXEL_LIMIT).unwrap_err();
        assert!(matches!(error, RasterError::Decode { .. }), "{error}");
        assert!(error.to_string().contains("cut.png"));
    }

    #[test]
    fn pixel_limit_is_enforced() {
        let bytes = encode_rgb_png(&RgbImage::filled(10, 10, [0, 0, 0])).unwrap();
        let error = decode_rgb_png(&bytes, Path::new("big.png"), 99).unwrap_err();
        assert!(
            matches!(error, RasterError::TooLarge { pixels: 100, .. }),
            "{error}"
        );
    }

    /// CRC-32 as PNG chunks use it (ISO 3309 / ITU-T V.42, the PNG specification's annex D), bit by bit.
    fn png_crc(bytes: &[u8]) -> u32 {
        let mut crc = 0xFFFF_FFFFu32;
        for &byte in bytes {
            crc ^= u32::from(byte);
            for _ in 0..8 {
                crc = if crc & 1 == 1 {
                    0xEDB8_8320 ^ (crc >> 1)
                } else {
                    crc >> 1
                };
            }
        }
        !crc
    }

    fn png_chunk(kind: &[u8; 4], data: &[u8]) -> Vec<u8> {
        let mut body = kind.to_vec();
        body.extend_from_slice(data);
        let mut chunk = (data.len() as u32).to_be_bytes().to_vec();
        chunk.extend_from_slice(&body);
        chunk.extend_from_slice(&png_crc(&body).to_be_bytes());
        chunk
    }

    /// A PNG declaring `width` x `height` 8-bit `colour_type` whose image data is one empty chunk.
    fn header_only_png(width: u32, height: u32, colour_type: u8) -> Vec<u8> {
        let mut header = width.to_be_bytes().to_vec();
        header.extend_from_slice(&height.to_be_bytes());
        header.extend_from_slice(&[8, colour_type, 0, 0, 0]);
        let mut bytes = b"\x89PNG\r\n\x1a\n".to_vec();
        bytes.extend(png_chunk(b"IHDR", &header));
        if colour_type == 3 {
            bytes.extend(png_chunk(b"PLTE", &[0, 0, 0]));
        }
        bytes.extend(png_chunk(b"IDAT", &[]));
        bytes.extend(png_chunk(b"IEND", &[]));
        bytes
    }

    #[test]
    fn a_huge_declared_size_is_refused_from_the_header_alone() {
        // 100000 x 100000 RGB would need 30 GB; the answer comes from the 33-byte header, before any buffer.
        let rgb = header_only_png(100_000, 100_000, 2);
        let error = decode_rgb_image(&rgb, Path::new("huge.png"), DEFAULT_PIXEL_LIMIT).unwrap_err();
        assert!(
            matches!(
                error,
                RasterError::TooLarge {
                    width: 100_000,
                    height: 100_000,
                    ..
                }
            ),
            "{error}"
        );
        // The index-map path reads the header first too (greyscale and palette alike).
        for colour_type in [0, 3] {
            let index = header_only_png(100_000, 100_000, colour_type);
            let error =
                decode_index_png(&index, Path::new("huge.png"), DEFAULT_PIXEL_LIMIT).unwrap_err();
            assert!(matches!(error, RasterError::TooLarge { .. }), "{error}");
        }
        // A size under the limit gets past the header and fails on the missing data instead.
        let small = header_only_png(4, 4, 2);
        let error =
            decode_rgb_image(&small, Path::new("small.png"), DEFAULT_PIXEL_LIMIT).unwrap_err();
        assert!(matches!(error, RasterError::Decode { .. }), "{error}");
    }

    #[test]
    fn missing_file_is_io_error() {
        let error =
            read_index_png(Path::new("/nonexistent/x.png"), DEFAULT_PIXEL_LIMIT).unwrap_err();
        assert!(matches!(error, RasterError::Io { .. }));
    }

    #[test]
    fn index_as_rgb_is_wrong_format() {
        let bytes = encode_rgb_png(&RgbImage::filled(2, 2, [0, 0, 0])).unwrap();
        let error = decode_index_png(&bytes, Path::new("l.png"), 100).unwrap_err();
        assert!(matches!(error, RasterError::WrongFormat { .. }));
    }
}
