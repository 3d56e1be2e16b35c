//! A request answered "abandoned" leaves no trace: the race between the request time limit and the commit.
//!
//! Owns: `CommitGate`, a three-state flag per request (working, abandoned, committing) that the time limit
//! and the commit each try to move first, with the size of the work as the work reports it (the pixels of
//! an image being registered: `report_pixels`), and the thread-local that carries it on the thread doing
//! the work (`with_gate`, called by whoever runs the work: the service's handlers) so the coordinator can
//! ask `may_commit()` just before it writes.
//! Must not: decide time limits (the service scales its limit by the pixels reported), know the transport
//! that set the limit, or write anything; it only says who got there first and how large the work is.
//!
//! The rule: when the time limit fires first, the request is answered 503 `abandoned` and the work, once it
//! reaches its commit, writes nothing. When the commit starts first, the time limit waits for it and the
//! caller gets the real answer (with the ids of what was stored).

use std::cell::RefCell;
use std::sync::atomic::{AtomicU64, AtomicU8, Ordering};
use std::sync::Arc;

const WORKING: u8 = 0;
const ABANDONED: u8 = 1;
const COMMITTING: u8 = 2;

/// One request's flag and the size its work reported; clones share them.
#[derive(Clone, Debug, Default)]
pub struct CommitGate(Arc<GateState>);

#[derive(Debug, Default)]
struct GateState {
    state: AtomicU8,
    /// The pixels of the image the request registers, once decoded (0 before, or for other work).
    pixels: AtomicU64,
}

impl CommitGate {
    /// A gate for a request still being worked on.
    pub fn new() -> CommitGate {
        CommitGate::default()
    }

    /// Marks the request abandoned unless its commit has started; true when nothing will be written.
    pub fn abandon(&self) -> bool {
        match self
            .0
            .state
            .compare_exchange(WORKING, ABANDONED, Ordering::AcqRel, Ordering::Acquire)
        {
            Ok(_) => true,
            Err(state) => state == ABANDONED,
        }
    }

    /// Claims the right to commit unless the request was abandoned; true when the caller may write.
    pub fn enter_commit(&self) -> bool {
        match self.0.state.compare_exchange(
            WORKING,
            COMMITTING,
            Ordering::AcqRel,
            Ordering::Acquire,
        ) {
            Ok(_) => true,
            Err(state) => state == COMMITTING,
        }
    }
}

impl CommitGate {
    /// The pixels the request's work reported (0 when it reported none).
    pub fn pixels(&self) -> u64 {
        self.0.pixels.load(Ordering::Acquire)
    }
}

/// Reports that the request this thread works for handles an image of `pixels` pixels (a registration,
/// once the image's size is known; a scene read back from the log; an overlay drawn), so its time limit
/// can grow with it. Outside a request, nothing.
pub fn report_pixels(pixels: u64) {
    THREAD_GATE.with(|current| {
        if let Some(gate) = current.borrow().as_ref() {
            gate.0.pixels.fetch_max(pixels, Ordering::AcqRel);
        }
    });
}

thread_local! {
    static THREAD_GATE: RefCell<Option<CommitGate>> = const { RefCell::new(None) };
}

/// Runs `work` on this thread with `gate` as the current request's gate.
pub fn with_gate<T>(gate: Option<CommitGate>, work: impl FnOnce() -> T) -> T {
    let previous = THREAD_GATE.with(|current| current.replace(gate));
    let result = work();
    THREAD_GATE.with(|current| *current.borrow_mut() = previous);
    result
}

/// Whether the work on this thread may write now (always, outside a request); claims the commit.
pub fn may_commit() -> bool {
    THREAD_GATE.with(|current| {
        current
            .borrow()
            .as_ref()
            .is_none_or(|gate| gate.enter_commit())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn whoever_comes_first_wins_and_the_other_is_told() {
        let gate = CommitGate::new();
        assert!(gate.enter_commit());
        assert!(!gate.abandon(), "a commit in progress cannot be abandoned");
        assert!(gate.enter_commit(), "the same request may commit twice");
        let late = CommitGate::new();
        assert!(late.abandon());
        assert!(!late.enter_commit(), "an abandoned request writes nothing");
        assert!(late.abandon());
    }

    #[test]
    fn the_pixels_reported_on_the_thread_reach_the_request_gate() {
        let gate = CommitGate::new();
        assert_eq!(gate.pixels(), 0);
        report_pixels(640 * 480);
        assert_eq!(gate.pixels(), 0, "outside the request nothing is reported");
        with_gate(Some(gate.clone()), || report_pixels(4096 * 4096));
        assert_eq!(gate.pixels(), 4096 * 4096);
    }

    #[test]
    fn the_thread_gate_is_set_only_inside_with_gate() {
        assert!(may_commit(), "outside a request there is no gate");
        let gate = CommitGate::new();
        gate.abandon();
        assert!(!with_gate(Some(gate), may_commit));
        assert!(may_commit());
    }
}
