//! The one-row lookups of `super::super::lookup` on PostgreSQL: what a replica reads at each turn to tell
//! whether its cached copy of a scene or a conversation is still current.
//!
//! Owns: these reads. Must not: write anything.

use super::super::lookup::{SceneListed, IMAGE_HEAD_BYTES};
use super::super::store::{parse_stack, ConversationRow, SceneRow};
use super::super::{ConversationKey, LogError, SceneKey, TurnKey, TurnMark, VersionKey};
use super::PostgresLog;

impl PostgresLog {
    /// One stored scene, if there is one with this key.
    pub fn scene(&self, scene: SceneKey) -> Result<Option<SceneRow>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let row = client
                .query_opt(
                    "SELECT id, name, image_hash, input_json, head_version, created_at, operator FROM scenes WHERE id = $1",
                    &[&scene.0],
                )
                .await?;
            Ok(row.map(|row| SceneRow {
                key: SceneKey(row.get(0)),
                name: row.get(1),
                image_hash: row.get(2),
                input_json: row.get(3),
                head: VersionKey(row.get(4)),
                created_at: row.get(5),
                operator: row.get(6),
            }))
        })
    }

    /// A scene's head version, if there is such a scene.
    pub fn scene_head(&self, scene: SceneKey) -> Result<Option<VersionKey>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let row = client
                .query_opt("SELECT head_version FROM scenes WHERE id = $1", &[&scene.0])
                .await?;
            Ok(row.map(|row| VersionKey(row.get(0))))
        })
    }

    /// One stored conversation, if there is one with this key.
    pub fn conversation(
        &self,
        conversation: ConversationKey,
    ) -> Result<Option<ConversationRow>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let row = client
                .query_opt(
                    "SELECT scene_id, operator, opened_at, applied_stack, redo_stack FROM conversations WHERE id = $1",
                    &[&conversation.0],
                )
                .await?;
            row.map(|row| {
                Ok(ConversationRow {
                    key: conversation,
                    scene: SceneKey(row.get(0)),
                    operator: row.get(1),
                    opened_at: row.get(2),
                    applied_stack: parse_stack(row.get(3))?,
                    redo_stack: parse_stack(row.get(4))?,
                })
            })
            .transpose()
        })
    }

    /// A conversation's turn mark.
    pub fn turn_mark(&self, conversation: ConversationKey) -> Result<TurnMark, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let row = client
                .query_one(
                    "SELECT COUNT(*), MAX(id) FROM turns WHERE conversation_id = $1",
                    &[&conversation.0],
                )
                .await?;
            Ok(TurnMark {
                count: row.get(0),
                last: row.get::<_, Option<i64>>(1).map(TurnKey),
            })
        })
    }

    /// Every scene's key, ascending.
    pub fn scene_keys(&self) -> Result<Vec<SceneKey>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let rows = client
                .query("SELECT id FROM scenes ORDER BY id", &[])
                .await?;
            Ok(rows.iter().map(|row| SceneKey(row.get(0))).collect())
        })
    }

    /// Up to `limit` scenes with a key above `after`, ascending, each with the first bytes of its image,
    /// without sending the image itself.
    pub fn scene_listing(&self, after: i64, limit: i64) -> Result<Vec<SceneListed>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let head_bytes = IMAGE_HEAD_BYTES as i32;
            let rows = client
                .query(
                    "SELECT s.id, s.name, s.head_version, substring(b.bytes FROM 1 FOR $3)
                     FROM scenes s JOIN blobs b ON b.hash = s.image_hash
                     WHERE s.id > $1 ORDER BY s.id LIMIT $2",
                    &[&after, &limit, &head_bytes],
                )
                .await?;
            Ok(rows
                .iter()
                .map(|row| SceneListed {
                    key: SceneKey(row.get(0)),
                    name: row.get(1),
                    head: VersionKey(row.get(2)),
                    image_head: row.get(3),
                })
                .collect())
        })
    }

    /// Every conversation's key, ascending.
    pub fn conversation_keys(&self) -> Result<Vec<ConversationKey>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let rows = client
                .query("SELECT id FROM conversations ORDER BY id", &[])
                .await?;
            Ok(rows.iter().map(|row| ConversationKey(row.get(0))).collect())
        })
    }
}
