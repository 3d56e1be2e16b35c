//! Turning what a scene was registered with into what the joint pipeline solves on.
//!
//! Owns: `PreparedInput` (superpixels, per-segment unaries, detections), the choice of unary source (NPY
//! scores, else a label map, else the built-in classifier; each read with its class names through
//! `crate::unaries::perception`, as `fix` reads them; detections with their masks), the digest that
//! names a registration, and the superpixels kept with a registration (`superpixel_image`; read back by
//! `scene_on_stored`, which builds the same scene `Scene::from_image` builds on the superpixels it cuts,
//! without cutting them again), and the prepared scene read back from the form kept with a registration
//! (`crate::prepared_form`), else computed again with a line in the log. Superpixels are cut with
//! `SceneParams::for_image_size`, as on the command line.
//! Must not: parse utterances, solve, or know about the service's storage; the caller caches.

use sha2::{Digest, Sha256};

use crate::hypotheses::Detection as HypothesisDetection;
use std::sync::Arc;

use crate::raster::IndexImage;
use crate::scene::build::{adjacency_graph, segment_stats};
use crate::scene::coarse::coarse_level;
use crate::scene::{Scene, SceneParams, SegmentMap};
use crate::taxonomy::Taxonomy;
use crate::unaries::byo::PerceptionError;
use crate::unaries::byo_detections::DetectionMask;
use crate::unaries::byo_npy::parse_npy;
use crate::unaries::byo_pixel_scores::ScoreLayout;
use crate::unaries::perception::{LabelMap, Perception, PixelScores, ScoreSource};
use crate::unaries::{Classifier, Unaries, UnarySource};

use super::corrector::{CorrectorError, PerceptionClasses, SceneInput};
use super::prepared_form;

/// A registered scene ready to be solved.
pub struct PreparedInput {
    pub scene: Scene,
    pub unaries: Unaries,
    pub detections: Vec<HypothesisDetection>,
    /// The id of the built-in classifier that scored the scene (`None` when the scores came with it).
    pub model: Option<String>,
    /// `input_digest` of the registration it was prepared from.
    pub digest: String,
    /// Read back from the stored form kept with the registration (`crate::prepared_form`), not computed.
    pub from_stored_form: bool,
}

impl PreparedInput {
    /// About what the prepared scene holds on the heap beyond its registration's input: its superpixels,
    /// segment statistics, adjacency graph, coarse level, unaries and detections, counted from their lengths
    /// (the small fixed parts are left out; the pixels and depth are the input's). Parts shared with another
    /// prepared scene are counted in each.
    pub fn heap_bytes(&self) -> u64 {
        use std::mem::size_of;
        let scene = &self.scene;
        let adjacency = &scene.adjacency;
        // The picture and depth map are the registration's own (`SceneInput::image`, shared), weighed
        // with its input by the coordinator.
        let bytes = scene.segments.labels.len() * 4
            + scene.stats.len() * size_of::<crate::scene::SegmentStats>()
            + adjacency.node_count() * 12
            + adjacency.edge_count() * (size_of::<crate::scene::AdjacencyEdge>() + 16)
            + scene.coarse.region_of.len() * 4
            + scene
                .coarse
                .members
                .iter()
                .map(|members| 24 + members.len() * 4)
                .sum::<usize>()
            + self.unaries.log_probs.len() * 4
            + self.detections.len() * size_of::<HypothesisDetection>();
        bytes as u64
    }
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
        if let Some(mask) = &detection.mask {
            let runs: Vec<u8> = mask.runs.iter().flat_map(|run| run.to_le_bytes()).collect();
            framed(
                &mut hasher,
                "mask",
                &[&mask.width.to_le_bytes()[..], &runs].concat(),
            );
        }
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

/// A scene's superpixels as an index image to keep with its registration; `None` past 65,536 segments,
/// which an index image cannot hold.
pub fn superpixel_image(segments: &SegmentMap) -> Option<IndexImage> {
    if segments.segment_count > u32::from(u16::MAX) + 1 {
        return None;
    }
    Some(IndexImage {
        width: segments.width,
        height: segments.height,
        values: segments.labels.iter().map(|&label| label as u16).collect(),
    })
}

/// Kept superpixels read back as a segment map of `segment_count` segments (the caller has checked the ids).
pub fn segment_map_of(stored: &IndexImage, segment_count: u32) -> SegmentMap {
    SegmentMap {
        width: stored.width,
        height: stored.height,
        labels: stored
            .values
            .iter()
            .map(|&value| u32::from(value))
            .collect(),
        segment_count,
    }
}

/// The scene on superpixels kept with the registration: the segment statistics, adjacency graph and coarse
/// level `Scene::from_image` builds on the superpixels it cuts (the same steps in the same order, so the
/// same scene). `None` when the map does not fit the image (another size, a segment id with no pixel, a
/// depth map of another size); the caller then cuts the superpixels again.
fn scene_on_stored(input: &SceneInput, stored: &IndexImage, params: &SceneParams) -> Option<Scene> {
    let (width, height) = (input.image.width, input.image.height);
    let pixels = width as usize * height as usize;
    if stored.width != width || stored.height != height || stored.values.len() != pixels {
        return None;
    }
    if let Some(depth) = &input.depth {
        let fits = depth.width == width
            && depth.height == height
            && depth.millimetres.len() == depth.pixel_count();
        if !fits {
            return None;
        }
    }
    if params.segments_per_region == 0 {
        return None;
    }
    let segment_count = stored
        .values
        .iter()
        .max()
        .map(|&most| u32::from(most) + 1)?;
    let mut present = vec![false; segment_count as usize];
    for &value in &stored.values {
        present[value as usize] = true;
    }
    if present.contains(&false) {
        return None;
    }
    let segments = segment_map_of(stored, segment_count);
    let stats = segment_stats(&input.image, input.depth.as_deref(), &segments);
    let adjacency = adjacency_graph(&segments, &stats);
    let target_regions = (segment_count as f64 / params.segments_per_region as f64)
        .round()
        .max(1.0) as usize;
    let coarse = coarse_level(&adjacency, &stats, target_regions);
    Some(Scene {
        name: input.name.clone(),
        image: input.image.clone(),
        depth: input.depth.clone(),
        segments: Arc::new(segments),
        stats: Arc::new(stats),
        adjacency: Arc::new(adjacency),
        coarse: Arc::new(coarse),
        room: input.room,
    })
}

/// The registration's detections as the solve takes them, masks unpacked and checked against the image.
fn detections_of(input: &SceneInput) -> Result<Vec<HypothesisDetection>, CorrectorError> {
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
    Ok(detections)
}

/// Builds superpixels (or reads back the ones kept with the registration) and unaries for a registration,
/// through the same `Perception` as `fix`.
pub fn prepare_input(
    input: &SceneInput,
    digest: &str,
    taxonomy: &Taxonomy,
    classifier: &Classifier,
) -> Result<PreparedInput, CorrectorError> {
    if let Some(bytes) = &input.prepared {
        let expected_model = |scene: &Scene| {
            (input.scores_npy.is_none() && input.label_map.is_none()).then(|| {
                crate::unaries::builtin::classifier_for(scene, classifier)
                    .id()
                    .to_string()
            })
        };
        match prepared_form::decode(bytes, input, digest, expected_model) {
            Ok(decoded) => {
                return Ok(PreparedInput {
                    scene: decoded.scene,
                    unaries: decoded.unaries,
                    detections: detections_of(input)?,
                    model: decoded.model,
                    digest: digest.to_string(),
                    from_stored_form: true,
                })
            }
            Err(error) => tracing::warn!(
                scene = %input.name,
                %error,
                "the prepared scene kept with the registration is not used; preparing the scene again"
            ),
        }
    } else if input.superpixels.is_some() {
        tracing::info!(
            scene = %input.name,
            "no prepared scene is kept with this registration (an earlier build registered it); \
             preparing the scene again on its kept superpixels"
        );
    }
    let params = SceneParams::for_image_size(input.image.width, input.image.height);
    let stored = input
        .superpixels
        .as_ref()
        .and_then(|map| scene_on_stored(input, map, &params));
    let scene = match stored {
        Some(scene) => scene,
        None => Scene::from_shared_image(
            input.name.clone(),
            input.image.clone(),
            input.depth.clone(),
            input.room,
            &params,
        )
        .map_err(|error| bad("image_png_base64", error.to_string()))?,
    };
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
    let detections = detections_of(input)?;
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
        digest: digest.to_string(),
        from_stored_form: false,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::raster::{IndexImage, RgbImage};
    use crate::scene::BoundingBox;
    use crate::unaries::byo_detections::MaskRuns;

    fn input_of(width: u32, height: u32) -> SceneInput {
        let mut image = crate::raster::RgbImage::filled(width, height, [0, 0, 0]);
        for y in 0..height {
            for x in 0..width {
                // Four colour blocks with a gradient, so SLIC has edges to follow.
                let block = (x * 2 / width + 2 * (y * 2 / height)) as u8;
                image.set(x, y, [block * 60, (x * 3) as u8, 200 - (y * 2) as u8]);
            }
        }
        SceneInput {
            name: "juniper-lane-scullery".into(),
            image: Arc::new(image),
            depth: None,
            scores_npy: None,
            label_map: None,
            detections: Vec::new(),
            room: None,
            classes: PerceptionClasses::default(),
            superpixels: None,
            prepared: None,
        }
    }

    #[test]
    fn superpixels_kept_with_a_registration_give_back_the_same_scene() {
        let input = input_of(96, 72);
        let params = SceneParams::for_image_size(96, 72);
        let cut = Scene::from_image(
            input.name.clone(),
            (*input.image).clone(),
            None,
            None,
            &params,
        )
        .unwrap();
        let kept = superpixel_image(&cut.segments).unwrap();
        let read_back = scene_on_stored(&input, &kept, &params).expect("the kept map fits");
        assert_eq!(read_back.segments, cut.segments);
        assert_eq!(read_back.stats, cut.stats);
        assert_eq!(read_back.coarse, cut.coarse);
        assert_eq!(read_back.adjacency.edge_count(), cut.adjacency.edge_count());
        // A map of another size, or one with a segment id no pixel has, is not used.
        let other = input_of(95, 72);
        assert!(scene_on_stored(&other, &kept, &params).is_none());
        let mut gap = kept.clone();
        let most = *gap.values.iter().max().unwrap();
        gap.values
            .iter_mut()
            .filter(|v| **v == most)
            .for_each(|v| *v = most + 1);
        assert!(scene_on_stored(&input, &gap, &params).is_none());
    }

    /// A detection's mask reaches the solve's detections, and a mask changes the registration's digest.
    #[test]
    fn detection_masks_reach_the_solve_and_the_digest() {
        let taxonomy = Taxonomy::embedded();
        let classifier =
            crate::pipeline::load_classifier(&crate::pipeline::shipped_model_path(), &taxonomy)
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
            image: Arc::new(RgbImage::filled(8, 4, [200, 190, 170])),
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
            superpixels: None,
            prepared: None,
        };
        let box_digest = input_digest(&input);
        input.detections[0].mask = Some(runs);
        assert_ne!(input_digest(&input), box_digest);
        let prepared =
            prepare_input(&input, &input_digest(&input), &taxonomy, &classifier).unwrap();
        let mask = prepared.detections[0].mask.as_ref().unwrap();
        assert_eq!(mask.inside, inside);

        input.detections[0].mask = Some(MaskRuns {
            width: 8,
            height: 4,
            runs: vec![3, 2],
        });
        let refused = prepare_input(&input, &input_digest(&input), &taxonomy, &classifier)
            .err()
            .unwrap();
        assert!(
            refused.to_string().contains("detection 1")
                && refused.to_string().contains("mask runs"),
            "{refused}"
        );
    }

    #[test]
    fn the_digest_frames_the_pixels_as_one_part_without_copying_them() {
        let mut image = crate::raster::RgbImage::filled(70, 90, [0, 0, 0]);
        for (index, pixel) in image.pixels.iter_mut().enumerate() {
            *pixel = [index as u8, (index / 7) as u8, (index / 300) as u8];
        }
        let input = SceneInput {
            name: "hall".into(),
            image: Arc::new(image.clone()),
            depth: None,
            scores_npy: None,
            label_map: None,
            detections: Vec::new(),
            room: None,
            classes: PerceptionClasses::default(),
            superpixels: None,
            prepared: None,
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
}
