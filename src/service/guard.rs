//! Access control and limits around every request: bearer tokens (compared in constant time), the
//! per-operator rate limit, the per-address limit on failed authentication, the cap on requests in
//! flight, the request time limit, the request-head limits, and the rule that every failure leaves in the
//! one JSON error shape (with its latency and status counted under bounded labels).
//!
//! Owns: `RateLimiter` (a token bucket per key, its map bounded), `TokenTable`, and the middleware
//! functions.
//! Must not: look into request bodies or know any route's meaning.

use std::collections::HashMap;
use std::hash::Hash;
use std::net::{IpAddr, Ipv4Addr, SocketAddr};
use std::sync::Mutex;
use std::time::{Duration, Instant};

use axum::body::Body;
use axum::extract::{ConnectInfo, MatchedPath, Request, State};
use axum::http::{header, HeaderValue, Method, StatusCode};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};
use sha2::{Digest, Sha256};
use subtle::ConstantTimeEq;

use super::abandon::{CommitGate, REQUEST_GATE};
use super::error::{code_for_status, ApiError};
use super::AppState;
use crate::config::OperatorToken;
use crate::session::Caller;
use crate::session::Role;

/// The operator name used when the service runs without tokens (loopback only). With no tokens there is
/// no telling callers apart, so this caller acts as a supervisor.
pub const LOCAL_OPERATOR: &str = "local";

/// The longest request target (path and query) read, in bytes; longer is answered 414.
pub const URI_LIMIT_BYTES: usize = 8 * 1024;
/// The most request header bytes (names and values) read; more is answered 431.
pub const HEADER_LIMIT_BYTES: usize = 16 * 1024;
/// The most request headers read; more is answered 431.
pub const HEADER_COUNT_LIMIT: usize = 100;

/// How many keys a `RateLimiter` remembers before it forgets the ones whose buckets are full again; past
/// that, new keys share one bucket.
const LIMITER_KEYS: usize = 16_384;

struct Bucket {
    tokens: f64,
    refilled: Instant,
}

/// A token bucket per key: `rate` events a second on average, bursts up to `burst`.
pub struct RateLimiter<K> {
    rate: f64,
    burst: f64,
    buckets: Mutex<HashMap<K, Bucket>>,
}

impl<K: Hash + Eq + Clone> RateLimiter<K> {
    /// A limiter with the given steady rate (per second) and burst.
    pub fn new(rate: f64, burst: u32) -> RateLimiter<K> {
        RateLimiter {
            rate,
            burst: f64::from(burst),
            buckets: Mutex::new(HashMap::new()),
        }
    }

    fn with_bucket<T>(
        &self,
        key: &K,
        overflow: &K,
        now: Instant,
        work: impl FnOnce(&mut Bucket) -> T,
    ) -> T {
        let mut buckets = self
            .buckets
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        if !buckets.contains_key(key) && buckets.len() >= LIMITER_KEYS {
            let (rate, burst) = (self.rate, self.burst);
            buckets.retain(|_, bucket| {
                let elapsed = now.saturating_duration_since(bucket.refilled).as_secs_f64();
                bucket.tokens + elapsed * rate < burst
            });
        }
        let key = if buckets.contains_key(key) || buckets.len() < LIMITER_KEYS {
            key
        } else {
            overflow
        };
        let bucket = buckets.entry(key.clone()).or_insert(Bucket {
            tokens: self.burst,
            refilled: now,
        });
        let elapsed = now.saturating_duration_since(bucket.refilled).as_secs_f64();
        bucket.tokens = (bucket.tokens + elapsed * self.rate).min(self.burst);
        bucket.refilled = now;
        work(bucket)
    }

    /// Takes one token for `key`; `Err(seconds)` says how long until one is free.
    pub fn take(&self, key: &K, overflow: &K, now: Instant) -> Result<(), f64> {
        let rate = self.rate;
        self.with_bucket(key, overflow, now, |bucket| {
            if bucket.tokens >= 1.0 {
                bucket.tokens -= 1.0;
                Ok(())
            } else {
                Err((1.0 - bucket.tokens) / rate)
            }
        })
    }

    /// Whether `key` has a token left, without taking it; `Err(seconds)` as for `take`.
    pub fn check(&self, key: &K, overflow: &K, now: Instant) -> Result<(), f64> {
        let rate = self.rate;
        self.with_bucket(key, overflow, now, |bucket| {
            if bucket.tokens >= 1.0 {
                Ok(())
            } else {
                Err((1.0 - bucket.tokens) / rate)
            }
        })
    }

    /// How many keys are remembered.
    #[cfg(test)]
    pub fn keys(&self) -> usize {
        self.buckets
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .len()
    }
}

/// The configured tokens, kept as SHA-256 digests and compared in constant time, so neither the time to
/// answer nor a shared prefix tells a guesser anything.
pub struct TokenTable {
    entries: Vec<([u8; 32], Caller)>,
}

fn digest(text: &str) -> [u8; 32] {
    Sha256::digest(text.as_bytes()).into()
}

impl TokenTable {
    /// The table of `operators`.
    pub fn new(operators: &[OperatorToken]) -> TokenTable {
        TokenTable {
            entries: operators
                .iter()
                .map(|operator| {
                    (
                        digest(&operator.token),
                        Caller {
                            name: operator.name.clone(),
                            role: operator.role,
                        },
                    )
                })
                .collect(),
        }
    }

    /// Whether no tokens are configured.
    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }

    /// The caller a presented token belongs to. Every entry is compared, each in constant time.
    pub fn find(&self, presented: &str) -> Option<Caller> {
        let presented = digest(presented);
        let mut found = None;
        for (stored, caller) in &self.entries {
            if bool::from(stored.ct_eq(&presented)) {
                found = Some(caller.clone());
            }
        }
        found
    }
}

/// The token of an `Authorization` value with the `Bearer` scheme, the scheme in any letter case
/// (RFC 9110 section 11.1: schemes are case-insensitive).
pub fn bearer_token(value: &str) -> Option<&str> {
    let value = value.trim_start();
    let (scheme, rest) = value.split_at(value.find(' ')?);
    scheme
        .eq_ignore_ascii_case("bearer")
        .then(|| rest.trim())
        .filter(|token| !token.is_empty())
}

fn with_retry_after(mut response: Response, seconds: f64) -> Response {
    let seconds = seconds.ceil().max(1.0) as u64;
    if let Ok(value) = HeaderValue::from_str(&seconds.to_string()) {
        response.headers_mut().insert(header::RETRY_AFTER, value);
    }
    response
}

fn client_address(request: &Request) -> IpAddr {
    request
        .extensions()
        .get::<ConnectInfo<SocketAddr>>()
        .map(|ConnectInfo(address)| address.ip())
        .unwrap_or(IpAddr::V4(Ipv4Addr::UNSPECIFIED))
}

/// The key failed authentications are counted under once the limiter's map is full.
const OVERFLOW_ADDRESS: IpAddr = IpAddr::V4(Ipv4Addr::BROADCAST);

/// Checks the bearer token (when tokens are configured), the address's failed attempts and the caller's
/// rate, and hands the handlers a `Caller`.
pub async fn authorise(
    State(state): State<AppState>,
    mut request: Request,
    next: Next,
) -> Response {
    let caller = if state.tokens.is_empty() {
        Caller {
            name: LOCAL_OPERATOR.to_string(),
            role: Role::Supervisor,
        }
    } else {
        let address = client_address(&request);
        let now = Instant::now();
        if let Err(wait) = state.auth_failures.check(&address, &OVERFLOW_ADDRESS, now) {
            return with_retry_after(
                ApiError::caller(
                    StatusCode::TOO_MANY_REQUESTS,
                    "too_many_failed_logins",
                    format!(
                        "too many requests with a missing or wrong token from this address; retry in \
                         {wait:.0} s"
                    ),
                )
                .into_response(),
                wait,
            );
        }
        let header_value = request
            .headers()
            .get(header::AUTHORIZATION)
            .and_then(|value| value.to_str().ok());
        let refusal = match header_value.map(bearer_token) {
            None => Err(ApiError::caller(
                StatusCode::UNAUTHORIZED,
                "missing_token",
                "send your operator token as: Authorization: Bearer <token>",
            )),
            Some(None) => Err(ApiError::caller(
                StatusCode::UNAUTHORIZED,
                "missing_token",
                "the Authorization header must be: Bearer <token>",
            )),
            Some(Some(token)) => state.tokens.find(token).ok_or_else(|| {
                ApiError::caller(
                    StatusCode::UNAUTHORIZED,
                    "wrong_token",
                    "the bearer token is not one of the configured operator tokens",
                )
            }),
        };
        match refusal {
            Ok(caller) => caller,
            Err(error) => {
                let _ = state.auth_failures.take(&address, &OVERFLOW_ADDRESS, now);
                let mut response = error.into_response();
                response
                    .headers_mut()
                    .insert(header::WWW_AUTHENTICATE, HeaderValue::from_static("Bearer"));
                return response;
            }
        }
    };
    if let Err(wait) = state
        .limiter
        .take(&caller.name, &String::new(), Instant::now())
    {
        return with_retry_after(
            ApiError::caller(
                StatusCode::TOO_MANY_REQUESTS,
                "rate_limited",
                format!(
                    "more than {} requests a second for this token; retry in {:.2} s",
                    state.config.rate_per_second, wait
                ),
            )
            .into_response(),
            wait,
        );
    }
    request.extensions_mut().insert(caller);
    next.run(request).await
}

/// Answers 503 `overloaded` with Retry-After when `max_requests_in_flight` requests are being worked on.
pub async fn shed_load(State(state): State<AppState>, request: Request, next: Next) -> Response {
    match state.in_flight.clone().try_acquire_owned() {
        Ok(permit) => {
            let response = next.run(request).await;
            drop(permit);
            response
        }
        Err(_) => with_retry_after(
            ApiError::caller(
                StatusCode::SERVICE_UNAVAILABLE,
                "overloaded",
                format!(
                    "the service is working on {} requests already; retry shortly",
                    state.config.max_requests_in_flight
                ),
            )
            .into_response(),
            1.0,
        ),
    }
}

/// Answers 503 `timeout` when a request runs longer than its limit, and sees to it that such a request
/// leaves no trace (`super::abandon`): if its commit had already started when the limit passed, the limit
/// waits for it and the caller gets the real answer instead. The limit is `request_timeout_ms`, or longer
/// for a registration whose image's pixels the work reported (`ServiceConfig::request_limit_ms`): when
/// the limit passes, it is worked out again from what the work reported by then.
pub async fn time_limit(State(state): State<AppState>, request: Request, next: Next) -> Response {
    let started = tokio::time::Instant::now();
    let gate = CommitGate::new();
    let work = REQUEST_GATE.scope(gate.clone(), next.run(request));
    tokio::pin!(work);
    let mut limit_ms = state.config.request_limit_ms(0);
    loop {
        let deadline = started + Duration::from_millis(limit_ms);
        if let Ok(response) = tokio::time::timeout_at(deadline, &mut work).await {
            return response;
        }
        let grown = state.config.request_limit_ms(gate.pixels());
        if grown <= limit_ms {
            break;
        }
        limit_ms = grown;
    }
    if gate.abandon() {
        return ApiError::caller(
            StatusCode::SERVICE_UNAVAILABLE,
            "timeout",
            format!(
                "the request took longer than its limit of {limit_ms} ms and was abandoned; nothing was \
                 stored, so it is safe to send again"
            ),
        )
        .into_response();
    }
    // The commit had started: it is quick, and its answer names what was stored.
    work.await
}

fn is_json(response: &Response) -> bool {
    response
        .headers()
        .get(header::CONTENT_TYPE)
        .and_then(|value| value.to_str().ok())
        .is_some_and(|value| value.starts_with("application/json"))
}

/// The metrics label of a method: the standard methods by name, anything else as `other`, so that no
/// caller can grow the metrics with methods of their own making.
pub fn method_label(method: &Method) -> &'static str {
    match *method {
        Method::GET => "GET",
        Method::POST => "POST",
        Method::PUT => "PUT",
        Method::DELETE => "DELETE",
        Method::PATCH => "PATCH",
        Method::HEAD => "HEAD",
        Method::OPTIONS => "OPTIONS",
        Method::TRACE => "TRACE",
        Method::CONNECT => "CONNECT",
        _ => "other",
    }
}

/// The request-head limits the router can answer in the JSON shape (larger heads are refused bare by the
/// HTTP layer below it, see `super::server`).
fn head_too_large(request: &Request) -> Option<ApiError> {
    let target = request
        .uri()
        .path_and_query()
        .map_or(0, |target| target.as_str().len());
    if target > URI_LIMIT_BYTES {
        return Some(ApiError::caller(
            StatusCode::URI_TOO_LONG,
            "uri_too_long",
            format!(
                "the request path and query are {target} bytes; the limit is {URI_LIMIT_BYTES}"
            ),
        ));
    }
    let headers = request.headers();
    let bytes: usize = headers
        .iter()
        .map(|(name, value)| name.as_str().len() + value.len())
        .sum();
    if headers.len() > HEADER_COUNT_LIMIT || bytes > HEADER_LIMIT_BYTES {
        return Some(ApiError::caller(
            StatusCode::REQUEST_HEADER_FIELDS_TOO_LARGE,
            "headers_too_large",
            format!(
                "the request has {} headers of {bytes} bytes; the limits are {HEADER_COUNT_LIMIT} \
                 headers and {HEADER_LIMIT_BYTES} bytes",
                headers.len()
            ),
        ));
    }
    None
}

/// Refuses request heads over the limits, puts any non-JSON failure (from the router or a layer) into the
/// error shape, and records metrics under the route template and a known method only.
pub async fn shape_and_measure(
    State(state): State<AppState>,
    request: Request,
    next: Next,
) -> Response {
    let started = Instant::now();
    let route = request
        .extensions()
        .get::<MatchedPath>()
        .map_or_else(|| "unmatched".to_string(), |path| path.as_str().to_string());
    let method = method_label(request.method());
    let mut response = match head_too_large(&request) {
        Some(error) => error.into_response(),
        None => next.run(request).await,
    };
    let status = response.status();
    if (status.is_client_error() || status.is_server_error()) && !is_json(&response) {
        let (code, message) = code_for_status(status);
        if status.is_server_error() {
            tracing::error!(%status, %route, "a layer answered with a bare server error");
        }
        let retry_after = response.headers().get(header::RETRY_AFTER).cloned();
        response = if status == StatusCode::PAYLOAD_TOO_LARGE {
            super::error::body_too_large(state.config.body_limit_bytes).into_response()
        } else {
            ApiError::caller(status, code, message).into_response()
        };
        if let Some(value) = retry_after {
            response.headers_mut().insert(header::RETRY_AFTER, value);
        }
    }
    state.metrics.record_request(
        &route,
        method,
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
            assert!(limiter.take(&"mira", &"", start).is_ok());
        }
        let wait = limiter.take(&"mira", &"", start).unwrap_err();
        assert!((wait - 0.1).abs() < 1e-9, "{wait}");
        assert!(limiter.check(&"mira", &"", start).is_err());
        // Another caller has a bucket of their own.
        assert!(limiter.take(&"ola", &"", start).is_ok());
        // After 100 ms one more token has dripped in.
        let later = start + Duration::from_millis(100);
        assert!(limiter.check(&"mira", &"", later).is_ok());
        assert!(limiter.take(&"mira", &"", later).is_ok());
        assert!(limiter.take(&"mira", &"", later).is_err());
    }

    #[test]
    fn the_limiter_forgets_full_buckets_and_never_grows_past_its_bound() {
        let limiter = RateLimiter::new(1.0, 2);
        let start = Instant::now();
        for key in 0..(LIMITER_KEYS as u64 + 500) {
            let _ = limiter.take(&key, &u64::MAX, start);
        }
        assert!(limiter.keys() <= LIMITER_KEYS + 1, "{}", limiter.keys());
        // Two seconds on every bucket is full again, and the next new key clears them out.
        let _ = limiter.take(&(u64::MAX - 1), &u64::MAX, start + Duration::from_secs(2));
        assert_eq!(limiter.keys(), 1);
    }

    #[test]
    fn the_bearer_scheme_is_read_in_any_case_and_tokens_match_whole() {
        assert_eq!(bearer_token("Bearer abc"), Some("abc"));
        assert_eq!(bearer_token("bearer abc"), Some("abc"));
        assert_eq!(bearer_token("BEARER   abc "), Some("abc"));
        assert_eq!(bearer_token("Basic abc"), None);
        assert_eq!(bearer_token("Bearer"), None);
        assert_eq!(bearer_token("Bearer "), None);
        let table = TokenTable::new(&[OperatorToken {
            name: "mira".into(),
            token: "juniper-lane-0123456789".into(),
            role: Role::Operator,
        }]);
        assert_eq!(
            table
                .find("juniper-lane-0123456789")
                .map(|caller| caller.name),
            Some("mira".to_string())
        );
        assert!(table.find("juniper-lane-012345678").is_none());
        assert!(table.find("juniper-lane-01234567890").is_none());
        assert!(table.find("").is_none());
    }

    #[test]
    fn metric_methods_are_a_closed_set() {
        assert_eq!(method_label(&Method::GET), "GET");
        let long = Method::from_bytes("X".repeat(200_000).as_bytes()).unwrap();
        assert_eq!(method_label(&long), "other");
    }
}
