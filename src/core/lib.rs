//! # sayso-core
//!
//! sayso corrects a robot's semantic picture of a room from the plain words of the people who run it.
//! An operator says "that's a towel, not a cat" or "there are four books on the shelf"; sayso turns the
//! sentence into typed constraints, re-solves the whole scene under them (segment labels, object hypotheses,
//! class presence and room type, in one energy and one solver) and returns a corrected scene graph.
//!
//! ## The pipeline, one module per stage
//!
//! ```text
//! raster (PNG in/out) -> scene (+ slic superpixels, adjacency, coarse level) -> features
//!   -> unaries (built-in ONNX classifier or bring-your-own scores)
//! language (utterance -> constraints)
//!   -> grounding (referents -> object hypotheses) -> energy -> solver -> scene graph -> correction log
//! ```
//!
//! Dependencies point one way along that chain. The solver knows nothing of language or I/O; only the
//! binary's `cli` and the `service` know about HTTP, JSON wire shapes and tokio.
//!
//! ## Example
//!
//! ```
//! use sayso_core::taxonomy::Taxonomy;
//!
//! let taxonomy = Taxonomy::embedded();
//! let mug = taxonomy.class_by_name("mug").expect("mug is in the taxonomy");
//! assert!(!mug.safety);
//! assert!(taxonomy.class_by_name("cat").unwrap().safety);
//! ```

pub mod color;
pub mod demo;
pub mod features;
pub mod geometry;
pub mod grounding;
pub mod hypotheses;
pub mod ids;
pub mod language;
pub mod overlay;
pub mod random;
pub mod raster;
pub mod scene;
pub mod scenegraph;
pub mod shipped;
pub mod slic;
pub mod taxonomy;
pub mod turn;
pub mod unaries;

/// The joint energy: its terms and evaluation are the solver crate's (`sayso_solver::energy`, re-exported
/// here); building one from a scene, its unaries, hypotheses and grounded constraints is this crate's.
pub mod energy {
    pub use sayso_solver::energy::*;

    pub mod build;
    pub mod statistics;
}

use sayso_solver as solver;
