//! Scene unaries: for every segment, a calibrated log-probability for every class.
//!
//! Owns: the sources that produce the `Unaries` value (built-in ONNX classifier, per-pixel scores, a user
//! ONNX model, label maps) and the robot's perception as one reading; the classifier's trainer,
//! calibration and evaluation metrics. The value itself, NPY scores and detections are `sayso_core::unaries`'s
//! (re-exported here).
//! Must not: know about language, constraints or the solver; it only scores segments.

pub mod builtin;
pub mod byo_label_map;
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
pub mod split;
pub mod trainer;

pub use builtin::{builtin_unaries, current_feature_layout};
pub use classifier::{Classifier, ClassifierError};
pub use contract::{FeatureLayout, ModelContract};
/// The value every source produces, and the robot's own scores and detections, are core's.
pub use sayso_core::unaries::{byo, byo_detections, byo_npy, Unaries, UnarySource};
