//! The `Corrector` the service runs: the joint pipeline (superpixels, unaries, grounding, one energy, one
//! solver) behind the service's narrow trait.
//!
//! Owns: `JointCorrector`, the engine state it stores with every scene version (as JSON: the registration
//! digest, the digest of the parent version's engine state, the one turn that made this version, and a
//! snapshot of the solved version itself, deflated: `snapshot`), and its in-memory caches (prepared scenes
//! by registration digest, solved versions by the digest of their link, the state without its snapshot).
//! After a restart the caches are empty; the first turn on a version reads the solved version back from its
//! snapshot, so no chain is replayed whatever its length. A state without a readable snapshot (written by
//! an earlier build) is rebuilt by reading its ancestry through the request's `Lineage` and re-solving its
//! turns in order; the solver is deterministic, so the rebuilt version is the one that was stored.
//! Must not: know about HTTP, SQLite or tokio; it never stores anything that must survive a restart itself.

use std::collections::{HashMap, VecDeque};
use std::sync::{Arc, Mutex};

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use crate::ids::ClassId;
use crate::language::constraint::{Constraint, Focus};
use crate::pipeline::{correct_turn, CorrectionSettings, TurnInputs};
use crate::scenegraph::changes::{Change as GraphChange, ChangeKind};
use crate::scenegraph::{label_map, object_id, object_regions};
use crate::taxonomy::Taxonomy;
use crate::turn::solve::Correction;
use crate::turn::{decide, hold_reason, question_alongside, Decision, Note, OpenQuestion};
use crate::unaries::Classifier;

use super::corrector::{
    CorrectionOutcome, CorrectionRequest, Corrector, CorrectorError, Lineage, ObjectSummary,
    ReportedChange, ReportedUnmet, SceneInput, SceneState, SceneSummary, Verdict,
};
use super::joint_inputs::{hex, input_digest, prepare_input, superpixel_image, PreparedInput};

/// The engine-state format this build writes: one link of a chain (the parent's key and one turn).
const ENGINE_STATE_FORMAT: u32 = 2;
/// The format earlier builds wrote: every turn since registration in each version. Read, never written.
const LISTED_FORMAT: u32 = 1;
/// Prepared scenes kept in memory (superpixels and unaries of a 640x480 scene: about 2 MB).
const PREPARED_CACHE: usize = 32;
/// Solved versions kept in memory.
const SOLVED_CACHE: usize = 128;

/// One turn that led to a version: what was understood, where the operator pointed, and whether safety
/// changes were confirmed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, Default)]
struct TurnRecord {
    constraints: Vec<Constraint>,
    focus: Option<Focus>,
    confirmed: bool,
}

/// What the service stores as a version's engine state: a link of a chain, and the solved version as a
/// snapshot. It grows with the conversation only as the solved version does (the constraints in force and
/// the hypotheses earlier turns added); the chain is read back through the request's `Lineage` only when
/// the cache is cold and the snapshot cannot be read.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
struct EngineState {
    format: u32,
    /// `input_digest` of the registration.
    input: String,
    /// The key of the parent version's engine state; `None` for the registered version.
    parent: Option<String>,
    /// The turn that made this version from its parent; `None` for the registered version.
    turn: Option<TurnRecord>,
    /// The solved version (`Correction`) as deflated JSON in base64; not part of the key. Absent in states
    /// earlier builds wrote (their readers skip it), and in the registered version's.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    snapshot: Option<String>,
    /// The solved version's bound memo (`Correction::bound_memo`), so the first turn after a restart
    /// replays its parent's diffusion as a warm one does; not part of the key, absent where the solve kept
    /// none.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    bound_memo: Option<crate::turn::solve::BoundMemo>,
}

/// Deflate level of snapshots: fast (a 640x480 scene's solved version, about 200 kB of JSON, goes to
/// about a fifth of that in about a millisecond).
const SNAPSHOT_LEVEL: u32 = 1;

/// The snapshot text of a solved version.
fn snapshot_of(correction: &Correction) -> Option<String> {
    use base64::Engine as _;
    use std::io::Write as _;
    let json = serde_json::to_vec(correction).ok()?;
    let mut encoder = flate2::write::DeflateEncoder::new(
        Vec::with_capacity(json.len() / 4),
        flate2::Compression::new(SNAPSHOT_LEVEL),
    );
    encoder.write_all(&json).ok()?;
    let deflated = encoder.finish().ok()?;
    Some(base64::engine::general_purpose::STANDARD.encode(deflated))
}

/// The solved version a snapshot holds; `None` when it cannot be read (the caller then replays the chain).
fn read_snapshot(text: &str) -> Option<Correction> {
    use base64::Engine as _;
    use std::io::Read as _;
    let deflated = base64::engine::general_purpose::STANDARD
        .decode(text)
        .ok()?;
    let mut json = Vec::new();
    flate2::read::DeflateDecoder::new(deflated.as_slice())
        .take(SNAPSHOT_LIMIT)
        .read_to_end(&mut json)
        .ok()?;
    serde_json::from_slice(&json).ok()
}

/// A snapshot inflates to this many bytes at most (a stored state is trusted, but a bound costs nothing).
const SNAPSHOT_LIMIT: u64 = 256 << 20;

/// The earlier, listed form.
#[derive(Deserialize)]
struct ListedEngineState {
    input: String,
    turns: Vec<TurnRecord>,
}

#[derive(Deserialize)]
struct FormatOnly {
    format: u32,
}

impl EngineState {
    fn root(input: String) -> EngineState {
        EngineState {
            format: ENGINE_STATE_FORMAT,
            input,
            parent: None,
            turn: None,
            snapshot: None,
            bound_memo: None,
        }
    }

    /// The next link, without a snapshot.
    fn child(&self, turn: TurnRecord) -> EngineState {
        EngineState {
            format: ENGINE_STATE_FORMAT,
            input: self.input.clone(),
            parent: Some(self.key()),
            turn: Some(turn),
            snapshot: None,
            bound_memo: None,
        }
    }

    /// This link with the solved version it names.
    fn with_snapshot(self, correction: &Correction) -> EngineState {
        EngineState {
            snapshot: snapshot_of(correction),
            bound_memo: correction.bound_memo.clone(),
            ..self
        }
    }

    fn encode(&self) -> Vec<u8> {
        serde_json::to_vec(self).unwrap_or_default()
    }

    /// The chain ending in this stored state: the whole chain for the listed form, else the one link.
    fn decode(bytes: &[u8]) -> Result<Vec<EngineState>, CorrectorError> {
        let unreadable = |error: serde_json::Error| {
            CorrectorError::Internal(format!("stored engine state is unreadable: {error}"))
        };
        let format = serde_json::from_slice::<FormatOnly>(bytes)
            .map_err(unreadable)?
            .format;
        match format {
            ENGINE_STATE_FORMAT => Ok(vec![serde_json::from_slice(bytes).map_err(unreadable)?]),
            LISTED_FORMAT => {
                let listed: ListedEngineState =
                    serde_json::from_slice(bytes).map_err(unreadable)?;
                let mut chain = vec![EngineState::root(listed.input)];
                for turn in listed.turns {
                    let next = chain[chain.len() - 1].child(turn);
                    chain.push(next);
                }
                Ok(chain)
            }
            other => Err(CorrectorError::Internal(format!(
                "stored engine state has format {other}; this build reads {LISTED_FORMAT} and \
                 {ENGINE_STATE_FORMAT}"
            ))),
        }
    }

    /// The digest of the link (the state without its snapshot): what a child names as its parent and the
    /// solved cache is keyed by. A state without a snapshot encodes as earlier builds wrote it, so their
    /// keys are unchanged.
    fn key(&self) -> String {
        let link = EngineState {
            format: self.format,
            input: self.input.clone(),
            parent: self.parent.clone(),
            turn: self.turn.clone(),
            snapshot: None,
            bound_memo: None,
        };
        hex(&Sha256::digest(link.encode()))
    }
}

/// A small map that forgets its oldest entry when full. Each entry carries the registration digest of the
/// scene it belongs to, so everything held for a scene can be weighed and let go at once.
struct Bounded<V> {
    capacity: usize,
    order: VecDeque<String>,
    entries: HashMap<String, (String, V)>,
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
        self.entries.get(key).map(|(_, value)| value.clone())
    }

    fn clear(&mut self) {
        self.entries.clear();
        self.order.clear();
    }

    /// Holds `value` under `key` for the scene registered as `input`.
    fn insert(&mut self, key: String, input: &str, value: V) {
        if self
            .entries
            .insert(key.clone(), (input.to_string(), value))
            .is_none()
        {
            self.order.push_back(key);
        }
        while self.order.len() > self.capacity {
            if let Some(oldest) = self.order.pop_front() {
                self.entries.remove(&oldest);
            }
        }
    }

    /// The values held for the scene registered as `input`.
    fn of_input<'a>(&'a self, input: &'a str) -> impl Iterator<Item = &'a V> + 'a {
        self.entries
            .values()
            .filter(move |(tag, _)| tag == input)
            .map(|(_, value)| value)
    }

    /// Forgets every value held for the scene registered as `input`.
    fn release(&mut self, input: &str) {
        self.entries.retain(|_, (tag, _)| tag != input);
        let entries = &self.entries;
        self.order.retain(|key| entries.contains_key(key));
    }
}

/// The joint pipeline as a service engine.
pub struct JointCorrector {
    settings: CorrectionSettings,
    /// The built-in classifier; `replace_classifier` swaps it while the service runs.
    classifier: std::sync::RwLock<Arc<Classifier>>,
    prepared: Mutex<Bounded<Arc<PreparedInput>>>,
    solved: Mutex<Bounded<Arc<Correction>>>,
    /// Turns re-solved to rebuild versions the cache and the snapshots did not hold, since start.
    replayed: std::sync::atomic::AtomicU64,
    /// Scenes prepared by computing their statistics and unaries (not read from a stored form), since start.
    computed: std::sync::atomic::AtomicU64,
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
            classifier: std::sync::RwLock::new(Arc::new(classifier)),
            prepared: Mutex::new(Bounded::new(PREPARED_CACHE)),
            solved: Mutex::new(Bounded::new(SOLVED_CACHE)),
            replayed: std::sync::atomic::AtomicU64::new(0),
            computed: std::sync::atomic::AtomicU64::new(0),
        }
    }

    /// Serves `classifier` from now on: scenes prepared with the one before are dropped from the cache, so
    /// every later turn scores its scene with the new model (a turn already running finishes with the old
    /// one, and its version records the old model's id). Stored versions are not re-solved.
    pub fn replace_classifier(&self, classifier: Classifier) {
        *self
            .classifier
            .write()
            .unwrap_or_else(|poisoned| poisoned.into_inner()) = Arc::new(classifier);
        lock(&self.prepared).clear();
    }

    /// The id of the classifier now served.
    pub fn model_id(&self) -> String {
        self.current_classifier().id().to_string()
    }

    fn current_classifier(&self) -> Arc<Classifier> {
        self.classifier
            .read()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .clone()
    }

    /// How many turns this corrector has re-solved to rebuild a version it had neither cached nor could
    /// read from the version's snapshot (0 when every version after a restart came from its snapshot).
    pub fn replayed_turns(&self) -> u64 {
        self.replayed.load(std::sync::atomic::Ordering::Relaxed)
    }

    /// How many scenes this corrector has prepared by computing their segment statistics, adjacency,
    /// coarse level and unaries, rather than reading them from the form kept with the registration (0 after
    /// a restart when every scene asked for had its form).
    pub fn computed_preparations(&self) -> u64 {
        self.computed.load(std::sync::atomic::Ordering::Relaxed)
    }

    /// The embedded grammar, room prior and weights, and the classifier at `model`
    /// (`crate::pipeline::model_path(None)` for the default).
    pub fn load(model: &std::path::Path) -> Result<JointCorrector, crate::pipeline::PipelineError> {
        let settings = CorrectionSettings::embedded()?;
        let classifier = crate::pipeline::load_classifier(model, settings.grammar.taxonomy())?;
        Ok(JointCorrector::new(settings, classifier))
    }

    /// The prepared scene of a registration. `known_digest` is the digest a stored engine state names for
    /// this input: when the cache holds it, the input is not hashed again (hashing a 640x480 image and depth
    /// costs milliseconds per turn); otherwise the digest is computed and must agree.
    fn prepared_for(
        &self,
        input: &SceneInput,
        known_digest: Option<&str>,
    ) -> Result<Arc<PreparedInput>, CorrectorError> {
        if let Some(found) = known_digest.and_then(|digest| lock(&self.prepared).get(digest)) {
            return Ok(found);
        }
        let digest = input_digest(input);
        if known_digest.is_some_and(|known| known != digest) {
            return Err(internal(
                "the stored engine state names another registration than the scene's input",
            ));
        }
        if let Some(found) = lock(&self.prepared).get(&digest) {
            return Ok(found);
        }
        let classifier = self.current_classifier();
        let prepared = Arc::new(prepare_input(input, &digest, self.taxonomy(), &classifier)?);
        if !prepared.from_stored_form {
            self.computed
                .fetch_add(1, std::sync::atomic::Ordering::Relaxed);
        }
        // A model replaced meanwhile: this turn keeps the scores it has, but the cache does not.
        if self.current_classifier().id() == classifier.id() {
            lock(&self.prepared).insert(digest.clone(), &digest, prepared.clone());
        }
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

    /// The solved version an engine state names: from the cache, or re-solved from the longest cached part
    /// of its chain (read through `lineage` only then). `None` for the registered version (its first turn
    /// solves from scratch).
    fn version(
        &self,
        prepared: &PreparedInput,
        stored: Vec<EngineState>,
        lineage: Lineage<'_>,
    ) -> Result<Option<Arc<Correction>>, CorrectorError> {
        let Some(head) = stored.last() else {
            return Ok(None);
        };
        let head_key = head.key();
        if head.turn.is_none() {
            return self.baseline(prepared, &head.input, &head_key).map(Some);
        }
        if let Some(found) = lock(&self.solved).get(&head_key) {
            return Ok(Some(found));
        }
        if let Some(mut found) = head.snapshot.as_deref().and_then(read_snapshot) {
            found.bound_memo = head.bound_memo.clone();
            let found = Arc::new(found);
            lock(&self.solved).insert(head_key, &head.input, found.clone());
            return Ok(Some(found));
        }
        let chain = if stored.len() > 1 {
            stored
        } else {
            let mut chain = Vec::new();
            for bytes in lineage.read().map_err(internal)? {
                // A listed state already holds its whole chain; a link adds itself.
                let mut decoded = EngineState::decode(&bytes)?;
                if decoded.len() > 1 {
                    chain.clear();
                }
                chain.append(&mut decoded);
            }
            chain
        };
        let keys: Vec<String> = chain.iter().map(EngineState::key).collect();
        if keys.last() != Some(&head_key) {
            return Err(CorrectorError::Internal(
                "the stored ancestry does not end in the scene's current version".into(),
            ));
        }
        let mut start = chain.len();
        let mut current: Option<Arc<Correction>> = None;
        while start > 0 {
            if let Some(found) = lock(&self.solved).get(&keys[start - 1]) {
                current = Some(found);
                break;
            }
            start -= 1;
        }
        for index in start..chain.len() {
            let Some(turn) = &chain[index].turn else {
                // The registered version: the scene solved with no note.
                current = Some(self.baseline(prepared, &chain[index].input, &keys[index])?);
                continue;
            };
            let solved = Arc::new(self.solve(prepared, current.as_deref(), turn)?);
            self.replayed
                .fetch_add(1, std::sync::atomic::Ordering::Relaxed);
            lock(&self.solved).insert(keys[index].clone(), &chain[index].input, solved.clone());
            current = Some(solved);
        }
        Ok(current)
    }

    /// The registered version's solve (no note), cached under its engine state's key.
    fn baseline(
        &self,
        prepared: &PreparedInput,
        input: &str,
        key: &str,
    ) -> Result<Arc<Correction>, CorrectorError> {
        if let Some(found) = lock(&self.solved).get(key) {
            return Ok(found);
        }
        let solved = Arc::new(self.solve(prepared, None, &TurnRecord::default())?);
        lock(&self.solved).insert(key.to_string(), input, solved.clone());
        Ok(solved)
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
            .map(|object| ObjectSummary {
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
                model: prepared.model.clone(),
            },
            engine_state,
        }
    }

    /// Keeps a solved version under its engine state's key.
    fn remember(&self, state: &EngineState, correction: Correction) {
        lock(&self.solved).insert(state.key(), &state.input, Arc::new(correction));
    }
}

/// The registration digest a stored state names (`None` when it cannot be read).
fn registration_of(state: &SceneState) -> Option<String> {
    EngineState::decode(&state.engine_state)
        .ok()?
        .pop()
        .map(|link| link.input)
}

/// About what a solved version holds on the heap: its per-segment and per-node labels, objects, their
/// masks, names and relations, hypotheses and the solve's multipliers (one per hypothesis member), counted
/// from their lengths (the small fixed parts are left out).
fn correction_bytes(correction: &Correction) -> u64 {
    let graph = &correction.graph;
    let masks: usize = graph
        .objects
        .iter()
        .map(|object| (object.mask.runs.len() + object.members.len()) * 4 + object.class_name.len())
        .sum();
    let multipliers = &correction.solution.multipliers;
    let agreement: usize = multipliers
        .agreement
        .iter()
        .map(|values| std::mem::size_of::<Vec<f64>>() + std::mem::size_of_val(&values[..]))
        .sum();
    let bytes = graph.segment_labels.len() * std::mem::size_of::<ClassId>()
        + graph.objects.len() * std::mem::size_of::<crate::scenegraph::SceneObject>()
        + graph.relations.len() * std::mem::size_of::<crate::scenegraph::ObjectRelation>()
        + masks
        + correction.solution.state.labels.len() * 2
        + correction.solution.state.hypotheses_on.len()
        + correction.solution.presence.len()
        + agreement
        + std::mem::size_of_val(&multipliers.presence[..])
        + correction
            .hypotheses
            .iter()
            .map(|hypothesis| {
                std::mem::size_of::<crate::hypotheses::Hypothesis>() + hypothesis.members.len() * 4
            })
            .sum::<usize>();
    bytes as u64
}

/// Segment changes summed per (from, to) pair in first-seen order; object and room changes one by one.
fn service_changes(
    changes: &[GraphChange],
    prepared: &PreparedInput,
    correction: &Correction,
    taxonomy: &Taxonomy,
) -> Vec<ReportedChange> {
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
    // An object added or removed counts only the pixels whose label moved to or from its class, so the
    // figures of one change list agree with each other.
    let moved: HashMap<u32, (ClassId, ClassId)> = changes
        .iter()
        .filter_map(|change| match change.kind {
            ChangeKind::SegmentRelabelled { segment, from, to } => Some((segment.0, (from, to))),
            _ => None,
        })
        .collect();
    let object_pixels = |hypothesis, class: ClassId, arriving: bool| -> u64 {
        correction
            .hypotheses
            .iter()
            .find(|h| h.id == hypothesis)
            .map(|h| {
                h.members
                    .iter()
                    .filter(|m| {
                        moved.get(&m.0).is_some_and(|&(from, to)| {
                            if arriving {
                                to == class
                            } else {
                                from == class
                            }
                        })
                    })
                    .map(|m| segment_pixels(m.0 as usize))
                    .sum()
            })
            .unwrap_or(0)
    };
    let mut out: Vec<ReportedChange> = Vec::new();
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
                    None => out.push(ReportedChange {
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
            ChangeKind::ObjectAdded { hypothesis, class } => out.push(ReportedChange {
                object: Some(object_id(hypothesis)),
                from: None,
                to: Some(class),
                pixels: object_pixels(hypothesis, class, true),
                description: format!("object added: {}{because}", taxonomy.class_name(class)),
            }),
            ChangeKind::ObjectRemoved { hypothesis, class } => out.push(ReportedChange {
                object: Some(object_id(hypothesis)),
                from: Some(class),
                to: None,
                pixels: object_pixels(hypothesis, class, false),
                description: format!("object removed: {}{because}", taxonomy.class_name(class)),
            }),
            ChangeKind::RoomChanged { from, to } => out.push(ReportedChange {
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

fn service_unmet(correction: &Correction) -> Vec<ReportedUnmet> {
    let gloss = |index: usize| {
        correction
            .constraint_labels
            .get(index)
            .map(|label| label.1.clone())
            .unwrap_or_default()
    };
    let mut unmet: Vec<ReportedUnmet> = correction
        .unmet
        .iter()
        .map(|u| ReportedUnmet {
            gloss: gloss(u.constraint),
            reason: if u.contradictory {
                format!("{} (it contradicts another definite constraint)", u.reason)
            } else {
                u.reason.clone()
            },
        })
        .collect();
    unmet.extend(correction.issues.iter().map(|issue| ReportedUnmet {
        gloss: String::new(),
        reason: format!("could not tell what this refers to: {issue}"),
    }));
    unmet
}

impl Corrector for JointCorrector {
    fn taxonomy(&self) -> &Taxonomy {
        self.settings.grammar.taxonomy()
    }

    fn superpixels(&self, input: &SceneInput) -> Option<crate::raster::IndexImage> {
        let prepared = self.prepared_for(input, None).ok()?;
        superpixel_image(&prepared.scene.segments)
    }

    fn prepared_form(&self, input: &SceneInput) -> Option<Vec<u8>> {
        let prepared = self.prepared_for(input, None).ok()?;
        super::prepared_form::encode(&super::prepared_form::PreparedParts {
            scene: &prepared.scene,
            unaries: &prepared.unaries,
            model: prepared.model.as_deref(),
            digest: &prepared.digest,
        })
    }

    /// The objects of the version's solved scene graph (cached, or read from its snapshot; a version
    /// whose solve would need its ancestry replayed gets `None` and the overlay outlines class borders).
    fn object_regions(&self, input: &SceneInput, state: &SceneState) -> Option<Vec<u32>> {
        let stored = EngineState::decode(&state.engine_state).ok()?;
        let prepared = self.prepared_for(input, Some(&stored.last()?.input)).ok()?;
        let no_ancestry = || Err("the overlay does not replay a version's ancestry".to_string());
        let solved = self
            .version(&prepared, stored, Lineage(&no_ancestry))
            .ok()??;
        Some(object_regions(&prepared.scene, &solved.graph))
    }

    /// What the prepared scene and the solved versions of the state's registration hold (the digest is
    /// read from the state, so the input is not hashed).
    fn held_bytes(&self, _input: &SceneInput, state: &SceneState) -> u64 {
        let Some(digest) = registration_of(state) else {
            return 0;
        };
        let prepared: u64 = lock(&self.prepared)
            .of_input(&digest)
            .map(|prepared| prepared.heap_bytes())
            .sum();
        let solved: u64 = lock(&self.solved)
            .of_input(&digest)
            .map(|correction| correction_bytes(correction))
            .sum();
        prepared + solved
    }

    fn release(&self, _input: &SceneInput, state: &SceneState) {
        if let Some(digest) = registration_of(state) {
            lock(&self.prepared).release(&digest);
            lock(&self.solved).release(&digest);
        }
    }

    fn register(&self, input: &SceneInput) -> Result<SceneState, CorrectorError> {
        let prepared = self.prepared_for(input, None)?;
        let engine = EngineState::root(input_digest(input));
        let baseline = self.solve(&prepared, None, &TurnRecord::default())?;
        let state = self.scene_state(&prepared, &baseline, engine.encode());
        self.remember(&engine, baseline);
        Ok(state)
    }

    fn apply(&self, request: &CorrectionRequest<'_>) -> Result<CorrectionOutcome, CorrectorError> {
        let taxonomy = self.taxonomy();
        let stored = EngineState::decode(&request.state.engine_state)?;
        let Some(engine) = stored.last().cloned() else {
            return Err(internal("stored engine state is empty"));
        };
        let prepared = self.prepared_for(request.input, Some(&engine.input))?;
        let not_understood = |reason: String| CorrectionOutcome {
            constraints: Vec::new(),
            changes: Vec::new(),
            unmet: Vec::new(),
            solver_gap: None,
            question: None,
            verdict: Verdict::NotUnderstood { reason },
        };
        let constraints = match request.note {
            Some(constraints) => constraints.to_vec(),
            None => match self
                .settings
                .grammar
                .parse(request.utterance, request.focus)
            {
                Ok(parse) => parse.constraints,
                Err(error) => return Ok(not_understood(error.to_string())),
            },
        };
        if constraints.is_empty() {
            return Ok(not_understood(
                "no constraint could be read from the sentence".into(),
            ));
        }
        let previous = self.version(&prepared, stored, request.lineage)?;
        let turn = TurnRecord {
            constraints: constraints.clone(),
            focus: request.focus,
            confirmed: request.confirmed,
        };
        let correction = self.solve(&prepared, previous.as_deref(), &turn)?;
        let gap = Some(correction.graph.relative_gap);
        let first_new = correction
            .constraint_labels
            .len()
            .saturating_sub(constraints.len());
        let note = Note {
            text: request.utterance.to_string(),
            focus: request.focus,
            constraints: constraints.clone(),
        };
        let decision = decide(
            &correction,
            &constraints,
            first_new,
            request.confirmed,
            taxonomy,
        );
        let shown = previous.as_deref().map_or(&correction.graph, |p| &p.graph);
        let alongside = question_alongside(&correction, &constraints, first_new).map(|index| {
            OpenQuestion::from_solve(&note, &correction.questions[index], first_new, shown)
        });
        match decision {
            Decision::Ask(index) => {
                let question =
                    OpenQuestion::from_solve(&note, &correction.questions[index], first_new, shown);
                Ok(CorrectionOutcome {
                    constraints,
                    changes: Vec::new(),
                    unmet: service_unmet(&correction),
                    solver_gap: gap,
                    question: None,
                    verdict: Verdict::NeedsClarification { question },
                })
            }
            Decision::Hold { classes } => {
                let confirmed = TurnRecord {
                    confirmed: true,
                    ..turn
                };
                let proposed = self.solve(&prepared, previous.as_deref(), &confirmed)?;
                let next = engine.child(confirmed).with_snapshot(&proposed);
                let changes = service_changes(&proposed.changes, &prepared, &proposed, taxonomy);
                let unmet = service_unmet(&proposed);
                let state = self.scene_state(&prepared, &proposed, next.encode());
                self.remember(&next, proposed);
                Ok(CorrectionOutcome {
                    constraints,
                    changes,
                    unmet,
                    solver_gap: gap,
                    question: alongside,
                    verdict: Verdict::NeedsConfirmation {
                        proposed: state,
                        reason: hold_reason(&classes),
                    },
                })
            }
            Decision::Nothing => Ok(CorrectionOutcome {
                constraints,
                changes: Vec::new(),
                unmet: service_unmet(&correction),
                solver_gap: gap,
                question: alongside,
                verdict: Verdict::NothingToChange,
            }),
            Decision::Apply => {
                let changes =
                    service_changes(&correction.changes, &prepared, &correction, taxonomy);
                let unmet = service_unmet(&correction);
                let next = engine.child(turn).with_snapshot(&correction);
                let state = self.scene_state(&prepared, &correction, next.encode());
                self.remember(&next, correction);
                Ok(CorrectionOutcome {
                    constraints,
                    changes,
                    unmet,
                    solver_gap: gap,
                    question: alongside,
                    verdict: Verdict::Applied(state),
                })
            }
        }
    }
}
