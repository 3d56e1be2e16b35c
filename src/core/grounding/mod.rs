//! Grounding: resolving the words of each constraint's referents to object hypotheses and segments.
//!
//! Owns: `ground` (constraints + the current view of the scene -> grounded constraints), clarifying
//! questions for ambiguous references, and typed issues (unknown object id, focus outside the image, a class
//! the model does not know, nothing matching a description).
//! Must not: change labels or weigh evidence (that is the energy's job) or parse words.
//!
//! A description is matched against the hypotheses the current solution accepts (falling back to every
//! hypothesis of the class when none is accepted), filtered by image region, colour, size and relation
//! clauses. A singular target of a relabel or an attribute that still matches several objects produces a
//! question instead of a guess; subjects of relations may stay plural (any of them may satisfy it).

pub mod colour_terms;
mod extent;
mod measures;
pub mod pointer;
pub mod predicates;
mod questions;

use serde::{Deserialize, Serialize};

use crate::hypotheses::Hypothesis;
use crate::ids::{ClassId, HypothesisId, ObjectId, RoomId, SegmentId};
use crate::language::constraint::{
    Attribute, Constraint, ConstraintKind, Count, Deixis, Focus, ImageRegion, Place, Referent,
    Relation, SizeTerm, Span,
};
use crate::scene::Scene;
use crate::taxonomy::{ClassGroup, Taxonomy};

pub use crate::taxonomy::{how_many, plural};
pub use extent::Extents;
pub use measures::{footprint_of, in_region, mean_colour, relation_holds, relation_holds_measured};
pub use predicates::{holds, Footprint};
pub use questions::{numbered, where_question, ClarifyingQuestion};

/// A resolved referent: the segments it covers and the hypotheses it may be.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
pub struct Target {
    /// Ascending.
    pub segments: Vec<SegmentId>,
    /// Indices into the hypothesis list, ascending.
    pub hypotheses: Vec<usize>,
}

/// A constraint whose referents are resolved.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum GroundedKind {
    Present {
        class: ClassId,
    },
    Absent {
        class: ClassId,
    },
    Count {
        class: ClassId,
        count: Count,
    },
    Relation {
        subject: Target,
        relation: Relation,
        negated: bool,
        landmarks: Vec<Target>,
    },
    Region {
        subject: Target,
        region: ImageRegion,
    },
    Relabel {
        target: Target,
        from: Option<ClassId>,
        to: Option<ClassId>,
    },
    Attribute {
        target: Target,
        attribute: Attribute,
    },
    Room {
        room: RoomId,
    },
}

/// One grounded constraint, pointing back at the constraint and the utterance span it came from.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct GroundedConstraint {
    /// Index into the constraint list given to `ground`.
    pub constraint: usize,
    pub span: Span,
    /// The operator was definite (parser confidence at least `HARD_CONFIDENCE`).
    pub hard: bool,
    pub gloss: String,
    pub kind: GroundedKind,
}

/// A pointer's grown region covers at most this fraction (1/n) of the image: more than a small object's
/// asking threshold (`usual_share`), so a point on a bare wall reaches it and the relabel asks first.
pub const POINTER_MAX_SHARE: u64 = 12;
/// The robot's object under the pointer stands for what was pointed at when it is at most this many times the
/// area the pointer reaches by colour and depth (our own choice).
pub const POINTER_OBJECT_SLACK: u64 = 3;
/// ... and when the area the pointer reaches covers at least this share of it: a point on a strip of another
/// colour at the edge of an object (the counter under a microwave the robot let spill onto it) means the
/// strip, not the object (our own choice; `docs/decisions.md` has the trial figures).
pub const POINTER_OBJECT_COVER: f64 = 0.5;

/// Parser confidence from which a constraint is treated as hard.
pub const HARD_CONFIDENCE: f32 = 0.9;

/// A problem with one constraint's referents; the constraint is reported, never silently dropped.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, thiserror::Error)]
#[serde(tag = "issue", rename_all = "snake_case")]
pub enum GroundingIssue {
    #[error("constraint {constraint}: there is no object {id} in this scene")]
    UnknownObject { constraint: usize, id: ObjectId },
    #[error("constraint {constraint}: the pointed pixel ({x}, {y}) is outside the {width}x{height} image")]
    FocusOutside {
        constraint: usize,
        x: u32,
        y: u32,
        width: u32,
        height: u32,
    },
    #[error("constraint {constraint}: \"this\" or \"that\" needs a pointed object or pixel, and none was sent")]
    NoFocus { constraint: usize },
    #[error("constraint {constraint}: \"it\" has nothing earlier in the conversation to refer to")]
    NoPrevious { constraint: usize },
    #[error("constraint {constraint}: class {class} is not known to this scene's model")]
    UnknownClass { constraint: usize, class: ClassId },
    #[error("constraint {constraint}: room type {room} is not known")]
    UnknownRoom { constraint: usize, room: RoomId },
    #[error("constraint {constraint}: nothing in view matches \"{words}\"")]
    NoCandidate { constraint: usize, words: String },
    /// Things of the class are in view, but the relation the operator named holds for none of them.
    #[error("constraint {constraint}: {found} in view, but none matches \"{words}\"")]
    NoneInRelation {
        constraint: usize,
        /// What is in view, e.g. "5 tables".
        found: String,
        words: String,
    },
}

impl GroundingIssue {
    /// The constraint the issue is about.
    /// The same issue about the constraint `by` places further on (a turn's constraints are numbered after
    /// the earlier turns' ones in force).
    pub fn shifted(mut self, by: usize) -> GroundingIssue {
        match &mut self {
            GroundingIssue::UnknownObject { constraint, .. }
            | GroundingIssue::FocusOutside { constraint, .. }
            | GroundingIssue::NoFocus { constraint }
            | GroundingIssue::NoPrevious { constraint }
            | GroundingIssue::UnknownClass { constraint, .. }
            | GroundingIssue::UnknownRoom { constraint, .. }
            | GroundingIssue::NoCandidate { constraint, .. }
            | GroundingIssue::NoneInRelation { constraint, .. } => *constraint += by,
        }
        self
    }

    pub fn constraint(&self) -> usize {
        match self {
            GroundingIssue::UnknownObject { constraint, .. }
            | GroundingIssue::FocusOutside { constraint, .. }
            | GroundingIssue::NoFocus { constraint }
            | GroundingIssue::NoPrevious { constraint }
            | GroundingIssue::UnknownClass { constraint, .. }
            | GroundingIssue::UnknownRoom { constraint, .. }
            | GroundingIssue::NoCandidate { constraint, .. }
            | GroundingIssue::NoneInRelation { constraint, .. } => *constraint,
        }
    }
}

/// An object of the previous scene graph, so an operator can point at it by id, and a question can name
/// the objects the operator sees.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct KnownObject {
    pub id: ObjectId,
    pub hypothesis: HypothesisId,
    /// The object's class as shown (`None` when the caller did not say).
    #[serde(default)]
    pub class: Option<ClassId>,
    /// The object's segments as shown, ascending (empty when the caller did not say).
    #[serde(default)]
    pub members: Vec<SegmentId>,
}

/// What the operator sent with the utterance, and what the conversation has said before.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, Default)]
pub struct GroundingContext {
    pub focus: Option<Focus>,
    /// The referent of the previous utterance, for "it".
    pub previous: Option<Target>,
    /// Objects of the previous scene graph.
    pub objects: Vec<KnownObject>,
}

/// The scene as grounding sees it.
pub struct SceneView<'a> {
    pub scene: &'a Scene,
    pub taxonomy: &'a Taxonomy,
    pub hypotheses: &'a [Hypothesis],
    /// Which hypotheses the current solution accepts (same length as `hypotheses`).
    pub accepted: &'a [bool],
    /// Classes the unaries score.
    pub class_count: usize,
}

/// Everything grounding found.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, Default)]
pub struct Grounding {
    pub constraints: Vec<GroundedConstraint>,
    pub questions: Vec<ClarifyingQuestion>,
    pub issues: Vec<GroundingIssue>,
    /// The referent the next "it" means.
    pub last_referent: Option<Target>,
}

impl SceneView<'_> {
    /// The footprint of a hypothesis from its members' statistics.
    pub fn footprint(&self, hypothesis: usize) -> Footprint {
        let members = self
            .hypotheses
            .get(hypothesis)
            .map(|h| h.members.as_slice())
            .unwrap_or(&[]);
        footprint_of(self.scene, members)
    }
}

#[derive(Clone, Copy, PartialEq)]
enum Need {
    /// Exactly one object, or a question.
    One,
    /// Any number of candidates.
    Any,
    /// Any number of candidates for a relation's landmark ("on the desk"): a landmark is something the
    /// operator sees, so when no hypothesis of its class is accepted, the ones the previous scene graph's
    /// objects of the class are named after are taken before every hypothesis of the class.
    Landmark,
}

struct Resolver<'a, 'b> {
    view: &'a SceneView<'b>,
    /// The shown extent of each hypothesis (`extent`), which relations and object counts are measured on.
    extents: &'a Extents,
    context: &'a GroundingContext,
    constraint: usize,
    issues: Vec<GroundingIssue>,
    questions: Vec<ClarifyingQuestion>,
}

impl Resolver<'_, '_> {
    fn target_of(&self, hypotheses: Vec<usize>) -> Target {
        let mut segments: Vec<SegmentId> = hypotheses
            .iter()
            .filter_map(|&h| self.view.hypotheses.get(h))
            .flat_map(|h| h.members.iter().copied())
            .collect();
        segments.sort();
        segments.dedup();
        Target {
            segments,
            hypotheses,
        }
    }

    /// The previous scene graph's objects (of `class`, when given) that share segments with a candidate's
    /// extent, in the graph's order.
    fn shown_objects(&self, class: Option<ClassId>, candidates: &[usize]) -> Vec<KnownObject> {
        let mut covered: Vec<SegmentId> = candidates
            .iter()
            .flat_map(|&h| self.extents.of(self.view.hypotheses, h).iter().copied())
            .collect();
        covered.sort();
        covered.dedup();
        self.context
            .objects
            .iter()
            .filter(|object| !object.members.is_empty())
            .filter(|object| class.is_none() || object.class == class)
            .filter(|object| {
                object
                    .members
                    .iter()
                    .any(|segment| covered.binary_search(segment).is_ok())
            })
            .cloned()
            .collect()
    }

    /// A question for a deictic word with nothing to stand for: point and say it again.
    fn ask_to_point(&mut self, why: &str) {
        self.questions.push(ClarifyingQuestion {
            constraint: self.constraint,
            text: format!("Which one do you mean? {why}: point at it and say it again."),
            candidates: Vec::new(),
            descriptions: Vec::new(),
            objects: Vec::new(),
            where_is: false,
        });
    }

    /// The target of a shown object, as if the operator had pointed at it.
    fn focus_on(&mut self, id: ObjectId) -> Option<Target> {
        let focused = GroundingContext {
            focus: Some(Focus::Object { id }),
            previous: self.context.previous.clone(),
            objects: self.context.objects.clone(),
        };
        let mut resolver = Resolver {
            view: self.view,
            extents: self.extents,
            context: &focused,
            constraint: self.constraint,
            issues: Vec::new(),
            questions: Vec::new(),
        };
        let target = resolver.focus_target(None);
        self.issues.append(&mut resolver.issues);
        target
    }

    fn check_class(&mut self, class: ClassId) -> bool {
        if class.index() >= self.view.class_count {
            self.issues.push(GroundingIssue::UnknownClass {
                constraint: self.constraint,
                class,
            });
            return false;
        }
        true
    }

    fn focus_target(&mut self, class: Option<ClassId>) -> Option<Target> {
        let view = self.view;
        match self.context.focus {
            None => {
                self.issues.push(GroundingIssue::NoFocus {
                    constraint: self.constraint,
                });
                self.ask_to_point("\"that\" needs a point on the picture");
                None
            }
            Some(Focus::Object { id }) => {
                let known = self.context.objects.iter().find(|object| object.id == id);
                let index = known.and_then(|object| {
                    view.hypotheses
                        .iter()
                        .position(|h| h.id == object.hypothesis)
                });
                match (known, index) {
                    // The object as the operator saw it: all of its segments, not only its hypothesis's.
                    (Some(object), index) if !object.members.is_empty() => {
                        let mut target = index
                            .map(|index| self.target_of(vec![index]))
                            .unwrap_or_default();
                        target.segments.extend(object.members.iter().copied());
                        target.segments.sort();
                        target.segments.dedup();
                        Some(target)
                    }
                    (_, Some(index)) => Some(self.target_of(vec![index])),
                    _ => {
                        self.issues.push(GroundingIssue::UnknownObject {
                            constraint: self.constraint,
                            id,
                        });
                        None
                    }
                }
            }
            Some(Focus::Pixel { x, y }) => {
                let (width, height) = (view.scene.width(), view.scene.height());
                let map = &view.scene.segments;
                if x >= width || y >= height || x >= map.width || y >= map.height {
                    self.issues.push(GroundingIssue::FocusOutside {
                        constraint: self.constraint,
                        x,
                        y,
                        width,
                        height,
                    });
                    return None;
                }
                let pixel = y as usize * map.width as usize + x as usize;
                let Some(&segment) = map.labels.get(pixel) else {
                    self.issues.push(GroundingIssue::FocusOutside {
                        constraint: self.constraint,
                        x,
                        y,
                        width,
                        height,
                    });
                    return None;
                };
                let segment = SegmentId(segment);
                let _ = class;
                Some(self.pointed_target(segment))
            }
        }
    }

    /// What a pointed segment means: the smallest accepted hypothesis over it when that object is not a
    /// structure class, not much larger than the region the pointer reaches by colour and depth
    /// (`pointer`), and at least half covered by it; otherwise that region. A point on a wall or a floor, or on an object the robot ran
    /// together with its surroundings, so never stands for the whole of it. A proposal the robot did not
    /// accept is never taken over the region: it is no one's belief about the picture, and a proposal that
    /// spans the pointed thing and its neighbour (a fridge and the tall cabinet beside it) carried the
    /// relabel onto the neighbour (measured in `docs/decisions.md`).
    fn pointed_target(&mut self, segment: SegmentId) -> Target {
        let view = self.view;
        let over: Vec<usize> = (0..view.hypotheses.len())
            .filter(|&h| view.hypotheses[h].members.binary_search(&segment).is_ok())
            .collect();
        let accepted = || {
            over.iter()
                .copied()
                .filter(|&h| view.accepted.get(h).copied().unwrap_or(false))
                .min_by_key(|&h| (view.hypotheses[h].members.len(), h))
        };
        let area = |members: &[SegmentId]| -> u64 {
            members
                .iter()
                .filter_map(|s| view.scene.stats.get(s.index()))
                .map(|stats| u64::from(stats.area))
                .sum()
        };
        let pixels = u64::from(view.scene.width()) * u64::from(view.scene.height());
        let reached = pointer::pointed_region(view.scene, segment, pixels / POINTER_MAX_SHARE);
        let reached_area = area(&reached);
        // Whether the pointer's region stands for all of `members`: not far smaller, and covering enough of it.
        let stands_for = |members: &[SegmentId]| {
            let covered: Vec<SegmentId> = members
                .iter()
                .copied()
                .filter(|s| reached.binary_search(s).is_ok())
                .collect();
            let whole = area(members);
            whole <= POINTER_OBJECT_SLACK * reached_area.max(1)
                && area(&covered) as f64 >= POINTER_OBJECT_COVER * whole as f64
        };
        // The object the operator saw under the pointer, when the caller said which objects were shown: all
        // of it, as drawn, under the same limits as a hypothesis.
        if let Some(object) = self
            .context
            .objects
            .iter()
            .find(|object| object.members.binary_search(&segment).is_ok())
        {
            let structure = object
                .class
                .and_then(|class| view.taxonomy.class(class))
                .is_some_and(|info| info.group == ClassGroup::Structure);
            if !structure && stands_for(&object.members) {
                let mut target = view
                    .hypotheses
                    .iter()
                    .position(|h| h.id == object.hypothesis)
                    .map(|index| self.target_of(vec![index]))
                    .unwrap_or_default();
                target.segments = object.members.clone();
                return target;
            }
        }
        if let Some(h) = accepted() {
            let hypothesis = &view.hypotheses[h];
            let structure = view
                .taxonomy
                .class(hypothesis.class)
                .is_some_and(|info| info.group == ClassGroup::Structure);
            if !structure && stands_for(&hypothesis.members) {
                return self.target_of(vec![h]);
            }
        }
        Target {
            segments: reached,
            hypotheses: Vec::new(),
        }
    }

    fn resolve(&mut self, referent: &Referent, need: Need) -> Option<Target> {
        if let Some(class) = referent.class {
            if !self.check_class(class) {
                return None;
            }
        }
        match referent.deixis {
            Some(Deixis::Focus) => return self.focus_target(referent.class),
            Some(Deixis::Previous) => {
                return match &self.context.previous {
                    Some(previous) => Some(previous.clone()),
                    None => {
                        self.issues.push(GroundingIssue::NoPrevious {
                            constraint: self.constraint,
                        });
                        self.ask_to_point("nothing was named before for \"it\" to mean");
                        None
                    }
                };
            }
            None => {}
        }
        let view = self.view;
        let of_class = |h: usize| referent.class.is_none_or(|c| view.hypotheses[h].class == c);
        let mut candidates: Vec<usize> = (0..view.hypotheses.len())
            .filter(|&h| of_class(h) && view.accepted.get(h).copied().unwrap_or(false))
            .collect();
        if candidates.is_empty() && referent.class.is_some() && need == Need::Landmark {
            let shown = &self.context.objects;
            candidates = (0..view.hypotheses.len())
                .filter(|&h| {
                    of_class(h)
                        && shown
                            .iter()
                            .any(|object| object.hypothesis == view.hypotheses[h].id)
                })
                .collect();
        }
        if candidates.is_empty() && referent.class.is_some() {
            candidates = (0..view.hypotheses.len())
                .filter(|&h| of_class(h))
                .collect();
        }
        if let Some(region) = referent.region {
            candidates = filter_region(
                view,
                self.extents,
                candidates,
                region,
                need,
                referent.plural,
            );
        }
        for attribute in &referent.attributes {
            candidates = self.filter_attribute(candidates, *attribute);
        }
        let extents = self.extents;
        let before_relations = distinct_objects(view, extents, &candidates);
        for clause in &referent.relations {
            let mut landmark_sets = Vec::new();
            for landmark in &clause.landmarks {
                match self.resolve(landmark, Need::Landmark) {
                    Some(target) => landmark_sets.push(target.hypotheses),
                    None => return None,
                }
            }
            candidates.retain(|&h| {
                let satisfied = landmark_choices(&landmark_sets).iter().any(|choice| {
                    !choice.contains(&h) && {
                        let landmarks: Vec<&[SegmentId]> = choice
                            .iter()
                            .map(|&l| extents.of(view.hypotheses, l))
                            .collect();
                        relation_holds(
                            view.scene,
                            clause.relation,
                            extents.of(view.hypotheses, h),
                            &landmarks,
                        )
                    }
                });
                satisfied != clause.negated
            });
        }
        if candidates.is_empty() {
            let words = questions::describe_referent(view.taxonomy, referent);
            let issue = match referent.class {
                Some(class) if before_relations > 0 && !referent.relations.is_empty() => {
                    GroundingIssue::NoneInRelation {
                        constraint: self.constraint,
                        found: how_many(before_relations, view.taxonomy.class_name(class)),
                        words,
                    }
                }
                _ => GroundingIssue::NoCandidate {
                    constraint: self.constraint,
                    words,
                },
            };
            self.issues.push(issue);
            return None;
        }
        // Hypotheses over the same segments with the same class are one object; keep the best scored.
        if need == Need::One
            && !referent.plural
            && distinct_objects(view, self.extents, &candidates) > 1
        {
            // Ask about the objects the operator was shown, when the caller said what they were: several
            // hypotheses may be parts of one object the scene graph shows, and then there is nothing to ask.
            let shown = self.shown_objects(referent.class, &candidates);
            match shown.as_slice() {
                [only] => return self.focus_on(only.id),
                [_, _, ..] => {
                    self.questions.push(questions::ask_objects(
                        view,
                        self.constraint,
                        referent,
                        &shown,
                    ));
                    return None;
                }
                [] => {}
            }
            self.questions
                .push(questions::ask(view, self.constraint, referent, &candidates));
            return None;
        }
        Some(self.target_of(candidates))
    }

    fn filter_attribute(&self, candidates: Vec<usize>, attribute: Attribute) -> Vec<usize> {
        let view = self.view;
        match attribute {
            Attribute::Colour(term) => candidates
                .into_iter()
                .filter(|&h| {
                    colour_terms::nearest_term(mean_colour(view.scene, &view.hypotheses[h].members))
                        == term
                })
                .collect(),
            Attribute::Size(size) => {
                let mut areas: Vec<u32> =
                    candidates.iter().map(|&h| view.footprint(h).area).collect();
                areas.sort_unstable();
                let Some(&median) = areas.get(areas.len() / 2) else {
                    return candidates;
                };
                candidates
                    .into_iter()
                    .filter(|&h| {
                        let area = view.footprint(h).area;
                        match size {
                            SizeTerm::Big => area >= median,
                            SizeTerm::Small => area <= median,
                        }
                    })
                    .collect()
            }
        }
    }
}

/// Narrows candidates by a place in the picture. "On the left" first keeps the candidates whose centre is in
/// the left third (the reading `region_words` uses when it asks which one). A side (left, right, top,
/// bottom, front, back) is also read relatively, as people use it to pick among things: "the cabinet on
/// the right" is the rightmost cabinet even when no cabinet lies in the right third, and of several in the
/// right third the rightmost is meant when one object is needed. Relatively read, a plural keeps the half
/// of the candidates' spread toward the side. Centre and corner are only read absolutely.
fn filter_region(
    view: &SceneView,
    extents: &Extents,
    candidates: Vec<usize>,
    region: ImageRegion,
    need: Need,
    plural: bool,
) -> Vec<usize> {
    let (width, height) = (view.scene.width(), view.scene.height());
    let inside: Vec<usize> = candidates
        .iter()
        .copied()
        .filter(|&h| in_region(&view.footprint(h), region, width, height))
        .collect();
    // How far toward the side a footprint lies (larger is further).
    let toward = |h: usize| -> f32 {
        let footprint = view.footprint(h);
        let (x, y) = footprint.centroid;
        match (region, footprint.depth_mm) {
            (ImageRegion::Left, _) => -x,
            (ImageRegion::Right, _) => x,
            (ImageRegion::Top, _) => -y,
            (ImageRegion::Bottom, _) => y,
            (ImageRegion::Back, Some(depth)) => depth,
            (ImageRegion::Back, None) => -y,
            (ImageRegion::Front, Some(depth)) => -depth,
            (ImageRegion::Front, None) => y,
            (ImageRegion::Centre | ImageRegion::Corner, _) => 0.0,
        }
    };
    if matches!(region, ImageRegion::Centre | ImageRegion::Corner) {
        return inside;
    }
    let relative = inside.is_empty();
    let pool = if relative { candidates } else { inside };
    let one = need == Need::One && !plural;
    if pool.is_empty() || !(relative || (one && distinct_objects(view, extents, &pool) > 1)) {
        return pool;
    }
    let keys: Vec<f32> = pool.iter().map(|&h| toward(h)).collect();
    let (low, high) = keys
        .iter()
        .fold((f32::INFINITY, f32::NEG_INFINITY), |(lo, hi), &k| {
            (lo.min(k), hi.max(k))
        });
    if one {
        // The furthest object toward the side (lowest index on a tie), with every hypothesis over its members.
        let mut best = 0usize;
        for (index, &key) in keys.iter().enumerate() {
            if key > keys[best] {
                best = index;
            }
        }
        let members = &view.hypotheses[pool[best]].members;
        pool.iter()
            .copied()
            .filter(|&h| &view.hypotheses[h].members == members)
            .collect()
    } else {
        let middle = 0.5 * (low + high);
        pool.iter()
            .zip(&keys)
            .filter(|(_, &key)| key >= middle)
            .map(|(&h, _)| h)
            .collect()
    }
}

/// Candidates that are different objects (different member sets).
fn distinct_objects(view: &SceneView, extents: &Extents, candidates: &[usize]) -> usize {
    let mut sets: Vec<&[SegmentId]> = candidates
        .iter()
        .map(|&h| extents.of(view.hypotheses, h))
        .collect();
    sets.sort();
    sets.dedup();
    sets.len()
}

/// Every way to pick one hypothesis from each landmark set (at most two sets are used).
fn landmark_choices(sets: &[Vec<usize>]) -> Vec<Vec<usize>> {
    match sets {
        [] => Vec::new(),
        [only] => only.iter().map(|&l| vec![l]).collect(),
        [first, second, ..] => first
            .iter()
            .flat_map(|&a| {
                second
                    .iter()
                    .filter(move |&&b| b != a)
                    .map(move |&b| vec![a, b])
            })
            .collect(),
    }
}

/// Resolves every constraint's referents against the current view of the scene.
pub fn ground(
    constraints: &[Constraint],
    view: &SceneView,
    context: &GroundingContext,
) -> Grounding {
    let mut grounding = Grounding::default();
    let mut previous = context.previous.clone();
    let extents = Extents::new(view.scene, view.hypotheses, view.accepted);
    for (index, constraint) in constraints.iter().enumerate() {
        let local_context = GroundingContext {
            focus: context.focus,
            previous: previous.clone(),
            objects: context.objects.clone(),
        };
        let mut resolver = Resolver {
            view,
            extents: &extents,
            context: &local_context,
            constraint: index,
            issues: Vec::new(),
            questions: Vec::new(),
        };
        let kind = match &constraint.kind {
            ConstraintKind::Present { class } => resolver
                .check_class(*class)
                .then_some(GroundedKind::Present { class: *class }),
            ConstraintKind::Absent { class } => resolver
                .check_class(*class)
                .then_some(GroundedKind::Absent { class: *class }),
            ConstraintKind::Count { class, count } => {
                resolver.check_class(*class).then_some(GroundedKind::Count {
                    class: *class,
                    count: *count,
                })
            }
            ConstraintKind::RoomType { room } => room_kind(&mut resolver, *room),
            ConstraintKind::Place { subject, place } => match place {
                Place::Room(room) => room_kind(&mut resolver, *room),
                Place::Region(region) => {
                    resolver
                        .resolve(subject, Need::Any)
                        .map(|subject| GroundedKind::Region {
                            subject,
                            region: *region,
                        })
                }
            },
            ConstraintKind::Relation {
                subject,
                relation,
                negated,
                landmarks,
            } => {
                let subject = resolver.resolve(subject, Need::Any);
                let mut resolved = Vec::new();
                for landmark in landmarks {
                    if let Some(target) = resolver.resolve(landmark, Need::Landmark) {
                        resolved.push(target);
                    }
                }
                match subject {
                    Some(subject) if resolved.len() == landmarks.len() => {
                        Some(GroundedKind::Relation {
                            subject,
                            relation: *relation,
                            negated: *negated,
                            landmarks: resolved,
                        })
                    }
                    _ => None,
                }
            }
            ConstraintKind::Relabel { target, from, to } => {
                let known = from.is_none_or(|c| resolver.check_class(c))
                    && to.is_none_or(|c| resolver.check_class(c));
                // "that's not a cat": the referent's class is the one being denied, so look it up as-is.
                let resolved = if known {
                    resolver.resolve(target, Need::One)
                } else {
                    None
                };
                match (resolved, *to) {
                    // A relabel far larger than the new class's usual size asks first.
                    (Some(target), Some(to)) if too_large_for(view, &target, to) => {
                        resolver.questions.push(ClarifyingQuestion {
                            constraint: index,
                            text: format!(
                                "That would make {} of the picture a {}, far more than one usually covers. \
                                 Point at the middle of the {} and say it again.",
                                share_words(view, &target),
                                view.taxonomy.class_name(to),
                                view.taxonomy.class_name(to)
                            ),
                            candidates: Vec::new(),
                            descriptions: Vec::new(),
                            objects: Vec::new(),
                            where_is: false,
                        });
                        None
                    }
                    // "Get rid of it": not there, whatever it is shown as.
                    (Some(target), None) if from.is_none() => {
                        shown_class(view, &target).map(|shown| GroundedKind::Relabel {
                            target,
                            from: Some(shown),
                            to: None,
                        })
                    }
                    (resolved, _) => resolved.map(|target| GroundedKind::Relabel {
                        target,
                        from: *from,
                        to: *to,
                    }),
                }
            }
            ConstraintKind::Attribute { target, attribute } => resolver
                .resolve(target, Need::One)
                .map(|target| GroundedKind::Attribute {
                    target,
                    attribute: *attribute,
                }),
        };
        grounding.issues.append(&mut resolver.issues);
        grounding.questions.append(&mut resolver.questions);
        if let Some(kind) = kind {
            if let GroundedKind::Relabel { target, .. }
            | GroundedKind::Attribute { target, .. }
            | GroundedKind::Region {
                subject: target, ..
            }
            | GroundedKind::Relation {
                subject: target, ..
            } = &kind
            {
                previous = Some(target.clone());
            }
            grounding.constraints.push(GroundedConstraint {
                constraint: index,
                span: constraint.span,
                hard: constraint.confidence >= HARD_CONFIDENCE,
                gloss: constraint.gloss.clone(),
                kind,
            });
        }
    }
    grounding.last_referent = previous;
    grounding
}

/// The class a target is shown as: its hypotheses' class when they agree, else the class most of its
/// segments' hypotheses take.
fn shown_class(view: &SceneView, target: &Target) -> Option<ClassId> {
    let mut classes: Vec<ClassId> = target
        .hypotheses
        .iter()
        .filter_map(|&h| view.hypotheses.get(h).map(|h| h.class))
        .collect();
    if classes.is_empty() {
        classes = view
            .hypotheses
            .iter()
            .zip(view.accepted)
            .filter(|(h, &on)| {
                on && h
                    .members
                    .iter()
                    .any(|m| target.segments.binary_search(m).is_ok())
            })
            .map(|(h, _)| h.class)
            .collect();
    }
    classes.sort();
    let mut best: Option<(usize, ClassId)> = None;
    for run in classes.chunk_by(|a, b| a == b) {
        if best.is_none_or(|(n, _)| run.len() > n) {
            best = Some((run.len(), run[0]));
        }
    }
    best.map(|(_, class)| class)
}

/// The most of the image (1/n) one object of a group usually covers, for the "much larger than usual" check
/// of a relabel: small objects a thirtieth, furniture and appliances a sixth, structure and living things no
/// limit. A rule of thumb of our own, not counted from renders.
fn usual_share(group: ClassGroup) -> Option<u64> {
    match group {
        ClassGroup::Object => Some(30),
        ClassGroup::Furniture | ClassGroup::Appliance => Some(6),
        ClassGroup::Structure | ClassGroup::Living => None,
    }
}

/// How many times its usual share a relabel may cover before it asks first.
const RELABEL_ASK_FACTOR: u64 = 2;

fn target_area(view: &SceneView, target: &Target) -> u64 {
    target
        .segments
        .iter()
        .filter_map(|s| view.scene.stats.get(s.index()))
        .map(|stats| u64::from(stats.area))
        .sum()
}

/// Whether relabelling `target` as `class` covers far more than one object of the class usually does.
fn too_large_for(view: &SceneView, target: &Target, class: ClassId) -> bool {
    let Some(share) = view
        .taxonomy
        .class(class)
        .and_then(|info| usual_share(info.group))
    else {
        return false;
    };
    let pixels = u64::from(view.scene.width()) * u64::from(view.scene.height());
    target_area(view, target) * share > RELABEL_ASK_FACTOR * pixels
}

/// The share of the picture a target covers, as a percentage.
fn share_words(view: &SceneView, target: &Target) -> String {
    let pixels = (u64::from(view.scene.width()) * u64::from(view.scene.height())).max(1);
    let percent = 100 * target_area(view, target) / pixels;
    format!("{percent}%")
}

fn room_kind(resolver: &mut Resolver, room: RoomId) -> Option<GroundedKind> {
    if resolver.view.taxonomy.room(room).is_none() {
        resolver.issues.push(GroundingIssue::UnknownRoom {
            constraint: resolver.constraint,
            room,
        });
        return None;
    }
    Some(GroundedKind::Room { room })
}
