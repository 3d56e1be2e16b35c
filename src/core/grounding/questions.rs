//! Clarifying questions: when a reference matches several objects, ask which one, in plain words.
//!
//! Owns: `ClarifyingQuestion`, describing each candidate by a relation to its nearest other object (or by
//! where it is in the picture), describing a referent's words back to the operator, and `where_question`
//! (asking the operator to point at a thing nothing in the picture can stand for).
//! Must not: pick a candidate; a question is returned instead of a guess.

use serde::{Deserialize, Serialize};

use super::predicates::{holds, relation_words, Footprint};
use super::{footprint_of, in_region, KnownObject, SceneView};
use crate::ids::{ClassId, HypothesisId, ObjectId};
use crate::language::constraint::{ImageRegion, Referent, Relation};
use crate::language::notation::attribute_name;
use crate::taxonomy::{how_many, plural, ClassGroup, Taxonomy};

/// A question to send back instead of guessing, with the objects it distinguishes.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ClarifyingQuestion {
    /// Index of the constraint that needs the answer.
    pub constraint: usize,
    pub text: String,
    /// The candidate hypotheses, in the order the question names them.
    pub candidates: Vec<HypothesisId>,
    /// How each candidate is described in the text.
    pub descriptions: Vec<String>,
    /// The candidates as scene-graph object ids, in the same order (what an answer names or points at).
    #[serde(default)]
    pub objects: Vec<ObjectId>,
    /// The question asks where a thing nothing in the picture could stand for is (`where_question`): it is
    /// asked alongside whatever else the note did, and answered by a new pointed note.
    #[serde(default)]
    pub where_is: bool,
}

fn number_word(n: usize) -> String {
    const WORDS: [&str; 11] = [
        "no", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine", "ten",
    ];
    WORDS
        .get(n)
        .map(|w| w.to_string())
        .unwrap_or_else(|| n.to_string())
}

/// The referent's words as we would say them back, with every attribute, place and relation it carries
/// ("the mug", "the big red mug on the left", "the table next to the wall", "the things").
pub fn describe_referent(taxonomy: &Taxonomy, referent: &Referent) -> String {
    let mut words = vec!["the".to_string()];
    for attribute in &referent.attributes {
        words.push(attribute_name(*attribute).to_string());
    }
    let head = match referent.class {
        Some(class) => taxonomy.class_name(class).replace('_', " "),
        None => "thing".to_string(),
    };
    words.push(if referent.plural { plural(&head) } else { head });
    if let Some(region) = referent.region {
        words.push(region_phrase(region).to_string());
    }
    for clause in &referent.relations {
        if clause.negated {
            words.push("not".to_string());
        }
        words.push(relation_words(clause.relation).to_string());
        let landmarks: Vec<String> = clause
            .landmarks
            .iter()
            .map(|landmark| describe_referent(taxonomy, landmark))
            .collect();
        words.push(landmarks.join(" and "));
    }
    words.join(" ")
}

/// The question for a presence, a count asking for more, or a placement (`place`: the relation and the
/// landmark's class) that nothing in the picture can stand for: where is it? `shown` is how many objects of
/// the class the picture shows (a count asking for more: where is another?). The answer is a new pointed note
/// ("that's a towel"), so the question names no candidates.
pub fn where_question(
    taxonomy: &Taxonomy,
    constraint: usize,
    class: ClassId,
    place: Option<(Relation, ClassId)>,
    shown: usize,
) -> ClarifyingQuestion {
    let name = taxonomy.class_name(class).replace('_', " ");
    let place = place
        .map(|(relation, landmark)| {
            format!(
                " {} the {}",
                relation_words(relation),
                taxonomy.class_name(landmark).replace('_', " ")
            )
        })
        .unwrap_or_default();
    let found = if shown == 0 {
        format!("Nothing the robot sees can be the {name}{place}. Where is it?")
    } else {
        format!(
            "The robot finds only {} it can stand behind. Where is another?",
            how_many(shown, &name)
        )
    };
    ClarifyingQuestion {
        constraint,
        text: format!("{found} Point at it and say what it is (\"that's a {name}\")."),
        candidates: Vec::new(),
        descriptions: Vec::new(),
        objects: Vec::new(),
        where_is: true,
    }
}

/// "7th", "11th", "22nd": a position said back as a number.
pub fn numbered(n: usize) -> String {
    let suffix = match (n % 10, n % 100) {
        (_, 11..=13) => "th",
        (1, _) => "st",
        (2, _) => "nd",
        (3, _) => "rd",
        _ => "th",
    };
    format!("{n}{suffix}")
}

fn region_phrase(region: ImageRegion) -> &'static str {
    match region {
        ImageRegion::Left => "on the left",
        ImageRegion::Right => "on the right",
        ImageRegion::Top => "at the top",
        ImageRegion::Bottom => "at the bottom",
        ImageRegion::Centre => "in the middle",
        ImageRegion::Corner => "in the corner",
        ImageRegion::Back => "at the back",
        ImageRegion::Front => "at the front",
    }
}

const DESCRIBING_RELATIONS: [Relation; 7] = [
    Relation::On,
    Relation::Under,
    Relation::Inside,
    Relation::LeftOf,
    Relation::RightOf,
    Relation::Above,
    Relation::Below,
];

fn region_words(view: &SceneView, footprint: &Footprint) -> String {
    let (width, height) = (view.scene.width(), view.scene.height());
    for region in [
        ImageRegion::Left,
        ImageRegion::Right,
        ImageRegion::Top,
        ImageRegion::Bottom,
    ] {
        if in_region(footprint, region, width, height) {
            return format!("the one {}", region_phrase(region));
        }
    }
    format!("the one {}", region_phrase(ImageRegion::Centre))
}

/// "the one left of the sink": a relation to the nearest accepted object of another class.
fn describe_candidate(view: &SceneView, hypothesis: usize, candidates: &[usize]) -> String {
    let subject = view.footprint(hypothesis);
    let class = view.hypotheses[hypothesis].class;
    describe_footprint(view, &subject, class, |other| {
        other == hypothesis || candidates.contains(&other)
    })
}

/// "the one left of the sink" for any footprint: a relation to the nearest accepted object of another class
/// that `skip` does not exclude, else where it is in the picture.
fn describe_footprint(
    view: &SceneView,
    subject: &Footprint,
    class: ClassId,
    skip: impl Fn(usize) -> bool,
) -> String {
    let mut landmarks: Vec<(f32, usize)> = (0..view.hypotheses.len())
        .filter(|&other| {
            !skip(other)
                && view.accepted.get(other).copied().unwrap_or(false)
                && view.hypotheses[other].class != class
                && view
                    .taxonomy
                    .class(view.hypotheses[other].class)
                    .is_some_and(|info| info.group != ClassGroup::Structure)
        })
        .map(|other| {
            let footprint = view.footprint(other);
            let dx = footprint.centroid.0 - subject.centroid.0;
            let dy = footprint.centroid.1 - subject.centroid.1;
            (dx * dx + dy * dy, other)
        })
        .collect();
    landmarks.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    for &(_, landmark) in landmarks.iter().take(3) {
        let footprint = view.footprint(landmark);
        for relation in DESCRIBING_RELATIONS {
            if holds(relation, subject, &[footprint]) {
                let name = view
                    .taxonomy
                    .class_name(view.hypotheses[landmark].class)
                    .replace('_', " ");
                return format!("the one {} the {name}", relation_words(relation));
            }
        }
    }
    region_words(view, subject)
}

/// Builds the question for a referent that matched several objects of the scene graph the operator was
/// shown: the candidates are those objects, by id, left to right.
pub(super) fn ask_objects(
    view: &SceneView,
    constraint: usize,
    referent: &Referent,
    objects: &[KnownObject],
) -> ClarifyingQuestion {
    let mut shown: Vec<(&KnownObject, Footprint)> = objects
        .iter()
        .map(|object| (object, footprint_of(view.scene, &object.members)))
        .collect();
    shown.sort_by(|a, b| {
        a.1.centroid
            .0
            .total_cmp(&b.1.centroid.0)
            .then(a.0.id.cmp(&b.0.id))
    });
    let shown_ids: Vec<HypothesisId> = shown.iter().map(|(object, _)| object.hypothesis).collect();
    let descriptions: Vec<String> = shown
        .iter()
        .map(|(object, footprint)| {
            let class = object.class.or(referent.class).unwrap_or(ClassId(0));
            describe_footprint(view, footprint, class, |other| {
                shown_ids.contains(&view.hypotheses[other].id)
            })
        })
        .collect();
    let candidates: Vec<HypothesisId> = shown.iter().map(|(object, _)| object.hypothesis).collect();
    let mut question = worded(
        constraint,
        referent,
        view.taxonomy,
        candidates,
        descriptions,
    );
    question.objects = shown.iter().map(|(object, _)| object.id).collect();
    question
}

/// Builds the question for a referent that matched several objects.
pub(super) fn ask(
    view: &SceneView,
    constraint: usize,
    referent: &Referent,
    candidates: &[usize],
) -> ClarifyingQuestion {
    // One candidate per distinct member set (the best scored), in reading order (left to right).
    let mut distinct: Vec<usize> = Vec::new();
    for &h in candidates {
        let members = &view.hypotheses[h].members;
        match distinct
            .iter()
            .position(|&d| &view.hypotheses[d].members == members)
        {
            Some(position) => {
                if view.hypotheses[h].score > view.hypotheses[distinct[position]].score {
                    distinct[position] = h;
                }
            }
            None => distinct.push(h),
        }
    }
    distinct.sort_by(|&a, &b| {
        view.footprint(a)
            .centroid
            .0
            .total_cmp(&view.footprint(b).centroid.0)
            .then(a.cmp(&b))
    });
    let descriptions: Vec<String> = distinct
        .iter()
        .map(|&h| describe_candidate(view, h, &distinct))
        .collect();
    let candidates: Vec<HypothesisId> = distinct.iter().map(|&h| view.hypotheses[h].id).collect();
    worded(
        constraint,
        referent,
        view.taxonomy,
        candidates,
        descriptions,
    )
}

/// The question's words: "which of the three chairs: the one left of the table, ...?", each candidate with
/// its own description (positions in reading order when two descriptions would be alike).
fn worded(
    constraint: usize,
    referent: &Referent,
    taxonomy: &Taxonomy,
    candidates: Vec<HypothesisId>,
    mut descriptions: Vec<String>,
) -> ClarifyingQuestion {
    // Two candidates described alike would not help; fall back to positions in reading order.
    let mut sorted = descriptions.clone();
    sorted.sort();
    sorted.dedup();
    if sorted.len() < descriptions.len() {
        let ordinals = ["first", "second", "third", "fourth", "fifth", "sixth"];
        for (position, description) in descriptions.iter_mut().enumerate() {
            // Every candidate keeps its own number: "the 7th from the left", never "the next".
            let ordinal = ordinals
                .get(position)
                .map(|word| word.to_string())
                .unwrap_or_else(|| numbered(position + 1));
            *description = format!("the {ordinal} from the left");
        }
    }
    let noun = match referent.class {
        Some(class) => plural(taxonomy.class_name(class)),
        None => "things".to_string(),
    };
    let listed = match descriptions.as_slice() {
        [] => String::new(),
        [only] => only.clone(),
        [init @ .., last] => format!("{} or {last}", init.join(", ")),
    };
    ClarifyingQuestion {
        constraint,
        text: format!(
            "which of the {} {noun}: {listed}?",
            number_word(candidates.len())
        ),
        // A scene-graph object is numbered after the hypothesis it is named for.
        objects: candidates.iter().map(|h| ObjectId(h.0)).collect(),
        candidates,
        descriptions,
        where_is: false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbered_ordinals_follow_english_suffixes() {
        let said: Vec<String> = [1, 2, 3, 4, 7, 11, 12, 13, 21, 22, 23, 101, 111]
            .into_iter()
            .map(numbered)
            .collect();
        assert_eq!(
            said,
            [
                "1st", "2nd", "3rd", "4th", "7th", "11th", "12th", "13th", "21st", "22nd", "23rd",
                "101st", "111th"
            ]
        );
    }

    fn first_referent(utterance: &str) -> (Taxonomy, Referent) {
        use crate::language::constraint::ConstraintKind;
        let grammar = crate::language::Grammar::embedded().expect("embedded grammar");
        let parse = grammar.parse(utterance, None).expect("parses");
        let referent =
            match &parse.constraints[0].kind {
                ConstraintKind::Relabel { target, .. }
                | ConstraintKind::Attribute { target, .. } => target.clone(),
                ConstraintKind::Relation { subject, .. }
                | ConstraintKind::Place { subject, .. } => subject.clone(),
                other => panic!("no referent in {other:?}"),
            };
        (grammar.taxonomy().clone(), referent)
    }

    #[test]
    fn a_referent_is_said_back_with_its_place_and_relations() {
        let (taxonomy, referent) = first_referent("the table next to the wall is a chair");
        assert_eq!(
            describe_referent(&taxonomy, &referent),
            "the table next to the wall"
        );
        let (taxonomy, referent) = first_referent("the big mug on the left is a vase");
        assert_eq!(
            describe_referent(&taxonomy, &referent),
            "the big mug on the left"
        );
    }
}
