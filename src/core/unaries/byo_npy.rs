//! A reader for NumPy `.npy` files (the format described in NumPy's NEP 1 and `numpy.lib.format`): the
//! magic `\x93NUMPY`, a major/minor version (1.0, 2.0 or 3.0), a little-endian header length (2 bytes in
//! version 1, 4 bytes in 2 and 3), then an ASCII (3.0: UTF-8) Python dict literal with `descr`,
//! `fortran_order` and `shape`, then the raw array data.
//!
//! Owns: `NpyArray`, `NpyError`, parsing the header dict, float32/float64 in either byte order and either
//! memory order, returned in C (row-major) order.
//! Must not: interpret what the numbers mean; pixel-score handling lives in `byo_pixel_scores`.

use std::path::{Path, PathBuf};

use ndarray::{ArrayD, IxDyn, ShapeBuilder};

/// The element type the file stored (the values are returned as f64, which holds every f32 exactly).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NpyFloat {
    Float32,
    Float64,
}

/// A decoded array in C order.
#[derive(Clone, Debug, PartialEq)]
pub struct NpyArray {
    pub dtype: NpyFloat,
    pub values: ArrayD<f64>,
}

/// Why an `.npy` file could not be read.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum NpyError {
    #[error("cannot read {path}: {message}")]
    Io { path: PathBuf, message: String },
    #[error("not an .npy file: the magic string \\x93NUMPY is missing")]
    Magic,
    #[error("unsupported .npy format version {major}.{minor} (1.0, 2.0 and 3.0 are read)")]
    Version { major: u8, minor: u8 },
    #[error("the .npy file ends inside its {part}")]
    Truncated { part: &'static str },
    #[error("the .npy header is not valid: {0}")]
    Header(String),
    #[error("unsupported element type '{descr}': only float32 and float64 ('<f4', '>f4', '<f8', '>f8') are read")]
    UnsupportedDtype { descr: String },
    #[error("the .npy data holds {found} bytes but shape {shape:?} needs {expected}")]
    DataLength {
        shape: Vec<usize>,
        expected: usize,
        found: usize,
    },
}

const MAGIC: &[u8] = b"\x93NUMPY";

/// Reads an `.npy` file from disk.
pub fn read_npy(path: &Path) -> Result<NpyArray, NpyError> {
    let bytes = std::fs::read(path).map_err(|error| NpyError::Io {
        path: path.to_path_buf(),
        message: error.to_string(),
    })?;
    parse_npy(&bytes)
}

/// Parses `.npy` bytes.
pub fn parse_npy(bytes: &[u8]) -> Result<NpyArray, NpyError> {
    if bytes.len() < MAGIC.len() || &bytes[..MAGIC.len()] != MAGIC {
        return Err(NpyError::Magic);
    }
    let version = bytes
        .get(6..8)
        .ok_or(NpyError::Truncated { part: "version" })?;
    let (major, minor) = (version[0], version[1]);
    let (header_start, header_length): (usize, usize) = match (major, minor) {
        (1, 0) => {
            let raw = bytes.get(8..10).ok_or(NpyError::Truncated {
                part: "header length",
            })?;
            (10, u16::from_le_bytes([raw[0], raw[1]]) as usize)
        }
        (2, 0) | (3, 0) => {
            let raw = bytes.get(8..12).ok_or(NpyError::Truncated {
                part: "header length",
            })?;
            (
                12,
                u32::from_le_bytes([raw[0], raw[1], raw[2], raw[3]]) as usize,
            )
        }
        _ => return Err(NpyError::Version { major, minor }),
    };
    let header_end = header_start
        .checked_add(header_length)
        .ok_or(NpyError::Truncated { part: "header" })?;
    let header_bytes = bytes
        .get(header_start..header_end)
        .ok_or(NpyError::Truncated { part: "header" })?;
    let header = std::str::from_utf8(header_bytes)
        .map_err(|_| NpyError::Header("the header is not text".to_string()))?;
    let header = parse_header(header)?;
    let (dtype, width, little_endian) = match header.descr.as_str() {
        "<f4" => (NpyFloat::Float32, 4, true),
        ">f4" => (NpyFloat::Float32, 4, false),
        "<f8" => (NpyFloat::Float64, 8, true),
        ">f8" => (NpyFloat::Float64, 8, false),
        other => {
            return Err(NpyError::UnsupportedDtype {
                descr: other.to_string(),
            })
        }
    };
    let count = header
        .shape
        .iter()
        .try_fold(1usize, |total, &dim| total.checked_mul(dim))
        .ok_or_else(|| NpyError::Header("the shape is too large".to_string()))?;
    let data = &bytes[header_end..];
    let expected = count
        .checked_mul(width)
        .ok_or_else(|| NpyError::Header("the shape is too large".to_string()))?;
    if data.len() != expected {
        return Err(NpyError::DataLength {
            shape: header.shape.clone(),
            expected,
            found: data.len(),
        });
    }
    let values: Vec<f64> = data
        .chunks_exact(width)
        .map(|chunk| match (width, little_endian) {
            (4, true) => f32::from_le_bytes([chunk[0], chunk[1], chunk[2], chunk[3]]) as f64,
            (4, false) => f32::from_be_bytes([chunk[0], chunk[1], chunk[2], chunk[3]]) as f64,
            (_, true) => f64::from_le_bytes(eight(chunk)),
            (_, false) => f64::from_be_bytes(eight(chunk)),
        })
        .collect();
    let shape = IxDyn(&header.shape);
    let array = if header.fortran_order {
        ArrayD::from_shape_vec(shape.f(), values)
    } else {
        ArrayD::from_shape_vec(shape, values)
    }
    .map_err(|error| NpyError::Header(error.to_string()))?;
    // Return a C-order copy whatever the file's order, so callers can index freely.
    let values = if array.is_standard_layout() {
        array
    } else {
        let mut copy = ArrayD::zeros(array.raw_dim());
        copy.assign(&array);
        copy
    };
    Ok(NpyArray { dtype, values })
}

fn eight(chunk: &[u8]) -> [u8; 8] {
    let mut bytes = [0u8; 8];
    bytes.copy_from_slice(&chunk[..8]);
    bytes
}

struct Header {
    descr: String,
    fortran_order: bool,
    shape: Vec<usize>,
}

/// Parses the header dict literal, e.g. `{'descr': '<f4', 'fortran_order': False, 'shape': (3, 4), }`.
fn parse_header(text: &str) -> Result<Header, NpyError> {
    let bad = |message: &str| NpyError::Header(format!("{message} in {:?}", text.trim()));
    let body = text
        .trim()
        .strip_prefix('{')
        .and_then(|rest| rest.strip_suffix('}'))
        .ok_or_else(|| bad("expected a dict"))?;
    let mut descr = None;
    let mut fortran_order = None;
    let mut shape = None;
    let mut rest = body.trim_start();
    while !rest.is_empty() {
        let (key, after_key) = quoted(rest).ok_or_else(|| bad("expected a quoted key"))?;
        let after_colon = after_key
            .trim_start()
            .strip_prefix(':')
            .ok_or_else(|| bad("expected ':'"))?
            .trim_start();
        let after_value = match key {
            "descr" => {
                let (value, after) =
                    quoted(after_colon).ok_or_else(|| bad("descr must be a string"))?;
                descr = Some(value.to_string());
                after
            }
            "fortran_order" => {
                if let Some(after) = after_colon.strip_prefix("True") {
                    fortran_order = Some(true);
                    after
                } else if let Some(after) = after_colon.strip_prefix("False") {
                    fortran_order = Some(false);
                    after
                } else {
                    return Err(bad("fortran_order must be True or False"));
                }
            }
            "shape" => {
                let inner = after_colon
                    .strip_prefix('(')
                    .ok_or_else(|| bad("shape must be a tuple"))?;
                let close = inner
                    .find(')')
                    .ok_or_else(|| bad("shape tuple is not closed"))?;
                let dims = inner[..close]
                    .split(',')
                    .map(str::trim)
                    .filter(|part| !part.is_empty())
                    .map(|part| {
                        part.parse::<usize>()
                            .map_err(|_| bad("shape entries must be integers"))
                    })
                    .collect::<Result<Vec<_>, _>>()?;
                shape = Some(dims);
                &inner[close + 1..]
            }
            _ => return Err(bad("unknown key")),
        };
        let after_value = after_value.trim_start();
        rest = after_value
            .strip_prefix(',')
            .unwrap_or(after_value)
            .trim_start();
        if !after_value.starts_with(',') && !rest.is_empty() {
            return Err(bad("expected ',' between entries"));
        }
    }
    Ok(Header {
        descr: descr.ok_or_else(|| bad("descr is missing"))?,
        fortran_order: fortran_order.ok_or_else(|| bad("fortran_order is missing"))?,
        shape: shape.ok_or_else(|| bad("shape is missing"))?,
    })
}

/// A single- or double-quoted string at the start of `text`, and what follows it.
fn quoted(text: &str) -> Option<(&str, &str)> {
    let quote = text.chars().next().filter(|c| *c == '\'' || *c == '"')?;
    let inner = &text[1..];
    let end = inner.find(quote)?;
    Some((&inner[..end], &inner[end + 1..]))
}

/// Encodes a little-endian float32 C-order `.npy` (version 1.0); used to write score fixtures and exports.
pub fn encode_npy_f32(shape: &[usize], values: &[f32]) -> Vec<u8> {
    let dims: Vec<String> = shape.iter().map(|dim| dim.to_string()).collect();
    let shape_text = if dims.len() == 1 {
        format!("({},)", dims[0])
    } else {
        format!("({})", dims.join(", "))
    };
    let mut header = format!("{{'descr': '<f4', 'fortran_order': False, 'shape': {shape_text}, }}");
    // Pad with spaces so the data starts on a 64-byte boundary, ending the header with a newline.
    while !(MAGIC.len() + 4 + header.len() + 1).is_multiple_of(64) {
        header.push(' ');
    }
    header.push('\n');
    let mut bytes = MAGIC.to_vec();
    bytes.extend_from_slice(&[1, 0]);
    bytes.extend_from_slice(&(header.len() as u16).to_le_bytes());
    bytes.extend_from_slice(header.as_bytes());
    for value in values {
        bytes.extend_from_slice(&value.to_le_bytes());
    }
    bytes
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn own_encoding_round_trips() {
        let values = [1.5f32, -2.0, 3.25, 0.0, 1e-30, f32::MAX];
        let array = parse_npy(&encode_npy_f32(&[2, 3], &values)).unwrap();
        assert_eq!(array.dtype, NpyFloat::Float32);
        assert_eq!(array.values.shape(), &[2, 3]);
        assert_eq!(array.values[[1, 2]], f32::MAX as f64);
        assert_eq!(array.values[[0, 1]], -2.0);
    }

    #[test]
    fn broken_files_are_typed_errors() {
        assert_eq!(parse_npy(b"PK\x03\x04"), Err(NpyError::Magic));
        let mut bytes = encode_npy_f32(&[4], &[1.0, 2.0, 3.0, 4.0]);
        bytes[6] = 9;
        assert_eq!(
            parse_npy(&bytes),
            Err(NpyError::Version { major: 9, minor: 0 })
        );
        let bytes = encode_npy_f32(&[4], &[1.0, 2.0, 3.0, 4.0]);
        assert!(matches!(
            parse_npy(&bytes[..bytes.len() - 3]),
            Err(NpyError::DataLength {
                expected: 16,
                found: 13,
                ..
            })
        ));
        assert!(matches!(
            parse_npy(&bytes[..20]),
            Err(NpyError::Truncated { part: "header" })
        ));
    }
}
