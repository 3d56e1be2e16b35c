//! Segmentation quality measures over label maps: confusion matrix, pixel accuracy, per-class and mean IoU.
//!
//! Owns: `ConfusionMatrix` (rows are ground truth, columns are predictions, as scikit-learn's
//! `confusion_matrix`), `MetricsError`.
//! Must not: know about models or files; it only counts label pairs.

use crate::taxonomy::UNLABELLED;

/// Why two label maps could not be compared.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum MetricsError {
    #[error("the label maps have {truth} and {predicted} pixels")]
    LengthMismatch { truth: usize, predicted: usize },
    #[error("label {value} at pixel {pixel} is not a class (there are {class_count})")]
    UnknownLabel {
        pixel: usize,
        value: u16,
        class_count: usize,
    },
}

/// Counts of (true class, predicted class) pairs.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ConfusionMatrix {
    class_count: usize,
    counts: Vec<u64>,
}

impl ConfusionMatrix {
    /// An empty matrix for `class_count` classes.
    pub fn new(class_count: usize) -> ConfusionMatrix {
        ConfusionMatrix {
            class_count,
            counts: vec![0; class_count * class_count],
        }
    }

    /// Number of classes.
    pub fn class_count(&self) -> usize {
        self.class_count
    }

    /// Pixels of true class `truth` predicted as `predicted`.
    pub fn count(&self, truth: usize, predicted: usize) -> u64 {
        if truth < self.class_count && predicted < self.class_count {
            self.counts[truth * self.class_count + predicted]
        } else {
            0
        }
    }

    /// Adds one pair of label maps. Pixels whose truth is `UNLABELLED` are skipped; a prediction of
    /// `UNLABELLED` on a labelled pixel is an error (a prediction must name a class).
    pub fn add_maps(&mut self, truth: &[u16], predicted: &[u16]) -> Result<(), MetricsError> {
        if truth.len() != predicted.len() {
            return Err(MetricsError::LengthMismatch {
                truth: truth.len(),
                predicted: predicted.len(),
            });
        }
        for (pixel, (&true_value, &predicted_value)) in truth.iter().zip(predicted).enumerate() {
            if true_value == UNLABELLED {
                continue;
            }
            for value in [true_value, predicted_value] {
                if value as usize >= self.class_count {
                    return Err(MetricsError::UnknownLabel {
                        pixel,
                        value,
                        class_count: self.class_count,
                    });
                }
            }
            self.counts[true_value as usize * self.class_count + predicted_value as usize] += 1;
        }
        Ok(())
    }

    /// Total counted pixels.
    pub fn total(&self) -> u64 {
        self.counts.iter().sum()
    }

    /// Correct pixels over counted pixels (0 when nothing was counted).
    pub fn pixel_accuracy(&self) -> f64 {
        let total = self.total();
        if total == 0 {
            return 0.0;
        }
        let correct: u64 = (0..self.class_count)
            .map(|class| self.count(class, class))
            .sum();
        correct as f64 / total as f64
    }

    /// Intersection over union per class, `TP / (TP + FP + FN)`; `None` for a class that is neither in
    /// the truth nor in the predictions.
    pub fn per_class_iou(&self) -> Vec<Option<f64>> {
        (0..self.class_count)
            .map(|class| {
                let true_positive = self.count(class, class);
                let truth_total: u64 = (0..self.class_count)
                    .map(|other| self.count(class, other))
                    .sum();
                let predicted_total: u64 = (0..self.class_count)
                    .map(|other| self.count(other, class))
                    .sum();
                let union = truth_total + predicted_total - true_positive;
                (union > 0).then(|| true_positive as f64 / union as f64)
            })
            .collect()
    }

    /// Mean of the per-class IoU over classes that appear in the truth or the predictions.
    pub fn mean_iou(&self) -> f64 {
        let present: Vec<f64> = self.per_class_iou().into_iter().flatten().collect();
        if present.is_empty() {
            0.0
        } else {
            present.iter().sum::<f64>() / present.len() as f64
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hand_counted_case() {
        let mut matrix = ConfusionMatrix::new(3);
        matrix
            .add_maps(&[0, 0, 1, 1, UNLABELLED, 2], &[0, 1, 1, 1, 0, 0])
            .unwrap();
        assert_eq!(matrix.total(), 5);
        assert!((matrix.pixel_accuracy() - 0.6).abs() < 1e-12);
        let iou = matrix.per_class_iou();
        // Class 0: TP 1, FN 1, FP 1 -> 1/3. Class 1: TP 2, FP 1 -> 2/3. Class 2: TP 0, FN 1 -> 0.
        assert!((iou[0].unwrap() - 1.0 / 3.0).abs() < 1e-12);
        assert!((iou[1].unwrap() - 2.0 / 3.0).abs() < 1e-12);
        assert_eq!(iou[2], Some(0.0));
        assert!((matrix.mean_iou() - 1.0 / 3.0).abs() < 1e-12);
    }

    #[test]
    fn bad_inputs_are_typed_errors() {
        let mut matrix = ConfusionMatrix::new(2);
        assert_eq!(
            matrix.add_maps(&[0], &[0, 1]),
            Err(MetricsError::LengthMismatch {
                truth: 1,
                predicted: 2
            })
        );
        assert!(matches!(
            matrix.add_maps(&[0, 1], &[0, 7]),
            Err(MetricsError::UnknownLabel {
                pixel: 1,
                value: 7,
                ..
            })
        ));
    }
}
