//! Pools per-pixel class probabilities into per-segment unaries.
//!
//! Owns: `PoolingRule` and `pool_pixel_probabilities`. The documented rule:
//! 1. every pixel carries a probability vector over the perception model's channels;
//! 2. per segment, the channels are averaged over the segment's pixels, either as probabilities
//!    (`MeanProbability`, the default: robust to a few confidently wrong pixels) or as log-probabilities
//!    (`MeanLogProbability`: a geometric mean, sharper; each probability floored at `PROBABILITY_FLOOR`
//!    before the logarithm);
//! 3. channels are summed into their taxonomy classes (several names may map to one class; unknown channels
//!    are left out), every taxonomy class gets `PROBABILITY_FLOOR` added so no class is impossible, and the
//!    row is renormalised and logged. A segment with no pixels gets the uniform distribution.
//!
//! Must not: read files or run models.

use ndarray::{Array2, ArrayView2};

use super::byo::{ClassMapping, PerceptionError};
use crate::scene::SegmentMap;

/// The probability every class gets added after pooling, so no class is ruled out by perception alone.
pub const PROBABILITY_FLOOR: f64 = 1e-4;

/// How per-pixel probabilities are averaged within a segment.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum PoolingRule {
    #[default]
    MeanProbability,
    MeanLogProbability,
}

/// Pools `pixel_probabilities` (`pixels x channels`, pixels in row-major order of the segment map) into
/// per-segment log-probabilities over `class_count` taxonomy classes.
pub fn pool_pixel_probabilities(
    segments: &SegmentMap,
    pixel_probabilities: ArrayView2<f32>,
    mapping: &ClassMapping,
    class_count: usize,
    rule: PoolingRule,
) -> Result<Array2<f32>, PerceptionError> {
    let pixel_count = segments.width as usize * segments.height as usize;
    if segments.labels.len() != pixel_count {
        return Err(PerceptionError::BadSegmentMap {
            pixel: segments.labels.len().min(pixel_count),
            segment: 0,
            segment_count: segments.segment_count,
        });
    }
    if pixel_probabilities.nrows() != pixel_count
        || pixel_probabilities.ncols() != mapping.columns.len()
    {
        return Err(PerceptionError::Shape {
            found: pixel_probabilities.shape().to_vec(),
            expected: format!("{pixel_count} pixels x {} channels", mapping.columns.len()),
        });
    }
    let segment_count = segments.segment_count as usize;
    let channel_count = mapping.columns.len();
    let mut sums = vec![0f64; segment_count * channel_count];
    let mut pixels_per_segment = vec![0usize; segment_count];
    for (pixel, (&segment, probabilities)) in segments
        .labels
        .iter()
        .zip(pixel_probabilities.rows())
        .enumerate()
    {
        let index = segment as usize;
        if index >= segment_count {
            return Err(PerceptionError::BadSegmentMap {
                pixel,
                segment,
                segment_count: segments.segment_count,
            });
        }
        pixels_per_segment[index] += 1;
        let row = &mut sums[index * channel_count..(index + 1) * channel_count];
        for (sum, &probability) in row.iter_mut().zip(probabilities) {
            *sum += match rule {
                PoolingRule::MeanProbability => probability as f64,
                PoolingRule::MeanLogProbability => (probability as f64).max(PROBABILITY_FLOOR).ln(),
            };
        }
    }
    let mut log_probabilities = Array2::<f32>::zeros((segment_count, class_count));
    for segment in 0..segment_count {
        let mut class_mass = vec![PROBABILITY_FLOOR; class_count];
        let pixels = pixels_per_segment[segment];
        if pixels == 0 {
            class_mass.iter_mut().for_each(|mass| *mass = 1.0);
        } else {
            for (channel, class) in mapping.columns.iter().enumerate() {
                let Some(class) = class.filter(|class| class.index() < class_count) else {
                    continue;
                };
                let mean = sums[segment * channel_count + channel] / pixels as f64;
                class_mass[class.index()] += match rule {
                    PoolingRule::MeanProbability => mean,
                    PoolingRule::MeanLogProbability => mean.exp(),
                };
            }
        }
        let total: f64 = class_mass.iter().sum();
        for (class, mass) in class_mass.iter().enumerate() {
            log_probabilities[[segment, class]] = (mass / total).ln() as f32;
        }
    }
    Ok(log_probabilities)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ids::ClassId;
    use ndarray::array;

    fn two_segment_map() -> SegmentMap {
        // 2x2 image: left column segment 0, right column segment 1.
        SegmentMap {
            width: 2,
            height: 2,
            labels: vec![0, 1, 0, 1],
            segment_count: 3,
        }
    }

    #[test]
    fn mean_probability_pooling_by_hand() {
        let mapping = ClassMapping {
            columns: vec![Some(ClassId(0)), Some(ClassId(1))],
            unknown: vec![],
        };
        let pixels = array![[1.0, 0.0], [0.2, 0.8], [0.5, 0.5], [0.4, 0.6]];
        let pooled = pool_pixel_probabilities(
            &two_segment_map(),
            pixels.view(),
            &mapping,
            2,
            PoolingRule::MeanProbability,
        )
        .unwrap();
        // Segment 0: mean (0.75, 0.25), plus the floor, renormalised.
        let expected = (0.75 + PROBABILITY_FLOOR) / (1.0 + 2.0 * PROBABILITY_FLOOR);
        assert!((pooled[[0, 0]] as f64 - expected.ln()).abs() < 1e-6);
        // Segment 2 has no pixels: uniform.
        assert!((pooled[[2, 0]] - 0.5f32.ln()).abs() < 1e-6);
        for row in pooled.rows() {
            let total: f32 = row.iter().map(|v| v.exp()).sum();
            assert!((total - 1.0).abs() < 1e-5);
        }
    }

    #[test]
    fn geometric_pooling_is_sharper_and_synonym_channels_add_up() {
        // Channels 0 and 1 are both class 0 (say "sofa" and "couch"), channel 2 is class 1.
        let mapping = ClassMapping {
            columns: vec![Some(ClassId(0)), Some(ClassId(0)), Some(ClassId(1))],
            unknown: vec![],
        };
        let pixels = array![
            [0.3, 0.3, 0.4],
            [0.1, 0.1, 0.8],
            [0.3, 0.3, 0.4],
            [0.1, 0.1, 0.8]
        ];
        let arithmetic = pool_pixel_probabilities(
            &two_segment_map(),
            pixels.view(),
            &mapping,
            2,
            PoolingRule::MeanProbability,
        )
        .unwrap();
        assert!((arithmetic[[0, 0]].exp() - 0.6).abs() < 1e-3);
        let geometric = pool_pixel_probabilities(
            &two_segment_map(),
            pixels.view(),
            &mapping,
            2,
            PoolingRule::MeanLogProbability,
        )
        .unwrap();
        assert!(geometric[[1, 1]] > arithmetic[[1, 1]] - 1e-6);
    }

    #[test]
    fn wrong_sizes_and_bad_segment_ids_are_errors() {
        let mapping = ClassMapping {
            columns: vec![Some(ClassId(0))],
            unknown: vec![],
        };
        let pixels = array![[1.0], [1.0], [1.0]];
        assert!(matches!(
            pool_pixel_probabilities(
                &two_segment_map(),
                pixels.view(),
                &mapping,
                1,
                PoolingRule::MeanProbability
            ),
            Err(PerceptionError::Shape { .. })
        ));
        let broken = SegmentMap {
            width: 1,
            height: 1,
            labels: vec![5],
            segment_count: 2,
        };
        assert!(matches!(
            pool_pixel_probabilities(
                &broken,
                array![[1.0]].view(),
                &mapping,
                1,
                PoolingRule::MeanProbability
            ),
            Err(PerceptionError::BadSegmentMap { segment: 5, .. })
        ));
    }
}
