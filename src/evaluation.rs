//! Scoring a labelling of a demo scene against its ground truth: pixel accuracy, mean IoU and object-level
//! accuracy, and the notes file each demo scene carries.
//!
//! Owns: `SceneScore`, `score_labels`, `PredictedObject`, the two ways predicted objects are formed
//! (`objects_from_regions`, `objects_from_graph`), `object_accuracy`, `read_notes`. Pixel accuracy and mean
//! IoU come from `unaries::metrics::ConfusionMatrix` (mean over classes present in the truth or the
//! prediction).
//!
//! Object-level accuracy is the share of ground-truth objects (instances.png + objects.json) matched by a
//! predicted object of the object's class with IoU >= 0.5 (the usual detection threshold, common practice).
//! At that threshold a predicted object can match at most one ground-truth object and the other way round
//! (two disjoint sets cannot both share more than half of their union with a third), so no assignment step
//! is needed. Predicted objects are formed in one of two ways, and `sayso score` prints both:
//!
//! - **region-based** (`objects_from_regions`): every 4-connected region of one predicted label is one object.
//!   Adjacent objects of one class merge into one region (a row of books on a shelf is one "object").
//! - **graph-based** (`objects_from_graph`): the objects of a scene graph (accepted hypotheses with their
//!   final member segments), i.e. what the robot reports as objects. Structure classes (floor, wall,
//!   ceiling) are not instances in the ground truth, so they never match anything either way.
//!
//! Must not: run the pipeline or write files.
use std::collections::HashMap;
use std::path::Path;

use serde::Serialize;

use crate::demo::DemoScene;
use crate::ids::{ClassId, SegmentId};
use crate::language::constraint::Focus;
use crate::pipeline::PointedNote;
use crate::render::SceneObject;
use crate::scene::Scene;
use crate::scenegraph::SceneGraph;
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
    /// Share of ground-truth objects found by region-based objects (see the module doc).
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

/// Reads a scene's notes with their pointed pixels: a line `@x,y note` points at pixel (x, y) while saying
/// the note; any other line is a note with no focus.
pub fn read_pointed_notes(scene_directory: &Path) -> Result<Vec<PointedNote>, EvaluationError> {
    let path = scene_directory.join(NOTES_FILE);
    read_notes(scene_directory)?
        .into_iter()
        .map(|line| {
            let Some(rest) = line.strip_prefix('@') else {
                return Ok(PointedNote {
                    text: line,
                    focus: None,
                });
            };
            let (at, text) = rest.split_once(char::is_whitespace).unwrap_or((rest, ""));
            let pixel = at.split_once(',').and_then(|(x, y)| {
                Some((x.trim().parse::<u32>().ok()?, y.trim().parse::<u32>().ok()?))
            });
            match pixel {
                Some((x, y)) if !text.trim().is_empty() => Ok(PointedNote {
                    text: text.trim().to_string(),
                    focus: Some(Focus::Pixel { x, y }),
                }),
                _ => Err(EvaluationError::Notes {
                    path: path.display().to_string(),
                    message: format!(
                        "\"{line}\": a pointed note is written \"@x,y what was said\""
                    ),
                }),
            }
        })
        .collect()
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

/// One predicted object: its class and the pixels it covers (row-major indices, ascending).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PredictedObject {
    pub class: ClassId,
    pub pixels: Vec<u32>,
}

/// Region-based objects: every 4-connected region of one predicted label (unlabelled pixels excluded).
pub fn objects_from_regions(width: usize, predicted: &[u16]) -> Vec<PredictedObject> {
    let (region, region_labels) = regions(width.max(1), predicted);
    let mut objects: Vec<PredictedObject> = region_labels
        .iter()
        .map(|&label| PredictedObject {
            class: ClassId(label),
            pixels: Vec::new(),
        })
        .collect();
    for (pixel, &r) in region.iter().enumerate() {
        if let Some(object) = objects.get_mut(r as usize) {
            object.pixels.push(pixel as u32);
        }
    }
    objects.retain(|object| object.class.0 != UNLABELLED);
    objects
}

/// Graph-based objects: each scene-graph object with the pixels of its member segments.
pub fn objects_from_graph(scene: &Scene, graph: &SceneGraph) -> Vec<PredictedObject> {
    objects_from_members(
        scene,
        graph
            .objects
            .iter()
            .map(|object| (object.class, object.members.as_slice())),
    )
}

/// Objects given as a class and member segments, each with the pixels of its members.
pub fn objects_from_members<'a>(
    scene: &Scene,
    objects: impl Iterator<Item = (ClassId, &'a [SegmentId])>,
) -> Vec<PredictedObject> {
    let segment_count = scene.segment_count();
    // Pixels of every segment, gathered once.
    let mut segment_pixels: Vec<Vec<u32>> = vec![Vec::new(); segment_count];
    for (pixel, &segment) in scene.segments.labels.iter().enumerate() {
        if let Some(list) = segment_pixels.get_mut(segment as usize) {
            list.push(pixel as u32);
        }
    }
    objects
        .map(|(class, members)| {
            let mut pixels: Vec<u32> = members
                .iter()
                .filter_map(|member| segment_pixels.get(member.index()))
                .flatten()
                .copied()
                .collect();
            pixels.sort_unstable();
            pixels.dedup();
            PredictedObject { class, pixels }
        })
        .collect()
}

/// Share of ground-truth objects matched by a predicted object of their class at IoU >= 0.5.
pub fn object_accuracy(scene: &DemoScene, predicted: &[PredictedObject]) -> f64 {
    object_accuracy_of(&scene.instances.values, &scene.objects, predicted)
}

/// `object_accuracy` on the raw parts: the instance map (0 and 255 are no object) and the object list.
fn object_accuracy_of(
    instances: &[u16],
    truth: &[SceneObject],
    predicted: &[PredictedObject],
) -> f64 {
    if truth.is_empty() {
        return 0.0;
    }
    let found = matched_of(instances, truth, predicted);
    found.iter().filter(|&&f| f).count() as f64 / truth.len() as f64
}

/// For every ground-truth object of `scene` (in `scene.objects` order), whether a predicted object of its
/// class covers it at IoU >= 0.5.
pub fn matched_objects(scene: &DemoScene, predicted: &[PredictedObject]) -> Vec<bool> {
    matched_of(&scene.instances.values, &scene.objects, predicted)
}

fn matched_of(
    instances: &[u16],
    truth: &[SceneObject],
    predicted: &[PredictedObject],
) -> Vec<bool> {
    let mut instance_area: HashMap<u16, u64> = HashMap::new();
    for &instance in instances {
        if instance != 0 && instance != UNLABELLED {
            *instance_area.entry(instance).or_insert(0) += 1;
        }
    }
    let mut found = vec![false; truth.len()];
    for object in predicted {
        let mut shared: HashMap<u16, u64> = HashMap::new();
        for &pixel in &object.pixels {
            if let Some(&instance) = instances.get(pixel as usize) {
                if instance != 0 && instance != UNLABELLED {
                    *shared.entry(instance).or_insert(0) += 1;
                }
            }
        }
        for (index, truth_object) in truth.iter().enumerate() {
            if found[index] || truth_object.class_id != object.class {
                continue;
            }
            let Ok(instance) = u16::try_from(truth_object.id) else {
                continue;
            };
            let (Some(&overlap), Some(&area)) =
                (shared.get(&instance), instance_area.get(&instance))
            else {
                continue;
            };
            let union = area + object.pixels.len() as u64 - overlap;
            if union > 0 && overlap as f64 / union as f64 >= 0.5 {
                found[index] = true;
            }
        }
    }
    found
}

/// Scores a per-pixel labelling of a demo scene; object accuracy is region-based (see the module doc).
pub fn score_labels(
    scene: &DemoScene,
    predicted: &[u16],
    class_count: usize,
) -> Result<SceneScore, EvaluationError> {
    let mut matrix = ConfusionMatrix::new(class_count);
    matrix.add_maps(&scene.labels.values, predicted)?;
    let objects = objects_from_regions(scene.labels.width as usize, predicted);
    Ok(SceneScore {
        pixel_accuracy: matrix.pixel_accuracy(),
        mean_iou: matrix.mean_iou(),
        object_accuracy: object_accuracy(scene, &objects),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn notes_may_point_and_a_bad_point_is_a_typed_error() {
        let directory = tempfile::tempdir().unwrap();
        std::fs::write(
            directory.path().join(NOTES_FILE),
            "# a comment\nthere are two mugs\n@165,203 that's the counter\n",
        )
        .unwrap();
        let notes = read_pointed_notes(directory.path()).unwrap();
        assert_eq!(notes.len(), 2);
        assert_eq!(notes[0].focus, None);
        assert_eq!(notes[1].text, "that's the counter");
        assert_eq!(notes[1].focus, Some(Focus::Pixel { x: 165, y: 203 }));
        std::fs::write(
            directory.path().join(NOTES_FILE),
            "@165 that's the counter\n",
        )
        .unwrap();
        assert!(matches!(
            read_pointed_notes(directory.path()),
            Err(EvaluationError::Notes { .. })
        ));
    }

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

    fn book(id: u32) -> SceneObject {
        SceneObject {
            id,
            class: "book".to_string(),
            class_id: ClassId(26),
            bbox: [0, 0, 1, 1],
            area: 2,
            rests_on: None,
        }
    }

    #[test]
    fn adjacent_objects_of_one_class_merge_as_regions_but_not_as_graph_objects() {
        // 4x1 image: two books side by side (instances 1 and 2), predicted all book.
        let instances = [1u16, 1, 2, 2];
        let truth = [book(1), book(2)];
        let labels = [26u16; 4];
        let regions = objects_from_regions(4, &labels);
        assert_eq!(regions.len(), 1);
        // One region of 4 pixels shares 2 with each book: IoU 0.5 with both, so both count; with a third
        // book pixel the region no longer matches either.
        assert_eq!(object_accuracy_of(&instances, &truth, &regions), 1.0);
        let instances_wide = [1u16, 1, 2, 2, 3, 3];
        let truth_wide = [book(1), book(2), book(3)];
        let regions_wide = objects_from_regions(6, &[26u16; 6]);
        assert_eq!(
            object_accuracy_of(&instances_wide, &truth_wide, &regions_wide),
            0.0
        );
        let split: Vec<PredictedObject> = [vec![0, 1], vec![2, 3], vec![4, 5]]
            .into_iter()
            .map(|pixels| PredictedObject {
                class: ClassId(26),
                pixels,
            })
            .collect();
        assert_eq!(
            object_accuracy_of(&instances_wide, &truth_wide, &split),
            1.0
        );
    }

    #[test]
    fn a_match_needs_the_right_class_and_half_the_union() {
        let instances = [1u16, 1, 1, 0];
        let truth = [book(1)];
        let wrong_class = PredictedObject {
            class: ClassId(3),
            pixels: vec![0, 1, 2],
        };
        assert_eq!(object_accuracy_of(&instances, &truth, &[wrong_class]), 0.0);
        // 1 shared pixel of a union of 3: IoU 1/3.
        let too_small = PredictedObject {
            class: ClassId(26),
            pixels: vec![0],
        };
        assert_eq!(object_accuracy_of(&instances, &truth, &[too_small]), 0.0);
        // 2 shared of a union of 3.
        let enough = PredictedObject {
            class: ClassId(26),
            pixels: vec![0, 1],
        };
        assert_eq!(object_accuracy_of(&instances, &truth, &[enough]), 1.0);
    }
}
