//! Object detections from a robot's own detector, parsed into plain `Detection` values that seed object
//! hypotheses for the solver.
//!
//! Owns: `Detection`, `DetectionMask` and its run lengths (`MaskRuns`), reading a detections file in JSON Lines, one detection per line
//! (blank lines and lines starting with `#` are skipped):
//! `{"class": "mug", "box": [x0, y0, x1, y1], "score": 0.9}` where the class is a taxonomy name or a
//! synonym from `grammar/perception_synonyms.toml`, the box is in pixels (end exclusive, fractions widened
//! to whole pixels), the score is in [0, 1], and an optional mask is either `"mask_png"` (an index PNG path
//! relative to the detections file, the image's size; non-zero = inside) or `"mask_runs"`
//! (`{"width": W, "height": H, "runs": [..]}`: row-major run lengths alternating outside/inside, starting
//! with outside, summing to W*H). Unknown fields are refused.
//! Must not: create hypotheses itself or touch segments; the grounding and solver stages do that.

use std::path::Path;

use serde::{Deserialize, Serialize};

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
struct RawDetection {
    class: String,
    #[serde(rename = "box")]
    bbox: [f64; 4],
    score: f64,
    #[serde(default)]
    mask_png: Option<String>,
    #[serde(default)]
    mask_runs: Option<MaskRuns>,
}

/// A mask as run lengths, as `mask_runs` carries it: row-major, alternating outside and inside, starting
/// with outside (a mask whose first pixel is inside starts with a run of 0), summing to `width x height`.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MaskRuns {
    pub width: u32,
    pub height: u32,
    pub runs: Vec<u64>,
}

impl DetectionMask {
    /// The mask a run-length encoding describes; an error says why the runs do not fit.
    pub fn from_runs(runs: &MaskRuns) -> Result<DetectionMask, String> {
        decode_runs(runs)
    }

    /// The run-length encoding of this mask (what `from_runs` reads back).
    pub fn runs(&self) -> MaskRuns {
        let mut runs = Vec::new();
        let mut current = false;
        let mut length = 0u64;
        for &inside in &self.inside {
            if inside == current {
                length += 1;
            } else {
                runs.push(length);
                current = inside;
                length = 1;
            }
        }
        runs.push(length);
        MaskRuns {
            width: self.width,
            height: self.height,
            runs,
        }
    }
}

/// Parses a JSON Lines detections file for an image of `width x height`; `base` is the directory mask
/// paths are relative to (`None`: masks given by path are refused, as for an upload). Errors name the
/// line (counted from 1).
pub fn parse_detections(
    text: &str,
    base: Option<&Path>,
    width: u32,
    height: u32,
    taxonomy: &Taxonomy,
    synonyms: &SynonymTable,
) -> Result<Vec<Detection>, PerceptionError> {
    let mut detections = Vec::new();
    for (index, line) in text.lines().enumerate() {
        let line_number = index + 1;
        let trimmed = line.trim();
        if trimmed.is_empty() || trimmed.starts_with('#') {
            continue;
        }
        let fail = |message: String| PerceptionError::Detection {
            line: line_number,
            message,
        };
        let item: RawDetection = serde_json::from_str(trimmed).map_err(|error| {
            fail(format!(
                "not a detection ({error}); expected {{\"class\": .., \"box\": [x0, y0, x1, y1], \"score\": ..}}"
            ))
        })?;
        detections.push(detection(item, base, width, height, taxonomy, synonyms).map_err(fail)?);
    }
    Ok(detections)
}

fn detection(
    item: RawDetection,
    base: Option<&Path>,
    width: u32,
    height: u32,
    taxonomy: &Taxonomy,
    synonyms: &SynonymTable,
) -> Result<Detection, String> {
    let class = synonyms.resolve(&item.class, taxonomy).ok_or_else(|| {
        format!(
            "unknown class name '{}' (not a taxonomy name nor a synonym)",
            item.class
        )
    })?;
    if !(item.score.is_finite() && (0.0..=1.0).contains(&item.score)) {
        return Err(format!("score {} is not in [0, 1]", item.score));
    }
    let [x0, y0, x1, y1] = item.bbox;
    let inside =
        |value: f64, limit: u32| value.is_finite() && value >= 0.0 && value <= limit as f64;
    if !(inside(x0, width) && inside(x1, width) && inside(y0, height) && inside(y1, height))
        || x0 >= x1
        || y0 >= y1
    {
        return Err(format!(
            "box {:?} is empty or outside the {width}x{height} image",
            item.bbox
        ));
    }
    let bbox = BoundingBox {
        x0: x0.floor() as u32,
        y0: y0.floor() as u32,
        x1: x1.ceil() as u32,
        y1: y1.ceil() as u32,
    };
    let mask = match (item.mask_png, item.mask_runs) {
        (Some(_), Some(_)) => return Err("give mask_png or mask_runs, not both".to_string()),
        (Some(path), None) => {
            let base = base.ok_or_else(|| {
                "mask_png names a file, which an upload cannot; send mask_runs".to_string()
            })?;
            let image = read_index_png(&base.join(&path), DEFAULT_PIXEL_LIMIT)
                .map_err(|error| error.to_string())?;
            Some(DetectionMask {
                width: image.width,
                height: image.height,
                inside: image.values.iter().map(|&value| value != 0).collect(),
            })
        }
        (None, Some(runs)) => Some(decode_runs(&runs)?),
        (None, None) => None,
    };
    if let Some(mask) = &mask {
        if mask.width != width || mask.height != height {
            return Err(format!(
                "mask is {}x{} but the image is {width}x{height}",
                mask.width, mask.height
            ));
        }
    }
    Ok(Detection {
        class,
        bbox,
        score: item.score as f32,
        mask,
    })
}

fn decode_runs(runs: &MaskRuns) -> Result<DetectionMask, String> {
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
        parse_detections(text, Some(Path::new(".")), 4, 2, &taxonomy, &synonyms)
    }

    #[test]
    fn a_detection_with_run_length_mask() {
        let found = parse(
            "# the robot's detector\n\n{\"class\": \"cup\", \"box\": [1, 0, 3.5, 2], \"score\": 0.75, \
             \"mask_runs\": {\"width\": 4, \"height\": 2, \"runs\": [1, 2, 3, 2]}}\n",
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
        assert_eq!(mask.runs().runs, vec![1, 2, 3, 2]);
        assert_eq!(DetectionMask::from_runs(&mask.runs()).as_ref(), Ok(mask));
        let starts_inside = DetectionMask {
            width: 2,
            height: 1,
            inside: vec![true, false],
        };
        assert_eq!(starts_inside.runs().runs, vec![0, 1, 1]);
    }

    #[test]
    fn bad_detections_name_their_index_and_fault() {
        let cases = [
            r#"{"class": "ufo", "box": [0, 0, 1, 1], "score": 0.5}"#,
            r#"{"class": "mug", "box": [0, 0, 1, 1], "score": 1.5}"#,
            r#"{"class": "mug", "box": [3, 0, 1, 1], "score": 0.5}"#,
            r#"{"class": "mug", "box": [0, 0, 9, 1], "score": 0.5}"#,
            r#"{"class": "mug", "box": [0, 0, 1, 1], "score": 0.5, "mask_runs": {"width": 4, "height": 2, "runs": [3]}}"#,
            r#"{"class": "mug", "box": [0, 0, 1, 1], "score": 0.5, "colour": "red"}"#,
            r#"{"detections": []}"#,
        ];
        for case in cases {
            let text =
                format!("{{\"class\": \"mug\", \"box\": [0, 0, 1, 1], \"score\": 0.5}}\n{case}\n");
            let error = parse(&text).unwrap_err();
            assert!(
                matches!(error, PerceptionError::Detection { line: 2, .. }),
                "{case}: {error}"
            );
        }
        let taxonomy = Taxonomy::embedded();
        let synonyms = SynonymTable::embedded(&taxonomy);
        let upload = r#"{"class": "mug", "box": [0, 0, 1, 1], "score": 0.5, "mask_png": "m.png"}"#;
        let error = parse_detections(upload, None, 4, 2, &taxonomy, &synonyms).unwrap_err();
        assert!(error.to_string().contains("mask_runs"), "{error}");
    }
}
