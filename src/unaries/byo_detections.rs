//! Object detections from a robot's own detector, parsed into plain `Detection` values that seed object
//! hypotheses for the solver.
//!
//! Owns: `Detection`, `DetectionMask`, reading the detections JSON file:
//! `{"detections": [{"class": "mug", "box": [x0, y0, x1, y1], "score": 0.9, "mask_png": "m.png"}]}` where
//! the box is in pixels (end exclusive), the score is in [0, 1], and an optional mask is either
//! `"mask_png"` (an index PNG path relative to the JSON file; non-zero = inside) or `"mask_runs"`
//! (`{"width": W, "height": H, "runs": [..]}`: row-major run lengths alternating outside/inside, starting
//! with outside, summing to W*H).
//! Must not: create hypotheses itself or touch segments; the grounding and solver stages do that.

use std::path::Path;

use serde::Deserialize;

use super::byo::{PerceptionError, SynonymTable};
use crate::ids::ClassId;
use crate::raster::{read_index_png, DEFAULT_PIXEL_LIMIT};
use crate::scene::BoundingBox;
use crate::taxonomy::Taxonomy;

/// A binary object mask the size of the image.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DetectionMask {
    pub width: u32,
    pub height: u32,
    /// Row-major, `true` inside the object.
    pub inside: Vec<bool>,
}

/// One detected object.
#[derive(Clone, Debug, PartialEq)]
pub struct Detection {
    pub class: ClassId,
    pub bbox: BoundingBox,
    pub score: f32,
    pub mask: Option<DetectionMask>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    detections: Vec<RawDetection>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDetection {
    class: String,
    #[serde(rename = "box")]
    bbox: [f64; 4],
    score: f64,
    #[serde(default)]
    mask_png: Option<String>,
    #[serde(default)]
    mask_runs: Option<RawRuns>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRuns {
    width: u32,
    height: u32,
    runs: Vec<u64>,
}

/// Parses detections JSON for an image of `width x height`; `base` is the directory mask paths are
/// relative to.
pub fn parse_detections(
    text: &str,
    base: &Path,
    width: u32,
    height: u32,
    taxonomy: &Taxonomy,
    synonyms: &SynonymTable,
) -> Result<Vec<Detection>, PerceptionError> {
    let raw: RawFile = serde_json::from_str(text).map_err(|error| PerceptionError::Config {
        origin: "detections file".to_string(),
        message: error.to_string(),
    })?;
    let mut detections = Vec::new();
    for (index, item) in raw.detections.into_iter().enumerate() {
        let fail = |message: String| PerceptionError::Detection { index, message };
        let class = synonyms
            .resolve(&item.class, taxonomy)
            .ok_or_else(|| fail(format!("unknown class name '{}'", item.class)))?;
        if !(item.score.is_finite() && (0.0..=1.0).contains(&item.score)) {
            return Err(fail(format!("score {} is not in [0, 1]", item.score)));
        }
        let [x0, y0, x1, y1] = item.bbox;
        let inside =
            |value: f64, limit: u32| value.is_finite() && value >= 0.0 && value <= limit as f64;
        if !(inside(x0, width) && inside(x1, width) && inside(y0, height) && inside(y1, height))
            || x0 >= x1
            || y0 >= y1
        {
            return Err(fail(format!(
                "box {:?} is empty or outside the {width}x{height} image",
                item.bbox
            )));
        }
        let bbox = BoundingBox {
            x0: x0.floor() as u32,
            y0: y0.floor() as u32,
            x1: x1.ceil() as u32,
            y1: y1.ceil() as u32,
        };
        let mask = match (item.mask_png, item.mask_runs) {
            (Some(_), Some(_)) => {
                return Err(fail("give mask_png or mask_runs, not both".to_string()))
            }
            (Some(path), None) => {
                let image = read_index_png(&base.join(&path), DEFAULT_PIXEL_LIMIT)?;
                Some(DetectionMask {
                    width: image.width,
                    height: image.height,
                    inside: image.values.iter().map(|&value| value != 0).collect(),
                })
            }
            (None, Some(runs)) => Some(decode_runs(&runs).map_err(fail)?),
            (None, None) => None,
        };
        if let Some(mask) = &mask {
            if mask.width != width || mask.height != height {
                return Err(fail(format!(
                    "mask is {}x{} but the image is {width}x{height}",
                    mask.width, mask.height
                )));
            }
        }
        detections.push(Detection {
            class,
            bbox,
            score: item.score as f32,
            mask,
        });
    }
    Ok(detections)
}

fn decode_runs(runs: &RawRuns) -> Result<DetectionMask, String> {
    let pixels = runs.width as u64 * runs.height as u64;
    let total: u64 = runs
        .runs
        .iter()
        .try_fold(0u64, |sum, &run| sum.checked_add(run))
        .unwrap_or(u64::MAX);
    if total != pixels || pixels > DEFAULT_PIXEL_LIMIT {
        return Err(format!(
            "mask runs sum to {total} but a {}x{} mask has {pixels} pixels",
            runs.width, runs.height
        ));
    }
    let mut inside = Vec::with_capacity(pixels as usize);
    for (index, &run) in runs.runs.iter().enumerate() {
        inside.extend(std::iter::repeat_n(index % 2 == 1, run as usize));
    }
    Ok(DetectionMask {
        width: runs.width,
        height: runs.height,
        inside,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(text: &str) -> Result<Vec<Detection>, PerceptionError> {
        let taxonomy = Taxonomy::embedded();
        let synonyms = SynonymTable::embedded(&taxonomy);
        parse_detections(text, Path::new("."), 4, 2, &taxonomy, &synonyms)
    }

    #[test]
    fn a_detection_with_run_length_mask() {
        let found = parse(
            r#"{"detections": [{"class": "cup", "box": [1, 0, 3.5, 2], "score": 0.75,
                "mask_runs": {"width": 4, "height": 2, "runs": [1, 2, 3, 2]}}]}"#,
        )
        .unwrap();
        let taxonomy = Taxonomy::embedded();
        assert_eq!(found[0].class, taxonomy.class_by_name("mug").unwrap().id);
        assert_eq!(
            found[0].bbox,
            BoundingBox {
                x0: 1,
                y0: 0,
                x1: 4,
                y1: 2
            }
        );
        let mask = found[0].mask.as_ref().unwrap();
        assert_eq!(
            mask.inside,
            vec![false, true, true, false, false, false, true, true]
        );
    }

    #[test]
    fn bad_detections_name_their_index_and_fault() {
        let cases = [
            r#"{"detections": [{"class": "ufo", "box": [0, 0, 1, 1], "score": 0.5}]}"#,
            r#"{"detections": [{"class": "mug", "box": [0, 0, 1, 1], "score": 1.5}]}"#,
            r#"{"detections": [{"class": "mug", "box": [3, 0, 1, 1], "score": 0.5}]}"#,
            r#"{"detections": [{"class": "mug", "box": [0, 0, 9, 1], "score": 0.5}]}"#,
            r#"{"detections": [{"class": "mug", "box": [0, 0, 1, 1], "score": 0.5, "mask_runs": {"width": 4, "height": 2, "runs": [3]}}]}"#,
        ];
        for case in cases {
            assert!(
                matches!(
                    parse(case),
                    Err(PerceptionError::Detection { index: 0, .. })
                ),
                "{case}"
            );
        }
        assert!(matches!(
            parse("{\"detections\": 3}"),
            Err(PerceptionError::Config { .. })
        ));
    }
}
