//! The one storage interface: `CorrectionLog`, over SQLite (the embedded default, a file in the data
//! directory) or PostgreSQL (a shared server for fleets), chosen by a `LogLocation`.
//!
//! Owns: the choice of backend and the dispatch of each operation to it. Both backends keep the same rows,
//! the same numbered migrations and the same transaction rule (a turn is acknowledged only after the
//! transaction holding it has committed).
//! Must not: hold SQL of its own; each backend's queries live with it (`store.rs`, `postgres/`).

use std::path::{Path, PathBuf};

use super::postgres::PostgresLog;
use super::store::SqliteLog;
use super::{
    ConversationKey, ConversationRow, ExampleRow, LogError, NewScene, NewTurn, PendingRow,
    SceneKey, SceneListed, SceneRow, StateRecord, TurnKey, TurnMark, TurnRow, TurnStacks,
    VersionKey,
};

/// Where the log lives.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum LogLocation {
    /// A SQLite file (created with its directory when missing; migrated on open).
    Sqlite(PathBuf),
    /// A PostgreSQL server (`postgres://` or `postgresql://` address; migrated by `sayso migrate` only).
    Postgres(String),
}

impl LogLocation {
    /// A `postgres://` or `postgresql://` address names a server; anything else is a SQLite file path.
    pub fn parse(text: &str) -> LogLocation {
        if text.starts_with("postgres://") || text.starts_with("postgresql://") {
            LogLocation::Postgres(text.to_string())
        } else {
            LogLocation::Sqlite(PathBuf::from(text))
        }
    }

    /// For messages: the file path, or the server address without its password.
    pub fn shown(&self) -> String {
        match self {
            LogLocation::Sqlite(path) => path.display().to_string(),
            LogLocation::Postgres(url) => super::postgres::redact(url),
        }
    }
}

/// The correction log, on whichever backend it was opened on.
pub enum CorrectionLog {
    Sqlite(SqliteLog),
    Postgres(PostgresLog),
}

macro_rules! dispatch {
    ($self:ident, $log:ident => $call:expr) => {
        match $self {
            CorrectionLog::Sqlite($log) => $call,
            CorrectionLog::Postgres($log) => $call,
        }
    };
}

impl CorrectionLog {
    /// Opens (creating if needed) a SQLite log at `path`, migrating its schema.
    pub fn open(path: &Path) -> Result<CorrectionLog, LogError> {
        Ok(CorrectionLog::Sqlite(SqliteLog::open(path)?))
    }

    /// Opens the log at `location`: a SQLite file is migrated on open; a PostgreSQL database must already
    /// be at this build's schema (`LogError::NotMigrated` otherwise).
    pub fn connect(location: &LogLocation) -> Result<CorrectionLog, LogError> {
        match location {
            LogLocation::Sqlite(path) => CorrectionLog::open(path),
            LogLocation::Postgres(url) => Ok(CorrectionLog::Postgres(PostgresLog::connect(url)?)),
        }
    }

    /// Brings the log at `location` up to this build's schema; returns it and the versions applied.
    pub fn migrate(location: &LogLocation) -> Result<(CorrectionLog, Vec<i64>), LogError> {
        match location {
            LogLocation::Sqlite(path) => {
                let before = if path.exists() {
                    Some(SqliteLog::recorded_version_of(path)?)
                } else {
                    None
                };
                let log = SqliteLog::open(path)?;
                let after = log.schema_version()?;
                let from = before.unwrap_or(0);
                Ok((CorrectionLog::Sqlite(log), (from + 1..=after).collect()))
            }
            LogLocation::Postgres(url) => {
                let (log, applied) = PostgresLog::migrate(url)?;
                Ok((CorrectionLog::Postgres(log), applied))
            }
        }
    }

    /// The SQLite file, when the log is one.
    pub fn path(&self) -> Option<&Path> {
        match self {
            CorrectionLog::Sqlite(log) => Some(log.path()),
            CorrectionLog::Postgres(_) => None,
        }
    }

    /// For messages: the file path, or the server address without its password.
    pub fn shown(&self) -> String {
        match self {
            CorrectionLog::Sqlite(log) => log.path().display().to_string(),
            CorrectionLog::Postgres(log) => log.shown().to_string(),
        }
    }

    /// The schema version recorded in the database.
    pub fn schema_version(&self) -> Result<i64, LogError> {
        dispatch!(self, log => log.schema_version())
    }

    /// A soundness check of the stored rows: "ok" when sound (SQLite's `PRAGMA integrity_check`; on
    /// PostgreSQL, every scene's head is one of its own versions).
    pub fn integrity_check(&self) -> Result<String, LogError> {
        dispatch!(self, log => log.integrity_check())
    }

    /// Registers a scene and its first version; both are committed when this returns.
    pub fn register_scene(
        &mut self,
        scene: &NewScene<'_>,
    ) -> Result<(SceneKey, VersionKey), LogError> {
        dispatch!(self, log => log.register_scene(scene))
    }

    /// Opens a conversation on a scene.
    pub fn open_conversation(
        &mut self,
        scene: SceneKey,
        operator: &str,
    ) -> Result<ConversationRow, LogError> {
        dispatch!(self, log => log.open_conversation(scene, operator))
    }

    /// Records one turn and its effect in one transaction; returns the turn key and, when a version was
    /// made, its key. The conversation's undo and redo stacks are replaced by `stacks` when given (a new
    /// version is pushed onto the given undo stack).
    pub fn commit_turn(
        &mut self,
        turn: &NewTurn<'_>,
        stacks: TurnStacks<'_>,
    ) -> Result<(TurnKey, Option<VersionKey>), LogError> {
        match self {
            CorrectionLog::Sqlite(log) => log.commit_turn(turn, stacks),
            CorrectionLog::Postgres(log) => log
                .commit_turns(&[(turn.clone(), stacks)])
                .pop()
                .unwrap_or(Err(LogError::Batch("no answer".into()))),
        }
    }

    /// Records several turns in one transaction (group commit), each in its own savepoint: a turn that
    /// fails leaves nothing behind and the others stand; when the transaction itself fails, every turn
    /// fails and none of them exists.
    pub fn commit_turns(
        &mut self,
        turns: &[(NewTurn<'_>, TurnStacks<'_>)],
    ) -> Vec<Result<(TurnKey, Option<VersionKey>), LogError>> {
        dispatch!(self, log => log.commit_turns(turns))
    }

    /// Every stored scene, oldest first.
    pub fn scenes(&self) -> Result<Vec<SceneRow>, LogError> {
        dispatch!(self, log => log.scenes())
    }

    /// One version's stored state, and its parent.
    pub fn version(
        &self,
        version: VersionKey,
    ) -> Result<(StateRecord, Option<VersionKey>), LogError> {
        dispatch!(self, log => log.version(version))
    }

    /// Bytes of a stored blob.
    pub fn blob(&self, hash: &str) -> Result<Vec<u8>, LogError> {
        dispatch!(self, log => log.blob(hash))
    }

    /// Every conversation, oldest first.
    pub fn conversations(&self) -> Result<Vec<ConversationRow>, LogError> {
        dispatch!(self, log => log.conversations())
    }

    /// The turns of one conversation, in order.
    pub fn turns(&self, conversation: ConversationKey) -> Result<Vec<TurnRow>, LogError> {
        dispatch!(self, log => log.turns(conversation))
    }

    /// The pending change of a conversation, if any.
    pub fn pending(&self, conversation: ConversationKey) -> Result<Option<PendingRow>, LogError> {
        dispatch!(self, log => log.pending(conversation))
    }

    /// Every training example that counts (not undone), oldest first.
    pub fn training_examples(&self) -> Result<Vec<ExampleRow>, LogError> {
        dispatch!(self, log => log.training_examples())
    }

    /// Number of turns stored in total.
    pub fn turn_count(&self) -> Result<i64, LogError> {
        dispatch!(self, log => log.turn_count())
    }

    /// Undone corrections (scene name, version, utterance), oldest first.
    pub fn undone_examples(&self) -> Result<Vec<(String, i64, String)>, LogError> {
        dispatch!(self, log => log.undone_examples())
    }

    /// Rejected proposals (scene name, the rejecting turn's text), oldest first.
    pub fn rejected_turns(&self) -> Result<Vec<(String, String)>, LogError> {
        dispatch!(self, log => log.rejected_turns())
    }

    /// Whether other processes may write to this log while it is open (a PostgreSQL database shared by
    /// replicas); a SQLite file belongs to one process.
    pub fn is_shared(&self) -> bool {
        matches!(self, CorrectionLog::Postgres(_))
    }

    /// One stored scene, if there is one with this key.
    pub fn scene(&self, scene: SceneKey) -> Result<Option<SceneRow>, LogError> {
        dispatch!(self, log => log.scene(scene))
    }

    /// A scene's head version, if there is such a scene.
    pub fn scene_head(&self, scene: SceneKey) -> Result<Option<VersionKey>, LogError> {
        dispatch!(self, log => log.scene_head(scene))
    }

    /// One stored conversation, if there is one with this key.
    pub fn conversation(
        &self,
        conversation: ConversationKey,
    ) -> Result<Option<ConversationRow>, LogError> {
        dispatch!(self, log => log.conversation(conversation))
    }

    /// How many turns a conversation has and the latest one.
    pub fn turn_mark(&self, conversation: ConversationKey) -> Result<TurnMark, LogError> {
        dispatch!(self, log => log.turn_mark(conversation))
    }

    /// Every scene's key, ascending.
    pub fn scene_keys(&self) -> Result<Vec<SceneKey>, LogError> {
        dispatch!(self, log => log.scene_keys())
    }

    /// Up to `limit` scenes with a key above `after`, ascending, with their images' first bytes only.
    pub fn scene_listing(&self, after: i64, limit: i64) -> Result<Vec<SceneListed>, LogError> {
        dispatch!(self, log => log.scene_listing(after, limit))
    }

    /// Every conversation's key, ascending.
    pub fn conversation_keys(&self) -> Result<Vec<ConversationKey>, LogError> {
        dispatch!(self, log => log.conversation_keys())
    }
}
