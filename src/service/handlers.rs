//! Route handlers: read the request, hand the work to the session's coordinator on a blocking thread, answer.
//!
//! Owns: extracting and checking path ids and JSON bodies (every rejection in the JSON error shape), the
//! status codes of successful answers, and each route's OpenAPI description.
//! Must not: hold correction logic or touch the log directly.

use std::sync::Arc;

use axum::extract::rejection::{JsonRejection, QueryRejection};
use axum::extract::{Path, Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use axum::{Extension, Json};

use crate::correction_log::{ConversationKey, SceneKey, VersionKey};

use super::abandon;
use super::error::ApiError;
use super::guard::bytes_response;
use super::AppState;
use crate::session::abandon::with_gate;
use crate::session::{Caller, Coordinator, PageRequest, SceneUpload, SessionError};
use crate::wire::{
    ClassOut, ConversationOut, ConversationPage, ErrorBody, HealthOut, HistoryOut,
    OpenConversationRequest, PageQuery, RegisterSceneRequest, SceneCreated, SceneGraphOut,
    ScenePage, SceneVersions, TurnReply, UtteranceReply, UtteranceRequest, VersionQuery,
};

/// Runs `work` on a blocking thread, under the request's commit gate (`super::abandon`).
async fn blocking<T: Send + 'static>(
    state: &AppState,
    work: impl FnOnce(&Coordinator) -> Result<T, SessionError> + Send + 'static,
) -> Result<T, ApiError> {
    let coordinator: Arc<Coordinator> = state.coordinator.clone();
    let gate = abandon::current_request_gate();
    tokio::task::spawn_blocking(move || with_gate(gate, || work(&coordinator)))
        .await
        .map_err(ApiError::internal)?
        .map_err(ApiError::from)
}

fn page(query: Result<Query<PageQuery>, QueryRejection>) -> Result<PageRequest, ApiError> {
    match query {
        Ok(Query(query)) => PageRequest::new(query.after, query.limit).map_err(ApiError::from),
        Err(error) => Err(ApiError::bad_request(
            "bad_page",
            format!(
                "the query takes after (an id, 0 or more) and limit (1 to {}): {}",
                crate::session::PAGE_LIMIT_MAX,
                error.body_text()
            ),
        )),
    }
}

fn body<T>(payload: Result<Json<T>, JsonRejection>, state: &AppState) -> Result<T, ApiError> {
    match payload {
        Ok(Json(value)) => Ok(value),
        Err(JsonRejection::JsonSyntaxError(error)) => Err(ApiError::bad_request(
            "bad_json",
            format!("the body is not valid JSON: {}", error.body_text()),
        )),
        Err(JsonRejection::JsonDataError(error)) => Err(ApiError::bad_request(
            "wrong_shape",
            format!(
                "the JSON does not have the fields and types this route takes: {}",
                error.body_text()
            ),
        )),
        Err(JsonRejection::MissingJsonContentType(_)) => Err(ApiError::caller(
            StatusCode::UNSUPPORTED_MEDIA_TYPE,
            "bad_content_type",
            "send the body as JSON with Content-Type: application/json",
        )),
        Err(JsonRejection::BytesRejection(error))
            if error.status() == StatusCode::PAYLOAD_TOO_LARGE =>
        {
            Err(super::error::body_too_large(state.config.body_limit_bytes))
        }
        Err(other) => Err(ApiError::bad_request(
            "bad_body",
            format!("the body could not be read: {}", other.body_text()),
        )),
    }
}

fn path_id(text: &str, what: &str) -> Result<i64, ApiError> {
    text.parse::<i64>()
        .ok()
        .filter(|id| *id > 0)
        .ok_or_else(|| {
            ApiError::bad_request(
                "bad_id",
                format!(
                    "{what} ids are positive integers; got {:?}",
                    text.chars().take(40).collect::<String>()
                ),
            )
        })
}

fn answer<T: serde::Serialize>(result: Result<T, ApiError>, status: StatusCode) -> Response {
    match result {
        Ok(value) => (status, Json(value)).into_response(),
        Err(error) => error.into_response(),
    }
}

/// Liveness and what is loaded.
#[utoipa::path(get, path = "/v1/health", tag = "service",
    responses((status = 200, description = "The service is up", body = HealthOut)))]
pub async fn health(State(state): State<AppState>) -> Response {
    answer(
        blocking(&state, |coordinator| coordinator.health()).await,
        StatusCode::OK,
    )
}

/// Metrics in the Prometheus text exposition format.
#[utoipa::path(get, path = "/v1/metrics", tag = "service", security(("bearer" = [])),
    responses((status = 200, description = "Prometheus text format 0.0.4", content_type = "text/plain")))]
pub async fn metrics(State(state): State<AppState>) -> Response {
    bytes_response(
        "text/plain; version=0.0.4; charset=utf-8",
        state.metrics.render().into_bytes(),
    )
}

/// This document.
#[utoipa::path(get, path = "/v1/openapi.json", tag = "service",
    responses((status = 200, description = "The OpenAPI 3.1 document", content_type = "application/json")))]
pub async fn openapi_document() -> Response {
    bytes_response(
        "application/json",
        super::openapi::document_json().into_bytes(),
    )
}

/// The class taxonomy the service speaks.
#[utoipa::path(get, path = "/v1/classes", tag = "scenes", security(("bearer" = [])),
    responses((status = 200, description = "Every class", body = [ClassOut])))]
pub async fn classes(State(state): State<AppState>) -> Response {
    let classes: Vec<ClassOut> = state
        .coordinator
        .corrector()
        .taxonomy()
        .classes()
        .iter()
        .map(|class| ClassOut {
            class_id: class.id.0,
            name: class.name.clone(),
            safety: class.safety,
            colour: class.colour,
        })
        .collect();
    (StatusCode::OK, Json(classes)).into_response()
}

/// List registered scenes, a page at a time, by ascending id. Every operator may read every scene.
#[utoipa::path(get, path = "/v1/scenes", tag = "scenes", security(("bearer" = [])),
    params(PageQuery),
    responses((status = 200, description = "One page of scenes", body = ScenePage),
        (status = 400, description = "after below 0, limit outside 1..=200, or another query key", body = ErrorBody)))]
pub async fn list_scenes(
    State(state): State<AppState>,
    query: Result<Query<PageQuery>, QueryRejection>,
) -> Response {
    let result = async {
        let page = page(query)?;
        blocking(&state, move |coordinator| coordinator.scenes_page(page)).await
    }
    .await;
    answer(result, StatusCode::OK)
}

/// List the conversations the caller may read (their own; every one for a supervisor), by ascending id.
#[utoipa::path(get, path = "/v1/conversations", tag = "conversations", security(("bearer" = [])),
    params(PageQuery),
    responses((status = 200, description = "One page of conversations", body = ConversationPage),
        (status = 400, description = "after below 0, limit outside 1..=200, or another query key", body = ErrorBody)))]
pub async fn list_conversations(
    State(state): State<AppState>,
    Extension(caller): Extension<Caller>,
    query: Result<Query<PageQuery>, QueryRejection>,
) -> Response {
    let result = async {
        let page = page(query)?;
        blocking(&state, move |coordinator| {
            Ok(coordinator.conversations_page(&caller, page))
        })
        .await
    }
    .await;
    answer(result, StatusCode::OK)
}

/// Register a scene from an image (with optional depth, scores, label map, detections) or a demo name.
#[utoipa::path(post, path = "/v1/scenes", tag = "scenes", security(("bearer" = [])),
    request_body = RegisterSceneRequest,
    responses(
        (status = 201, description = "Registered and committed", body = SceneCreated),
        (status = 400, description = "Malformed body or base64", body = ErrorBody),
        (status = 404, description = "No such demo scene", body = ErrorBody),
        (status = 413, description = "Body or image too large", body = ErrorBody),
        (status = 422, description = "Unreadable PNG or NPY, sizes that do not match, unknown names", body = ErrorBody)))]
pub async fn register_scene(
    State(state): State<AppState>,
    Extension(caller): Extension<Caller>,
    payload: Result<Json<RegisterSceneRequest>, JsonRejection>,
) -> Response {
    let result = async {
        let upload = SceneUpload::from_request(body(payload, &state)?)?;
        blocking(&state, move |coordinator| {
            coordinator.register_scene(upload, &caller.name)
        })
        .await
    }
    .await;
    answer(result, StatusCode::CREATED)
}

/// Register a scene from a multipart upload (`multipart/form-data`), for parts too large for base64 in
/// JSON. Parts: `image` (PNG or JPEG) or `demo`; optional `depth` (16-bit PNG, millimetres), `scores` (NPY),
/// `scores_classes` (one class name per line), `label_map` (index PNG), `label_map_classes` (one name per
/// line), `detections` (JSON Lines: `{"class": .., "box": [x0, y0, x1, y1], "score": ..}` per line, with
/// an optional `"mask_runs": {"width": .., "height": .., "runs": [..]}`; docs/perception.md),
/// `name`, `room`, `drop_unknown_classes` (`true` or `false`). The whole body is limited by
/// `body_limit_bytes` (default 64 MiB: a 640x480 float32 score map of 41 classes fits).
#[utoipa::path(post, path = "/v1/scenes/upload", tag = "scenes", security(("bearer" = [])),
    request_body(content = String, content_type = "multipart/form-data",
        description = "Parts: image or demo; optional depth, scores, scores_classes, label_map, label_map_classes, detections, name, room, drop_unknown_classes"),
    responses(
        (status = 201, description = "Registered and committed", body = SceneCreated),
        (status = 400, description = "Not multipart, an unknown or repeated part", body = ErrorBody),
        (status = 404, description = "No such demo scene", body = ErrorBody),
        (status = 413, description = "Body over body_limit_bytes, or image over the pixel limit", body = ErrorBody),
        (status = 422, description = "Unreadable PNG or NPY, sizes that do not match, unknown names", body = ErrorBody)))]
pub async fn upload_scene(
    State(state): State<AppState>,
    Extension(caller): Extension<Caller>,
    multipart: Result<axum::extract::Multipart, axum::extract::multipart::MultipartRejection>,
) -> Response {
    let result = async {
        let multipart = multipart.map_err(|error| {
            ApiError::caller(
                StatusCode::UNSUPPORTED_MEDIA_TYPE,
                "bad_content_type",
                format!(
                    "send the parts as multipart/form-data with a boundary: {}",
                    error.body_text()
                ),
            )
        })?;
        let upload = super::upload::read_upload(multipart, state.config.body_limit_bytes).await?;
        blocking(&state, move |coordinator| {
            coordinator.register_scene(upload, &caller.name)
        })
        .await
    }
    .await;
    answer(result, StatusCode::CREATED)
}

/// Reads the `version` query of the scene routes.
fn version_query(
    query: Result<Query<VersionQuery>, QueryRejection>,
) -> Result<Option<VersionKey>, ApiError> {
    match query {
        Ok(Query(query)) => Ok(query.version.map(VersionKey)),
        Err(error) => Err(ApiError::bad_request(
            "bad_version",
            format!(
                "the query takes only version (a version id from the scene's versions list): {}",
                error.body_text()
            ),
        )),
    }
}

/// The part the scene reads that take `?version=` share: the scene id from the path, the version from the
/// query, then `read` on a blocking thread, given the version named or `None` for the version in force.
async fn read_version<T: Send + 'static>(
    state: &AppState,
    scene_id: &str,
    query: Result<Query<VersionQuery>, QueryRejection>,
    read: fn(&Coordinator, SceneKey, Option<VersionKey>) -> Result<T, SessionError>,
) -> Result<T, ApiError> {
    let scene = SceneKey(path_id(scene_id, "scene")?);
    let version = version_query(query)?;
    blocking(state, move |coordinator| read(coordinator, scene, version)).await
}

/// The scene graph, of the version in force or of the version named. Advisory only.
#[utoipa::path(get, path = "/v1/scenes/{scene_id}", tag = "scenes", security(("bearer" = [])),
    params(("scene_id" = i64, Path, description = "A scene id from POST /v1/scenes"), VersionQuery),
    responses((status = 200, description = "The scene graph", body = SceneGraphOut),
        (status = 400, description = "A scene id that is not a positive integer (bad_id); a version that is not one, or another query key (bad_version)", body = ErrorBody),
        (status = 404, description = "Unknown scene, or a version not of this scene", body = ErrorBody)))]
pub async fn scene_graph(
    State(state): State<AppState>,
    Path(scene_id): Path<String>,
    query: Result<Query<VersionQuery>, QueryRejection>,
) -> Response {
    let result = read_version(
        &state,
        &scene_id,
        query,
        |coordinator, scene, version| match version {
            Some(version) => coordinator.scene_graph_at(scene, version),
            None => coordinator.scene_graph(scene),
        },
    )
    .await;
    answer(result, StatusCode::OK)
}

/// The scene's stored versions, newest first: the chain of the version in force back to the registered
/// one, and versions that are no longer in force (undone, or dropped by a later change); each with the turn
/// that made it (its words only for a caller who may read that conversation).
#[utoipa::path(get, path = "/v1/scenes/{scene_id}/versions", tag = "scenes", security(("bearer" = [])),
    params(("scene_id" = i64, Path, description = "A scene id")),
    responses((status = 200, description = "The versions", body = SceneVersions),
        (status = 404, description = "Unknown scene", body = ErrorBody)))]
pub async fn scene_versions(
    State(state): State<AppState>,
    Extension(caller): Extension<Caller>,
    Path(scene_id): Path<String>,
) -> Response {
    let result = async {
        let scene = SceneKey(path_id(&scene_id, "scene")?);
        blocking(&state, move |coordinator| {
            coordinator.scene_versions(scene, &caller)
        })
        .await
    }
    .await;
    answer(result, StatusCode::OK)
}

fn png_answer(result: Result<Vec<u8>, ApiError>) -> Response {
    match result {
        Ok(bytes) => bytes_response("image/png", bytes),
        Err(error) => error.into_response(),
    }
}

/// The label map (of the version in force or the version named) as a single-channel index PNG (pixel =
/// class id, 255 = unlabelled).
#[utoipa::path(get, path = "/v1/scenes/{scene_id}/labels.png", tag = "scenes", security(("bearer" = [])),
    params(("scene_id" = i64, Path, description = "A scene id"), VersionQuery),
    responses((status = 200, description = "Palette PNG: pixel value = class id (255 unlabelled), shown in the class colour", content_type = "image/png"),
        (status = 400, description = "A scene id that is not a positive integer (bad_id); a version that is not one, or another query key (bad_version)", body = ErrorBody),
        (status = 404, description = "Unknown scene, or a version not of this scene", body = ErrorBody)))]
pub async fn label_map(
    State(state): State<AppState>,
    Path(scene_id): Path<String>,
    query: Result<Query<VersionQuery>, QueryRejection>,
) -> Response {
    let result = read_version(
        &state,
        &scene_id,
        query,
        |coordinator, scene, version| match version {
            Some(version) => coordinator.label_map_png_at(scene, version),
            None => coordinator.label_map_png(scene),
        },
    )
    .await;
    png_answer(result)
}

/// The picture under a translucent tint of the labels (of the version in force or the version named),
/// its objects outlined, what that version's note changed ringed and named, and a legend.
#[utoipa::path(get, path = "/v1/scenes/{scene_id}/overlay.png", tag = "scenes", security(("bearer" = [])),
    params(("scene_id" = i64, Path, description = "A scene id"), VersionQuery),
    responses((status = 200, description = "RGB PNG", content_type = "image/png"),
        (status = 400, description = "A scene id that is not a positive integer (bad_id); a version that is not one, or another query key (bad_version)", body = ErrorBody),
        (status = 404, description = "Unknown scene, or a version not of this scene", body = ErrorBody)))]
pub async fn overlay(
    State(state): State<AppState>,
    Path(scene_id): Path<String>,
    query: Result<Query<VersionQuery>, QueryRejection>,
) -> Response {
    let result = read_version(
        &state,
        &scene_id,
        query,
        |coordinator, scene, version| match version {
            Some(version) => coordinator.overlay_png_at(scene, version),
            None => coordinator.overlay_png(scene),
        },
    )
    .await;
    png_answer(result)
}

/// Open a conversation on a scene.
#[utoipa::path(post, path = "/v1/conversations", tag = "conversations", security(("bearer" = [])),
    request_body = OpenConversationRequest,
    responses((status = 201, description = "Opened", body = ConversationOut),
        (status = 404, description = "Unknown scene", body = ErrorBody)))]
pub async fn open_conversation(
    State(state): State<AppState>,
    Extension(caller): Extension<Caller>,
    payload: Result<Json<OpenConversationRequest>, JsonRejection>,
) -> Response {
    let result = async {
        let request = body(payload, &state)?;
        let scene = SceneKey(request.scene_id);
        blocking(&state, move |coordinator| {
            coordinator.open_conversation(scene, &caller.name)
        })
        .await
    }
    .await;
    answer(result, StatusCode::CREATED)
}

/// A conversation's turns and pending change.
#[utoipa::path(get, path = "/v1/conversations/{conversation_id}", tag = "conversations", security(("bearer" = [])),
    params(("conversation_id" = i64, Path, description = "A conversation id")),
    responses((status = 200, description = "History, oldest first", body = HistoryOut),
        (status = 404, description = "Unknown conversation", body = ErrorBody)))]
pub async fn history(
    State(state): State<AppState>,
    Extension(caller): Extension<Caller>,
    Path(conversation_id): Path<String>,
) -> Response {
    let result = async {
        let conversation = ConversationKey(path_id(&conversation_id, "conversation")?);
        blocking(&state, move |coordinator| {
            coordinator.check_access(conversation, &caller)?;
            coordinator.history(conversation)
        })
        .await
    }
    .await;
    answer(result, StatusCode::OK)
}

/// Send an utterance; the answer comes after its turn is committed to the correction log.
#[utoipa::path(post, path = "/v1/conversations/{conversation_id}/utterances", tag = "conversations",
    security(("bearer" = [])),
    params(("conversation_id" = i64, Path, description = "A conversation id")),
    request_body = UtteranceRequest,
    responses((status = 200, description = "Understood, applied, pending, or a question back", body = UtteranceReply),
        (status = 400, description = "Malformed body", body = ErrorBody),
        (status = 404, description = "Unknown conversation", body = ErrorBody),
        (status = 409, description = "The scene changed meanwhile", body = ErrorBody),
        (status = 422, description = "Empty or too long, focus outside the image", body = ErrorBody),
        (status = 429, description = "Rate limited", body = ErrorBody)))]
pub async fn utterance(
    State(state): State<AppState>,
    Extension(caller): Extension<Caller>,
    Path(conversation_id): Path<String>,
    payload: Result<Json<UtteranceRequest>, JsonRejection>,
) -> Response {
    let result = async {
        let conversation = ConversationKey(path_id(&conversation_id, "conversation")?);
        let request = body(payload, &state)?;
        crate::session::check_utterance_text(&request.text)?;
        blocking(&state, move |coordinator| {
            coordinator.check_access(conversation, &caller)?;
            coordinator.utterance(conversation, &caller.name, &request.text, request.focus)
        })
        .await
    }
    .await;
    answer(result, StatusCode::OK)
}

macro_rules! turn_route {
    ($name:ident, $path:literal, $method:ident, $doc:literal) => {
        #[doc = $doc]
        #[utoipa::path(post, path = $path, tag = "conversations", security(("bearer" = [])),
            params(("conversation_id" = i64, Path, description = "A conversation id")),
            responses((status = 200, description = "Committed", body = TurnReply),
                (status = 404, description = "Unknown conversation", body = ErrorBody),
                (status = 409, description = "Nothing to do, or the scene moved on", body = ErrorBody)))]
        pub async fn $name(
            State(state): State<AppState>,
            Extension(caller): Extension<Caller>,
            Path(conversation_id): Path<String>,
        ) -> Response {
            let result = async {
                let conversation = ConversationKey(path_id(&conversation_id, "conversation")?);
                blocking(&state, move |coordinator| {
                    coordinator.check_access(conversation, &caller)?;
                    coordinator.$method(conversation, &caller.name)
                })
                .await
            }
            .await;
            answer(result, StatusCode::OK)
        }
    };
}

turn_route!(
    confirm,
    "/v1/conversations/{conversation_id}/confirm",
    confirm,
    "Apply the change waiting for confirmation (a person, pet or hazard renamed or removed)."
);
turn_route!(
    reject,
    "/v1/conversations/{conversation_id}/reject",
    reject,
    "Drop the change waiting for confirmation."
);
turn_route!(
    undo,
    "/v1/conversations/{conversation_id}/undo",
    undo,
    "Take back this conversation's latest applied change."
);
turn_route!(
    redo,
    "/v1/conversations/{conversation_id}/redo",
    redo,
    "Put back the change this conversation undid last."
);

/// Any path that is not a route.
pub async fn no_such_route() -> Response {
    ApiError::caller(
        StatusCode::NOT_FOUND,
        "no_such_route",
        "no route matches this path; see /v1/openapi.json",
    )
    .into_response()
}
