//! The correction log on a PostgreSQL server, for a fleet sharing one store (`database = "postgres://..."`).
//!
//! Owns: `PostgresLog` (a deadpool pool of tokio-postgres connections and the small runtime that drives
//! them) and the bridge that lets the log's synchronous callers wait on it. Any number of replicas may
//! open one database at once.
//! Must not: decide anything the SQLite log does not: the rows, the transaction rule and the answers are the
//! same, and a turn is acknowledged only after its transaction has committed on the server.
//!
//! Two replicas writing to one scene: optimistic versioning on the scene's head. A turn's version is
//! written with a compare-and-set (`UPDATE scenes SET head_version = new WHERE head_version = base`); a
//! writer that lost the race gets `LogError::Stale` with the current head and nothing of its turn stays.
//! Chosen over row locks because a turn's solve (tens of milliseconds) runs before its write: a lock held
//! across the solve would make every replica wait on the slowest, and hold a connection for it, to guard
//! against a race that is rare (two operators on the same scene in the same instant) and already has an
//! answer (the service says the scene moved on, and the client sends the turn again).

mod lookup;
mod queries;
mod schema;

use std::future::Future;

use deadpool_postgres::{Manager, ManagerConfig, Pool, RecyclingMethod};
use tokio_postgres::NoTls;

use super::LogError;

/// Connections a log keeps open at most (the coordinator writes through one at a time; reads and the
/// group commit can overlap).
const POOL_SIZE: usize = 4;

/// The correction log on PostgreSQL.
pub struct PostgresLog {
    pool: Pool,
    /// Drives the connections; shut down in the background on drop (dropping a runtime inside another
    /// runtime's context would panic).
    runtime: Option<tokio::runtime::Runtime>,
    /// The address without its password, for messages.
    shown: String,
}

/// `url` with any password replaced by `***`.
pub fn redact(url: &str) -> String {
    match (url.find("://"), url.rfind('@')) {
        (Some(scheme), Some(at)) if at > scheme => {
            let credentials = &url[scheme + 3..at];
            match credentials.find(':') {
                Some(colon) => format!(
                    "{}{}:***{}",
                    &url[..scheme + 3],
                    &credentials[..colon],
                    &url[at..]
                ),
                None => url.to_string(),
            }
        }
        _ => url.to_string(),
    }
}

impl PostgresLog {
    /// Connects to the server at `url` (a `postgres://` address) without touching the schema.
    pub fn connect_unchecked(url: &str) -> Result<PostgresLog, LogError> {
        let config: tokio_postgres::Config = url
            .parse()
            .map_err(|error| LogError::Address(format!("{}: {error}", redact(url))))?;
        let runtime = tokio::runtime::Builder::new_multi_thread()
            .worker_threads(1)
            .thread_name("sayso-postgres")
            .enable_all()
            .build()
            .map_err(|error| LogError::Postgres(format!("cannot start the driver: {error}")))?;
        let manager = Manager::from_config(
            config,
            NoTls,
            ManagerConfig {
                recycling_method: RecyclingMethod::Fast,
            },
        );
        let pool = Pool::builder(manager)
            .max_size(POOL_SIZE)
            .runtime(deadpool_postgres::Runtime::Tokio1)
            .build()
            .map_err(|error| LogError::Postgres(format!("cannot build the pool: {error}")))?;
        Ok(PostgresLog {
            pool,
            runtime: Some(runtime),
            shown: redact(url),
        })
    }

    /// Connects and checks the schema: refused unless the database is at this build's version (run
    /// `sayso migrate` first; replicas never migrate on their own).
    pub fn connect(url: &str) -> Result<PostgresLog, LogError> {
        let log = PostgresLog::connect_unchecked(url)?;
        let found = log.schema_version()?;
        let supported = schema::MIGRATIONS.len() as i64;
        if found > supported {
            return Err(LogError::NewerSchema { found, supported });
        }
        if found < supported {
            return Err(LogError::NotMigrated {
                database: log.shown.clone(),
                found,
                supported,
            });
        }
        Ok(log)
    }

    /// Connects and brings the schema up to this build's version; returns the log and the versions applied.
    pub fn migrate(url: &str) -> Result<(PostgresLog, Vec<i64>), LogError> {
        PostgresLog::migrate_up_to(url, schema::MIGRATIONS.len())
    }

    /// As `migrate`, stopping at version `target` (tests build older databases with it).
    pub fn migrate_up_to(url: &str, target: usize) -> Result<(PostgresLog, Vec<i64>), LogError> {
        let log = PostgresLog::connect_unchecked(url)?;
        let applied = log.run(async {
            let mut client = log.pool.get().await?;
            let client: &mut tokio_postgres::Client = &mut client;
            schema::migrate_up_to(client, target).await
        })?;
        Ok((log, applied))
    }

    /// The address without its password.
    pub fn shown(&self) -> &str {
        &self.shown
    }

    /// Waits for `work` on the log's runtime. The work runs on a scoped thread of its own, so this may be
    /// called from anywhere, a thread inside another tokio runtime included (it blocks that thread, as a
    /// SQLite call does).
    pub(crate) fn run<T: Send>(&self, work: impl Future<Output = T> + Send) -> T {
        let handle = self
            .runtime
            .as_ref()
            .expect("the runtime lives as long as the log")
            .handle();
        std::thread::scope(|scope| {
            scope
                .spawn(|| handle.block_on(work))
                .join()
                .unwrap_or_else(|panic| std::panic::resume_unwind(panic))
        })
    }

    pub(crate) fn pool(&self) -> &Pool {
        &self.pool
    }

    /// The schema version recorded in the database.
    pub fn schema_version(&self) -> Result<i64, LogError> {
        self.run(async {
            let client = self.pool.get().await?;
            schema::recorded_version(&client).await
        })
    }
}

impl Drop for PostgresLog {
    fn drop(&mut self) {
        if let Some(runtime) = self.runtime.take() {
            runtime.shutdown_background();
        }
    }
}
