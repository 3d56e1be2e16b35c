//! The durable correction log: every scene, conversation, utterance, result and training example, in SQLite
//! (the embedded default) or PostgreSQL (a server shared by a fleet), behind one interface (`CorrectionLog`,
//! chosen by a `LogLocation`).
//!
//! Owns: the database (a SQLite file under the data directory, WAL journal, `synchronous = FULL`; or a
//! PostgreSQL database), the same numbered migrations on both,
//! the row keys (`SceneKey`, `ConversationKey`, `TurnKey`, `VersionKey`), content-addressed blobs, and the
//! one-transaction-per-turn rule: a turn and everything it changes are committed together or not at all (under
//! load several turns share one transaction through `GroupCommit`, each in its own savepoint), and a caller
//! acknowledges a correction only after `commit_turn` or `GroupCommit::commit` has returned.
//! Must not: know about HTTP, the solver or the scene graph's shape. Scene summaries and engine state are
//! stored as the caller hands them over (JSON text and opaque bytes); only constraints are typed here.
//!
//! ```
//! use sayso_correction_log::{CorrectionLog, NewScene, StateRecord};
//!
//! let directory = tempfile::tempdir().unwrap();
//! let mut log = CorrectionLog::open(&directory.path().join("log.sqlite")).unwrap();
//! let state = StateRecord {
//!     labels_png: vec![1, 2, 3],
//!     summary_json: "{}".into(),
//!     engine_state: vec![],
//!     model: Some("3f2a9c01be47".into()),
//! };
//! let (scene, _version) = log
//!     .register_scene(&NewScene {
//!         name: "juniper-lane-kitchen",
//!         image_png: &[9, 9, 9],
//!         input_json: "{}",
//!         parts: &[],
//!         operator: "mira",
//!         state: &state,
//!     })
//!     .unwrap();
//! assert_eq!(log.scenes().unwrap()[0].key, scene);
//! ```

mod backend;
mod checkpoint;
mod export;
mod export_filter;
mod group;
mod lookup;
mod postgres;
mod schema;
mod store;
mod time;

use sayso_core::{ids, raster, scene, taxonomy};

pub use backend::{CorrectionLog, LogLocation};
pub use checkpoint::BackgroundCheckpoints;
pub use export::{export_dataset, export_dataset_showing, ExportError, ExportSummary};
pub use export_filter::{LeftOut, LeftOutReason, CONTRADICTED_SHARE};
pub use group::{GroupCommit, GroupCommitCounts, TurnWritten};
pub use lookup::{SceneListed, TurnMark, IMAGE_HEAD_BYTES};
pub use postgres::{redact as redact_address, PostgresLog};
pub use schema::LOG_SCHEMA_VERSION;
pub use store::{
    blob_hash, ConversationRow, ExampleRow, NewScene, NewTurn, PendingRow, SceneRow, SqliteLog,
    StateRecord, TurnEffect, TurnRow, TurnStacks,
};
pub use time::now_text;

use serde::{Deserialize, Serialize};

macro_rules! row_key {
    ($(#[$doc:meta])* $name:ident) => {
        $(#[$doc])*
        #[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
        #[serde(transparent)]
        pub struct $name(pub i64);

        impl std::fmt::Display for $name {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                write!(f, "{}", self.0)
            }
        }
    };
}

row_key!(
    /// A registered scene.
    SceneKey
);
row_key!(
    /// A conversation on one scene.
    ConversationKey
);
row_key!(
    /// One turn of a conversation (an utterance, a confirmation, an undo...).
    TurnKey
);
row_key!(
    /// One version of a scene's labelling; versions form a tree through their parents.
    VersionKey
);

/// What went wrong reading or writing the log.
#[derive(Debug, thiserror::Error)]
pub enum LogError {
    #[error("cannot create the data directory {path}: {source}")]
    Directory {
        path: std::path::PathBuf,
        source: std::io::Error,
    },
    #[error("database error: {0}")]
    Database(#[from] rusqlite::Error),
    #[error("PostgreSQL error: {0}")]
    Postgres(String),
    #[error("not a usable PostgreSQL address: {0}")]
    Address(String),
    #[error(
        "the database {database} is at schema {found}, this build needs {supported}: run `sayso migrate` first"
    )]
    NotMigrated {
        database: String,
        found: i64,
        supported: i64,
    },
    #[error(
        "the log was written by a newer sayso (schema {found}; this build reads up to {supported})"
    )]
    NewerSchema { found: i64, supported: i64 },
    #[error("stored row is unreadable: {0}")]
    Corrupt(String),
    #[error("no {what} with id {id} in the log")]
    Missing { what: &'static str, id: i64 },
    #[error("the scene moved on: its head is version {head}, the change was made against {base}")]
    Stale { head: i64, base: i64 },
    #[error("the batch of turns this one was committed with failed, so it was not recorded: {0}")]
    Batch(String),
    #[error("the caller withdrew the turn before it was written, so nothing was recorded")]
    Withdrawn,
}

impl From<tokio_postgres::Error> for LogError {
    fn from(error: tokio_postgres::Error) -> LogError {
        // The server's own message (severity, text, detail) says more than the driver's summary.
        match error.as_db_error() {
            Some(db) => LogError::Postgres(format!("{}: {}", db.severity(), db.message())),
            None => LogError::Postgres(error.to_string()),
        }
    }
}

impl From<deadpool_postgres::PoolError> for LogError {
    fn from(error: deadpool_postgres::PoolError) -> LogError {
        LogError::Postgres(format!("no connection to the server: {error}"))
    }
}
