//! A whole conversation on one scene, kept in memory: what the command line runs its notes through.
//!
//! Owns: `Dialogue` (the versions applied so far, the redo stack, the held safety change, the open question
//! and the last answered one) and `Reply`, what one utterance did. A held change survives later turns until
//! it is confirmed or rejected, and every reply lists what is still held. Undo and redo say what changed back.
//! Must not: read files or know about flags; the service keeps the same state in its correction log instead.

use serde::Serialize;

use crate::scenegraph::changes::{Change, ChangeKind, ChangeStatus};

use super::solve::{Correction, CorrectionError};
use super::{
    conversation_checks, correct_turn, decide, hold_reason, question_alongside, read, Answered,
    Command, CorrectionSettings, Decision, Note, OpenQuestion, Reading, TurnInputs,
};
use crate::language::constraint::Focus;

/// What became of one utterance.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    /// The note's change is in force.
    Applied,
    /// The note's change touches a person, pet or hazard and waits for confirmation.
    Held,
    /// The note is ambiguous; a question was asked.
    Asked,
    /// Understood, and the scene already showed it.
    NothingToChange,
    NotUnderstood,
    /// A held change was applied.
    Confirmed,
    /// A held change (or the open question) was dropped.
    Rejected,
    Undone,
    Redone,
    /// A conversation command that could not be carried out (nothing to undo, no held change...).
    Refused,
}

/// One utterance's result.
#[derive(Clone, Debug)]
pub struct Reply {
    pub status: Status,
    /// The note solved this turn (an answer's note is the question's note about the chosen object).
    pub note: Option<Note>,
    /// Contradictions and repeats of earlier notes.
    pub conflicts: Vec<String>,
    /// The scene before this turn.
    pub before: Correction,
    /// What this turn solved: the applied, held (as it would be once confirmed) or asking correction, or
    /// the version an undo or redo returned to.
    pub solved: Option<Correction>,
    /// The changes to report: the solve's, all marked pending when held, or what an undo or redo moved back.
    pub changes: Vec<Change>,
    pub question: Option<OpenQuestion>,
    /// Why the change is held, when it is.
    pub held: Option<String>,
    /// Held changes still waiting after this turn (notes' words), so no hold is forgotten.
    pub waiting: Vec<String>,
    /// Why a note was not understood or a command refused.
    pub message: Option<String>,
}

#[derive(Clone)]
struct Step {
    note: Note,
    correction: Correction,
    /// Set when the step answered a question.
    answered: Option<Answered>,
}

struct Hold {
    note: Note,
    proposed: Correction,
    reason: String,
    /// How many steps were applied when it was proposed (still valid while unchanged).
    base: usize,
}

/// A conversation on one prepared scene.
pub struct Dialogue<'a> {
    inputs: TurnInputs<'a>,
    settings: &'a CorrectionSettings,
    /// Apply person, pet and hazard changes without holding them (`sayso fix --confirm`).
    confirm_all: bool,
    baseline: Correction,
    applied: Vec<Step>,
    undone: Vec<Step>,
    hold: Option<Hold>,
    question: Option<OpenQuestion>,
}

/// Per-segment label changes from one graph to another, each credited to nothing (an undo or redo).
fn moved_back(from: &Correction, to: &Correction) -> Vec<Change> {
    from.graph
        .segment_labels
        .iter()
        .zip(&to.graph.segment_labels)
        .enumerate()
        .filter(|(_, (a, b))| a != b)
        .map(|(segment, (&a, &b))| Change {
            kind: ChangeKind::SegmentRelabelled {
                segment: crate::ids::SegmentId(segment as u32),
                from: a,
                to: b,
            },
            status: ChangeStatus::Applied,
            causes: Vec::new(),
            warning: None,
        })
        .collect()
}

impl<'a> Dialogue<'a> {
    /// A conversation starting from the scene solved with no note.
    pub fn new(
        inputs: TurnInputs<'a>,
        settings: &'a CorrectionSettings,
        confirm_all: bool,
    ) -> Result<Dialogue<'a>, CorrectionError> {
        let baseline = correct_turn(&inputs, None, &[], None, false, settings)?;
        Ok(Dialogue {
            inputs,
            settings,
            confirm_all,
            baseline,
            applied: Vec::new(),
            undone: Vec::new(),
            hold: None,
            question: None,
        })
    }

    /// What the robot believed before any note.
    pub fn baseline(&self) -> &Correction {
        &self.baseline
    }

    /// The scene as it stands.
    pub fn current(&self) -> &Correction {
        self.applied
            .last()
            .map_or(&self.baseline, |step| &step.correction)
    }

    /// The open question, if any.
    pub fn question(&self) -> Option<&OpenQuestion> {
        self.question.as_ref()
    }

    fn waiting(&self) -> Vec<String> {
        self.hold
            .iter()
            .map(|hold| hold.note.text.clone())
            .collect()
    }

    fn reply(&self, status: Status, before: Correction) -> Reply {
        Reply {
            status,
            note: None,
            conflicts: Vec::new(),
            before,
            solved: None,
            changes: Vec::new(),
            question: None,
            held: None,
            waiting: self.waiting(),
            message: None,
        }
    }

    fn refused(&self, message: &str) -> Reply {
        let mut reply = self.reply(Status::Refused, self.current().clone());
        reply.message = Some(message.to_string());
        reply
    }

    /// Works out one utterance with the focus sent along with it.
    pub fn say(&mut self, text: &str, focus: Option<Focus>) -> Result<Reply, CorrectionError> {
        let reading = read(&self.settings.grammar, self.question.as_ref(), text, focus);
        match reading {
            Reading::Command(command) => self.command(command),
            Reading::NotUnderstood { reason } => {
                let mut reply = self.reply(Status::NotUnderstood, self.current().clone());
                reply.message = Some(reason);
                Ok(reply)
            }
            Reading::Note(note) => {
                self.question = None;
                self.note(note, None)
            }
            Reading::Answer { note, answered } => {
                self.question = None;
                self.note(note, Some(answered))
            }
        }
    }

    /// Solves a note on the current scene and decides what becomes of it.
    fn note(&mut self, note: Note, answered: Option<Answered>) -> Result<Reply, CorrectionError> {
        let taxonomy = self.settings.grammar.taxonomy();
        let earlier: Vec<_> = self
            .applied
            .iter()
            .map(|step| step.note.constraints.clone())
            .collect();
        let conflicts = conversation_checks(taxonomy, &earlier, &note.constraints);
        let before = self.current().clone();
        let correction = correct_turn(
            &self.inputs,
            Some(&before),
            &note.constraints,
            note.focus,
            self.confirm_all,
            self.settings,
        )?;
        let first_new = correction
            .constraint_labels
            .len()
            .saturating_sub(note.constraints.len());
        let mut reply = self.reply(Status::Applied, before.clone());
        reply.conflicts = conflicts;
        reply.note = Some(note.clone());
        let alongside =
            question_alongside(&correction, &note.constraints, first_new).map(|index| {
                OpenQuestion::from_solve(
                    &note,
                    &correction.questions[index],
                    first_new,
                    &before.graph,
                )
            });
        reply.question = alongside;
        match decide(
            &correction,
            &note.constraints,
            first_new,
            self.confirm_all,
            taxonomy,
        ) {
            Decision::Ask(index) => {
                let question = OpenQuestion::from_solve(
                    &note,
                    &correction.questions[index],
                    first_new,
                    &before.graph,
                );
                reply.status = Status::Asked;
                reply.question = Some(question.clone());
                reply.solved = Some(correction);
                self.question = Some(question);
            }
            Decision::Hold { classes } => {
                let proposed = correct_turn(
                    &self.inputs,
                    Some(&before),
                    &note.constraints,
                    note.focus,
                    true,
                    self.settings,
                )?;
                let reason = hold_reason(&classes);
                reply.status = Status::Held;
                reply.changes = proposed
                    .changes
                    .iter()
                    .cloned()
                    .map(|mut change| {
                        change.status = ChangeStatus::Pending;
                        change
                    })
                    .collect();
                reply.held = Some(reason.clone());
                reply.solved = Some(proposed.clone());
                self.hold = Some(Hold {
                    note,
                    proposed,
                    reason,
                    base: self.applied.len(),
                });
                reply.waiting = self.waiting();
            }
            Decision::Nothing => {
                reply.status = Status::NothingToChange;
                reply.changes = correction.changes.clone();
                reply.solved = Some(correction);
            }
            Decision::Apply => {
                reply.changes = correction.changes.clone();
                reply.solved = Some(correction.clone());
                self.applied.push(Step {
                    note,
                    correction,
                    answered,
                });
                self.undone.clear();
            }
        }
        Ok(reply)
    }

    fn command(&mut self, command: Command) -> Result<Reply, CorrectionError> {
        let before = self.current().clone();
        match command {
            Command::Undo => {
                let Some(step) = self.applied.pop() else {
                    return Ok(self.refused("there is no change to undo"));
                };
                let mut reply = self.reply(Status::Undone, before);
                reply.changes = moved_back(&step.correction, self.current());
                reply.solved = Some(self.current().clone());
                reply.message = Some(format!("undid \"{}\"", step.note.text));
                reply.note = Some(step.note.clone());
                self.undone.push(step);
                Ok(reply)
            }
            Command::Redo => {
                let Some(step) = self.undone.pop() else {
                    return Ok(self.refused("there is no undone change to redo"));
                };
                let mut reply = self.reply(Status::Redone, before);
                reply.changes = moved_back(self.current(), &step.correction);
                reply.solved = Some(step.correction.clone());
                reply.message = Some(format!("redid \"{}\"", step.note.text));
                reply.note = Some(step.note.clone());
                self.applied.push(step);
                Ok(reply)
            }
            Command::Confirm => {
                let Some(hold) = self.hold.take() else {
                    return Ok(self.refused("no change is waiting for confirmation"));
                };
                // The scene moved on since the hold was proposed: solve its note again on what is shown now.
                let correction = if hold.base == self.applied.len() {
                    hold.proposed
                } else {
                    correct_turn(
                        &self.inputs,
                        Some(&before),
                        &hold.note.constraints,
                        hold.note.focus,
                        true,
                        self.settings,
                    )?
                };
                let mut reply = self.reply(Status::Confirmed, before);
                reply.changes = correction.changes.clone();
                reply.solved = Some(correction.clone());
                reply.message = Some(format!("confirmed \"{}\"", hold.note.text));
                reply.note = Some(hold.note.clone());
                self.applied.push(Step {
                    note: hold.note,
                    correction,
                    answered: None,
                });
                self.undone.clear();
                reply.waiting = self.waiting();
                Ok(reply)
            }
            Command::Reject => {
                if let Some(hold) = self.hold.take() {
                    let mut reply = self.reply(Status::Rejected, before);
                    reply.message =
                        Some(format!("dropped \"{}\" ({})", hold.note.text, hold.reason));
                    reply.note = Some(hold.note);
                    return Ok(reply);
                }
                if let Some(question) = self.question.take() {
                    let mut reply = self.reply(Status::Rejected, before);
                    reply.message = Some(format!("dropped the question \"{}\"", question.text));
                    reply.note = Some(question.note);
                    return Ok(reply);
                }
                Ok(self.refused("nothing is waiting for confirmation or an answer"))
            }
            Command::OtherOne => self.other_one(),
        }
    }

    /// "No, the other one": take back the last answer's change and apply the note to the other candidate
    /// (with two), or ask again among the rest.
    fn other_one(&mut self) -> Result<Reply, CorrectionError> {
        let answered = match self.applied.last() {
            Some(Step {
                answered: Some(answered),
                ..
            }) => answered.clone(),
            _ => {
                return Ok(self.refused(
                    "\"the other one\" follows an answer to a question, and the last change answered none",
                ))
            }
        };
        self.applied.pop();
        let rest = answered.rest();
        if rest.candidates.len() == 1 {
            let note = rest.answered_with(rest.candidates[0].object);
            let mut reply = self.note(
                note,
                Some(Answered {
                    question: rest,
                    chosen: 0,
                }),
            )?;
            reply.message = Some("took back the last answer and chose the other one".to_string());
            return Ok(reply);
        }
        let before = self.current().clone();
        let mut reply = self.reply(Status::Asked, before);
        reply.message = Some("took back the last answer".to_string());
        reply.question = Some(rest.clone());
        self.question = Some(rest);
        Ok(reply)
    }
}
