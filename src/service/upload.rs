//! Reading a multipart scene upload (`POST /v1/scenes/upload`) into the same `SceneUpload` the JSON route
//! builds, so large parts (a full-size score map) travel without base64.
//!
//! Owns: the part names and how each is read (bytes, one-name-per-line class lists, JSON Lines
//! detections, short text fields), and the refusals of unknown, repeated or oversized parts.
//! Must not: decode images or scores, or check class names; the coordinator's registration does.

use axum::extract::multipart::{Field, Multipart, MultipartError};
use axum::http::StatusCode;

use super::error::{body_too_large, ApiError};
use crate::session::SceneUpload;
use crate::unaries::perception::read_class_list;

/// The parts a scene upload may carry.
pub const PARTS: [&str; 11] = [
    "image",
    "demo",
    "depth",
    "scores",
    "scores_classes",
    "label_map",
    "label_map_classes",
    "detections",
    "name",
    "room",
    "drop_unknown_classes",
];

fn read_error(error: MultipartError, limit: usize) -> ApiError {
    if error.status() == StatusCode::PAYLOAD_TOO_LARGE {
        body_too_large(limit)
    } else {
        ApiError::bad_request(
            "bad_multipart",
            format!(
                "the multipart body could not be read: {}",
                error.body_text()
            ),
        )
    }
}

async fn bytes(field: Field<'_>, limit: usize) -> Result<Vec<u8>, ApiError> {
    Ok(field
        .bytes()
        .await
        .map_err(|error| read_error(error, limit))?
        .to_vec())
}

async fn text(field: Field<'_>, name: &str, limit: usize) -> Result<String, ApiError> {
    String::from_utf8(bytes(field, limit).await?).map_err(|_| {
        ApiError::bad_request("bad_multipart", format!("part {name} is not UTF-8 text"))
    })
}

fn class_list(text: &str, name: &str) -> Result<Vec<String>, ApiError> {
    read_class_list(text).map_err(|_| {
        ApiError::unprocessable(
            "bad_class_list",
            format!("part {name} names no class; send one class name per line"),
        )
    })
}

/// Reads every part of a scene upload; `limit` is the body limit, stated in a refusal.
pub async fn read_upload(mut multipart: Multipart, limit: usize) -> Result<SceneUpload, ApiError> {
    let mut upload = SceneUpload {
        multipart: true,
        ..SceneUpload::default()
    };
    let mut seen: Vec<String> = Vec::new();
    while let Some(field) = multipart
        .next_field()
        .await
        .map_err(|error| read_error(error, limit))?
    {
        let name = field.name().unwrap_or("").to_string();
        if !PARTS.contains(&name.as_str()) {
            return Err(ApiError::bad_request(
                "unknown_part",
                format!(
                    "part {:?} is not one this route takes ({})",
                    name.chars().take(40).collect::<String>(),
                    PARTS.join(", ")
                ),
            ));
        }
        if seen.contains(&name) {
            return Err(ApiError::bad_request(
                "repeated_part",
                format!("part {name} is sent twice; send each part once"),
            ));
        }
        seen.push(name.clone());
        match name.as_str() {
            "image" => upload.image_png = Some(bytes(field, limit).await?),
            "depth" => upload.depth_png = Some(bytes(field, limit).await?),
            "scores" => upload.scores_npy = Some(bytes(field, limit).await?),
            "label_map" => upload.label_map_png = Some(bytes(field, limit).await?),
            "scores_classes" => {
                upload.scores_classes = Some(class_list(&text(field, &name, limit).await?, &name)?)
            }
            "label_map_classes" => {
                upload.label_map_classes =
                    Some(class_list(&text(field, &name, limit).await?, &name)?)
            }
            "detections" => upload.detections_jsonl = Some(text(field, &name, limit).await?),
            "demo" => upload.demo = Some(text(field, &name, limit).await?.trim().to_string()),
            "name" => upload.name = Some(text(field, &name, limit).await?),
            "room" => upload.room = Some(text(field, &name, limit).await?.trim().to_string()),
            _ => {
                let value = text(field, &name, limit).await?;
                upload.drop_unknown_classes = match value.trim() {
                    "true" => true,
                    "false" => false,
                    other => {
                        return Err(ApiError::bad_request(
                            "bad_multipart",
                            format!(
                                "part drop_unknown_classes is {:?}; send true or false",
                                other.chars().take(20).collect::<String>()
                            ),
                        ))
                    }
                }
            }
        }
    }
    Ok(upload)
}
