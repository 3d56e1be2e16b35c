//! Trains the segment classifier on a labelled feature matrix: softmax regression or a small MLP, Adam with
//! L2 regularisation or decoupled weight decay (AdamW), mini-batches, class-balanced weights, early stopping
//! on a validation split, then temperature scaling on the same held-out split.
//!
//! `train_from` fine-tunes: it starts from a given network (its normalisation kept, so its weights keep
//! their meaning) and takes a weight per row, so some rows (an operator's corrections) count more.
//!
//! Owns: `TrainingConfig`, `LabelledFeatures`, `train`, `train_from`, `TrainError`; the validation splits
//! live in `super::split` and are re-exported here.
//! Must not: read scenes or files, or write ONNX; callers turn the returned `Mlp` into a model file.

use indicatif::{ProgressBar, ProgressStyle};
use ndarray::{Array1, Array2, ArrayView2, Axis};

use super::calibration::{calibrate, negative_log_likelihood, CalibrationReport};
use super::mlp::{DenseLayer, Mlp};
pub use super::split::{split_by_scene, split_for_validation};
use crate::random::SplitMix64;

/// The network shape to train.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum TrainingMode {
    /// No hidden layer: multinomial logistic regression.
    SoftmaxRegression,
    /// One or two hidden ReLU layers of the given widths.
    Mlp { hidden: Vec<usize> },
}

/// How the weight penalty enters the update.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Regularisation {
    /// `lambda / 2 * |W|^2` added to the loss, so `lambda * W` joins the gradient before Adam.
    L2,
    /// Decoupled weight decay (Loshchilov and Hutter, AdamW): `W -= learning_rate * lambda * W` after Adam.
    DecoupledWeightDecay,
}

/// Everything that decides a training run; the same config and data give the same model.
#[derive(Clone, Debug, PartialEq)]
pub struct TrainingConfig {
    pub mode: TrainingMode,
    pub max_epochs: usize,
    /// Rows per mini-batch (`usize::MAX` for full batch).
    pub batch_size: usize,
    pub learning_rate: f32,
    /// Penalty strength `lambda` on weights (never biases).
    pub weight_decay: f32,
    pub regularisation: Regularisation,
    /// Stop after this many epochs without a better validation loss; the best epoch's weights are kept.
    pub patience: usize,
    /// Weight each row by `n / (classes present * rows of its class)` (scikit-learn's "balanced").
    pub class_balanced: bool,
    pub seed: u64,
    pub show_progress: bool,
}

impl Default for TrainingConfig {
    fn default() -> TrainingConfig {
        TrainingConfig {
            mode: TrainingMode::Mlp { hidden: vec![128] },
            max_epochs: 200,
            batch_size: 128,
            learning_rate: 3e-3,
            weight_decay: 1e-4,
            regularisation: Regularisation::DecoupledWeightDecay,
            patience: 20,
            class_balanced: true,
            seed: 7,
            show_progress: false,
        }
    }
}

/// A feature matrix with one class index per row.
#[derive(Clone, Debug, PartialEq)]
pub struct LabelledFeatures {
    pub features: Array2<f32>,
    pub labels: Vec<usize>,
}

impl LabelledFeatures {
    /// Number of rows.
    pub fn len(&self) -> usize {
        self.labels.len()
    }

    /// Whether there are no rows.
    pub fn is_empty(&self) -> bool {
        self.labels.is_empty()
    }

    pub(super) fn select(&self, rows: &[usize]) -> LabelledFeatures {
        LabelledFeatures {
            features: self.features.select(Axis(0), rows),
            labels: rows.iter().map(|&row| self.labels[row]).collect(),
        }
    }
}

/// What a training run produced.
#[derive(Clone, Debug, PartialEq)]
pub struct TrainingOutcome {
    /// The best network, with its fitted temperature.
    pub mlp: Mlp,
    pub epochs_run: usize,
    pub best_epoch: usize,
    pub best_validation_loss: f64,
    pub calibration: CalibrationReport,
    pub training_accuracy: f64,
    pub validation_accuracy: f64,
}

/// Why training could not run.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum TrainError {
    #[error("the {set} set is empty")]
    Empty { set: &'static str },
    #[error("the {set} set has {rows} feature rows but {labels} labels")]
    RowMismatch {
        set: &'static str,
        rows: usize,
        labels: usize,
    },
    #[error(
        "the training set has {training} features per row but the validation set has {validation}"
    )]
    WidthMismatch { training: usize, validation: usize },
    #[error("row {row} of the {set} set has label {label}, but there are {class_count} classes")]
    LabelOutOfRange {
        set: &'static str,
        row: usize,
        label: usize,
        class_count: usize,
    },
    #[error("feature {column} of row {row} in the {set} set is not finite")]
    NonFinite {
        set: &'static str,
        row: usize,
        column: usize,
    },
    #[error("invalid training setting: {0}")]
    Config(String),
}

fn check_set(
    set: &'static str,
    data: &LabelledFeatures,
    class_count: usize,
) -> Result<(), TrainError> {
    if data.is_empty() {
        return Err(TrainError::Empty { set });
    }
    if data.features.nrows() != data.labels.len() {
        return Err(TrainError::RowMismatch {
            set,
            rows: data.features.nrows(),
            labels: data.labels.len(),
        });
    }
    if let Some((row, &label)) = data
        .labels
        .iter()
        .enumerate()
        .find(|(_, &l)| l >= class_count)
    {
        return Err(TrainError::LabelOutOfRange {
            set,
            row,
            label,
            class_count,
        });
    }
    if let Some(((row, column), _)) = data.features.indexed_iter().find(|(_, v)| !v.is_finite()) {
        return Err(TrainError::NonFinite { set, row, column });
    }
    Ok(())
}

fn normalisation(features: ArrayView2<f32>) -> (Array1<f32>, Array1<f32>) {
    let rows = features.nrows().max(1) as f64;
    let mut means = Array1::<f32>::zeros(features.ncols());
    let mut stds = Array1::<f32>::ones(features.ncols());
    for (column, values) in features.axis_iter(Axis(1)).enumerate() {
        let mean = values.iter().map(|&v| v as f64).sum::<f64>() / rows;
        let variance = values
            .iter()
            .map(|&v| (v as f64 - mean).powi(2))
            .sum::<f64>()
            / rows;
        means[column] = mean as f32;
        // A constant feature keeps scale 1 so normalisation never divides by zero.
        stds[column] = if variance.sqrt() > 1e-6 {
            variance.sqrt() as f32
        } else {
            1.0
        };
    }
    (means, stds)
}

fn initial_layers(widths: &[usize], zero: bool, generator: &mut SplitMix64) -> Vec<DenseLayer> {
    widths
        .windows(2)
        .map(|pair| {
            let (inputs, outputs) = (pair[0], pair[1]);
            // He initialisation for ReLU networks: N(0, 2 / fan_in).
            let scale = (2.0 / inputs.max(1) as f64).sqrt();
            let weights = if zero {
                Array2::zeros((inputs, outputs))
            } else {
                Array2::from_shape_simple_fn((inputs, outputs), || {
                    (generator.next_normal() * scale) as f32
                })
            };
            DenseLayer {
                weights,
                bias: Array1::zeros(outputs),
            }
        })
        .collect()
}

/// Forward pass keeping every layer's output: `outputs[0]` is the input, the last entry the logits.
fn forward(layers: &[DenseLayer], input: Array2<f32>) -> Vec<Array2<f32>> {
    let mut outputs = vec![input];
    for (index, layer) in layers.iter().enumerate() {
        let mut next = outputs[index].dot(&layer.weights) + &layer.bias;
        if index + 1 < layers.len() {
            next.mapv_inplace(|value| value.max(0.0));
        }
        outputs.push(next);
    }
    outputs
}

/// Weighted softmax cross-entropy gradient with respect to the logits (rows weighted, mean over weight).
fn logits_gradient(logits: &Array2<f32>, labels: &[usize], weights: &[f32]) -> Array2<f32> {
    let total_weight: f32 = weights.iter().sum::<f32>().max(f32::MIN_POSITIVE);
    let mut gradient = super::mlp::log_softmax_rows(logits.clone());
    for ((mut row, &label), &weight) in gradient.axis_iter_mut(Axis(0)).zip(labels).zip(weights) {
        row.mapv_inplace(|log_probability| log_probability.exp());
        if let Some(entry) = row.get_mut(label) {
            *entry -= 1.0;
        }
        row *= weight / total_weight;
    }
    gradient
}

fn backward(
    layers: &[DenseLayer],
    outputs: &[Array2<f32>],
    logits_gradient: Array2<f32>,
) -> Vec<DenseLayer> {
    let mut gradients = Vec::with_capacity(layers.len());
    let mut upstream = logits_gradient;
    for index in (0..layers.len()).rev() {
        let weights = outputs[index].t().dot(&upstream);
        let bias = upstream.sum_axis(Axis(0));
        if index > 0 {
            let mut below = upstream.dot(&layers[index].weights.t());
            below.zip_mut_with(&outputs[index], |gradient, &activation| {
                if activation <= 0.0 {
                    *gradient = 0.0;
                }
            });
            upstream = below;
        }
        gradients.push(DenseLayer { weights, bias });
    }
    gradients.reverse();
    gradients
}

struct Adam {
    first: Vec<DenseLayer>,
    second: Vec<DenseLayer>,
    step: i32,
}

const BETA1: f32 = 0.9;
const BETA2: f32 = 0.999;
const ADAM_EPSILON: f32 = 1e-8;

impl Adam {
    fn new(layers: &[DenseLayer]) -> Adam {
        let zeros = || {
            layers
                .iter()
                .map(|layer| DenseLayer {
                    weights: Array2::zeros(layer.weights.raw_dim()),
                    bias: Array1::zeros(layer.bias.len()),
                })
                .collect()
        };
        Adam {
            first: zeros(),
            second: zeros(),
            step: 0,
        }
    }

    fn update(
        &mut self,
        layers: &mut [DenseLayer],
        gradients: &[DenseLayer],
        config: &TrainingConfig,
    ) {
        self.step += 1;
        let correction1 = 1.0 - BETA1.powi(self.step);
        let correction2 = 1.0 - BETA2.powi(self.step);
        let rate = config.learning_rate;
        let decay = config.weight_decay;
        for (index, layer) in layers.iter_mut().enumerate() {
            let gradient = &gradients[index];
            let step = |parameter: &mut f32,
                        gradient: f32,
                        first: &mut f32,
                        second: &mut f32,
                        is_weight: bool| {
                let mut gradient = gradient;
                if is_weight && config.regularisation == Regularisation::L2 {
                    gradient += decay * *parameter;
                }
                *first = BETA1 * *first + (1.0 - BETA1) * gradient;
                *second = BETA2 * *second + (1.0 - BETA2) * gradient * gradient;
                let update =
                    (*first / correction1) / ((*second / correction2).sqrt() + ADAM_EPSILON);
                if is_weight && config.regularisation == Regularisation::DecoupledWeightDecay {
                    *parameter -= rate * decay * *parameter;
                }
                *parameter -= rate * update;
            };
            ndarray::Zip::from(&mut layer.weights)
                .and(&gradient.weights)
                .and(&mut self.first[index].weights)
                .and(&mut self.second[index].weights)
                .for_each(|p, &g, m, v| step(p, g, m, v, true));
            ndarray::Zip::from(&mut layer.bias)
                .and(&gradient.bias)
                .and(&mut self.first[index].bias)
                .and(&mut self.second[index].bias)
                .for_each(|p, &g, m, v| step(p, g, m, v, false));
        }
    }
}

fn accuracy(logits: ArrayView2<f32>, labels: &[usize]) -> f64 {
    if labels.is_empty() {
        return 0.0;
    }
    let correct = logits
        .axis_iter(Axis(0))
        .zip(labels)
        .filter(|(row, &label)| {
            row.iter()
                .enumerate()
                .max_by(|a, b| a.1.total_cmp(b.1))
                .map(|(index, _)| index == label)
                .unwrap_or(false)
        })
        .count();
    correct as f64 / labels.len() as f64
}

/// Trains on `training`, early-stops and calibrates on `validation`; rows' labels are class indices below
/// `class_count`.
pub fn train(
    training: &LabelledFeatures,
    validation: &LabelledFeatures,
    class_count: usize,
    config: &TrainingConfig,
) -> Result<TrainingOutcome, TrainError> {
    train_from(training, None, validation, class_count, config, None)
}

/// Like `train`, with a weight per training row (multiplied into the class-balanced weight; `None`: all 1)
/// and, when `start` is given, starting from that network: its feature normalisation and layer shapes are
/// kept (`config.mode` is then not used) and only the calibration temperature is fitted afresh.
pub fn train_from(
    training: &LabelledFeatures,
    row_weights: Option<&[f32]>,
    validation: &LabelledFeatures,
    class_count: usize,
    config: &TrainingConfig,
    start: Option<&Mlp>,
) -> Result<TrainingOutcome, TrainError> {
    check_set("training", training, class_count)?;
    if let Some(weights) = row_weights {
        if weights.len() != training.len() {
            return Err(TrainError::Config(format!(
                "{} row weights for {} training rows",
                weights.len(),
                training.len()
            )));
        }
        if weights.iter().any(|w| !(w.is_finite() && *w >= 0.0)) {
            return Err(TrainError::Config(
                "row weights must be finite numbers >= 0".to_string(),
            ));
        }
    }
    if let Some(start) = start {
        if start.feature_count() != training.features.ncols()
            || start.class_count() != class_count
            || !start.shapes_are_consistent()
        {
            return Err(TrainError::Config(format!(
                "the starting network maps {} features to {} classes; the data has {} features and {} classes",
                start.feature_count(),
                start.class_count(),
                training.features.ncols(),
                class_count
            )));
        }
    }
    check_set("validation", validation, class_count)?;
    if training.features.ncols() != validation.features.ncols() {
        return Err(TrainError::WidthMismatch {
            training: training.features.ncols(),
            validation: validation.features.ncols(),
        });
    }
    let hidden = match &config.mode {
        TrainingMode::SoftmaxRegression => Vec::new(),
        TrainingMode::Mlp { hidden }
            if (1..=2).contains(&hidden.len()) && hidden.iter().all(|&w| w > 0) =>
        {
            hidden.clone()
        }
        TrainingMode::Mlp { hidden } => {
            return Err(TrainError::Config(format!(
                "an MLP needs one or two hidden layers of positive width, got {hidden:?}"
            )))
        }
    };
    if config.max_epochs == 0
        || config.batch_size == 0
        || config.learning_rate.is_nan()
        || config.learning_rate <= 0.0
    {
        return Err(TrainError::Config(
            "epochs, batch size and learning rate must be positive".to_string(),
        ));
    }
    if !(config.weight_decay >= 0.0 && config.weight_decay.is_finite()) {
        return Err(TrainError::Config(
            "weight decay must be a finite number >= 0".to_string(),
        ));
    }
    let mut generator = SplitMix64::new(config.seed);
    let (feature_means, feature_stds) = match start {
        Some(start) => (start.feature_means.clone(), start.feature_stds.clone()),
        None => normalisation(training.features.view()),
    };
    let mut scaffold = Mlp {
        feature_means,
        feature_stds,
        layers: Vec::new(),
        temperature: 1.0,
    };
    let training_input = scaffold.normalise(training.features.view());
    let validation_input = scaffold.normalise(validation.features.view());
    let mut widths = vec![training.features.ncols()];
    widths.extend(&hidden);
    widths.push(class_count);
    let mut layers = match start {
        Some(start) => start.layers.clone(),
        None => initial_layers(&widths, hidden.is_empty(), &mut generator),
    };
    let mut class_rows = vec![0usize; class_count];
    for &label in &training.labels {
        class_rows[label] += 1;
    }
    let present = class_rows.iter().filter(|&&rows| rows > 0).count().max(1);
    let row_weights: Vec<f32> = training
        .labels
        .iter()
        .enumerate()
        .map(|(row, &label)| {
            let given = row_weights.map_or(1.0, |weights| weights[row]);
            given
                * if config.class_balanced {
                    training.len() as f32 / (present as f32 * class_rows[label] as f32)
                } else {
                    1.0
                }
        })
        .collect();
    let mut adam = Adam::new(&layers);
    let progress = if config.show_progress {
        let bar = ProgressBar::new(config.max_epochs as u64);
        if let Ok(style) = ProgressStyle::with_template("training {bar:30} epoch {pos}/{len} {msg}")
        {
            bar.set_style(style);
        }
        bar
    } else {
        ProgressBar::hidden()
    };
    let mut order: Vec<usize> = (0..training.len()).collect();
    let mut best = (f64::INFINITY, layers.clone(), 0usize);
    let mut epochs_run = 0;
    for epoch in 1..=config.max_epochs {
        epochs_run = epoch;
        generator.shuffle(&mut order);
        for batch in order.chunks(config.batch_size.min(training.len())) {
            let input = training_input.select(Axis(0), batch);
            let labels: Vec<usize> = batch.iter().map(|&row| training.labels[row]).collect();
            let weights: Vec<f32> = batch.iter().map(|&row| row_weights[row]).collect();
            let outputs = forward(&layers, input);
            let Some(logits) = outputs.last() else { break };
            let gradient = logits_gradient(logits, &labels, &weights);
            let gradients = backward(&layers, &outputs, gradient);
            adam.update(&mut layers, &gradients, config);
        }
        scaffold.layers = layers.clone();
        let validation_logits = scaffold.logits_from_normalised(validation_input.view());
        let loss = negative_log_likelihood(validation_logits.view(), &validation.labels, 1.0);
        progress.set_position(epoch as u64);
        progress.set_message(format!("validation loss {loss:.4}"));
        if loss < best.0 - 1e-7 {
            best = (loss, layers.clone(), epoch);
        } else if epoch - best.2 >= config.patience {
            break;
        }
    }
    progress.finish_and_clear();
    scaffold.layers = best.1;
    let validation_logits = scaffold.logits_from_normalised(validation_input.view());
    let training_logits = scaffold.logits_from_normalised(training_input.view());
    let calibration = calibrate(validation_logits.view(), &validation.labels);
    scaffold.temperature = calibration.temperature as f32;
    Ok(TrainingOutcome {
        mlp: scaffold,
        epochs_run,
        best_epoch: best.2,
        best_validation_loss: best.0,
        calibration,
        training_accuracy: accuracy(training_logits.view(), &training.labels),
        validation_accuracy: accuracy(validation_logits.view(), &validation.labels),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::unaries::split::blobs;

    #[test]
    fn gradient_matches_finite_differences() {
        let mut generator = SplitMix64::new(5);
        let layers = initial_layers(&[3, 4, 2], false, &mut generator);
        let input = Array2::from_shape_fn((5, 3), |(r, c)| (r as f32 - c as f32) * 0.3);
        let labels = vec![0, 1, 1, 0, 1];
        let weights = vec![1.0, 2.0, 1.0, 0.5, 1.0];
        let loss = |layers: &[DenseLayer]| -> f64 {
            let outputs = forward(layers, input.clone());
            let log_probabilities = super::super::mlp::log_softmax_rows(outputs[2].clone());
            let total: f64 = weights.iter().map(|&w| w as f64).sum();
            labels
                .iter()
                .enumerate()
                .map(|(row, &label)| {
                    -(log_probabilities[[row, label]] as f64) * weights[row] as f64
                })
                .sum::<f64>()
                / total
        };
        let outputs = forward(&layers, input.clone());
        let analytic = backward(
            &layers,
            &outputs,
            logits_gradient(&outputs[2], &labels, &weights),
        );
        for layer in 0..2 {
            for (position, &gradient) in analytic[layer].weights.indexed_iter() {
                let mut plus = layers.clone();
                plus[layer].weights[position] += 1e-2;
                let mut minus = layers.clone();
                minus[layer].weights[position] -= 1e-2;
                let numeric = (loss(&plus) - loss(&minus)) / 2e-2;
                assert!(
                    (numeric - gradient as f64).abs() < 2e-3,
                    "layer {layer} {position:?}: {numeric} vs {gradient}"
                );
            }
        }
    }

    #[test]
    fn both_modes_learn_separable_blobs_deterministically() {
        let data = blobs(600, 1);
        let (training, validation) = split_for_validation(&data, 0.25, 3);
        assert_eq!(training.len() + validation.len(), 600);
        for mode in [
            TrainingMode::SoftmaxRegression,
            TrainingMode::Mlp { hidden: vec![16] },
        ] {
            let config = TrainingConfig {
                mode,
                max_epochs: 60,
                ..TrainingConfig::default()
            };
            let first = train(&training, &validation, 3, &config).unwrap();
            let second = train(&training, &validation, 3, &config).unwrap();
            assert_eq!(first.mlp, second.mlp, "same seed, same model");
            assert!(first.validation_accuracy > 0.9, "{first:?}");
        }
    }

    #[test]
    fn fine_tuning_starts_from_the_given_network_and_heeds_row_weights() {
        let data = blobs(600, 4);
        let (training, validation) = split_for_validation(&data, 0.25, 3);
        let config = TrainingConfig {
            mode: TrainingMode::Mlp { hidden: vec![8] },
            max_epochs: 40,
            ..TrainingConfig::default()
        };
        let base = train(&training, &validation, 3, &config).unwrap().mlp;
        // One epoch at a tiny rate barely moves the network, and the normalisation is the base's.
        let gentle = TrainingConfig {
            max_epochs: 1,
            learning_rate: 1e-6,
            ..config.clone()
        };
        let tuned = train_from(&training, None, &validation, 3, &gentle, Some(&base))
            .unwrap()
            .mlp;
        assert_eq!(tuned.feature_means, base.feature_means);
        let moved = tuned.layers[0]
            .weights
            .iter()
            .zip(base.layers[0].weights.iter())
            .map(|(a, b)| (a - b).abs())
            .fold(0.0f32, f32::max);
        assert!(moved < 1e-3, "moved {moved}");
        // Relabel the rows of class 0 near the origin as class 1 and weight them heavily: the tuned
        // network follows them, where the base did not.
        let mut relabelled = training.clone();
        let mut weights = vec![1.0f32; relabelled.len()];
        for (label, weight) in relabelled.labels.iter_mut().zip(&mut weights) {
            if *label == 0 {
                *label = 1;
                *weight = 20.0;
            }
        }
        let eager = TrainingConfig {
            max_epochs: 30,
            class_balanced: false,
            ..config.clone()
        };
        let tuned = train_from(
            &relabelled,
            Some(&weights),
            &relabelled,
            3,
            &eager,
            Some(&base),
        )
        .unwrap()
        .mlp;
        let origin = ndarray::array![[0.0f32, 0.0]];
        let best = |mlp: &Mlp| {
            let row = mlp.log_probabilities(origin.view());
            (0..3)
                .max_by(|&a, &b| row[[0, a]].total_cmp(&row[[0, b]]))
                .unwrap()
        };
        assert_eq!(best(&base), 0);
        assert_eq!(best(&tuned), 1);
        assert!(matches!(
            train_from(
                &training,
                Some(&[1.0f32][..]),
                &validation,
                3,
                &config,
                Some(&base)
            ),
            Err(TrainError::Config(_))
        ));
    }

    #[test]
    fn bad_training_input_is_refused() {
        let mut data = blobs(30, 2);
        let config = TrainingConfig::default();
        data.features[[4, 1]] = f32::NAN;
        assert_eq!(
            train(&data, &data, 3, &config),
            Err(TrainError::NonFinite {
                set: "training",
                row: 4,
                column: 1
            })
        );
        let data = blobs(30, 2);
        assert!(matches!(
            train(&data, &data, 2, &config),
            Err(TrainError::LabelOutOfRange { .. })
        ));
        let wide = TrainingConfig {
            mode: TrainingMode::Mlp {
                hidden: vec![4, 4, 4],
            },
            ..config
        };
        assert!(matches!(
            train(&data, &data, 3, &wide),
            Err(TrainError::Config(_))
        ));
    }
}
