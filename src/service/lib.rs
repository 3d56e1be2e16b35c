//! The correction service: an HTTP API (axum on tokio) over the coordinator and the correction log.
//!
//! Owns: `AppState`, `app(state) -> Router` (testable without a socket), `run(listener, shutdown)`, the
//! route table under `/v1`, authentication (tokens, the failed-login throttle), limits, metrics, the
//! OpenAPI document, and the mapping of the session's errors to HTTP statuses (`error`).
//! Must not: hold conversation rules or work out corrections (the session layer, `crate::session`, does:
//! every route calls its `Coordinator`) or write SQL (the correction log's job).
//!
//! **Safety.** A corrected scene is advisory. It is never a substitute for the robot's own safety sensors
//! and interlocks; follow the robot maker's safety guidance and local regulations when acting on it.
//! Changes that would remove or rename a person, a pet or a hazard wait for explicit confirmation.
//!
//! The pipeline plugs in behind the session layer (`crate::session::Corrector`); the service sees only the
//! session's `Coordinator`, its answers (the shapes of `crate::wire`) and its `SessionError`s.

pub mod abandon;
mod console;
pub mod error;
mod guard;
mod handlers;
mod head_refusal;
pub mod metrics;
pub mod openapi;
mod server;
mod upload;

/// The deployment's settings (`crate::config`), which the service reads first.
pub use sayso_session::config;
/// The JSON shapes the service sends and reads (`crate::wire`).
pub use sayso_wire as wire;

use sayso_correction_log as correction_log;
use sayso_perception::unaries;
use sayso_session as session;

use std::future::Future;
use std::net::IpAddr;
use std::sync::Arc;

use axum::extract::DefaultBodyLimit;
use axum::routing::{get, post};
use axum::Router;

use crate::config::ServiceConfig;
use crate::session::Coordinator;
use metrics::Metrics;

/// Everything a request handler can reach. Cheap to clone.
#[derive(Clone)]
pub struct AppState {
    pub coordinator: Arc<Coordinator>,
    pub config: Arc<ServiceConfig>,
    pub metrics: Arc<Metrics>,
    /// Requests a second per operator.
    limiter: Arc<guard::RateLimiter<String>>,
    /// Failed authentications per client address.
    auth_failures: Arc<guard::RateLimiter<IpAddr>>,
    /// One permit per request being worked on (`max_requests_in_flight`).
    in_flight: Arc<tokio::sync::Semaphore>,
    tokens: Arc<guard::TokenTable>,
}

impl AppState {
    /// Builds the state from a coordinator (already open) and the settings.
    pub fn new(coordinator: Arc<Coordinator>, config: ServiceConfig) -> AppState {
        AppState {
            metrics: Arc::new(Metrics::over(coordinator.counters().clone())),
            limiter: Arc::new(guard::RateLimiter::new(
                config.rate_per_second,
                config.rate_burst,
            )),
            auth_failures: Arc::new(guard::RateLimiter::new(
                config.auth_failures_per_minute / 60.0,
                config.auth_failure_burst,
            )),
            in_flight: Arc::new(tokio::sync::Semaphore::new(config.max_requests_in_flight)),
            tokens: Arc::new(guard::TokenTable::new(&config.operators)),
            coordinator,
            config: Arc::new(config),
        }
    }
}

/// The whole HTTP application.
pub fn app(state: AppState) -> Router {
    let protected = Router::new()
        .route("/v1/metrics", get(handlers::metrics))
        .route("/v1/classes", get(handlers::classes))
        .route(
            "/v1/scenes",
            post(handlers::register_scene).get(handlers::list_scenes),
        )
        .route("/v1/scenes/upload", post(handlers::upload_scene))
        .route("/v1/scenes/{scene_id}", get(handlers::scene_graph))
        .route("/v1/scenes/{scene_id}/labels.png", get(handlers::label_map))
        .route("/v1/scenes/{scene_id}/overlay.png", get(handlers::overlay))
        .route(
            "/v1/scenes/{scene_id}/versions",
            get(handlers::scene_versions),
        )
        .route(
            "/v1/conversations",
            post(handlers::open_conversation).get(handlers::list_conversations),
        )
        .route(
            "/v1/conversations/{conversation_id}",
            get(handlers::history),
        )
        .route(
            "/v1/conversations/{conversation_id}/utterances",
            post(handlers::utterance),
        )
        .route(
            "/v1/conversations/{conversation_id}/confirm",
            post(handlers::confirm),
        )
        .route(
            "/v1/conversations/{conversation_id}/reject",
            post(handlers::reject),
        )
        .route(
            "/v1/conversations/{conversation_id}/undo",
            post(handlers::undo),
        )
        .route(
            "/v1/conversations/{conversation_id}/redo",
            post(handlers::redo),
        )
        .route_layer(axum::middleware::from_fn_with_state(
            state.clone(),
            guard::authorise,
        ));
    Router::new()
        .route("/v1/health", get(handlers::health))
        .route("/v1/openapi.json", get(handlers::openapi_document))
        .merge(protected)
        .merge(console::routes())
        .fallback(handlers::no_such_route)
        .layer(DefaultBodyLimit::max(state.config.body_limit_bytes))
        .layer(axum::middleware::from_fn_with_state(
            state.clone(),
            guard::time_limit,
        ))
        .layer(axum::middleware::from_fn_with_state(
            state.clone(),
            guard::shed_load,
        ))
        .layer(axum::middleware::from_fn_with_state(
            state.clone(),
            guard::shape_and_measure,
        ))
        .with_state(state)
}

/// Serves `app(state)` on `listener` until `shutdown` resolves, then finishes requests in flight; with the
/// configured header timeout and connection cap (`server`).
pub async fn run(
    listener: tokio::net::TcpListener,
    state: AppState,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    let limits = server::ConnectionLimits::from_config(&state.config);
    server::serve(listener, app(state), limits, shutdown).await
}

/// `run` with hyper's bare head refusals (400, 414 and 431 with empty bodies) left as hyper writes them,
/// without the stream wrapper that puts the JSON error shape in (`head_refusal`). Only for the bench that
/// prices that wrapper (`benches/service.rs`); the binary and every deployment use `run`.
#[doc(hidden)]
pub async fn run_without_json_head_refusals(
    listener: tokio::net::TcpListener,
    state: AppState,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    let limits = server::ConnectionLimits {
        json_head_refusals: false,
        ..server::ConnectionLimits::from_config(&state.config)
    };
    server::serve(listener, app(state), limits, shutdown).await
}
