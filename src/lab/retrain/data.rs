//! The rows a fine-tuning run learns from: the operator-corrected scenes of an exported dataset (one per
//! scene, its latest corrected labels, the segments the corrections changed marked for emphasis) and a
//! replay set of training renders, each scene kept whole so validation can be split by scene.
//!
//! Owns: `CorrectedScene`, `read_corrections`, `render_scenes`, `SceneRows`, `scene_rows`,
//! `corrected_rows`.
//! Must not: train, judge a model or write files.

use std::collections::BTreeMap;
use std::ops::Range;
use std::path::Path;

use indicatif::ProgressBar;
use ndarray::Axis;

use super::RetrainError;
use crate::features::segment_features;
use crate::raster::IndexImage;
use crate::scene::files::LABELS_BEFORE_FILE;
use crate::scene::{Scene, SceneParams};
use crate::taxonomy::Taxonomy;
use crate::unaries::dataset::{load_labelled_image, majority_labels, DatasetEntry, LabelledImage};
use crate::unaries::trainer::LabelledFeatures;

/// One scene of the correction log as exported: the image with its latest corrected labels, and the labels
/// it had before the first exported correction of it.
#[derive(Clone, Debug)]
pub struct CorrectedScene {
    pub scene_id: i64,
    /// The scene's name in the log.
    pub name: String,
    /// Image, depth and room, with `labels` the latest corrected labels.
    pub labelled: LabelledImage,
    /// The labels before the first exported correction.
    pub before: IndexImage,
    /// Exported examples (corrections kept) of this scene.
    pub corrections: usize,
}

impl CorrectedScene {
    /// Pixels whose label the corrections changed.
    pub fn changed_pixels(&self) -> usize {
        self.before
            .values
            .iter()
            .zip(&self.labelled.labels.values)
            .filter(|(before, after)| before != after)
            .count()
    }
}

/// Reads an exported dataset (`index.jsonl` beside one folder per example) as one entry per scene.
pub fn read_corrections(
    directory: &Path,
    taxonomy: &Taxonomy,
) -> Result<Vec<CorrectedScene>, RetrainError> {
    let index_path = directory.join("index.jsonl");
    let text = std::fs::read_to_string(&index_path).map_err(|source| RetrainError::Read {
        path: index_path.clone(),
        message: source.to_string(),
    })?;
    let bad = |line: usize, message: String| RetrainError::Read {
        path: index_path.clone(),
        message: format!("line {line}: {message}"),
    };
    // scene id -> (version, folder) of each example, in version order.
    let mut by_scene: BTreeMap<i64, Vec<(i64, String, String)>> = BTreeMap::new();
    for (number, line) in text.lines().enumerate() {
        if line.trim().is_empty() {
            continue;
        }
        let record: serde_json::Value =
            serde_json::from_str(line).map_err(|error| bad(number + 1, error.to_string()))?;
        let field = |name: &str| {
            record
                .get(name)
                .ok_or_else(|| bad(number + 1, format!("no {name}")))
        };
        let scene = field("scene_id")?
            .as_i64()
            .ok_or_else(|| bad(number + 1, "scene_id is not a number".into()))?;
        let version = field("scene_version")?
            .as_i64()
            .ok_or_else(|| bad(number + 1, "scene_version is not a number".into()))?;
        let folder = field("directory")?
            .as_str()
            .ok_or_else(|| bad(number + 1, "directory is not text".into()))?;
        if folder.contains("..") || Path::new(folder).is_absolute() {
            return Err(bad(
                number + 1,
                format!("directory {folder} leaves the dataset"),
            ));
        }
        let name = record
            .get("scene_name")
            .and_then(|name| name.as_str())
            .unwrap_or(folder);
        by_scene
            .entry(scene)
            .or_default()
            .push((version, folder.to_string(), name.to_string()));
    }
    if by_scene.is_empty() {
        return Err(RetrainError::NoCorrections {
            path: directory.to_path_buf(),
        });
    }
    let mut scenes = Vec::new();
    for (scene_id, mut examples) in by_scene {
        examples.sort();
        let (first, last) = (&examples[0], &examples[examples.len() - 1]);
        let entry = DatasetEntry {
            name: last.2.clone(),
            directory: directory.join(&last.1),
        };
        let labelled = load_labelled_image(&entry, taxonomy.class_count())?;
        let before_path = directory.join(&first.1).join(LABELS_BEFORE_FILE);
        let before =
            crate::raster::read_index_png(&before_path, crate::raster::DEFAULT_PIXEL_LIMIT)?;
        if before.width != labelled.labels.width || before.height != labelled.labels.height {
            return Err(RetrainError::Read {
                path: before_path,
                message: format!("{LABELS_BEFORE_FILE} is not the size of the image"),
            });
        }
        scenes.push(CorrectedScene {
            scene_id,
            name: last.2.clone(),
            labelled,
            before,
            corrections: examples.len(),
        });
    }
    Ok(scenes)
}

/// Renders the scenes of `seeds` (room types in turn, as `sayso render` does), refusing the demo and trial
/// seeds (`tuning::check_training_seeds`).
pub fn render_scenes(
    taxonomy: &Taxonomy,
    seeds: Range<u64>,
    progress: &ProgressBar,
) -> Result<Vec<LabelledImage>, RetrainError> {
    crate::tuning::check_training_seeds(&seeds)?;
    let mut scenes = Vec::new();
    for (index, seed) in seeds.enumerate() {
        let rendered = crate::tuning::render_training_scene(taxonomy, seed, index)?;
        scenes.push(LabelledImage {
            name: rendered.name.clone(),
            image: rendered.image,
            labels: rendered.labels,
            depth: Some(rendered.depth),
            metadata: Some(serde_json::json!({ "room": rendered.metadata.room, "seed": seed })),
        });
        progress.inc(1);
    }
    Ok(scenes)
}

/// A labelled scene cut into segments: its features and each segment's majority class (`None` where no
/// pixel is labelled).
pub struct SceneRows {
    pub scene: Scene,
    pub features: ndarray::Array2<f32>,
    pub majority: Vec<Option<usize>>,
}

impl SceneRows {
    /// The labelled segments as training rows.
    pub fn labelled(&self) -> LabelledFeatures {
        let rows: Vec<usize> = (0..self.majority.len())
            .filter(|&segment| self.majority[segment].is_some())
            .collect();
        LabelledFeatures {
            features: self.features.select(Axis(0), &rows),
            labels: rows.iter().filter_map(|&s| self.majority[s]).collect(),
        }
    }
}

/// Segments a labelled scene with the scene defaults and computes its features and majority labels.
pub fn scene_rows(
    labelled: &LabelledImage,
    taxonomy: &Taxonomy,
    params: &SceneParams,
) -> Result<SceneRows, RetrainError> {
    let room = labelled
        .metadata
        .as_ref()
        .and_then(|metadata| metadata.get("room")?.as_str())
        .and_then(|name| taxonomy.room_by_name(name))
        .map(|room| room.id);
    let scene = Scene::from_image(
        labelled.name.clone(),
        labelled.image.clone(),
        labelled.depth.clone(),
        room,
        params,
    )?;
    let features = segment_features(&scene);
    let majority = majority_labels(&scene.segments, &labelled.labels, taxonomy.class_count())?
        .into_iter()
        .map(|class| class.map(|class| class.index()))
        .collect();
    Ok(SceneRows {
        scene,
        features,
        majority,
    })
}

/// The training rows of a corrected scene with their weights: `weight` for every labelled segment, and
/// `emphasis` times that for a segment whose majority label the corrections changed. Returns the rows,
/// their weights and how many were emphasised.
pub fn corrected_rows(
    corrected: &CorrectedScene,
    rows: &SceneRows,
    class_count: usize,
    weight: f32,
    emphasis: f32,
) -> Result<(LabelledFeatures, Vec<f32>, usize), RetrainError> {
    let before: Vec<Option<usize>> =
        majority_labels(&rows.scene.segments, &corrected.before, class_count)?
            .into_iter()
            .map(|class| class.map(|class| class.index()))
            .collect();
    let mut weights = Vec::new();
    let mut emphasised = 0;
    for (segment, after) in rows.majority.iter().enumerate() {
        if after.is_none() {
            continue;
        }
        if before[segment] != *after {
            emphasised += 1;
            weights.push(weight * emphasis);
        } else {
            weights.push(weight);
        }
    }
    Ok((rows.labelled(), weights, emphasised))
}
