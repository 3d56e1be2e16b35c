//! The main job end to end: a scene and operator notes in, a corrected scene graph and a report out.
//!
//! Owns: `correct_scene` (load the scene, build superpixels, score segments with the built-in classifier
//! or the robot's own perception through `unaries::perception`, parse each note in one conversation, correct turn by turn with the previous turn as warm start),
//! `CorrectionReport` and its plain-text summary, and where the built-in classifier file is found.
//! Must not: write files or know about flags (the binary does that), nor reach inside the solver: it calls
//! `turn::solve::correct` only.

use std::path::{Path, PathBuf};

use serde::Serialize;

use crate::demo::{demo_scene_path, DemoError};
use crate::energy::EnergyError;
use crate::grounding::{ClarifyingQuestion, GroundingIssue};
use crate::ids::ClassId;
use crate::language::constraint::{Focus, Span};
use crate::language::error::GrammarError;
use crate::raster::{read_rgb_image, DEFAULT_PIXEL_LIMIT};
use crate::scene::{load_capture, Capture, Scene, SceneError, SceneParams};
use crate::scenegraph::changes::{Change, ChangeKind, ChangeStatus, Unmet};
use crate::scenegraph::differences::{difference_class, object_differences, ObjectDifference};
use crate::scenegraph::instances::InstanceCutsError;
use crate::taxonomy::Taxonomy;
use crate::turn::dialogue::{Dialogue, Reply, Status};
use crate::turn::solve::{Correction, CorrectionError};
pub use crate::turn::{correct_turn, CorrectionSettings, TurnInputs};
use crate::turn::{Candidate, TurnError};
use crate::unaries::builtin::{
    builtin_unaries, current_feature_layout, IMAGE_ONLY_MODEL_FILE, MODEL_FILE,
};
use crate::unaries::byo::PerceptionError;
use crate::unaries::classifier::{Classifier, ClassifierError};
use crate::unaries::perception::Perception;
use crate::unaries::Unaries;

/// Environment variable naming the built-in classifier's ONNX file.
pub const MODEL_VARIABLE: &str = "SAYSO_MODEL";

/// The built-in classifier's file: `MODEL_FILE` in the workspace's `models/` folder (fixed at compile
/// time, `sayso_core::shipped::COMPILED_MODELS_DIR`). The one place its path is built.
pub fn shipped_model_path() -> PathBuf {
    Path::new(sayso_core::shipped::COMPILED_MODELS_DIR).join(MODEL_FILE)
}

/// What can stop the main job.
#[derive(Debug, thiserror::Error)]
pub enum PipelineError {
    #[error(transparent)]
    Scene(#[from] DemoError),
    /// The scene's files could not be read (built only by `SceneSource::load`).
    #[error("reading the scene: {0}")]
    Capture(SceneError),
    #[error("building superpixels: {0}")]
    Superpixels(#[from] SceneError),
    #[error("built-in classifier: {0}")]
    Classifier(#[from] ClassifierError),
    #[error("grammar: {0}")]
    Grammar(#[from] GrammarError),
    #[error("room prior: {0}")]
    Prior(#[from] EnergyError),
    #[error("correcting: {0}")]
    Correction(#[from] CorrectionError),
    #[error("{0}")]
    InstanceCuts(#[from] InstanceCutsError),
    #[error(transparent)]
    Turn(#[from] TurnError),
    #[error("the robot's own perception: {0}")]
    Perception(#[from] PerceptionError),
}

/// Which scene to work on.
#[derive(Clone, Debug, PartialEq)]
pub enum SceneSource {
    /// A scene of the demo set, by name, under this demo directory.
    Demo {
        directory: PathBuf,
        name: Option<String>,
    },
    /// A scene directory: an image (PNG or JPEG), optionally depth and camera (`crate::scene::files`).
    Directory(PathBuf),
    /// One image file, PNG or JPEG: a scene with no depth.
    Image(PathBuf),
}

impl SceneSource {
    /// A scene directory or an image file when the text names one that exists, else a demo scene name.
    pub fn from_text(text: &str, demo_directory: &Path) -> SceneSource {
        let path = Path::new(text);
        if path.is_dir() {
            SceneSource::Directory(path.to_path_buf())
        } else if path.is_file() {
            SceneSource::Image(path.to_path_buf())
        } else {
            SceneSource::Demo {
                directory: demo_directory.to_path_buf(),
                name: Some(text.to_string()),
            }
        }
    }

    /// The scene's directory: the given one, or the demo scene's under the demo directory.
    pub fn directory(&self) -> Result<PathBuf, DemoError> {
        match self {
            SceneSource::Demo { directory, name } => demo_scene_path(directory, name.as_deref()),
            SceneSource::Directory(path) => Ok(path.clone()),
            SceneSource::Image(path) => {
                Ok(path.parent().map_or_else(PathBuf::new, Path::to_path_buf))
            }
        }
    }

    /// Reads what a robot would have of the scene (`crate::scene::load_capture`); never its ground truth.
    pub fn load(&self) -> Result<Capture, PipelineError> {
        if let SceneSource::Image(path) = self {
            let image = read_rgb_image(path, DEFAULT_PIXEL_LIMIT)
                .map_err(|error| PipelineError::Capture(error.into()))?;
            let name = path.file_stem().map_or("scene".to_string(), |stem| {
                stem.to_string_lossy().into_owned()
            });
            return Ok(Capture::from_image(name, image));
        }
        load_capture(&self.directory()?, DEFAULT_PIXEL_LIMIT).map_err(PipelineError::Capture)
    }
}

/// Where the built-in classifier's file is: `$SAYSO_MODEL`, else `models/segment_classifier.onnx`.
pub fn model_path(explicit: Option<&Path>) -> PathBuf {
    if let Some(path) = explicit {
        return path.to_path_buf();
    }
    match std::env::var_os(MODEL_VARIABLE) {
        Some(value) if !value.is_empty() => PathBuf::from(value),
        _ => shipped_model_path(),
    }
}

/// A scene ready for correction: the capture, the superpixel scene and the classifier's scores (or the
/// robot's own), with the robot's detections.
pub struct PreparedScene {
    pub capture: Capture,
    pub scene: Scene,
    pub unaries: Unaries,
    pub detections: Vec<crate::hypotheses::Detection>,
    /// Class names of the robot's own perception that were left out as unknown.
    pub dropped_classes: Vec<String>,
    /// The classifier's best class per fine segment (what it believes with no correction).
    pub classifier_labels: Vec<ClassId>,
}

/// Loads a scene, builds its superpixels and scores them with the classifier.
pub fn prepare_scene(
    source: &SceneSource,
    classifier: &Classifier,
) -> Result<PreparedScene, PipelineError> {
    prepare_loaded(source.load()?, classifier)
}

/// The superpixels of a capture as every entry point builds them (`SceneParams::for_image_size`, with its
/// depth map when it has one; the declared room is left to the solve).
pub fn superpixels_of(capture: &Capture) -> Result<Scene, PipelineError> {
    let params = SceneParams::for_image_size(capture.image.width, capture.image.height);
    Ok(capture.segment(None, &params)?)
}

/// Builds superpixels of an already loaded scene (a `Capture`, or a `DemoScene` whose ground truth is then
/// dropped) and scores them with the classifier.
pub fn prepare_loaded(
    capture: impl Into<Capture>,
    classifier: &Classifier,
) -> Result<PreparedScene, PipelineError> {
    let scene = built_superpixels(capture.into())?;
    let started = std::time::Instant::now();
    let unaries = builtin_unaries(&scene.1, classifier)?;
    tracing::debug!(
        classes = unaries.class_count(),
        milliseconds = started.elapsed().as_millis() as u64,
        "segments scored by the built-in classifier"
    );
    Ok(prepared(scene, unaries, Vec::new(), Vec::new()))
}

/// Builds superpixels of a capture and scores them from the robot's own perception (the built-in
/// classifier when it brings no scores).
pub fn prepare_perceived(
    capture: Capture,
    perception: &Perception,
    taxonomy: &Taxonomy,
    classifier: &Classifier,
) -> Result<PreparedScene, PipelineError> {
    let (capture, scene) = built_superpixels(capture)?;
    let started = std::time::Instant::now();
    let perceived = perception.unaries(&scene, &capture.image, taxonomy, classifier)?;
    tracing::debug!(
        source = ?perception.scores,
        classes = perceived.unaries.class_count(),
        detections = perceived.detections.len(),
        dropped = perceived.dropped.len(),
        milliseconds = started.elapsed().as_millis() as u64,
        "segments scored"
    );
    Ok(prepared(
        (capture, scene),
        perceived.unaries,
        perceived.detections,
        perceived.dropped,
    ))
}

fn prepared(
    (capture, scene): (Capture, Scene),
    unaries: Unaries,
    detections: Vec<crate::hypotheses::Detection>,
    dropped_classes: Vec<String>,
) -> PreparedScene {
    let classifier_labels = best_classes(&unaries);
    PreparedScene {
        capture,
        scene,
        unaries,
        detections,
        dropped_classes,
        classifier_labels,
    }
}

fn built_superpixels(capture: Capture) -> Result<(Capture, Scene), PipelineError> {
    let started = std::time::Instant::now();
    let scene = superpixels_of(&capture)?;
    tracing::debug!(
        scene = %capture.name,
        width = capture.image.width,
        height = capture.image.height,
        depth = capture.depth.is_some(),
        segments = scene.segment_count(),
        milliseconds = started.elapsed().as_millis() as u64,
        "superpixels built"
    );
    Ok((capture, scene))
}

/// The highest-scoring class of every segment row.
fn best_classes(unaries: &Unaries) -> Vec<ClassId> {
    let classes = unaries.class_count();
    (0..unaries.segment_count())
        .map(|segment| {
            let row = unaries.log_probs.row(segment);
            let mut best = 0usize;
            for class in 0..classes {
                if row[class] > row[best] {
                    best = class;
                }
            }
            ClassId(best as u16)
        })
        .collect()
}

/// One understood constraint of a note.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Understood {
    pub span: Span,
    pub gloss: String,
    pub confidence: f32,
}

/// One note and what came of it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TurnReport {
    pub utterance: String,
    /// What became of it: applied, held, asked, not understood, undone...
    pub status: Status,
    /// Why a conversation command was refused, or what an undo, redo, confirmation or rejection did.
    pub message: Option<String>,
    /// Why the note could not be read (the scene is then left as it was).
    pub parse_error: Option<String>,
    pub understood: Vec<Understood>,
    /// Disagreements with earlier notes the conversation found.
    pub conflicts: Vec<String>,
    pub changes: Vec<Change>,
    /// The scene graph's objects joined, split, added and removed by this note.
    pub objects: Vec<ObjectDifference>,
    pub unmet: Vec<Unmet>,
    pub questions: Vec<ClarifyingQuestion>,
    /// The question this note asked (or asked again), in words.
    pub question: Option<String>,
    /// The question's candidates (scene-graph objects), when it names some.
    pub candidates: Vec<Candidate>,
    /// The earlier note this one answered or confirmed, when its constraints come from that note.
    pub answers: Option<String>,
    pub issues: Vec<GroundingIssue>,
    /// Notes whose changes still wait for confirmation after this one.
    pub waiting: Vec<String>,
}

/// The whole job's result.
pub struct CorrectionReport {
    pub prepared: PreparedScene,
    /// What the robot believed before any note: the joint solve with no constraint.
    pub baseline: Correction,
    /// The scene as it stands after the last note (None while no note has changed anything).
    pub correction: Option<Correction>,
    /// The scene as it stood after each note, in order (None while nothing has changed).
    pub after_each: Vec<Option<Correction>>,
    pub turns: Vec<TurnReport>,
}

impl CorrectionReport {
    /// The final label of every fine segment: the scene as it stands after the last note, or the no-note
    /// solve (`baseline`) when no note changed anything. Never the classifier's own best classes: the
    /// service keeps the no-note solve as a scene's first version, and `scene_graph.json` describes it, so
    /// the labels written must be that solve's too.
    pub fn final_labels(&self) -> &[ClassId] {
        match &self.correction {
            Some(correction) => &correction.graph.segment_labels,
            None => &self.baseline.graph.segment_labels,
        }
    }
}

/// One note with the focus sent along with it (a pointed pixel or object), if any.
#[derive(Clone, Debug, PartialEq)]
pub struct PointedNote {
    pub text: String,
    pub focus: Option<Focus>,
}

/// Applies notes one after another to a prepared scene, every note with the same focus.
pub fn correct_prepared(
    prepared: PreparedScene,
    utterances: &[String],
    focus: Option<Focus>,
    confirm_safety: bool,
    settings: &CorrectionSettings,
) -> Result<CorrectionReport, PipelineError> {
    let notes: Vec<PointedNote> = utterances
        .iter()
        .map(|text| PointedNote {
            text: text.clone(),
            focus,
        })
        .collect();
    correct_notes(prepared, &notes, confirm_safety, settings)
}

/// Applies notes one after another to a prepared scene, each with its own focus, as one conversation
/// (`crate::turn::dialogue`): a note may answer the previous note's question, confirm or reject a held
/// change, or undo and redo.
pub fn correct_notes(
    prepared: PreparedScene,
    notes: &[PointedNote],
    confirm_safety: bool,
    settings: &CorrectionSettings,
) -> Result<CorrectionReport, PipelineError> {
    let inputs = TurnInputs {
        scene: &prepared.scene,
        unaries: &prepared.unaries,
        detections: &prepared.detections,
    };
    let mut dialogue = Dialogue::new(inputs, settings, confirm_safety)?;
    let mut after_each = Vec::new();
    let mut turns = Vec::new();
    let mut changed = false;
    for note in notes {
        let started = std::time::Instant::now();
        let reply = dialogue.say(&note.text, note.focus)?;
        tracing::debug!(
            note = %note.text,
            status = ?reply.status,
            changes = reply.changes.len(),
            milliseconds = started.elapsed().as_millis() as u64,
            "note worked out"
        );
        turns.push(turn_report(&note.text, &reply));
        changed |= matches!(
            reply.status,
            Status::Applied | Status::Confirmed | Status::Undone | Status::Redone
        );
        after_each.push(changed.then(|| dialogue.current().clone()));
    }
    let baseline = dialogue.baseline().clone();
    let correction = changed.then(|| dialogue.current().clone());
    drop(dialogue);
    Ok(CorrectionReport {
        prepared,
        baseline,
        correction,
        after_each,
        turns,
    })
}

/// The report of one reply.
fn turn_report(utterance: &str, reply: &Reply) -> TurnReport {
    let solved = reply.solved.as_ref();
    let solving = matches!(
        reply.status,
        Status::Applied
            | Status::Held
            | Status::Asked
            | Status::NothingToChange
            | Status::Confirmed
    );
    let understood = match &reply.note {
        Some(note) if solving => note
            .constraints
            .iter()
            .map(|c| Understood {
                span: c.span,
                gloss: c.gloss.clone(),
                confidence: c.confidence,
            })
            .collect(),
        _ => Vec::new(),
    };
    let new_count = reply.note.as_ref().map_or(0, |n| n.constraints.len());
    let this_note = |constraint: usize| {
        solved.is_some_and(|s| constraint >= s.constraint_labels.len().saturating_sub(new_count))
    };
    TurnReport {
        utterance: utterance.to_string(),
        status: reply.status,
        message: reply.message.clone(),
        parse_error: (reply.status == Status::NotUnderstood)
            .then(|| reply.message.clone())
            .flatten(),
        understood,
        conflicts: reply.conflicts.clone(),
        changes: if reply.status == Status::Asked {
            Vec::new()
        } else {
            reply.changes.clone()
        },
        objects: match (solved, reply.status) {
            (
                Some(after),
                Status::Applied | Status::Confirmed | Status::Undone | Status::Redone,
            ) => object_differences(&reply.before.graph, &after.graph),
            _ => Vec::new(),
        },
        unmet: match solved {
            Some(s) if solving => s.unmet.clone(),
            _ => Vec::new(),
        },
        questions: match solved {
            Some(s) if solving => s
                .questions
                .iter()
                .filter(|q| this_note(q.constraint))
                .cloned()
                .collect(),
            _ => Vec::new(),
        },
        question: reply.question.as_ref().map(|q| q.text.clone()),
        candidates: reply
            .question
            .as_ref()
            .map(|q| q.candidates.clone())
            .unwrap_or_default(),
        answers: reply
            .note
            .as_ref()
            .filter(|note| solving && note.text != utterance)
            .map(|note| note.text.clone()),
        issues: match solved {
            Some(s) if solving => s
                .issues
                .iter()
                .filter(|i| this_note(i.constraint()))
                .cloned()
                .collect(),
            _ => Vec::new(),
        },
        waiting: reply.waiting.clone(),
    }
}

/// What the robot believes with no note: the joint solve of the prepared scene under no constraint (its scene
/// graph holds the objects the hypotheses give before anyone says anything).
pub fn believe_without_notes(
    prepared: &PreparedScene,
    settings: &CorrectionSettings,
) -> Result<Correction, PipelineError> {
    Ok(correct_turn(
        &TurnInputs {
            scene: &prepared.scene,
            unaries: &prepared.unaries,
            detections: &prepared.detections,
        },
        None,
        &[],
        None,
        false,
        settings,
    )?)
}

/// The main job: load, segment, classify, and apply the notes in order.
pub fn correct_scene(
    source: &SceneSource,
    utterances: &[String],
    focus: Option<Focus>,
    confirm_safety: bool,
    classifier: &Classifier,
    settings: &CorrectionSettings,
) -> Result<CorrectionReport, PipelineError> {
    let prepared = prepare_scene(source, classifier)?;
    correct_prepared(prepared, utterances, focus, confirm_safety, settings)
}

/// Loads the built-in classifier from `path`, with its image-only companion when `path` is named
/// `segment_classifier.onnx` and `segment_classifier_rgb.onnx` lies beside it (the shipped pair in
/// `models/`, or a pair trained with `sayso train --out DIR` and `sayso train --without-depth --out DIR`).
/// Any other model file is loaded alone and scores every scene, with depth or without.
pub fn load_classifier(path: &Path, taxonomy: &Taxonomy) -> Result<Classifier, PipelineError> {
    let classifier = Classifier::load(path, taxonomy, current_feature_layout())?;
    match image_only_companion(path) {
        Some(companion) => Ok(classifier.with_image_only(Classifier::load(
            &companion,
            taxonomy,
            current_feature_layout(),
        )?)),
        None => Ok(classifier),
    }
}

/// The image-only model beside a built-in model file, when there is one.
pub fn image_only_companion(path: &Path) -> Option<PathBuf> {
    if path.file_name()? != std::ffi::OsStr::new(MODEL_FILE) {
        return None;
    }
    let companion = path.with_file_name(IMAGE_ONLY_MODEL_FILE);
    companion.is_file().then_some(companion)
}

fn quoted_span(utterance: &str, span: Span) -> String {
    let text: String = utterance
        .chars()
        .skip(span.start)
        .take(span.end.saturating_sub(span.start))
        .collect();
    format!("\"{text}\"")
}

/// Counts of relabelled segments per (from, to) class pair, largest first.
/// One line per class whose objects a note joined, split, added or removed, e.g. "bed: 2 joined into 1".
pub fn object_summary(differences: &[ObjectDifference], taxonomy: &Taxonomy) -> Vec<String> {
    let mut classes: Vec<ClassId> = differences.iter().map(difference_class).collect();
    classes.sort();
    classes.dedup();
    classes
        .into_iter()
        .map(|class| {
            let mut parts = Vec::new();
            for difference in differences.iter().filter(|d| difference_class(d) == class) {
                parts.push(match difference {
                    ObjectDifference::Joined { parts, .. } => {
                        format!("{} joined into one", parts.len())
                    }
                    ObjectDifference::Split { into, .. } => {
                        format!("one split into {}", into.len())
                    }
                    ObjectDifference::Added { .. } => "one added".to_string(),
                    ObjectDifference::Removed { .. } => "one removed".to_string(),
                });
            }
            let said = counted_once(parts);
            format!("{}: {}", taxonomy.class_name(class), said.join(", "))
        })
        .collect()
}

/// Lines said once each in first-seen order, a repeated one with its count: "one removed (x2)".
pub fn counted_once(lines: Vec<String>) -> Vec<String> {
    let mut counted: Vec<(String, usize)> = Vec::new();
    for line in lines {
        match counted.iter_mut().find(|(seen, _)| *seen == line) {
            Some(entry) => entry.1 += 1,
            None => counted.push((line, 1)),
        }
    }
    counted
        .into_iter()
        .map(|(line, n)| {
            if n == 1 {
                line
            } else {
                format!("{line} (x{n})")
            }
        })
        .collect()
}

fn relabel_summary(changes: &[Change], taxonomy: &Taxonomy) -> Vec<String> {
    let mut pairs: Vec<(ClassId, ClassId, ChangeStatus, usize, String)> = Vec::new();
    let mut lines: Vec<String> = Vec::new();
    for change in changes {
        let why = change
            .causes
            .iter()
            .map(|cause| cause.gloss.clone())
            .collect::<Vec<_>>()
            .join("; ");
        match change.kind {
            ChangeKind::SegmentRelabelled { from, to, .. } => {
                match pairs
                    .iter_mut()
                    .find(|p| p.0 == from && p.1 == to && p.2 == change.status)
                {
                    Some(pair) => pair.3 += 1,
                    None => pairs.push((from, to, change.status, 1, why)),
                }
            }
            ChangeKind::ObjectAdded { class, .. } => lines.push(format!(
                "{}object added: {} (because: {why})",
                status_prefix(change.status),
                taxonomy.class_name(class)
            )),
            ChangeKind::ObjectRemoved { class, .. } => lines.push(format!(
                "{}object removed: {} (because: {why})",
                status_prefix(change.status),
                taxonomy.class_name(class)
            )),
            ChangeKind::RoomChanged { from, to } => lines.push(format!(
                "{}room: {} -> {} (because: {why})",
                status_prefix(change.status),
                taxonomy.room(from).map(|r| r.name.as_str()).unwrap_or("?"),
                taxonomy.room(to).map(|r| r.name.as_str()).unwrap_or("?"),
            )),
        }
    }
    // The same object line many times ("object removed: person" for six pieces) is said once, counted.
    let mut lines = counted_once(lines);
    pairs.sort_by_key(|pair| std::cmp::Reverse(pair.3));
    for (from, to, status, count, why) in pairs {
        lines.push(format!(
            "{}{count} segment(s) {} -> {} (because: {why})",
            status_prefix(status),
            taxonomy.class_name(from),
            taxonomy.class_name(to)
        ));
    }
    lines
}

fn status_prefix(status: ChangeStatus) -> &'static str {
    match status {
        ChangeStatus::Applied => "",
        ChangeStatus::Pending => "PENDING CONFIRMATION: ",
    }
}

/// The plain-text summary: per note, what was understood, what changed and why, what is unmet, questions
/// with their candidates, and held safety changes (every note lists those still waiting).
pub fn report_text(report: &CorrectionReport, taxonomy: &Taxonomy) -> String {
    let mut text = format!("scene: {}\n", report.prepared.capture.name);
    for (index, turn) in report.turns.iter().enumerate() {
        text.push_str(&format!("\nnote {}: {:?}\n", index + 1, turn.utterance));
        match turn.status {
            Status::NotUnderstood => {
                let reason = turn.message.as_deref().unwrap_or("nothing could be read");
                text.push_str(&format!("  not understood: {reason}\n"));
            }
            Status::Refused => {
                let reason = turn.message.as_deref().unwrap_or("nothing to do");
                text.push_str(&format!("  not done: {reason}\n"));
            }
            Status::Undone | Status::Redone | Status::Rejected => {
                if let Some(message) = &turn.message {
                    text.push_str(&format!("  {message}\n"));
                }
                for line in relabel_summary(&turn.changes, taxonomy) {
                    text.push_str(&format!("  changed back: {line}\n"));
                }
                for line in object_summary(&turn.objects, taxonomy) {
                    text.push_str(&format!("  objects: {line}\n"));
                }
            }
            _ => note_text(&mut text, turn, taxonomy),
        }
        for waiting in turn.waiting.iter().filter(|_| turn.status != Status::Held) {
            text.push_str(&format!(
                "  still held: {waiting:?} changes a person, pet or hazard; say \"yes\" to apply it or \"no\" to drop it (or run with --confirm)\n"
            ));
        }
    }
    if let Some(correction) = &report.correction {
        text.push_str(&format!(
            "\nresult: room {}, {} object(s), energy {:.3}, relative gap {:.4}\n",
            correction.graph.room_name,
            correction.graph.objects.len(),
            correction.graph.energy,
            correction.graph.relative_gap
        ));
    }
    text
}

/// The summary of a note that was solved (applied, held, asked, confirmed or already shown).
fn note_text(text: &mut String, turn: &TurnReport, taxonomy: &Taxonomy) {
    if turn.status == Status::Confirmed {
        if let Some(message) = &turn.message {
            text.push_str(&format!("  {message}\n"));
        }
    }
    if let Some(answered) = turn
        .answers
        .as_ref()
        .filter(|_| turn.status != Status::Confirmed)
    {
        text.push_str(&format!("  answers the question about {answered:?}\n"));
    }
    if turn.understood.is_empty() {
        text.push_str("  understood: nothing to apply\n");
    }
    let said = turn.answers.as_deref().unwrap_or(&turn.utterance);
    for understood in &turn.understood {
        text.push_str(&format!(
            "  understood {}: {} (confidence {:.2})\n",
            quoted_span(said, understood.span),
            understood.gloss,
            understood.confidence
        ));
    }
    for conflict in &turn.conflicts {
        text.push_str(&format!("  conflicts with an earlier note: {conflict}\n"));
    }
    let changes = relabel_summary(&turn.changes, taxonomy);
    let objects = object_summary(&turn.objects, taxonomy);
    if changes.is_empty() && objects.is_empty() {
        text.push_str(match turn.status {
            Status::NothingToChange if turn.unmet.is_empty() && turn.issues.is_empty() => {
                "  changed: nothing; the scene already showed this\n"
            }
            Status::Asked => "  changed: nothing yet\n",
            _ => "  changed: nothing\n",
        });
    }
    for line in changes {
        text.push_str(&format!("  changed: {line}\n"));
    }
    for line in objects {
        text.push_str(&format!("  objects: {line}\n"));
    }
    for unmet in &turn.unmet {
        text.push_str(&format!(
            "  unmet{}: {}\n",
            if unmet.contradictory {
                " (contradictory)"
            } else {
                ""
            },
            unmet.reason
        ));
    }
    for issue in &turn.issues {
        text.push_str(&format!("  could not ground: {issue}\n"));
    }
    match &turn.question {
        Some(question) => text.push_str(&format!("  question: {question}\n")),
        None => {
            for question in &turn.questions {
                text.push_str(&format!("  question: {}\n", question.text));
            }
        }
    }
    for (position, candidate) in turn.candidates.iter().enumerate() {
        text.push_str(&format!(
            "    {}. object {}: {}\n",
            position + 1,
            candidate.object.0,
            candidate.description
        ));
    }
    if turn.status == Status::Held {
        text.push_str(
            "  held: these changes touch a person, pet or hazard and wait for confirmation (say \"yes\", or run with --confirm)\n",
        );
    }
}
