//! The built-in path from a scene to unaries: the scene's segment features through the ONNX classifier;
//! and the scene-level helpers the trainer and the model card need (training rows from labelled scenes,
//! predicted label maps, evaluation over a scene set).
//!
//! Owns: `builtin_unaries`, the choice of the image-only companion for a scene without depth
//! (`classifier_for`), the model file names (`MODEL_FILE`, `IMAGE_ONLY_MODEL_FILE`), `current_feature_layout`, `predicted_label_map`, `scene_training_rows`,
//! `dataset_scene_rows`, `dataset_training_rows`, `evaluate_on_dataset`.
//! Must not: compute features itself (that is `crate::features`) or build segments (`crate::scene`).

use indicatif::{ProgressBar, ProgressStyle};
use ndarray::{Array2, Axis};

use super::classifier::{Classifier, ClassifierError};
use super::contract::FeatureLayout;
use super::dataset::{
    load_labelled_image, majority_labels, DatasetEntry, DatasetError, LabelledImage,
};
use super::metrics::ConfusionMatrix;
use super::trainer::LabelledFeatures;
use super::{Unaries, UnarySource};
use crate::features::{segment_features, FEATURE_COUNT, FEATURE_LAYOUT_VERSION};
use crate::raster::IndexImage;
use crate::scene::{Scene, SceneParams};
use crate::taxonomy::Taxonomy;

/// The built-in classifier's file name in `models/` (trained on images with depth).
pub const MODEL_FILE: &str = "segment_classifier.onnx";
/// The image-only classifier's file name in `models/`: trained by `sayso train --without-depth`, it scores
/// the built-in classifier's scenes that have no depth map (`Classifier::for_scene`).
pub const IMAGE_ONLY_MODEL_FILE: &str = "segment_classifier_rgb.onnx";
/// The image-only classifier's model card, written beside it by `sayso train --without-depth`.
pub const IMAGE_ONLY_MODEL_CARD: &str = "segment_classifier_rgb.md";

/// The feature layout this build computes.
pub fn current_feature_layout() -> FeatureLayout {
    FeatureLayout {
        version: FEATURE_LAYOUT_VERSION,
        count: FEATURE_COUNT,
    }
}

/// Whether any segment of the scene has a depth reading (a missing depth map, or one with no reading at
/// all, is no depth).
pub fn scene_has_depth(scene: &Scene) -> bool {
    scene.depth.is_some() && scene.stats.iter().any(|stats| stats.depth_pixels > 0)
}

/// The model that scores `scene`: the classifier's image-only companion when the scene has no depth and
/// the classifier has one, else the classifier itself. The one choice behind every entry point (`fix`,
/// `store`, `serve`, `field-notes`, `demo`, `score` all score through `builtin_unaries`); a user's model
/// loaded in the built-in one's place has no companion and is never replaced.
pub fn classifier_for<'a>(scene: &Scene, classifier: &'a Classifier) -> &'a Classifier {
    match classifier.image_only() {
        Some(companion) if !scene_has_depth(scene) => companion,
        _ => classifier,
    }
}

/// Calibrated per-segment log-probabilities for a scene from the built-in classifier (its image-only
/// companion for a scene without depth, `classifier_for`).
pub fn builtin_unaries(scene: &Scene, classifier: &Classifier) -> Result<Unaries, ClassifierError> {
    let classifier = classifier_for(scene, classifier);
    let features = segment_features(scene);
    let log_probs = classifier.classify(features.view())?;
    Ok(Unaries {
        log_probs,
        source: UnarySource::BuiltIn {
            model: classifier.origin().to_string(),
        },
    })
}

/// The label map of each segment's most likely class.
pub fn predicted_label_map(scene: &Scene, unaries: &Unaries) -> IndexImage {
    let best: Vec<u16> = unaries
        .log_probs
        .axis_iter(Axis(0))
        .map(|row| {
            row.iter()
                .enumerate()
                .max_by(|a, b| a.1.total_cmp(b.1))
                .map_or(0, |(class, _)| class as u16)
        })
        .collect();
    IndexImage {
        width: scene.width(),
        height: scene.height(),
        values: scene
            .segments
            .labels
            .iter()
            .map(|&segment| best.get(segment as usize).copied().unwrap_or(0))
            .collect(),
    }
}

/// Whether a labelled scene's depth map is used when it has one (`WithoutDepth` trains and evaluates the
/// image-only classifier: every scene is read as if it had no depth map).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DepthUse {
    IfPresent,
    WithoutDepth,
}

fn scene_of(
    labelled: &LabelledImage,
    taxonomy: &Taxonomy,
    params: &SceneParams,
    depth: DepthUse,
) -> Result<Scene, DatasetError> {
    let room = labelled
        .metadata
        .as_ref()
        .and_then(|metadata| metadata.get("room"))
        .and_then(|room| room.as_str())
        .and_then(|name| taxonomy.room_by_name(name))
        .map(|room| room.id);
    Ok(Scene::from_image(
        labelled.name.clone(),
        labelled.image.clone(),
        match depth {
            DepthUse::IfPresent => labelled.depth.clone(),
            DepthUse::WithoutDepth => None,
        },
        room,
        params,
    )?)
}

/// Training rows of one labelled scene: every segment with at least one labelled pixel, labelled with its
/// majority ground-truth class.
pub fn scene_training_rows(
    labelled: &LabelledImage,
    taxonomy: &Taxonomy,
    params: &SceneParams,
    depth: DepthUse,
) -> Result<LabelledFeatures, DatasetError> {
    let scene = scene_of(labelled, taxonomy, params, depth)?;
    let features = segment_features(&scene);
    let majority = majority_labels(&scene.segments, &labelled.labels, taxonomy.class_count())?;
    let rows: Vec<usize> = (0..majority.len())
        .filter(|&segment| majority[segment].is_some())
        .collect();
    Ok(LabelledFeatures {
        features: features.select(Axis(0), &rows),
        labels: rows
            .iter()
            .filter_map(|&segment| majority[segment].map(|class| class.index()))
            .collect(),
    })
}

fn progress_bar(length: usize, show: bool, verb: &str) -> ProgressBar {
    if !show {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(length as u64);
    if let Ok(style) =
        ProgressStyle::with_template(&format!("{verb} {{bar:30}} scene {{pos}}/{{len}}"))
    {
        bar.set_style(style);
    }
    bar
}

/// Training rows of every scene of a dataset, one set per scene, in scene order.
pub fn dataset_scene_rows(
    entries: &[DatasetEntry],
    taxonomy: &Taxonomy,
    params: &SceneParams,
    depth: DepthUse,
    show_progress: bool,
) -> Result<Vec<LabelledFeatures>, DatasetError> {
    let progress = progress_bar(entries.len(), show_progress, "segmenting");
    let mut scenes = Vec::new();
    for entry in entries {
        scenes.push(scene_training_rows(
            &load_labelled_image(entry, taxonomy.class_count())?,
            taxonomy,
            params,
            depth,
        )?);
        progress.inc(1);
    }
    progress.finish_and_clear();
    Ok(scenes)
}

/// Training rows of every scene of a dataset, stacked in scene order.
pub fn dataset_training_rows(
    entries: &[DatasetEntry],
    taxonomy: &Taxonomy,
    params: &SceneParams,
    depth: DepthUse,
    show_progress: bool,
) -> Result<LabelledFeatures, DatasetError> {
    let mut labels = Vec::new();
    let mut values = Vec::new();
    for rows in dataset_scene_rows(entries, taxonomy, params, depth, show_progress)? {
        labels.extend(rows.labels);
        values.extend(rows.features.iter().copied());
    }
    let features =
        Array2::from_shape_vec((labels.len(), FEATURE_COUNT), values).map_err(|error| {
            DatasetError::Metadata {
                path: entries
                    .first()
                    .map(|e| e.directory.clone())
                    .unwrap_or_default(),
                message: error.to_string(),
            }
        })?;
    Ok(LabelledFeatures { features, labels })
}

/// Pixel-level confusion matrix of the built-in classifier's predictions over a scene set.
pub fn evaluate_on_dataset(
    entries: &[DatasetEntry],
    classifier: &Classifier,
    taxonomy: &Taxonomy,
    params: &SceneParams,
    depth: DepthUse,
) -> Result<ConfusionMatrix, DatasetError> {
    let mut matrix = ConfusionMatrix::new(taxonomy.class_count());
    for entry in entries {
        let labelled = load_labelled_image(entry, taxonomy.class_count())?;
        let scene = scene_of(&labelled, taxonomy, params, depth)?;
        let unaries = builtin_unaries(&scene, classifier)?;
        let predicted = predicted_label_map(&scene, &unaries);
        matrix.add_maps(&labelled.labels.values, &predicted.values)?;
    }
    Ok(matrix)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::raster::RgbImage;
    use crate::unaries::contract::ModelContract;
    use crate::unaries::mlp::seeded_random_mlp;
    use crate::unaries::onnx_writer::encode_model;

    #[test]
    fn builtin_unaries_cover_every_segment_and_paint_a_label_map() {
        let taxonomy = Taxonomy::embedded();
        let mut image = RgbImage::filled(48, 32, [200, 190, 170]);
        for y in 0..32 {
            for x in 24..48 {
                image.set(x, y, [40, 60, 140]);
            }
        }
        // 1536 pixels: fewer segments than a full-size scene aims at.
        let params = SceneParams {
            superpixels: sayso_core::slic::SlicParams::new(96, 10.0, 10).unwrap(),
            segments_per_region: 8,
        };
        let scene = Scene::from_image("two halves", image, None, None, &params).unwrap();
        let mlp = seeded_random_mlp(4, &[FEATURE_COUNT, 8, taxonomy.class_count()]);
        let contract = ModelContract::for_network(&taxonomy, &mlp, FEATURE_LAYOUT_VERSION);
        let bytes = encode_model(&mlp, &contract).unwrap();
        let classifier =
            Classifier::from_bytes(&bytes, "seeded", &taxonomy, current_feature_layout()).unwrap();
        let unaries = builtin_unaries(&scene, &classifier).unwrap();
        assert_eq!(unaries.segment_count(), scene.segment_count());
        assert_eq!(unaries.class_count(), taxonomy.class_count());
        for row in unaries.log_probs.rows() {
            assert!((row.iter().map(|v| v.exp()).sum::<f32>() - 1.0).abs() < 1e-4);
        }
        let painted = predicted_label_map(&scene, &unaries);
        assert_eq!(painted.pixel_count(), 48 * 32);
        assert!(painted
            .values
            .iter()
            .all(|&class| (class as usize) < taxonomy.class_count()));
    }
}
