//! The session layer: operators' conversations over stored scenes, the same for the HTTP service and the
//! command line.
//!
//! Owns: the `Coordinator` (scenes and conversations in memory over the correction log, the turn rules:
//! utterances, confirmations, rejections, undo and redo, ownership and paged lists), the `Corrector` seam
//! and its joint-pipeline implementation (`joint::JointCorrector`), field notes in bulk (`field_notes`),
//! the commit gate that lets an abandoned request store nothing (`abandon`), what a session counts
//! (`counters`), and one error type, `SessionError`, whose `ErrorKind` says whose fault a failure is.
//! Must not: know HTTP, sockets or tokio. No status code lives here: the service maps `ErrorKind` to HTTP
//! (`crate::service::error`), the CLI prints the message. Answers use the API's shapes (`crate::wire`), so
//! the service sends them unchanged and the CLI can print the same JSON.
//!
//! **Safety.** A corrected scene is advisory. It is never a substitute for the robot's own safety sensors
//! and interlocks. Changes that would remove or rename a person, a pet or a hazard wait for explicit
//! confirmation, and a confirmation records who gave it.
//!
//! ```no_run
//! use std::sync::Arc;
//! use sayso_perception::pipeline::{load_classifier, model_path, CorrectionSettings};
//! use sayso_session::{Coordinator, CoordinatorSettings, JointCorrector, SceneUpload};
//!
//! let settings = CorrectionSettings::embedded().unwrap();
//! let classifier = load_classifier(&model_path(None), settings.grammar.taxonomy()).unwrap();
//! let corrector = Arc::new(JointCorrector::new(settings, classifier));
//! let settings = CoordinatorSettings {
//!     log_path: "corrections.sqlite".into(),
//!     pixel_limit: 4096 * 4096,
//!     demo_dir: "demo_scenes".into(),
//! };
//! let coordinator = Coordinator::open(corrector, &settings).unwrap();
//! let upload = SceneUpload { demo: Some("living_room_evening".into()), ..SceneUpload::default() };
//! let scene = coordinator.register_scene(upload, "mira").unwrap();
//! println!("scene {} at version {}", scene.scene_id, scene.version);
//! ```

pub mod abandon;
pub mod coordinator;
pub mod corrector;
pub mod counters;
pub mod error;
pub mod field_notes;
pub mod joint;
mod joint_inputs;
mod prepared_form;

/// The deployment's settings file, read by `sayso serve` and every command that opens the correction log.
pub mod config;

use sayso_core::{
    demo, hypotheses, ids, language, overlay, raster, scene, scenegraph, taxonomy, turn,
};
use sayso_correction_log as correction_log;
use sayso_perception::{pipeline, unaries};
use sayso_wire as wire;

pub use coordinator::{
    check_utterance_text, Caller, Coordinator, CoordinatorSettings, OpenError, PageRequest, Role,
    SceneUpload, PAGE_LIMIT_DEFAULT, PAGE_LIMIT_MAX, SCENE_BYTES_DEFAULT,
    UTTERANCE_CHARACTER_LIMIT,
};
pub use corrector::Corrector;
pub use counters::TurnCounters;
pub use error::{ErrorKind, SessionError};
pub use joint::JointCorrector;
