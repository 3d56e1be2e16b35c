//! The log's queries: registering scenes, opening conversations, committing turns, reading everything back.
//!
//! Owns: `SqliteLog` (one SQLite connection) and the row types both backends return.
//! Must not: interpret summaries or engine state, or decide whether a correction is allowed; callers decide,
//! the log records. The one check made here is that a new version still sits on the scene's head.

use std::path::{Path, PathBuf};

use rusqlite::{params, Connection, OptionalExtension};
use sha2::{Digest, Sha256};

use super::schema::{self, LOG_SCHEMA_VERSION};
use super::{now_text, ConversationKey, LogError, SceneKey, TurnKey, VersionKey};

/// A scene labelling as stored: the label map as index PNG bytes, the summary as JSON, engine state as
/// bytes, and the id of the classifier model that produced it (`None`: not recorded, as in rows written
/// before schema 2).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct StateRecord {
    pub labels_png: Vec<u8>,
    pub summary_json: String,
    pub engine_state: Vec<u8>,
    pub model: Option<String>,
}

/// A scene to register.
#[derive(Clone, Copy, Debug)]
pub struct NewScene<'a> {
    pub name: &'a str,
    pub image_png: &'a [u8],
    pub input_json: &'a str,
    /// Further registered parts (depth PNG, NPY scores, label map PNG) stored as blobs; `input_json` names
    /// them by `blob_hash`.
    pub parts: &'a [&'a [u8]],
    pub operator: &'a str,
    pub state: &'a StateRecord,
}

/// One turn to record, with what it does to the scene.
#[derive(Clone, Debug)]
pub struct NewTurn<'a> {
    pub conversation: ConversationKey,
    pub kind: &'a str,
    pub text: &'a str,
    pub focus_json: Option<&'a str>,
    pub status: &'a str,
    pub constraints_json: &'a str,
    pub result_json: &'a str,
    /// The question this turn answered and the candidate chosen (JSON), for "no, the other one".
    pub answer_json: Option<&'a str>,
    pub operator: &'a str,
    pub effect: TurnEffect,
}

/// A conversation's undo and redo stacks as a turn leaves them (`None`: unchanged).
pub type TurnStacks<'a> = Option<(&'a [VersionKey], &'a [VersionKey])>;

/// What a turn does to its scene and conversation, all inside the turn's transaction.
#[derive(Clone, Debug)]
pub enum TurnEffect {
    /// Nothing changes (not understood, a question back, nothing to change).
    None,
    /// A new version on top of `base`, which must be the scene's head; it becomes the head, and a training
    /// example is written from the labels before and after. A pending change of the conversation is cleared.
    NewVersion {
        base: VersionKey,
        state: StateRecord,
        utterance: String,
        constraints_json: String,
    },
    /// A change held for confirmation (replacing any earlier one of the conversation).
    Pending {
        base: VersionKey,
        state: StateRecord,
        reason: String,
        changes_json: String,
    },
    /// The conversation's pending change is dropped.
    ClearPending,
    /// The head moves to `to` (undo or redo); the training example of `deactivate` stops counting and the
    /// one of `activate` counts again.
    MoveHead {
        from: VersionKey,
        to: VersionKey,
        deactivate: Option<VersionKey>,
        activate: Option<VersionKey>,
    },
}

/// A stored scene.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SceneRow {
    pub key: SceneKey,
    pub name: String,
    pub image_hash: String,
    pub input_json: String,
    pub head: VersionKey,
    pub created_at: String,
    pub operator: String,
}

/// A stored conversation.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ConversationRow {
    pub key: ConversationKey,
    pub scene: SceneKey,
    pub operator: String,
    pub opened_at: String,
    pub applied_stack: Vec<VersionKey>,
    pub redo_stack: Vec<VersionKey>,
}

/// A stored turn.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TurnRow {
    pub key: TurnKey,
    pub conversation: ConversationKey,
    pub kind: String,
    pub text: String,
    pub focus_json: Option<String>,
    pub status: String,
    pub constraints_json: String,
    pub result_json: String,
    pub scene_version: Option<VersionKey>,
    /// The question this turn answered and the candidate chosen (JSON); `None` for most turns.
    pub answer_json: Option<String>,
    pub operator: String,
    pub created_at: String,
    pub row_schema: i64,
}

/// A stored pending change.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PendingRow {
    pub conversation: ConversationKey,
    pub turn: TurnKey,
    pub base: VersionKey,
    pub state: StateRecord,
    pub reason: String,
    pub changes_json: String,
}

/// A stored training example (blobs by hash; read them with `blob`).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ExampleRow {
    pub id: i64,
    pub scene: SceneKey,
    pub scene_name: String,
    pub version: VersionKey,
    pub turn: TurnKey,
    pub image_hash: String,
    pub labels_before_hash: String,
    pub labels_after_hash: String,
    pub utterance: String,
    pub constraints_json: String,
    /// The operator who said the utterance.
    pub operator: String,
    /// The operator who confirmed the change, when it was held for confirmation (schema 2 on).
    pub confirmed_by: Option<String>,
    pub created_at: String,
    pub row_schema: i64,
}

/// The rows of one turn, written through `transaction` (the caller opens and commits it).
fn write_turn(
    transaction: &Connection,
    turn: &NewTurn<'_>,
    stacks: TurnStacks<'_>,
) -> Result<(TurnKey, Option<VersionKey>), LogError> {
    let now = now_text();
    let scene: i64 = transaction
        .query_row(
            "SELECT scene_id FROM conversations WHERE id = ?1",
            [turn.conversation.0],
            |row| row.get(0),
        )
        .optional()?
        .ok_or(LogError::Missing {
            what: "conversation",
            id: turn.conversation.0,
        })?;
    let head: i64 = transaction.query_row(
        "SELECT head_version FROM scenes WHERE id = ?1",
        [scene],
        |row| row.get(0),
    )?;
    transaction.execute(
        "INSERT INTO turns (conversation_id, kind, text, focus_json, status, constraints_json, result_json, scene_version, operator, created_at, row_schema, answer_json)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12)",
        params![
            turn.conversation.0, turn.kind, turn.text, turn.focus_json, turn.status,
            turn.constraints_json, turn.result_json, head, turn.operator, now, LOG_SCHEMA_VERSION,
            turn.answer_json
        ],
    )?;
    let turn_key = TurnKey(transaction.last_insert_rowid());
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
            // A confirmation applies a change someone said earlier: the example names who said it (the
            // operator of the turn that was held) and, apart, who confirmed it.
            let held_by: Option<String> = if turn.kind == "confirm" {
                transaction
                    .query_row(
                        "SELECT t.operator FROM pending_changes p JOIN turns t ON t.id = p.turn_id
                         WHERE p.conversation_id = ?1",
                        [turn.conversation.0],
                        |row| row.get(0),
                    )
                    .optional()?
            } else {
                None
            };
            let (said_by, confirmed_by) = match &held_by {
                Some(said_by) => (said_by.as_str(), Some(turn.operator)),
                None if turn.kind == "confirm" => (turn.operator, Some(turn.operator)),
                None => (turn.operator, None),
            };
            let labels_hash = put_blob(transaction, &state.labels_png)?;
            transaction.execute(
                "INSERT INTO scene_versions (scene_id, parent_id, labels_hash, summary_json, engine_state, turn_id, created_at, row_schema, model)
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9)",
                params![scene, base.0, labels_hash, state.summary_json, state.engine_state, turn_key.0, now, LOG_SCHEMA_VERSION, state.model],
            )?;
            let version = transaction.last_insert_rowid();
            transaction.execute(
                "UPDATE scenes SET head_version = ?1 WHERE id = ?2",
                params![version, scene],
            )?;
            transaction.execute(
                "INSERT INTO training_examples (scene_id, version_id, turn_id, image_hash, labels_before_hash, labels_after_hash, utterance, constraints_json, operator, created_at, active, row_schema, confirmed_by)
                 SELECT ?1, ?2, ?3, s.image_hash, v.labels_hash, ?4, ?5, ?6, ?7, ?8, 1, ?9, ?11
                 FROM scenes s JOIN scene_versions v ON v.id = ?10 WHERE s.id = ?1",
                params![scene, version, turn_key.0, labels_hash, utterance, constraints_json, said_by, now, LOG_SCHEMA_VERSION, base.0, confirmed_by],
            )?;
            transaction.execute(
                "DELETE FROM pending_changes WHERE conversation_id = ?1",
                [turn.conversation.0],
            )?;
            transaction.execute(
                "UPDATE turns SET scene_version = ?1 WHERE id = ?2",
                params![version, turn_key.0],
            )?;
            new_version = Some(VersionKey(version));
        }
        TurnEffect::Pending {
            base,
            state,
            reason,
            changes_json,
        } => {
            let labels_hash = put_blob(transaction, &state.labels_png)?;
            transaction.execute(
                "INSERT OR REPLACE INTO pending_changes (conversation_id, turn_id, base_version, labels_hash, summary_json, engine_state, reason, changes_json, created_at, row_schema, model)
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11)",
                params![turn.conversation.0, turn_key.0, base.0, labels_hash, state.summary_json, state.engine_state, reason, changes_json, now, LOG_SCHEMA_VERSION, state.model],
            )?;
        }
        TurnEffect::ClearPending => {
            transaction.execute(
                "DELETE FROM pending_changes WHERE conversation_id = ?1",
                [turn.conversation.0],
            )?;
        }
        TurnEffect::MoveHead {
            from,
            to,
            deactivate,
            activate,
        } => {
            if from.0 != head {
                return Err(LogError::Stale { head, base: from.0 });
            }
            transaction.execute(
                "UPDATE scenes SET head_version = ?1 WHERE id = ?2",
                params![to.0, scene],
            )?;
            if let Some(version) = deactivate {
                transaction.execute(
                    "UPDATE training_examples SET active = 0 WHERE version_id = ?1",
                    [version.0],
                )?;
            }
            if let Some(version) = activate {
                transaction.execute(
                    "UPDATE training_examples SET active = 1 WHERE version_id = ?1",
                    [version.0],
                )?;
            }
            transaction.execute(
                "UPDATE turns SET scene_version = ?1 WHERE id = ?2",
                params![to.0, turn_key.0],
            )?;
        }
    }
    if let Some((applied, redo)) = stacks {
        let mut applied = applied.to_vec();
        applied.extend(new_version);
        transaction.execute(
            "UPDATE conversations SET applied_stack = ?1, redo_stack = ?2 WHERE id = ?3",
            params![stack_text(&applied), stack_text(redo), turn.conversation.0],
        )?;
    }
    Ok((turn_key, new_version))
}

/// The correction log on SQLite: one connection on `<data dir>/...sqlite`.
pub struct SqliteLog {
    pub(super) connection: Connection,
    path: PathBuf,
}

/// The key a blob is stored under: lower-case hex SHA-256 of its bytes.
pub fn blob_hash(bytes: &[u8]) -> String {
    let digest = Sha256::digest(bytes);
    digest.iter().map(|byte| format!("{byte:02x}")).collect()
}

fn put_blob(transaction: &Connection, bytes: &[u8]) -> Result<String, LogError> {
    let hash = blob_hash(bytes);
    transaction.execute(
        "INSERT OR IGNORE INTO blobs (hash, bytes) VALUES (?1, ?2)",
        params![hash, bytes],
    )?;
    Ok(hash)
}

pub(super) fn parse_stack(text: &str) -> Result<Vec<VersionKey>, LogError> {
    serde_json::from_str(text).map_err(|error| LogError::Corrupt(format!("version stack: {error}")))
}

pub(super) fn stack_text(stack: &[VersionKey]) -> String {
    serde_json::to_string(stack).unwrap_or_else(|_| "[]".to_string())
}

impl SqliteLog {
    /// Opens (creating if needed) the log at `path`, migrating its schema.
    pub fn open(path: &Path) -> Result<SqliteLog, LogError> {
        if let Some(parent) = path.parent() {
            if !parent.as_os_str().is_empty() {
                std::fs::create_dir_all(parent).map_err(|source| LogError::Directory {
                    path: parent.to_path_buf(),
                    source,
                })?;
            }
        }
        let mut connection = Connection::open(path)?;
        schema::prepare(&mut connection)?;
        Ok(SqliteLog {
            connection,
            path: path.to_path_buf(),
        })
    }

    /// The schema version recorded in the SQLite file at `path` (0 before any migration), read without
    /// migrating it.
    pub fn recorded_version_of(path: &Path) -> Result<i64, LogError> {
        let connection =
            Connection::open_with_flags(path, rusqlite::OpenFlags::SQLITE_OPEN_READ_ONLY)?;
        let tables: i64 = connection.query_row(
            "SELECT COUNT(*) FROM sqlite_master WHERE type = 'table' AND name = 'schema_version'",
            [],
            |row| row.get(0),
        )?;
        if tables == 0 {
            return Ok(0);
        }
        schema::recorded_version(&connection)
    }

    /// Where the database file is.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The schema version recorded in the database.
    pub fn schema_version(&self) -> Result<i64, LogError> {
        schema::recorded_version(&self.connection)
    }

    /// Turns SQLite's automatic WAL checkpoint on this connection on (the default) or off; with it off,
    /// someone else must checkpoint (`BackgroundCheckpoints`) or the WAL grows until the log is closed.
    pub fn set_automatic_checkpoints(&self, on: bool) -> Result<(), LogError> {
        // 1000 pages is SQLite's default threshold (sqlite.org, "PRAGMA wal_autocheckpoint").
        self.connection
            .pragma_update(None, "wal_autocheckpoint", if on { 1000 } else { 0 })?;
        Ok(())
    }

    /// `PRAGMA integrity_check`: "ok" when the file is sound.
    pub fn integrity_check(&self) -> Result<String, LogError> {
        Ok(self
            .connection
            .query_row("PRAGMA integrity_check", [], |row| row.get(0))?)
    }

    /// Registers a scene and its first version; both are committed when this returns.
    pub fn register_scene(
        &mut self,
        scene: &NewScene<'_>,
    ) -> Result<(SceneKey, VersionKey), LogError> {
        let now = now_text();
        let transaction = self.connection.transaction()?;
        let image_hash = put_blob(&transaction, scene.image_png)?;
        for part in scene.parts {
            put_blob(&transaction, part)?;
        }
        let labels_hash = put_blob(&transaction, &scene.state.labels_png)?;
        transaction.execute(
            "INSERT INTO scenes (name, image_hash, input_json, head_version, created_at, operator, row_schema)
             VALUES (?1, ?2, ?3, NULL, ?4, ?5, ?6)",
            params![scene.name, image_hash, scene.input_json, now, scene.operator, LOG_SCHEMA_VERSION],
        )?;
        let scene_key = SceneKey(transaction.last_insert_rowid());
        transaction.execute(
            "INSERT INTO scene_versions (scene_id, parent_id, labels_hash, summary_json, engine_state, turn_id, created_at, row_schema, model)
             VALUES (?1, NULL, ?2, ?3, ?4, NULL, ?5, ?6, ?7)",
            params![scene_key.0, labels_hash, scene.state.summary_json, scene.state.engine_state, now, LOG_SCHEMA_VERSION, scene.state.model],
        )?;
        let version = VersionKey(transaction.last_insert_rowid());
        transaction.execute(
            "UPDATE scenes SET head_version = ?1 WHERE id = ?2",
            params![version.0, scene_key.0],
        )?;
        transaction.commit()?;
        Ok((scene_key, version))
    }

    /// Opens a conversation on a scene.
    pub fn open_conversation(
        &mut self,
        scene: SceneKey,
        operator: &str,
    ) -> Result<ConversationRow, LogError> {
        let now = now_text();
        let exists: Option<i64> = self
            .connection
            .query_row("SELECT id FROM scenes WHERE id = ?1", [scene.0], |row| {
                row.get(0)
            })
            .optional()?;
        if exists.is_none() {
            return Err(LogError::Missing {
                what: "scene",
                id: scene.0,
            });
        }
        self.connection.execute(
            "INSERT INTO conversations (scene_id, operator, opened_at, applied_stack, redo_stack, row_schema)
             VALUES (?1, ?2, ?3, '[]', '[]', ?4)",
            params![scene.0, operator, now, LOG_SCHEMA_VERSION],
        )?;
        Ok(ConversationRow {
            key: ConversationKey(self.connection.last_insert_rowid()),
            scene,
            operator: operator.to_string(),
            opened_at: now,
            applied_stack: Vec::new(),
            redo_stack: Vec::new(),
        })
    }

    /// Records one turn and its effect in one transaction; returns the turn key and, when a version was
    /// made, its key. The conversation's undo and redo stacks are replaced by `stacks` when given (a new
    /// version is pushed onto the given undo stack).
    pub fn commit_turn(
        &mut self,
        turn: &NewTurn<'_>,
        stacks: Option<(&[VersionKey], &[VersionKey])>,
    ) -> Result<(TurnKey, Option<VersionKey>), LogError> {
        // IMMEDIATE: the write lock is taken before the head is read, so a second writer on the same file
        // waits (busy timeout) and then reads the head the first one left, instead of failing to upgrade.
        let transaction = self
            .connection
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
        let written = write_turn(&transaction, turn, stacks)?;
        transaction.commit()?;
        Ok(written)
    }

    /// Records several turns in one transaction (group commit: one fsync for all of them). Each turn is
    /// written inside its own savepoint, so a turn that fails (a stale change, a missing conversation) leaves
    /// nothing behind and the others stand; its error is its own entry of the answer. When the transaction
    /// itself cannot be opened or committed, every turn fails and none of them exists.
    pub fn commit_turns(
        &mut self,
        turns: &[(NewTurn<'_>, TurnStacks<'_>)],
    ) -> Vec<Result<(TurnKey, Option<VersionKey>), LogError>> {
        let whole_batch_failed = |error: &rusqlite::Error, count: usize| {
            (0..count)
                .map(|_| Err(LogError::Batch(error.to_string())))
                .collect()
        };
        if let Err(error) = self.connection.execute_batch("BEGIN IMMEDIATE") {
            return whole_batch_failed(&error, turns.len());
        }
        let mut answers = Vec::with_capacity(turns.len());
        for (turn, stacks) in turns {
            if let Err(error) = self.connection.execute_batch("SAVEPOINT turn") {
                let _ = self.connection.execute_batch("ROLLBACK");
                return whole_batch_failed(&error, turns.len());
            }
            let written = write_turn(&self.connection, turn, *stacks);
            let closed = if written.is_ok() {
                self.connection.execute_batch("RELEASE turn")
            } else {
                self.connection
                    .execute_batch("ROLLBACK TO turn; RELEASE turn")
            };
            if let Err(error) = closed {
                let _ = self.connection.execute_batch("ROLLBACK");
                return whole_batch_failed(&error, turns.len());
            }
            answers.push(written);
        }
        if let Err(error) = self.connection.execute_batch("COMMIT") {
            let _ = self.connection.execute_batch("ROLLBACK");
            return whole_batch_failed(&error, turns.len());
        }
        answers
    }

    /// Every stored scene, oldest first.
    pub fn scenes(&self) -> Result<Vec<SceneRow>, LogError> {
        let mut statement = self.connection.prepare(
            "SELECT id, name, image_hash, input_json, head_version, created_at, operator FROM scenes ORDER BY id",
        )?;
        let rows = statement.query_map([], |row| {
            Ok(SceneRow {
                key: SceneKey(row.get(0)?),
                name: row.get(1)?,
                image_hash: row.get(2)?,
                input_json: row.get(3)?,
                head: VersionKey(row.get(4)?),
                created_at: row.get(5)?,
                operator: row.get(6)?,
            })
        })?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// One version's stored state, and its parent.
    pub fn version(
        &self,
        version: VersionKey,
    ) -> Result<(StateRecord, Option<VersionKey>), LogError> {
        self.connection
            .query_row(
                "SELECT b.bytes, v.summary_json, v.engine_state, v.parent_id, v.model
                 FROM scene_versions v JOIN blobs b ON b.hash = v.labels_hash WHERE v.id = ?1",
                [version.0],
                |row| {
                    Ok((
                        StateRecord {
                            labels_png: row.get(0)?,
                            summary_json: row.get(1)?,
                            engine_state: row.get(2)?,
                            model: row.get(4)?,
                        },
                        row.get::<_, Option<i64>>(3)?.map(VersionKey),
                    ))
                },
            )
            .optional()?
            .ok_or(LogError::Missing {
                what: "scene version",
                id: version.0,
            })
    }

    /// Bytes of a stored blob.
    pub fn blob(&self, hash: &str) -> Result<Vec<u8>, LogError> {
        self.connection
            .query_row("SELECT bytes FROM blobs WHERE hash = ?1", [hash], |row| {
                row.get(0)
            })
            .optional()?
            .ok_or(LogError::Corrupt(format!("blob {hash} is missing")))
    }

    /// Every conversation, oldest first.
    pub fn conversations(&self) -> Result<Vec<ConversationRow>, LogError> {
        let mut statement = self.connection.prepare(
            "SELECT id, scene_id, operator, opened_at, applied_stack, redo_stack FROM conversations ORDER BY id",
        )?;
        let raw = statement
            .query_map([], |row| {
                Ok((
                    row.get::<_, i64>(0)?,
                    row.get::<_, i64>(1)?,
                    row.get::<_, String>(2)?,
                    row.get::<_, String>(3)?,
                    row.get::<_, String>(4)?,
                    row.get::<_, String>(5)?,
                ))
            })?
            .collect::<Result<Vec<_>, _>>()?;
        raw.into_iter()
            .map(|(key, scene, operator, opened_at, applied, redo)| {
                Ok(ConversationRow {
                    key: ConversationKey(key),
                    scene: SceneKey(scene),
                    operator,
                    opened_at,
                    applied_stack: parse_stack(&applied)?,
                    redo_stack: parse_stack(&redo)?,
                })
            })
            .collect()
    }

    /// The turns of one conversation, in order.
    pub fn turns(&self, conversation: ConversationKey) -> Result<Vec<TurnRow>, LogError> {
        let mut statement = self.connection.prepare(
            "SELECT id, conversation_id, kind, text, focus_json, status, constraints_json, result_json, scene_version, operator, created_at, row_schema, answer_json
             FROM turns WHERE conversation_id = ?1 ORDER BY id",
        )?;
        let rows = statement.query_map([conversation.0], |row| {
            Ok(TurnRow {
                key: TurnKey(row.get(0)?),
                conversation: ConversationKey(row.get(1)?),
                kind: row.get(2)?,
                text: row.get(3)?,
                focus_json: row.get(4)?,
                status: row.get(5)?,
                constraints_json: row.get(6)?,
                result_json: row.get(7)?,
                scene_version: row.get::<_, Option<i64>>(8)?.map(VersionKey),
                answer_json: row.get(12)?,
                operator: row.get(9)?,
                created_at: row.get(10)?,
                row_schema: row.get(11)?,
            })
        })?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// The pending change of a conversation, if any.
    pub fn pending(&self, conversation: ConversationKey) -> Result<Option<PendingRow>, LogError> {
        Ok(self
            .connection
            .query_row(
                "SELECT p.turn_id, p.base_version, b.bytes, p.summary_json, p.engine_state, p.reason, p.changes_json, p.model
                 FROM pending_changes p JOIN blobs b ON b.hash = p.labels_hash WHERE p.conversation_id = ?1",
                [conversation.0],
                |row| {
                    Ok(PendingRow {
                        conversation,
                        turn: TurnKey(row.get(0)?),
                        base: VersionKey(row.get(1)?),
                        state: StateRecord {
                            labels_png: row.get(2)?,
                            summary_json: row.get(3)?,
                            engine_state: row.get(4)?,
                            model: row.get(7)?,
                        },
                        reason: row.get(5)?,
                        changes_json: row.get(6)?,
                    })
                },
            )
            .optional()?)
    }

    /// Every training example that counts (not undone), oldest first.
    pub fn training_examples(&self) -> Result<Vec<ExampleRow>, LogError> {
        let mut statement = self.connection.prepare(
            "SELECT e.id, e.scene_id, s.name, e.version_id, e.turn_id, e.image_hash, e.labels_before_hash,
                    e.labels_after_hash, e.utterance, e.constraints_json, e.operator, e.created_at, e.row_schema,
                    e.confirmed_by
             FROM training_examples e JOIN scenes s ON s.id = e.scene_id WHERE e.active = 1 ORDER BY e.id",
        )?;
        let rows = statement.query_map([], |row| {
            Ok(ExampleRow {
                id: row.get(0)?,
                scene: SceneKey(row.get(1)?),
                scene_name: row.get(2)?,
                version: VersionKey(row.get(3)?),
                turn: TurnKey(row.get(4)?),
                image_hash: row.get(5)?,
                labels_before_hash: row.get(6)?,
                labels_after_hash: row.get(7)?,
                utterance: row.get(8)?,
                constraints_json: row.get(9)?,
                operator: row.get(10)?,
                created_at: row.get(11)?,
                row_schema: row.get(12)?,
                confirmed_by: row.get(13)?,
            })
        })?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// Undone corrections (scene name, version, utterance), oldest first.
    pub fn undone_examples(&self) -> Result<Vec<(String, i64, String)>, LogError> {
        let mut statement = self.connection.prepare(
            "SELECT s.name, e.version_id, e.utterance FROM training_examples e JOIN scenes s ON s.id = e.scene_id
             WHERE e.active = 0 ORDER BY e.id",
        )?;
        let rows = statement.query_map([], |row| Ok((row.get(0)?, row.get(1)?, row.get(2)?)))?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// Rejected proposals (scene name, the rejecting turn's text), oldest first.
    pub fn rejected_turns(&self) -> Result<Vec<(String, String)>, LogError> {
        let mut statement = self.connection.prepare(
            "SELECT s.name, t.text FROM turns t JOIN conversations c ON c.id = t.conversation_id
             JOIN scenes s ON s.id = c.scene_id WHERE t.kind = 'reject' ORDER BY t.id",
        )?;
        let rows = statement.query_map([], |row| Ok((row.get(0)?, row.get(1)?)))?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// Number of turns stored in total.
    pub fn turn_count(&self) -> Result<i64, LogError> {
        Ok(self
            .connection
            .query_row("SELECT COUNT(*) FROM turns", [], |row| row.get(0))?)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn state(byte: u8) -> StateRecord {
        StateRecord {
            labels_png: vec![byte; 8],
            summary_json: format!("{{\"v\":{byte}}}"),
            engine_state: vec![byte],
            model: Some(format!("model-{byte}")),
        }
    }

    fn turn(conversation: ConversationKey, effect: TurnEffect) -> NewTurn<'static> {
        NewTurn {
            conversation,
            kind: "utterance",
            text: "that's the hall runner, not a towel",
            focus_json: None,
            status: "applied",
            constraints_json: "[]",
            result_json: "{}",
            answer_json: None,
            operator: "mira",
            effect,
        }
    }

    #[test]
    fn a_stale_change_writes_nothing_and_earlier_rows_stay() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("log.sqlite");
        let mut log = SqliteLog::open(&path).unwrap();
        let registered = state(1);
        let (scene, first) = log
            .register_scene(&NewScene {
                name: "juniper-lane-hall",
                image_png: &[7; 4],
                input_json: "{}",
                parts: &[],
                operator: "mira",
                state: &registered,
            })
            .unwrap();
        let conversation = log.open_conversation(scene, "mira").unwrap().key;
        let new_version = |base| TurnEffect::NewVersion {
            base,
            state: state(2),
            utterance: "that's the hall runner, not a towel".into(),
            constraints_json: "[]".into(),
        };
        let (_, second) = log
            .commit_turn(&turn(conversation, new_version(first)), Some((&[], &[])))
            .unwrap();
        let second = second.unwrap();
        // A change worked out against the first version no longer fits.
        let stale = log.commit_turn(&turn(conversation, new_version(first)), None);
        assert!(matches!(stale, Err(LogError::Stale { .. })));
        assert_eq!(log.turn_count().unwrap(), 1);
        assert_eq!(log.scenes().unwrap()[0].head, second);
        assert_eq!(log.training_examples().unwrap().len(), 1);
        // An unknown conversation is refused without side effects.
        let unknown = log.commit_turn(&turn(ConversationKey(99), TurnEffect::None), None);
        assert!(matches!(unknown, Err(LogError::Missing { .. })));
        drop(log);

        // Reopened, everything is as committed, stacks included.
        let log = SqliteLog::open(&path).unwrap();
        assert_eq!(log.integrity_check().unwrap(), "ok");
        assert_eq!(log.version(second).unwrap(), (state(2), Some(first)));
        assert_eq!(log.conversations().unwrap()[0].applied_stack, vec![second]);
        let example = &log.training_examples().unwrap()[0];
        assert_eq!(log.blob(&example.labels_before_hash).unwrap(), vec![1; 8]);
        assert_eq!(log.blob(&example.labels_after_hash).unwrap(), vec![2; 8]);
        assert_eq!(example.row_schema, LOG_SCHEMA_VERSION);
        let pragma: String = log
            .connection
            .query_row("PRAGMA journal_mode", [], |row| row.get(0))
            .unwrap();
        assert_eq!(pragma, "wal");
        // synchronous = FULL is 2 in SQLite's numbering (sqlite.org, "PRAGMA synchronous").
        let synchronous: i64 = log
            .connection
            .query_row("PRAGMA synchronous", [], |row| row.get(0))
            .unwrap();
        assert_eq!(synchronous, 2);
    }

    #[test]
    fn undo_moves_the_head_and_withdraws_the_example() {
        let directory = tempfile::tempdir().unwrap();
        let mut log = SqliteLog::open(&directory.path().join("log.sqlite")).unwrap();
        let registered = state(1);
        let (scene, first) = log
            .register_scene(&NewScene {
                name: "juniper-lane-bath",
                image_png: &[3; 4],
                input_json: "{}",
                parts: &[],
                operator: "ola",
                state: &registered,
            })
            .unwrap();
        let conversation = log.open_conversation(scene, "ola").unwrap().key;
        let (_, second) = log
            .commit_turn(
                &turn(
                    conversation,
                    TurnEffect::NewVersion {
                        base: first,
                        state: state(5),
                        utterance: "a towel".into(),
                        constraints_json: "[]".into(),
                    },
                ),
                Some((&[], &[])),
            )
            .unwrap();
        let second = second.unwrap();
        log.commit_turn(
            &turn(
                conversation,
                TurnEffect::MoveHead {
                    from: second,
                    to: first,
                    deactivate: Some(second),
                    activate: None,
                },
            ),
            Some((&[], &[second])),
        )
        .unwrap();
        assert_eq!(log.scenes().unwrap()[0].head, first);
        assert!(log.training_examples().unwrap().is_empty());
        assert_eq!(log.conversations().unwrap()[0].redo_stack, vec![second]);
    }
}
