//! A label map (index PNG of class ids) with an optional per-pixel confidence map, turned into unaries.
//!
//! Owns: `LabelMapOptions`, `label_map_probabilities`, `unaries_from_label_map`. The documented smoothing:
//! a pixel labelled `k` with confidence `c` gets `p = c * onehot(k) + (1 - c) / C` over the `C` taxonomy
//! classes, with `c` clipped to `[0, 1 - epsilon]` (`epsilon = CONFIDENCE_EPSILON`) so no class ever gets
//! probability zero; an unlabelled pixel (255) gets the uniform distribution. Confidence comes from an
//! 8-bit (`value / 255`) or 16-bit (`value / 65535`) greyscale PNG, or is `DEFAULT_CONFIDENCE` everywhere.
//! The per-pixel distributions are then pooled as in `pooling`.
//! Must not: guess class ids: a value that is neither a class id nor 255 is an error.

use ndarray::Array2;

use super::byo::{ClassMapping, PerceptionError};
use super::pooling::{pool_pixel_probabilities, PoolingRule};
use super::{Unaries, UnarySource};
use crate::ids::ClassId;
use crate::raster::IndexImage;
use crate::scene::SegmentMap;
use crate::taxonomy::UNLABELLED;

/// The confidence assumed for every labelled pixel when no confidence map is given (our own choice).
pub const DEFAULT_CONFIDENCE: f64 = 0.9;
/// The largest confidence used is `1 - CONFIDENCE_EPSILON`.
pub const CONFIDENCE_EPSILON: f64 = 1e-3;

/// A per-pixel confidence map; `scale` is the value meaning certainty (255 or 65535).
#[derive(Clone, Debug, PartialEq)]
pub struct ConfidenceMap {
    pub image: IndexImage,
    pub scale: f64,
}

/// Per-pixel probabilities over `class_count` classes from labels and confidences.
pub fn label_map_probabilities(
    labels: &IndexImage,
    confidence: Option<&ConfidenceMap>,
    class_count: usize,
) -> Result<Array2<f32>, PerceptionError> {
    if let Some(map) = confidence {
        if map.image.width != labels.width || map.image.height != labels.height {
            return Err(PerceptionError::ConfidenceSize {
                width: labels.width,
                height: labels.height,
                found_width: map.image.width,
                found_height: map.image.height,
            });
        }
    }
    let mut probabilities = Array2::<f32>::zeros((labels.pixel_count(), class_count));
    let uniform = 1.0 / class_count.max(1) as f64;
    for (pixel, &value) in labels.values.iter().enumerate() {
        let mut row = probabilities.row_mut(pixel);
        if value == UNLABELLED {
            row.fill(uniform as f32);
            continue;
        }
        if value as usize >= class_count {
            let width = labels.width.max(1);
            return Err(PerceptionError::BadLabel {
                x: pixel as u32 % width,
                y: pixel as u32 / width,
                value,
                class_count,
            });
        }
        let raw = confidence
            .map(|map| map.image.values[pixel] as f64 / map.scale)
            .unwrap_or(DEFAULT_CONFIDENCE);
        let certainty = raw.clamp(0.0, 1.0 - CONFIDENCE_EPSILON);
        row.fill(((1.0 - certainty) * uniform) as f32);
        row[value as usize] = (certainty + (1.0 - certainty) * uniform) as f32;
    }
    Ok(probabilities)
}

/// A label map (and optional confidence map) -> per-segment unaries, pooled with `rule`.
pub fn unaries_from_label_map(
    labels: &IndexImage,
    confidence: Option<&ConfidenceMap>,
    segments: &SegmentMap,
    class_count: usize,
    rule: PoolingRule,
    source: UnarySource,
) -> Result<Unaries, PerceptionError> {
    if labels.width != segments.width || labels.height != segments.height {
        return Err(PerceptionError::SizeMismatch {
            segments_width: segments.width,
            segments_height: segments.height,
            width: labels.width as usize,
            height: labels.height as usize,
        });
    }
    let probabilities = label_map_probabilities(labels, confidence, class_count)?;
    let mapping = ClassMapping {
        columns: (0..class_count)
            .map(|class| Some(ClassId(class as u16)))
            .collect(),
        unknown: Vec::new(),
    };
    let log_probs =
        pool_pixel_probabilities(segments, probabilities.view(), &mapping, class_count, rule)?;
    Ok(Unaries { log_probs, source })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn smoothing_formula_by_hand() {
        let labels = IndexImage {
            width: 3,
            height: 1,
            values: vec![1, UNLABELLED, 0],
        };
        let confidence = ConfidenceMap {
            image: IndexImage {
                width: 3,
                height: 1,
                values: vec![153, 0, 255],
            },
            scale: 255.0,
        };
        let p = label_map_probabilities(&labels, Some(&confidence), 4).unwrap();
        // Pixel 0: c = 0.6 -> 0.6 + 0.4 / 4 on class 1, 0.1 elsewhere.
        assert!((p[[0, 1]] - 0.7).abs() < 1e-6 && (p[[0, 0]] - 0.1).abs() < 1e-6);
        assert!((p[[1, 3]] - 0.25).abs() < 1e-7);
        // Pixel 2: c = 1 is clipped to 1 - epsilon, so other classes keep epsilon / 4.
        assert!((p[[2, 3]] as f64 - CONFIDENCE_EPSILON / 4.0).abs() < 1e-7);
        for row in p.rows() {
            assert!((row.sum() - 1.0).abs() < 1e-6);
        }
    }

    #[test]
    fn bad_labels_and_sizes_are_refused() {
        let labels = IndexImage {
            width: 2,
            height: 1,
            values: vec![0, 9],
        };
        assert!(matches!(
            label_map_probabilities(&labels, None, 4),
            Err(PerceptionError::BadLabel {
                x: 1,
                y: 0,
                value: 9,
                ..
            })
        ));
        let confidence = ConfidenceMap {
            image: IndexImage::filled(1, 1, 0),
            scale: 255.0,
        };
        assert!(matches!(
            label_map_probabilities(&labels, Some(&confidence), 10),
            Err(PerceptionError::ConfidenceSize { .. })
        ));
        let segments = SegmentMap {
            width: 1,
            height: 2,
            labels: vec![0, 0],
            segment_count: 1,
        };
        assert!(matches!(
            unaries_from_label_map(
                &labels,
                None,
                &segments,
                10,
                PoolingRule::MeanProbability,
                UnarySource::LabelMap {
                    file: "l.png".into()
                }
            ),
            Err(PerceptionError::SizeMismatch { .. })
        ));
    }
}
