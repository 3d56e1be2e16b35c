//! Access control and limits around every request: bearer tokens, the per-token rate limit, the request
//! time limit, and the rule that every failure leaves in the one JSON error shape (with its latency and
//! status counted).
//!
//! Owns: `RateLimiter` (a token bucket per caller) and three middleware functions.
//! Must not: look into request bodies or know any route's meaning.

use std::collections::HashMap;
use std::sync::Mutex;
use std::time::{Duration, Instant};

use axum::body::Body;
use axum::extract::{MatchedPath, Request, State};
use axum::http::{header, HeaderValue, StatusCode};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};

use super::error::{code_for_status, ApiError};
use super::AppState;

/// The operator a request acts for, put into request extensions by `authorise`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Operator(pub String);

/// The operator name used when the service runs without tokens (loopback only).
pub const LOCAL_OPERATOR: &str = "local";

struct Bucket {
    tokens: f64,
    refilled: Instant,
}

/// A token bucket per caller: `rate` requests a second on average, bursts up to `burst`.
pub struct RateLimiter {
    rate: f64,
    burst: f64,
    buckets: Mutex<HashMap<String, Bucket>>,
}

impl RateLimiter {
    /// A limiter with the given steady rate and burst.
    pub fn new(rate: f64, burst: u32) -> RateLimiter {
        RateLimiter {
            rate,
            burst: f64::from(burst),
            buckets: Mutex::new(HashMap::new()),
        }
    }

    /// Takes one token for `caller`; `Err(seconds)` says how long until one is free.
    pub fn take(&self, caller: &str, now: Instant) -> Result<(), f64> {
        let mut buckets = self
            .buckets
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        let bucket = buckets.entry(caller.to_string()).or_insert(Bucket {
            tokens: self.burst,
            refilled: now,
        });
        let elapsed = now.saturating_duration_since(bucket.refilled).as_secs_f64();
        bucket.tokens = (bucket.tokens + elapsed * self.rate).min(self.burst);
        bucket.refilled = now;
        if bucket.tokens >= 1.0 {
            bucket.tokens -= 1.0;
            Ok(())
        } else {
            Err((1.0 - bucket.tokens) / self.rate)
        }
    }
}

/// Checks the bearer token (when tokens are configured) and the caller's rate.
pub async fn authorise(
    State(state): State<AppState>,
    mut request: Request,
    next: Next,
) -> Response {
    let operator = if state.tokens.is_empty() {
        LOCAL_OPERATOR.to_string()
    } else {
        let header_value = request
            .headers()
            .get(header::AUTHORIZATION)
            .and_then(|value| value.to_str().ok());
        let presented = match header_value {
            None => {
                return ApiError::caller(
                    StatusCode::UNAUTHORIZED,
                    "missing_token",
                    "send your operator token as: Authorization: Bearer <token>",
                )
                .into_response()
            }
            Some(value) => value.strip_prefix("Bearer ").unwrap_or(""),
        };
        match state.tokens.get(presented.trim()) {
            Some(name) => name.clone(),
            None => {
                return ApiError::caller(
                    StatusCode::UNAUTHORIZED,
                    "wrong_token",
                    "the bearer token is not one of the configured operator tokens",
                )
                .into_response()
            }
        }
    };
    if let Err(wait) = state.limiter.take(&operator, Instant::now()) {
        let mut response = ApiError::caller(
            StatusCode::TOO_MANY_REQUESTS,
            "rate_limited",
            format!(
                "more than {} requests a second for this token; retry in {:.2} s",
                state.config.rate_per_second, wait
            ),
        )
        .into_response();
        let seconds = wait.ceil().max(1.0) as u64;
        if let Ok(value) = HeaderValue::from_str(&seconds.to_string()) {
            response.headers_mut().insert(header::RETRY_AFTER, value);
        }
        return response;
    }
    request.extensions_mut().insert(Operator(operator));
    next.run(request).await
}

/// Answers with `timeout` when a request runs longer than the configured limit.
pub async fn time_limit(State(state): State<AppState>, request: Request, next: Next) -> Response {
    let limit = Duration::from_millis(state.config.request_timeout_ms);
    match tokio::time::timeout(limit, next.run(request)).await {
        Ok(response) => response,
        Err(_) => ApiError::caller(
            StatusCode::SERVICE_UNAVAILABLE,
            "timeout",
            format!(
                "the request took longer than {} ms and was abandoned; if it was an utterance, read the \
                 conversation history before sending it again",
                state.config.request_timeout_ms
            ),
        )
        .into_response(),
    }
}

fn is_json(response: &Response) -> bool {
    response
        .headers()
        .get(header::CONTENT_TYPE)
        .and_then(|value| value.to_str().ok())
        .is_some_and(|value| value.starts_with("application/json"))
}

/// Puts any non-JSON failure (from the router or a layer) into the error shape, and records metrics.
pub async fn shape_and_measure(
    State(state): State<AppState>,
    request: Request,
    next: Next,
) -> Response {
    let started = Instant::now();
    let route = request
        .extensions()
        .get::<MatchedPath>()
        .map(|path| path.as_str().to_string())
        .unwrap_or_else(|| "unmatched".to_string());
    let method = request.method().to_string();
    let mut response = next.run(request).await;
    let status = response.status();
    if (status.is_client_error() || status.is_server_error()) && !is_json(&response) {
        let (code, message) = code_for_status(status);
        if status.is_server_error() {
            tracing::error!(%status, %route, "a layer answered with a bare server error");
        }
        let retry_after = response.headers().get(header::RETRY_AFTER).cloned();
        response = ApiError::caller(status, code, message).into_response();
        if let Some(value) = retry_after {
            response.headers_mut().insert(header::RETRY_AFTER, value);
        }
    }
    state.metrics.record_request(
        &route,
        &method,
        status.as_u16(),
        started.elapsed().as_secs_f64(),
    );
    response
}

/// A response with bytes and a content type.
pub fn bytes_response(content_type: &'static str, bytes: Vec<u8>) -> Response {
    let mut response = Response::new(Body::from(bytes));
    response
        .headers_mut()
        .insert(header::CONTENT_TYPE, HeaderValue::from_static(content_type));
    response
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_bucket_allows_a_burst_then_the_steady_rate() {
        let limiter = RateLimiter::new(10.0, 3);
        let start = Instant::now();
        for _ in 0..3 {
            assert!(limiter.take("mira", start).is_ok());
        }
        let wait = limiter.take("mira", start).unwrap_err();
        assert!((wait - 0.1).abs() < 1e-9, "{wait}");
        // Another caller has a bucket of their own.
        assert!(limiter.take("ola", start).is_ok());
        // After 100 ms one more token has dripped in.
        assert!(limiter
            .take("mira", start + Duration::from_millis(100))
            .is_ok());
        assert!(limiter
            .take("mira", start + Duration::from_millis(100))
            .is_err());
    }
}
