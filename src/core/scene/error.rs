//! The one error type of the scene stage.
//!
//! Owns: `SceneError`, every way building or loading a scene can fail, each naming the file or scene and
//! the problem.
//! Must not: format for a particular front end (HTTP, CLI); callers add their own context.

use std::path::PathBuf;

use crate::raster::RasterError;
use crate::slic::SlicError;

/// What went wrong building or loading a scene.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum SceneError {
    #[error("{path}: no such file")]
    MissingFile { path: PathBuf },
    #[error("{path} is not a scene directory")]
    NotADirectory { path: PathBuf },
    #[error("{directory} holds no colour image (looked for {tried})")]
    NoImage { directory: PathBuf, tried: String },
    /// An unreadable, truncated, oversized or wrongly sized raster; the raster error names the file.
    #[error(transparent)]
    Raster(#[from] RasterError),
    #[error("{path}: {message}")]
    Metadata { path: PathBuf, message: String },
    #[error("{path}: unknown room '{room}' (known rooms: {known})")]
    UnknownRoom {
        path: PathBuf,
        room: String,
        known: String,
    },
    #[error(
        "{path}: value {value} at pixel (x {x}, y {y}) is neither a class id below {class_count} nor 255 (unlabelled)"
    )]
    LabelOutOfRange {
        path: PathBuf,
        value: u16,
        x: u32,
        y: u32,
        class_count: usize,
    },
    #[error(
        "scene '{scene}': the depth map is {depth_width}x{depth_height} but the image is {width}x{height}"
    )]
    DepthSizeMismatch {
        scene: String,
        width: u32,
        height: u32,
        depth_width: u32,
        depth_height: u32,
    },
    #[error("scene '{scene}': superpixels: {source}")]
    Superpixels { scene: String, source: SlicError },
    #[error("scene '{scene}': segments_per_region must be at least 1")]
    BadSegmentsPerRegion { scene: String },
}
