//! Turning what a scene was registered with into what the joint pipeline solves on.
//!
//! Owns: `PreparedInput` (superpixels, per-segment unaries, detections), the choice of unary source (NPY
//! scores, else a label map, else the built-in classifier; each read with its class names through
//! `crate::unaries::perception`, as `fix` reads them), and the digest that names a registration.
//! Must not: parse utterances, solve, or know about the service's storage; the caller caches.

use sha2::{Digest, Sha256};

use crate::hypotheses::Detection as HypothesisDetection;
use crate::scene::{Scene, SceneParams};
use crate::taxonomy::Taxonomy;
use crate::unaries::byo::PerceptionError;
use crate::unaries::byo_npy::parse_npy;
use crate::unaries::byo_pixel_scores::ScoreLayout;
use crate::unaries::perception::{LabelMap, Perception, PixelScores, ScoreSource};
use crate::unaries::{Classifier, Unaries, UnarySource};

use super::corrector::{CorrectorError, PerceptionClasses, SceneInput};

/// A registered scene ready to be solved.
pub struct PreparedInput {
    pub scene: Scene,
    pub unaries: Unaries,
    pub detections: Vec<HypothesisDetection>,
    /// The id of the built-in classifier that scored the scene (`None` when the scores came with it).
    pub model: Option<String>,
}

/// The lower-case hex SHA-256 of everything that decides a scene's solve: its name, pixels, depth, scores,
/// label map, detections and declared room. Two registrations with the same digest solve identically.
pub fn input_digest(input: &SceneInput) -> String {
    fn framed(hasher: &mut Sha256, tag: &str, bytes: &[u8]) {
        hasher.update(tag.as_bytes());
        hasher.update((bytes.len() as u64).to_le_bytes());
        hasher.update(bytes);
    }
    let mut hasher = Sha256::new();
    framed(&mut hasher, "name", input.name.as_bytes());
    let size = [
        input.image.width.to_le_bytes(),
        input.image.height.to_le_bytes(),
    ]
    .concat();
    framed(&mut hasher, "size", &size);
    // The pixels are hashed in place, framed as `framed` frames a part (no copy of the image).
    hasher.update(b"image");
    hasher.update((input.image.pixels.len() as u64 * 3).to_le_bytes());
    let mut chunk = Vec::with_capacity(3 * 4096);
    for pixels in input.image.pixels.chunks(4096) {
        chunk.clear();
        chunk.extend(pixels.iter().flatten());
        hasher.update(&chunk);
    }
    if let Some(depth) = &input.depth {
        framed(&mut hasher, "depth", &le_bytes(&depth.millimetres));
    }
    if let Some(scores) = &input.scores_npy {
        framed(&mut hasher, "scores", scores);
    }
    if let Some(labels) = &input.label_map {
        framed(&mut hasher, "labels", &le_bytes(&labels.values));
    }
    for detection in &input.detections {
        let text = format!(
            "{} {} {} {} {} {}",
            detection.class.0,
            detection.bbox.x0,
            detection.bbox.y0,
            detection.bbox.x1,
            detection.bbox.y1,
            detection.score.to_bits()
        );
        framed(&mut hasher, "detection", text.as_bytes());
    }
    if let Some(room) = input.room {
        framed(&mut hasher, "room", &room.0.to_le_bytes());
    }
    if input.classes != PerceptionClasses::default() {
        let text = serde_json::to_string(&input.classes).unwrap_or_default();
        framed(&mut hasher, "classes", text.as_bytes());
    }
    hex(&hasher.finalize())
}

fn le_bytes(values: &[u16]) -> Vec<u8> {
    values
        .iter()
        .flat_map(|value| value.to_le_bytes())
        .collect()
}

/// Lower-case hex of bytes.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|byte| format!("{byte:02x}")).collect()
}

fn bad(field: &str, message: impl Into<String>) -> CorrectorError {
    CorrectorError::BadInput {
        field: field.to_string(),
        message: message.into(),
    }
}

/// Pixels per superpixel at least, for images too small for the default segment count (our own choice).
const SMALLEST_SEGMENT_PIXELS: u64 = 4;

/// The default scene settings, with fewer superpixels on images too small for the default count, and
/// proportionally fewer per coarse region (at least one), so the coarse level keeps its share of the image.
fn scene_params(width: u32, height: u32) -> Result<SceneParams, CorrectorError> {
    let mut params = SceneParams::default();
    let default_target = params.superpixels.target_segments() as u64;
    let fits = (width as u64 * height as u64 / SMALLEST_SEGMENT_PIXELS).max(1);
    if fits < default_target {
        params.superpixels = params
            .superpixels
            .with_target_segments(fits as u32)
            .map_err(|error| bad("image_png_base64", error.to_string()))?;
        let per_region = (params.segments_per_region as u64 * fits / default_target).max(1);
        params.segments_per_region = per_region as u32;
    }
    Ok(params)
}

/// Builds superpixels and unaries for a registration, through the same `Perception` as `fix`.
pub fn prepare_input(
    input: &SceneInput,
    taxonomy: &Taxonomy,
    classifier: &Classifier,
) -> Result<PreparedInput, CorrectorError> {
    let scene = Scene::from_image(
        input.name.clone(),
        input.image.clone(),
        input.depth.clone(),
        input.room,
        &scene_params(input.image.width, input.image.height)?,
    )
    .map_err(|error| bad("image_png_base64", error.to_string()))?;
    let (scores, field) = if let Some(bytes) = &input.scores_npy {
        const FIELD: &str = "scores";
        let array = parse_npy(bytes).map_err(|error| bad(FIELD, error.to_string()))?;
        let scores = ScoreSource::PixelScores(PixelScores {
            values: array.values,
            class_names: input.classes.scores.clone(),
            kind: input.classes.scores_kind,
            layout: ScoreLayout::Infer,
            origin: FIELD.into(),
        });
        (scores, FIELD)
    } else if let Some(labels) = &input.label_map {
        let map = ScoreSource::LabelMap(LabelMap {
            labels: labels.clone(),
            class_names: input.classes.label_map.clone(),
            origin: "label_map".into(),
        });
        (map, "label_map")
    } else {
        (ScoreSource::BuiltIn, "image_base64")
    };
    let perception = Perception {
        scores,
        detections: input
            .detections
            .iter()
            .map(|detection| HypothesisDetection {
                class: detection.class,
                bbox: detection.bbox,
                score: detection.score,
                mask: None,
            })
            .collect(),
        drop_unknown_classes: input.classes.drop_unknown,
    };
    let perceived = perception
        .unaries(&scene, &input.image, taxonomy, classifier)
        .map_err(|error| match error {
            PerceptionError::Model { message } if field == "image_base64" => {
                CorrectorError::Internal(message)
            }
            other => bad(field, other.to_string()),
        })?;
    let model = matches!(perceived.unaries.source, UnarySource::BuiltIn { .. })
        .then(|| classifier.id().to_string());
    Ok(PreparedInput {
        scene,
        unaries: perceived.unaries,
        detections: perceived.detections,
        model,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_digest_frames_the_pixels_as_one_part_without_copying_them() {
        let mut image = crate::raster::RgbImage::filled(70, 90, [0, 0, 0]);
        for (index, pixel) in image.pixels.iter_mut().enumerate() {
            *pixel = [index as u8, (index / 7) as u8, (index / 300) as u8];
        }
        let input = SceneInput {
            name: "hall".into(),
            image: image.clone(),
            depth: None,
            scores_npy: None,
            label_map: None,
            detections: Vec::new(),
            room: None,
            classes: PerceptionClasses::default(),
        };
        // The digest as earlier builds wrote it (stored engine states name their scene by it): every part
        // framed by its tag and length, the pixels copied out whole.
        let mut hasher = Sha256::new();
        let size = [70u32.to_le_bytes(), 90u32.to_le_bytes()].concat();
        let pixels: Vec<u8> = image.pixels.iter().flatten().copied().collect();
        for (tag, bytes) in [("name", &b"hall"[..]), ("size", &size), ("image", &pixels)] {
            hasher.update(tag.as_bytes());
            hasher.update((bytes.len() as u64).to_le_bytes());
            hasher.update(bytes);
        }
        assert_eq!(input_digest(&input), hex(&hasher.finalize()));
    }

    #[test]
    fn small_images_get_fewer_segments_and_smaller_coarse_regions() {
        let full = SceneParams::default();
        let same = scene_params(640, 480).unwrap();
        assert_eq!(
            same.superpixels.target_segments(),
            full.superpixels.target_segments()
        );
        assert_eq!(same.segments_per_region, full.segments_per_region);
        // 32 x 8 pixels: 64 segments of 4 pixels; the regions keep their share of the image (at least 1).
        let tiny = scene_params(32, 8).unwrap();
        assert_eq!(tiny.superpixels.target_segments(), 64);
        assert_eq!(tiny.segments_per_region, 1);
        // Half the default count: half as many segments per region.
        let pixels = full.superpixels.target_segments() as u64 * SMALLEST_SEGMENT_PIXELS / 2;
        let half = scene_params(pixels as u32, 1).unwrap();
        assert_eq!(
            half.superpixels.target_segments() * 2,
            full.superpixels.target_segments()
        );
        assert_eq!(half.segments_per_region * 2, full.segments_per_region);
    }
}
