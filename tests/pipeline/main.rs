//! The correction pipeline's cross-crate tests in one test binary: scenes built from images and scene
//! directories, perception inputs, grounding, the joint solve, object hypotheses, the scene graph and notes
//! that correct. One binary links the workspace once, not once per file.
//!
//! Owns: the module list and the helpers these modules share (a request through a router, a JSON POST, the
//! service over the real engine). Must not: hold tests of its own.

#[path = "../common/mod.rs"]
mod common;
#[path = "../../benches/support/demo_turns.rs"]
mod demo_turns;
#[path = "../paths.rs"]
mod paths;

mod demo_scenes;
mod fix_and_service;
mod grounding_relations;
mod image_only_classifier;
mod joint_correct;
mod joint_demo_energies;
mod joint_hypotheses;
mod joint_milp;
mod joint_placed;
mod notes_correct;
mod perception_inputs;
mod scene_building;
mod scene_capture;
mod scene_graph_objects;
mod unaries_reference;

/// One request through a service router, answered with its status and body.
pub async fn send(
    app: &axum::Router,
    request: axum::http::Request<axum::body::Body>,
) -> (axum::http::StatusCode, Vec<u8>) {
    use tower::ServiceExt;
    let response = app.clone().oneshot(request).await.unwrap();
    let status = response.status();
    let bytes = axum::body::to_bytes(response.into_body(), usize::MAX)
        .await
        .unwrap();
    (status, bytes.to_vec())
}

/// One JSON POST through a service router: its status and its JSON body (null when it has none).
pub async fn post_json(
    app: &axum::Router,
    path: &str,
    body: serde_json::Value,
) -> (axum::http::StatusCode, serde_json::Value) {
    let request = axum::http::Request::post(path)
        .header("content-type", "application/json")
        .body(axum::body::Body::from(body.to_string()))
        .unwrap();
    let (status, bytes) = send(app, request).await;
    (status, serde_json::from_slice(&bytes).unwrap_or_default())
}

/// Registers a scene (`registration` is the body of `POST /v1/scenes`), opens a conversation on it and says
/// `notes` in order, each answered 200; the registration's answer and each note's status.
pub async fn register_and_say(
    app: &axum::Router,
    registration: serde_json::Value,
    notes: &[&str],
) -> (serde_json::Value, Vec<String>) {
    use axum::http::StatusCode;
    let (status, created) = post_json(app, "/v1/scenes", registration).await;
    assert_eq!(status, StatusCode::CREATED, "{created}");
    let (status, conversation) = post_json(
        app,
        "/v1/conversations",
        serde_json::json!({"scene_id": created["scene_id"]}),
    )
    .await;
    assert_eq!(status, StatusCode::CREATED, "{conversation}");
    let path = format!(
        "/v1/conversations/{}/utterances",
        conversation["conversation_id"]
    );
    let mut statuses = Vec::new();
    for note in notes {
        let (status, reply) = post_json(app, &path, serde_json::json!({"text": note})).await;
        assert_eq!(status, StatusCode::OK, "{reply}");
        statuses.push(reply["status"].to_string());
    }
    (created, statuses)
}

/// The service's router over the real engine (the classifier at `model`, and the robot's own per-pixel
/// model at `user_model` when given) on a fresh SQLite log, its settings adjusted by `configure`. The
/// log's directory is returned so it lives as long as the router.
pub fn real_service(
    model: &std::path::Path,
    user_model: Option<&std::path::Path>,
    configure: impl FnOnce(&mut sayso_session::config::ServiceConfig),
) -> (tempfile::TempDir, axum::Router) {
    use sayso_session::{Coordinator, CoordinatorSettings, JointCorrector};
    use std::sync::Arc;
    let data = tempfile::tempdir().unwrap();
    let mut config = sayso_session::config::ServiceConfig {
        data_dir: data.path().to_path_buf(),
        ..Default::default()
    };
    configure(&mut config);
    let mut coordinator = Coordinator::open(
        Arc::new(JointCorrector::load(model).unwrap()),
        &CoordinatorSettings {
            log_path: config.log_path(),
            pixel_limit: config.pixel_limit,
            demo_dir: config.demo_directory(),
        },
    )
    .unwrap();
    if let Some(path) = user_model {
        let model = sayso_perception::unaries::byo_user_model::UserModel::load(path).unwrap();
        coordinator = coordinator.with_user_model(Arc::new(model));
    }
    let app = sayso_service::app(sayso_service::AppState::new(Arc::new(coordinator), config));
    (data, app)
}
