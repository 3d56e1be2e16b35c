//! Splitting labelled rows into a training part and a validation part: by whole scene (`split_by_scene`,
//! so no validation row comes from a training image), or by row for a feature matrix that names no scenes
//! (`split_for_validation`).
//!
//! Owns: both splits. Must not: train or read files.

use ndarray::Array2;

use super::trainer::{LabelledFeatures, TrainError};
use crate::random::SplitMix64;

/// Splits rows at random (seeded) into a training part and a validation part of `fraction` of the rows,
/// stratified by class so every class with two or more rows has at least one in each part.
pub fn split_for_validation(
    data: &LabelledFeatures,
    fraction: f64,
    seed: u64,
) -> (LabelledFeatures, LabelledFeatures) {
    let mut generator = SplitMix64::new(seed ^ 0x5EED_5A1D);
    let class_count = data.labels.iter().copied().max().map_or(0, |m| m + 1);
    let mut training_rows = Vec::new();
    let mut validation_rows = Vec::new();
    for class in 0..class_count {
        let mut rows: Vec<usize> = (0..data.len())
            .filter(|&row| data.labels[row] == class)
            .collect();
        generator.shuffle(&mut rows);
        let mut held = (rows.len() as f64 * fraction).round() as usize;
        if rows.len() >= 2 {
            held = held.clamp(1, rows.len() - 1);
        } else {
            held = 0;
        }
        validation_rows.extend_from_slice(&rows[..held]);
        training_rows.extend_from_slice(&rows[held..]);
    }
    training_rows.sort_unstable();
    validation_rows.sort_unstable();
    (data.select(&training_rows), data.select(&validation_rows))
}

/// Splits whole scenes: `fraction` of the scenes (rounded, at least one, and at least one left to train
/// on) go to validation, chosen at random (seeded), so no validation row comes from a training image.
/// Returns the training rows, the validation rows and the validation scenes' indices.
pub fn split_by_scene(
    scenes: &[LabelledFeatures],
    fraction: f64,
    seed: u64,
) -> Result<(LabelledFeatures, LabelledFeatures, Vec<usize>), TrainError> {
    if scenes.len() < 2 {
        return Err(TrainError::Config(format!(
            "validation is split by scene, so at least two scenes are needed; got {}",
            scenes.len()
        )));
    }
    let width = scenes[0].features.ncols();
    if let Some(other) = scenes.iter().find(|scene| scene.features.ncols() != width) {
        return Err(TrainError::WidthMismatch {
            training: width,
            validation: other.features.ncols(),
        });
    }
    let mut order: Vec<usize> = (0..scenes.len()).collect();
    SplitMix64::new(seed ^ 0x5CE7_E5A1).shuffle(&mut order);
    let held = ((scenes.len() as f64 * fraction).round() as usize).clamp(1, scenes.len() - 1);
    let mut validation_scenes = order[..held].to_vec();
    validation_scenes.sort_unstable();
    let gather = |chosen: &dyn Fn(usize) -> bool| {
        let mut labels = Vec::new();
        let mut values = Vec::new();
        for (index, scene) in scenes.iter().enumerate() {
            if chosen(index) {
                labels.extend_from_slice(&scene.labels);
                values.extend(scene.features.iter().copied());
            }
        }
        let rows = labels.len();
        LabelledFeatures {
            features: Array2::from_shape_vec((rows, width), values)
                .unwrap_or_else(|_| Array2::zeros((0, width))),
            labels,
        }
    };
    let validation = gather(&|index| validation_scenes.binary_search(&index).is_ok());
    let training = gather(&|index| validation_scenes.binary_search(&index).is_err());
    Ok((training, validation, validation_scenes))
}

/// Three Gaussian blobs (unit spread) in two features, the rows in turn of classes 0, 1 and 2: labelled data
/// for the trainer's and the split's unit tests.
#[cfg(test)]
pub(crate) fn blobs(rows: usize, seed: u64) -> LabelledFeatures {
    let mut generator = SplitMix64::new(seed);
    let centres = [[0.0, 0.0], [4.0, 0.0], [0.0, 4.0]];
    let mut features = Array2::zeros((rows, 2));
    let mut labels = Vec::new();
    for row in 0..rows {
        let class = row % 3;
        for column in 0..2 {
            features[[row, column]] = (centres[class][column] + generator.next_normal()) as f32;
        }
        labels.push(class);
    }
    LabelledFeatures { features, labels }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_scene_split_keeps_every_scene_whole() {
        let scenes: Vec<LabelledFeatures> =
            (0..5).map(|seed| blobs(30 + seed as usize, seed)).collect();
        let (training, validation, held) = split_by_scene(&scenes, 0.2, 9).unwrap();
        assert_eq!(held.len(), 1);
        let held_rows = scenes[held[0]].len();
        assert_eq!(validation.len(), held_rows);
        assert_eq!(validation.features, scenes[held[0]].features);
        assert_eq!(
            training.len() + held_rows,
            scenes.iter().map(|s| s.len()).sum::<usize>()
        );
        assert!(matches!(
            split_by_scene(&scenes[..1], 0.2, 9),
            Err(TrainError::Config(_))
        ));
    }
}
