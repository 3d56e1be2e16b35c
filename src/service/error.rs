//! The service's one error type and its one JSON shape, `{"code": ..., "message": ...}`.
//!
//! Owns: `ApiError`, the stable error codes of the HTTP layer, the HTTP status of every session error kind
//! (`From<SessionError>`), and the rule that a 5xx answer never carries internals (they are logged with
//! tracing instead).
//! Must not: decide when an error happens; handlers, the guard and the session do.

use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use axum::Json;

use crate::session::{ErrorKind, SessionError};
use crate::wire::ErrorBody;

/// A failure answered to the caller.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ApiError {
    pub status: StatusCode,
    /// Stable, snake_case; clients branch on it.
    pub code: &'static str,
    /// Plain words: what was wrong and what to change.
    pub message: String,
}

impl ApiError {
    /// A 4xx error with a code and a message for the caller.
    pub fn caller(status: StatusCode, code: &'static str, message: impl Into<String>) -> ApiError {
        ApiError {
            status,
            code,
            message: message.into(),
        }
    }

    /// 400: the body was not the JSON the route expects.
    pub fn bad_request(code: &'static str, message: impl Into<String>) -> ApiError {
        ApiError::caller(StatusCode::BAD_REQUEST, code, message)
    }

    /// 404: an id that is not in the log.
    pub fn unknown(code: &'static str, what: &str, id: i64) -> ApiError {
        ApiError::caller(
            StatusCode::NOT_FOUND,
            code,
            format!("there is no {what} with id {id}; list or create one first"),
        )
    }

    /// 409: the request conflicts with the current state.
    pub fn conflict(code: &'static str, message: impl Into<String>) -> ApiError {
        ApiError::caller(StatusCode::CONFLICT, code, message)
    }

    /// 422: well-formed but unusable.
    pub fn unprocessable(code: &'static str, message: impl Into<String>) -> ApiError {
        ApiError::caller(StatusCode::UNPROCESSABLE_ENTITY, code, message)
    }

    /// 500: logs `detail` and tells the caller only that something went wrong on our side.
    pub fn internal(detail: impl std::fmt::Display) -> ApiError {
        tracing::error!(%detail, "internal error");
        ApiError {
            status: StatusCode::INTERNAL_SERVER_ERROR,
            code: "internal",
            message: "the service hit an internal fault; the request was not applied, try again"
                .to_string(),
        }
    }

    /// The wire body.
    pub fn body(&self) -> ErrorBody {
        ErrorBody {
            code: self.code.to_string(),
            message: self.message.clone(),
        }
    }
}

/// The HTTP status a session error is answered with.
pub fn status_of(kind: ErrorKind) -> StatusCode {
    match kind {
        ErrorKind::Malformed => StatusCode::BAD_REQUEST,
        ErrorKind::Unknown => StatusCode::NOT_FOUND,
        ErrorKind::NotYours => StatusCode::FORBIDDEN,
        ErrorKind::Conflict => StatusCode::CONFLICT,
        ErrorKind::Unusable => StatusCode::UNPROCESSABLE_ENTITY,
        ErrorKind::TooLarge => StatusCode::PAYLOAD_TOO_LARGE,
        ErrorKind::Withdrawn => StatusCode::SERVICE_UNAVAILABLE,
        // `ErrorKind` may grow; a kind not mapped yet is our fault, never the caller's.
        _ => StatusCode::INTERNAL_SERVER_ERROR,
    }
}

impl From<SessionError> for ApiError {
    fn from(error: SessionError) -> ApiError {
        // The session already logged an internal fault's detail and kept it out of the message.
        ApiError {
            status: status_of(error.kind),
            code: error.code,
            message: error.message,
        }
    }
}

impl IntoResponse for ApiError {
    fn into_response(self) -> Response {
        (self.status, Json(self.body())).into_response()
    }
}

/// The refusal of a body over `body_limit_bytes`, stating the limit.
pub fn body_too_large(limit: usize) -> ApiError {
    ApiError::caller(
        StatusCode::PAYLOAD_TOO_LARGE,
        "body_too_large",
        format!(
            "the request body is larger than body_limit_bytes = {limit} bytes ({:.1} MiB); send large \
             scores as a multipart upload (POST /v1/scenes/upload, no base64), or raise body_limit_bytes \
             in the service's config",
            limit as f64 / (1024.0 * 1024.0)
        ),
    )
}

/// The error code used when a bare status (from a layer or the router) has to be put into the JSON shape.
pub fn code_for_status(status: StatusCode) -> (&'static str, &'static str) {
    match status {
        StatusCode::NOT_FOUND => (
            "no_such_route",
            "no route matches this path; see /v1/openapi.json",
        ),
        StatusCode::METHOD_NOT_ALLOWED => (
            "method_not_allowed",
            "this route does not take that method; see /v1/openapi.json",
        ),
        StatusCode::PAYLOAD_TOO_LARGE => (
            "body_too_large",
            "the request body is larger than the configured body_limit_bytes",
        ),
        StatusCode::UNSUPPORTED_MEDIA_TYPE => (
            "bad_content_type",
            "send the body as JSON with Content-Type: application/json",
        ),
        StatusCode::REQUEST_TIMEOUT | StatusCode::SERVICE_UNAVAILABLE => (
            "timeout",
            "the request took longer than the configured request_timeout_ms",
        ),
        status if status.is_server_error() => (
            "internal",
            "the service hit an internal fault; the request was not applied, try again",
        ),
        _ => ("bad_request", "the request could not be read"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_session_error_kind_has_its_own_status() {
        let kinds = [
            (ErrorKind::Malformed, 400),
            (ErrorKind::Unknown, 404),
            (ErrorKind::NotYours, 403),
            (ErrorKind::Conflict, 409),
            (ErrorKind::Unusable, 422),
            (ErrorKind::TooLarge, 413),
            (ErrorKind::Withdrawn, 503),
            (ErrorKind::Internal, 500),
        ];
        for (kind, status) in kinds {
            assert_eq!(status_of(kind).as_u16(), status, "{kind:?}");
        }
        let answered = ApiError::from(SessionError::conflict("nothing_to_undo", "no change"));
        assert_eq!(answered.status, StatusCode::CONFLICT);
        assert_eq!(answered.code, "nothing_to_undo");
    }
}
