//! The `Corrector` the service runs: the joint pipeline (superpixels, unaries, grounding, one energy, one
//! solver) behind the service's narrow trait.
//!
//! Owns: `JointCorrector`, the engine state it stores with every scene version (the registration digest and
//! the constraints of every turn that led to the version, as JSON), and its in-memory caches (prepared
//! scenes by registration digest, solved turns by engine-state digest). After a restart the caches are
//! empty and a version is rebuilt by re-solving its turns in order; the solver is deterministic, so the
//! rebuilt version is the one that was stored.
//! Must not: know about HTTP, SQLite or tokio; it never stores anything that must survive a restart itself.

use std::collections::{HashMap, VecDeque};
use std::sync::{Arc, Mutex};

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use crate::ids::ClassId;
use crate::language::constraint::{Constraint, Focus};
use crate::pipeline::{correct_turn, CorrectionSettings, TurnInputs};
use crate::scenegraph::changes::{Change as GraphChange, ChangeKind, ChangeStatus};
use crate::scenegraph::correct::Correction;
use crate::scenegraph::{label_map, object_id};
use crate::taxonomy::Taxonomy;
use crate::unaries::Classifier;

use super::corrector::{
    Change, CorrectionOutcome, CorrectionRequest, Corrector, CorrectorError, SceneInput,
    SceneObject, SceneState, SceneSummary, Unmet, Verdict,
};
use super::joint_inputs::{hex, input_digest, prepare_input, PreparedInput};

/// The engine-state format this build writes and reads.
const ENGINE_STATE_FORMAT: u32 = 1;
/// Prepared scenes kept in memory (superpixels and unaries of a 640x480 scene: about 2 MB).
const PREPARED_CACHE: usize = 32;
/// Solved versions kept in memory.
const SOLVED_CACHE: usize = 128;

/// One turn that led to a version: what was understood, where the operator pointed, and whether safety
/// changes were confirmed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
struct TurnRecord {
    constraints: Vec<Constraint>,
    focus: Option<Focus>,
    confirmed: bool,
}

/// What the service stores as a version's engine state.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
struct EngineState {
    format: u32,
    /// `input_digest` of the registration.
    input: String,
    turns: Vec<TurnRecord>,
}

impl EngineState {
    fn encode(&self) -> Vec<u8> {
        serde_json::to_vec(self).unwrap_or_default()
    }

    fn decode(bytes: &[u8]) -> Result<EngineState, CorrectorError> {
        let state: EngineState = serde_json::from_slice(bytes).map_err(|error| {
            CorrectorError::Internal(format!("stored engine state is unreadable: {error}"))
        })?;
        if state.format != ENGINE_STATE_FORMAT {
            return Err(CorrectorError::Internal(format!(
                "stored engine state has format {}; this build reads {ENGINE_STATE_FORMAT}",
                state.format
            )));
        }
        Ok(state)
    }

    fn key(&self) -> String {
        key_of(&self.encode())
    }
}

/// The cache key of an encoded engine state.
fn key_of(encoded: &[u8]) -> String {
    hex(&Sha256::digest(encoded))
}

/// A small map that forgets its oldest entry when full.
struct Bounded<V> {
    capacity: usize,
    order: VecDeque<String>,
    entries: HashMap<String, V>,
}

impl<V: Clone> Bounded<V> {
    fn new(capacity: usize) -> Bounded<V> {
        Bounded {
            capacity,
            order: VecDeque::new(),
            entries: HashMap::new(),
        }
    }

    fn get(&self, key: &str) -> Option<V> {
        self.entries.get(key).cloned()
    }

    fn insert(&mut self, key: String, value: V) {
        if self.entries.insert(key.clone(), value).is_none() {
            self.order.push_back(key);
        }
        while self.order.len() > self.capacity {
            if let Some(oldest) = self.order.pop_front() {
                self.entries.remove(&oldest);
            }
        }
    }
}

/// The joint pipeline as a service engine.
pub struct JointCorrector {
    settings: CorrectionSettings,
    classifier: Classifier,
    prepared: Mutex<Bounded<Arc<PreparedInput>>>,
    solved: Mutex<Bounded<Arc<Correction>>>,
}

fn internal(error: impl std::fmt::Display) -> CorrectorError {
    CorrectorError::Internal(error.to_string())
}

fn lock<T>(mutex: &Mutex<T>) -> std::sync::MutexGuard<'_, T> {
    mutex
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner())
}

impl JointCorrector {
    /// With these settings (grammar, room prior, weights, solver options) and the built-in classifier.
    pub fn new(settings: CorrectionSettings, classifier: Classifier) -> JointCorrector {
        JointCorrector {
            settings,
            classifier,
            prepared: Mutex::new(Bounded::new(PREPARED_CACHE)),
            solved: Mutex::new(Bounded::new(SOLVED_CACHE)),
        }
    }

    /// The embedded grammar, room prior and weights, and the classifier at `model`
    /// (`crate::pipeline::model_path(None)` for the default).
    pub fn load(model: &std::path::Path) -> Result<JointCorrector, crate::pipeline::PipelineError> {
        let settings = CorrectionSettings::embedded()?;
        let classifier = crate::pipeline::load_classifier(model, settings.grammar.taxonomy())?;
        Ok(JointCorrector::new(settings, classifier))
    }

    fn prepared_for(&self, input: &SceneInput) -> Result<Arc<PreparedInput>, CorrectorError> {
        let digest = input_digest(input);
        if let Some(found) = lock(&self.prepared).get(&digest) {
            return Ok(found);
        }
        let prepared = Arc::new(prepare_input(input, self.taxonomy(), &self.classifier)?);
        lock(&self.prepared).insert(digest, prepared.clone());
        Ok(prepared)
    }

    fn solve(
        &self,
        prepared: &PreparedInput,
        previous: Option<&Correction>,
        turn: &TurnRecord,
    ) -> Result<Correction, CorrectorError> {
        correct_turn(
            &TurnInputs {
                scene: &prepared.scene,
                unaries: &prepared.unaries,
                detections: &prepared.detections,
            },
            previous,
            &turn.constraints,
            turn.focus,
            turn.confirmed,
            &self.settings,
        )
        .map_err(internal)
    }

    /// The solved version an engine state names: from the cache, or re-solved from the longest cached
    /// prefix of its turns. `None` for the registered version's first turn (it solves from scratch).
    fn version(
        &self,
        prepared: &PreparedInput,
        state: &EngineState,
    ) -> Result<Option<Arc<Correction>>, CorrectorError> {
        if state.turns.is_empty() {
            return Ok(None);
        }
        let prefix = |length: usize| EngineState {
            format: ENGINE_STATE_FORMAT,
            input: state.input.clone(),
            turns: state.turns[..length].to_vec(),
        };
        let mut start = state.turns.len();
        let mut current: Option<Arc<Correction>> = None;
        while start > 0 {
            if let Some(found) = lock(&self.solved).get(&prefix(start).key()) {
                current = Some(found);
                break;
            }
            start -= 1;
        }
        for length in start + 1..=state.turns.len() {
            let solved =
                Arc::new(self.solve(prepared, current.as_deref(), &state.turns[length - 1])?);
            lock(&self.solved).insert(prefix(length).key(), solved.clone());
            current = Some(solved);
        }
        Ok(current)
    }

    fn scene_state(
        &self,
        prepared: &PreparedInput,
        correction: &Correction,
        engine_state: Vec<u8>,
    ) -> SceneState {
        let graph = &correction.graph;
        let objects = graph
            .objects
            .iter()
            .map(|object| SceneObject {
                id: object.id,
                class: object.class,
                bbox: object.bbox,
                area: object
                    .mask
                    .runs
                    .iter()
                    .skip(1)
                    .step_by(2)
                    .map(|&run| run as u64)
                    .sum(),
            })
            .collect();
        SceneState {
            labels: label_map(&prepared.scene, &graph.segment_labels),
            summary: SceneSummary {
                objects,
                room: Some(graph.room),
            },
            engine_state,
        }
    }

    /// Keeps a solved version under its encoded engine state.
    fn remember(&self, encoded: &[u8], correction: Correction) {
        lock(&self.solved).insert(key_of(encoded), Arc::new(correction));
    }
}

/// Segment changes summed per (from, to) pair in first-seen order; object and room changes one by one.
fn service_changes(
    changes: &[GraphChange],
    prepared: &PreparedInput,
    correction: &Correction,
    taxonomy: &Taxonomy,
) -> Vec<Change> {
    let reasons = |change: &GraphChange| {
        let glosses: Vec<&str> = change
            .causes
            .iter()
            .map(|cause| cause.gloss.as_str())
            .collect();
        if glosses.is_empty() {
            String::new()
        } else {
            format!(" (because: {})", glosses.join("; "))
        }
    };
    let segment_pixels = |segment: usize| {
        prepared
            .scene
            .stats
            .get(segment)
            .map(|stats| stats.area as u64)
            .unwrap_or(0)
    };
    let object_pixels = |hypothesis| {
        correction
            .hypotheses
            .iter()
            .find(|h| h.id == hypothesis)
            .map(|h| h.members.iter().map(|m| segment_pixels(m.0 as usize)).sum())
            .unwrap_or(0)
    };
    let mut out: Vec<Change> = Vec::new();
    for change in changes {
        let because = reasons(change);
        match change.kind {
            ChangeKind::SegmentRelabelled { segment, from, to } => {
                let pixels = segment_pixels(segment.0 as usize);
                let pair = out.iter_mut().find(|c| {
                    c.object.is_none() && c.from == Some(from) && c.to == Some(to) && c.pixels > 0
                });
                match pair {
                    Some(existing) => existing.pixels += pixels,
                    None => out.push(Change {
                        object: None,
                        from: Some(from),
                        to: Some(to),
                        pixels,
                        description: format!(
                            "{} -> {}{because}",
                            taxonomy.class_name(from),
                            taxonomy.class_name(to)
                        ),
                    }),
                }
            }
            ChangeKind::ObjectAdded { hypothesis, class } => out.push(Change {
                object: Some(object_id(hypothesis)),
                from: None,
                to: Some(class),
                pixels: object_pixels(hypothesis),
                description: format!("object added: {}{because}", taxonomy.class_name(class)),
            }),
            ChangeKind::ObjectRemoved { hypothesis, class } => out.push(Change {
                object: Some(object_id(hypothesis)),
                from: Some(class),
                to: None,
                pixels: object_pixels(hypothesis),
                description: format!("object removed: {}{because}", taxonomy.class_name(class)),
            }),
            ChangeKind::RoomChanged { from, to } => out.push(Change {
                object: None,
                from: None,
                to: None,
                pixels: 0,
                description: format!(
                    "room type: {} -> {}{because}",
                    taxonomy.room(from).map(|r| r.name.as_str()).unwrap_or("?"),
                    taxonomy.room(to).map(|r| r.name.as_str()).unwrap_or("?")
                ),
            }),
        }
    }
    out
}

fn service_unmet(correction: &Correction) -> Vec<Unmet> {
    let gloss = |index: usize| {
        correction
            .constraint_labels
            .get(index)
            .map(|label| label.1.clone())
            .unwrap_or_default()
    };
    let mut unmet: Vec<Unmet> = correction
        .unmet
        .iter()
        .map(|u| Unmet {
            gloss: gloss(u.constraint),
            reason: if u.contradictory {
                format!("{} (it contradicts another definite constraint)", u.reason)
            } else {
                u.reason.clone()
            },
        })
        .collect();
    unmet.extend(correction.issues.iter().map(|issue| Unmet {
        gloss: String::new(),
        reason: format!("could not tell what this refers to: {issue}"),
    }));
    unmet
}

/// The safety classes a list of pending changes touches, by name, sorted.
fn pending_safety_classes(changes: &[GraphChange], taxonomy: &Taxonomy) -> Vec<String> {
    let mut names: Vec<String> = changes
        .iter()
        .filter(|c| c.status == ChangeStatus::Pending)
        .filter_map(|c| match c.kind {
            ChangeKind::SegmentRelabelled { from, .. } => Some(from),
            ChangeKind::ObjectRemoved { class, .. } => Some(class),
            _ => None,
        })
        .filter(|&class: &ClassId| taxonomy.is_safety_critical(class))
        .map(|class| taxonomy.class_name(class).to_string())
        .collect();
    names.sort();
    names.dedup();
    names
}

impl Corrector for JointCorrector {
    fn taxonomy(&self) -> &Taxonomy {
        self.settings.grammar.taxonomy()
    }

    fn register(&self, input: &SceneInput) -> Result<SceneState, CorrectorError> {
        let prepared = self.prepared_for(input)?;
        let engine = EngineState {
            format: ENGINE_STATE_FORMAT,
            input: input_digest(input),
            turns: Vec::new(),
        };
        let baseline = self.solve(
            &prepared,
            None,
            &TurnRecord {
                constraints: Vec::new(),
                focus: None,
                confirmed: false,
            },
        )?;
        Ok(self.scene_state(&prepared, &baseline, engine.encode()))
    }

    fn apply(&self, request: &CorrectionRequest<'_>) -> Result<CorrectionOutcome, CorrectorError> {
        let taxonomy = self.taxonomy();
        let engine = EngineState::decode(&request.state.engine_state)?;
        let prepared = self.prepared_for(request.input)?;
        let parse = match self
            .settings
            .grammar
            .parse(request.utterance, request.focus)
        {
            Ok(parse) => parse,
            Err(error) => {
                return Ok(CorrectionOutcome {
                    constraints: Vec::new(),
                    changes: Vec::new(),
                    unmet: Vec::new(),
                    solver_gap: None,
                    verdict: Verdict::NotUnderstood {
                        reason: error.to_string(),
                    },
                })
            }
        };
        let constraints = parse.constraints;
        if constraints.is_empty() {
            return Ok(CorrectionOutcome {
                constraints,
                changes: Vec::new(),
                unmet: Vec::new(),
                solver_gap: None,
                verdict: Verdict::NotUnderstood {
                    reason: "no constraint could be read from the sentence".into(),
                },
            });
        }
        let previous = self.version(&prepared, &engine)?;
        let turn = TurnRecord {
            constraints: constraints.clone(),
            focus: request.focus,
            confirmed: false,
        };
        let correction = self.solve(&prepared, previous.as_deref(), &turn)?;
        let gap = Some(correction.graph.relative_gap);
        if let Some(question) = correction.questions.first() {
            return Ok(CorrectionOutcome {
                constraints,
                changes: Vec::new(),
                unmet: service_unmet(&correction),
                solver_gap: gap,
                verdict: Verdict::NeedsClarification {
                    question: question.text.clone(),
                },
            });
        }
        let safety = pending_safety_classes(&correction.changes, taxonomy);
        let mut next = engine.clone();
        if !safety.is_empty() {
            let confirmed = TurnRecord {
                confirmed: true,
                ..turn
            };
            next.turns.push(confirmed.clone());
            let proposed = self.solve(&prepared, previous.as_deref(), &confirmed)?;
            let changes = service_changes(&proposed.changes, &prepared, &proposed, taxonomy);
            let unmet = service_unmet(&proposed);
            let encoded = next.encode();
            let state = self.scene_state(&prepared, &proposed, encoded.clone());
            self.remember(&encoded, proposed);
            return Ok(CorrectionOutcome {
                constraints,
                changes,
                unmet,
                solver_gap: gap,
                verdict: Verdict::NeedsConfirmation {
                    proposed: state,
                    reason: format!(
                        "this removes or renames {}, a person, pet or hazard class; confirm to apply",
                        safety.join(", ")
                    ),
                },
            });
        }
        next.turns.push(turn);
        let changes = service_changes(&correction.changes, &prepared, &correction, taxonomy);
        let unmet = service_unmet(&correction);
        if changes.is_empty() {
            return Ok(CorrectionOutcome {
                constraints,
                changes,
                unmet,
                solver_gap: gap,
                verdict: Verdict::NothingToChange,
            });
        }
        let encoded = next.encode();
        let state = self.scene_state(&prepared, &correction, encoded.clone());
        self.remember(&encoded, correction);
        Ok(CorrectionOutcome {
            constraints,
            changes,
            unmet,
            solver_gap: gap,
            verdict: Verdict::Applied(state),
        })
    }
}
