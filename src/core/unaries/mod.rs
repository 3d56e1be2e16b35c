//! Scene unaries as the correction path sees them: for every segment, a calibrated log-probability for
//! every class, and the robot's own detections that seed object hypotheses.
//!
//! Owns: the `Unaries` value and `UnarySource`; reading the robot's NPY scores and class lists (`byo`,
//! `byo_npy`) and its detections in JSON Lines (`byo_detections`).
//! Must not: run a model (the built-in classifier and user ONNX models are `sayso_perception::unaries`'s),
//! know about language, constraints or the solver.

pub mod byo;
pub mod byo_detections;
pub mod byo_npy;

use ndarray::Array2;
use serde::{Deserialize, Serialize};

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
