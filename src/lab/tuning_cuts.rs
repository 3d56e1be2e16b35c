//! Choosing instance cut strengths on the tuning renders' solved scenes, after `sayso tune` has counted the
//! cuts on ground-truth labels (`crate::scenegraph::instance_statistics`).
//!
//! Owns: keeping the tuning scenes' solved states (`solve_states`), the object accuracy of those states under
//! other cuts (`cut_objective`) and the choice (`refine_cuts`).
//! Must not: read or score demo scenes, write files, or change typical sizes; it only moves cut strengths.
//!
//! # Why and how
//!
//! The counted cut is the one that best recovers ground-truth objects from ground-truth labels. At run time
//! objects are formed from the solved labels, whose patches of a class also hold neighbouring segments the
//! solver gave that class; there, a lower cut can part objects the counted one leaves joined (the first
//! measurement of it, on the book cut, is in `docs/decisions.md`, "Instance cuts on solved scenes").
//!
//! The choice: every tuning scene is solved once per state, as the tuning objective does (no note, then each
//! training note in turn; `crate::tuning::objective`). The solve never reads the cuts, and a later turn
//! reads the previous turn's objects only to resolve a relation's landmark, which the training notes never
//! name; so the states do not depend on the cuts. For each class with a counted cut, and each class without one that has at least
//! `MIN_OBJECTS` ground-truth objects over the tuning renders (starting there from "never cut"), every
//! strength of `CANDIDATE_CUTS` is tried from the largest down, with the other classes held, and scored by
//! the mean object accuracy over all states (the part of the tuning objective the cuts move). A strength
//! replaces the best so far only when it beats it by more than `crate::tuning::MIN_GAIN`, starting from the
//! counted cut (or none), so a tie keeps the larger cut: cutting less.

use std::collections::BTreeMap;

use crate::evaluation::{object_accuracy, objects_from_members, PredictedObject};
use crate::hypotheses::Hypothesis;
use crate::ids::ClassId;
use crate::pipeline::CorrectionSettings;
use crate::scene::Scene;
use crate::scenegraph::instance_statistics::{CANDIDATE_CUTS, MIN_OBJECTS};
use crate::scenegraph::instances::{InstanceCuts, InstanceCutsFile};
use crate::scenegraph::objects::form_objects;
use crate::taxonomy::Taxonomy;
use crate::tuning::{walk_states, TuningError, TuningScene, MIN_GAIN};
use crate::turn::solve::{counted_classes, Correction};

/// One solved state of a tuning scene: what forming its objects reads.
pub struct SolvedState {
    /// The index of its scene in the tuning scenes.
    pub scene: usize,
    pub labels: Vec<u16>,
    pub hypotheses: Vec<Hypothesis>,
    pub accepted: Vec<bool>,
    pub counted: Vec<(ClassId, u32)>,
}

impl SolvedState {
    fn of(scene: usize, correction: &Correction) -> SolvedState {
        SolvedState {
            scene,
            labels: correction.solution.state.labels.clone(),
            hypotheses: correction.hypotheses.clone(),
            accepted: correction.solution.state.hypotheses_on.clone(),
            counted: counted_classes(&correction.grounded),
        }
    }
}

/// Solves every tuning scene with no note, then after each of its notes in turn, keeping each state.
pub fn solve_states(
    scenes: &[TuningScene],
    settings: &CorrectionSettings,
) -> Result<Vec<SolvedState>, TuningError> {
    let mut states = Vec::new();
    for (index, tuning) in scenes.iter().enumerate() {
        walk_states(tuning, settings, |correction| {
            states.push(SolvedState::of(index, correction));
            Ok(())
        })?;
    }
    Ok(states)
}

/// The objects `form_objects` makes of a state under `cuts`, with their pixels.
fn formed_objects(scene: &Scene, state: &SolvedState, cuts: &InstanceCuts) -> Vec<PredictedObject> {
    let formed = form_objects(
        scene,
        &state.labels,
        &state.hypotheses,
        &state.accepted,
        &state.counted,
        cuts,
    );
    objects_from_members(
        scene,
        formed
            .iter()
            .map(|object| (object.class, object.members.as_slice())),
    )
}

/// The mean object accuracy of the states under `cuts`.
pub fn cut_objective(scenes: &[TuningScene], states: &[SolvedState], cuts: &InstanceCuts) -> f64 {
    let mut total = 0.0;
    let mut counted = 0usize;
    for state in states {
        let Some(tuning) = scenes.get(state.scene) else {
            continue;
        };
        let prepared = &tuning.prepared;
        let objects = formed_objects(&prepared.scene, state, cuts);
        total += object_accuracy(&tuning.truth, &objects);
        counted += 1;
    }
    if counted == 0 {
        0.0
    } else {
        total / counted as f64
    }
}

/// One strength tried for one class.
#[derive(Clone, Debug)]
pub struct CutTrial {
    pub class: String,
    pub cut: f32,
    pub objective: f64,
    pub kept: bool,
}

/// The refined cuts, every trial, and the objective before and after.
pub struct CutRefinement {
    pub file: InstanceCutsFile,
    pub trials: Vec<CutTrial>,
    pub start_objective: f64,
    pub objective: f64,
}

/// Re-chooses the strength of every cut in `counted` on the states (see the module doc).
pub fn refine_cuts(
    scenes: &[TuningScene],
    states: &[SolvedState],
    counted: &InstanceCutsFile,
    taxonomy: &Taxonomy,
) -> Result<CutRefinement, TuningError> {
    let mut file = counted.clone();
    let start_objective = cut_objective(scenes, states, &InstanceCuts::from_file(&file, taxonomy)?);
    let mut best = start_objective;
    let mut trials = Vec::new();
    let mut objects: BTreeMap<String, u64> = BTreeMap::new();
    for tuning in scenes {
        for object in &tuning.truth.objects {
            *objects.entry(object.class.clone()).or_default() += 1;
        }
    }
    let mut classes: Vec<String> = file.cuts.keys().cloned().collect();
    for (class, &count) in &objects {
        if count >= MIN_OBJECTS && !classes.contains(class) {
            classes.push(class.clone());
        }
    }
    for class in classes {
        let mut candidates: Vec<f32> = CANDIDATE_CUTS.to_vec();
        candidates.reverse();
        for cut in candidates {
            if file.cuts.get(&class) == Some(&cut) {
                continue;
            }
            let mut trial: BTreeMap<String, f32> = file.cuts.clone();
            trial.insert(class.clone(), cut);
            let trial_file = InstanceCutsFile {
                cuts: trial,
                ..file.clone()
            };
            let objective = cut_objective(
                scenes,
                states,
                &InstanceCuts::from_file(&trial_file, taxonomy)?,
            );
            let kept = objective > best + MIN_GAIN;
            if kept {
                best = objective;
                file = trial_file;
            }
            trials.push(CutTrial {
                class: class.clone(),
                cut,
                objective,
                kept,
            });
        }
    }
    Ok(CutRefinement {
        file,
        trials,
        start_objective,
        objective: best,
    })
}
