//! # sayso-perception
//!
//! Scoring a scene's segments, and the correction path from a scene directory.
//!
//! Owns: the built-in segment classifier and its image-only companion (the only crate that links the
//! inference library, tract), the classifier's trainer and calibration, a user's ONNX model, per-pixel scores
//! and label maps pooled to segments, the robot's perception read as one (`unaries`), and `pipeline`: a
//! scene and operator notes in, a corrected scene graph and a report out.
//! Must not: render scenes or read ground truth (that is `sayso-render`), open the correction log, or know
//! about HTTP.

pub mod pipeline;
pub mod unaries;

use sayso_core::{
    demo, energy, features, grounding, hypotheses, ids, language, random, raster, scene,
    scenegraph, taxonomy, turn,
};
