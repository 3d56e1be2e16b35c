//! The session layer's one error type: what went wrong with a request to the session, in words and a
//! stable code, sorted into a kind that says whose fault it is.
//!
//! Owns: `SessionError`, `ErrorKind`, the stable snake_case codes, and the rule that an internal fault's
//! details are logged (tracing) and never put into the message.
//! Must not: know any transport. There is no HTTP status here: the service maps each `ErrorKind` to one
//! (`crate::service::error`), the command line prints the message.

/// Whose fault a failure is, and what the caller can do about it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum ErrorKind {
    /// The request could not be read as sent (a malformed part, conflicting fields, a bad page cursor).
    Malformed,
    /// It names something that does not exist (a scene, a conversation, a demo scene).
    Unknown,
    /// It names a conversation the caller may not act on.
    NotYours,
    /// It conflicts with the current state (nothing to undo, a stale change, a second hold).
    Conflict,
    /// It was read but cannot be used (an unreadable image, an unknown class, an empty utterance).
    Unusable,
    /// A part is larger than the limit the session was opened with (pixels).
    TooLarge,
    /// The request was abandoned by its time limit before anything was stored.
    Withdrawn,
    /// A fault on our side; the request was not applied.
    Internal,
}

/// A failure answered to the caller of the session.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SessionError {
    pub kind: ErrorKind,
    /// Stable, snake_case; callers branch on it.
    pub code: &'static str,
    /// Plain words: what was wrong and what to change.
    pub message: String,
}

impl std::fmt::Display for SessionError {
    fn fmt(&self, formatter: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(formatter, "{} ({})", self.message, self.code)
    }
}

impl std::error::Error for SessionError {}

impl SessionError {
    /// A failure of `kind` with a code and a message for the caller.
    pub fn new(kind: ErrorKind, code: &'static str, message: impl Into<String>) -> SessionError {
        SessionError {
            kind,
            code,
            message: message.into(),
        }
    }

    /// The request could not be read as sent.
    pub fn malformed(code: &'static str, message: impl Into<String>) -> SessionError {
        SessionError::new(ErrorKind::Malformed, code, message)
    }

    /// An id that is not in the log.
    pub fn unknown(code: &'static str, what: &str, id: i64) -> SessionError {
        SessionError::new(
            ErrorKind::Unknown,
            code,
            format!("there is no {what} with id {id}; list or create one first"),
        )
    }

    /// The request conflicts with the current state.
    pub fn conflict(code: &'static str, message: impl Into<String>) -> SessionError {
        SessionError::new(ErrorKind::Conflict, code, message)
    }

    /// Well-formed but unusable.
    pub fn unusable(code: &'static str, message: impl Into<String>) -> SessionError {
        SessionError::new(ErrorKind::Unusable, code, message)
    }

    /// Logs `detail` and tells the caller only that something went wrong on our side.
    pub fn internal(detail: impl std::fmt::Display) -> SessionError {
        tracing::error!(%detail, "internal error");
        SessionError::new(
            ErrorKind::Internal,
            "internal",
            "the service hit an internal fault; the request was not applied, try again",
        )
    }

    /// Work whose request was abandoned by its time limit before anything was stored.
    pub fn withdrawn() -> SessionError {
        SessionError::new(
            ErrorKind::Withdrawn,
            "timeout",
            "the request took too long and was abandoned before anything was stored",
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_internal_fault_keeps_its_detail_out_of_the_message() {
        let error = SessionError::internal("disk I/O error at page 77");
        assert_eq!(error.kind, ErrorKind::Internal);
        assert!(!error.message.contains("page 77"), "{}", error.message);
        let unknown = SessionError::unknown("unknown_scene", "scene", 12);
        assert_eq!(unknown.kind, ErrorKind::Unknown);
        assert!(unknown.message.contains("12"), "{}", unknown.message);
    }
}
