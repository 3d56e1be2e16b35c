//! Turning what a scene was registered with into what the joint pipeline solves on.
//!
//! Owns: `PreparedInput` (superpixels, per-segment unaries, detections), the choice of unary source (NPY
//! scores, else a label map, else the built-in classifier; each read with its class names through
//! `crate::unaries::perception`, as `fix` reads them; detections with their masks), and the digest that
//! names a registration. Superpixels are cut with `SceneParams::for_image_size`, as on the command line.
//! Must not: parse utterances, solve, or know about the service's storage; the caller caches.

use sha2::{Digest, Sha256};

use crate::hypotheses::Detection as HypothesisDetection;
use crate::scene::{Scene, SceneParams};
use crate::taxonomy::Taxonomy;
use crate::unaries::byo::PerceptionError;
use crate::unaries::byo_detections::DetectionMask;
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
    let mut hasher = Sha256::new();
    let mut part = |tag: &str, bytes: &[u8]| {
        hasher.update(tag.as_bytes());
        hasher.update((bytes.len() as u64).to_le_bytes());
        hasher.update(bytes);
    };
    part("name", input.name.as_bytes());
    let size = [
        input.image.width.to_le_bytes(),
        input.image.height.to_le_bytes(),
    ]
    .concat();
    part("size", &size);
    let pixels: Vec<u8> = input.image.pixels.iter().flatten().copied().collect();
    part("image", &pixels);
    if let Some(depth) = &input.depth {
        part("depth", &le_bytes(&depth.millimetres));
    }
    if let Some(scores) = &input.scores_npy {
        part("scores", scores);
    }
    if let Some(labels) = &input.label_map {
        part("labels", &le_bytes(&labels.values));
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
        part("detection", text.as_bytes());
        if let Some(mask) = &detection.mask {
            let runs: Vec<u8> = mask.runs.iter().flat_map(|run| run.to_le_bytes()).collect();
            part("mask", &[&mask.width.to_le_bytes()[..], &runs].concat());
        }
    }
    if let Some(room) = input.room {
        part("room", &room.0.to_le_bytes());
    }
    if input.classes != PerceptionClasses::default() {
        let text = serde_json::to_string(&input.classes).unwrap_or_default();
        part("classes", text.as_bytes());
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
        &SceneParams::for_image_size(input.image.width, input.image.height),
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
    let mut detections = Vec::with_capacity(input.detections.len());
    for (index, detection) in input.detections.iter().enumerate() {
        let mask = match &detection.mask {
            Some(runs) => {
                let refuse = |message: String| {
                    bad("detections", format!("detection {}: {message}", index + 1))
                };
                if (runs.width, runs.height) != (input.image.width, input.image.height) {
                    return Err(refuse(format!(
                        "mask is {}x{} but the image is {}x{}",
                        runs.width, runs.height, input.image.width, input.image.height
                    )));
                }
                Some(DetectionMask::from_runs(runs).map_err(refuse)?)
            }
            None => None,
        };
        detections.push(HypothesisDetection {
            class: detection.class,
            bbox: detection.bbox,
            score: detection.score,
            mask,
        });
    }
    let perception = Perception {
        scores,
        detections,
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
    let model = matches!(perceived.unaries.source, UnarySource::BuiltIn { .. }).then(|| {
        crate::unaries::builtin::classifier_for(&scene, classifier)
            .id()
            .to_string()
    });
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
    use crate::raster::{IndexImage, RgbImage};
    use crate::scene::BoundingBox;
    use crate::unaries::byo_detections::MaskRuns;

    /// A detection's mask reaches the solve's detections, and a mask changes the registration's digest.
    #[test]
    fn detection_masks_reach_the_solve_and_the_digest() {
        let taxonomy = Taxonomy::embedded();
        let classifier = crate::pipeline::load_classifier(
            std::path::Path::new(crate::pipeline::COMPILED_MODEL_PATH),
            &taxonomy,
        )
        .unwrap();
        let mug = taxonomy.class_by_name("mug").unwrap().id;
        let wall = taxonomy.class_by_name("wall").unwrap().id;
        // 8 x 4: the mask is the box's left half only.
        let mut inside = vec![false; 32];
        for y in 1..3 {
            for x in 2..4 {
                inside[y * 8 + x] = true;
            }
        }
        let runs = DetectionMask {
            width: 8,
            height: 4,
            inside: inside.clone(),
        }
        .runs();
        let boxed = super::super::corrector::Detection {
            class: mug,
            bbox: BoundingBox {
                x0: 2,
                y0: 1,
                x1: 6,
                y1: 3,
            },
            score: 0.8,
            mask: None,
        };
        let mut input = SceneInput {
            name: "shelf".into(),
            image: RgbImage::filled(8, 4, [200, 190, 170]),
            depth: None,
            scores_npy: None,
            label_map: Some(IndexImage {
                width: 8,
                height: 4,
                values: vec![wall.0; 32],
            }),
            detections: vec![boxed.clone()],
            room: None,
            classes: PerceptionClasses::default(),
        };
        let box_digest = input_digest(&input);
        input.detections[0].mask = Some(runs);
        assert_ne!(input_digest(&input), box_digest);
        let prepared = prepare_input(&input, &taxonomy, &classifier).unwrap();
        let mask = prepared.detections[0].mask.as_ref().unwrap();
        assert_eq!(mask.inside, inside);

        input.detections[0].mask = Some(MaskRuns {
            width: 8,
            height: 4,
            runs: vec![3, 2],
        });
        let refused = prepare_input(&input, &taxonomy, &classifier).err().unwrap();
        assert!(
            refused.to_string().contains("detection 1")
                && refused.to_string().contains("mask runs"),
            "{refused}"
        );
    }
}
