//! The HTTP JSON shapes of API version 1: what callers send and what they get back.
//!
//! Owns: request and response bodies, named for callers (class names, not ids, wherever a person reads
//! them), with their OpenAPI schemas derived from the same types.
//! Must not: be used inside the pipeline; the coordinator converts between these and internal types, so
//! internal types can change without breaking callers.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

/// Reads a JSON integer also when it is written with a zero fraction (`2.0`): JSON Schema counts that an
/// integer, and some JSON writers (Python's, for floats) write whole numbers so.
mod whole {
    use serde::de::Error;
    use serde::{Deserialize, Deserializer};

    #[derive(Deserialize)]
    #[serde(untagged)]
    enum Number {
        Integer(i64),
        Float(f64),
    }

    /// The largest magnitude below which every whole `f64` is exact (2^53).
    const EXACT: f64 = 9_007_199_254_740_992.0;

    pub fn deserialize<'de, D: Deserializer<'de>, T: TryFrom<i64>>(
        deserializer: D,
    ) -> Result<T, D::Error> {
        let value = match Number::deserialize(deserializer)
            .map_err(|_| D::Error::custom("expected a whole number"))?
        {
            Number::Integer(value) => value,
            Number::Float(value) if value.fract() == 0.0 && value.abs() < EXACT => value as i64,
            Number::Float(value) => {
                return Err(D::Error::custom(format!(
                    "expected a whole number, got {value}"
                )))
            }
        };
        T::try_from(value).map_err(|_| D::Error::custom(format!("{value} is out of range")))
    }

    /// `deserialize` for every element of a list.
    pub fn deserialize_each<'de, D: Deserializer<'de>, T: TryFrom<i64>>(
        deserializer: D,
    ) -> Result<Vec<T>, D::Error> {
        struct Whole<T>(T);
        impl<'de, T: TryFrom<i64>> Deserialize<'de> for Whole<T> {
            fn deserialize<E: Deserializer<'de>>(deserializer: E) -> Result<Self, E::Error> {
                deserialize(deserializer).map(Whole)
            }
        }
        Vec::<Whole<T>>::deserialize(deserializer)
            .map(|list| list.into_iter().map(|Whole(value)| value).collect())
    }
}

/// Every failure: a stable code to branch on and a plain message saying what to fix.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
pub struct ErrorBody {
    /// Stable snake_case code, e.g. `unknown_scene`, `bad_json`, `rate_limited`.
    pub code: String,
    pub message: String,
}

/// An axis-aligned box in pixels (`x1`, `y1` exclusive).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct PixelBox {
    #[serde(deserialize_with = "whole::deserialize")]
    pub x0: u32,
    #[serde(deserialize_with = "whole::deserialize")]
    pub y0: u32,
    #[serde(deserialize_with = "whole::deserialize")]
    pub x1: u32,
    #[serde(deserialize_with = "whole::deserialize")]
    pub y1: u32,
}

/// A detection sent with a scene.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct DetectionIn {
    /// A class name from the taxonomy (`GET /v1/classes`).
    pub class: String,
    #[serde(rename = "box")]
    pub bbox: PixelBox,
    /// 0..1.
    #[schema(minimum = 0.0, maximum = 1.0)]
    pub score: f32,
    /// The object's mask over the whole image, as run lengths (see `MaskRunsIn`); without it the box is
    /// the object.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mask_runs: Option<MaskRunsIn>,
}

/// A binary mask the image's size as run lengths: row-major, alternating outside and inside, starting
/// with outside (a mask whose first pixel is inside starts with 0), summing to `width x height`.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct MaskRunsIn {
    #[serde(deserialize_with = "whole::deserialize")]
    pub width: u32,
    #[serde(deserialize_with = "whole::deserialize")]
    pub height: u32,
    #[serde(deserialize_with = "whole::deserialize_each")]
    pub runs: Vec<u64>,
}

/// Register a scene: either `demo` (a demo scene's name) or `image_base64` with optional extras; one of
/// `demo`, `image_base64` and `image_png_base64` is required, and only one.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema, Default)]
#[serde(deny_unknown_fields)]
pub struct RegisterSceneRequest {
    /// A name for people; defaults to the demo name or "scene". Plain text: no control characters or
    /// text-direction overrides; longer than 200 characters is cut to 200.
    #[schema(pattern = r"^[^\u0000-\u001F\u007F-\u009F\u202A-\u202E\u2066-\u2069]*$")]
    pub name: Option<String>,
    /// The name of a demo scene under the service's demo directory: 1-64 letters, digits, '-' or '_'.
    #[schema(pattern = "^[A-Za-z0-9_-]{1,64}$")]
    pub demo: Option<String>,
    /// The colour image, base64-encoded PNG or JPEG (told apart by content).
    #[schema(
        min_length = 1,
        pattern = r"^\s*(?:[A-Za-z0-9+/]{4})*(?:[A-Za-z0-9+/][AQgw]==|[A-Za-z0-9+/]{2}[AEIMQUYcgkosw048]=)?\s*$"
    )]
    pub image_base64: Option<String>,
    /// The same as `image_base64` (the earlier name); send one of the two.
    #[schema(
        min_length = 1,
        pattern = r"^\s*(?:[A-Za-z0-9+/]{4})*(?:[A-Za-z0-9+/][AQgw]==|[A-Za-z0-9+/]{2}[AEIMQUYcgkosw048]=)?\s*$"
    )]
    pub image_png_base64: Option<String>,
    /// A 16-bit depth PNG in millimetres, base64.
    #[schema(
        min_length = 1,
        pattern = r"^\s*(?:[A-Za-z0-9+/]{4})*(?:[A-Za-z0-9+/][AQgw]==|[A-Za-z0-9+/]{2}[AEIMQUYcgkosw048]=)?\s*$"
    )]
    pub depth_png_base64: Option<String>,
    /// Per-pixel class scores as a base64-encoded NPY array (float32 or float64, height x width x classes or
    /// classes x height x width); channels named by `scores_classes`. Large arrays go better as a
    /// multipart upload (`POST /v1/scenes/upload`).
    #[schema(
        min_length = 1,
        pattern = r"^\s*(?:[A-Za-z0-9+/]{4})*(?:[A-Za-z0-9+/][AQgw]==|[A-Za-z0-9+/]{2}[AEIMQUYcgkosw048]=)?\s*$"
    )]
    pub scores_npy_base64: Option<String>,
    /// A label map as a base64-encoded single-channel index PNG (pixel value = class id, 255 = unlabelled).
    #[schema(
        min_length = 1,
        pattern = r"^\s*(?:[A-Za-z0-9+/]{4})*(?:[A-Za-z0-9+/][AQgw]==|[A-Za-z0-9+/]{2}[AEIMQUYcgkosw048]=)?\s*$"
    )]
    pub label_map_png_base64: Option<String>,
    /// The channel names of `scores_npy_base64` in order: taxonomy names or perception synonyms
    /// (default: the taxonomy's classes in id order, as `GET /v1/classes` lists them).
    pub scores_classes: Option<Vec<String>>,
    /// The class list of `label_map_png_base64`: pixel value k is the k-th name (default: values are
    /// taxonomy class ids).
    pub label_map_classes: Option<Vec<String>>,
    /// Leave classes with unknown names out instead of refusing the scene (default false: every unknown
    /// name is listed in the refusal).
    pub drop_unknown_classes: Option<bool>,
    #[serde(default)]
    pub detections: Vec<DetectionIn>,
    /// A room type name, when known.
    pub room: Option<String>,
}

/// A registered scene.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SceneCreated {
    pub scene_id: i64,
    pub name: String,
    pub width: u32,
    pub height: u32,
    pub version: i64,
}

/// One object of the scene graph.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ObjectOut {
    pub object_id: u32,
    pub class: String,
    pub class_id: u16,
    /// True for people, pets and hazards: renaming or removing them needs confirmation.
    pub safety: bool,
    #[serde(rename = "box")]
    pub bbox: PixelBox,
    pub area_pixels: u64,
}

/// The current scene graph of a scene. Advisory only: never a substitute for the robot's safety sensors.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SceneGraphOut {
    pub scene_id: i64,
    pub name: String,
    pub version: i64,
    pub width: u32,
    pub height: u32,
    pub room: Option<String>,
    pub objects: Vec<ObjectOut>,
}

/// Open a conversation on a scene.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct OpenConversationRequest {
    #[schema(minimum = 1)]
    #[serde(deserialize_with = "whole::deserialize")]
    pub scene_id: i64,
}

/// An open conversation.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ConversationOut {
    pub conversation_id: i64,
    pub scene_id: i64,
    pub operator: String,
    pub opened_at: String,
}

/// Where the operator is pointing.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(tag = "type", rename_all = "snake_case", deny_unknown_fields)]
pub enum FocusIn {
    Object {
        #[serde(deserialize_with = "whole::deserialize")]
        object_id: u32,
    },
    Pixel {
        #[serde(deserialize_with = "whole::deserialize")]
        x: u32,
        #[serde(deserialize_with = "whole::deserialize")]
        y: u32,
    },
}

/// An utterance, typed or transcribed, with an optional focus.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct UtteranceRequest {
    /// What the operator said; at least one character that is not white space, at most 2000 characters.
    #[schema(min_length = 1, max_length = 2000, pattern = r"\S")]
    pub text: String,
    pub focus: Option<FocusIn>,
}

/// A character range of the utterance (Unicode scalar values, end exclusive).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
pub struct TextSpan {
    pub start: usize,
    pub end: usize,
}

/// A constraint the sentence was understood as.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ConstraintOut {
    /// e.g. `relabel`, `count`, `relation`.
    pub kind: String,
    /// A plain gloss such as "exactly 2 chairs in view".
    pub gloss: String,
    pub confidence: f32,
    pub span: TextSpan,
}

/// One change to the scene.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ChangeOut {
    pub object_id: Option<u32>,
    pub from: Option<String>,
    pub to: Option<String>,
    pub pixels: u64,
    pub description: String,
}

/// A constraint that could not be met, and why.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct UnmetOut {
    pub gloss: String,
    pub reason: String,
}

/// How an utterance ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum TurnStatus {
    Applied,
    NeedsConfirmation,
    NeedsClarification,
    NotUnderstood,
    NothingToChange,
    Confirmed,
    Rejected,
    Undone,
    Redone,
}

/// A change held until the operator confirms it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct PendingOut {
    pub reason: String,
    pub changes: Vec<ChangeOut>,
}

/// The answer to an utterance; sent only after the turn is committed to the correction log.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct UtteranceReply {
    pub turn_id: i64,
    pub status: TurnStatus,
    pub constraints: Vec<ConstraintOut>,
    pub changes: Vec<ChangeOut>,
    pub unmet: Vec<UnmetOut>,
    /// Set when the sentence needs a clarification.
    pub question: Option<String>,
    /// The objects the question asks about, in the order it names them; the next utterance may answer by
    /// position ("the second from the left"), side ("the one on the right"), object id ("object 12"),
    /// one of the descriptions, or by pointing ("this one" with a focus).
    pub candidates: Vec<CandidateOut>,
    /// Set when the change waits for confirmation.
    pub pending: Option<PendingOut>,
    /// The conversation's change still waiting for confirmation after this turn (this turn's or an
    /// earlier one's): it stays until confirmed or rejected.
    pub waiting: Option<PendingOut>,
    /// Contradictions and repeats of earlier notes of this conversation.
    pub conflicts: Vec<String>,
    /// Set when nothing could be understood, or a conversation command could not be done; for undo,
    /// redo, confirm and reject, what was done.
    pub reason: Option<String>,
    /// The scene version in force after this turn.
    pub scene_version: i64,
}

/// One object a question asks about.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct CandidateOut {
    pub object_id: u32,
    pub class: Option<String>,
    /// How the question describes it ("the one left of the table").
    pub description: String,
    pub bbox: Option<PixelBox>,
}

/// The answer to confirm, reject, undo and redo.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct TurnReply {
    pub turn_id: i64,
    pub status: TurnStatus,
    pub scene_version: i64,
    /// What moved: for undo and redo the labels that changed back, for a confirmation the applied change.
    pub changes: Vec<ChangeOut>,
    /// The conversation's change still waiting for confirmation after this turn, if any.
    pub waiting: Option<PendingOut>,
}

/// One turn of a conversation.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct TurnOut {
    pub turn_id: i64,
    /// `utterance`, `confirm`, `reject`, `undo` or `redo`.
    pub kind: String,
    pub text: String,
    pub status: TurnStatus,
    /// What was understood, typed (the same shape an utterance's answer gives).
    pub constraints: Vec<ConstraintOut>,
    /// Where the operator pointed with the utterance.
    pub focus: Option<FocusIn>,
    pub scene_version: Option<i64>,
    pub operator: String,
    pub at: String,
}

/// A conversation's history, oldest turn first.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct HistoryOut {
    pub conversation_id: i64,
    pub scene_id: i64,
    pub pending: Option<PendingOut>,
    /// The question the conversation waits on, if its last note asked one (it survives a restart).
    #[serde(default)]
    pub question: Option<String>,
    /// The objects that question asks about, as an utterance's answer lists them.
    #[serde(default)]
    pub candidates: Vec<CandidateOut>,
    pub turns: Vec<TurnOut>,
}

/// Liveness and what is loaded.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct HealthOut {
    pub status: String,
    pub version: String,
    pub log_schema: i64,
    pub scenes: usize,
    pub conversations: usize,
}

/// One class of the taxonomy.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ClassOut {
    pub class_id: u16,
    pub name: String,
    pub safety: bool,
    /// sRGB colour used in overlays.
    pub colour: [u8; 3],
}

/// Where a page of a list starts and how long it is (query parameters of the list routes).
#[derive(
    Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize, utoipa::IntoParams,
)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct PageQuery {
    /// Items with ids above this one: the `next_after` of the previous page; 0 or absent starts at the first.
    #[param(minimum = 0)]
    pub after: Option<i64>,
    /// Items on the page, 1 to 200; 50 when absent.
    #[param(minimum = 1, maximum = 200)]
    pub limit: Option<u32>,
}

/// One registered scene in a list.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SceneListed {
    pub scene_id: i64,
    pub name: String,
    /// The version in force.
    pub version: i64,
    pub width: u32,
    pub height: u32,
}

/// A page of registered scenes, by ascending id.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ScenePage {
    pub scenes: Vec<SceneListed>,
    /// Pass as `after` for the next page; absent on the last page.
    pub next_after: Option<i64>,
}

/// One conversation in a list.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ConversationListed {
    pub conversation_id: i64,
    pub scene_id: i64,
    /// The operator who opened it (and may act on it, with any supervisor).
    pub operator: String,
    pub opened_at: String,
    /// Whether a change waits for confirmation.
    pub pending: bool,
}

/// A page of the conversations the caller may read (their own; every one for a supervisor), by ascending id.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ConversationPage {
    pub conversations: Vec<ConversationListed>,
    /// Pass as `after` for the next page; absent on the last page.
    pub next_after: Option<i64>,
}

/// Which stored version of a scene to read (query of the scene graph, label map and overlay routes).
#[derive(
    Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize, utoipa::IntoParams,
)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct VersionQuery {
    /// A version of this scene from `GET /v1/scenes/{scene_id}/versions`; absent reads the version in force.
    #[param(minimum = 1)]
    pub version: Option<i64>,
}

/// One stored version of a scene.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct VersionListed {
    pub version: i64,
    /// The version it was made from; absent for the registered version.
    pub parent: Option<i64>,
    /// Whether it is the version in force or one it descends from (false once undone or replaced).
    pub in_force: bool,
    /// The turn that made it; absent for the registered version.
    pub turn_id: Option<i64>,
    pub conversation_id: Option<i64>,
    /// `utterance` or `confirm`.
    pub kind: Option<String>,
    /// The note's words, when the caller may read that conversation.
    pub text: Option<String>,
    pub operator: String,
    pub at: String,
}

/// A scene's stored versions, newest first: the chain of the version in force back to the registered one,
/// and the versions turns made that are no longer in force.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SceneVersions {
    pub scene_id: i64,
    /// The version in force.
    pub head: i64,
    pub versions: Vec<VersionListed>,
    /// True when the chain was longer than the list keeps (the oldest were left out).
    pub truncated: bool,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn whole_numbers_are_read_also_with_a_zero_fraction() {
        let request: OpenConversationRequest =
            serde_json::from_str(r#"{"scene_id": 904.0}"#).unwrap();
        assert_eq!(request.scene_id, 904);
        let focus: FocusIn =
            serde_json::from_str(r#"{"type": "object", "object_id": 1075382.0}"#).unwrap();
        assert_eq!(focus, FocusIn::Object { object_id: 1075382 });
        let focus: FocusIn =
            serde_json::from_str(r#"{"type": "pixel", "x": 3, "y": 4.0}"#).unwrap();
        assert_eq!(focus, FocusIn::Pixel { x: 3, y: 4 });
        for refused in [
            r#"{"scene_id": 904.5}"#,
            r#"{"scene_id": "904"}"#,
            r#"{"scene_id": 1e300}"#,
        ] {
            assert!(
                serde_json::from_str::<OpenConversationRequest>(refused).is_err(),
                "{refused}"
            );
        }
        assert!(serde_json::from_str::<FocusIn>(r#"{"type": "pixel", "x": -1, "y": 0}"#).is_err());
        // A detection's mask (schemathesis sent `37307.0` in `runs`, which JSON Schema's integer allows).
        let mask: MaskRunsIn =
            serde_json::from_str(r#"{"width": 4.0, "height": 2, "runs": [3, 37307.0, 0]}"#)
                .unwrap();
        assert_eq!(
            mask,
            MaskRunsIn {
                width: 4,
                height: 2,
                runs: vec![3, 37307, 0]
            }
        );
        for refused in [
            r#"{"width": 4, "height": 2, "runs": [3, 2.5]}"#,
            r#"{"width": 4, "height": 2, "runs": [-1]}"#,
            r#"{"width": 4.5, "height": 2, "runs": []}"#,
        ] {
            assert!(
                serde_json::from_str::<MaskRunsIn>(refused).is_err(),
                "{refused}"
            );
        }
    }
}
