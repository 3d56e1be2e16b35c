//! Undo and redo: moving a scene's head back to the version before a conversation's latest change, and
//! forward again.
//!
//! Owns: the undo and redo rules. Undo takes back the conversation's own latest change when it is still the
//! scene's head; redo puts it back when nothing else has happened since. Both log one turn and answer with
//! the labels that changed.
//! Must not: talk HTTP; answers are wire values or `SessionError`s.

use crate::correction_log::{ConversationKey, NewTurn, TurnEffect, VersionKey};
use crate::corrector::SceneState;
use crate::error::SessionError;
use crate::wire::{TurnReply, TurnStatus};

use super::convert::label_changes;
use super::turns::{status_text, waiting_out};
use super::{decode_state, lock, log_error, ConversationSlot, Coordinator, SceneSlot};

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
    /// Takes back this conversation's latest change, when it is still the scene's head.
    pub fn undo(
        &self,
        conversation: ConversationKey,
        operator: &str,
    ) -> Result<TurnReply, SessionError> {
        let conversation_slot = self.conversation_slot(conversation)?;
        let mut conversation_state = lock(&conversation_slot);
        let scene_slot = self.scene_slot(conversation_state.scene)?;
        let mut scene = lock(&scene_slot);
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
        let step = HeadMove {
            kind: "undo",
            status: TurnStatus::Undone,
            to: parent,
            state: parent_state,
            deactivate: Some(latest),
            activate: None,
            applied_after,
            redo_after,
            forget_answer: true,
        };
        self.move_head(
            conversation,
            operator,
            &mut conversation_state,
            &mut scene,
            step,
        )
    }

    /// Puts back the change this conversation undid last, when nothing has changed the scene since.
    pub fn redo(
        &self,
        conversation: ConversationKey,
        operator: &str,
    ) -> Result<TurnReply, SessionError> {
        let conversation_slot = self.conversation_slot(conversation)?;
        let mut conversation_state = lock(&conversation_slot);
        let scene_slot = self.scene_slot(conversation_state.scene)?;
        let mut scene = lock(&scene_slot);
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
        let step = HeadMove {
            kind: "redo",
            status: TurnStatus::Redone,
            to: undone,
            state,
            deactivate: None,
            activate: Some(undone),
            applied_after,
            redo_after,
            forget_answer: false,
        };
        self.move_head(
            conversation,
            operator,
            &mut conversation_state,
            &mut scene,
            step,
        )
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
        let (turn_key, _) = self
            .group
            .commit(
                &self.log,
                &NewTurn {
                    conversation,
                    kind: step.kind,
                    text: "",
                    focus_json: None,
                    status: status_text(step.status),
                    constraints_json: "[]",
                    result_json: "{}",
                    answer_json: None,
                    operator,
                    effect: TurnEffect::MoveHead {
                        from: scene.head,
                        to: step.to,
                        deactivate: step.deactivate,
                        activate: step.activate,
                    },
                },
                Some((&step.applied_after, &step.redo_after)),
            )
            .map_err(log_error)?;
        conversation_state.mark = conversation_state.mark.after(turn_key);
        self.counters.record_turn(false);
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
