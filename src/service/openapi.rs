//! The OpenAPI 3.1 document, generated from the handlers' annotations and the wire types themselves.
//!
//! Owns: `ApiDoc` and its JSON text (served at `/v1/openapi.json` and committed beside this file as
//! `openapi.json`; a test regenerates it and fails on any drift).
//! Must not: describe anything by hand that the types already say.

use utoipa::openapi::security::{HttpAuthScheme, HttpBuilder, SecurityScheme};
use utoipa::{Modify, OpenApi};

use super::handlers;
use super::wire;

struct BearerSecurity;

impl Modify for BearerSecurity {
    fn modify(&self, openapi: &mut utoipa::openapi::OpenApi) {
        let components = openapi.components.get_or_insert_with(Default::default);
        components.add_security_scheme(
            "bearer",
            SecurityScheme::Http(HttpBuilder::new().scheme(HttpAuthScheme::Bearer).build()),
        );
    }
}

/// The service's API, version 1.
#[derive(OpenApi)]
#[openapi(
    info(
        title = "sayso correction service",
        description = "Correct a robot's semantic picture of a room in plain words.\n\n\
**Safety:** a corrected scene is advisory. It is never a substitute for the robot's own safety sensors and \
interlocks. Follow the robot maker's safety guidance and local regulations when acting on it. Changes that \
would remove or rename a person, a pet or a hazard are held until confirmed.\n\n\
Every failure is answered as `{\"code\": ..., \"message\": ...}` with a stable code. When operator tokens are \
configured, send `Authorization: Bearer <token>`."
    ),
    paths(
        handlers::health,
        handlers::metrics,
        handlers::openapi_document,
        handlers::classes,
        handlers::register_scene,
        handlers::scene_graph,
        handlers::label_map,
        handlers::overlay,
        handlers::open_conversation,
        handlers::history,
        handlers::utterance,
        handlers::confirm,
        handlers::reject,
        handlers::undo,
        handlers::redo,
    ),
    components(schemas(
        wire::ErrorBody, wire::PixelBox, wire::DetectionIn, wire::RegisterSceneRequest,
        wire::SceneCreated, wire::ObjectOut, wire::SceneGraphOut, wire::OpenConversationRequest,
        wire::ConversationOut, wire::FocusIn, wire::UtteranceRequest, wire::TextSpan,
        wire::ConstraintOut, wire::ChangeOut, wire::UnmetOut, wire::TurnStatus, wire::PendingOut,
        wire::UtteranceReply, wire::TurnReply, wire::TurnOut, wire::HistoryOut, wire::HealthOut,
        wire::ClassOut,
    )),
    modifiers(&BearerSecurity),
    tags(
        (name = "service", description = "Health, metrics and this document"),
        (name = "scenes", description = "Registering scenes and reading their current state"),
        (name = "conversations", description = "Correcting a scene in words"),
    )
)]
pub struct ApiDoc;

/// The document as pretty JSON with a trailing newline, exactly as committed.
pub fn document_json() -> String {
    let mut text = ApiDoc::openapi()
        .to_pretty_json()
        .unwrap_or_else(|_| "{}".to_string());
    text.push('\n');
    text
}

/// The committed copy.
pub const COMMITTED: &str = include_str!("openapi.json");

#[cfg(test)]
mod tests {
    use super::*;

    /// Regenerate the committed copy with `SAYSO_WRITE_OPENAPI=1 cargo test --lib openapi`.
    #[test]
    fn the_committed_document_matches_the_types() {
        let generated = document_json();
        if std::env::var_os("SAYSO_WRITE_OPENAPI").is_some() {
            let path =
                std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("src/service/openapi.json");
            std::fs::write(path, &generated).unwrap();
            return;
        }
        assert!(
            generated == COMMITTED,
            "src/service/openapi.json is out of date; run SAYSO_WRITE_OPENAPI=1 cargo test --lib openapi"
        );
    }

    #[test]
    fn the_document_is_openapi_3_1_and_carries_the_safety_caution() {
        let document: serde_json::Value = serde_json::from_str(&document_json()).unwrap();
        assert!(document["openapi"].as_str().unwrap().starts_with("3.1"));
        let description = document["info"]["description"].as_str().unwrap();
        assert!(description.contains("never a substitute for the robot's own safety sensors"));
        assert!(
            document["paths"]["/v1/conversations/{conversation_id}/utterances"]["post"].is_object()
        );
        assert!(document["components"]["securitySchemes"]["bearer"].is_object());
    }
}
