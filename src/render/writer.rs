//! Writing a rendered scene to its directory: image.png, depth.png, labels.png, instances.png, objects.json and
//! scene.json.
//!
//! Owns: the JSON shapes of `objects.json` and `scene.json`, and reading those JSON files back; the file names
//! come from `crate::scene::files`. Must not: render (it receives a finished `RenderedScene`).

use std::path::{Path, PathBuf};

use crate::raster::{write_depth_png, write_index_png, write_rgb_png};

use super::{RenderError, RenderedScene, SceneMetadata, TruthObject};

/// File names inside a scene directory (the one list is `crate::scene::files`).
pub use crate::scene::files::{
    DEPTH_FILE, IMAGE_FILE, INSTANCES_FILE, LABELS_FILE, METADATA_FILE as SCENE_FILE, OBJECTS_FILE,
};

/// Writes every file of `scene` into `directory`, creating it when needed.
pub fn write_scene(directory: &Path, scene: &RenderedScene) -> Result<(), RenderError> {
    std::fs::create_dir_all(directory).map_err(|source| RenderError::Io {
        path: directory.to_path_buf(),
        source,
    })?;
    write_rgb_png(&directory.join(IMAGE_FILE), &scene.image)?;
    write_depth_png(&directory.join(DEPTH_FILE), &scene.depth)?;
    write_index_png(&directory.join(LABELS_FILE), &scene.labels)?;
    write_index_png(&directory.join(INSTANCES_FILE), &scene.instances)?;
    write_json(&directory.join(OBJECTS_FILE), &scene.objects)?;
    write_json(&directory.join(SCENE_FILE), &scene.metadata)?;
    Ok(())
}

fn write_json<T: serde::Serialize>(path: &Path, value: &T) -> Result<(), RenderError> {
    let mut text = serde_json::to_string_pretty(value).map_err(|error| RenderError::Json {
        path: path.to_path_buf(),
        message: error.to_string(),
    })?;
    text.push('\n');
    std::fs::write(path, text).map_err(|source| RenderError::Io {
        path: path.to_path_buf(),
        source,
    })
}

fn read_json<T: serde::de::DeserializeOwned>(path: &Path) -> Result<T, RenderError> {
    let text = std::fs::read_to_string(path).map_err(|source| RenderError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    serde_json::from_str(&text).map_err(|error| RenderError::Json {
        path: path.to_path_buf(),
        message: error.to_string(),
    })
}

/// Reads `objects.json` from a scene directory.
pub fn read_objects(directory: &Path) -> Result<Vec<TruthObject>, RenderError> {
    read_json(&directory.join(OBJECTS_FILE))
}

/// Reads `scene.json` from a scene directory.
pub fn read_metadata(directory: &Path) -> Result<SceneMetadata, RenderError> {
    read_json(&directory.join(SCENE_FILE))
}

/// The path of one file of a scene directory.
pub fn scene_file(directory: &Path, name: &str) -> PathBuf {
    directory.join(name)
}
