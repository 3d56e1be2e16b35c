//! The OpenAPI 3.1 document, generated from the handlers' annotations and the wire types themselves.
//!
//! Owns: `ApiDoc` and its JSON text (served at `/v1/openapi.json` and committed beside this file as
//! `openapi.json`; a test regenerates it and fails on any drift).
//! Must not: describe anything by hand that the types already say.
//!
//! What no handler's annotation says is added in one place, `add_refusals`: the refusals every route can
//! give from the layers around it (head limits, load shedding, time limit, internal faults, and for routes
//! behind a token the 401 and 429 of the guard), the 403 of the conversation routes, the 400/413/415 of a
//! JSON body, the minimum of path ids, and the rule that a scene registration names a demo or an image.

use serde_json::{json, Value};
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
        handlers::list_scenes,
        handlers::register_scene,
        handlers::upload_scene,
        handlers::scene_graph,
        handlers::label_map,
        handlers::overlay,
        handlers::scene_versions,
        handlers::list_conversations,
        handlers::open_conversation,
        handlers::history,
        handlers::utterance,
        handlers::confirm,
        handlers::reject,
        handlers::undo,
        handlers::redo,
    ),
    components(schemas(
        wire::ErrorBody, wire::PixelBox, wire::DetectionIn, wire::MaskRunsIn, wire::RegisterSceneRequest,
        wire::SceneCreated, wire::ObjectOut, wire::SceneGraphOut, wire::OpenConversationRequest,
        wire::ConversationOut, wire::FocusIn, wire::UtteranceRequest, wire::TextSpan,
        wire::ConstraintOut, wire::ChangeOut, wire::UnmetOut, wire::TurnStatus, wire::PendingOut,
        wire::UtteranceReply, wire::TurnReply, wire::TurnOut, wire::HistoryOut, wire::HealthOut,
        wire::ClassOut, wire::SceneListed, wire::ScenePage, wire::ConversationListed,
        wire::ConversationPage, wire::VersionListed, wire::SceneVersions,
    )),
    modifiers(&BearerSecurity),
    tags(
        (name = "service", description = "Health, metrics and this document"),
        (name = "scenes", description = "Registering scenes and reading their current state"),
        (name = "conversations", description = "Correcting a scene in words"),
    )
)]
pub struct ApiDoc;

fn error_response(description: &str, retry_after: bool, challenge: bool) -> Value {
    let mut response = json!({
        "description": description,
        "content": {"application/json": {"schema": {"$ref": "#/components/schemas/ErrorBody"}}}
    });
    let mut headers = serde_json::Map::new();
    if retry_after {
        headers.insert(
            "Retry-After".into(),
            json!({"description": "Seconds to wait before trying again", "schema": {"type": "integer", "minimum": 1}}),
        );
    }
    if challenge {
        headers.insert(
            "WWW-Authenticate".into(),
            json!({"description": "The scheme to authenticate with: Bearer", "schema": {"type": "string"}}),
        );
    }
    if !headers.is_empty() {
        response["headers"] = Value::Object(headers);
    }
    response
}

/// Adds the refusals the layers give (see the module doc) to every operation, keeping any a handler
/// already describes.
fn add_refusals(document: &mut Value) {
    let Some(paths) = document["paths"].as_object_mut() else {
        return;
    };
    for (path, item) in paths.iter_mut() {
        let Some(operations) = item.as_object_mut() else {
            continue;
        };
        for operation in operations.values_mut() {
            let secured = operation.get("security").is_some();
            let has_body = operation.get("requestBody").is_some();
            let has_id = path.contains('{');
            // `get_mut`, not indexing: indexing a missing key would insert a null.
            if let Some(parameters) = operation
                .get_mut("parameters")
                .and_then(Value::as_array_mut)
            {
                for parameter in parameters {
                    if parameter["in"] == "path" && parameter["schema"]["type"] == "integer" {
                        parameter["schema"]["minimum"] = json!(1);
                    }
                }
            }
            let mut refusals: Vec<(&str, Value)> = vec![
                (
                    "414",
                    error_response("The request target is over 8 KiB (uri_too_long)", false, false),
                ),
                (
                    "431",
                    error_response(
                        "More than 100 headers or 16 KiB of them (headers_too_large)",
                        false,
                        false,
                    ),
                ),
                (
                    "500",
                    error_response("An internal fault; nothing was applied (internal)", false, false),
                ),
                (
                    "503",
                    error_response(
                        "Too many requests in flight (overloaded, with Retry-After) or over the time limit \
                         (timeout: nothing was stored; the limit is request_timeout_ms, or for a scene \
                         registration, a scene read back from the log or an overlay, \
                         registration_ms_per_megapixel for each megapixel of its image if that is \
                         longer, and the message names it)",
                        true,
                        false,
                    ),
                ),
            ];
            if secured {
                refusals.push((
                    "401",
                    error_response(
                        "No bearer token, or a wrong one (missing_token, wrong_token)",
                        false,
                        true,
                    ),
                ));
                refusals.push((
                    "429",
                    error_response(
                        "Over the operator's request rate (rate_limited) or too many failed logins from \
                         this address (too_many_failed_logins)",
                        true,
                        false,
                    ),
                ));
            }
            if has_id {
                refusals.push((
                    "400",
                    error_response(
                        "An id that is not a positive integer (bad_id)",
                        false,
                        false,
                    ),
                ));
            }
            if path.starts_with("/v1/conversations/{conversation_id}") {
                refusals.push((
                    "403",
                    error_response(
                        "Another operator's conversation; only they or a supervisor may read it or act on \
                         it (not_your_conversation)",
                        false,
                        false,
                    ),
                ));
            }
            if has_body {
                refusals.push((
                    "400",
                    error_response(
                        "The body is not JSON, or not the fields and types this route takes (bad_json, \
                         wrong_shape)",
                        false,
                        false,
                    ),
                ));
                refusals.push((
                    "413",
                    error_response(
                        "The body is over body_limit_bytes (body_too_large)",
                        false,
                        false,
                    ),
                ));
                let media = if path == UPLOAD_PATH {
                    "multipart/form-data with a boundary"
                } else {
                    "application/json"
                };
                refusals.push((
                    "415",
                    error_response(
                        &format!("The body is not sent as {media} (bad_content_type)"),
                        false,
                        false,
                    ),
                ));
            }
            let Some(responses) = operation
                .get_mut("responses")
                .and_then(Value::as_object_mut)
            else {
                continue;
            };
            for (status, response) in refusals {
                responses.entry(status).or_insert(response);
            }
        }
    }
    // Each kind of focus takes its own fields only (the wire type refuses unknown fields).
    if let Some(variants) = document
        .pointer_mut("/components/schemas/FocusIn/oneOf")
        .and_then(Value::as_array_mut)
    {
        for variant in variants.iter_mut().filter_map(Value::as_object_mut) {
            variant.insert("additionalProperties".into(), json!(false));
        }
    }
    upload_parts(document);
    // A registration names a demo scene or sends an image: exactly one of the three.
    let register = document
        .pointer_mut("/components/schemas/RegisterSceneRequest")
        .and_then(Value::as_object_mut);
    if let Some(register) = register {
        let named =
            |field: &str| json!({"required": [field], "properties": {field: {"type": "string"}}});
        register.insert(
            "oneOf".into(),
            json!([
                named("demo"),
                named("image_base64"),
                named("image_png_base64")
            ]),
        );
    }
}

/// The multipart scene upload's route.
const UPLOAD_PATH: &str = "/v1/scenes/upload";

/// The multipart upload's parts, exactly as `super::upload` reads them: each named part at most once, no
/// other part, `image` or `demo` and not both; the text parts' rules are the JSON registration's.
fn upload_parts(document: &mut Value) {
    let register = document
        .pointer("/components/schemas/RegisterSceneRequest/properties")
        .cloned()
        .unwrap_or_else(|| json!({}));
    // A text part: the JSON field's schema, as a plain string (a part is never null).
    let text = |field: &str, description: &str| {
        let mut schema = register.get(field).cloned().unwrap_or_else(|| json!({}));
        schema["type"] = json!("string");
        schema["description"] = json!(description);
        schema
    };
    let bytes = |description: &str| json!({"type": "string", "format": "binary", "minLength": 1, "description": description});
    let class_list = |description: &str| {
        // Some line whose first character that is not white space is not `#` (a comment).
        json!({"type": "string", "pattern": "(?:^|\\n)\\s*[^\\s#]", "description": description})
    };
    let schema = json!({
        "type": "object",
        "additionalProperties": false,
        "properties": {
            "image": bytes("The colour image, PNG or JPEG (told apart by content)."),
            "demo": text("demo", "The name of a demo scene under the service's demo directory: 1-64 letters, \
                digits, '-' or '_' (surrounding white space is ignored)."),
            "depth": bytes("A 16-bit depth PNG in millimetres."),
            "scores": bytes("Per-pixel class scores as an NPY array (float32 or float64, height x width x \
                classes or classes x height x width); channels named by `scores_classes`."),
            "scores_classes": class_list("The channel names of `scores`, one class name per line."),
            "label_map": bytes("A label map as a single-channel index PNG (pixel value = class id, 255 = \
                unlabelled)."),
            "label_map_classes": class_list("The class list of `label_map`, one class name per line."),
            "detections": {"type": "string", "description": "The robot's detections in JSON Lines, one \
                `{\"class\": .., \"box\": [x0, y0, x1, y1], \"score\": ..}` per line, with an optional \
                `\"mask_runs\"` (docs/perception.md)."},
            "name": text("name", "A name for people; defaults to the demo name or \"scene\". Plain text: no \
                control characters or text-direction overrides; longer than 200 characters is cut to 200."),
            "room": text("room", "A room type name, when known (surrounding white space is ignored)."),
            "drop_unknown_classes": {"type": "string", "enum": ["true", "false"], "description": "Leave \
                classes with unknown names out instead of refusing the scene (default false)."},
        },
        "oneOf": [
            {"required": ["image"]},
            {"required": ["demo"]},
        ],
    });
    let encoding = json!({
        "image": {"contentType": "image/png, image/jpeg"},
        "depth": {"contentType": "image/png"},
        "scores": {"contentType": "application/octet-stream"},
        "label_map": {"contentType": "image/png"},
    });
    let pointer = format!(
        "/paths/{}/post/requestBody/content/multipart~1form-data",
        UPLOAD_PATH.replace('/', "~1")
    );
    if let Some(content) = document.pointer_mut(&pointer) {
        *content = json!({"schema": schema, "encoding": encoding});
    }
}

/// The document as pretty JSON with a trailing newline, exactly as committed.
pub fn document_json() -> String {
    let mut document = serde_json::to_value(ApiDoc::openapi()).unwrap_or_else(|_| json!({}));
    add_refusals(&mut document);
    let mut text = serde_json::to_string_pretty(&document).unwrap_or_else(|_| "{}".to_string());
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
            let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("openapi.json");
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

    #[test]
    fn every_refusal_a_route_can_give_is_documented() {
        let document: serde_json::Value = serde_json::from_str(&document_json()).unwrap();
        let confirm = &document["paths"]["/v1/conversations/{conversation_id}/confirm"]["post"];
        for status in [
            "200", "400", "401", "403", "404", "409", "414", "429", "431", "500", "503",
        ] {
            assert!(confirm["responses"][status].is_object(), "confirm {status}");
        }
        assert_eq!(confirm["parameters"][0]["schema"]["minimum"], 1);
        assert!(confirm["responses"]["429"]["headers"]["Retry-After"].is_object());
        let register = &document["paths"]["/v1/scenes"]["post"];
        for status in ["201", "400", "401", "404", "413", "415", "422", "503"] {
            assert!(
                register["responses"][status].is_object(),
                "register {status}"
            );
        }
        let health = &document["paths"]["/v1/health"]["get"];
        assert!(
            health["responses"]["401"].is_null(),
            "health needs no token"
        );
        let schema = &document["components"]["schemas"]["RegisterSceneRequest"];
        assert_eq!(schema["oneOf"].as_array().unwrap().len(), 3);
        // The multipart upload's parts are exactly the ones `upload` reads, image or demo required.
        let upload = &document["paths"][UPLOAD_PATH]["post"]["requestBody"]["content"]
            ["multipart/form-data"]["schema"];
        let mut documented: Vec<&str> = upload["properties"]
            .as_object()
            .expect("the upload's parts")
            .keys()
            .map(String::as_str)
            .collect();
        documented.sort();
        let mut read = super::super::upload::PARTS.to_vec();
        read.sort();
        assert_eq!(documented, read);
        assert_eq!(upload["additionalProperties"], false);
        assert_eq!(upload["oneOf"].as_array().map(Vec::len), Some(2));
        assert_eq!(
            upload["properties"]["name"]["pattern"],
            schema["properties"]["name"]["pattern"]
        );
        let refused = &document["paths"][UPLOAD_PATH]["post"]["responses"]["415"]["description"];
        assert!(
            refused.as_str().unwrap().contains("multipart/form-data"),
            "{refused}"
        );
        let text = &document["components"]["schemas"]["UtteranceRequest"]["properties"]["text"];
        assert_eq!(
            (text["minLength"].as_u64(), text["maxLength"].as_u64()),
            (Some(1), Some(2000))
        );
        assert!(document["paths"]["/v1/conversations"]["get"].is_object());
        let versions = &document["paths"]["/v1/scenes/{scene_id}/versions"]["get"];
        for status in ["200", "400", "401", "404"] {
            assert!(
                versions["responses"][status].is_object(),
                "versions {status}"
            );
        }
        for path in [
            "/v1/scenes/{scene_id}",
            "/v1/scenes/{scene_id}/labels.png",
            "/v1/scenes/{scene_id}/overlay.png",
        ] {
            let parameters = document["paths"][path]["get"]["parameters"]
                .as_array()
                .unwrap();
            assert!(
                parameters
                    .iter()
                    .any(|p| p["name"] == "version" && p["in"] == "query"),
                "{path} takes ?version="
            );
        }
        let history = &document["components"]["schemas"]["HistoryOut"]["properties"];
        assert!(history["question"].is_object() && history["candidates"].is_object());
    }
}
