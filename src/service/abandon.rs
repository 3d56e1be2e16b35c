//! Carries a request's commit gate (`crate::session::abandon::CommitGate`) from the time-limit middleware
//! to the handler that runs the work: a tokio task-local.
//!
//! Owns: `REQUEST_GATE` and `current_request_gate`.
//! Must not: decide who wins the race between the time limit and the commit (the session's gate does).

pub use crate::session::abandon::CommitGate;

tokio::task_local! {
    /// The gate of the request this task serves (set by the time-limit middleware).
    pub static REQUEST_GATE: CommitGate;
}

/// The gate of the request the current task serves, if any.
pub fn current_request_gate() -> Option<CommitGate> {
    REQUEST_GATE.try_with(CommitGate::clone).ok()
}
