//! The segment classifier's network as plain arrays: feature normalisation, dense layers with ReLU between
//! them, a calibration temperature and a log-softmax output.
//!
//! Owns: `Mlp`, `DenseLayer`, the reference forward pass in ndarray (used by the trainer and to check the
//! ONNX graph), numerically stable log-softmax.
//! Must not: read files or know about ONNX; `onnx_writer` turns an `Mlp` into a model file.

use ndarray::{Array1, Array2, ArrayView2, Axis};

/// One fully connected layer: `output = input · weights + bias`, `weights` is `inputs x outputs`.
#[derive(Clone, Debug, PartialEq)]
pub struct DenseLayer {
    pub weights: Array2<f32>,
    pub bias: Array1<f32>,
}

/// A multilayer perceptron over normalised features. Zero hidden layers is softmax regression.
#[derive(Clone, Debug, PartialEq)]
pub struct Mlp {
    /// Per-feature mean subtracted before the first layer.
    pub feature_means: Array1<f32>,
    /// Per-feature standard deviation divided by after subtracting the mean (never zero).
    pub feature_stds: Array1<f32>,
    /// Hidden layers (ReLU after each) then the output layer, in order.
    pub layers: Vec<DenseLayer>,
    /// Logits are divided by this before the log-softmax (temperature scaling); 1 means uncalibrated.
    pub temperature: f32,
}

impl Mlp {
    /// Number of input features.
    pub fn feature_count(&self) -> usize {
        self.feature_means.len()
    }

    /// Number of output classes.
    pub fn class_count(&self) -> usize {
        self.layers
            .last()
            .map(|layer| layer.bias.len())
            .unwrap_or(0)
    }

    /// Number of hidden layers.
    pub fn hidden_layer_count(&self) -> usize {
        self.layers.len().saturating_sub(1)
    }

    /// Number of trainable numbers (weights and biases).
    pub fn parameter_count(&self) -> usize {
        self.layers
            .iter()
            .map(|layer| layer.weights.len() + layer.bias.len())
            .sum()
    }

    /// Whether the shapes chain: features -> layer 0 -> ... -> classes.
    pub fn shapes_are_consistent(&self) -> bool {
        let mut width = self.feature_count();
        if self.feature_stds.len() != width || self.layers.is_empty() {
            return false;
        }
        for layer in &self.layers {
            if layer.weights.nrows() != width || layer.weights.ncols() != layer.bias.len() {
                return false;
            }
            width = layer.bias.len();
        }
        true
    }

    /// Normalises raw features: `(x - mean) / std` per column.
    pub fn normalise(&self, features: ArrayView2<f32>) -> Array2<f32> {
        let mut normalised = features.to_owned();
        for mut row in normalised.rows_mut() {
            row -= &self.feature_means;
            row /= &self.feature_stds;
        }
        normalised
    }

    /// Uncalibrated logits from already-normalised features.
    pub fn logits_from_normalised(&self, normalised: ArrayView2<f32>) -> Array2<f32> {
        let mut activation = normalised.to_owned();
        for (index, layer) in self.layers.iter().enumerate() {
            activation = activation.dot(&layer.weights) + &layer.bias;
            if index + 1 < self.layers.len() {
                activation.mapv_inplace(|value| value.max(0.0));
            }
        }
        activation
    }

    /// Calibrated log-probabilities from raw features: the reference for what the ONNX graph computes.
    pub fn log_probabilities(&self, features: ArrayView2<f32>) -> Array2<f32> {
        let mut logits = self.logits_from_normalised(self.normalise(features).view());
        logits.mapv_inplace(|value| value / self.temperature);
        log_softmax_rows(logits)
    }
}

/// Row-wise log-softmax, stable for large logits (subtracts each row's maximum first).
pub fn log_softmax_rows(mut logits: Array2<f32>) -> Array2<f32> {
    for mut row in logits.axis_iter_mut(Axis(0)) {
        let maximum = row.fold(f32::NEG_INFINITY, |best, &value| best.max(value));
        let log_sum = row
            .iter()
            .map(|&value| ((value - maximum) as f64).exp())
            .sum::<f64>()
            .ln() as f32;
        row.mapv_inplace(|value| value - maximum - log_sum);
    }
    logits
}

/// A network with seeded random weights (He-scaled normal) and normalisation, for fixtures and benchmarks.
/// `widths` is `[features, hidden..., classes]`.
pub fn seeded_random_mlp(seed: u64, widths: &[usize]) -> Mlp {
    let mut generator = crate::random::SplitMix64::new(seed);
    let feature_count = widths.first().copied().unwrap_or(0);
    let mut draw = |scale: f64| (generator.next_normal() * scale) as f32;
    let feature_means = Array1::from_shape_fn(feature_count, |_| draw(10.0));
    let feature_stds = Array1::from_shape_fn(feature_count, |_| 0.5 + draw(1.0).abs());
    let layers = widths
        .windows(2)
        .map(|pair| {
            let scale = (2.0 / pair[0].max(1) as f64).sqrt();
            DenseLayer {
                weights: Array2::from_shape_fn((pair[0], pair[1]), |_| draw(scale)),
                bias: Array1::from_shape_fn(pair[1], |_| draw(0.1)),
            }
        })
        .collect();
    Mlp {
        feature_means,
        feature_stds,
        layers,
        temperature: 1.3,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn log_softmax_rows_sum_to_one_and_survive_huge_logits() {
        let result = log_softmax_rows(array![[1000.0, 1000.0], [0.0, 2.0_f32.ln()]]);
        assert!((result[[0, 0]] - 0.5f32.ln()).abs() < 1e-6);
        // exp(0) / (1 + 2) and 2 / 3.
        assert!((result[[1, 0]] - (1.0f32 / 3.0).ln()).abs() < 1e-6);
        assert!((result[[1, 1]] - (2.0f32 / 3.0).ln()).abs() < 1e-6);
    }

    #[test]
    fn forward_pass_matches_hand_computation() {
        let mlp = Mlp {
            feature_means: array![1.0, 0.0],
            feature_stds: array![2.0, 1.0],
            layers: vec![
                DenseLayer {
                    weights: array![[1.0, -1.0], [0.0, 1.0]],
                    bias: array![0.0, 0.0],
                },
                DenseLayer {
                    weights: array![[1.0, 0.0], [0.0, 1.0]],
                    bias: array![0.5, 0.0],
                },
            ],
            temperature: 2.0,
        };
        assert!(mlp.shapes_are_consistent());
        // x = (3, -1): normalised (1, -1); hidden = relu(1, -2) = (1, 0); logits (1.5, 0); / T = (0.75, 0).
        let result = mlp.log_probabilities(array![[3.0, -1.0]].view());
        let expected = log_softmax_rows(array![[0.75, 0.0]]);
        assert!((result[[0, 0]] - expected[[0, 0]]).abs() < 1e-6);
        assert!((result[[0, 1]] - expected[[0, 1]]).abs() < 1e-6);
        assert_eq!(mlp.parameter_count(), 12);
    }
}
