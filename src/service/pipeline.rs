//! The `Corrector` the `sayso serve` binary runs until the joint pipeline is wired in here.
//!
//! Owns: `LabelMapCorrector`, an interim engine on plain label maps. A scene starts from its label map (or
//! the per-pixel arg-max of its NPY scores, or all unlabelled); objects are the 4-connected regions of one
//! class. An utterance is read only for taxonomy class names ("that's a towel, not a cat": `towel` is the
//! new class, the class after "not" the old one) and relabels the region under the focus, or every region
//! of the old class when there is no focus. Removing or renaming a safety class waits for confirmation.
//! Must not: pretend to parse language; sentences without a class name are "not understood". The real
//! parser, grounding and joint solver replace this behind the same trait.

use std::collections::VecDeque;
use std::path::Path;

use crate::ids::{ClassId, ObjectId};
use crate::language::constraint::{Constraint, ConstraintKind, Deixis, Focus, Referent, Span};
use crate::raster::IndexImage;
use crate::scene::BoundingBox;
use crate::taxonomy::{Taxonomy, TaxonomyError, UNLABELLED};

use super::corrector::{
    Change, CorrectionOutcome, CorrectionRequest, Corrector, CorrectorError, SceneInput,
    SceneObject, SceneState, SceneSummary, Verdict,
};

/// Regions smaller than this many pixels are not listed as objects.
const SMALLEST_OBJECT_PIXELS: u64 = 4;

/// The interim label-map engine.
pub struct LabelMapCorrector {
    taxonomy: Taxonomy,
}

impl LabelMapCorrector {
    /// With the embedded taxonomy.
    pub fn embedded() -> LabelMapCorrector {
        LabelMapCorrector {
            taxonomy: Taxonomy::embedded(),
        }
    }

    /// With `classes.toml` from a grammar directory.
    pub fn from_grammar_dir(directory: &Path) -> Result<LabelMapCorrector, TaxonomyError> {
        Ok(LabelMapCorrector {
            taxonomy: Taxonomy::load(&directory.join("classes.toml"))?,
        })
    }
}

/// The 4-connected regions of equal label, as (label, pixel indices), in scan order.
fn regions(labels: &IndexImage) -> Vec<(u16, Vec<usize>)> {
    let width = labels.width as usize;
    let height = labels.height as usize;
    let mut seen = vec![false; labels.values.len()];
    let mut found = Vec::new();
    for start in 0..labels.values.len() {
        if seen[start] {
            continue;
        }
        let label = labels.values[start];
        let mut members = Vec::new();
        let mut queue = VecDeque::from([start]);
        seen[start] = true;
        while let Some(index) = queue.pop_front() {
            members.push(index);
            let (x, y) = (index % width, index / width);
            let mut visit = |neighbour: usize| {
                if !seen[neighbour] && labels.values[neighbour] == label {
                    seen[neighbour] = true;
                    queue.push_back(neighbour);
                }
            };
            if x > 0 {
                visit(index - 1);
            }
            if x + 1 < width {
                visit(index + 1);
            }
            if y > 0 {
                visit(index - width);
            }
            if y + 1 < height {
                visit(index + width);
            }
        }
        found.push((label, members));
    }
    found
}

fn summarise(labels: &IndexImage, room: Option<crate::ids::RoomId>) -> SceneSummary {
    let width = labels.width as usize;
    let mut objects = Vec::new();
    for (label, members) in regions(labels) {
        if label == UNLABELLED || (members.len() as u64) < SMALLEST_OBJECT_PIXELS {
            continue;
        }
        let mut bbox = BoundingBox {
            x0: u32::MAX,
            y0: u32::MAX,
            x1: 0,
            y1: 0,
        };
        for &index in &members {
            let (x, y) = ((index % width) as u32, (index / width) as u32);
            bbox.x0 = bbox.x0.min(x);
            bbox.y0 = bbox.y0.min(y);
            bbox.x1 = bbox.x1.max(x + 1);
            bbox.y1 = bbox.y1.max(y + 1);
        }
        objects.push(SceneObject {
            id: ObjectId(objects.len() as u32 + 1),
            class: ClassId(label),
            bbox,
            area: members.len() as u64,
        });
    }
    SceneSummary { objects, room }
}

/// Reads a little-endian f32 NPY array of shape (height, width, classes) and takes the arg-max per pixel.
fn labels_from_npy(
    bytes: &[u8],
    width: u32,
    height: u32,
    class_count: usize,
) -> Result<IndexImage, CorrectorError> {
    let bad = |message: String| CorrectorError::BadInput {
        field: "scores_npy_base64".into(),
        message,
    };
    if bytes.len() < 10 || &bytes[..6] != b"\x93NUMPY" {
        return Err(bad(
            "not an NPY file (the magic string \\x93NUMPY is missing)".into(),
        ));
    }
    let (header_length, header_start) = match bytes[6] {
        1 => (u16::from_le_bytes([bytes[8], bytes[9]]) as usize, 10),
        2 | 3 if bytes.len() >= 12 => (
            u32::from_le_bytes([bytes[8], bytes[9], bytes[10], bytes[11]]) as usize,
            12,
        ),
        version => {
            return Err(bad(format!(
                "NPY format version {version} is not supported"
            )))
        }
    };
    let header = bytes
        .get(header_start..header_start + header_length)
        .and_then(|header| std::str::from_utf8(header).ok())
        .ok_or_else(|| bad("the NPY header is cut short or not text".into()))?;
    if !header.contains("'descr': '<f4'") {
        return Err(bad("scores must be little-endian float32 ('<f4')".into()));
    }
    if header.contains("'fortran_order': True") {
        return Err(bad("scores must be in C order, not Fortran order".into()));
    }
    let expected_shape = format!("'shape': ({height}, {width}, {class_count})");
    if !header.contains(&expected_shape) {
        return Err(bad(format!(
            "scores must have shape ({height}, {width}, {class_count}) to match the image and taxonomy"
        )));
    }
    let data = &bytes[header_start + header_length..];
    let pixel_count = width as usize * height as usize;
    if data.len() != pixel_count * class_count * 4 {
        return Err(bad(format!(
            "the NPY data holds {} bytes; shape ({height}, {width}, {class_count}) needs {}",
            data.len(),
            pixel_count * class_count * 4
        )));
    }
    let mut values = Vec::with_capacity(pixel_count);
    for pixel in data.chunks_exact(class_count * 4) {
        let mut best = (UNLABELLED, f32::NEG_INFINITY);
        for (class, score) in pixel.chunks_exact(4).enumerate() {
            let score = f32::from_le_bytes([score[0], score[1], score[2], score[3]]);
            if score.is_nan() {
                return Err(bad("scores contain NaN".into()));
            }
            if score > best.1 {
                best = (class as u16, score);
            }
        }
        values.push(best.0);
    }
    Ok(IndexImage {
        width,
        height,
        values,
    })
}

struct ClassMention {
    class: ClassId,
    negated: bool,
    span: Span,
}

/// Finds taxonomy class names (singular or with a plural "s"/"es") among the words of the utterance.
fn class_mentions(utterance: &str, taxonomy: &Taxonomy) -> Vec<ClassMention> {
    let mut mentions = Vec::new();
    let mut previous_words: Vec<String> = Vec::new();
    let characters: Vec<char> = utterance.chars().collect();
    let mut index = 0;
    while index < characters.len() {
        if !characters[index].is_alphabetic() {
            index += 1;
            continue;
        }
        let start = index;
        while index < characters.len()
            && (characters[index].is_alphabetic() || characters[index] == '_')
        {
            index += 1;
        }
        let word: String = characters[start..index]
            .iter()
            .collect::<String>()
            .to_lowercase();
        let candidates = [
            word.clone(),
            word.strip_suffix("es").unwrap_or(&word).to_string(),
            word.strip_suffix('s').unwrap_or(&word).to_string(),
        ];
        if let Some(class) = candidates
            .iter()
            .find_map(|candidate| taxonomy.class_by_name(candidate))
        {
            let negated = previous_words.iter().rev().take(2).any(|previous| {
                previous == "not" || previous == "no" || previous == "isn" || previous == "never"
            });
            mentions.push(ClassMention {
                class: class.id,
                negated,
                span: Span::new(start, index),
            });
        }
        previous_words.push(word);
    }
    mentions
}

fn target_pixels(
    labels: &IndexImage,
    request: &CorrectionRequest<'_>,
    from: Option<ClassId>,
) -> Option<Vec<usize>> {
    let width = labels.width as usize;
    let pixel_index = match request.focus {
        Some(Focus::Pixel { x, y }) => Some(y as usize * width + x as usize),
        Some(Focus::Object { id }) => request
            .state
            .summary
            .objects
            .iter()
            .find(|object| object.id == id)
            .map(|object| {
                // The first pixel of the object's class inside its box belongs to the object's region.
                let bbox = object.bbox;
                (bbox.y0..bbox.y1)
                    .flat_map(|y| (bbox.x0..bbox.x1).map(move |x| (x, y)))
                    .map(|(x, y)| y as usize * width + x as usize)
                    .find(|&index| labels.values.get(index) == Some(&object.class.0))
                    .unwrap_or(0)
            }),
        None => None,
    };
    match (pixel_index, from) {
        (Some(index), _) => regions_containing(labels, index),
        (None, Some(from)) => {
            let pixels: Vec<usize> = (0..labels.values.len())
                .filter(|&index| labels.values[index] == from.0)
                .collect();
            Some(pixels)
        }
        (None, None) => None,
    }
}

/// The 4-connected region of equal label around pixel `start` (a flood fill from that pixel only).
fn regions_containing(labels: &IndexImage, start: usize) -> Option<Vec<usize>> {
    let width = labels.width as usize;
    let height = labels.height as usize;
    let label = *labels.values.get(start)?;
    let mut seen = vec![false; labels.values.len()];
    let mut members = Vec::new();
    let mut queue = VecDeque::from([start]);
    seen[start] = true;
    while let Some(index) = queue.pop_front() {
        members.push(index);
        let (x, y) = (index % width, index / width);
        let neighbours = [
            (x > 0).then(|| index - 1),
            (x + 1 < width).then(|| index + 1),
            (y > 0).then(|| index - width),
            (y + 1 < height).then(|| index + width),
        ];
        for neighbour in neighbours.into_iter().flatten() {
            if !seen[neighbour] && labels.values[neighbour] == label {
                seen[neighbour] = true;
                queue.push_back(neighbour);
            }
        }
    }
    Some(members)
}

impl Corrector for LabelMapCorrector {
    fn taxonomy(&self) -> &Taxonomy {
        &self.taxonomy
    }

    fn register(&self, input: &SceneInput) -> Result<SceneState, CorrectorError> {
        let (width, height) = (input.image.width, input.image.height);
        let labels = match (&input.label_map, &input.scores_npy) {
            (Some(labels), _) => labels.clone(),
            (None, Some(npy)) => labels_from_npy(npy, width, height, self.taxonomy.class_count())?,
            (None, None) => IndexImage::filled(width, height, UNLABELLED),
        };
        if let Some(bad) = labels
            .values
            .iter()
            .find(|&&value| value != UNLABELLED && self.taxonomy.class(ClassId(value)).is_none())
        {
            return Err(CorrectorError::BadInput {
                field: "label_map_png_base64".into(),
                message: format!("pixel value {bad} is neither a class id nor 255 (unlabelled)"),
            });
        }
        let summary = summarise(&labels, input.room);
        Ok(SceneState {
            labels,
            summary,
            engine_state: Vec::new(),
        })
    }

    fn apply(&self, request: &CorrectionRequest<'_>) -> Result<CorrectionOutcome, CorrectorError> {
        let mentions = class_mentions(request.utterance, &self.taxonomy);
        let to = mentions.iter().find(|mention| !mention.negated);
        let from = mentions.iter().find(|mention| mention.negated);
        if to.is_none() && from.is_none() {
            return Ok(CorrectionOutcome {
                constraints: Vec::new(),
                changes: Vec::new(),
                unmet: Vec::new(),
                solver_gap: None,
                verdict: Verdict::NotUnderstood {
                    reason: "no class name from the taxonomy was found in the sentence".into(),
                },
            });
        }
        let span = match (to, from) {
            (Some(to), Some(from)) => to.span.cover(from.span),
            (Some(only), None) | (None, Some(only)) => only.span,
            (None, None) => Span::default(),
        };
        let to_class = to.map(|mention| mention.class);
        let from_class = from.map(|mention| mention.class);
        let gloss = match (to_class, from_class) {
            (Some(to), Some(from)) => format!(
                "{} is not {}",
                self.taxonomy.class_name(to),
                self.taxonomy.class_name(from)
            ),
            (Some(to), None) => format!("is {}", self.taxonomy.class_name(to)),
            (None, Some(from)) => format!("is not {}", self.taxonomy.class_name(from)),
            (None, None) => String::new(),
        };
        let target = Referent {
            class: from_class,
            deixis: request.focus.map(|_| Deixis::Focus),
            plural: false,
            attributes: Vec::new(),
            relations: Vec::new(),
            region: None,
            span,
        };
        let constraints = vec![Constraint {
            kind: ConstraintKind::Relabel {
                target,
                from: from_class,
                to: to_class,
            },
            span,
            confidence: 1.0,
            gloss,
        }];
        let done = |verdict: Verdict, changes: Vec<Change>| CorrectionOutcome {
            constraints: constraints.clone(),
            changes,
            unmet: Vec::new(),
            solver_gap: None,
            verdict,
        };
        let labels = &request.state.labels;
        let Some(pixels) = target_pixels(labels, request, from_class) else {
            return Ok(done(
                Verdict::NeedsClarification {
                    question: "Which part of the picture do you mean? Send the sentence again with a focus \
                               (an object id or a pixel)."
                        .into(),
                },
                Vec::new(),
            ));
        };
        let new_label = to_class.map(|class| class.0).unwrap_or(UNLABELLED);
        let mut new_labels = labels.clone();
        let mut changed = 0u64;
        let mut old_classes = Vec::new();
        for &index in &pixels {
            if let Some(value) = new_labels.values.get_mut(index) {
                if *value != new_label {
                    if !old_classes.contains(value) {
                        old_classes.push(*value);
                    }
                    *value = new_label;
                    changed += 1;
                }
            }
        }
        if changed == 0 {
            return Ok(done(Verdict::NothingToChange, Vec::new()));
        }
        let changes: Vec<Change> = old_classes
            .iter()
            .map(|&old| Change {
                object: None,
                from: (old != UNLABELLED).then_some(ClassId(old)),
                to: to_class,
                pixels: pixels
                    .iter()
                    .filter(|&&index| labels.values.get(index) == Some(&old))
                    .count() as u64,
                description: format!(
                    "{} -> {}",
                    if old == UNLABELLED {
                        "unlabelled"
                    } else {
                        self.taxonomy.class_name(ClassId(old))
                    },
                    to_class
                        .map(|class| self.taxonomy.class_name(class))
                        .unwrap_or("unlabelled")
                ),
            })
            .collect();
        let proposed = SceneState {
            summary: summarise(&new_labels, request.state.summary.room),
            labels: new_labels,
            engine_state: Vec::new(),
        };
        let safety: Vec<&str> = old_classes
            .iter()
            .filter(|&&old| old != UNLABELLED && self.taxonomy.is_safety_critical(ClassId(old)))
            .map(|&old| self.taxonomy.class_name(ClassId(old)))
            .collect();
        if safety.is_empty() {
            Ok(done(Verdict::Applied(proposed), changes))
        } else {
            Ok(done(
                Verdict::NeedsConfirmation {
                    proposed,
                    reason: format!(
                        "this renames or removes {}, a safety class; confirm to apply",
                        safety.join(", ")
                    ),
                },
                changes,
            ))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::raster::RgbImage;
    use crate::service::corrector::SceneHandle;

    fn npy(shape: (u32, u32, usize), values: &[f32]) -> Vec<u8> {
        // NPY format 1.0 (numpy.lib.format): magic, version, little-endian header length, dict, data.
        let header = format!(
            "{{'descr': '<f4', 'fortran_order': False, 'shape': ({}, {}, {}), }}",
            shape.0, shape.1, shape.2
        );
        let mut padded = header.into_bytes();
        while (10 + padded.len() + 1) % 64 != 0 {
            padded.push(b' ');
        }
        padded.push(b'\n');
        let mut bytes = b"\x93NUMPY\x01\x00".to_vec();
        bytes.extend_from_slice(&(padded.len() as u16).to_le_bytes());
        bytes.extend_from_slice(&padded);
        for value in values {
            bytes.extend_from_slice(&value.to_le_bytes());
        }
        bytes
    }

    fn input(labels: Option<IndexImage>, scores: Option<Vec<u8>>) -> SceneInput {
        SceneInput {
            name: "juniper-lane-study".into(),
            image: RgbImage::filled(2, 1, [10, 20, 30]),
            depth: None,
            scores_npy: scores,
            label_map: labels,
            detections: Vec::new(),
            room: None,
        }
    }

    #[test]
    fn scores_are_read_as_the_per_pixel_arg_max_and_bad_npy_is_named() {
        let corrector = LabelMapCorrector::embedded();
        let classes = corrector.taxonomy().class_count();
        let mut values = vec![0.0f32; 2 * classes];
        values[21] = 5.0; // pixel 0: mug
        values[classes + 37] = 5.0; // pixel 1: towel
        let state = corrector
            .register(&input(None, Some(npy((1, 2, classes), &values))))
            .unwrap();
        assert_eq!(state.labels.values, vec![21, 37]);
        let wrong_shape = corrector.register(&input(None, Some(npy((2, 2, classes), &values))));
        assert!(matches!(wrong_shape, Err(CorrectorError::BadInput { .. })));
        let garbage = corrector.register(&input(None, Some(b"\x93NUMPY\x09".to_vec())));
        assert!(matches!(garbage, Err(CorrectorError::BadInput { .. })));
    }

    #[test]
    fn a_safety_class_waits_and_other_classes_apply() {
        let corrector = LabelMapCorrector::embedded();
        let taxonomy = corrector.taxonomy();
        let cat = taxonomy.class_by_name("cat").unwrap().id.0;
        let labels = IndexImage {
            width: 2,
            height: 1,
            values: vec![cat, 0],
        };
        let state = corrector.register(&input(Some(labels), None)).unwrap();
        let image = RgbImage::filled(2, 1, [0, 0, 0]);
        let ask = |utterance: &str, focus| {
            corrector
                .apply(&CorrectionRequest {
                    scene: SceneHandle(1),
                    image: &image,
                    state: &state,
                    history: &[],
                    utterance,
                    focus,
                })
                .unwrap()
        };
        let renamed = ask("that's a towel, not a cat", None);
        assert!(matches!(renamed.verdict, Verdict::NeedsConfirmation { .. }));
        assert_eq!(renamed.constraints[0].gloss, "towel is not cat");
        let floor = ask("It's a RUG", Some(Focus::Pixel { x: 1, y: 0 }));
        let rug = taxonomy.class_by_name("rug").unwrap().id.0;
        match floor.verdict {
            Verdict::Applied(next) => assert_eq!(next.labels.values, vec![cat, rug]),
            other => panic!("expected the rug to apply, got {other:?}"),
        }
        assert!(matches!(
            ask("hmm, no idea", None).verdict,
            Verdict::NotUnderstood { .. }
        ));
        assert!(matches!(
            ask("that's a mug", None).verdict,
            Verdict::NeedsClarification { .. }
        ));
    }
}
