//! The conversation turn: what `sayso fix`, `sayso field-notes` and the service all do with one utterance.
//!
//! Owns: reading an utterance in its conversation (`read`: a note to solve, an answer to the open question,
//! or a conversation command from `words`), the conversation checks (contradictions and repeats against
//! what was said before), the solve of a turn (`solve`, with `CorrectionSettings`, `TurnInputs` and
//! `correct_turn`), and the decision on a solved note (`decide`: ask, hold for confirmation, nothing to
//! change, or apply). `dialogue::Dialogue` keeps a whole conversation in memory for the command line.
//! Must not: store anything that must survive the process (the service's coordinator and its correction log
//! do), talk HTTP, or read files.

pub mod answer;
pub mod dialogue;
mod region;
pub mod solve;
pub mod words;

use serde::{Deserialize, Serialize};

use crate::energy::build::{EnergyWeights, RoomClassPrior};
use crate::energy::EnergyError;
use crate::grounding::{ClarifyingQuestion, GroundingContext, KnownObject};
use crate::hypotheses::{Detection, ProposalOptions};
use crate::ids::{ClassId, ObjectId};
use crate::language::constraint::{Constraint, ConstraintKind, Deixis, Focus};
use crate::language::error::GrammarError;
use crate::language::{Conversation, Grammar};
use crate::scene::{BoundingBox, Scene};
use crate::scenegraph::changes::{Change, ChangeKind, ChangeStatus};
use crate::scenegraph::instances::{InstanceCuts, InstanceCutsError};
use crate::scenegraph::SceneGraph;
use crate::solver::joint::JointOptions;
use crate::taxonomy::Taxonomy;
use crate::unaries::Unaries;
use solve::{correct, Correction, CorrectionError, SolveRequest};
pub use words::Command;

/// What can stop a turn.
#[derive(Debug, thiserror::Error)]
pub enum TurnError {
    #[error("grammar: {0}")]
    Grammar(#[from] GrammarError),
    #[error("room prior: {0}")]
    Prior(#[from] EnergyError),
    #[error("{0}")]
    InstanceCuts(#[from] InstanceCutsError),
    #[error("correcting: {0}")]
    Correction(#[from] CorrectionError),
}

/// The fixed settings of a correction run.
pub struct CorrectionSettings {
    pub grammar: Grammar,
    pub prior: RoomClassPrior,
    pub weights: EnergyWeights,
    pub proposals: ProposalOptions,
    pub options: JointOptions,
    pub instance_cuts: InstanceCuts,
}

impl CorrectionSettings {
    /// The built-in grammar, room prior, default weights and instance cuts.
    pub fn embedded() -> Result<CorrectionSettings, TurnError> {
        let grammar = Grammar::embedded()?;
        let instance_cuts = InstanceCuts::embedded(grammar.taxonomy())?;
        Ok(CorrectionSettings {
            grammar,
            instance_cuts,
            prior: RoomClassPrior::embedded()?,
            weights: EnergyWeights::embedded()?,
            proposals: ProposalOptions::default(),
            options: JointOptions::default(),
        })
    }
}

/// The parts of a scene one turn is solved on.
#[derive(Clone, Copy)]
pub struct TurnInputs<'a> {
    pub scene: &'a Scene,
    pub unaries: &'a Unaries,
    pub detections: &'a [Detection],
}

/// The objects of a scene graph as grounding knows them: ids, classes and segments as shown.
pub fn known_objects(graph: &SceneGraph) -> Vec<KnownObject> {
    graph
        .objects
        .iter()
        .map(|object| KnownObject {
            id: object.id,
            hypothesis: object.hypothesis,
            class: Some(object.class),
            members: object.members.clone(),
        })
        .collect()
}

/// Solves one turn: grounds `constraints` against the previous turn's objects (or the scene solved with no
/// constraints when there is none) and re-solves with every constraint in force.
pub fn correct_turn(
    inputs: &TurnInputs<'_>,
    previous: Option<&Correction>,
    constraints: &[Constraint],
    focus: Option<Focus>,
    confirm_safety: bool,
    settings: &CorrectionSettings,
) -> Result<Correction, CorrectionError> {
    let context = GroundingContext {
        focus,
        previous: previous.and_then(|p| p.last_referent.clone()),
        objects: previous
            .map(|p| known_objects(&p.graph))
            .unwrap_or_default(),
    };
    correct(&SolveRequest {
        scene: inputs.scene,
        unaries: inputs.unaries,
        taxonomy: settings.grammar.taxonomy(),
        detections: inputs.detections,
        previous,
        constraints,
        context: &context,
        confirm_safety,
        prior: &settings.prior,
        weights: &settings.weights,
        proposals: &settings.proposals,
        options: &settings.options,
        instance_cuts: &settings.instance_cuts,
    })
}

/// One note: its words, the focus sent with it, and the constraints read from it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Note {
    pub text: String,
    pub focus: Option<Focus>,
    pub constraints: Vec<Constraint>,
}

/// One candidate of a question: a scene-graph object, how the question described it, and where it is.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Candidate {
    pub object: ObjectId,
    pub class: Option<ClassId>,
    pub description: String,
    pub bbox: Option<BoundingBox>,
}

/// A question waiting for its answer, with the note it is about.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct OpenQuestion {
    pub note: Note,
    /// Index (in `note.constraints`) of the constraint the question is about.
    pub constraint: usize,
    pub text: String,
    /// In the order the question names them; empty when the answer is a new note (point and say it again).
    pub candidates: Vec<Candidate>,
}

impl OpenQuestion {
    /// The question a solve asked about a note, with its candidates placed on the graph the operator sees
    /// (`first_new`: the index of the note's first constraint among those in force).
    pub fn from_solve(
        note: &Note,
        question: &ClarifyingQuestion,
        first_new: usize,
        shown: &SceneGraph,
    ) -> OpenQuestion {
        let candidates = question
            .objects
            .iter()
            .zip(&question.descriptions)
            .map(|(&object, description)| {
                let on_graph = shown.objects.iter().find(|o| o.id == object);
                Candidate {
                    object,
                    class: on_graph.map(|o| o.class),
                    description: description.clone(),
                    bbox: on_graph.map(|o| o.bbox),
                }
            })
            .collect();
        OpenQuestion {
            note: note.clone(),
            constraint: question.constraint.saturating_sub(first_new),
            text: question.text.clone(),
            candidates,
        }
    }

    /// The note with the question's referent replaced by the chosen candidate, as if pointed at.
    pub fn answered_with(&self, chosen: ObjectId) -> Note {
        let mut note = self.note.clone();
        if let Some(constraint) = note.constraints.get_mut(self.constraint) {
            if let ConstraintKind::Relabel { target, .. }
            | ConstraintKind::Attribute { target, .. } = &mut constraint.kind
            {
                target.deixis = Some(Deixis::Focus);
            }
        }
        note.focus = Some(Focus::Object { id: chosen });
        note
    }
}

/// A question that was answered, for "no, the other one".
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Answered {
    pub question: OpenQuestion,
    /// Index into the question's candidates.
    pub chosen: usize,
}

impl Answered {
    /// The question again without the candidate this answer chose ("no, the other one").
    pub fn rest(&self) -> OpenQuestion {
        let mut rest = self.question.clone();
        if self.chosen < rest.candidates.len() {
            rest.candidates.remove(self.chosen);
        }
        rest.text = format!(
            "which one then: {}?",
            rest.candidates
                .iter()
                .map(|c| c.description.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        );
        rest
    }
}

/// What an utterance is in its conversation.
#[derive(Clone, Debug, PartialEq)]
pub enum Reading {
    /// A correction to solve.
    Note(Note),
    /// The open question answered: the question's note, now about the chosen object.
    Answer { note: Note, answered: Answered },
    /// A conversation command.
    Command(Command),
    /// Nothing usable: why.
    NotUnderstood { reason: String },
}

/// Reads an utterance given the question the conversation waits on, if any. A conversation command is
/// recognised first; then an answer naming one of the question's candidates; then a note.
pub fn read(
    grammar: &Grammar,
    question: Option<&OpenQuestion>,
    text: &str,
    focus: Option<Focus>,
) -> Reading {
    if let Some(command) = words::command(text) {
        return Reading::Command(command);
    }
    if let Some(question) = question.filter(|q| !q.candidates.is_empty()) {
        let descriptions: Vec<String> = question
            .candidates
            .iter()
            .map(|c| c.description.clone())
            .collect();
        if let Some(choice) = words::choice(text, &descriptions) {
            return match answer::pick(&choice, &question.candidates, focus) {
                Ok(chosen) => Reading::Answer {
                    note: question.answered_with(question.candidates[chosen].object),
                    answered: Answered {
                        question: question.clone(),
                        chosen,
                    },
                },
                Err(reason) => Reading::NotUnderstood { reason },
            };
        }
    }
    match grammar.parse(text, focus) {
        Ok(parse) if !parse.constraints.is_empty() => Reading::Note(Note {
            text: text.to_string(),
            focus,
            constraints: parse.constraints,
        }),
        Ok(_) => Reading::NotUnderstood {
            reason: "no correction could be read from the sentence".to_string(),
        },
        Err(error) => Reading::NotUnderstood {
            reason: error.to_string(),
        },
    }
}

/// Contradictions and repeats of a note against the notes before it, in words.
pub fn conversation_checks(
    taxonomy: &Taxonomy,
    earlier: &[Vec<Constraint>],
    note: &[Constraint],
) -> Vec<String> {
    let Ok(mut conversation) = Conversation::new(taxonomy.clone()) else {
        return Vec::new();
    };
    for constraints in earlier {
        conversation.add_constraints(constraints);
    }
    conversation
        .add_constraints(note)
        .conflicts
        .into_iter()
        .map(|conflict| conflict.message)
        .collect()
}

/// What becomes of a solved note.
#[derive(Clone, Debug, PartialEq)]
pub enum Decision {
    /// Ask this question (an index into the correction's questions) before changing anything: which object
    /// a relabel or attribute means, or what a bare "that" or "it" stands for.
    Ask(usize),
    /// The change touches these safety classes (person, pet, hazard): hold it until confirmed.
    Hold { classes: Vec<String> },
    /// Understood, and the scene already shows it.
    Nothing,
    /// Apply it.
    Apply,
}

/// The safety classes a list of changes holds back, by name, sorted.
pub fn held_classes(changes: &[Change], taxonomy: &Taxonomy) -> Vec<String> {
    let mut names: Vec<String> = changes
        .iter()
        .filter(|c| c.status == ChangeStatus::Pending)
        .filter_map(|c| match c.kind {
            ChangeKind::SegmentRelabelled { from, .. } => Some(from),
            ChangeKind::ObjectRemoved { class, .. } => Some(class),
            _ => None,
        })
        .filter(|&class| taxonomy.is_safety_critical(class))
        .map(|class| taxonomy.class_name(class).to_string())
        .collect();
    names.sort();
    names.dedup();
    names
}

/// Whether a question about the note's constraint at `index` (`constraint` among those in force) must be
/// answered before anything changes. A count or presence the graph still cannot show is applied as far as it
/// goes, and its question (which of the objects shown are not of the class) is asked alongside; so is a
/// question asking where a thing is that nothing in the picture could stand for (the rest of the note stands).
fn blocks(correction: &Correction, note: &[Constraint], index: usize, constraint: usize) -> bool {
    let counted = matches!(
        note.get(index).map(|c| &c.kind),
        Some(
            ConstraintKind::Count { .. }
                | ConstraintKind::Present { .. }
                | ConstraintKind::Absent { .. }
        )
    );
    let asks_where = correction
        .questions
        .iter()
        .any(|q| q.constraint == constraint && q.where_is);
    !counted && !asks_where
}

/// The question asked alongside an applied note, if any (an index into the correction's questions).
pub fn question_alongside(
    correction: &Correction,
    note: &[Constraint],
    first_new: usize,
) -> Option<usize> {
    correction.questions.iter().position(|q| {
        q.constraint >= first_new
            && !blocks(correction, note, q.constraint - first_new, q.constraint)
    })
}

/// Decides on a solved note (`note`: its constraints; `first_new`: the index of its first constraint among
/// those in force): a question that must be answered first, then a safety hold, then whether anything
/// changed. `confirmed` notes are never held.
pub fn decide(
    correction: &Correction,
    note: &[Constraint],
    first_new: usize,
    confirmed: bool,
    taxonomy: &Taxonomy,
) -> Decision {
    if let Some(index) = correction.questions.iter().position(|q| {
        q.constraint >= first_new
            && blocks(correction, note, q.constraint - first_new, q.constraint)
    }) {
        return Decision::Ask(index);
    }
    let classes = held_classes(&correction.changes, taxonomy);
    if !classes.is_empty() && !confirmed {
        return Decision::Hold { classes };
    }
    if correction.changes.is_empty() {
        Decision::Nothing
    } else {
        Decision::Apply
    }
}

/// The reason a hold gives.
pub fn hold_reason(classes: &[String]) -> String {
    format!(
        "this removes or renames what the robot shows as {} (people, pets and hazards wait for confirmation); say \"yes\" to apply it or \"no\" to drop it",
        classes.join(", ")
    )
}
