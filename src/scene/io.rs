//! Loading scenes and ground-truth label maps from disk.
//!
//! Owns: the scene directory layout and `scene.json` metadata, `load_scene_dir` and `load_label_map`.
//! Must not: decode PNG itself (that is `crate::raster`) or build segments (that is `scene::build`).
//!
//! A scene directory holds:
//! - `image.png`: the sRGB image (required);
//! - `depth.png`: a 16-bit single-channel depth map in millimetres, 0 = no reading (optional);
//! - `scene.json`: metadata (optional), at least `{"name": "...", "room": "kitchen", "width": 640,
//!   "height": 480}`; every field may be left out and other fields are ignored;
//! - `labels.png` (index PNG, pixel = class id, 255 = unlabelled), `instances.png` and `objects.json`
//!   for demo scenes with ground truth; read by whoever needs them (`load_label_map` for labels).

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::raster::{read_depth_png, read_index_png, read_rgb_png, IndexImage, RasterError};
use crate::taxonomy::{Taxonomy, UNLABELLED};

use super::{Scene, SceneError, SceneParams};

/// The file names of a scene directory.
pub const IMAGE_FILE: &str = "image.png";
pub const DEPTH_FILE: &str = "depth.png";
pub const METADATA_FILE: &str = "scene.json";
pub const LABELS_FILE: &str = "labels.png";
pub const INSTANCES_FILE: &str = "instances.png";

/// The part of `scene.json` the scene stage reads.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct SceneMetadata {
    #[serde(default)]
    pub name: Option<String>,
    /// A room type's canonical name from the taxonomy, e.g. `kitchen`.
    #[serde(default)]
    pub room: Option<String>,
    #[serde(default)]
    pub width: Option<u32>,
    #[serde(default)]
    pub height: Option<u32>,
}

fn required(path: PathBuf) -> Result<PathBuf, SceneError> {
    if path.is_file() {
        Ok(path)
    } else {
        Err(SceneError::MissingFile { path })
    }
}

fn read_metadata(path: &Path) -> Result<SceneMetadata, SceneError> {
    let metadata_error = |message: String| SceneError::Metadata {
        path: path.to_path_buf(),
        message,
    };
    let text = std::fs::read_to_string(path)
        .map_err(|error| metadata_error(format!("cannot read: {error}")))?;
    serde_json::from_str(&text)
        .map_err(|error| metadata_error(format!("not valid metadata: {error}")))
}

/// Loads a scene directory (layout in the module doc) and cuts it into a scene.
///
/// Images above `pixel_limit` pixels are refused before decoding. The room named in `scene.json` must be a
/// room type of `taxonomy`; the depth map, when present, must match the image's size, and so must any
/// `width` and `height` given in `scene.json`.
pub fn load_scene_dir(
    directory: &Path,
    taxonomy: &Taxonomy,
    params: &SceneParams,
    pixel_limit: u64,
) -> Result<Scene, SceneError> {
    if !directory.is_dir() {
        return Err(SceneError::NotADirectory {
            path: directory.to_path_buf(),
        });
    }
    let image_path = required(directory.join(IMAGE_FILE))?;
    let image = read_rgb_png(&image_path, pixel_limit)?;
    let depth_path = directory.join(DEPTH_FILE);
    let depth = if depth_path.is_file() {
        let depth = read_depth_png(&depth_path, pixel_limit)?;
        if depth.width != image.width || depth.height != image.height {
            return Err(RasterError::SizeMismatch {
                path: depth_path,
                width: image.width,
                height: image.height,
                found_width: depth.width,
                found_height: depth.height,
            }
            .into());
        }
        Some(depth)
    } else {
        None
    };
    let metadata_path = directory.join(METADATA_FILE);
    let metadata = if metadata_path.is_file() {
        read_metadata(&metadata_path)?
    } else {
        SceneMetadata::default()
    };
    let declared = (metadata.width, metadata.height);
    if declared.0.is_some_and(|width| width != image.width)
        || declared.1.is_some_and(|height| height != image.height)
    {
        return Err(SceneError::Metadata {
            path: metadata_path,
            message: format!(
                "declares {}x{} but {IMAGE_FILE} is {}x{}",
                declared.0.map_or("?".to_string(), |w| w.to_string()),
                declared.1.map_or("?".to_string(), |h| h.to_string()),
                image.width,
                image.height
            ),
        });
    }
    let room = match &metadata.room {
        None => None,
        Some(room) => match taxonomy.room_by_name(room) {
            Some(info) => Some(info.id),
            None => {
                let known: Vec<&str> = taxonomy.rooms().iter().map(|r| r.name.as_str()).collect();
                return Err(SceneError::UnknownRoom {
                    path: metadata_path,
                    room: room.clone(),
                    known: known.join(", "),
                });
            }
        },
    };
    let name = metadata.name.clone().unwrap_or_else(|| {
        directory.file_name().map_or("scene".to_string(), |name| {
            name.to_string_lossy().into_owned()
        })
    });
    Scene::from_image(name, image, depth, room, params)
}

/// Reads a ground-truth label map (index PNG, pixel = class id, 255 = unlabelled) of a `width x height`
/// image, checking every value is a class of `taxonomy` or 255. The error for a bad value names the file, the
/// value and the first pixel (in raster order) where it occurs.
pub fn load_label_map(
    path: &Path,
    taxonomy: &Taxonomy,
    width: u32,
    height: u32,
    pixel_limit: u64,
) -> Result<IndexImage, SceneError> {
    let labels = read_index_png(&required(path.to_path_buf())?, pixel_limit)?;
    if labels.width != width || labels.height != height {
        return Err(RasterError::SizeMismatch {
            path: path.to_path_buf(),
            width,
            height,
            found_width: labels.width,
            found_height: labels.height,
        }
        .into());
    }
    let class_count = taxonomy.class_count();
    let bad = labels
        .values
        .iter()
        .position(|&value| value as usize >= class_count && value != UNLABELLED);
    if let Some(index) = bad {
        let row_length = labels.width.max(1) as usize;
        return Err(SceneError::LabelOutOfRange {
            path: path.to_path_buf(),
            value: labels.values[index],
            x: (index % row_length) as u32,
            y: (index / row_length) as u32,
            class_count,
        });
    }
    Ok(labels)
}
