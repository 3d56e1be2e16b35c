//! The one narrow interface between the service and the correction pipeline: the `Corrector` trait.
//!
//! Owns: `Corrector` and the plain values that cross it (`SceneInput`, `SceneState`, `SceneSummary`,
//! `CorrectionRequest`, `CorrectionOutcome`, `Verdict`), plus a default overlay renderer.
//! Must not: know about HTTP, JSON wire shapes, SQLite or tokio. A corrector is called synchronously, from
//! a blocking thread, with the scene's lock held; it never stores anything itself that must survive a
//! restart — everything it needs again goes into `SceneState::engine_state`, which the service persists and
//! hands back, with the engine states of the version's ancestors on demand (`Lineage`).

use std::sync::Arc;

use serde::{Deserialize, Serialize};

use crate::ids::{ClassId, ObjectId, RoomId};
use crate::language::constraint::{Constraint, Focus};
use crate::raster::{DepthImage, IndexImage, RgbImage};
use crate::scene::BoundingBox;
use crate::taxonomy::{Taxonomy, UNLABELLED};
use crate::turn::OpenQuestion;

/// A key the service gives each registered scene; a corrector may cache per key.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct SceneHandle(pub i64);

/// A detection handed in with a scene: a box, and optionally the object's mask.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Detection {
    pub class: ClassId,
    pub bbox: BoundingBox,
    /// 0..1.
    pub score: f32,
    /// The object's pixels inside the box, as run lengths over the whole image (checked against the
    /// image's size at registration).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mask: Option<crate::unaries::byo_detections::MaskRuns>,
}

/// How the robot's own scores and label map sent with a scene name their classes (a class name is a
/// taxonomy name or a perception synonym; see `crate::unaries::perception`).
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct PerceptionClasses {
    /// The scores' channel names in order; `None`: the taxonomy's classes in id order.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scores: Option<Vec<String>>,
    /// How to read the scores; `None`: probabilities when every pixel sums to 1, else logits.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scores_kind: Option<crate::unaries::byo_pixel_scores::ScoreKind>,
    /// The label map's class list (value k is the k-th name); `None`: values are taxonomy class ids.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label_map: Option<Vec<String>>,
    /// Leave classes with unknown names out instead of refusing the scene.
    #[serde(default)]
    pub drop_unknown: bool,
}

/// Everything a scene is registered with. The image is decoded and within the pixel limit; the other parts
/// are checked by the corrector (it alone knows what it can use).
#[derive(Clone, Debug)]
pub struct SceneInput {
    pub name: String,
    /// The decoded picture, shared with the scene prepared from it (`Scene::image`), so a live scene holds
    /// its pixels once.
    pub image: Arc<RgbImage>,
    /// The decoded depth map, shared the same way.
    pub depth: Option<Arc<DepthImage>>,
    /// Raw NPY bytes of per-pixel class scores, as sent.
    pub scores_npy: Option<Vec<u8>>,
    pub label_map: Option<IndexImage>,
    pub detections: Vec<Detection>,
    pub room: Option<RoomId>,
    /// The class names of `scores_npy` and `label_map`.
    pub classes: PerceptionClasses,
    /// Superpixels cut for this registration before (stored with the scene and read back after a restart
    /// or by another replica), so they need not be cut again; `None` cuts them. Not part of what the
    /// registration is: its digest leaves them out, and a map that does not fit the image is ignored.
    pub superpixels: Option<IndexImage>,
    /// What preparing the scene computed on those superpixels (statistics, adjacency, coarse level,
    /// unaries), in the stored form `crate::prepared_form` writes, kept with the scene and read back after
    /// a restart so it need not be computed again; `None`, or a form that does not fit this registration,
    /// its superpixels or the served model, prepares the scene again. Not part of the registration's
    /// digest.
    pub prepared: Option<Arc<Vec<u8>>>,
}

/// One object of the current scene graph, as the service shows it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ObjectSummary {
    pub id: ObjectId,
    pub class: ClassId,
    pub bbox: BoundingBox,
    /// Pixels.
    pub area: u64,
}

/// The scene graph reduced to what the service reports: objects and the room type.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, Default)]
pub struct SceneSummary {
    pub objects: Vec<ObjectSummary>,
    pub room: Option<RoomId>,
    /// The id of the classifier model whose scores this state was solved from, when the corrector knows
    /// it (`crate::unaries::classifier::model_id`); the log records it with the version.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub model: Option<String>,
}

/// A scene's labelling at one version: label map, summary, and whatever else the engine needs later.
#[derive(Clone, Debug, PartialEq)]
pub struct SceneState {
    pub labels: IndexImage,
    pub summary: SceneSummary,
    /// Opaque to the service; stored with every version and handed back unchanged.
    pub engine_state: Vec<u8>,
}

/// An earlier utterance of the same conversation (for "it", "that one", "no, the other").
#[derive(Clone, Debug, PartialEq)]
pub struct PastTurn {
    pub utterance: String,
    pub focus: Option<Focus>,
    pub constraints: Vec<Constraint>,
}

/// The engine states of a scene version's ancestry, read from the service's store only when a corrector
/// asks (after a restart, when its caches are cold): the registered version's first, the current one last.
#[derive(Clone, Copy)]
pub struct Lineage<'a>(pub &'a dyn Fn() -> Result<Vec<Vec<u8>>, String>);

impl Lineage<'_> {
    /// Reads the ancestry.
    pub fn read(&self) -> Result<Vec<Vec<u8>>, String> {
        (self.0)()
    }
}

impl std::fmt::Debug for Lineage<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("Lineage(..)")
    }
}

/// One correction to work out.
#[derive(Clone, Copy, Debug)]
pub struct CorrectionRequest<'a> {
    pub scene: SceneHandle,
    /// What the scene was registered with (the image, depth, scores, label map, detections, room).
    pub input: &'a SceneInput,
    pub state: &'a SceneState,
    /// The engine states from the registered version to `state`, on demand.
    pub lineage: Lineage<'a>,
    pub history: &'a [PastTurn],
    pub utterance: &'a str,
    pub focus: Option<Focus>,
    /// The constraints already read for this utterance (an answer to a question, a held change being
    /// confirmed): used as they are instead of reading `utterance` again.
    pub note: Option<&'a [Constraint]>,
    /// The operator confirmed changes to people, pets and hazards: apply them instead of holding them.
    pub confirmed: bool,
}

/// One change a correction makes, for the operator to read.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ReportedChange {
    pub object: Option<ObjectId>,
    pub from: Option<ClassId>,
    pub to: Option<ClassId>,
    /// Pixels whose label changes.
    pub pixels: u64,
    pub description: String,
}

/// A constraint the solve could not satisfy, and why.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ReportedUnmet {
    pub gloss: String,
    pub reason: String,
}

/// What becomes of the utterance.
#[derive(Clone, Debug, PartialEq)]
pub enum Verdict {
    /// The new state is in force as soon as the service has logged it.
    Applied(SceneState),
    /// The change touches a safety class (person, pet, hazard) and waits for explicit confirmation.
    NeedsConfirmation {
        proposed: SceneState,
        reason: String,
    },
    /// The sentence was understood but is ambiguous; ask this (with the candidates an answer may name).
    NeedsClarification { question: OpenQuestion },
    /// Nothing usable was found in the sentence.
    NotUnderstood { reason: String },
    /// Understood, and the scene already agrees.
    NothingToChange,
}

/// The result of one utterance.
#[derive(Clone, Debug, PartialEq)]
pub struct CorrectionOutcome {
    pub constraints: Vec<Constraint>,
    pub changes: Vec<ReportedChange>,
    pub unmet: Vec<ReportedUnmet>,
    /// Relative gap between the solution's energy and the best lower bound, when the solver reports one.
    pub solver_gap: Option<f64>,
    /// A question asked alongside an applied or held change (a count the graph still cannot show: which
    /// of the objects shown are not of the class); answered by a new note, not by choosing.
    pub question: Option<OpenQuestion>,
    pub verdict: Verdict,
}

/// What went wrong inside a corrector.
#[derive(Debug, thiserror::Error)]
pub enum CorrectorError {
    /// The caller sent something the corrector cannot use; `field` names the part.
    #[error("{field}: {message}")]
    BadInput { field: String, message: String },
    /// A fault inside the engine; logged, never shown to callers.
    #[error("internal corrector fault: {0}")]
    Internal(String),
}

/// The correction pipeline as the service sees it. Implementations must be cheap to share across threads.
pub trait Corrector: Send + Sync + 'static {
    /// The taxonomy whose class ids the corrector speaks.
    fn taxonomy(&self) -> &Taxonomy;

    /// Builds the first state of a newly registered scene. The scene has no handle yet (it gets one when
    /// the log commits it); anything worth caching can be cached by handle on the first `apply`.
    fn register(&self, input: &SceneInput) -> Result<SceneState, CorrectorError>;

    /// The superpixels the corrector cut for `input` (asked right after `register`), as an index image the
    /// service stores with the scene, so that a restart or another replica need not cut them again; `None`
    /// when it keeps none.
    fn superpixels(&self, _input: &SceneInput) -> Option<IndexImage> {
        None
    }

    /// What the corrector computed preparing `input` on those superpixels (asked right after
    /// `superpixels`, with them set in `input.superpixels`), in a form it reads back from
    /// `SceneInput::prepared` after a restart; `None` when it keeps none.
    fn prepared_form(&self, _input: &SceneInput) -> Option<Vec<u8>> {
        None
    }

    /// The bytes this corrector holds in memory for the scene registered as `input` whose current state is
    /// `state` (what it prepared and solved for it), which the coordinator weighs the scene with against
    /// its memory budget; 0 when it holds nothing by scene.
    fn held_bytes(&self, _input: &SceneInput, _state: &SceneState) -> u64 {
        0
    }

    /// Lets go of what this corrector holds for the scene registered as `input` whose current state is
    /// `state`: the coordinator let the scene go, and the next request on it prepares what it needs again.
    fn release(&self, _input: &SceneInput, _state: &SceneState) {}

    /// Works out one utterance against the scene's current state. Must not assume it is applied: the
    /// service decides (and may roll it back if logging fails).
    fn apply(&self, request: &CorrectionRequest<'_>) -> Result<CorrectionOutcome, CorrectorError>;

    /// One region id per pixel naming the object of the version's scene graph each pixel belongs to
    /// (`crate::scenegraph::object_regions`), so the overlay outlines objects; `None` when the corrector
    /// cannot tell, and the overlay then outlines class borders.
    fn object_regions(&self, _input: &SceneInput, _state: &SceneState) -> Option<Vec<u32>> {
        None
    }

    /// The overlay image of a version, drawn as `fix` draws its after picture (`crate::overlay::draw_after`,
    /// which draws that picture alone): the photo under a translucent class tint, the objects
    /// outlined (`object_regions`), the regions the version's own note changed against `parent` (the
    /// version it was made from; `None` for the registered version) ringed and named, under a title,
    /// with a legend of the classes shown to the right. Labels that do not fit the image give the plain
    /// half-and-half blend instead.
    fn overlay(
        &self,
        input: &SceneInput,
        state: &SceneState,
        parent: Option<&SceneState>,
    ) -> RgbImage {
        let image = &input.image;
        let labels = &state.labels;
        let regions = self
            .object_regions(input, state)
            .filter(|regions| regions.len() == labels.values.len())
            .unwrap_or_else(|| labels.values.iter().map(|&l| u32::from(l)).collect());
        let before = parent
            .map(|parent| &parent.labels)
            .filter(|before| before.width == labels.width && before.height == labels.height)
            .unwrap_or(labels);
        let title = match parent {
            Some(_) => "Ringed: what this version's note changed",
            None => "As registered",
        };
        let map = crate::overlay::RegionMap {
            width: labels.width,
            regions: &regions,
        };
        crate::overlay::draw_after(
            image,
            crate::overlay::View {
                regions: map,
                labels: &before.values,
                title,
            },
            crate::overlay::View {
                regions: map,
                labels: &labels.values,
                title,
            },
            self.taxonomy(),
            &crate::overlay::OverlayOptions::default(),
        )
        .unwrap_or_else(|_| blend_overlay(image, labels, self.taxonomy()))
    }
}

/// Blends each labelled pixel half-and-half with its class colour; unlabelled pixels stay as they are.
pub fn blend_overlay(image: &RgbImage, labels: &IndexImage, taxonomy: &Taxonomy) -> RgbImage {
    let palette: Vec<[u8; 3]> = taxonomy
        .classes()
        .iter()
        .map(|class| class.colour)
        .collect();
    let mut out = image.clone();
    if labels.width != image.width || labels.height != image.height {
        return out;
    }
    for (pixel, &label) in out.pixels.iter_mut().zip(labels.values.iter()) {
        if label == UNLABELLED {
            continue;
        }
        if let Some(colour) = palette.get(label as usize) {
            for channel in 0..3 {
                pixel[channel] = ((pixel[channel] as u16 + colour[channel] as u16) / 2) as u8;
            }
        }
    }
    out
}
