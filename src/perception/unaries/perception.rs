//! What a robot brings of its own perception to a scene, and the one place that turns it into the solve's
//! inputs: per-segment unaries and detections. `fix`, `store`, the service and (through the scenes they
//! register) `field-notes` all go through `Perception::unaries`.
//!
//! Owns: `Perception` (at most one score source: per-pixel scores with their class names, a label map with
//! its own class list, or a user ONNX model; plus detections), the choice between them and the built-in
//! classifier, and `read_class_list` (the class-list file format: one name per line, blank lines and lines
//! starting with `#` skipped).
//! Must not: read the scene's files or decode uploads (the callers do), or know the service's wire shapes.
//!
//! A class name is a taxonomy name or a synonym from `grammar/perception_synonyms.toml`. Unknown names are
//! refused, every one named, unless `drop_unknown_classes` is set: their channels (or label values) are
//! then left out and `Perceived::dropped` lists them so the caller can say so.

use std::sync::Arc;

use ndarray::{ArrayD, Axis};

use super::byo::{ClassMapping, PerceptionError, SynonymTable};
use super::byo_detections::Detection;
use super::byo_label_map::unaries_from_label_map;
use super::byo_pixel_scores::{
    unaries_from_pixel_scores, PixelScoreOptions, ScoreKind, ScoreLayout,
};
use super::byo_user_model::UserModel;
use super::pooling::PoolingRule;
use super::{builtin_unaries, Classifier, Unaries, UnarySource};
use crate::raster::{IndexImage, RgbImage};
use crate::scene::Scene;
use crate::taxonomy::{Taxonomy, UNLABELLED};

/// Per-pixel class scores, `H x W x C` or `C x H x W`.
#[derive(Clone, Debug, PartialEq)]
pub struct PixelScores {
    pub values: ArrayD<f64>,
    /// The channels' class names in order; `None`: the taxonomy's classes in id order (`sayso classes`).
    pub class_names: Option<Vec<String>>,
    /// `None`: probabilities when every pixel's values are non-negative and sum to 1 (within 1e-3),
    /// otherwise logits.
    pub kind: Option<ScoreKind>,
    pub layout: ScoreLayout,
    /// Where the scores came from, for messages and the unaries' source.
    pub origin: String,
}

/// A label map: pixel value `k` is class `k` of its class list (255 = unlabelled).
#[derive(Clone, Debug, PartialEq)]
pub struct LabelMap {
    pub labels: IndexImage,
    /// The map's own class list; `None`: values are taxonomy class ids.
    pub class_names: Option<Vec<String>>,
    pub origin: String,
}

/// Where a scene's per-segment scores come from.
#[derive(Clone, Default)]
pub enum ScoreSource {
    /// The built-in segment classifier.
    #[default]
    BuiltIn,
    PixelScores(PixelScores),
    LabelMap(LabelMap),
    /// A user per-pixel ONNX model, loaded from its config file (`byo_user_model`).
    UserModel(Arc<UserModel>),
}

impl std::fmt::Debug for ScoreSource {
    fn fmt(&self, formatter: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ScoreSource::BuiltIn => formatter.write_str("BuiltIn"),
            ScoreSource::PixelScores(scores) => write!(formatter, "PixelScores({})", scores.origin),
            ScoreSource::LabelMap(map) => write!(formatter, "LabelMap({})", map.origin),
            ScoreSource::UserModel(model) => {
                write!(formatter, "UserModel({:?})", model.config().classes)
            }
        }
    }
}

/// A robot's own perception of one scene.
#[derive(Clone, Debug, Default)]
pub struct Perception {
    pub scores: ScoreSource,
    pub detections: Vec<Detection>,
    /// Leave out classes whose names are unknown instead of refusing the input.
    pub drop_unknown_classes: bool,
}

/// The solve's inputs from a perception.
#[derive(Clone, Debug)]
pub struct Perceived {
    pub unaries: Unaries,
    pub detections: Vec<Detection>,
    /// Class names that were left out because they are unknown (only with `drop_unknown_classes`).
    pub dropped: Vec<String>,
}

impl Perception {
    /// Scores the scene's segments from this perception (the built-in classifier when it brings no
    /// scores), and checks its detections against the image size.
    pub fn unaries(
        &self,
        scene: &Scene,
        image: &RgbImage,
        taxonomy: &Taxonomy,
        classifier: &Classifier,
    ) -> Result<Perceived, PerceptionError> {
        let synonyms = SynonymTable::embedded(taxonomy);
        let (unaries, dropped) = match &self.scores {
            ScoreSource::BuiltIn => (
                builtin_unaries(scene, classifier).map_err(|error| PerceptionError::Model {
                    message: error.to_string(),
                })?,
                Vec::new(),
            ),
            ScoreSource::PixelScores(scores) => {
                self.pixel_score_unaries(scores, scene, taxonomy, &synonyms)?
            }
            ScoreSource::LabelMap(map) => {
                self.label_map_unaries(map, scene, taxonomy, &synonyms)?
            }
            ScoreSource::UserModel(model) => {
                let names = &model.config().classes;
                let mapping = ClassMapping::from_names(names, taxonomy, &synonyms);
                let unaries = model.unaries(
                    image,
                    &scene.segments,
                    taxonomy,
                    &synonyms,
                    PoolingRule::MeanProbability,
                )?;
                (unaries, mapping.unknown)
            }
        };
        for (index, detection) in self.detections.iter().enumerate() {
            let bbox = detection.bbox;
            if bbox.x1 > scene.width() || bbox.y1 > scene.height() {
                return Err(PerceptionError::Detection {
                    line: index + 1,
                    message: format!(
                        "box {bbox:?} is outside the {}x{} image",
                        scene.width(),
                        scene.height()
                    ),
                });
            }
        }
        Ok(Perceived {
            unaries,
            detections: self.detections.clone(),
            dropped,
        })
    }

    fn pixel_score_unaries(
        &self,
        scores: &PixelScores,
        scene: &Scene,
        taxonomy: &Taxonomy,
        synonyms: &SynonymTable,
    ) -> Result<(Unaries, Vec<String>), PerceptionError> {
        let class_names = scores.class_names.clone().unwrap_or_else(|| {
            taxonomy
                .classes()
                .iter()
                .map(|class| class.name.clone())
                .collect()
        });
        let mapping = ClassMapping::from_names(&class_names, taxonomy, synonyms)
            .checked(self.drop_unknown_classes)?;
        let kind = scores
            .kind
            .unwrap_or_else(|| inferred_kind(&scores.values, class_names.len()));
        let options = PixelScoreOptions {
            class_names,
            kind,
            layout: scores.layout,
            pooling: PoolingRule::MeanProbability,
            allow_unknown_classes: self.drop_unknown_classes,
        };
        let unaries = unaries_from_pixel_scores(
            scores.values.view(),
            &scene.segments,
            &options,
            taxonomy,
            synonyms,
            UnarySource::PixelScores {
                file: scores.origin.clone(),
            },
        )?;
        Ok((unaries, mapping.unknown))
    }

    fn label_map_unaries(
        &self,
        map: &LabelMap,
        scene: &Scene,
        taxonomy: &Taxonomy,
        synonyms: &SynonymTable,
    ) -> Result<(Unaries, Vec<String>), PerceptionError> {
        let (labels, dropped) = match &map.class_names {
            None => (map.labels.clone(), Vec::new()),
            Some(names) => {
                let mapping = ClassMapping::from_names(names, taxonomy, synonyms)
                    .checked(self.drop_unknown_classes)?;
                (remap_labels(&map.labels, &mapping)?, mapping.unknown)
            }
        };
        let unaries = unaries_from_label_map(
            &labels,
            None,
            &scene.segments,
            taxonomy.class_count(),
            PoolingRule::MeanProbability,
            UnarySource::LabelMap {
                file: map.origin.clone(),
            },
        )?;
        Ok((unaries, dropped))
    }
}

/// A label map's values through its class list onto taxonomy ids; values of unknown classes become
/// unlabelled, a value past the list is an error naming the pixel.
fn remap_labels(
    labels: &IndexImage,
    mapping: &ClassMapping,
) -> Result<IndexImage, PerceptionError> {
    let mut values = Vec::with_capacity(labels.values.len());
    for (pixel, &value) in labels.values.iter().enumerate() {
        if value == UNLABELLED {
            values.push(UNLABELLED);
            continue;
        }
        match mapping.columns.get(value as usize) {
            Some(Some(class)) => values.push(class.0),
            Some(None) => values.push(UNLABELLED),
            None => {
                return Err(PerceptionError::BadLabel {
                    x: pixel as u32 % labels.width.max(1),
                    y: pixel as u32 / labels.width.max(1),
                    value,
                    class_count: mapping.columns.len(),
                })
            }
        }
    }
    Ok(IndexImage {
        width: labels.width,
        height: labels.height,
        values,
    })
}

/// Probabilities when every value is non-negative and each pixel's `channels` values sum to 1 (within
/// 1e-3), else logits. The channel axis is the one of length `channels` (the last when both fit).
fn inferred_kind(values: &ArrayD<f64>, channels: usize) -> ScoreKind {
    if values.ndim() != 3 || values.iter().any(|&value| value < 0.0) {
        return ScoreKind::Logits;
    }
    let axis = if values.shape()[2] == channels {
        Axis(2)
    } else {
        Axis(0)
    };
    let sums = values.sum_axis(axis);
    if sums.iter().all(|&sum| (sum - 1.0).abs() <= 1e-3) {
        ScoreKind::Probabilities
    } else {
        ScoreKind::Logits
    }
}

/// Reads a class list: one class name per line; blank lines and lines starting with `#` are skipped.
pub fn read_class_list(text: &str) -> Result<Vec<String>, PerceptionError> {
    let names: Vec<String> = text
        .lines()
        .map(str::trim)
        .filter(|line| !line.is_empty() && !line.starts_with('#'))
        .map(str::to_string)
        .collect();
    if names.is_empty() {
        return Err(PerceptionError::NoClasses);
    }
    Ok(names)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn class_lists_skip_comments_and_blank_lines() {
        let names = read_class_list("# my robot's classes\nfloor\n\n  Couch \n").unwrap();
        assert_eq!(names, vec!["floor".to_string(), "Couch".to_string()]);
        assert!(matches!(
            read_class_list("# nothing\n\n"),
            Err(PerceptionError::NoClasses)
        ));
    }

    #[test]
    fn a_label_map_goes_through_its_own_class_list() {
        let taxonomy = Taxonomy::embedded();
        let synonyms = SynonymTable::embedded(&taxonomy);
        let names: Vec<String> = ["couch", "gnome", "floor"]
            .iter()
            .map(|name| name.to_string())
            .collect();
        let mapping = ClassMapping::from_names(&names, &taxonomy, &synonyms);
        let labels = IndexImage {
            width: 2,
            height: 2,
            values: vec![0, 1, 2, UNLABELLED],
        };
        let remapped = remap_labels(&labels, &mapping).unwrap();
        let id = |name: &str| taxonomy.class_by_name(name).unwrap().id;
        assert_eq!(
            remapped.values,
            vec![id("sofa").0, UNLABELLED, id("floor").0, UNLABELLED]
        );
        let past = IndexImage {
            width: 2,
            height: 1,
            values: vec![0, 3],
        };
        let error = remap_labels(&past, &mapping).unwrap_err();
        assert!(matches!(
            error,
            PerceptionError::BadLabel {
                x: 1,
                y: 0,
                value: 3,
                ..
            }
        ));
    }

    #[test]
    fn the_kind_of_scores_is_read_from_their_values() {
        let probabilities =
            ArrayD::from_shape_vec(vec![1, 2, 2], vec![0.25, 0.75, 1.0, 0.0]).unwrap();
        assert_eq!(inferred_kind(&probabilities, 2), ScoreKind::Probabilities);
        let logits = ArrayD::from_shape_vec(vec![1, 2, 2], vec![2.0, -1.0, 0.5, 0.5]).unwrap();
        assert_eq!(inferred_kind(&logits, 2), ScoreKind::Logits);
    }
}
