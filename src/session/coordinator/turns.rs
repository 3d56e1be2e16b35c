//! Conversation turns: utterances (a note, or a command said in words), and the history they leave.
//!
//! Owns: the turn rules. An utterance is worked out under its conversation's and scene's locks and answered
//! only after its turn is committed. A safety change waits as the conversation's one pending change;
//! confirming, rejecting, undo and redo are `super::commands`'.
//! Must not: talk HTTP; answers are wire values or `SessionError`s.

use crate::correction_log::{ConversationKey, NewTurn, TurnEffect, TurnMark, TurnRow, VersionKey};
use crate::language::constraint::{Constraint, Focus};
use crate::taxonomy::Taxonomy;
use crate::turn::words::{self, Command};
use crate::turn::{answer, conversation_checks, Answered, Note, OpenQuestion};

use super::convert::{
    candidate_out, change_out, constraint_out, focus_from_wire, focus_to_wire, unmet_out,
};
use super::{
    encode_state, lock, log_error, ConversationSlot, Coordinator, PendingSlot, SceneSlot,
    UTTERANCE_CHARACTER_LIMIT,
};
use crate::corrector::{
    CorrectionOutcome, CorrectionRequest, CorrectorError, Lineage, PastTurn, SceneHandle, Verdict,
};
use crate::error::SessionError;
use crate::wire::{FocusIn, HistoryOut, PendingOut, TurnOut, TurnStatus, UtteranceReply};

/// The answer to a conversation command said in words: what was done, and the change still held.
fn command_reply(
    turn_id: i64,
    status: TurnStatus,
    scene_version: i64,
    waiting: Option<PendingOut>,
    said: &str,
) -> UtteranceReply {
    UtteranceReply {
        turn_id,
        status,
        constraints: Vec::new(),
        changes: Vec::new(),
        unmet: Vec::new(),
        question: None,
        candidates: Vec::new(),
        pending: None,
        waiting,
        conflicts: Vec::new(),
        reason: Some(said.to_string()),
        scene_version,
    }
}

/// The change a conversation holds for confirmation, as the wire shows it.
pub(super) fn waiting_out(
    conversation: &ConversationSlot,
    taxonomy: &Taxonomy,
) -> Option<PendingOut> {
    conversation.pending.as_ref().map(|pending| PendingOut {
        reason: format!("\"{}\": {}", pending.utterance, pending.reason),
        changes: pending
            .changes
            .iter()
            .map(|change| change_out(change, taxonomy))
            .collect(),
    })
}

pub(super) fn status_text(status: TurnStatus) -> &'static str {
    match status {
        TurnStatus::Applied => "applied",
        TurnStatus::NeedsConfirmation => "needs_confirmation",
        TurnStatus::NeedsClarification => "needs_clarification",
        TurnStatus::NotUnderstood => "not_understood",
        TurnStatus::NothingToChange => "nothing_to_change",
        TurnStatus::Confirmed => "confirmed",
        TurnStatus::Rejected => "rejected",
        TurnStatus::Undone => "undone",
        TurnStatus::Redone => "redone",
    }
}

/// A turn that says no constraints, no focus and no answer, with an empty result: a command's turn, or an
/// utterance's that only drops or re-asks a question (given its own result).
pub(super) fn plain_turn<'a>(
    conversation: ConversationKey,
    kind: &'a str,
    text: &'a str,
    status: TurnStatus,
    operator: &'a str,
    effect: TurnEffect,
) -> NewTurn<'a> {
    NewTurn {
        conversation,
        kind,
        text,
        focus_json: None,
        status: status_text(status),
        constraints_json: "[]",
        result_json: "{}",
        answer_json: None,
        operator,
        effect,
    }
}

fn status_from_text(text: &str) -> TurnStatus {
    match text {
        "applied" => TurnStatus::Applied,
        "needs_confirmation" => TurnStatus::NeedsConfirmation,
        "needs_clarification" => TurnStatus::NeedsClarification,
        "nothing_to_change" => TurnStatus::NothingToChange,
        "confirmed" => TurnStatus::Confirmed,
        "rejected" => TurnStatus::Rejected,
        "undone" => TurnStatus::Undone,
        "redone" => TurnStatus::Redone,
        _ => TurnStatus::NotUnderstood,
    }
}

/// The question a conversation waits on after its logged turns, kept as a live conversation keeps it:
/// asked by a note that needed a clarification, kept through notes not understood, undo, redo and
/// confirmations, dropped by a note that applied, held or changed nothing, and by a "no" that dropped it
/// (the one note logged `rejected`; a held change rejected is a `reject` turn).
pub(crate) fn question_after(turns: &[TurnRow]) -> Option<OpenQuestion> {
    let mut question = None;
    for turn in turns.iter().filter(|turn| turn.kind == "utterance") {
        match turn.status.as_str() {
            "needs_clarification" => {
                question = serde_json::from_str::<serde_json::Value>(&turn.result_json)
                    .ok()
                    .and_then(|result| {
                        serde_json::from_value(result.get("open_question")?.clone()).ok()
                    });
            }
            "applied" | "needs_confirmation" | "nothing_to_change" | "rejected" => question = None,
            _ => {}
        }
    }
    question
}

/// The last answer to a question a conversation's logged turns made, with the version it made, kept as a
/// live conversation keeps it: set (or cleared) by every note that applied a change, cleared by an undo.
/// "No, the other one" uses it only while that version is still the conversation's latest change.
pub(crate) fn answer_after(turns: &[TurnRow]) -> Option<(VersionKey, Answered)> {
    let mut answered = None;
    for turn in turns {
        match (turn.kind.as_str(), turn.status.as_str()) {
            ("utterance", "applied") => {
                answered = turn.scene_version.zip(
                    turn.answer_json
                        .as_deref()
                        .and_then(|text| serde_json::from_str::<Answered>(text).ok()),
                );
            }
            ("undo", _) => answered = None,
            _ => {}
        }
    }
    answered
}

/// Checks an utterance's text before any work is done on it.
pub fn check_utterance_text(text: &str) -> Result<(), SessionError> {
    if text.trim().is_empty() {
        return Err(SessionError::unusable(
            "empty_utterance",
            "text is empty; say what is wrong, e.g. \"that's a towel, not a cat\"",
        ));
    }
    let characters = text.chars().count();
    if characters > UTTERANCE_CHARACTER_LIMIT {
        return Err(SessionError::unusable(
            "utterance_too_long",
            format!(
                "text is {characters} characters; send at most {UTTERANCE_CHARACTER_LIMIT}, one correction at a time"
            ),
        ));
    }
    Ok(())
}

impl Coordinator {
    /// Works out one utterance, commits its turn, and answers.
    pub fn utterance(
        &self,
        conversation: ConversationKey,
        operator: &str,
        text: &str,
        focus: Option<FocusIn>,
    ) -> Result<UtteranceReply, SessionError> {
        check_utterance_text(text)?;
        if let Some(command) = words::command(text) {
            return self.spoken(conversation, operator, text, command);
        }
        self.with_turn_locks(conversation, |conversation_state, scene| {
            self.note(
                conversation,
                operator,
                text,
                focus,
                conversation_state,
                scene,
            )
        })
    }

    /// A note (an utterance that is no command), under its conversation's and scene's locks.
    fn note(
        &self,
        conversation: ConversationKey,
        operator: &str,
        text: &str,
        focus: Option<FocusIn>,
        conversation_state: &mut ConversationSlot,
        scene: &mut SceneSlot,
    ) -> Result<UtteranceReply, SessionError> {
        if let Some(FocusIn::Pixel { x, y }) = focus {
            if x >= scene.input.image.width || y >= scene.input.image.height {
                return Err(SessionError::unusable(
                    "focus_outside_image",
                    format!(
                        "focus pixel ({x}, {y}) is outside the {}x{} image",
                        scene.input.image.width, scene.input.image.height
                    ),
                ));
            }
        }
        if let Some(FocusIn::Object { object_id }) = focus {
            if !scene
                .state
                .summary
                .objects
                .iter()
                .any(|object| object.id.0 == object_id)
            {
                return Err(SessionError::unusable(
                    "unknown_object",
                    format!("focus object {object_id} is not in the current scene graph; read GET /v1/scenes/{{id}} first"),
                ));
            }
        }
        let focus_internal = focus.map(focus_from_wire);
        let head = scene.head;
        // An answer to the open question solves the question's note about the chosen object.
        let mut answered: Option<Answered> = None;
        let mut note: Option<Note> = None;
        let mut refusal: Option<String> = None;
        if let Some(question) = conversation_state
            .question
            .as_ref()
            .filter(|q| !q.candidates.is_empty())
        {
            let descriptions: Vec<String> = question
                .candidates
                .iter()
                .map(|c| c.description.clone())
                .collect();
            if let Some(choice) = words::choice(text, &descriptions) {
                match answer::pick(&choice, &question.candidates, focus_internal) {
                    Ok(chosen) => {
                        note = Some(question.answered_with(question.candidates[chosen].object));
                        answered = Some(Answered {
                            question: question.clone(),
                            chosen,
                        });
                    }
                    Err(reason) => refusal = Some(reason),
                }
            }
        }
        let solve_focus = note.as_ref().map_or(focus_internal, |note| note.focus);
        let read_lineage = || self.lineage(head);
        let outcome = match refusal {
            Some(reason) => CorrectionOutcome {
                constraints: Vec::new(),
                changes: Vec::new(),
                unmet: Vec::new(),
                solver_gap: None,
                question: None,
                verdict: Verdict::NotUnderstood { reason },
            },
            None => self
                .corrector
                .apply(&CorrectionRequest {
                    scene: SceneHandle(conversation_state.scene.0),
                    input: &scene.input,
                    state: &scene.state,
                    lineage: Lineage(&read_lineage),
                    history: &conversation_state.history,
                    utterance: note.as_ref().map_or(text, |note| note.text.as_str()),
                    focus: solve_focus,
                    note: note.as_ref().map(|note| note.constraints.as_slice()),
                    confirmed: false,
                })
                .map_err(|error| match error {
                    CorrectorError::BadInput { field, message } => {
                        SessionError::unusable("bad_utterance", format!("{field}: {message}"))
                    }
                    internal => SessionError::internal(internal),
                })?,
        };
        let earlier: Vec<Vec<Constraint>> = conversation_state
            .history
            .iter()
            .map(|turn| turn.constraints.clone())
            .collect();
        let conflicts =
            conversation_checks(self.corrector.taxonomy(), &earlier, &outcome.constraints);
        // One held change at a time: a second waits until the first is confirmed or rejected.
        let second_hold = matches!(outcome.verdict, Verdict::NeedsConfirmation { .. })
            && conversation_state.pending.is_some();
        if let Some(gap) = outcome.solver_gap {
            self.counters.record_solver_gap(gap);
        }
        let taxonomy = self.corrector.taxonomy();
        let constraints_json =
            serde_json::to_string(&outcome.constraints).map_err(SessionError::internal)?;
        let changes_out: Vec<_> = outcome
            .changes
            .iter()
            .map(|change| change_out(change, taxonomy))
            .collect();
        let focus_json = match solve_focus {
            Some(focus) => Some(serde_json::to_string(&focus).map_err(SessionError::internal)?),
            None => None,
        };
        let (status, effect, question, reason, pending_out) = match &outcome.verdict {
            Verdict::NeedsConfirmation { .. } if second_hold => (
                TurnStatus::NeedsConfirmation,
                TurnEffect::None,
                None,
                Some(format!(
                    "a change is already held for confirmation ({}); confirm or reject it first, \
                     then say this again",
                    conversation_state
                        .pending
                        .as_ref()
                        .map_or("", |pending| pending.utterance.as_str())
                )),
                None,
            ),
            Verdict::Applied(state) => (
                TurnStatus::Applied,
                TurnEffect::NewVersion {
                    base: head,
                    state: encode_state(state)?,
                    utterance: text.to_string(),
                    constraints_json: constraints_json.clone(),
                },
                None,
                None,
                None,
            ),
            Verdict::NeedsConfirmation { proposed, reason } => (
                TurnStatus::NeedsConfirmation,
                TurnEffect::Pending {
                    base: head,
                    state: encode_state(proposed)?,
                    reason: reason.clone(),
                    changes_json: serde_json::to_string(&outcome.changes)
                        .map_err(SessionError::internal)?,
                },
                None,
                None,
                Some(PendingOut {
                    reason: reason.clone(),
                    changes: changes_out.clone(),
                }),
            ),
            Verdict::NeedsClarification { question } => (
                TurnStatus::NeedsClarification,
                TurnEffect::None,
                Some(question.text.clone()),
                None,
                None,
            ),
            Verdict::NotUnderstood { reason } => (
                TurnStatus::NotUnderstood,
                TurnEffect::None,
                None,
                Some(reason.clone()),
                None,
            ),
            Verdict::NothingToChange => (
                TurnStatus::NothingToChange,
                TurnEffect::None,
                None,
                None,
                None,
            ),
        };
        let open_question = match &outcome.verdict {
            Verdict::NeedsClarification { question } => Some(question.clone()),
            _ => None,
        };
        let result_json = serde_json::json!({
            "changes": changes_out,
            "unmet": outcome.unmet,
            "question": question,
            "open_question": open_question,
            "conflicts": conflicts,
            "reason": reason,
            "solver_gap": outcome.solver_gap,
        })
        .to_string();
        let makes_version = matches!(outcome.verdict, Verdict::Applied(_));
        // What "no, the other one" needs after this turn, kept with it so any replica can read it back.
        let answer_json = match (&answered, makes_version) {
            (Some(answered), true) => {
                Some(serde_json::to_string(answered).map_err(SessionError::internal)?)
            }
            _ => None,
        };
        let redo_after: Vec<VersionKey> = if makes_version {
            Vec::new()
        } else {
            conversation_state.redo.clone()
        };
        let (turn_key, new_version) = self.commit_turn(
            &mut conversation_state.mark,
            &NewTurn {
                conversation,
                kind: "utterance",
                text,
                focus_json: focus_json.as_deref(),
                status: status_text(status),
                constraints_json: &constraints_json,
                result_json: &result_json,
                answer_json: answer_json.as_deref(),
                operator,
                effect,
            },
            Some((&conversation_state.applied, &redo_after)),
        )?;
        // Committed: now the memory follows the log.
        conversation_state.history.push(PastTurn {
            utterance: text.to_string(),
            focus: solve_focus,
            constraints: outcome.constraints.clone(),
        });
        // A question asked alongside an applied change is shown with it (answered by a new note).
        let alongside = outcome.question.clone();
        let question = question.or_else(|| alongside.as_ref().map(|q| q.text.clone()));
        let mut candidates: Vec<_> = alongside
            .iter()
            .flat_map(|q| q.candidates.iter())
            .map(|candidate| candidate_out(candidate, taxonomy))
            .collect();
        match outcome.verdict {
            Verdict::Applied(state) => {
                if let Some(version) = new_version {
                    scene.head = version;
                    scene.state = state;
                    conversation_state.applied.push(version);
                    conversation_state.redo.clear();
                    // A held change stays held: only a confirmation or a rejection ends it.
                    conversation_state.answered = answered.map(|answered| (version, answered));
                }
                conversation_state.question = None;
            }
            Verdict::NeedsConfirmation { .. } if second_hold => {}
            Verdict::NeedsConfirmation { proposed, reason } => {
                conversation_state.pending = Some(PendingSlot {
                    base: head,
                    state: proposed,
                    reason,
                    changes: outcome.changes.clone(),
                    utterance: text.to_string(),
                    constraints: outcome.constraints.clone(),
                    focus: solve_focus,
                });
                conversation_state.question = None;
            }
            Verdict::NeedsClarification { question } => {
                candidates = question
                    .candidates
                    .iter()
                    .map(|candidate| candidate_out(candidate, taxonomy))
                    .collect();
                conversation_state.question = Some(question);
            }
            Verdict::NothingToChange => conversation_state.question = None,
            Verdict::NotUnderstood { .. } => {}
        }
        Ok(UtteranceReply {
            turn_id: turn_key.0,
            status,
            constraints: outcome.constraints.iter().map(constraint_out).collect(),
            changes: changes_out,
            unmet: outcome.unmet.iter().map(unmet_out).collect(),
            question,
            candidates,
            pending: pending_out,
            waiting: waiting_out(conversation_state, taxonomy),
            conflicts,
            reason,
            scene_version: scene.head.0,
        })
    }

    /// A conversation command said in words ("undo", "yes", "no", "no, the other one"): done as its
    /// route would do it, answered in the utterance's shape.
    fn spoken(
        &self,
        conversation: ConversationKey,
        operator: &str,
        text: &str,
        command: Command,
    ) -> Result<UtteranceReply, SessionError> {
        let turn = match command {
            Command::Undo => self.undo(conversation, operator)?,
            Command::Redo => self.redo(conversation, operator)?,
            Command::Confirm => self.confirm(conversation, operator)?,
            Command::Reject => {
                let has_pending = {
                    let slot = self.conversation_slot(conversation)?;
                    let state = lock(&slot);
                    state.pending.is_some()
                };
                if has_pending {
                    self.reject(conversation, operator)?
                } else {
                    return self.drop_question(conversation, operator, text);
                }
            }
            Command::OtherOne => return self.other_one(conversation, operator, text),
        };
        let slot = self.conversation_slot(conversation)?;
        let state = lock(&slot);
        let said = match turn.status {
            TurnStatus::Undone => "took back the conversation's last change",
            TurnStatus::Redone => "put back the change taken back last",
            TurnStatus::Confirmed => "applied the held change",
            TurnStatus::Rejected => "dropped the held change",
            _ => "done",
        };
        Ok(UtteranceReply {
            changes: turn.changes,
            ..command_reply(
                turn.turn_id,
                turn.status,
                turn.scene_version,
                waiting_out(&state, self.corrector.taxonomy()),
                said,
            )
        })
    }

    /// Logs a turn that changes nothing in the log's versions (a dropped question, a re-asked one).
    fn quiet_turn(
        &self,
        conversation: ConversationKey,
        operator: &str,
        text: &str,
        status: TurnStatus,
        result_json: &str,
        mark: &mut TurnMark,
    ) -> Result<i64, SessionError> {
        let (turn_key, _) = self.commit_turn(
            mark,
            &NewTurn {
                result_json,
                ..plain_turn(
                    conversation,
                    "utterance",
                    text,
                    status,
                    operator,
                    TurnEffect::None,
                )
            },
            None,
        )?;
        Ok(turn_key.0)
    }

    /// "No" with no held change: drops the open question.
    fn drop_question(
        &self,
        conversation: ConversationKey,
        operator: &str,
        text: &str,
    ) -> Result<UtteranceReply, SessionError> {
        let slot = self.conversation_slot(conversation)?;
        let mut state = lock(&slot);
        let Some(question) = state.question.take() else {
            return Err(SessionError::conflict(
                "nothing_waiting",
                "nothing waits for a confirmation or an answer in this conversation",
            ));
        };
        let scene_version = {
            let scene_slot = self.scene_slot(state.scene)?;
            let scene = lock(&scene_slot);
            scene.head.0
        };
        let turn_id = self.quiet_turn(
            conversation,
            operator,
            text,
            TurnStatus::Rejected,
            "{}",
            &mut state.mark,
        )?;
        Ok(command_reply(
            turn_id,
            TurnStatus::Rejected,
            scene_version,
            waiting_out(&state, self.corrector.taxonomy()),
            &format!("dropped the question \"{}\"", question.text),
        ))
    }

    /// "No, the other one": takes back the change the last answer made and applies the question's note to
    /// the other candidate (with two), or asks again among the rest.
    fn other_one(
        &self,
        conversation: ConversationKey,
        operator: &str,
        text: &str,
    ) -> Result<UtteranceReply, SessionError> {
        let answered = {
            let slot = self.conversation_slot(conversation)?;
            let state = lock(&slot);
            match &state.answered {
                Some((version, answered)) if state.applied.last() == Some(version) => {
                    answered.clone()
                }
                _ => return Err(SessionError::conflict(
                    "no_answer_to_change",
                    "\"the other one\" follows an answer to a question, and this conversation's \
                         last change answered none",
                )),
            }
        };
        self.undo(conversation, operator)?;
        let rest = answered.rest();
        let only = (rest.candidates.len() == 1).then(|| rest.candidates[0].object);
        {
            let slot = self.conversation_slot(conversation)?;
            let mut state = lock(&slot);
            state.question = Some(rest.clone());
        }
        if let Some(object) = only {
            // The one left: answered as if named.
            return self.utterance(
                conversation,
                operator,
                &format!("object {}", object.0),
                None,
            );
        }
        let slot = self.conversation_slot(conversation)?;
        let mut state = lock(&slot);
        let scene_version = {
            let scene_slot = self.scene_slot(state.scene)?;
            let scene = lock(&scene_slot);
            scene.head.0
        };
        let taxonomy = self.corrector.taxonomy();
        let result_json =
            serde_json::json!({ "question": rest.text, "open_question": rest }).to_string();
        let turn_id = self.quiet_turn(
            conversation,
            operator,
            text,
            TurnStatus::NeedsClarification,
            &result_json,
            &mut state.mark,
        )?;
        Ok(UtteranceReply {
            question: Some(rest.text.clone()),
            candidates: rest
                .candidates
                .iter()
                .map(|candidate| candidate_out(candidate, taxonomy))
                .collect(),
            ..command_reply(
                turn_id,
                TurnStatus::NeedsClarification,
                scene_version,
                waiting_out(&state, taxonomy),
                "took back the last answer's change",
            )
        })
    }

    /// The engine states from the scene's registered version to `version`, read from the log.
    pub(super) fn lineage(&self, version: VersionKey) -> Result<Vec<Vec<u8>>, String> {
        let log = lock(&self.log);
        let mut states = Vec::new();
        let mut next = Some(version);
        while let Some(key) = next {
            let (record, parent) = log.version(key).map_err(|error| error.to_string())?;
            states.push(record.engine_state);
            next = parent;
        }
        states.reverse();
        Ok(states)
    }

    /// The conversation's turns, oldest first, and its pending change.
    pub fn history(&self, conversation: ConversationKey) -> Result<HistoryOut, SessionError> {
        let conversation_slot = self.conversation_slot(conversation)?;
        let conversation_state = lock(&conversation_slot);
        let taxonomy = self.corrector.taxonomy();
        let turns = lock(&self.log).turns(conversation).map_err(log_error)?;
        Ok(HistoryOut {
            conversation_id: conversation_state.key.0,
            scene_id: conversation_state.scene.0,
            pending: conversation_state
                .pending
                .as_ref()
                .map(|pending| PendingOut {
                    reason: pending.reason.clone(),
                    changes: pending
                        .changes
                        .iter()
                        .map(|change| change_out(change, taxonomy))
                        .collect(),
                }),
            question: conversation_state
                .question
                .as_ref()
                .map(|question| question.text.clone()),
            candidates: conversation_state
                .question
                .iter()
                .flat_map(|question| &question.candidates)
                .map(|candidate| candidate_out(candidate, taxonomy))
                .collect(),
            turns: turns
                .into_iter()
                .map(|turn| {
                    let constraints: Vec<Constraint> =
                        serde_json::from_str(&turn.constraints_json).unwrap_or_default();
                    let focus: Option<Focus> = turn
                        .focus_json
                        .as_deref()
                        .and_then(|text| serde_json::from_str(text).ok());
                    TurnOut {
                        turn_id: turn.key.0,
                        kind: turn.kind,
                        text: turn.text,
                        status: status_from_text(&turn.status),
                        constraints: constraints.iter().map(constraint_out).collect(),
                        focus: focus.map(focus_to_wire),
                        scene_version: turn.scene_version.map(|version| version.0),
                        operator: turn.operator,
                        at: turn.created_at,
                    }
                })
                .collect(),
        })
    }

    /// The operator and scene of a conversation.
    pub fn conversation_owner(
        &self,
        conversation: ConversationKey,
    ) -> Result<(String, i64, String), SessionError> {
        let slot = self.conversation_slot(conversation)?;
        let state = lock(&slot);
        Ok((
            state.operator.clone(),
            state.scene.0,
            state.opened_at.clone(),
        ))
    }
}
