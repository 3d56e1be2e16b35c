//! The typed constraints the language stage produces and the grounding and energy stages consume.
//!
//! Owns: `Constraint`, `ConstraintKind`, `Referent` and the small vocabularies they use (relations, image
//! regions, colour and size terms, counts), plus `Span` into the original utterance.
//! Must not: refer to scene content (segments, objects, hypotheses); a referent is still words here,
//! resolved later by grounding.

use serde::{Deserialize, Serialize};

use crate::ids::{ClassId, ObjectId, RoomId};

/// A half-open range of character (Unicode scalar) offsets into the original utterance.
#[derive(
    Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize, Default,
)]
pub struct Span {
    pub start: usize,
    pub end: usize,
}

impl Span {
    /// A span from `start` to `end` (exclusive).
    pub fn new(start: usize, end: usize) -> Span {
        Span { start, end }
    }

    /// The smallest span covering both.
    pub fn cover(self, other: Span) -> Span {
        Span {
            start: self.start.min(other.start),
            end: self.end.max(other.end),
        }
    }
}

/// A cardinality (the solver's, so the energy's count factors read it without knowing language).
pub use crate::energy::Count;

/// A spatial relation between a subject and one (or, for `Between`, two) landmarks.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Relation {
    /// Resting on top of, in contact.
    On,
    /// Beneath, below and overlapping horizontally.
    Under,
    Above,
    Below,
    /// Close by (next to, beside, by, near, against).
    NextTo,
    LeftOf,
    RightOf,
    /// Nearer the camera than the landmark.
    InFrontOf,
    /// Farther from the camera than the landmark.
    Behind,
    /// Contained within.
    Inside,
    /// Between two landmarks.
    Between,
}

impl Relation {
    /// Whether a thing in this relation to a landmark cannot also be in `other` to it, by the relations'
    /// own definitions above: opposite ends of one axis (on or above against under or below, left of against
    /// right of, in front of against behind) and inside against on, under, above or below. "Next to" and
    /// "between" exclude nothing ("on the desk, not next to it" may deny no more than the place shown).
    pub fn excludes(self, other: Relation) -> bool {
        use Relation::*;
        let up = |r: Relation| matches!(r, On | Above);
        let down = |r: Relation| matches!(r, Under | Below);
        let vertical = |r: Relation| up(r) || down(r);
        (up(self) && down(other))
            || (down(self) && up(other))
            || (self == Inside && vertical(other))
            || (vertical(self) && other == Inside)
            || matches!(
                (self, other),
                (LeftOf, RightOf) | (RightOf, LeftOf) | (InFrontOf, Behind) | (Behind, InFrontOf)
            )
    }
}

/// A part of the image named from the camera's point of view.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ImageRegion {
    Left,
    Right,
    Top,
    Bottom,
    Centre,
    /// Any of the four corners.
    Corner,
    /// Far from the camera (upper part of the floor plane / large depth).
    Back,
    /// Near the camera.
    Front,
}

/// A basic colour term (Berlin and Kay's eleven).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ColourTerm {
    Black,
    White,
    Red,
    Green,
    Yellow,
    Blue,
    Brown,
    Purple,
    Pink,
    Orange,
    Grey,
}

/// A size term, relative to the class's usual size.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SizeTerm {
    Big,
    Small,
}

/// An attribute of a referent.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(tag = "type", content = "value", rename_all = "snake_case")]
pub enum Attribute {
    Colour(ColourTerm),
    Size(SizeTerm),
}

/// Where a deictic word points.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Deixis {
    /// The operator's focus sent with the utterance (an object id or a pixel).
    Focus,
    /// The most recent referent in the conversation.
    Previous,
}

/// What the operator passed as focus with the utterance.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(tag = "type", rename_all = "snake_case")]
pub enum Focus {
    Object { id: ObjectId },
    Pixel { x: u32, y: u32 },
}

/// A landmark clause inside a description: "next to the sink".
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RelationClause {
    pub relation: Relation,
    pub negated: bool,
    pub landmarks: Vec<Referent>,
}

/// A noun phrase, still in words: a class (or "thing"), its attributes, relations and place, or a deictic.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Referent {
    /// The head class; `None` for "thing", "one", or a bare deictic.
    pub class: Option<ClassId>,
    /// Set when the phrase is deictic ("that", "it", "those").
    pub deixis: Option<Deixis>,
    pub plural: bool,
    pub attributes: Vec<Attribute>,
    pub relations: Vec<RelationClause>,
    /// An image region named in the phrase ("the chair on the left").
    pub region: Option<ImageRegion>,
    pub span: Span,
}

impl Referent {
    /// A bare class referent.
    pub fn class(class: ClassId, span: Span) -> Referent {
        Referent {
            class: Some(class),
            deixis: None,
            plural: false,
            attributes: Vec::new(),
            relations: Vec::new(),
            region: None,
            span,
        }
    }
}

/// Where something is: a room type or an image region.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(tag = "type", content = "value", rename_all = "snake_case")]
pub enum Place {
    Room(RoomId),
    Region(ImageRegion),
}

/// The kinds of constraint an utterance can state.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum ConstraintKind {
    /// At least one instance of the class is in view.
    Present { class: ClassId },
    /// No instance of the class is in view.
    Absent { class: ClassId },
    /// The number of instances of the class in view.
    Count { class: ClassId, count: Count },
    /// The subject stands in the relation to the landmarks (or, negated, does not).
    Relation {
        subject: Referent,
        relation: Relation,
        negated: bool,
        landmarks: Vec<Referent>,
    },
    /// The subject is in a place.
    Place { subject: Referent, place: Place },
    /// The target is not `from` (when given) and is `to` (when given).
    Relabel {
        target: Referent,
        from: Option<ClassId>,
        to: Option<ClassId>,
    },
    /// The target has an attribute.
    Attribute {
        target: Referent,
        attribute: Attribute,
    },
    /// The scene is in a room of this type.
    RoomType { room: RoomId },
}

/// One constraint, with where it came from and how sure the parser is.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Constraint {
    pub kind: ConstraintKind,
    /// The part of the utterance the constraint came from.
    pub span: Span,
    /// 0..1; lower when a word was accepted as a misspelling or the construction was hedged.
    pub confidence: f32,
    /// A short plain-English gloss, e.g. "exactly 2 chair".
    pub gloss: String,
}

#[cfg(test)]
mod tests {
    use super::Relation::*;

    #[test]
    fn opposite_ends_of_an_axis_exclude_each_other_and_next_to_excludes_nothing() {
        assert!(On.excludes(Under) && Under.excludes(Above) && Below.excludes(On));
        assert!(LeftOf.excludes(RightOf) && Behind.excludes(InFrontOf));
        assert!(Inside.excludes(On) && On.excludes(Inside));
        assert!(!On.excludes(Above) && !Under.excludes(Below));
        assert!(!On.excludes(NextTo) && !NextTo.excludes(On) && !LeftOf.excludes(Behind));
        assert!(!Between.excludes(LeftOf) && !On.excludes(On));
    }
}
