//! Per-pixel class scores from a robot's own network (an NPY array or a user model's output tensor),
//! validated and turned into per-pixel probabilities ready for pooling.
//!
//! Owns: `ScoreKind`, `ScoreLayout`, `PixelScoreOptions`, `pixel_probabilities` (shape, finiteness and
//! normalisation checks; never a silent reshape), and `unaries_from_pixel_scores`.
//! Must not: read images or run models; `byo_user_model` does that and hands its tensor here.

use ndarray::{Array2, ArrayViewD};

use super::byo::{ClassMapping, PerceptionError, SynonymTable};
use super::pooling::{pool_pixel_probabilities, PoolingRule};
use super::{Unaries, UnarySource};
use crate::scene::SegmentMap;
use crate::taxonomy::Taxonomy;

/// What the numbers in a score map are.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default, serde::Deserialize, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ScoreKind {
    /// Unnormalised scores; a softmax over channels turns them into probabilities.
    #[default]
    Logits,
    /// Probabilities: non-negative, summing to 1 over channels at every pixel.
    Probabilities,
    /// Natural-log probabilities: their exponentials sum to 1 over channels.
    LogProbabilities,
}

/// The order of the three axes of a score map.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum ScoreLayout {
    /// Height x width x channels.
    HeightWidthChannels,
    /// Channels x height x width.
    ChannelsHeightWidth,
    /// Decide from the shape; refused when both readings fit.
    #[default]
    Infer,
}

/// Tolerance on a pixel's probability sum (common practice for float32 softmax outputs).
pub const NORMALISATION_TOLERANCE: f64 = 1e-3;

/// Validates a 3-D score array for an image of `width x height` with `channel_count` channels and returns
/// per-pixel probabilities, `pixels x channels`, pixels row-major.
pub fn pixel_probabilities(
    scores: ArrayViewD<f64>,
    width: usize,
    height: usize,
    channel_count: usize,
    layout: ScoreLayout,
    kind: ScoreKind,
) -> Result<Array2<f32>, PerceptionError> {
    let shape = scores.shape().to_vec();
    let hwc = [height, width, channel_count];
    let chw = [channel_count, height, width];
    let channels_last = match layout {
        ScoreLayout::HeightWidthChannels if shape == hwc => true,
        ScoreLayout::ChannelsHeightWidth if shape == chw => false,
        ScoreLayout::Infer if shape == hwc && shape == chw => {
            return Err(PerceptionError::AmbiguousLayout { found: shape })
        }
        ScoreLayout::Infer if shape == hwc => true,
        ScoreLayout::Infer if shape == chw => false,
        _ => {
            let expected = match layout {
                ScoreLayout::HeightWidthChannels => format!("{hwc:?} (HxWxC)"),
                ScoreLayout::ChannelsHeightWidth => format!("{chw:?} (CxHxW)"),
                ScoreLayout::Infer => format!("{hwc:?} (HxWxC) or {chw:?} (CxHxW)"),
            };
            return Err(PerceptionError::Shape {
                found: shape,
                expected,
            });
        }
    };
    let mut probabilities = Array2::<f32>::zeros((width * height, channel_count));
    let mut values = vec![0f64; channel_count];
    for y in 0..height {
        for x in 0..width {
            for (channel, value) in values.iter_mut().enumerate() {
                let index = if channels_last {
                    [y, x, channel]
                } else {
                    [channel, y, x]
                };
                *value = scores[&index[..]];
                if !value.is_finite() {
                    return Err(PerceptionError::NonFinite {
                        x,
                        y,
                        channel,
                        value: *value,
                    });
                }
            }
            let pixel = probabilities.row_mut(y * width + x);
            match kind {
                ScoreKind::Probabilities => {
                    if let Some((channel, &value)) =
                        values.iter().enumerate().find(|(_, v)| **v < 0.0)
                    {
                        return Err(PerceptionError::NegativeProbability {
                            x,
                            y,
                            channel,
                            value,
                        });
                    }
                    check_sum(values.iter().sum(), x, y)?;
                }
                ScoreKind::LogProbabilities => {
                    if let Some((channel, &value)) =
                        values.iter().enumerate().find(|(_, v)| **v > 1e-6)
                    {
                        return Err(PerceptionError::NegativeProbability {
                            x,
                            y,
                            channel,
                            value: -value,
                        });
                    }
                    values.iter_mut().for_each(|value| *value = value.exp());
                    check_sum(values.iter().sum(), x, y)?;
                }
                ScoreKind::Logits => {
                    let maximum = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                    values
                        .iter_mut()
                        .for_each(|value| *value = (*value - maximum).exp());
                }
            }
            let total: f64 = values.iter().sum();
            for (target, value) in pixel.into_iter().zip(&values) {
                *target = (value / total) as f32;
            }
        }
    }
    Ok(probabilities)
}

fn check_sum(sum: f64, x: usize, y: usize) -> Result<(), PerceptionError> {
    if (sum - 1.0).abs() > NORMALISATION_TOLERANCE {
        return Err(PerceptionError::NotNormalised {
            x,
            y,
            sum,
            tolerance: NORMALISATION_TOLERANCE,
        });
    }
    Ok(())
}

/// How to read a per-pixel score map.
#[derive(Clone, Debug, PartialEq)]
pub struct PixelScoreOptions {
    /// The model's channel names, in channel order.
    pub class_names: Vec<String>,
    pub kind: ScoreKind,
    pub layout: ScoreLayout,
    pub pooling: PoolingRule,
    /// Leave channels with unknown names out instead of refusing the whole map.
    pub allow_unknown_classes: bool,
}

/// Per-pixel scores -> per-segment unaries over the taxonomy.
pub fn unaries_from_pixel_scores(
    scores: ArrayViewD<f64>,
    segments: &SegmentMap,
    options: &PixelScoreOptions,
    taxonomy: &Taxonomy,
    synonyms: &SynonymTable,
    source: UnarySource,
) -> Result<Unaries, PerceptionError> {
    let mapping = ClassMapping::from_names(&options.class_names, taxonomy, synonyms)
        .checked(options.allow_unknown_classes)?;
    if scores.ndim() == 3 {
        let (width, height) = (segments.width as usize, segments.height as usize);
        let fits = |shape: &[usize]| {
            shape == [height, width, options.class_names.len()]
                || shape == [options.class_names.len(), height, width]
        };
        if !fits(scores.shape()) {
            let shape = scores.shape();
            let spatial_hwc = (shape[0], shape[1]);
            let spatial_chw = (shape[1], shape[2]);
            if shape[2] == options.class_names.len() && spatial_hwc != (height, width) {
                return Err(PerceptionError::SizeMismatch {
                    segments_width: segments.width,
                    segments_height: segments.height,
                    width: spatial_hwc.1,
                    height: spatial_hwc.0,
                });
            }
            if shape[0] == options.class_names.len() && spatial_chw != (height, width) {
                return Err(PerceptionError::SizeMismatch {
                    segments_width: segments.width,
                    segments_height: segments.height,
                    width: spatial_chw.1,
                    height: spatial_chw.0,
                });
            }
        }
    }
    let probabilities = pixel_probabilities(
        scores,
        segments.width as usize,
        segments.height as usize,
        options.class_names.len(),
        options.layout,
        options.kind,
    )?;
    let log_probs = pool_pixel_probabilities(
        segments,
        probabilities.view(),
        &mapping,
        taxonomy.class_count(),
        options.pooling,
    )?;
    Ok(Unaries { log_probs, source })
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::{Array3, IxDyn};

    #[test]
    fn layouts_read_the_same_pixel() {
        // 2 channels, 1 row, 3 columns; pixel (2, 0) has probabilities (0.1, 0.9).
        let mut hwc = Array3::<f64>::zeros((1, 3, 2));
        let mut chw = Array3::<f64>::zeros((2, 1, 3));
        for x in 0..3 {
            let p = if x == 2 { 0.1 } else { 0.5 };
            hwc[[0, x, 0]] = p;
            hwc[[0, x, 1]] = 1.0 - p;
            chw[[0, 0, x]] = p;
            chw[[1, 0, x]] = 1.0 - p;
        }
        let from_hwc = pixel_probabilities(
            hwc.view().into_dyn(),
            3,
            1,
            2,
            ScoreLayout::Infer,
            ScoreKind::Probabilities,
        )
        .unwrap();
        let from_chw = pixel_probabilities(
            chw.view().into_dyn(),
            3,
            1,
            2,
            ScoreLayout::Infer,
            ScoreKind::Probabilities,
        )
        .unwrap();
        assert_eq!(from_hwc, from_chw);
        assert!((from_hwc[[2, 1]] - 0.9).abs() < 1e-7);
    }

    #[test]
    fn ambiguous_wrong_size_and_bad_values_are_refused() {
        let cube = ndarray::ArrayD::<f64>::from_elem(IxDyn(&[2, 2, 2]), 0.5);
        assert!(matches!(
            pixel_probabilities(
                cube.view(),
                2,
                2,
                2,
                ScoreLayout::Infer,
                ScoreKind::Probabilities
            ),
            Err(PerceptionError::AmbiguousLayout { .. })
        ));
        assert!(pixel_probabilities(
            cube.view(),
            2,
            2,
            2,
            ScoreLayout::HeightWidthChannels,
            ScoreKind::Probabilities
        )
        .is_ok());
        assert!(matches!(
            pixel_probabilities(cube.view(), 4, 1, 2, ScoreLayout::Infer, ScoreKind::Logits),
            Err(PerceptionError::Shape { .. })
        ));
        let mut bad = cube.clone();
        bad[[1, 0, 1]] = f64::NAN;
        assert!(matches!(
            pixel_probabilities(
                bad.view(),
                2,
                2,
                2,
                ScoreLayout::HeightWidthChannels,
                ScoreKind::Logits
            ),
            Err(PerceptionError::NonFinite {
                x: 0,
                y: 1,
                channel: 1,
                ..
            })
        ));
        let mut negative = cube.clone();
        negative[[0, 1, 0]] = -0.5;
        negative[[0, 1, 1]] = 1.5;
        assert!(matches!(
            pixel_probabilities(
                negative.view(),
                2,
                2,
                2,
                ScoreLayout::HeightWidthChannels,
                ScoreKind::Probabilities
            ),
            Err(PerceptionError::NegativeProbability { x: 1, y: 0, .. })
        ));
        let unnormalised = ndarray::ArrayD::<f64>::from_elem(IxDyn(&[2, 2, 2]), 0.7);
        assert!(matches!(
            pixel_probabilities(
                unnormalised.view(),
                2,
                2,
                2,
                ScoreLayout::HeightWidthChannels,
                ScoreKind::Probabilities
            ),
            Err(PerceptionError::NotNormalised { .. })
        ));
    }
}
