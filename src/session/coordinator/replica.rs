//! The coordinator's copies of scenes and conversations, and keeping them current with a shared log.
//!
//! Owns: reading one scene or one conversation from the log into a slot, and finding a slot for a turn.
//! On a log only this process writes (SQLite, held by a lock file) every slot is read once at start and then
//! kept by the coordinator's own writes. On a shared log (PostgreSQL, any number of replicas) the slots are
//! a cache: a slot is read from the log the first time it is asked for, and at every later use its copy is
//! checked against the log (a scene's head version, a conversation's turn mark: how many turns it has and
//! the latest) and read again when another replica moved it. A check and its reload run under the slot's
//! lock, so a turn of this process finishing at the same moment is never overwritten by an older copy.
//! Races between replicas are not settled here: a turn solved on a head another replica has just moved is
//! refused by the log's compare-and-set (409 `stale_change`), and the next turn reads the new head.
//! Must not: write to the log or decide anything about a turn.

use std::sync::{Arc, Mutex};

use crate::correction_log::{
    ConversationKey, ConversationRow, CorrectionLog, SceneKey, SceneRow, TurnMark,
};

use super::super::corrector::PastTurn;
use super::super::error::SessionError;
use super::{
    decode_state, lock, log_error, register, ConversationSlot, Coordinator, OpenError, PendingSlot,
    SceneSlot,
};

/// A scene as the log holds it at its head.
pub(super) fn load_scene(log: &CorrectionLog, row: SceneRow) -> Result<SceneSlot, OpenError> {
    let restore_error = |message: String| OpenError::Restore {
        scene: row.key.0,
        message,
    };
    let image_png = log.blob(&row.image_hash)?;
    let image =
        crate::raster::decode_rgb_png(&image_png, std::path::Path::new("stored image"), u64::MAX)
            .map_err(|error| restore_error(error.to_string()))?;
    let input = register::restore_input(&row.name, image, &row.input_json, |hash| {
        log.blob(hash).map_err(|error| error.to_string())
    })
    .map_err(restore_error)?;
    let (record, _) = log.version(row.head)?;
    let state = decode_state(&record).map_err(restore_error)?;
    Ok(SceneSlot {
        name: row.name,
        input: Arc::new(input),
        head: row.head,
        state,
    })
}

/// A conversation as the log holds it: its past utterances, stacks, held change and open question.
pub(super) fn load_conversation(
    log: &CorrectionLog,
    row: ConversationRow,
) -> Result<ConversationSlot, OpenError> {
    let turns = log.turns(row.key)?;
    let history = turns
        .iter()
        .filter(|turn| turn.kind == "utterance")
        .map(|turn| PastTurn {
            utterance: turn.text.clone(),
            focus: turn
                .focus_json
                .as_deref()
                .and_then(|text| serde_json::from_str(text).ok()),
            constraints: serde_json::from_str(&turn.constraints_json).unwrap_or_default(),
        })
        .collect();
    let pending = match log.pending(row.key)? {
        Some(pending) => {
            let state = decode_state(&pending.state).map_err(|message| OpenError::Restore {
                scene: row.scene.0,
                message,
            })?;
            let turn = turns.iter().find(|turn| turn.key == pending.turn);
            Some(PendingSlot {
                base: pending.base,
                state,
                reason: pending.reason,
                changes: serde_json::from_str(&pending.changes_json).unwrap_or_default(),
                utterance: turn.map(|turn| turn.text.clone()).unwrap_or_default(),
                constraints: turn
                    .and_then(|turn| serde_json::from_str(&turn.constraints_json).ok())
                    .unwrap_or_default(),
                focus: turn
                    .and_then(|turn| turn.focus_json.as_deref())
                    .and_then(|text| serde_json::from_str(text).ok()),
            })
        }
        None => None,
    };
    let question = super::turns::question_after(&turns);
    let mark = turns
        .iter()
        .fold(TurnMark::default(), |mark, turn| mark.after(turn.key));
    Ok(ConversationSlot {
        key: row.key,
        scene: row.scene,
        operator: row.operator,
        opened_at: row.opened_at,
        history,
        pending,
        applied: row.applied_stack,
        redo: row.redo_stack,
        question,
        answered: super::turns::answer_after(&turns),
        mark,
    })
}

fn restore_failed(error: OpenError) -> SessionError {
    match error {
        OpenError::Log(error) => log_error(error),
        other => SessionError::internal(other),
    }
}

impl Coordinator {
    /// The slot of a scene, current with the log: held in the cache, or read from the log and held.
    /// On a log only this process writes a held slot is current (every write goes through it); a slot
    /// just read is checked once, as a turn may have moved the head while it was being read.
    pub(crate) fn scene_slot(
        &self,
        scene: SceneKey,
    ) -> Result<Arc<Mutex<SceneSlot>>, SessionError> {
        let unknown = || SessionError::unknown("unknown_scene", "scene", scene.0);
        let slot = match self.scenes.get(scene) {
            Some(slot) if !self.shared => return Ok(slot),
            Some(slot) => slot,
            None => {
                let row = lock(&self.log).scene(scene).map_err(log_error)?;
                let loaded = load_scene(&lock(&self.log), row.ok_or_else(unknown)?)
                    .map_err(restore_failed)?;
                // A scene read back is prepared again by the work that asked for it: the request's time
                // limit may grow with its image, as a registration's does.
                crate::abandon::report_pixels(loaded.input.image.pixels.len() as u64);
                // Two requests may load the same scene at once: the first one kept is the one everyone
                // uses.
                self.hold_scene(scene, loaded)
            }
        };
        {
            let mut copy = lock(&slot);
            let head = lock(&self.log)
                .scene_head(scene)
                .map_err(log_error)?
                .ok_or_else(unknown)?;
            if head != copy.head {
                let (record, _) = lock(&self.log).version(head).map_err(log_error)?;
                copy.state = decode_state(&record).map_err(SessionError::internal)?;
                copy.head = head;
            }
        }
        Ok(slot)
    }

    /// The slot of a conversation, current with the log.
    pub(crate) fn conversation_slot(
        &self,
        conversation: ConversationKey,
    ) -> Result<Arc<Mutex<ConversationSlot>>, SessionError> {
        let unknown =
            || SessionError::unknown("unknown_conversation", "conversation", conversation.0);
        let cached = self
            .conversations
            .read()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .get(&conversation)
            .cloned();
        if !self.shared {
            return cached.ok_or_else(unknown);
        }
        let read = || -> Result<ConversationSlot, SessionError> {
            let log = lock(&self.log);
            let row = log.conversation(conversation).map_err(log_error)?;
            load_conversation(&log, row.ok_or_else(unknown)?).map_err(restore_failed)
        };
        let Some(slot) = cached else {
            let loaded = read()?;
            return Ok(self
                .conversations
                .write()
                .unwrap_or_else(|poisoned| poisoned.into_inner())
                .entry(conversation)
                .or_insert_with(|| Arc::new(Mutex::new(loaded)))
                .clone());
        };
        {
            let mut copy = lock(&slot);
            let mark = lock(&self.log).turn_mark(conversation).map_err(log_error)?;
            if mark != copy.mark {
                *copy = read()?;
            }
        }
        Ok(slot)
    }

    /// Every scene id, ascending, as the log holds them (else, if the log cannot be read, the ones held).
    pub fn scene_ids(&self) -> Vec<SceneKey> {
        lock(&self.log)
            .scene_keys()
            .unwrap_or_else(|_| self.scenes.keys())
    }

    /// Every conversation id, ascending: the log's on a shared log, else the ones this process holds.
    pub(crate) fn conversation_ids(&self) -> Vec<ConversationKey> {
        if self.shared {
            if let Ok(keys) = lock(&self.log).conversation_keys() {
                return keys;
            }
        }
        let mut keys: Vec<ConversationKey> = self
            .conversations
            .read()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .keys()
            .copied()
            .collect();
        keys.sort();
        keys
    }
}
