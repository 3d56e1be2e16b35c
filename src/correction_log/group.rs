//! Group commit: turns from many threads written in one transaction, so one fsync serves all of them.
//!
//! Owns: `GroupCommit` and its leader/follower rule. A caller queues its turn, then takes the log's lock.
//! Whoever gets the lock first (the leader) takes every queued turn, writes them with
//! `CorrectionLog::commit_turns` (one transaction, a savepoint per turn) and hands each caller its answer
//! before letting the lock go. A caller that finds its answer waiting when it gets the lock returns it; one
//! that does not becomes the next leader. Turns queued while a leader is in its fsync ride on the next
//! commit, so under load each fsync carries several turns, and with one caller it is a plain commit.
//! Every answer is given only after the transaction holding its turn has committed.
//! Must not: decide whether a turn is allowed or what it means (callers do), or know about HTTP or tokio.

use std::sync::{Arc, Mutex, MutexGuard};

use super::store::TurnStacks;
use super::{ConversationKey, CorrectionLog, LogError, NewTurn, TurnEffect, TurnKey, VersionKey};

/// What `commit` answers: the turn's key and the version it made, if any.
pub type TurnWritten = (TurnKey, Option<VersionKey>);

/// A queued turn, owned so that another thread can write it.
struct QueuedTurn {
    conversation: ConversationKey,
    kind: String,
    text: String,
    focus_json: Option<String>,
    status: String,
    constraints_json: String,
    result_json: String,
    answer_json: Option<String>,
    operator: String,
    effect: TurnEffect,
    stacks: Option<(Vec<VersionKey>, Vec<VersionKey>)>,
    answer: Mutex<Option<Result<TurnWritten, LogError>>>,
}

impl QueuedTurn {
    fn new(turn: &NewTurn<'_>, stacks: Option<(&[VersionKey], &[VersionKey])>) -> QueuedTurn {
        QueuedTurn {
            conversation: turn.conversation,
            kind: turn.kind.to_string(),
            text: turn.text.to_string(),
            focus_json: turn.focus_json.map(str::to_string),
            status: turn.status.to_string(),
            constraints_json: turn.constraints_json.to_string(),
            result_json: turn.result_json.to_string(),
            answer_json: turn.answer_json.map(str::to_string),
            operator: turn.operator.to_string(),
            effect: turn.effect.clone(),
            stacks: stacks.map(|(applied, redo)| (applied.to_vec(), redo.to_vec())),
            answer: Mutex::new(None),
        }
    }

    fn view(&self) -> (NewTurn<'_>, TurnStacks<'_>) {
        (
            NewTurn {
                conversation: self.conversation,
                kind: &self.kind,
                text: &self.text,
                focus_json: self.focus_json.as_deref(),
                status: &self.status,
                constraints_json: &self.constraints_json,
                result_json: &self.result_json,
                answer_json: self.answer_json.as_deref(),
                operator: &self.operator,
                effect: self.effect.clone(),
            },
            self.stacks
                .as_ref()
                .map(|(applied, redo)| (applied.as_slice(), redo.as_slice())),
        )
    }
}

fn lock<T>(mutex: &Mutex<T>) -> MutexGuard<'_, T> {
    // Data behind these locks is replaced whole; a panic elsewhere leaves it usable.
    mutex
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// Counts of what the group commit has done.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct GroupCommitCounts {
    /// Transactions committed (or attempted) for queued turns.
    pub batches: u64,
    /// Turns written through them.
    pub turns: u64,
}

/// The queue of turns waiting for the next commit; share one per log.
#[derive(Default)]
pub struct GroupCommit {
    queue: Mutex<Vec<Arc<QueuedTurn>>>,
    counts: Mutex<GroupCommitCounts>,
}

impl GroupCommit {
    pub fn new() -> GroupCommit {
        GroupCommit::default()
    }

    /// Records `turn` in `log` together with whatever other turns are queued, and returns once the
    /// transaction holding it has committed. The answer is the one `CorrectionLog::commit_turn` would give.
    pub fn commit(
        &self,
        log: &Mutex<CorrectionLog>,
        turn: &NewTurn<'_>,
        stacks: Option<(&[VersionKey], &[VersionKey])>,
    ) -> Result<TurnWritten, LogError> {
        let mine = Arc::new(QueuedTurn::new(turn, stacks));
        lock(&self.queue).push(Arc::clone(&mine));
        let mut log = lock(log);
        // A leader answers every turn it took before it lets the log go, so an answer is final here.
        if let Some(answer) = lock(&mine.answer).take() {
            return answer;
        }
        let batch = std::mem::take(&mut *lock(&self.queue));
        let views: Vec<_> = batch.iter().map(|queued| queued.view()).collect();
        let answers = log.commit_turns(&views);
        drop(views);
        {
            let mut counts = lock(&self.counts);
            counts.batches += 1;
            counts.turns += batch.len() as u64;
        }
        for (queued, answer) in batch.iter().zip(answers) {
            *lock(&queued.answer) = Some(answer);
        }
        drop(log);
        let answer = lock(&mine.answer).take();
        answer.unwrap_or_else(|| {
            Err(LogError::Batch(
                "the turn was not in the batch that took the log".into(),
            ))
        })
    }

    /// What has been committed so far.
    pub fn counts(&self) -> GroupCommitCounts {
        *lock(&self.counts)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{NewScene, StateRecord};

    fn state(byte: u8) -> StateRecord {
        StateRecord {
            labels_png: vec![byte; 4],
            summary_json: "{}".into(),
            engine_state: vec![byte],
            model: None,
        }
    }

    /// Several threads, each with its own scene, commit many new versions at once: every answer names a
    /// version that is in the log as its scene's head chain, nothing is lost, and batches carried more
    /// than one turn on average (the point of grouping).
    #[test]
    fn concurrent_turns_are_all_recorded_and_share_commits() {
        let directory = tempfile::tempdir().unwrap();
        let mut log = CorrectionLog::open(&directory.path().join("log.sqlite")).unwrap();
        let mut starts = Vec::new();
        for index in 0..6u8 {
            let (scene, version) = log
                .register_scene(&NewScene {
                    name: "juniper-lane-hall",
                    image_png: &[index],
                    input_json: "{}",
                    parts: &[],
                    operator: "tomas",
                    state: &state(index),
                })
                .unwrap();
            let conversation = log.open_conversation(scene, "tomas").unwrap().key;
            starts.push((scene, conversation, version));
        }
        let log = Arc::new(Mutex::new(log));
        let group = Arc::new(GroupCommit::new());
        const TURNS: usize = 40;
        let threads: Vec<_> = starts
            .iter()
            .map(|&(_, conversation, first)| {
                let (log, group) = (Arc::clone(&log), Arc::clone(&group));
                std::thread::spawn(move || {
                    let mut head = first;
                    let mut applied = Vec::new();
                    for step in 0..TURNS {
                        let turn = NewTurn {
                            conversation,
                            kind: "utterance",
                            text: "that's a coat rack",
                            focus_json: None,
                            status: "applied",
                            constraints_json: "[]",
                            result_json: "{}",
                            answer_json: None,
                            operator: "tomas",
                            effect: TurnEffect::NewVersion {
                                base: head,
                                state: state(step as u8),
                                utterance: "that's a coat rack".into(),
                                constraints_json: "[]".into(),
                            },
                        };
                        let (_, version) = group
                            .commit(&log, &turn, Some((&applied, &[])))
                            .expect("committed");
                        head = version.expect("a new version");
                        applied.push(head);
                    }
                    head
                })
            })
            .collect();
        let heads: Vec<VersionKey> = threads.into_iter().map(|t| t.join().unwrap()).collect();
        let log = lock(&log);
        let scenes = log.scenes().unwrap();
        for ((scene, conversation, _), head) in starts.iter().zip(&heads) {
            let row = scenes.iter().find(|row| row.key == *scene).unwrap();
            assert_eq!(row.head, *head);
            assert_eq!(log.turns(*conversation).unwrap().len(), TURNS);
        }
        assert_eq!(log.training_examples().unwrap().len(), 6 * TURNS);
        assert_eq!(log.integrity_check().unwrap(), "ok");
        let counts = group.counts();
        assert_eq!(counts.turns, (6 * TURNS) as u64);
        assert!(counts.batches <= counts.turns);
    }

    /// A stale turn in a batch fails alone; the batch's other turns are recorded.
    #[test]
    fn a_failing_turn_leaves_the_rest_of_its_batch_standing() {
        let directory = tempfile::tempdir().unwrap();
        let mut log = CorrectionLog::open(&directory.path().join("log.sqlite")).unwrap();
        let (scene, version) = log
            .register_scene(&NewScene {
                name: "juniper-lane-study",
                image_png: &[1],
                input_json: "{}",
                parts: &[],
                operator: "ines",
                state: &state(1),
            })
            .unwrap();
        let conversation = log.open_conversation(scene, "ines").unwrap().key;
        let turn = |base: VersionKey| NewTurn {
            conversation,
            kind: "utterance",
            text: "there is one lamp",
            focus_json: None,
            status: "applied",
            constraints_json: "[]",
            result_json: "{}",
            answer_json: None,
            operator: "ines",
            effect: TurnEffect::NewVersion {
                base,
                state: state(2),
                utterance: "there is one lamp".into(),
                constraints_json: "[]".into(),
            },
        };
        let stale = VersionKey(version.0 + 1000);
        let answers = log.commit_turns(&[(turn(version), None), (turn(stale), None)]);
        assert!(answers[0].is_ok());
        assert!(matches!(answers[1], Err(LogError::Stale { .. })));
        assert_eq!(log.turns(conversation).unwrap().len(), 1);
        assert_eq!(log.training_examples().unwrap().len(), 1);
    }
}
