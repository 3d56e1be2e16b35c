//! Scoring a labelling of a demo scene against its ground truth: pixel accuracy, mean IoU and object-level
//! accuracy, and the notes file each demo scene carries.
//!
//! Owns: `SceneScore`, `score_labels`, `read_notes`. Pixel accuracy and mean IoU come from
//! `unaries::metrics::ConfusionMatrix` (mean over classes present in the truth or the prediction).
//! Object accuracy: a ground-truth object (instances.png + objects.json) counts as found when a connected
//! region (4-neighbour) of one predicted class, that class being the object's, overlaps it with IoU >= 0.5
//! (the usual detection threshold, common practice).
//! Must not: run the pipeline or write files.

use std::collections::HashMap;
use std::path::Path;

use serde::Serialize;

use crate::demo::DemoScene;
use crate::taxonomy::UNLABELLED;
use crate::unaries::metrics::{ConfusionMatrix, MetricsError};

/// The notes file of a demo scene directory.
pub const NOTES_FILE: &str = "notes.txt";

/// What can go wrong scoring.
#[derive(Debug, thiserror::Error)]
pub enum EvaluationError {
    #[error("scoring: {0}")]
    Metrics(#[from] MetricsError),
    #[error("reading notes {path}: {message}")]
    Notes { path: String, message: String },
}

/// One labelling's scores.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct SceneScore {
    pub pixel_accuracy: f64,
    pub mean_iou: f64,
    /// Share of ground-truth objects found (see the module doc).
    pub object_accuracy: f64,
}

/// Reads a scene's notes: one note a line; blank lines and `#` comments skipped.
pub fn read_notes(scene_directory: &Path) -> Result<Vec<String>, EvaluationError> {
    let path = scene_directory.join(NOTES_FILE);
    let text = std::fs::read_to_string(&path).map_err(|error| EvaluationError::Notes {
        path: path.display().to_string(),
        message: error.to_string(),
    })?;
    Ok(text
        .lines()
        .map(str::trim)
        .filter(|line| !line.is_empty() && !line.starts_with('#'))
        .map(str::to_string)
        .collect())
}

/// 4-neighbour connected regions of equal label; returns the region of every pixel and each region's label.
fn regions(width: usize, labels: &[u16]) -> (Vec<u32>, Vec<u16>) {
    let mut region = vec![u32::MAX; labels.len()];
    let mut region_labels = Vec::new();
    let mut stack = Vec::new();
    for start in 0..labels.len() {
        if region[start] != u32::MAX {
            continue;
        }
        let id = region_labels.len() as u32;
        let label = labels[start];
        region_labels.push(label);
        region[start] = id;
        stack.push(start);
        while let Some(pixel) = stack.pop() {
            let x = pixel % width;
            let mut visit = |next: usize| {
                if next < labels.len() && region[next] == u32::MAX && labels[next] == label {
                    region[next] = id;
                    stack.push(next);
                }
            };
            if x > 0 {
                visit(pixel - 1);
            }
            if x + 1 < width {
                visit(pixel + 1);
            }
            if pixel >= width {
                visit(pixel - width);
            }
            visit(pixel + width);
        }
    }
    (region, region_labels)
}

/// Share of ground-truth objects matched by a predicted region of their class at IoU >= 0.5.
pub fn object_accuracy(scene: &DemoScene, predicted: &[u16]) -> f64 {
    if scene.objects.is_empty() || predicted.len() != scene.instances.values.len() {
        return 0.0;
    }
    let width = scene.instances.width as usize;
    let (region, region_labels) = regions(width.max(1), predicted);
    let mut region_area = vec![0u64; region_labels.len()];
    for &r in &region {
        if let Some(area) = region_area.get_mut(r as usize) {
            *area += 1;
        }
    }
    // overlap[(instance, region)] and instance areas.
    let mut overlap: HashMap<(u16, u32), u64> = HashMap::new();
    let mut instance_area: HashMap<u16, u64> = HashMap::new();
    for (&instance, &r) in scene.instances.values.iter().zip(&region) {
        if instance == 0 || instance == UNLABELLED {
            continue;
        }
        *overlap.entry((instance, r)).or_insert(0) += 1;
        *instance_area.entry(instance).or_insert(0) += 1;
    }
    let mut found = 0usize;
    for object in &scene.objects {
        let Ok(instance) = u16::try_from(object.id) else {
            continue;
        };
        let gt_area = instance_area.get(&instance).copied().unwrap_or(0);
        if gt_area == 0 {
            continue;
        }
        let matched = overlap.iter().any(|(&(i, r), &shared)| {
            i == instance && region_labels.get(r as usize) == Some(&object.class_id.0) && {
                let union = gt_area + region_area[r as usize] - shared;
                union > 0 && shared as f64 / union as f64 >= 0.5
            }
        });
        if matched {
            found += 1;
        }
    }
    found as f64 / scene.objects.len() as f64
}

/// Scores a per-pixel labelling of a demo scene.
pub fn score_labels(
    scene: &DemoScene,
    predicted: &[u16],
    class_count: usize,
) -> Result<SceneScore, EvaluationError> {
    let mut matrix = ConfusionMatrix::new(class_count);
    matrix.add_maps(&scene.labels.values, predicted)?;
    Ok(SceneScore {
        pixel_accuracy: matrix.pixel_accuracy(),
        mean_iou: matrix.mean_iou(),
        object_accuracy: object_accuracy(scene, predicted),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn regions_split_equal_labels_that_do_not_touch() {
        // 4x2: a a b a / a b b a -> regions: left a, b block, right a.
        let labels = [1u16, 1, 2, 1, 1, 2, 2, 1];
        let (region, region_labels) = regions(4, &labels);
        assert_eq!(region_labels.len(), 3);
        assert_eq!(region[0], region[4]);
        assert_ne!(region[0], region[3]);
        assert_eq!(region[2], region[6]);
    }
}
