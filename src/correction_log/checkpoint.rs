//! Checkpoints off the commit path: a background thread copies the write-ahead log into the database file.
//!
//! Owns: `BackgroundCheckpoints`. SQLite's automatic checkpoint runs inside whichever commit crosses the
//! WAL size threshold, and with `synchronous = FULL` it ends in an fsync of the database file, so that one
//! commit (and every turn queued behind it) waits tens of milliseconds. A long-running service turns the
//! automatic checkpoint off on its writing connection (`SqliteLog::set_automatic_checkpoints(false)`) and
//! starts this thread instead: it runs a PASSIVE checkpoint on its own connection at a fixed interval.
//! PASSIVE never waits for writers or readers, and commits keep appending to the WAL meanwhile, so a
//! correction's acknowledgement still waits only for its own WAL fsync. Durability is unchanged: what was
//! committed is in the WAL, and SQLite replays the WAL after a crash whether or not it was checkpointed.
//! Must not: write rows, or know who writes them.

use std::path::Path;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Condvar, Mutex};
use std::thread::JoinHandle;
use std::time::Duration;

use rusqlite::Connection;

use super::LogError;

struct Shared {
    stop: Mutex<bool>,
    wake: Condvar,
    completed: AtomicU64,
}

/// A thread that checkpoints the log's WAL every `interval`; dropped, it stops and is joined.
pub struct BackgroundCheckpoints {
    shared: Arc<Shared>,
    thread: Option<JoinHandle<()>>,
}

impl BackgroundCheckpoints {
    /// Opens a second connection on the log at `path` and starts checkpointing every `interval`.
    pub fn start(path: &Path, interval: Duration) -> Result<BackgroundCheckpoints, LogError> {
        let connection = Connection::open(path)?;
        connection.busy_timeout(Duration::from_secs(5))?;
        let shared = Arc::new(Shared {
            stop: Mutex::new(false),
            wake: Condvar::new(),
            completed: AtomicU64::new(0),
        });
        let for_thread = Arc::clone(&shared);
        let thread = std::thread::Builder::new()
            .name("sayso-checkpoints".into())
            .spawn(move || run(connection, &for_thread, interval))
            .map_err(|error| {
                LogError::Corrupt(format!("cannot start the checkpoint thread: {error}"))
            })?;
        Ok(BackgroundCheckpoints {
            shared,
            thread: Some(thread),
        })
    }

    /// Checkpoints that ran to the end of the WAL so far.
    pub fn completed(&self) -> u64 {
        self.shared.completed.load(Ordering::Relaxed)
    }
}

fn run(connection: Connection, shared: &Shared, interval: Duration) {
    let mut stopped = shared
        .stop
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner());
    while !*stopped {
        let (guard, _) = shared
            .wake
            .wait_timeout(stopped, interval)
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        stopped = guard;
        if *stopped {
            break;
        }
        // (busy, frames in the WAL, frames checkpointed); a failed or partial pass is retried next time.
        let outcome = connection.query_row("PRAGMA wal_checkpoint(PASSIVE)", [], |row| {
            Ok((
                row.get::<_, i64>(0)?,
                row.get::<_, i64>(1)?,
                row.get::<_, i64>(2)?,
            ))
        });
        if let Ok((0, frames, checkpointed)) = outcome {
            if frames == checkpointed {
                shared.completed.fetch_add(1, Ordering::Relaxed);
            }
        }
    }
}

impl Drop for BackgroundCheckpoints {
    fn drop(&mut self) {
        *self
            .shared
            .stop
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner()) = true;
        self.shared.wake.notify_all();
        if let Some(thread) = self.thread.take() {
            let _ = thread.join();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{NewScene, SqliteLog, StateRecord};

    #[test]
    fn the_background_thread_checkpoints_while_commits_go_on_and_stops_when_dropped() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("log.sqlite");
        let mut log = SqliteLog::open(&path).unwrap();
        log.set_automatic_checkpoints(false).unwrap();
        let checkpoints = BackgroundCheckpoints::start(&path, Duration::from_millis(5)).unwrap();
        for index in 0..200u32 {
            log.register_scene(&NewScene {
                name: "juniper-lane-pantry",
                image_png: &index.to_le_bytes(),
                input_json: "{}",
                parts: &[],
                operator: "noor",
                state: &StateRecord {
                    labels_png: vec![index as u8; 2048],
                    summary_json: "{}".into(),
                    engine_state: vec![],
                    model: None,
                },
            })
            .unwrap();
        }
        let deadline = std::time::Instant::now() + Duration::from_secs(10);
        while checkpoints.completed() == 0 && std::time::Instant::now() < deadline {
            std::thread::sleep(Duration::from_millis(5));
        }
        assert!(checkpoints.completed() > 0, "no checkpoint completed");
        drop(checkpoints);
        // Everything committed is readable, from this connection and from a fresh one.
        assert_eq!(log.scenes().unwrap().len(), 200);
        drop(log);
        let reopened = SqliteLog::open(&path).unwrap();
        assert_eq!(reopened.scenes().unwrap().len(), 200);
        assert_eq!(reopened.integrity_check().unwrap(), "ok");
    }
}
