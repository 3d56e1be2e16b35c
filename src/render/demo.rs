//! The demo scenes' ground truth: loading a scene directory with its truth layer.
//!
//! Owns: `DemoScene` (a scene's capture plus its ground-truth layer: labels, instances, objects, the
//! renderer's metadata), read only by evaluation, training and the trial, and the summaries shown of it.
//! Finding the directory and a scene in it is `sayso_core::demo`'s (re-exported here).
//! Must not: segment, classify or correct anything; it only reads files. The capture itself is read by
//! `sayso_core::scene::capture`, with file names from `sayso_core::scene::files`.

use std::path::{Path, PathBuf};

pub use crate::core_demo::{
    demo_directory, demo_scene_path, list_demo_scenes, DemoError, COMPILED_DEMO_DIR,
    DEMO_DIR_VARIABLE,
};
use crate::raster::{
    read_index_png, DepthImage, IndexImage, RasterError, RgbImage, DEFAULT_PIXEL_LIMIT,
};
use crate::scene::files::{
    DEPTH_FILE, INSTANCES_FILE, LABELS_FILE, METADATA_FILE as SCENE_FILE, OBJECTS_FILE,
};
use crate::scene::{load_capture, Capture};
use crate::{RenderedScene, SceneMetadata, TruthObject};

/// One demo (or rendered) scene: its capture's rasters plus the ground-truth layer.
#[derive(Clone, Debug, PartialEq)]
pub struct DemoScene {
    pub name: String,
    pub directory: PathBuf,
    pub metadata: SceneMetadata,
    pub image: RgbImage,
    pub depth: DepthImage,
    pub labels: IndexImage,
    pub instances: IndexImage,
    pub objects: Vec<TruthObject>,
}

impl DemoScene {
    /// A scene rendered in memory (no directory behind it).
    pub fn from_rendered(rendered: RenderedScene) -> DemoScene {
        DemoScene {
            name: rendered.metadata.name.clone(),
            directory: PathBuf::new(),
            metadata: rendered.metadata,
            image: rendered.image,
            depth: rendered.depth,
            labels: rendered.labels,
            instances: rendered.instances,
            objects: rendered.objects,
        }
    }

    /// What a robot would have of this scene: image and depth, no ground truth.
    pub fn capture(&self) -> Capture {
        Capture {
            name: self.name.clone(),
            directory: (!self.directory.as_os_str().is_empty()).then(|| self.directory.clone()),
            image: self.image.clone(),
            depth: Some(self.depth.clone()),
            camera: None,
            room: Some(self.metadata.room.clone()),
        }
    }
}

impl From<DemoScene> for Capture {
    fn from(scene: DemoScene) -> Capture {
        Capture {
            directory: (!scene.directory.as_os_str().is_empty()).then_some(scene.directory),
            name: scene.name,
            image: scene.image,
            depth: Some(scene.depth),
            camera: None,
            room: Some(scene.metadata.room),
        }
    }
}

/// Loads the scene `name` (or the first listed when `None`) from `directory`, with its ground truth.
pub fn load_demo_scene(directory: &Path, name: Option<&str>) -> Result<DemoScene, DemoError> {
    load_scene_directory(&demo_scene_path(directory, name)?)
}

/// Loads one scene directory with its ground truth (the capture by `crate::scene::load_capture`, then
/// `depth.png`, `labels.png`, `instances.png`, `objects.json` and `scene.json`, all required here) and checks
/// its parts agree in size.
pub fn load_scene_directory(scene_directory: &Path) -> Result<DemoScene, DemoError> {
    let file = |name: &str| -> Result<PathBuf, DemoError> {
        let path = scene_directory.join(name);
        if path.is_file() {
            Ok(path)
        } else {
            Err(DemoError::MissingFile(path))
        }
    };
    let metadata: SceneMetadata = read_json(&file(SCENE_FILE)?)?;
    let objects: Vec<TruthObject> = read_json(&file(OBJECTS_FILE)?)?;
    let capture = load_capture(scene_directory, DEFAULT_PIXEL_LIMIT)?;
    let image = capture.image;
    let depth = capture
        .depth
        .ok_or_else(|| DemoError::MissingFile(scene_directory.join(DEPTH_FILE)))?;
    let labels = read_index_png(&file(LABELS_FILE)?, DEFAULT_PIXEL_LIMIT)?;
    let instances = read_index_png(&file(INSTANCES_FILE)?, DEFAULT_PIXEL_LIMIT)?;
    for (name, width, height) in [
        (DEPTH_FILE, depth.width, depth.height),
        (LABELS_FILE, labels.width, labels.height),
        (INSTANCES_FILE, instances.width, instances.height),
    ] {
        if (width, height) != (image.width, image.height) {
            return Err(RasterError::SizeMismatch {
                path: scene_directory.join(name),
                width: image.width,
                height: image.height,
                found_width: width,
                found_height: height,
            }
            .into());
        }
    }
    if (metadata.width, metadata.height) != (image.width, image.height) {
        return Err(DemoError::Inconsistent {
            path: scene_directory.join(SCENE_FILE),
            message: format!(
                "says {}x{} but the image is {}x{}",
                metadata.width, metadata.height, image.width, image.height
            ),
        });
    }
    Ok(DemoScene {
        name: scene_directory
            .file_name()
            .and_then(|name| name.to_str())
            .unwrap_or(&metadata.name)
            .to_string(),
        directory: scene_directory.to_path_buf(),
        metadata,
        image,
        depth,
        labels,
        instances,
        objects,
    })
}

/// Where the labels shown for a scene come from. Today only the ground truth exists; the classifier's belief
/// and the corrected scene join later, so the summary and overlay take the source as one parameter.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BeliefSource {
    /// The renderer's ground-truth labels.
    GroundTruth,
}

impl BeliefSource {
    /// A heading for overlays and summaries.
    pub fn title(self) -> &'static str {
        match self {
            BeliefSource::GroundTruth => "ground truth labels (not a prediction)",
        }
    }

    /// The per-pixel class ids this source gives for `scene`.
    pub fn labels(self, scene: &DemoScene) -> Vec<u16> {
        match self {
            BeliefSource::GroundTruth => scene.labels.values.clone(),
        }
    }
}

/// One class's share of a scene in a summary.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ClassShare {
    pub class: String,
    pub class_id: crate::ids::ClassId,
    pub pixels: u64,
    /// Percent of all pixels.
    pub percent: f64,
    pub safety: bool,
}

/// What the robot currently believes about a scene, as written to `summary.json`.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SceneSummary {
    pub scene: String,
    pub room: String,
    pub source: BeliefSource,
    pub title: String,
    pub description: String,
    /// Classes present, most pixels first.
    pub classes: Vec<ClassShare>,
    pub objects: Vec<TruthObject>,
    /// Ids of objects whose class is safety-critical (people, pets, hazards).
    pub safety_objects: Vec<u32>,
}

/// Summarises `scene` as seen through `source`.
pub fn summarise(
    scene: &DemoScene,
    source: BeliefSource,
    taxonomy: &crate::taxonomy::Taxonomy,
) -> SceneSummary {
    let labels = source.labels(scene);
    let mut counts = vec![0u64; taxonomy.class_count()];
    for &label in &labels {
        if let Some(slot) = counts.get_mut(label as usize) {
            *slot += 1;
        }
    }
    let total = labels.len().max(1) as f64;
    let mut classes: Vec<ClassShare> = taxonomy
        .classes()
        .iter()
        .filter(|info| counts[info.id.index()] > 0)
        .map(|info| ClassShare {
            class: info.name.clone(),
            class_id: info.id,
            pixels: counts[info.id.index()],
            percent: (counts[info.id.index()] as f64 * 1000.0 / total).round() / 10.0,
            safety: info.safety,
        })
        .collect();
    classes.sort_by(|a, b| b.pixels.cmp(&a.pixels).then(a.class_id.cmp(&b.class_id)));
    let safety_objects = scene
        .objects
        .iter()
        .filter(|object| taxonomy.is_safety_critical(object.class_id))
        .map(|object| object.id)
        .collect();
    SceneSummary {
        scene: scene.name.clone(),
        room: scene.metadata.room.clone(),
        source,
        title: source.title().to_string(),
        description: scene.metadata.description.clone(),
        classes,
        objects: scene.objects.clone(),
        safety_objects,
    }
}

/// The summary as plain text for people.
pub fn summary_text(summary: &SceneSummary) -> String {
    let mut text = format!(
        "scene: {}\nroom: {}\nlabels: {}\n{}\n\nclasses present ({}):\n",
        summary.scene,
        summary.room,
        summary.title,
        summary.description,
        summary.classes.len()
    );
    for share in &summary.classes {
        text.push_str(&format!(
            "  {:<10} {:>6.1}%{}\n",
            share.class,
            share.percent,
            if share.safety { "  (safety)" } else { "" }
        ));
    }
    text.push_str(&format!("\nobjects ({}):\n", summary.objects.len()));
    for object in &summary.objects {
        let [x0, y0, x1, y1] = object.bbox;
        let support = object
            .rests_on
            .map(|id| format!(" on #{id}"))
            .unwrap_or_default();
        text.push_str(&format!(
            "  #{:<3} {:<10} box [{x0},{y0},{x1},{y1}) {} px{support}\n",
            object.id, object.class, object.area
        ));
    }
    text
}

fn read_json<T: serde::de::DeserializeOwned>(path: &Path) -> Result<T, DemoError> {
    let bad = |message: String| DemoError::BadJson {
        path: path.to_path_buf(),
        message,
    };
    let bytes = match std::fs::read(path) {
        Ok(bytes) => bytes,
        Err(error) if error.kind() == std::io::ErrorKind::NotFound => {
            return Err(DemoError::MissingFile(path.to_path_buf()))
        }
        Err(error) => return Err(bad(format!("it cannot be read ({error})"))),
    };
    let text = std::str::from_utf8(&bytes).map_err(|error| {
        bad(format!(
            "it is not UTF-8 text (the first bad byte is at offset {})",
            error.valid_up_to()
        ))
    })?;
    serde_json::from_str(text).map_err(|error| bad(error.to_string()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn missing_directory_and_scene_are_named() {
        let error = list_demo_scenes(Path::new("/nonexistent/demo")).unwrap_err();
        assert!(error.to_string().contains("/nonexistent/demo"));
        let empty = tempfile::tempdir().unwrap();
        assert!(matches!(
            list_demo_scenes(empty.path()),
            Err(DemoError::NoScenes(_))
        ));
        let scene = empty.path().join("half_scene");
        std::fs::create_dir(&scene).unwrap();
        std::fs::write(scene.join(SCENE_FILE), "{}").unwrap();
        let error = load_demo_scene(empty.path(), Some("half_scene")).unwrap_err();
        assert!(matches!(error, DemoError::BadJson { .. }), "{error}");
        // Bytes that are not UTF-8 are reported as such, not as a missing file.
        std::fs::write(scene.join(SCENE_FILE), b"{\"name\": \"hall\xff\"}").unwrap();
        let error = load_demo_scene(empty.path(), Some("half_scene")).unwrap_err();
        assert!(
            matches!(error, DemoError::BadJson { .. })
                && error.to_string().contains("not UTF-8")
                && error.to_string().contains("offset 14"),
            "{error}"
        );
        let error = load_demo_scene(empty.path(), Some("attic")).unwrap_err();
        assert!(error.to_string().contains("attic") && error.to_string().contains("half_scene"));
    }

    #[test]
    fn explicit_directory_wins() {
        assert_eq!(
            demo_directory(Some(Path::new("/tmp/x"))),
            PathBuf::from("/tmp/x")
        );
    }
}
