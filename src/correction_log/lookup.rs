//! One-row lookups a replica makes at each turn to tell whether its cached copy of a scene or a
//! conversation is still current: a scene's row and head, a conversation's row, and a conversation's turn
//! mark (how many turns it has and the latest), on SQLite; the same on PostgreSQL live in
//! `postgres/lookup.rs`.
//!
//! Owns: these reads and `TurnMark`. Must not: write anything, or decide what a stale copy means (the
//! coordinator does).

use rusqlite::OptionalExtension;

use super::store::{parse_stack, ConversationRow, SceneRow, SqliteLog};
use super::{ConversationKey, LogError, SceneKey, TurnKey, VersionKey};

/// How far a conversation has got in the log: its number of turns and the latest one. Two copies of a
/// conversation with the same mark hold the same turns (turns are only ever added).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct TurnMark {
    pub count: i64,
    pub last: Option<TurnKey>,
}

impl TurnMark {
    /// The mark after one more turn, `turn`, was written.
    pub fn after(self, turn: TurnKey) -> TurnMark {
        TurnMark {
            count: self.count + 1,
            last: Some(self.last.map_or(turn, |last| last.max(turn))),
        }
    }
}

/// How many leading bytes of a stored image a scene listing reads: a PNG's signature and its IHDR chunk.
pub const IMAGE_HEAD_BYTES: i64 = 33;

/// A scene as a listing shows it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SceneListed {
    pub key: SceneKey,
    pub name: String,
    pub head: VersionKey,
    /// The first `IMAGE_HEAD_BYTES` of the stored image (fewer if it is shorter).
    pub image_head: Vec<u8>,
}

impl SqliteLog {
    /// One stored scene, if there is one with this key.
    pub fn scene(&self, scene: SceneKey) -> Result<Option<SceneRow>, LogError> {
        Ok(self
            .connection
            .query_row(
                "SELECT id, name, image_hash, input_json, head_version, created_at, operator FROM scenes WHERE id = ?1",
                [scene.0],
                |row| {
                    Ok(SceneRow {
                        key: SceneKey(row.get(0)?),
                        name: row.get(1)?,
                        image_hash: row.get(2)?,
                        input_json: row.get(3)?,
                        head: VersionKey(row.get(4)?),
                        created_at: row.get(5)?,
                        operator: row.get(6)?,
                    })
                },
            )
            .optional()?)
    }

    /// A scene's head version, if there is such a scene.
    pub fn scene_head(&self, scene: SceneKey) -> Result<Option<VersionKey>, LogError> {
        Ok(self
            .connection
            .query_row(
                "SELECT head_version FROM scenes WHERE id = ?1",
                [scene.0],
                |row| row.get(0).map(VersionKey),
            )
            .optional()?)
    }

    /// One stored conversation, if there is one with this key.
    pub fn conversation(
        &self,
        conversation: ConversationKey,
    ) -> Result<Option<ConversationRow>, LogError> {
        let raw = self
            .connection
            .query_row(
                "SELECT scene_id, operator, opened_at, applied_stack, redo_stack FROM conversations WHERE id = ?1",
                [conversation.0],
                |row| {
                    Ok((
                        row.get::<_, i64>(0)?,
                        row.get::<_, String>(1)?,
                        row.get::<_, String>(2)?,
                        row.get::<_, String>(3)?,
                        row.get::<_, String>(4)?,
                    ))
                },
            )
            .optional()?;
        raw.map(|(scene, operator, opened_at, applied, redo)| {
            Ok(ConversationRow {
                key: conversation,
                scene: SceneKey(scene),
                operator,
                opened_at,
                applied_stack: parse_stack(&applied)?,
                redo_stack: parse_stack(&redo)?,
            })
        })
        .transpose()
    }

    /// A conversation's turn mark.
    pub fn turn_mark(&self, conversation: ConversationKey) -> Result<TurnMark, LogError> {
        Ok(self.connection.query_row(
            "SELECT COUNT(*), MAX(id) FROM turns WHERE conversation_id = ?1",
            [conversation.0],
            |row| {
                Ok(TurnMark {
                    count: row.get(0)?,
                    last: row.get::<_, Option<i64>>(1)?.map(TurnKey),
                })
            },
        )?)
    }

    /// Every scene's key, ascending.
    pub fn scene_keys(&self) -> Result<Vec<SceneKey>, LogError> {
        let mut statement = self
            .connection
            .prepare("SELECT id FROM scenes ORDER BY id")?;
        let keys = statement.query_map([], |row| row.get(0).map(SceneKey))?;
        Ok(keys.collect::<Result<Vec<_>, _>>()?)
    }

    /// Up to `limit` scenes with a key above `after`, ascending, each with the first bytes of its image
    /// (enough for a PNG's size), without reading the image itself.
    pub fn scene_listing(&self, after: i64, limit: i64) -> Result<Vec<SceneListed>, LogError> {
        let mut statement = self.connection.prepare(
            "SELECT s.id, s.name, s.head_version, substr(b.bytes, 1, ?3)
             FROM scenes s JOIN blobs b ON b.hash = s.image_hash
             WHERE s.id > ?1 ORDER BY s.id LIMIT ?2",
        )?;
        let rows =
            statement.query_map(rusqlite::params![after, limit, IMAGE_HEAD_BYTES], |row| {
                Ok(SceneListed {
                    key: SceneKey(row.get(0)?),
                    name: row.get(1)?,
                    head: VersionKey(row.get(2)?),
                    image_head: row.get(3)?,
                })
            })?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// Every conversation's key, ascending.
    pub fn conversation_keys(&self) -> Result<Vec<ConversationKey>, LogError> {
        let mut statement = self
            .connection
            .prepare("SELECT id FROM conversations ORDER BY id")?;
        let keys = statement.query_map([], |row| row.get(0).map(ConversationKey))?;
        Ok(keys.collect::<Result<Vec<_>, _>>()?)
    }
}
