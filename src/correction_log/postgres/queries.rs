//! The log's queries on PostgreSQL: the same operations, rows and answers as `store.rs` on SQLite.
//!
//! Owns: the SQL of each operation in PostgreSQL's dialect and the compare-and-set on a scene's head.
//! Must not: interpret summaries or engine state, or decide whether a correction is allowed.

use tokio_postgres::{GenericClient, Row};

use super::super::store::{
    parse_stack, stack_text, ConversationRow, ExampleRow, NewScene, NewTurn, PendingRow, SceneRow,
    StateRecord, TurnEffect, TurnRow, TurnStacks,
};
use super::super::{
    blob_hash, now_text, ConversationKey, LogError, SceneKey, TurnKey, VersionKey,
    LOG_SCHEMA_VERSION,
};
use super::PostgresLog;

type Written = Result<(TurnKey, Option<VersionKey>), LogError>;

async fn put_blob(client: &impl GenericClient, bytes: &[u8]) -> Result<String, LogError> {
    let hash = blob_hash(bytes);
    client
        .execute(
            "INSERT INTO blobs (hash, bytes) VALUES ($1, $2) ON CONFLICT (hash) DO NOTHING",
            &[&hash, &bytes],
        )
        .await?;
    Ok(hash)
}

/// The scene's head now (after a compare-and-set lost), for the stale answer.
async fn head_now(client: &impl GenericClient, scene: i64) -> Result<i64, LogError> {
    Ok(client
        .query_one("SELECT head_version FROM scenes WHERE id = $1", &[&scene])
        .await?
        .get(0))
}

/// The rows of one turn, written through `client` (a transaction or savepoint the caller commits).
async fn write_turn(
    client: &impl GenericClient,
    turn: &NewTurn<'_>,
    stacks: TurnStacks<'_>,
) -> Written {
    let now = now_text();
    let scene: i64 = client
        .query_opt(
            "SELECT scene_id FROM conversations WHERE id = $1",
            &[&turn.conversation.0],
        )
        .await?
        .map(|row| row.get(0))
        .ok_or(LogError::Missing {
            what: "conversation",
            id: turn.conversation.0,
        })?;
    let head = head_now(client, scene).await?;
    let turn_key: i64 = client
        .query_one(
            "INSERT INTO turns (conversation_id, kind, text, focus_json, status, constraints_json, result_json, scene_version, operator, created_at, row_schema, answer_json)
             VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12) RETURNING id",
            &[
                &turn.conversation.0, &turn.kind, &turn.text, &turn.focus_json, &turn.status,
                &turn.constraints_json, &turn.result_json, &head, &turn.operator, &now, &LOG_SCHEMA_VERSION,
                &turn.answer_json,
            ],
        )
        .await?
        .get(0);
    let mut new_version = None;
    match &turn.effect {
        TurnEffect::None => {}
        TurnEffect::NewVersion {
            base,
            state,
            utterance,
            constraints_json,
        } => {
            if base.0 != head {
                return Err(LogError::Stale { head, base: base.0 });
            }
            let held_by: Option<String> = if turn.kind == "confirm" {
                client
                    .query_opt(
                        "SELECT t.operator FROM pending_changes p JOIN turns t ON t.id = p.turn_id
                         WHERE p.conversation_id = $1",
                        &[&turn.conversation.0],
                    )
                    .await?
                    .map(|row| row.get(0))
            } else {
                None
            };
            let (said_by, confirmed_by) = match &held_by {
                Some(said_by) => (said_by.as_str(), Some(turn.operator)),
                None if turn.kind == "confirm" => (turn.operator, Some(turn.operator)),
                None => (turn.operator, None),
            };
            let labels_hash = put_blob(client, &state.labels_png).await?;
            let version: i64 = client
                .query_one(
                    "INSERT INTO scene_versions (scene_id, parent_id, labels_hash, summary_json, engine_state, turn_id, created_at, row_schema, model)
                     VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9) RETURNING id",
                    &[&scene, &base.0, &labels_hash, &state.summary_json, &state.engine_state, &turn_key, &now, &LOG_SCHEMA_VERSION, &state.model],
                )
                .await?
                .get(0);
            // The compare-and-set: another replica may have moved the head since it was read above.
            let moved = client
                .execute(
                    "UPDATE scenes SET head_version = $1 WHERE id = $2 AND head_version = $3",
                    &[&version, &scene, &base.0],
                )
                .await?;
            if moved != 1 {
                let head = head_now(client, scene).await?;
                return Err(LogError::Stale { head, base: base.0 });
            }
            client
                .execute(
                    "INSERT INTO training_examples (scene_id, version_id, turn_id, image_hash, labels_before_hash, labels_after_hash, utterance, constraints_json, operator, created_at, active, row_schema, confirmed_by)
                     SELECT $1, $2, $3, s.image_hash, v.labels_hash, $4, $5, $6, $7, $8, 1, $9, $11
                     FROM scenes s JOIN scene_versions v ON v.id = $10 WHERE s.id = $1",
                    &[&scene, &version, &turn_key, &labels_hash, utterance, constraints_json, &said_by, &now, &LOG_SCHEMA_VERSION, &base.0, &confirmed_by],
                )
                .await?;
            client
                .execute(
                    "DELETE FROM pending_changes WHERE conversation_id = $1",
                    &[&turn.conversation.0],
                )
                .await?;
            client
                .execute(
                    "UPDATE turns SET scene_version = $1 WHERE id = $2",
                    &[&version, &turn_key],
                )
                .await?;
            new_version = Some(VersionKey(version));
        }
        TurnEffect::Pending {
            base,
            state,
            reason,
            changes_json,
        } => {
            let labels_hash = put_blob(client, &state.labels_png).await?;
            client
                .execute(
                    "INSERT INTO pending_changes (conversation_id, turn_id, base_version, labels_hash, summary_json, engine_state, reason, changes_json, created_at, row_schema, model)
                     VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11)
                     ON CONFLICT (conversation_id) DO UPDATE SET turn_id = EXCLUDED.turn_id,
                        base_version = EXCLUDED.base_version, labels_hash = EXCLUDED.labels_hash,
                        summary_json = EXCLUDED.summary_json, engine_state = EXCLUDED.engine_state,
                        reason = EXCLUDED.reason, changes_json = EXCLUDED.changes_json,
                        created_at = EXCLUDED.created_at, row_schema = EXCLUDED.row_schema, model = EXCLUDED.model",
                    &[&turn.conversation.0, &turn_key, &base.0, &labels_hash, &state.summary_json, &state.engine_state, reason, changes_json, &now, &LOG_SCHEMA_VERSION, &state.model],
                )
                .await?;
        }
        TurnEffect::ClearPending => {
            client
                .execute(
                    "DELETE FROM pending_changes WHERE conversation_id = $1",
                    &[&turn.conversation.0],
                )
                .await?;
        }
        TurnEffect::MoveHead {
            from,
            to,
            deactivate,
            activate,
        } => {
            let moved = client
                .execute(
                    "UPDATE scenes SET head_version = $1 WHERE id = $2 AND head_version = $3",
                    &[&to.0, &scene, &from.0],
                )
                .await?;
            if moved != 1 {
                let head = head_now(client, scene).await?;
                return Err(LogError::Stale { head, base: from.0 });
            }
            if let Some(version) = deactivate {
                client
                    .execute(
                        "UPDATE training_examples SET active = 0 WHERE version_id = $1",
                        &[&version.0],
                    )
                    .await?;
            }
            if let Some(version) = activate {
                client
                    .execute(
                        "UPDATE training_examples SET active = 1 WHERE version_id = $1",
                        &[&version.0],
                    )
                    .await?;
            }
            client
                .execute(
                    "UPDATE turns SET scene_version = $1 WHERE id = $2",
                    &[&to.0, &turn_key],
                )
                .await?;
        }
    }
    if let Some((applied, redo)) = stacks {
        let mut applied = applied.to_vec();
        applied.extend(new_version);
        client
            .execute(
                "UPDATE conversations SET applied_stack = $1, redo_stack = $2 WHERE id = $3",
                &[
                    &stack_text(&applied),
                    &stack_text(redo),
                    &turn.conversation.0,
                ],
            )
            .await?;
    }
    Ok((TurnKey(turn_key), new_version))
}

/// Takes every lock a batch will need on rows other batches share, in one global order, before any turn
/// is written: the batch's new label maps (a blob another open transaction is inserting is waited for),
/// then its conversations, then their scenes, each by ascending key. Two replicas' batches touching the same
/// scenes then wait for each other instead of deadlocking (each would otherwise lock its scenes, and insert
/// identical label maps, in the order its turns happened to arrive).
async fn lock_in_order(
    client: &impl GenericClient,
    turns: &[(NewTurn<'_>, TurnStacks<'_>)],
) -> Result<(), LogError> {
    let mut blobs: Vec<(String, &[u8])> = turns
        .iter()
        .filter_map(|(turn, _)| match &turn.effect {
            TurnEffect::NewVersion { state, .. } | TurnEffect::Pending { state, .. } => {
                Some((blob_hash(&state.labels_png), state.labels_png.as_slice()))
            }
            _ => None,
        })
        .collect();
    blobs.sort_by(|a, b| a.0.cmp(&b.0));
    blobs.dedup_by(|a, b| a.0 == b.0);
    for (hash, bytes) in &blobs {
        client
            .execute(
                "INSERT INTO blobs (hash, bytes) VALUES ($1, $2) ON CONFLICT (hash) DO NOTHING",
                &[hash, bytes],
            )
            .await?;
    }
    let mut conversations: Vec<i64> = turns.iter().map(|(turn, _)| turn.conversation.0).collect();
    conversations.sort_unstable();
    conversations.dedup();
    client
        .query(
            "SELECT id FROM conversations WHERE id = ANY($1) ORDER BY id FOR NO KEY UPDATE",
            &[&conversations],
        )
        .await?;
    client
        .query(
            "SELECT id FROM scenes WHERE id IN (SELECT scene_id FROM conversations WHERE id = ANY($1))
             ORDER BY id FOR NO KEY UPDATE",
            &[&conversations],
        )
        .await?;
    Ok(())
}

fn state_of(row: &Row, labels: usize, summary: usize, engine: usize, model: usize) -> StateRecord {
    StateRecord {
        labels_png: row.get(labels),
        summary_json: row.get(summary),
        engine_state: row.get(engine),
        model: row.get(model),
    }
}

impl PostgresLog {
    /// Registers a scene and its first version; both are committed when this returns.
    pub fn register_scene(&self, scene: &NewScene<'_>) -> Result<(SceneKey, VersionKey), LogError> {
        self.run(async {
            let mut object = self.pool().get().await?;
            let client: &mut tokio_postgres::Client = &mut object;
            let transaction = client.transaction().await?;
            let now = now_text();
            let image_hash = put_blob(&transaction, scene.image_png).await?;
            for part in scene.parts {
                put_blob(&transaction, part).await?;
            }
            let labels_hash = put_blob(&transaction, &scene.state.labels_png).await?;
            let scene_key: i64 = transaction
                .query_one(
                    "INSERT INTO scenes (name, image_hash, input_json, head_version, created_at, operator, row_schema)
                     VALUES ($1, $2, $3, NULL, $4, $5, $6) RETURNING id",
                    &[&scene.name, &image_hash, &scene.input_json, &now, &scene.operator, &LOG_SCHEMA_VERSION],
                )
                .await?
                .get(0);
            let version: i64 = transaction
                .query_one(
                    "INSERT INTO scene_versions (scene_id, parent_id, labels_hash, summary_json, engine_state, turn_id, created_at, row_schema, model)
                     VALUES ($1, NULL, $2, $3, $4, NULL, $5, $6, $7) RETURNING id",
                    &[&scene_key, &labels_hash, &scene.state.summary_json, &scene.state.engine_state, &now, &LOG_SCHEMA_VERSION, &scene.state.model],
                )
                .await?
                .get(0);
            transaction
                .execute(
                    "UPDATE scenes SET head_version = $1 WHERE id = $2",
                    &[&version, &scene_key],
                )
                .await?;
            transaction.commit().await?;
            Ok((SceneKey(scene_key), VersionKey(version)))
        })
    }

    /// Opens a conversation on a scene.
    pub fn open_conversation(
        &self,
        scene: SceneKey,
        operator: &str,
    ) -> Result<ConversationRow, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let now = now_text();
            let key: Option<i64> = client
                .query_opt(
                    "INSERT INTO conversations (scene_id, operator, opened_at, applied_stack, redo_stack, row_schema)
                     SELECT id, $2, $3, '[]', '[]', $4 FROM scenes WHERE id = $1 RETURNING id",
                    &[&scene.0, &operator, &now, &LOG_SCHEMA_VERSION],
                )
                .await?
                .map(|row| row.get(0));
            let key = key.ok_or(LogError::Missing {
                what: "scene",
                id: scene.0,
            })?;
            Ok(ConversationRow {
                key: ConversationKey(key),
                scene,
                operator: operator.to_string(),
                opened_at: now,
                applied_stack: Vec::new(),
                redo_stack: Vec::new(),
            })
        })
    }

    /// As `CorrectionLog::commit_turns`: one transaction, a savepoint per turn, acknowledged after COMMIT.
    pub fn commit_turns(&self, turns: &[(NewTurn<'_>, TurnStacks<'_>)]) -> Vec<Written> {
        let whole_batch_failed = |error: &LogError| {
            turns
                .iter()
                .map(|_| Err(LogError::Batch(error.to_string())))
                .collect::<Vec<_>>()
        };
        let answer = self.run(async {
            let mut object = self.pool().get().await?;
            let client: &mut tokio_postgres::Client = &mut object;
            let mut transaction = client.transaction().await?;
            lock_in_order(&transaction, turns).await?;
            let mut answers = Vec::with_capacity(turns.len());
            for (turn, stacks) in turns {
                let savepoint = transaction.savepoint("turn").await?;
                let written = write_turn(&savepoint, turn, *stacks).await;
                if written.is_ok() {
                    savepoint.commit().await?;
                } else {
                    savepoint.rollback().await?;
                }
                answers.push(written);
            }
            transaction.commit().await?;
            Ok::<_, LogError>(answers)
        });
        answer.unwrap_or_else(|error| whole_batch_failed(&error))
    }

    /// Every stored scene, oldest first.
    pub fn scenes(&self) -> Result<Vec<SceneRow>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let rows = client
                .query(
                    "SELECT id, name, image_hash, input_json, head_version, created_at, operator FROM scenes ORDER BY id",
                    &[],
                )
                .await?;
            Ok(rows
                .iter()
                .map(|row| SceneRow {
                    key: SceneKey(row.get(0)),
                    name: row.get(1),
                    image_hash: row.get(2),
                    input_json: row.get(3),
                    head: VersionKey(row.get(4)),
                    created_at: row.get(5),
                    operator: row.get(6),
                })
                .collect())
        })
    }

    /// One version's stored state, and its parent.
    pub fn version(
        &self,
        version: VersionKey,
    ) -> Result<(StateRecord, Option<VersionKey>), LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let row = client
                .query_opt(
                    "SELECT b.bytes, v.summary_json, v.engine_state, v.parent_id, v.model
                     FROM scene_versions v JOIN blobs b ON b.hash = v.labels_hash WHERE v.id = $1",
                    &[&version.0],
                )
                .await?
                .ok_or(LogError::Missing {
                    what: "scene version",
                    id: version.0,
                })?;
            Ok((
                state_of(&row, 0, 1, 2, 4),
                row.get::<_, Option<i64>>(3).map(VersionKey),
            ))
        })
    }

    /// Bytes of a stored blob.
    pub fn blob(&self, hash: &str) -> Result<Vec<u8>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            client
                .query_opt("SELECT bytes FROM blobs WHERE hash = $1", &[&hash])
                .await?
                .map(|row| row.get(0))
                .ok_or(LogError::Corrupt(format!("blob {hash} is missing")))
        })
    }

    /// Every conversation, oldest first.
    pub fn conversations(&self) -> Result<Vec<ConversationRow>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let rows = client
                .query(
                    "SELECT id, scene_id, operator, opened_at, applied_stack, redo_stack FROM conversations ORDER BY id",
                    &[],
                )
                .await?;
            rows.iter()
                .map(|row| {
                    Ok(ConversationRow {
                        key: ConversationKey(row.get(0)),
                        scene: SceneKey(row.get(1)),
                        operator: row.get(2),
                        opened_at: row.get(3),
                        applied_stack: parse_stack(row.get(4))?,
                        redo_stack: parse_stack(row.get(5))?,
                    })
                })
                .collect()
        })
    }

    /// The turns of one conversation, in order.
    pub fn turns(&self, conversation: ConversationKey) -> Result<Vec<TurnRow>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let rows = client
                .query(
                    "SELECT id, conversation_id, kind, text, focus_json, status, constraints_json, result_json, scene_version, operator, created_at, row_schema, answer_json
                     FROM turns WHERE conversation_id = $1 ORDER BY id",
                    &[&conversation.0],
                )
                .await?;
            Ok(rows
                .iter()
                .map(|row| TurnRow {
                    key: TurnKey(row.get(0)),
                    conversation: ConversationKey(row.get(1)),
                    kind: row.get(2),
                    text: row.get(3),
                    focus_json: row.get(4),
                    status: row.get(5),
                    constraints_json: row.get(6),
                    result_json: row.get(7),
                    scene_version: row.get::<_, Option<i64>>(8).map(VersionKey),
                    answer_json: row.get(12),
                    operator: row.get(9),
                    created_at: row.get(10),
                    row_schema: row.get(11),
                })
                .collect())
        })
    }

    /// The pending change of a conversation, if any.
    pub fn pending(&self, conversation: ConversationKey) -> Result<Option<PendingRow>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let row = client
                .query_opt(
                    "SELECT p.turn_id, p.base_version, b.bytes, p.summary_json, p.engine_state, p.reason, p.changes_json, p.model
                     FROM pending_changes p JOIN blobs b ON b.hash = p.labels_hash WHERE p.conversation_id = $1",
                    &[&conversation.0],
                )
                .await?;
            Ok(row.map(|row| PendingRow {
                conversation,
                turn: TurnKey(row.get(0)),
                base: VersionKey(row.get(1)),
                state: state_of(&row, 2, 3, 4, 7),
                reason: row.get(5),
                changes_json: row.get(6),
            }))
        })
    }

    /// Every training example that counts (not undone), oldest first.
    pub fn training_examples(&self) -> Result<Vec<ExampleRow>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let rows = client
                .query(
                    "SELECT e.id, e.scene_id, s.name, e.version_id, e.turn_id, e.image_hash, e.labels_before_hash,
                            e.labels_after_hash, e.utterance, e.constraints_json, e.operator, e.created_at, e.row_schema,
                            e.confirmed_by
                     FROM training_examples e JOIN scenes s ON s.id = e.scene_id WHERE e.active = 1 ORDER BY e.id",
                    &[],
                )
                .await?;
            Ok(rows
                .iter()
                .map(|row| ExampleRow {
                    id: row.get(0),
                    scene: SceneKey(row.get(1)),
                    scene_name: row.get(2),
                    version: VersionKey(row.get(3)),
                    turn: TurnKey(row.get(4)),
                    image_hash: row.get(5),
                    labels_before_hash: row.get(6),
                    labels_after_hash: row.get(7),
                    utterance: row.get(8),
                    constraints_json: row.get(9),
                    operator: row.get(10),
                    created_at: row.get(11),
                    row_schema: row.get(12),
                    confirmed_by: row.get(13),
                })
                .collect())
        })
    }

    /// Number of turns stored in total.
    pub fn turn_count(&self) -> Result<i64, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            Ok(client
                .query_one("SELECT COUNT(*) FROM turns", &[])
                .await?
                .get(0))
        })
    }

    /// Undone corrections (scene name, version, utterance), oldest first.
    pub fn undone_examples(&self) -> Result<Vec<(String, i64, String)>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let rows = client
                .query(
                    "SELECT s.name, e.version_id, e.utterance FROM training_examples e JOIN scenes s ON s.id = e.scene_id
                     WHERE e.active = 0 ORDER BY e.id",
                    &[],
                )
                .await?;
            Ok(rows.iter().map(|row| (row.get(0), row.get(1), row.get(2))).collect())
        })
    }

    /// Rejected proposals (scene name, the rejecting turn's text), oldest first.
    pub fn rejected_turns(&self) -> Result<Vec<(String, String)>, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let rows = client
                .query(
                    "SELECT s.name, t.text FROM turns t JOIN conversations c ON c.id = t.conversation_id
                     JOIN scenes s ON s.id = c.scene_id WHERE t.kind = 'reject' ORDER BY t.id",
                    &[],
                )
                .await?;
            Ok(rows.iter().map(|row| (row.get(0), row.get(1))).collect())
        })
    }

    /// "ok" when every scene's head and every version's labels are present; otherwise what is missing.
    pub fn integrity_check(&self) -> Result<String, LogError> {
        self.run(async {
            let client = self.pool().get().await?;
            let headless: i64 = client
                .query_one(
                    "SELECT COUNT(*) FROM scenes s LEFT JOIN scene_versions v ON v.id = s.head_version
                     WHERE v.id IS NULL OR v.scene_id <> s.id",
                    &[],
                )
                .await?
                .get(0);
            Ok(if headless == 0 {
                "ok".to_string()
            } else {
                format!("{headless} scene(s) without a head version of their own")
            })
        })
    }
}
