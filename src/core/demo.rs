//! Finding the committed demo scenes: the `demo_scenes/` directory, the scenes in it in catalogue order, and
//! one scene's directory by name.
//!
//! The directory is `demo_scenes/` at the workspace root (fixed at compile time), unless the
//! `SAYSO_DEMO_DIR` environment variable or an explicit path says otherwise; every command and the service
//! find it with `demo_directory` and a scene in it with `demo_scene_path`.
//! Owns: that lookup, `DemoError` and the catalogue of demo scenes (`catalogue`: names, rooms, seeds).
//! Must not: read a scene's files or its ground truth (the capture is `crate::scene::capture`'s, the truth
//! `sayso_render::demo`'s), nor render anything.

pub mod catalogue;

use std::path::{Path, PathBuf};

use crate::raster::RasterError;
use crate::scene::files::METADATA_FILE as SCENE_FILE;
use crate::scene::SceneError;
use catalogue::DEMO_SCENES;

/// The environment variable that overrides where demo scenes are read from.
pub const DEMO_DIR_VARIABLE: &str = "SAYSO_DEMO_DIR";

/// The demo directory compiled into the crate (`demo_scenes/` at the workspace root).
pub const COMPILED_DEMO_DIR: &str = concat!(env!("SAYSO_WORKSPACE_DIR"), "/demo_scenes");

/// What went wrong finding or reading a demo scene.
#[derive(Debug, thiserror::Error)]
pub enum DemoError {
    #[error("demo scene directory {0} does not exist or cannot be read")]
    NoDirectory(PathBuf),
    #[error("no demo scenes (directories holding {SCENE_FILE}) under {0}")]
    NoScenes(PathBuf),
    #[error("no demo scene named '{name}' under {directory} (available: {available})")]
    UnknownScene {
        name: String,
        directory: PathBuf,
        available: String,
    },
    #[error("demo scene file {0} is missing")]
    MissingFile(PathBuf),
    #[error(transparent)]
    Raster(#[from] RasterError),
    #[error(transparent)]
    Capture(#[from] SceneError),
    #[error("{path} is not valid: {message}")]
    BadJson { path: PathBuf, message: String },
    #[error("{path}: {message}")]
    Inconsistent { path: PathBuf, message: String },
}

/// The demo directory: `explicit` if given, else `$SAYSO_DEMO_DIR`, else the compiled-in path.
pub fn demo_directory(explicit: Option<&Path>) -> PathBuf {
    if let Some(path) = explicit {
        return path.to_path_buf();
    }
    match std::env::var_os(DEMO_DIR_VARIABLE) {
        Some(value) if !value.is_empty() => PathBuf::from(value),
        _ => PathBuf::from(COMPILED_DEMO_DIR),
    }
}

/// Scene names under `directory`: catalogue scenes first in catalogue order, then any others by name.
pub fn list_demo_scenes(directory: &Path) -> Result<Vec<String>, DemoError> {
    let entries = std::fs::read_dir(directory)
        .map_err(|_| DemoError::NoDirectory(directory.to_path_buf()))?;
    let mut found: Vec<String> = entries
        .filter_map(|entry| entry.ok())
        .filter(|entry| entry.path().join(SCENE_FILE).is_file())
        .filter_map(|entry| entry.file_name().to_str().map(str::to_string))
        .collect();
    found.sort();
    let mut ordered: Vec<String> = DEMO_SCENES
        .iter()
        .filter(|entry| found.iter().any(|name| name == entry.name))
        .map(|entry| entry.name.to_string())
        .collect();
    for name in found {
        if !ordered.contains(&name) {
            ordered.push(name);
        }
    }
    if ordered.is_empty() {
        return Err(DemoError::NoScenes(directory.to_path_buf()));
    }
    Ok(ordered)
}

/// The directory of the demo scene `name` (or the first listed when `None`) under `directory`; the error
/// names the directory looked in and the scenes it holds.
pub fn demo_scene_path(directory: &Path, name: Option<&str>) -> Result<PathBuf, DemoError> {
    let names = list_demo_scenes(directory)?;
    let chosen = match name {
        Some(name) => names
            .iter()
            .find(|candidate| candidate.as_str() == name)
            .cloned()
            .ok_or_else(|| DemoError::UnknownScene {
                name: name.to_string(),
                directory: directory.to_path_buf(),
                available: names.join(", "),
            })?,
        None => names
            .first()
            .cloned()
            .ok_or_else(|| DemoError::NoScenes(directory.to_path_buf()))?,
    };
    Ok(directory.join(chosen))
}
