//! A scene's stored versions: the list of them, and any one of them read back (scene graph, label map,
//! overlay) so an operator can look at the scene as it was.
//!
//! Owns: which versions belong to a scene (the chain from the version in force back to the registered
//! one, and the versions turns on the scene made that are no longer in force), which turn made each, and
//! who may read that turn's words (the conversation's operator or a supervisor).
//! Must not: change a scene or a conversation; it only reads the log.

use std::collections::BTreeMap;

use crate::correction_log::{CorrectionLog, LogError, SceneKey, VersionKey};
use crate::raster;

use super::{convert, decode_state, lock, log_error, Caller, Coordinator};
use crate::corrector::SceneState;
use crate::error::SessionError;
use crate::wire::{SceneGraphOut, SceneVersions, VersionListed};

/// The longest chain of versions the list walks back (the oldest beyond it are left out, and said so).
pub const VERSION_LIST_LIMIT: usize = 500;

/// The parents of `from`, from it back to the first version (at most `limit` of them).
fn chain(
    log: &CorrectionLog,
    from: VersionKey,
    limit: usize,
) -> Result<Vec<(VersionKey, Option<VersionKey>)>, SessionError> {
    let mut out = Vec::new();
    let mut next = Some(from);
    while let Some(version) = next {
        if out.len() == limit {
            break;
        }
        let (_, parent) = log.version(version).map_err(log_error)?;
        out.push((version, parent));
        next = parent;
    }
    Ok(out)
}

fn unknown_version(version: VersionKey) -> SessionError {
    SessionError::unknown("unknown_version", "version of this scene", version.0)
}

impl Coordinator {
    fn scene_head(&self, scene: SceneKey) -> Result<VersionKey, SessionError> {
        let slot = self.scene_slot(scene)?;
        let head = lock(&slot).head;
        Ok(head)
    }

    /// The scene's versions, newest first.
    pub fn scene_versions(
        &self,
        scene: SceneKey,
        caller: &Caller,
    ) -> Result<SceneVersions, SessionError> {
        let head = self.scene_head(scene)?;
        // The conversations on this scene, and whether the caller may read each one's words.
        let conversations: Vec<_> = {
            let map = self
                .conversations
                .read()
                .unwrap_or_else(|poisoned| poisoned.into_inner());
            map.values()
                .filter_map(|slot| {
                    let slot = lock(slot);
                    (slot.scene == scene).then(|| (slot.key, caller.may_act_for(&slot.operator)))
                })
                .collect()
        };
        let log = lock(&self.log);
        let in_force = chain(&log, head, VERSION_LIST_LIMIT)?;
        let truncated = in_force.len() == VERSION_LIST_LIMIT
            && in_force.last().is_some_and(|(_, parent)| parent.is_some());
        let mut versions: BTreeMap<i64, VersionListed> = BTreeMap::new();
        for &(version, parent) in &in_force {
            versions.insert(
                version.0,
                VersionListed {
                    version: version.0,
                    parent: parent.map(|parent| parent.0),
                    in_force: true,
                    turn_id: None,
                    conversation_id: None,
                    kind: None,
                    text: None,
                    operator: String::new(),
                    at: String::new(),
                },
            );
        }
        let oldest_kept = in_force.last().map(|(version, _)| version.0).unwrap_or(0);
        for (conversation, readable) in conversations {
            for turn in log.turns(conversation).map_err(log_error)? {
                let made = matches!(
                    (turn.kind.as_str(), turn.status.as_str()),
                    ("utterance", "applied") | ("confirm", "confirmed")
                );
                let Some(version) = turn.scene_version.filter(|_| made) else {
                    continue;
                };
                if version.0 < oldest_kept {
                    continue;
                }
                let entry = match versions.get_mut(&version.0) {
                    Some(entry) => entry,
                    None => {
                        let (_, parent) = log.version(version).map_err(log_error)?;
                        versions.entry(version.0).or_insert(VersionListed {
                            version: version.0,
                            parent: parent.map(|parent| parent.0),
                            in_force: false,
                            turn_id: None,
                            conversation_id: None,
                            kind: None,
                            text: None,
                            operator: String::new(),
                            at: String::new(),
                        })
                    }
                };
                // The first turn that names a new version made it.
                if entry.turn_id.is_some_and(|made_by| made_by < turn.key.0) {
                    continue;
                }
                entry.turn_id = Some(turn.key.0);
                entry.conversation_id = Some(conversation.0);
                entry.kind = Some(turn.kind.clone());
                entry.text = readable.then(|| turn.text.clone());
                entry.operator = turn.operator.clone();
                entry.at = turn.created_at.clone();
            }
        }
        // The registered version: its operator and time are the scene's.
        if let Some(first) = in_force.last().filter(|(_, parent)| parent.is_none()) {
            let row = log
                .scenes()
                .map_err(log_error)?
                .into_iter()
                .find(|row| row.key == scene);
            if let (Some(row), Some(entry)) = (row, versions.get_mut(&first.0 .0)) {
                entry.operator = row.operator;
                entry.at = row.created_at;
            }
        }
        Ok(SceneVersions {
            scene_id: scene.0,
            head: head.0,
            versions: versions.into_values().rev().collect(),
            truncated,
        })
    }

    /// One version's state, after checking it is a version of this scene: it descends from the same
    /// registered version as the one in force.
    fn version_state(
        &self,
        scene: SceneKey,
        version: VersionKey,
    ) -> Result<SceneState, SessionError> {
        if version.0 < 1 {
            return Err(unknown_version(version));
        }
        let head = self.scene_head(scene)?;
        let log = lock(&self.log);
        let root = |from: VersionKey| -> Result<Option<VersionKey>, SessionError> {
            let walked = chain(&log, from, usize::MAX)?;
            Ok(walked.last().map(|(first, _)| *first))
        };
        let (record, _) = match log.version(version) {
            Ok(found) => found,
            Err(LogError::Missing { .. }) => return Err(unknown_version(version)),
            Err(other) => return Err(log_error(other)),
        };
        if version != head && root(version)? != root(head)? {
            return Err(unknown_version(version));
        }
        decode_state(&record).map_err(SessionError::internal)
    }

    /// The scene graph of one of the scene's versions.
    pub fn scene_graph_at(
        &self,
        scene: SceneKey,
        version: VersionKey,
    ) -> Result<SceneGraphOut, SessionError> {
        let state = self.version_state(scene, version)?;
        let slot = self.scene_slot(scene)?;
        let slot = lock(&slot);
        Ok(convert::scene_graph_of(
            scene,
            &slot,
            version,
            &state.summary,
            self.corrector.taxonomy(),
        ))
    }

    /// The label map of one of the scene's versions, as a palette PNG (see `label_map_png`).
    pub fn label_map_png_at(
        &self,
        scene: SceneKey,
        version: VersionKey,
    ) -> Result<Vec<u8>, SessionError> {
        let state = self.version_state(scene, version)?;
        raster::encode_palette_png(&state.labels, &self.corrector.taxonomy().label_palette())
            .map_err(SessionError::internal)
    }

    /// The overlay of one of the scene's versions, as an RGB PNG.
    pub fn overlay_png_at(
        &self,
        scene: SceneKey,
        version: VersionKey,
    ) -> Result<Vec<u8>, SessionError> {
        let state = self.version_state(scene, version)?;
        let parent = self.parent_state(scene, version)?;
        let slot = self.scene_slot(scene)?;
        let input = lock(&slot).input.clone();
        let overlay = self.corrector.overlay(&input, &state, parent.as_ref());
        raster::encode_rgb_png(&overlay).map_err(SessionError::internal)
    }

    /// The state of the version `version` was made from (`None` for a registered version), so an overlay
    /// can ring what the version's own note changed.
    pub(super) fn parent_state(
        &self,
        scene: SceneKey,
        version: VersionKey,
    ) -> Result<Option<SceneState>, SessionError> {
        let parent = match lock(&self.log).version(version) {
            Ok((_, parent)) => parent,
            Err(LogError::Missing { .. }) => return Err(unknown_version(version)),
            Err(other) => return Err(log_error(other)),
        };
        parent
            .map(|parent| self.version_state(scene, parent))
            .transpose()
    }
}
