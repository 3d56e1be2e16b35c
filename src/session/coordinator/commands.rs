//! The conversation's commands on its scene's head: confirming or rejecting the change held for
//! confirmation, undoing the conversation's latest change and redoing it.
//!
//! Owns: the command rules. A held change is applied on confirmation on the scene as it is then (worked out
//! again when the scene moved on since it was proposed). Undo takes back the conversation's own latest
//! change when it is still the scene's head; redo puts it back when nothing else has happened since. Each
//! command logs one turn (`Coordinator::commit_turn`) under the conversation's and the scene's locks
//! (`Coordinator::with_turn_locks`) and answers with the labels that changed.
//! Must not: talk HTTP; answers are wire values or `SessionError`s.

use crate::correction_log::{ConversationKey, NewTurn, TurnEffect, VersionKey};
use crate::corrector::{CorrectionRequest, Lineage, SceneHandle, SceneState, Verdict};
use crate::error::SessionError;
use crate::wire::{TurnReply, TurnStatus};

use super::convert::{change_out, label_changes};
use super::turns::{plain_turn, waiting_out};
use super::{
    decode_state, encode_state, lock, log_error, ConversationSlot, Coordinator, SceneSlot,
};

/// An undo or redo once its target is checked: the turn to log and where the scene's head goes.
struct HeadMove {
    kind: &'static str,
    status: TurnStatus,
    /// The version the head moves to, and its state.
    to: VersionKey,
    state: SceneState,
    deactivate: Option<VersionKey>,
    activate: Option<VersionKey>,
    applied_after: Vec<VersionKey>,
    redo_after: Vec<VersionKey>,
    /// Whether the conversation's answered question is forgotten (undo forgets it, redo keeps it).
    forget_answer: bool,
}

impl Coordinator {
    /// Applies the conversation's pending change.
    pub fn confirm(
        &self,
        conversation: ConversationKey,
        operator: &str,
    ) -> Result<TurnReply, SessionError> {
        self.with_turn_locks(conversation, |conversation_state, scene| {
            self.confirm_locked(conversation, operator, conversation_state, scene)
        })
    }

    fn confirm_locked(
        &self,
        conversation: ConversationKey,
        operator: &str,
        conversation_state: &mut ConversationSlot,
        scene: &mut SceneSlot,
    ) -> Result<TurnReply, SessionError> {
        let pending = conversation_state.pending.as_ref().ok_or_else(|| {
            SessionError::conflict(
                "no_pending_change",
                "this conversation has no change waiting for confirmation",
            )
        })?;
        // The scene moved on since the change was proposed: work its note out again on the scene as it is
        // now, confirmed, so the whole change applies on top of what happened since.
        let (state, changes) = if pending.base == scene.head {
            (pending.state.clone(), pending.changes.clone())
        } else {
            let head = scene.head;
            let read_lineage = || self.lineage(head);
            let outcome = self
                .corrector
                .apply(&CorrectionRequest {
                    scene: SceneHandle(conversation_state.scene.0),
                    input: &scene.input,
                    state: &scene.state,
                    lineage: Lineage(&read_lineage),
                    history: &conversation_state.history,
                    utterance: &pending.utterance,
                    focus: pending.focus,
                    note: Some(&pending.constraints),
                    confirmed: true,
                })
                .map_err(SessionError::internal)?;
            match outcome.verdict {
                Verdict::Applied(state) => (state, outcome.changes),
                Verdict::NothingToChange => (scene.state.clone(), Vec::new()),
                _ => return Err(SessionError::conflict(
                    "stale_change",
                    "the scene changed since this change was proposed and it no longer applies \
                         as it was; reject it and say it again",
                )),
            }
        };
        let constraints_json =
            serde_json::to_string(&pending.constraints).map_err(SessionError::internal)?;
        let (turn_key, new_version) = self.commit_turn(
            &mut conversation_state.mark,
            &NewTurn {
                constraints_json: &constraints_json,
                result_json: &serde_json::json!({ "reason": pending.reason }).to_string(),
                ..plain_turn(
                    conversation,
                    "confirm",
                    &pending.utterance,
                    TurnStatus::Confirmed,
                    operator,
                    TurnEffect::NewVersion {
                        base: scene.head,
                        state: encode_state(&state)?,
                        utterance: pending.utterance.clone(),
                        constraints_json: constraints_json.clone(),
                    },
                )
            },
            Some((&conversation_state.applied, &[])),
        )?;
        conversation_state.pending = None;
        if let Some(version) = new_version {
            scene.head = version;
            scene.state = state;
            conversation_state.applied.push(version);
            conversation_state.redo.clear();
        }
        let taxonomy = self.corrector.taxonomy();
        Ok(TurnReply {
            turn_id: turn_key.0,
            status: TurnStatus::Confirmed,
            scene_version: scene.head.0,
            changes: changes
                .iter()
                .map(|change| change_out(change, taxonomy))
                .collect(),
            waiting: waiting_out(conversation_state, self.corrector.taxonomy()),
        })
    }

    /// Drops the conversation's pending change.
    pub fn reject(
        &self,
        conversation: ConversationKey,
        operator: &str,
    ) -> Result<TurnReply, SessionError> {
        self.with_turn_locks(conversation, |conversation_state, scene| {
            self.reject_locked(conversation, operator, conversation_state, scene)
        })
    }

    fn reject_locked(
        &self,
        conversation: ConversationKey,
        operator: &str,
        conversation_state: &mut ConversationSlot,
        scene: &SceneSlot,
    ) -> Result<TurnReply, SessionError> {
        let pending = conversation_state.pending.as_ref().ok_or_else(|| {
            SessionError::conflict(
                "no_pending_change",
                "this conversation has no change waiting for confirmation",
            )
        })?;
        let (turn_key, _) = self.commit_turn(
            &mut conversation_state.mark,
            &plain_turn(
                conversation,
                "reject",
                &pending.utterance,
                TurnStatus::Rejected,
                operator,
                TurnEffect::ClearPending,
            ),
            None,
        )?;
        conversation_state.pending = None;
        Ok(TurnReply {
            turn_id: turn_key.0,
            status: TurnStatus::Rejected,
            scene_version: scene.head.0,
            changes: Vec::new(),
            waiting: waiting_out(conversation_state, self.corrector.taxonomy()),
        })
    }

    /// Takes back this conversation's latest change, when it is still the scene's head.
    pub fn undo(
        &self,
        conversation: ConversationKey,
        operator: &str,
    ) -> Result<TurnReply, SessionError> {
        self.head_command(conversation, operator, Self::undo_step)
    }

    /// Checks the undo and works out where the head goes.
    fn undo_step(
        &self,
        conversation_state: &ConversationSlot,
        scene: &SceneSlot,
    ) -> Result<HeadMove, SessionError> {
        let latest = *conversation_state.applied.last().ok_or_else(|| {
            SessionError::conflict(
                "nothing_to_undo",
                "this conversation has no applied change to undo",
            )
        })?;
        if latest != scene.head {
            return Err(SessionError::conflict(
                "undo_blocked",
                "another conversation changed the scene after this one; undo that change first",
            ));
        }
        let (parent_state, parent) = {
            let log = lock(&self.log);
            let (_, parent) = log.version(latest).map_err(log_error)?;
            let parent =
                parent.ok_or_else(|| SessionError::internal("an applied version has no parent"))?;
            let (record, _) = log.version(parent).map_err(log_error)?;
            (
                decode_state(&record).map_err(SessionError::internal)?,
                parent,
            )
        };
        let mut applied_after = conversation_state.applied.clone();
        applied_after.pop();
        let mut redo_after = conversation_state.redo.clone();
        redo_after.push(latest);
        Ok(HeadMove {
            kind: "undo",
            status: TurnStatus::Undone,
            to: parent,
            state: parent_state,
            deactivate: Some(latest),
            activate: None,
            applied_after,
            redo_after,
            forget_answer: true,
        })
    }

    /// Puts back the change this conversation undid last, when nothing has changed the scene since.
    pub fn redo(
        &self,
        conversation: ConversationKey,
        operator: &str,
    ) -> Result<TurnReply, SessionError> {
        self.head_command(conversation, operator, Self::redo_step)
    }

    /// Checks the redo and works out where the head goes.
    fn redo_step(
        &self,
        conversation_state: &ConversationSlot,
        scene: &SceneSlot,
    ) -> Result<HeadMove, SessionError> {
        let undone = *conversation_state.redo.last().ok_or_else(|| {
            SessionError::conflict(
                "nothing_to_redo",
                "this conversation has no undone change to redo",
            )
        })?;
        let (state, parent) = {
            let log = lock(&self.log);
            let (record, parent) = log.version(undone).map_err(log_error)?;
            (
                decode_state(&record).map_err(SessionError::internal)?,
                parent,
            )
        };
        if parent != Some(scene.head) {
            return Err(SessionError::conflict(
                "redo_blocked",
                "the scene changed after the undo; the undone change no longer fits on top",
            ));
        }
        let mut applied_after = conversation_state.applied.clone();
        applied_after.push(undone);
        let mut redo_after = conversation_state.redo.clone();
        redo_after.pop();
        Ok(HeadMove {
            kind: "redo",
            status: TurnStatus::Redone,
            to: undone,
            state,
            deactivate: None,
            activate: Some(undone),
            applied_after,
            redo_after,
            forget_answer: false,
        })
    }

    /// An undo or redo: under the turn's locks, `step` checks it and works out where the head goes, and
    /// `move_head` logs it.
    fn head_command(
        &self,
        conversation: ConversationKey,
        operator: &str,
        step: fn(&Self, &ConversationSlot, &SceneSlot) -> Result<HeadMove, SessionError>,
    ) -> Result<TurnReply, SessionError> {
        self.with_turn_locks(conversation, |conversation_state, scene| {
            let step = step(self, conversation_state, scene)?;
            self.move_head(conversation, operator, conversation_state, scene, step)
        })
    }

    /// Logs an undo or redo turn and moves the scene's head, answering with the labels that changed.
    fn move_head(
        &self,
        conversation: ConversationKey,
        operator: &str,
        conversation_state: &mut ConversationSlot,
        scene: &mut SceneSlot,
        step: HeadMove,
    ) -> Result<TurnReply, SessionError> {
        let (turn_key, _) = self.commit_turn(
            &mut conversation_state.mark,
            &plain_turn(
                conversation,
                step.kind,
                "",
                step.status,
                operator,
                TurnEffect::MoveHead {
                    from: scene.head,
                    to: step.to,
                    deactivate: step.deactivate,
                    activate: step.activate,
                },
            ),
            Some((&step.applied_after, &step.redo_after)),
        )?;
        let changes = label_changes(
            &scene.state.labels,
            &step.state.labels,
            self.corrector.taxonomy(),
        );
        scene.head = step.to;
        scene.state = step.state;
        conversation_state.applied = step.applied_after;
        conversation_state.redo = step.redo_after;
        if step.forget_answer {
            conversation_state.answered = None;
        }
        Ok(TurnReply {
            turn_id: turn_key.0,
            status: step.status,
            scene_version: step.to.0,
            changes,
            waiting: waiting_out(conversation_state, self.corrector.taxonomy()),
        })
    }
}
