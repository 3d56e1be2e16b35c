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
use crate::render::TruthObject;
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
    truth: &[TruthObject],
    predicted: &[PredictedObject],
) -> f64 {
    if truth.is_empty() {
        return 0.0;
    }
    let found = matched_of(instances, truth, predicted);
    found.iter().filter(|&&f| f).count() as f64 / truth.len() as f64
}

/// Objects counted one-to-one at IoU >= 0.5: the ground truth's, the predicted ones that could match
/// anything, and the matches.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
pub struct ObjectTally {
    pub truth: usize,
    pub predicted: usize,
    pub matched: usize,
}

impl ObjectTally {
    /// Share of ground-truth objects matched (what `object_accuracy` returns).
    pub fn recall(&self) -> f64 {
        if self.truth == 0 {
            0.0
        } else {
            self.matched as f64 / self.truth as f64
        }
    }

    /// The F1 score of the one-to-one matching, `2 matched / (truth + predicted)`: the "recognition
    /// quality" of panoptic quality (Kirillov et al., "Panoptic Segmentation", CVPR 2019), which charges a
    /// spurious predicted object as much as a missed one. 1 when both sides are empty.
    pub fn f1(&self) -> f64 {
        let total = self.truth + self.predicted;
        if total == 0 {
            1.0
        } else {
            2.0 * self.matched as f64 / total as f64
        }
    }
}

/// Counts ground-truth objects, predicted objects and one-to-one matches at IoU >= 0.5. A predicted object
/// of a class the truth labels but never makes an instance of (floor, wall, ceiling) is left out: it cannot
/// match and is no spurious object either. A predicted object of a class the scene does not hold at all
/// counts as spurious.
pub fn object_tally(scene: &DemoScene, predicted: &[PredictedObject]) -> ObjectTally {
    object_tally_of(
        &scene.labels.values,
        &scene.instances.values,
        &scene.objects,
        predicted,
        Smallest::default(),
    )
}

/// The smallest objects a tally counts, in pixels: ground-truth objects below `truth` are left out with
/// any predicted object that matches them, and predicted objects below `predicted` are left out.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Smallest {
    pub truth: u64,
    pub predicted: u64,
}

/// `object_tally` over the objects at least `smallest` in size.
pub fn object_tally_sized(
    scene: &DemoScene,
    predicted: &[PredictedObject],
    smallest: Smallest,
) -> ObjectTally {
    object_tally_of(
        &scene.labels.values,
        &scene.instances.values,
        &scene.objects,
        predicted,
        smallest,
    )
}

/// `object_tally` on the raw parts: the truth's label map, its instance map and object list.
fn object_tally_of(
    labels: &[u16],
    instances: &[u16],
    truth: &[TruthObject],
    predicted: &[PredictedObject],
    smallest: Smallest,
) -> ObjectTally {
    let mut labelled = vec![false; usize::from(u16::MAX) + 1];
    for &label in labels {
        labelled[usize::from(label)] = true;
    }
    let instanced: std::collections::HashSet<ClassId> =
        truth.iter().map(|object| object.class_id).collect();
    let candidates: Vec<PredictedObject> = predicted
        .iter()
        .filter(|object| {
            instanced.contains(&object.class) || !labelled[usize::from(object.class.0)]
        })
        .cloned()
        .collect();
    let (kept, small): (Vec<TruthObject>, Vec<TruthObject>) = truth
        .iter()
        .cloned()
        .partition(|object| object.area >= smallest.truth);
    // A predicted object that matches a truth object too small to count is left out with it.
    let counted: Vec<PredictedObject> = candidates
        .into_iter()
        .filter(|object| {
            object.pixels.len() as u64 >= smallest.predicted
                && !matched_of(instances, &small, std::slice::from_ref(object))
                    .iter()
                    .any(|&found| found)
        })
        .collect();
    let found = matched_of(instances, &kept, &counted)
        .iter()
        .filter(|&&found| found)
        .count();
    ObjectTally {
        truth: kept.len(),
        predicted: counted.len(),
        // At IoU exactly 0.5 one predicted object may cover two truth objects; it is one match.
        matched: found.min(counted.len()),
    }
}

/// For every ground-truth object of `scene` (in `scene.objects` order), whether a predicted object of its
/// class covers it at IoU >= 0.5.
pub fn matched_objects(scene: &DemoScene, predicted: &[PredictedObject]) -> Vec<bool> {
    matched_of(&scene.instances.values, &scene.objects, predicted)
}

fn matched_of(
    instances: &[u16],
    truth: &[TruthObject],
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

    fn book(id: u32) -> TruthObject {
        TruthObject {
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

    #[test]
    fn the_tally_charges_spurious_objects_but_not_structure() {
        // 6x1: books 1 and 2 (pixels 0-1 and 2-3), floor (label 0, no instance) on pixels 4-5.
        let labels = [26u16, 26, 26, 26, 0, 0];
        let instances = [1u16, 1, 2, 2, 0, 0];
        let truth = [book(1), book(2)];
        let object = |class: u16, pixels: Vec<u32>| PredictedObject {
            class: ClassId(class),
            pixels,
        };
        // Book 1 found, book 2 missed, a floor object, and a mug (class 40) the scene does not hold.
        let predicted = vec![
            object(26, vec![0, 1]),
            object(0, vec![4, 5]),
            object(40, vec![5]),
        ];
        let tally = object_tally_of(&labels, &instances, &truth, &predicted, Smallest::default());
        // The floor object is left out; the mug is spurious.
        assert_eq!(
            tally,
            ObjectTally {
                truth: 2,
                predicted: 2,
                matched: 1
            }
        );
        assert_eq!(tally.recall(), 0.5);
        // F1 = 2 * 1 / (2 + 2).
        assert_eq!(tally.f1(), 0.5);
        // Dropping the spurious mug raises F1 and leaves recall alone.
        let fewer = object_tally_of(
            &labels,
            &instances,
            &truth,
            &predicted[..2],
            Smallest::default(),
        );
        assert_eq!(fewer.recall(), 0.5);
        assert!((fewer.f1() - 2.0 / 3.0).abs() < 1e-12);
        // Nothing on either side is a perfect score; truth with nothing found is 0.
        assert_eq!(
            object_tally_of(&[0], &[0], &[], &[], Smallest::default()).f1(),
            1.0
        );
        assert_eq!(
            object_tally_of(&labels, &instances, &truth, &[], Smallest::default()).f1(),
            0.0
        );
    }

    #[test]
    fn a_sized_tally_leaves_out_small_truth_and_what_matches_it() {
        // 8x1: a 2-pixel book (instance 1) and a 6-pixel book (instance 2, area 6).
        let labels = [26u16; 8];
        let instances = [1u16, 1, 2, 2, 2, 2, 2, 2];
        let mut big = book(2);
        big.area = 6;
        let truth = [book(1), big];
        let object = |pixels: Vec<u32>| PredictedObject {
            class: ClassId(26),
            pixels,
        };
        // The small book found, the big one found, and a 1-pixel piece of the big one.
        let predicted = vec![
            object(vec![0, 1]),
            object(vec![2, 3, 4, 5, 6]),
            object(vec![7]),
        ];
        let all = object_tally_of(&labels, &instances, &truth, &predicted, Smallest::default());
        assert_eq!((all.truth, all.predicted, all.matched), (2, 3, 2));
        let sized = Smallest {
            truth: 3,
            predicted: 2,
        };
        let seen = object_tally_of(&labels, &instances, &truth, &predicted, sized);
        // The small book and its match are left out, and so is the 1-pixel piece.
        assert_eq!((seen.truth, seen.predicted, seen.matched), (1, 1, 1));
        assert_eq!(seen.f1(), 1.0);
    }
}
