//! Scene unaries: for every segment, a calibrated log-probability for every class.
//!
//! Owns: the `Unaries` value and the sources that produce it (built-in ONNX classifier, NPY scores, a user
//! ONNX model, label maps) plus detections that seed object hypotheses; the classifier's trainer,
//! calibration and evaluation metrics.
//! Must not: know about language, constraints or the solver; it only scores segments.

pub mod builtin;
pub mod byo;
pub mod byo_detections;
pub mod byo_label_map;
pub mod byo_npy;
pub mod byo_pixel_scores;
pub mod byo_user_model;
pub mod calibration;
pub mod classifier;
pub mod contract;
pub mod dataset;
pub mod metrics;
pub mod mlp;
pub mod model_card;
pub mod model_file;
pub mod onnx_reader;
pub mod onnx_writer;
pub mod perception;
pub mod pooling;
pub mod rng;
pub mod split;
pub mod trainer;

use ndarray::Array2;
use serde::{Deserialize, Serialize};

pub use builtin::{builtin_unaries, current_feature_layout};
pub use classifier::{Classifier, ClassifierError};
pub use contract::{FeatureLayout, ModelContract};

/// Where a set of unaries came from.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "type", rename_all = "snake_case")]
pub enum UnarySource {
    /// The built-in segment classifier; `model` names the ONNX file.
    BuiltIn { model: String },
    /// Per-pixel scores from an NPY file, pooled to segments.
    PixelScores { file: String },
    /// A user-supplied per-pixel ONNX segmentation model, pooled to segments.
    UserModel { model: String },
    /// A label map turned into unaries.
    LabelMap { file: String },
}

/// Per-segment class log-probabilities: `log_probs[[segment, class]]`, each row a log-distribution.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Unaries {
    pub log_probs: Array2<f32>,
    pub source: UnarySource,
}

impl Unaries {
    /// Number of segments (rows).
    pub fn segment_count(&self) -> usize {
        self.log_probs.nrows()
    }

    /// Number of classes (columns).
    pub fn class_count(&self) -> usize {
        self.log_probs.ncols()
    }
}
