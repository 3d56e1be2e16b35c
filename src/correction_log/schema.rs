//! The correction log's schema, as an ordered list of SQL migrations, and the code that applies them.
//!
//! Owns: the table layout, the `schema_version` table and the rule that migrations run in order, each in
//! its own transaction, exactly once.
//! Must not: hold queries used at run time; those live in `store.rs`.

use rusqlite::Connection;

use super::LogError;

/// The schema version this build writes; every stored row carries the version it was written under.
pub const LOG_SCHEMA_VERSION: i64 = 4;

/// Migration `n` (1-based) moves the database from version `n - 1` to version `n`.
const MIGRATIONS: &[&str] = &[
    // Version 1: blobs, scenes, versions, conversations, turns, pending changes, training examples.
    r#"
    CREATE TABLE blobs (
        hash TEXT PRIMARY KEY,          -- lower-case hex SHA-256 of bytes
        bytes BLOB NOT NULL
    );
    CREATE TABLE scenes (
        id INTEGER PRIMARY KEY,
        name TEXT NOT NULL,
        image_hash TEXT NOT NULL REFERENCES blobs(hash),
        input_json TEXT NOT NULL,       -- what was registered besides the image (depth, scores, detections)
        head_version INTEGER,           -- the version now in force
        created_at TEXT NOT NULL,
        operator TEXT NOT NULL,
        row_schema INTEGER NOT NULL
    );
    CREATE TABLE scene_versions (
        id INTEGER PRIMARY KEY,
        scene_id INTEGER NOT NULL REFERENCES scenes(id),
        parent_id INTEGER REFERENCES scene_versions(id),
        labels_hash TEXT NOT NULL REFERENCES blobs(hash),
        summary_json TEXT NOT NULL,
        engine_state BLOB NOT NULL,
        turn_id INTEGER,                -- the turn that produced it; NULL for the registered version
        created_at TEXT NOT NULL,
        row_schema INTEGER NOT NULL
    );
    CREATE TABLE conversations (
        id INTEGER PRIMARY KEY,
        scene_id INTEGER NOT NULL REFERENCES scenes(id),
        operator TEXT NOT NULL,
        opened_at TEXT NOT NULL,
        applied_stack TEXT NOT NULL,    -- JSON array of version ids this conversation made and has not undone
        redo_stack TEXT NOT NULL,       -- JSON array of version ids undone and not yet redone
        row_schema INTEGER NOT NULL
    );
    CREATE TABLE turns (
        id INTEGER PRIMARY KEY,
        conversation_id INTEGER NOT NULL REFERENCES conversations(id),
        kind TEXT NOT NULL,             -- utterance, confirm, reject, undo, redo
        text TEXT NOT NULL,
        focus_json TEXT,
        status TEXT NOT NULL,
        constraints_json TEXT NOT NULL,
        result_json TEXT NOT NULL,
        scene_version INTEGER,
        operator TEXT NOT NULL,
        created_at TEXT NOT NULL,
        row_schema INTEGER NOT NULL
    );
    CREATE INDEX turns_by_conversation ON turns(conversation_id, id);
    CREATE TABLE pending_changes (
        id INTEGER PRIMARY KEY,
        conversation_id INTEGER NOT NULL UNIQUE REFERENCES conversations(id),
        turn_id INTEGER NOT NULL REFERENCES turns(id),
        base_version INTEGER NOT NULL,
        labels_hash TEXT NOT NULL REFERENCES blobs(hash),
        summary_json TEXT NOT NULL,
        engine_state BLOB NOT NULL,
        reason TEXT NOT NULL,
        changes_json TEXT NOT NULL,
        created_at TEXT NOT NULL,
        row_schema INTEGER NOT NULL
    );
    CREATE TABLE training_examples (
        id INTEGER PRIMARY KEY,
        scene_id INTEGER NOT NULL REFERENCES scenes(id),
        version_id INTEGER NOT NULL UNIQUE REFERENCES scene_versions(id),
        turn_id INTEGER NOT NULL REFERENCES turns(id),
        image_hash TEXT NOT NULL REFERENCES blobs(hash),
        labels_before_hash TEXT NOT NULL REFERENCES blobs(hash),
        labels_after_hash TEXT NOT NULL REFERENCES blobs(hash),
        utterance TEXT NOT NULL,
        constraints_json TEXT NOT NULL,
        operator TEXT NOT NULL,
        created_at TEXT NOT NULL,
        active INTEGER NOT NULL,        -- 0 while the correction is undone
        row_schema INTEGER NOT NULL
    );
    "#,
    // Version 2: which classifier model produced each version (and each pending change); NULL where it was
    // not recorded (every row written under version 1).
    r#"
    ALTER TABLE scene_versions ADD COLUMN model TEXT;
    ALTER TABLE pending_changes ADD COLUMN model TEXT;
    "#,
    // Version 3: who confirmed a change that was held for confirmation (NULL where none was needed, and
    // on rows written before version 3).
    r#"
    ALTER TABLE training_examples ADD COLUMN confirmed_by TEXT;
    "#,
    // Version 4: the question a turn answered and the candidate it chose (JSON), so that "no, the other
    // one" can be said through any replica and after a restart; NULL on turns that answered no question
    // and on rows written before version 4.
    r#"
    ALTER TABLE turns ADD COLUMN answer_json TEXT;
    "#,
];

/// Opens pragmas for durability and brings the schema up to `LOG_SCHEMA_VERSION`.
pub fn prepare(connection: &mut Connection) -> Result<(), LogError> {
    prepare_up_to(connection, MIGRATIONS.len())
}

/// As `prepare`, applying migrations only up to version `target` (tests build old databases with it).
pub(crate) fn prepare_up_to(connection: &mut Connection, target: usize) -> Result<(), LogError> {
    connection.pragma_update(None, "journal_mode", "WAL")?;
    connection.pragma_update(None, "synchronous", "FULL")?;
    connection.pragma_update(None, "foreign_keys", "ON")?;
    connection.busy_timeout(std::time::Duration::from_secs(5))?;
    connection.execute_batch(
        "CREATE TABLE IF NOT EXISTS schema_version (version INTEGER NOT NULL, applied_at TEXT NOT NULL);",
    )?;
    let current: i64 = connection.query_row(
        "SELECT COALESCE(MAX(version), 0) FROM schema_version",
        [],
        |row| row.get(0),
    )?;
    if current > MIGRATIONS.len() as i64 {
        return Err(LogError::NewerSchema {
            found: current,
            supported: MIGRATIONS.len() as i64,
        });
    }
    for (index, sql) in MIGRATIONS
        .iter()
        .enumerate()
        .take(target)
        .skip(current as usize)
    {
        let version = index as i64 + 1;
        let transaction = connection.transaction()?;
        transaction.execute_batch(sql)?;
        transaction.execute(
            "INSERT INTO schema_version (version, applied_at) VALUES (?1, ?2)",
            rusqlite::params![version, super::now_text()],
        )?;
        transaction.commit()?;
    }
    Ok(())
}

/// The schema version recorded in the database.
pub fn recorded_version(connection: &Connection) -> Result<i64, LogError> {
    Ok(connection.query_row(
        "SELECT COALESCE(MAX(version), 0) FROM schema_version",
        [],
        |row| row.get(0),
    )?)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn migrations_run_once_and_record_the_version() {
        let mut connection = Connection::open_in_memory().unwrap();
        prepare(&mut connection).unwrap();
        prepare(&mut connection).unwrap();
        assert_eq!(recorded_version(&connection).unwrap(), LOG_SCHEMA_VERSION);
        let rows: i64 = connection
            .query_row("SELECT COUNT(*) FROM schema_version", [], |row| row.get(0))
            .unwrap();
        assert_eq!(rows, MIGRATIONS.len() as i64);
    }

    #[test]
    fn a_version_1_database_migrates_and_keeps_its_rows() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("log.sqlite");
        {
            // A log as the first release wrote it: migration 1 only, one scene with one version.
            let connection = Connection::open(&path).unwrap();
            connection.execute_batch(MIGRATIONS[0]).unwrap();
            connection
                .execute_batch(
                    "CREATE TABLE schema_version (version INTEGER NOT NULL, applied_at TEXT NOT NULL);
                     INSERT INTO schema_version VALUES (1, 'then');
                     INSERT INTO blobs VALUES ('aa', x'0102'), ('bb', x'0304');
                     INSERT INTO scenes VALUES (1, 'juniper-lane-hall', 'aa', '{}', 1, 'then', 'mira', 1);
                     INSERT INTO scene_versions VALUES (1, 1, NULL, 'bb', '{\"room\":1}', x'09', NULL, 'then', 1);",
                )
                .unwrap();
        }
        let mut log = crate::CorrectionLog::open(&path).unwrap();
        assert_eq!(log.schema_version().unwrap(), LOG_SCHEMA_VERSION);
        let (old, parent) = log.version(crate::VersionKey(1)).unwrap();
        assert_eq!(parent, None);
        assert_eq!(old.labels_png, vec![3, 4]);
        assert_eq!(old.summary_json, "{\"room\":1}");
        assert_eq!(old.model, None, "not recorded before schema 2");
        // A version made after the migration records its model.
        let scene = crate::SceneKey(1);
        let conversation = log.open_conversation(scene, "mira").unwrap().key;
        let state = crate::StateRecord {
            labels_png: vec![5],
            summary_json: "{}".into(),
            engine_state: vec![],
            model: Some("0123456789ab".into()),
        };
        let (_, version) = log
            .commit_turn(
                &crate::NewTurn {
                    conversation,
                    kind: "utterance",
                    text: "that's a rug",
                    focus_json: None,
                    status: "applied",
                    constraints_json: "[]",
                    result_json: "{}",
                    answer_json: None,
                    operator: "mira",
                    effect: crate::TurnEffect::NewVersion {
                        base: crate::VersionKey(1),
                        state: state.clone(),
                        utterance: "that's a rug".into(),
                        constraints_json: "[]".into(),
                    },
                },
                None,
            )
            .unwrap();
        assert_eq!(log.version(version.unwrap()).unwrap().0, state);
        assert_eq!(log.integrity_check().unwrap(), "ok");
    }

    #[test]
    fn a_version_1_database_with_rows_migrates_and_keeps_them() {
        let mut connection = Connection::open_in_memory().unwrap();
        prepare_up_to(&mut connection, 1).unwrap();
        assert_eq!(recorded_version(&connection).unwrap(), 1);
        connection
            .execute_batch(
                "INSERT INTO blobs (hash, bytes) VALUES ('h', x'00');
                 INSERT INTO scenes (id, name, image_hash, input_json, head_version, created_at, operator, row_schema)
                     VALUES (1, 'hall', 'h', '{}', 1, 't', 'mira', 1);
                 INSERT INTO scene_versions (id, scene_id, parent_id, labels_hash, summary_json, engine_state, turn_id, created_at, row_schema)
                     VALUES (1, 1, NULL, 'h', '{}', x'', NULL, 't', 1);
                 INSERT INTO conversations (id, scene_id, operator, opened_at, applied_stack, redo_stack, row_schema)
                     VALUES (1, 1, 'mira', 't', '[]', '[]', 1);
                 INSERT INTO turns (id, conversation_id, kind, text, focus_json, status, constraints_json, result_json, scene_version, operator, created_at, row_schema)
                     VALUES (1, 1, 'utterance', 'paint mug', NULL, 'applied', '[]', '{}', 1, 'mira', 't', 1);
                 INSERT INTO training_examples (scene_id, version_id, turn_id, image_hash, labels_before_hash, labels_after_hash, utterance, constraints_json, operator, created_at, active, row_schema)
                     VALUES (1, 1, 1, 'h', 'h', 'h', 'paint mug', '[]', 'mira', 't', 1, 1);",
            )
            .unwrap();
        prepare(&mut connection).unwrap();
        assert_eq!(recorded_version(&connection).unwrap(), LOG_SCHEMA_VERSION);
        let (operator, confirmed_by): (String, Option<String>) = connection
            .query_row(
                "SELECT operator, confirmed_by FROM training_examples",
                [],
                |row| Ok((row.get(0)?, row.get(1)?)),
            )
            .unwrap();
        assert_eq!((operator.as_str(), confirmed_by), ("mira", None));
        // Schema 4: a turn written before it answered no question, as far as the log knows.
        let answer: Option<String> = connection
            .query_row("SELECT answer_json FROM turns WHERE id = 1", [], |row| {
                row.get(0)
            })
            .unwrap();
        assert_eq!(answer, None);
    }

    #[test]
    fn a_version_3_database_migrates_and_its_turns_answered_no_question() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("log.sqlite");
        {
            let mut connection = Connection::open(&path).unwrap();
            prepare_up_to(&mut connection, 3).unwrap();
            connection
                .execute_batch(
                    "INSERT INTO blobs (hash, bytes) VALUES ('h', x'00');
                     INSERT INTO scenes (id, name, image_hash, input_json, head_version, created_at, operator, row_schema)
                         VALUES (1, 'landing', 'h', '{}', 1, 't', 'ola', 3);
                     INSERT INTO scene_versions (id, scene_id, parent_id, labels_hash, summary_json, engine_state, turn_id, created_at, row_schema, model)
                         VALUES (1, 1, NULL, 'h', '{}', x'', NULL, 't', 3, NULL);
                     INSERT INTO conversations (id, scene_id, operator, opened_at, applied_stack, redo_stack, row_schema)
                         VALUES (1, 1, 'ola', 't', '[]', '[]', 3);
                     INSERT INTO turns (id, conversation_id, kind, text, focus_json, status, constraints_json, result_json, scene_version, operator, created_at, row_schema)
                         VALUES (1, 1, 'utterance', 'the second one', NULL, 'applied', '[]', '{}', 1, 'ola', 't', 3);",
                )
                .unwrap();
        }
        let mut log = crate::CorrectionLog::open(&path).unwrap();
        assert_eq!(log.schema_version().unwrap(), 4);
        let conversation = crate::ConversationKey(1);
        let (_, _) = log
            .commit_turn(
                &crate::NewTurn {
                    conversation,
                    kind: "utterance",
                    text: "the first one",
                    focus_json: None,
                    status: "needs_clarification",
                    constraints_json: "[]",
                    result_json: "{}",
                    answer_json: Some("{\"chosen\":0}"),
                    operator: "ola",
                    effect: crate::TurnEffect::None,
                },
                None,
            )
            .unwrap();
        let answers: Vec<Option<String>> = log
            .turns(conversation)
            .unwrap()
            .into_iter()
            .map(|turn| turn.answer_json)
            .collect();
        assert_eq!(answers, vec![None, Some("{\"chosen\":0}".to_string())]);
    }

    #[test]
    fn a_newer_database_is_refused() {
        let mut connection = Connection::open_in_memory().unwrap();
        prepare(&mut connection).unwrap();
        connection
            .execute(
                "INSERT INTO schema_version (version, applied_at) VALUES (99, 'later')",
                [],
            )
            .unwrap();
        assert!(matches!(
            prepare(&mut connection),
            Err(LogError::NewerSchema { found: 99, .. })
        ));
    }
}
