//! How good a classifier is on a set of scenes it never trained on, and on the corrected scenes: pixel
//! accuracy and mean IoU of each segment's most likely class painted over its pixels, and the expected
//! calibration error (15 bins, Guo et al. 2017) of its calibrated probabilities on segments, against
//! each segment's majority label.
//!
//! Owns: `SetFigures`, `CorrectedFigures`, `measure_set`, `measure_corrected`.
//! Must not: train or decide anything; the gate reads these figures.

use ndarray::Axis;

use super::data::{CorrectedScene, SceneRows};
use super::RetrainError;
use crate::unaries::calibration::expected_calibration_error;
use crate::unaries::metrics::ConfusionMatrix;
use crate::unaries::Classifier;

/// Figures on a scene set.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct SetFigures {
    pub scenes: usize,
    pub pixel_accuracy: f64,
    pub mean_iou: f64,
    /// Expected calibration error of the calibrated probabilities, on labelled segments.
    pub ece: f64,
}

/// Figures on the corrected scenes, against the operator-corrected labels.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct CorrectedFigures {
    pub scenes: usize,
    /// Over every labelled pixel of the corrected scenes.
    pub pixel_accuracy: f64,
    /// Over the pixels the corrections changed only.
    pub changed_pixel_accuracy: f64,
    pub changed_pixels: usize,
}

/// Each segment's most likely class and the log-probabilities, from `classifier`.
fn predict(
    classifier: &Classifier,
    rows: &SceneRows,
) -> Result<(Vec<u16>, ndarray::Array2<f32>), RetrainError> {
    let log_probs = classifier.classify(rows.features.view())?;
    let best = log_probs
        .axis_iter(Axis(0))
        .map(|row| {
            row.iter()
                .enumerate()
                .max_by(|a, b| a.1.total_cmp(b.1))
                .map_or(0, |(class, _)| class as u16)
        })
        .collect();
    Ok((best, log_probs))
}

fn painted(rows: &SceneRows, best: &[u16]) -> Vec<u16> {
    rows.scene
        .segments
        .labels
        .iter()
        .map(|&segment| best.get(segment as usize).copied().unwrap_or(0))
        .collect()
}

/// Pixel accuracy, mean IoU and ECE of `classifier` over `scenes` (each with its true labels `truth`).
pub fn measure_set(
    classifier: &Classifier,
    scenes: &[(SceneRows, crate::raster::IndexImage)],
    class_count: usize,
) -> Result<SetFigures, RetrainError> {
    let mut matrix = ConfusionMatrix::new(class_count);
    let mut all_log_probs = Vec::new();
    let mut labels = Vec::new();
    for (rows, truth) in scenes {
        let (best, log_probs) = predict(classifier, rows)?;
        matrix.add_maps(&truth.values, &painted(rows, &best))?;
        for (segment, label) in rows.majority.iter().enumerate() {
            if let Some(label) = label {
                all_log_probs.extend(log_probs.row(segment).iter().copied());
                labels.push(*label);
            }
        }
    }
    let log_probs = ndarray::Array2::from_shape_vec((labels.len(), class_count), all_log_probs)
        .map_err(|error| RetrainError::Internal(error.to_string()))?;
    Ok(SetFigures {
        scenes: scenes.len(),
        pixel_accuracy: matrix.pixel_accuracy(),
        mean_iou: matrix.mean_iou(),
        // The classifier's output is already calibrated log-probabilities: softmax at T = 1 gives them back.
        ece: expected_calibration_error(log_probs.view(), &labels, 1.0),
    })
}

/// Accuracy of `classifier` on the corrected scenes against their corrected labels, overall and on the
/// pixels the corrections changed.
pub fn measure_corrected(
    classifier: &Classifier,
    scenes: &[(CorrectedScene, SceneRows)],
) -> Result<CorrectedFigures, RetrainError> {
    let (mut right, mut labelled, mut changed_right, mut changed) =
        (0usize, 0usize, 0usize, 0usize);
    for (corrected, rows) in scenes {
        let (best, _) = predict(classifier, rows)?;
        let predicted = painted(rows, &best);
        let truth = &corrected.labelled.labels.values;
        for (pixel, (&want, &got)) in truth.iter().zip(&predicted).enumerate() {
            if want == crate::taxonomy::UNLABELLED {
                continue;
            }
            labelled += 1;
            right += usize::from(want == got);
            if corrected.before.values[pixel] != want {
                changed += 1;
                changed_right += usize::from(want == got);
            }
        }
    }
    let share = |part: usize, whole: usize| {
        if whole == 0 {
            0.0
        } else {
            part as f64 / whole as f64
        }
    };
    Ok(CorrectedFigures {
        scenes: scenes.len(),
        pixel_accuracy: share(right, labelled),
        changed_pixel_accuracy: share(changed_right, changed),
        changed_pixels: changed,
    })
}
