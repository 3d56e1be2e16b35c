//! Loading a scene directory straight into a segmented `Scene`, and ground-truth label maps.
//!
//! Owns: `load_scene_dir` (a capture checked against a taxonomy's rooms, then segmented) and
//! `load_label_map`.
//! Must not: decode images itself (that is `crate::raster`), name files (that is `scene::files`) or build
//! segments (that is `scene::build`).

use std::path::{Path, PathBuf};

use crate::raster::{read_index_png, IndexImage, RasterError};
use crate::taxonomy::{Taxonomy, UNLABELLED};

use super::capture::load_capture;
use super::files::METADATA_FILE;
use super::{Scene, SceneError, SceneParams};

fn required(path: PathBuf) -> Result<PathBuf, SceneError> {
    if path.is_file() {
        Ok(path)
    } else {
        Err(SceneError::MissingFile { path })
    }
}

/// Loads a scene directory's capture (`scene::capture::load_capture`) and cuts it into a scene, with the room
/// `scene.json` declares, which must be a room type of `taxonomy`.
pub fn load_scene_dir(
    directory: &Path,
    taxonomy: &Taxonomy,
    params: &SceneParams,
    pixel_limit: u64,
) -> Result<Scene, SceneError> {
    let capture = load_capture(directory, pixel_limit)?;
    let room = match &capture.room {
        None => None,
        Some(room) => match taxonomy.room_by_name(room) {
            Some(info) => Some(info.id),
            None => {
                let known: Vec<&str> = taxonomy.rooms().iter().map(|r| r.name.as_str()).collect();
                return Err(SceneError::UnknownRoom {
                    path: directory.join(METADATA_FILE),
                    room: room.clone(),
                    known: known.join(", "),
                });
            }
        },
    };
    capture.segment(room, params)
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
