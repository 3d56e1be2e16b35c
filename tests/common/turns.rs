//! One operator turn through `correct` on a hand-built scene, with the hand-set weights and the taxonomy's
//! smoothed prior, for the end-to-end tests.
//!
//! Owns: `constraint` (a typed constraint with a gloss) and `turn` (the request every such test sends).
//! Must not: be used by library code.

#![allow(dead_code)]

use sayso_core::energy::build::{EnergyWeights, RoomClassPrior};
use sayso_core::grounding::GroundingContext;
use sayso_core::hypotheses::ProposalOptions;
use sayso_core::language::constraint::{Constraint, ConstraintKind, Span};
use sayso_core::scene::Scene;
use sayso_core::scenegraph::instances::InstanceCuts;
use sayso_core::taxonomy::Taxonomy;
use sayso_core::turn::solve::{correct, Correction, SolveRequest};
use sayso_perception::unaries::Unaries;
use sayso_solver::joint::JointOptions;

/// A constraint as the parser would give it, spanning the whole gloss.
pub fn constraint(kind: ConstraintKind, confidence: f32, gloss: &str) -> Constraint {
    Constraint {
        kind,
        span: Span::new(0, gloss.len()),
        confidence,
        gloss: gloss.to_string(),
    }
}

/// The scene a turn is about.
pub struct Stage<'a> {
    pub scene: &'a Scene,
    pub unaries: &'a Unaries,
    pub taxonomy: &'a Taxonomy,
    pub cuts: &'a InstanceCuts,
}

/// Runs one turn. Hand-made scenes' probabilities are chosen against the taxonomy's smoothed prior
/// (typical 0.5); the committed prior counted from renders is checked on its own.
pub fn turn(
    stage: &Stage,
    previous: Option<&Correction>,
    constraints: &[Constraint],
    context: &GroundingContext,
    confirm_safety: bool,
) -> Correction {
    let prior = RoomClassPrior::from_taxonomy(stage.taxonomy);
    let request = SolveRequest {
        scene: stage.scene,
        unaries: stage.unaries,
        taxonomy: stage.taxonomy,
        detections: &[],
        previous,
        constraints,
        context,
        confirm_safety,
        prior: &prior,
        weights: &EnergyWeights::default(),
        proposals: &ProposalOptions::default(),
        options: &JointOptions::default(),
        instance_cuts: stage.cuts,
    };
    correct(&request).unwrap()
}
