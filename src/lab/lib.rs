//! # sayso-lab
//!
//! Measuring sayso on rendered scenes: nothing here is on the correction path.
//!
//! Owns: evaluation against ground truth (`evaluation`), the search for the energy's weights and the
//! per-class instance cuts (`tuning`, `tuning_cuts`), the language trial with its simulated operator
//! (`trial`), and retraining the classifier from logged corrections (`retrain`).
//! Must not: be used by the correction path, the session or the service; it reads demo scenes and renders
//! only through `sayso-render`.

pub mod evaluation;
pub mod retrain;
pub mod trial;
pub mod tuning;
pub mod tuning_cuts;

use sayso_core::{
    energy, features, grounding, hypotheses, ids, language, raster, scene, scenegraph, taxonomy,
    turn,
};
use sayso_perception::{pipeline, unaries};
use sayso_render as render;
use sayso_render::demo;
