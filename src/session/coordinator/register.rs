//! Registering scenes: decoding what the caller sent (or a demo scene by name), checking it, asking the
//! corrector for the first state, and committing it.
//!
//! Owns: the checks on uploaded parts (PNG or JPEG decoding under the pixel limit, matching sizes, class and
//! room names, boxes inside the image) and the demo-scene lookup (`crate::demo::demo_scene_path` and
//! `crate::scene::load_capture`, as `fix` and `demo` find and read scenes).
//! Must not: interpret NPY scores or detections beyond names and bounds; the corrector does that.

use std::path::Path;
use std::sync::Arc;

use serde::{Deserialize, Serialize};

use crate::correction_log::{blob_hash, NewScene};
use crate::demo::demo_scene_path;
use crate::ids::{ClassId, RoomId};
use crate::raster::{self, RasterError};
use crate::scene::files::{image_file, DEPTH_FILE, IMAGE_FILES};
use crate::scene::BoundingBox;
use crate::unaries::byo_detections::{DetectionMask, MaskRuns};

use super::{encode_state, lock, log_error, Coordinator, SceneSlot};
use crate::corrector::{CorrectorError, Detection, PerceptionClasses, SceneInput};
use crate::error::{ErrorKind, SessionError};
use crate::raster::DepthImage;
use crate::wire::{RegisterSceneRequest, SceneCreated};

/// A scene as the caller sent it, base64 already removed.
#[derive(Clone, Debug, Default)]
pub struct SceneUpload {
    pub name: Option<String>,
    pub demo: Option<String>,
    /// PNG or JPEG bytes.
    pub image_png: Option<Vec<u8>>,
    pub depth_png: Option<Vec<u8>>,
    pub scores_npy: Option<Vec<u8>>,
    pub label_map_png: Option<Vec<u8>>,
    pub detections: Vec<crate::wire::DetectionIn>,
    /// Detections as JSON Lines (`crate::unaries::byo_detections`; boxes, and masks as `mask_runs`: a
    /// mask by file name cannot come with an upload), added to `detections`.
    pub detections_jsonl: Option<String>,
    pub room: Option<String>,
    /// The channel names of `scores_npy`, in order.
    pub scores_classes: Option<Vec<String>>,
    pub scores_kind: Option<crate::unaries::byo_pixel_scores::ScoreKind>,
    /// The label map's class list: value k is the k-th name.
    pub label_map_classes: Option<Vec<String>>,
    pub drop_unknown_classes: bool,
    /// The files came as multipart form parts (`image`, `depth`, `label_map`), not base64 JSON fields: what
    /// is refused is named as the caller sent it.
    pub multipart: bool,
}

fn decode_base64(field: &str, text: &Option<String>) -> Result<Option<Vec<u8>>, SessionError> {
    use base64::Engine;
    match text {
        None => Ok(None),
        Some(text) => base64::engine::general_purpose::STANDARD
            .decode(text.trim())
            .map(Some)
            .map_err(|error| {
                SessionError::malformed(
                    "bad_base64",
                    format!("{field} is not valid standard base64: {error}"),
                )
            }),
    }
}

impl SceneUpload {
    /// The name of a file as the caller sent it: the multipart part, or the JSON field.
    fn field(&self, part: &'static str, json: &'static str) -> &'static str {
        if self.multipart {
            part
        } else {
            json
        }
    }

    /// Removes the base64 from a wire request.
    pub fn from_request(request: RegisterSceneRequest) -> Result<SceneUpload, SessionError> {
        let image = match (&request.image_base64, &request.image_png_base64) {
            (Some(_), Some(_)) => {
                return Err(SessionError::malformed(
                    "conflicting_fields",
                    "send image_base64 or image_png_base64, not both",
                ))
            }
            (Some(_), None) => decode_base64("image_base64", &request.image_base64)?,
            (None, _) => decode_base64("image_png_base64", &request.image_png_base64)?,
        };
        Ok(SceneUpload {
            image_png: image,
            depth_png: decode_base64("depth_png_base64", &request.depth_png_base64)?,
            scores_npy: decode_base64("scores_npy_base64", &request.scores_npy_base64)?,
            label_map_png: decode_base64("label_map_png_base64", &request.label_map_png_base64)?,
            name: request.name,
            demo: request.demo,
            detections: request.detections,
            detections_jsonl: None,
            room: request.room,
            scores_classes: request.scores_classes,
            scores_kind: None,
            label_map_classes: request.label_map_classes,
            drop_unknown_classes: request.drop_unknown_classes.unwrap_or(false),
            multipart: false,
        })
    }
}

fn raster_error(field: &str, error: RasterError) -> SessionError {
    match error {
        RasterError::TooLarge {
            width,
            height,
            limit,
            ..
        } => SessionError::new(
            ErrorKind::TooLarge,
            "image_too_large",
            format!("{field} is {width}x{height}, above the pixel limit of {limit}; send a smaller image"),
        ),
        RasterError::SizeMismatch {
            width,
            height,
            found_width,
            found_height,
            ..
        } => SessionError::unusable(
            "size_mismatch",
            format!("{field} is {found_width}x{found_height} but the image is {width}x{height}"),
        ),
        RasterError::WrongFormat {
            found, expected, ..
        } => SessionError::unusable(
            "bad_image",
            format!("{field} has colour type {found}; expected {expected}"),
        ),
        RasterError::Decode {
            format, message, ..
        } => SessionError::unusable(
            "bad_image",
            format!("{field} is not a readable {format}: {message}"),
        ),
        other => SessionError::internal(other),
    }
}

/// Detections sent as JSON Lines, read as `fix --detections` reads them, masks as run lengths (a mask by
/// file name cannot come with an upload).
fn jsonl_detections(
    text: &str,
    width: u32,
    height: u32,
    taxonomy: &crate::taxonomy::Taxonomy,
) -> Result<Vec<Detection>, SessionError> {
    let synonyms = crate::unaries::byo::SynonymTable::embedded(taxonomy);
    let parsed = crate::unaries::byo_detections::parse_detections(
        text, None, width, height, taxonomy, &synonyms,
    )
    .map_err(|error| SessionError::unusable("bad_detections", error.to_string()))?;
    Ok(parsed
        .into_iter()
        .map(|detection| Detection {
            class: detection.class,
            bbox: detection.bbox,
            score: detection.score,
            mask: detection.mask.as_ref().map(DetectionMask::runs),
        })
        .collect())
}

/// A detection's `mask_runs`, checked: the image's size and runs that cover it exactly.
fn mask_of(
    index: usize,
    runs: &crate::wire::MaskRunsIn,
    width: u32,
    height: u32,
) -> Result<MaskRuns, SessionError> {
    let refuse = |message: String| {
        SessionError::unusable(
            "bad_mask",
            format!("detections[{index}].mask_runs {message}"),
        )
    };
    if (runs.width, runs.height) != (width, height) {
        return Err(refuse(format!(
            "is {}x{} but the image is {width}x{height}",
            runs.width, runs.height
        )));
    }
    let runs = MaskRuns {
        width: runs.width,
        height: runs.height,
        runs: runs.runs.clone(),
    };
    DetectionMask::from_runs(&runs).map_err(|message| refuse(format!("do not fit: {message}")))?;
    Ok(runs)
}

fn valid_demo_name(name: &str) -> bool {
    !name.is_empty()
        && name.len() <= 64
        && name.chars().all(|character| {
            character.is_ascii_alphanumeric() || character == '_' || character == '-'
        })
}

/// What a scene's `input_json` records besides the image: blob hashes of the other parts, the
/// detections and the declared room. Rows written before the parts were kept hold only flags; they restore
/// with the image alone.
#[derive(Debug, Default, Serialize, Deserialize)]
pub(crate) struct StoredInput {
    #[serde(default)]
    depth_png: Option<String>,
    #[serde(default)]
    scores_npy: Option<String>,
    #[serde(default)]
    label_map_png: Option<String>,
    #[serde(default)]
    detections: Vec<Detection>,
    #[serde(default)]
    room: Option<RoomId>,
    #[serde(default)]
    classes: PerceptionClasses,
    /// The superpixels the corrector cut at registration, so a restart need not cut them again.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    superpixels_png: Option<String>,
    /// What the corrector computed preparing the scene on those superpixels, in its stored form
    /// (`crate::prepared_form`), so a restart need not compute it again.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    prepared: Option<String>,
}

/// Rebuilds a stored scene's registration from its row: `blob` fetches a stored blob by hash.
pub(crate) fn restore_input(
    name: &str,
    image: crate::raster::RgbImage,
    input_json: &str,
    blob: impl Fn(&str) -> Result<Vec<u8>, String>,
) -> Result<SceneInput, String> {
    let stored: StoredInput = serde_json::from_str(input_json)
        .map_err(|error| format!("stored registration is unreadable: {error}"))?;
    let index_png =
        |hash: &Option<String>, what: &str| -> Result<Option<crate::raster::IndexImage>, String> {
            match hash {
                Some(hash) => raster::decode_index_png(&blob(hash)?, Path::new(what), u64::MAX)
                    .map(Some)
                    .map_err(|error| error.to_string()),
                None => Ok(None),
            }
        };
    let depth = index_png(&stored.depth_png, "stored depth")?.map(|decoded| DepthImage {
        width: decoded.width,
        height: decoded.height,
        millimetres: decoded.values,
    });
    let label_map = index_png(&stored.label_map_png, "stored label map")?;
    let superpixels = index_png(&stored.superpixels_png, "stored superpixels")?;
    // A prepared form that cannot be read is only a lost shortcut: the scene is prepared again.
    let prepared = stored.prepared.as_ref().and_then(|hash| match blob(hash) {
        Ok(bytes) => Some(std::sync::Arc::new(bytes)),
        Err(error) => {
            tracing::warn!(scene = name, %error, "the stored prepared scene cannot be read");
            None
        }
    });
    let scores_npy = match &stored.scores_npy {
        Some(hash) => Some(blob(hash)?),
        None => None,
    };
    Ok(SceneInput {
        name: name.to_string(),
        image: std::sync::Arc::new(image),
        depth: depth.map(std::sync::Arc::new),
        scores_npy,
        label_map,
        detections: stored.detections,
        room: stored.room,
        classes: stored.classes,
        superpixels,
        prepared,
    })
}

impl Coordinator {
    /// Registers a scene: checks it, builds its first state and commits it.
    pub fn register_scene(
        &self,
        mut upload: SceneUpload,
        operator: &str,
    ) -> Result<SceneCreated, SessionError> {
        if let Some(demo) = upload.demo.clone() {
            if upload.image_png.is_some() {
                return Err(SessionError::malformed(
                    "conflicting_fields",
                    "send either demo or image_png_base64, not both",
                ));
            }
            if !valid_demo_name(&demo) {
                return Err(SessionError::malformed(
                    "bad_demo_name",
                    "demo names are 1-64 letters, digits, '-' or '_'",
                ));
            }
            let directory = demo_scene_path(&self.demo_dir, Some(&demo)).map_err(|error| {
                SessionError::new(ErrorKind::Unknown, "unknown_demo_scene", error.to_string())
            })?;
            let unreadable = |what: &Path, error: std::io::Error| {
                SessionError::internal(format!("reading {}: {error}", what.display()))
            };
            let image_path = image_file(&directory).ok_or_else(|| {
                SessionError::new(
                    ErrorKind::Unknown,
                    "unknown_demo_scene",
                    format!(
                        "demo scene {} holds no image (looked for {})",
                        directory.display(),
                        IMAGE_FILES.join(", ")
                    ),
                )
            })?;
            upload.image_png =
                Some(std::fs::read(&image_path).map_err(|error| unreadable(&image_path, error))?);
            // The demo's ground-truth labels are not handed in: the scene starts from the built-in
            // classifier's belief, as on a robot. Its depth is read by the one scene loader, as `fix NAME`
            // reads it (scaled to millimetres by camera.json's depth unit), and sent on in millimetres.
            if upload.depth_png.is_none() && directory.join(DEPTH_FILE).is_file() {
                let capture =
                    crate::scene::load_capture(&directory, self.pixel_limit).map_err(|error| {
                        SessionError::internal(format!("reading {}: {error}", directory.display()))
                    })?;
                if let Some(depth) = capture.depth {
                    upload.depth_png = Some(
                        raster::encode_index_png(&raster::IndexImage {
                            width: depth.width,
                            height: depth.height,
                            values: depth.millimetres,
                        })
                        .map_err(SessionError::internal)?,
                    );
                }
            }
            if upload.name.is_none() {
                upload.name = Some(demo);
            }
        }
        let image_field = upload.field("image", "image_base64");
        let image_bytes = upload.image_png.take().ok_or_else(|| {
            SessionError::malformed(
                "missing_image",
                format!(
                    "send {image_field} (a {}PNG or JPEG) or demo (a demo scene name)",
                    if upload.multipart { "" } else { "base64 " }
                ),
            )
        })?;
        let image = raster::decode_rgb_image(&image_bytes, Path::new("image"), self.pixel_limit)
            .map_err(|error| raster_error(image_field, error))?;
        // The request's time limit may grow with the image (the service's `registration_ms_per_megapixel`).
        crate::abandon::report_pixels(image.pixels.len() as u64);
        // The log keeps PNG (its export writes image.png): a JPEG is stored as the PNG of its decoded pixels.
        let image_png = if raster::is_jpeg(&image_bytes) {
            raster::encode_rgb_png(&image).map_err(SessionError::internal)?
        } else {
            image_bytes
        };
        if let Some(model) = &self.user_model {
            if upload.scores_npy.is_none() && upload.label_map_png.is_none() {
                let scores = model.scores_for_image(&image).map_err(|error| {
                    SessionError::unusable(
                        "user_model",
                        format!("the service's user model: {error}"),
                    )
                })?;
                let values: Vec<f32> = scores.iter().map(|&value| value as f32).collect();
                upload.scores_npy = Some(crate::unaries::byo_npy::encode_npy_f32(
                    scores.shape(),
                    &values,
                ));
                upload.scores_classes = Some(model.config().classes.clone());
                upload.scores_kind = Some(model.config().output);
            }
        }
        let (width, height) = (image.width, image.height);
        let size_check = |field: &str, found_width: u32, found_height: u32| {
            if (found_width, found_height) != (width, height) {
                Err(raster_error(
                    field,
                    RasterError::SizeMismatch {
                        path: field.into(),
                        width,
                        height,
                        found_width,
                        found_height,
                    },
                ))
            } else {
                Ok(())
            }
        };
        let depth_field = upload.field("depth", "depth_png_base64");
        let label_map_field = upload.field("label_map", "label_map_png_base64");
        let depth = match &upload.depth_png {
            Some(bytes) => {
                let decoded = raster::decode_index_png(bytes, Path::new("depth"), self.pixel_limit)
                    .map_err(|error| raster_error(depth_field, error))?;
                size_check(depth_field, decoded.width, decoded.height)?;
                Some(raster::DepthImage {
                    width: decoded.width,
                    height: decoded.height,
                    millimetres: decoded.values,
                })
            }
            None => None,
        };
        let label_map = match &upload.label_map_png {
            Some(bytes) => {
                let decoded =
                    raster::decode_index_png(bytes, Path::new("label map"), self.pixel_limit)
                        .map_err(|error| raster_error(label_map_field, error))?;
                size_check(label_map_field, decoded.width, decoded.height)?;
                Some(decoded)
            }
            None => None,
        };
        let taxonomy = self.corrector.taxonomy();
        let mut detections = Vec::new();
        for (index, detection) in upload.detections.iter().enumerate() {
            let class = taxonomy.class_by_name(&detection.class).ok_or_else(|| {
                SessionError::unusable(
                    "unknown_class",
                    format!(
                        "detections[{index}].class {:?} is not in the taxonomy; see GET /v1/classes",
                        detection.class
                    ),
                )
            })?;
            let bbox = detection.bbox;
            if bbox.x0 >= bbox.x1 || bbox.y0 >= bbox.y1 || bbox.x1 > width || bbox.y1 > height {
                return Err(SessionError::unusable(
                    "bad_box",
                    format!("detections[{index}].box must be non-empty and inside the {width}x{height} image"),
                ));
            }
            if !(0.0..=1.0).contains(&detection.score) {
                return Err(SessionError::unusable(
                    "bad_score",
                    format!("detections[{index}].score must be between 0 and 1"),
                ));
            }
            detections.push(Detection {
                class: ClassId(class.id.0),
                bbox: BoundingBox {
                    x0: bbox.x0,
                    y0: bbox.y0,
                    x1: bbox.x1,
                    y1: bbox.y1,
                },
                score: detection.score,
                mask: detection
                    .mask_runs
                    .as_ref()
                    .map(|runs| mask_of(index, runs, width, height))
                    .transpose()?,
            });
        }
        if let Some(text) = &upload.detections_jsonl {
            detections.extend(jsonl_detections(text, width, height, taxonomy)?);
        }
        let classes = PerceptionClasses {
            scores: upload.scores_classes.clone(),
            scores_kind: upload.scores_kind,
            label_map: upload.label_map_classes.clone(),
            drop_unknown: upload.drop_unknown_classes,
        };
        for (field, names) in [
            ("scores_classes", &classes.scores),
            ("label_map_classes", &classes.label_map),
        ] {
            if names
                .as_ref()
                .is_some_and(|names| names.is_empty() || names.len() > 255)
            {
                return Err(SessionError::unusable(
                    "bad_class_list",
                    format!("{field} must name 1 to 255 classes"),
                ));
            }
        }
        let room: Option<RoomId> = match &upload.room {
            Some(name) => Some(
                taxonomy
                    .room_by_name(name)
                    .ok_or_else(|| {
                        SessionError::unusable(
                            "unknown_room",
                            format!("room {name:?} is not a room type of the taxonomy"),
                        )
                    })?
                    .id,
            ),
            None => None,
        };
        let name = upload
            .name
            .clone()
            .unwrap_or_else(|| "scene".to_string())
            .chars()
            .take(200)
            .collect::<String>();
        if let Some(problem) = crate::scene::capture::scene_name_problem(&name) {
            return Err(SessionError::unusable("bad_scene_name", problem));
        }
        let mut input = SceneInput {
            name: name.clone(),
            image: std::sync::Arc::new(image),
            depth: depth.map(std::sync::Arc::new),
            scores_npy: upload.scores_npy.clone(),
            label_map,
            detections: detections.clone(),
            room,
            classes: classes.clone(),
            superpixels: None,
            prepared: None,
        };
        let state = self
            .corrector
            .register(&input)
            .map_err(|error| match error {
                CorrectorError::BadInput { field, message } => {
                    SessionError::unusable("bad_scene_input", format!("{field}: {message}"))
                }
                internal => SessionError::internal(internal),
            })?;
        let record = encode_state(&state)?;
        // Kept with the scene, so a restart or another replica reads them instead of cutting them again.
        let superpixels = self.corrector.superpixels(&input);
        let superpixels_png = superpixels
            .as_ref()
            .and_then(|map| raster::encode_index_png(map).ok());
        input.superpixels = superpixels;
        let prepared = self.corrector.prepared_form(&input);
        let parts: Vec<&[u8]> = [
            &upload.depth_png,
            &upload.scores_npy,
            &upload.label_map_png,
            &superpixels_png,
            &prepared,
        ]
        .into_iter()
        .flatten()
        .map(|bytes| bytes.as_slice())
        .collect();
        let input_json = serde_json::to_string(&StoredInput {
            depth_png: upload.depth_png.as_deref().map(blob_hash),
            scores_npy: upload.scores_npy.as_deref().map(blob_hash),
            label_map_png: upload.label_map_png.as_deref().map(blob_hash),
            detections: detections.clone(),
            room,
            classes,
            superpixels_png: superpixels_png.as_deref().map(blob_hash),
            prepared: prepared.as_deref().map(blob_hash),
        })
        .map_err(SessionError::internal)?;
        // Past this check the request is no longer abandoned by its time limit: the caller gets the ids.
        if !crate::abandon::may_commit() {
            return Err(super::withdrawn());
        }
        let (key, version) = lock(&self.log)
            .register_scene(&NewScene {
                name: &name,
                image_png: &image_png,
                input_json: &input_json,
                parts: &parts,
                operator,
                state: &record,
            })
            .map_err(log_error)?;
        input.prepared = prepared.map(Arc::new);
        self.hold_scene(
            key,
            SceneSlot {
                name: name.clone(),
                input: Arc::new(input),
                head: version,
                state,
            },
        );
        Ok(SceneCreated {
            scene_id: key.0,
            name,
            width,
            height,
            version: version.0,
        })
    }
}
