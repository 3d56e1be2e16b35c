//! `sayso trial`: the product measured on scenes and phrasings it was never tuned on. Renders fresh scenes of
//! the invented flat from reserved seeds, lets an automatic operator (`operator`) state the most useful true
//! fact about what the robot shows in a blind-written phrasing (`phrasings`), applies one note and then a
//! second, and scores each step against the ground truth and against the no-note joint solve.
//!
//! Owns: the reserved trial seeds, one scene's trial (`run_scene`), how a note's outcome is judged (met,
//! unmet, asked, misread, not understood) and the summary figures. The SVG chart is in `chart`.
//! Must not: tune anything, or be read by tuning: its seeds are refused by `tuning::check_training_seeds`.

pub mod chart;
pub mod operator;
pub mod phrasings;

use std::ops::Range;
use std::time::Instant;

use serde::Serialize;

use crate::demo::DemoScene;
use crate::evaluation::{
    matched_objects, object_tally, object_tally_sized, objects_from_graph, objects_from_members,
    objects_from_regions, score_labels, Smallest,
};
use crate::ids::{ClassId, RoomId};
use crate::language::constraint::{Constraint, ConstraintKind, Count, Focus, Place, Relation};
use crate::pipeline::{
    believe_without_notes, correct_turn, prepare_loaded, CorrectionSettings, PipelineError,
    TurnInputs,
};
use crate::render::random::mix64;
use crate::render::{render_scene, SceneRequest, ROOM_TYPES};
use crate::scenegraph::label_map;
use crate::taxonomy::{Taxonomy, UNLABELLED};
use crate::turn::solve::Correction;
use crate::unaries::Classifier;

use operator::{candidate_facts, deepest_pixel, Fact, FactRelation, Shown};
use phrasings::Phrasings;

/// Seeds reserved for trials; tuning refuses them. Development trials start at the first, held-out trials
/// (the reported figures) at `HELD_OUT_START`.
pub const TRIAL_SEEDS: Range<u64> = 6_000_000..8_000_000;
/// The first development trial seed.
pub const DEV_START: u64 = 6_000_000;
/// The first held-out trial seed.
pub const HELD_OUT_START: u64 = 7_000_000;

/// What can stop a trial.
#[derive(Debug, thiserror::Error)]
pub enum TrialError {
    #[error("trial phrasings: {0}")]
    Phrasings(String),
    #[error("rendering trial scene {seed}: {message}")]
    Render { seed: u64, message: String },
    #[error(transparent)]
    Pipeline(#[from] PipelineError),
    #[error("scoring: {0}")]
    Scoring(String),
}

/// Pixel accuracy, mean IoU and object accuracy (scene-graph objects matched one-to-one at IoU 0.5), as
/// fractions. `object` is the matching's F1 (`ObjectTally::f1`: a spurious object costs as much as a missed
/// one); `object_recall` is the share of true objects matched, which a spurious object does not move;
/// `object_seen` is the F1 over the objects the operator notices (true objects of at least
/// `operator::MIN_VISIBLE` pixels, shown ones of at least `operator::MIN_NOTICED`), the only ones a note
/// can be about.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct Scores {
    pub pixel: f64,
    pub mean_iou: f64,
    pub object: f64,
    pub object_recall: f64,
    pub object_seen: f64,
}

impl Scores {
    pub fn minus(&self, other: &Scores) -> Scores {
        Scores {
            pixel: self.pixel - other.pixel,
            mean_iou: self.mean_iou - other.mean_iou,
            object: self.object - other.object,
            object_recall: self.object_recall - other.object_recall,
            object_seen: self.object_seen - other.object_seen,
        }
    }
}

/// The objects the operator notices, for `Scores::object_seen`.
const NOTICED: Smallest = Smallest {
    truth: operator::MIN_VISIBLE,
    predicted: operator::MIN_NOTICED,
};

/// How a note came out.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Outcome {
    /// Read as the fact and shown by the corrected scene.
    Met,
    /// Read as the fact, but the answer reports it unmet.
    Unmet,
    /// Read as the fact, and the answer asks a question about it before applying it.
    Asked,
    /// Read, but as something else as well as (or instead of) the fact.
    Misread,
    /// Not read at all, or read as nothing.
    NotUnderstood,
}

impl Outcome {
    pub fn word(self) -> &'static str {
        match self {
            Outcome::Met => "met",
            Outcome::Unmet => "UNMET",
            Outcome::Asked => "asked",
            Outcome::Misread => "MISREAD",
            Outcome::NotUnderstood => "NOT UNDERSTOOD",
        }
    }
}

/// One note of a trial.
#[derive(Clone, Debug, Serialize)]
pub struct NoteRecord {
    pub kind: &'static str,
    pub utterance: String,
    pub focus: Option<(u32, u32)>,
    pub outcome: Outcome,
    /// What the parser read, or why the note failed.
    pub detail: String,
    /// Pixels this note turned from wrong to right, and from right to wrong (against the state before it).
    pub wrong_to_right: u64,
    pub right_to_wrong: u64,
    /// Wall-clock milliseconds of the turn's solve.
    pub millis: f64,
    /// Answers the operator gave to the note's question (pointing at a candidate that is not of the class, or at a thing the robot could not find and naming it).
    pub answers: usize,
}

/// One scene's trial.
#[derive(Clone, Debug, Serialize)]
pub struct SceneTrial {
    pub name: String,
    pub seed: u64,
    /// The classifier alone (its object figure over its label map's regions).
    pub classifier: Scores,
    /// Step 0 is the no-note joint solve; step k the scene after note k.
    pub steps: Vec<Scores>,
    pub notes: Vec<NoteRecord>,
    /// Pixels all notes together turned wrong->right and right->wrong against the no-note solve.
    pub wrong_to_right: u64,
    pub right_to_wrong: u64,
}

impl SceneTrial {
    /// The last step against the no-note solve.
    pub fn gain(&self) -> Scores {
        match (self.steps.last(), self.steps.first()) {
            (Some(last), Some(first)) => last.minus(first),
            _ => Scores::default(),
        }
    }

    /// Step `k` (clamped to the last) against the no-note solve.
    pub fn gain_after(&self, k: usize) -> Scores {
        let last = self.steps.len().saturating_sub(1);
        self.steps[k.min(last)].minus(&self.steps[0])
    }
}

/// The fixed parts every scene of a trial shares.
pub struct TrialContext<'a> {
    pub taxonomy: &'a Taxonomy,
    pub classifier: &'a Classifier,
    pub settings: &'a CorrectionSettings,
    pub phrasings: &'a Phrasings,
    /// Notes per scene.
    pub notes: usize,
}

/// Renders trial scene `seed` (room type cycling with `index`).
pub fn render_trial_scene(
    taxonomy: &Taxonomy,
    seed: u64,
    index: usize,
) -> Result<DemoScene, TrialError> {
    let request = SceneRequest::new(ROOM_TYPES[index % ROOM_TYPES.len()], seed);
    let rendered = render_scene(taxonomy, &request).map_err(|error| TrialError::Render {
        seed,
        message: error.to_string(),
    })?;
    Ok(DemoScene::from_rendered(rendered))
}

/// The state the operator looks at.
struct State {
    labels: Vec<u16>,
    scores: Scores,
    matched: Vec<bool>,
    objects: Vec<crate::evaluation::PredictedObject>,
    room: RoomId,
}

fn state_of(
    truth: &DemoScene,
    scene: &crate::scene::Scene,
    correction: &Correction,
    class_count: usize,
) -> Result<State, TrialError> {
    let labels = label_map(scene, &correction.graph.segment_labels).values;
    let score = score_labels(truth, &labels, class_count)
        .map_err(|e| TrialError::Scoring(e.to_string()))?;
    let objects = objects_from_graph(scene, &correction.graph);
    let tally = object_tally(truth, &objects);
    Ok(State {
        scores: Scores {
            pixel: score.pixel_accuracy,
            mean_iou: score.mean_iou,
            object: tally.f1(),
            object_recall: tally.recall(),
            object_seen: object_tally_sized(truth, &objects, NOTICED).f1(),
        },
        matched: matched_objects(truth, &objects),
        labels,
        objects,
        room: correction.graph.room,
    })
}

/// Pixels turned wrong->right and right->wrong between two label maps, against the truth.
fn flips(truth: &[u16], before: &[u16], after: &[u16]) -> (u64, u64) {
    let mut gained = 0;
    let mut lost = 0;
    for ((&t, &b), &a) in truth.iter().zip(before).zip(after) {
        if t == UNLABELLED || a == b {
            continue;
        }
        if a == t {
            gained += 1;
        } else if b == t {
            lost += 1;
        }
    }
    (gained, lost)
}

/// One scene's trial: render, solve with no note, then up to `context.notes` notes.
pub fn run_scene(
    context: &TrialContext<'_>,
    seed: u64,
    index: usize,
) -> Result<SceneTrial, TrialError> {
    let taxonomy = context.taxonomy;
    let truth = render_trial_scene(taxonomy, seed, index)?;
    let prepared = prepare_loaded(truth.clone(), context.classifier)?;
    let class_count = taxonomy.class_count();
    let classifier_map = label_map(&prepared.scene, &prepared.classifier_labels).values;
    let classifier_score = score_labels(&truth, &classifier_map, class_count)
        .map_err(|e| TrialError::Scoring(e.to_string()))?;
    let classifier_objects = objects_from_regions(truth.labels.width as usize, &classifier_map);
    let classifier_tally = object_tally(&truth, &classifier_objects);
    let baseline = believe_without_notes(&prepared, context.settings)?;
    let first = state_of(&truth, &prepared.scene, &baseline, class_count)?;
    let inputs = TurnInputs {
        scene: &prepared.scene,
        unaries: &prepared.unaries,
        detections: &[],
    };
    let mut steps = vec![first.scores];
    let mut notes = Vec::new();
    let mut said: Vec<Fact> = Vec::new();
    let mut previous: Option<Correction> = None;
    let mut current = first;
    let baseline_labels = current.labels.clone();
    // Every other scene describes a missed object by a relation where it can, so both ways get used.
    let prefer_relations = index % 2 == 1;
    for step in 0..context.notes {
        let shown = Shown {
            labels: &current.labels,
            objects: &current.objects,
            matched: &current.matched,
            room: current.room,
        };
        let facts = candidate_facts(&truth, taxonomy, &shown, &said, prefer_relations);
        let Some((fact, _)) = facts.into_iter().next() else {
            break;
        };
        let pick = mix64(seed.wrapping_mul(0x9E37_79B9).wrapping_add(step as u64));
        let utterance = fact.sentence(context.phrasings, taxonomy, pick);
        let focus = match fact {
            Fact::Relabel { x, y, .. } => Some(Focus::Pixel { x, y }),
            _ => None,
        };
        said.push(fact.clone());
        let parse = match context.settings.grammar.parse(&utterance, focus) {
            Ok(parse) => parse,
            Err(error) => {
                notes.push(NoteRecord {
                    kind: fact.kind(),
                    utterance,
                    focus: focus_pixel(focus),
                    outcome: Outcome::NotUnderstood,
                    detail: error.to_string(),
                    wrong_to_right: 0,
                    right_to_wrong: 0,
                    millis: 0.0,
                    answers: 0,
                });
                steps.push(current.scores);
                continue;
            }
        };
        let (correction, millis) = operator_turn(
            context,
            &inputs,
            previous.as_ref(),
            &parse.constraints,
            focus,
        )?;
        let first_new = first_of(&correction, &parse.constraints);
        let (mut outcome, mut detail) = judge(
            &fact,
            &parse.constraints,
            &correction,
            first_new,
            &truth,
            taxonomy,
        );
        let mut correction = correction;
        let mut millis = millis;
        let mut answers = 0;
        if outcome == Outcome::Asked && matches!(fact, Fact::Present { .. } | Fact::Relation { .. })
        {
            if let Some(answered) =
                answer_where(context, &truth, &inputs, &correction, first_new, &fact)?
            {
                correction = answered.correction;
                millis += answered.millis;
                answers = answered.answers;
                if answered.met {
                    outcome = Outcome::Met;
                    detail = format!("{detail}; met after {answers} answer(s)");
                }
                detail = format!("{detail}; answered {}", answered.said);
            }
        }
        if outcome == Outcome::Asked {
            if let Fact::Count { class, count } = fact {
                let answered = answer_surplus(
                    context,
                    &truth,
                    &inputs,
                    correction,
                    first_new,
                    (class, count),
                )?;
                correction = answered.correction;
                millis += answered.millis;
                answers = answered.answers;
                if answered.met {
                    outcome = Outcome::Met;
                    detail = format!("{detail}; met after {answers} answer(s)");
                }
            }
        }
        let next = state_of(&truth, &prepared.scene, &correction, class_count)?;
        let (wrong_to_right, right_to_wrong) =
            flips(&truth.labels.values, &current.labels, &next.labels);
        notes.push(NoteRecord {
            kind: fact.kind(),
            utterance,
            focus: focus_pixel(focus),
            outcome,
            detail,
            wrong_to_right,
            right_to_wrong,
            millis,
            answers,
        });
        steps.push(next.scores);
        current = next;
        previous = Some(correction);
    }
    let (wrong_to_right, right_to_wrong) =
        flips(&truth.labels.values, &baseline_labels, &current.labels);
    Ok(SceneTrial {
        name: truth.name.clone(),
        seed,
        classifier: Scores {
            pixel: classifier_score.pixel_accuracy,
            mean_iou: classifier_score.mean_iou,
            object: classifier_tally.f1(),
            object_recall: classifier_tally.recall(),
            object_seen: object_tally_sized(&truth, &classifier_objects, NOTICED).f1(),
        },
        steps,
        notes,
        wrong_to_right,
        right_to_wrong,
    })
}

/// One turn of the automatic operator and its wall-clock milliseconds. The operator states ground truth, so it
/// confirms safety-critical changes up front.
fn operator_turn(
    context: &TrialContext<'_>,
    inputs: &TurnInputs<'_>,
    previous: Option<&Correction>,
    constraints: &[Constraint],
    focus: Option<Focus>,
) -> Result<(Correction, f64), TrialError> {
    let started = Instant::now();
    let correction = correct_turn(inputs, previous, constraints, focus, true, context.settings)
        .map_err(PipelineError::from)?;
    Ok((correction, started.elapsed().as_secs_f64() * 1000.0))
}

/// The index, among the constraints in force after `correction`, of the first of the turn's `constraints`.
fn first_of(correction: &Correction, constraints: &[Constraint]) -> usize {
    correction
        .constraint_labels
        .len()
        .saturating_sub(constraints.len())
}

/// The most answers the operator gives to one note's question (our own choice).
const MOST_ANSWERS: usize = 3;

/// The operator's own words answering "which of them are not Xs?" while pointing at one.
const ANSWER: &str = "that one isn't a {class}";

/// What answering a count's question came to.
struct Answered {
    correction: Correction,
    answers: usize,
    millis: f64,
    /// The graph shows the count after the answers.
    met: bool,
    /// What the last answer said, and where it pointed.
    said: String,
}

/// Answers the question a count below what the graph shows asked: the operator looks at the candidates,
/// points at those that are mostly not `class` in the truth (the least first) and says so, one turn each,
/// up to the surplus and `MOST_ANSWERS`. Candidates are followed by hypothesis id across turns.
fn answer_surplus(
    context: &TrialContext<'_>,
    truth: &DemoScene,
    inputs: &TurnInputs<'_>,
    mut correction: Correction,
    first_new: usize,
    (class, count): (ClassId, u32),
) -> Result<Answered, TrialError> {
    let Some(question) = correction
        .questions
        .iter()
        .find(|q| q.constraint >= first_new && !q.candidates.is_empty())
        .cloned()
    else {
        return Ok(Answered {
            correction,
            answers: 0,
            millis: 0.0,
            met: false,
            said: String::new(),
        });
    };
    let width = truth.labels.width as usize;
    let shown = |c: &Correction| c.graph.objects.iter().filter(|o| o.class == class).count();
    let mut answers = 0;
    let mut millis = 0.0;
    let name = context.taxonomy.class_name(class).replace('_', " ");
    while answers < MOST_ANSWERS && shown(&correction) > count as usize {
        // The candidates still shown as the class, with the share of their pixels that truly are.
        let mut wrong: Vec<(f64, Vec<u32>)> = question
            .candidates
            .iter()
            .filter_map(|id| {
                correction
                    .graph
                    .objects
                    .iter()
                    .find(|o| o.hypothesis == *id && o.class == class)
            })
            .filter_map(|object| {
                let pixels = objects_from_members(
                    inputs.scene,
                    std::iter::once((object.class, object.members.as_slice())),
                )
                .pop()?
                .pixels;
                let right = pixels
                    .iter()
                    .filter(|&&p| truth.labels.values.get(p as usize) == Some(&class.0))
                    .count();
                let share = right as f64 / pixels.len().max(1) as f64;
                (share < 0.5).then_some((share, pixels))
            })
            .collect();
        wrong.sort_by(|a, b| a.0.total_cmp(&b.0));
        let Some((_, pixels)) = wrong.into_iter().next() else {
            break;
        };
        let Some((x, y)) = deepest_pixel(&pixels, width, |p| {
            truth.labels.values.get(p as usize) != Some(&class.0)
        }) else {
            break;
        };
        let focus = Some(Focus::Pixel { x, y });
        let utterance = ANSWER.replace("{class}", &name);
        let Ok(parse) = context.settings.grammar.parse(&utterance, focus) else {
            break;
        };
        let (answered, took) = operator_turn(
            context,
            inputs,
            Some(&correction),
            &parse.constraints,
            focus,
        )?;
        correction = answered;
        millis += took;
        answers += 1;
    }
    let met = shown(&correction) == count as usize;
    Ok(Answered {
        correction,
        answers,
        millis,
        met,
        said: String::new(),
    })
}

/// The operator's own words answering "where is it?" while pointing at the thing.
const WHERE_ANSWER: &str = "that's a {class}";

/// Answers a question asking where a thing is that nothing in the picture could stand for (a presence or a
/// placement; the question names no candidates): the operator points at the deepest pixel of the truth object
/// the fact is about (for a presence, the class's largest object) that the robot shows as something else,
/// and names it, in one turn. Met when that turn's relabel is met. `None` when no such question was asked.
fn answer_where(
    context: &TrialContext<'_>,
    truth: &DemoScene,
    inputs: &TurnInputs<'_>,
    correction: &Correction,
    first_new: usize,
    fact: &Fact,
) -> Result<Option<Answered>, TrialError> {
    if !correction
        .questions
        .iter()
        .any(|q| q.constraint >= first_new && q.candidates.is_empty())
    {
        return Ok(None);
    }
    let (class, object) = match *fact {
        Fact::Relation { class, object, .. } => (class, Some(object)),
        Fact::Present { class } => (
            class,
            truth
                .objects
                .iter()
                .filter(|o| o.class_id == class)
                .max_by_key(|o| (o.area, std::cmp::Reverse(o.id)))
                .map(|o| o.id),
        ),
        _ => return Ok(None),
    };
    let Some(instance) = object.and_then(|id| u16::try_from(id).ok()) else {
        return Ok(None);
    };
    let shown = label_map(inputs.scene, &correction.graph.segment_labels).values;
    let pixels: Vec<u32> = truth
        .instances
        .values
        .iter()
        .enumerate()
        .filter(|&(_, &v)| v == instance)
        .map(|(p, _)| p as u32)
        .collect();
    let width = truth.labels.width as usize;
    let Some((x, y)) = deepest_pixel(&pixels, width, |p| {
        shown.get(p as usize).is_some_and(|&label| label != class.0)
    }) else {
        return Ok(None);
    };
    let wrong = ClassId(shown[y as usize * width + x as usize]);
    let focus = Some(Focus::Pixel { x, y });
    let name = context.taxonomy.class_name(class).replace('_', " ");
    let utterance = WHERE_ANSWER.replace("{class}", &name);
    let Ok(parse) = context.settings.grammar.parse(&utterance, focus) else {
        return Ok(None);
    };
    let (answered, millis) =
        operator_turn(context, inputs, Some(correction), &parse.constraints, focus)?;
    let answer_first = first_of(&answered, &parse.constraints);
    let relabel = Fact::Relabel {
        class,
        wrong,
        x,
        y,
        object: u32::from(instance),
    };
    let (outcome, _) = judge(
        &relabel,
        &parse.constraints,
        &answered,
        answer_first,
        truth,
        context.taxonomy,
    );
    Ok(Some(Answered {
        correction: answered,
        answers: 1,
        millis,
        met: outcome == Outcome::Met,
        said: format!("\"{utterance}\" @{x},{y}"),
    }))
}

fn focus_pixel(focus: Option<Focus>) -> Option<(u32, u32)> {
    match focus {
        Some(Focus::Pixel { x, y }) => Some((x, y)),
        _ => None,
    }
}

/// Whether a constraint says the fact (a relation may be said from either end: "the lamp is right of the
/// plant" for a plant left of the lamp).
fn says(fact: &Fact, constraint: &Constraint) -> bool {
    match (fact, &constraint.kind) {
        (Fact::Absent { class }, ConstraintKind::Absent { class: c }) => c == class,
        (Fact::Absent { class }, ConstraintKind::Count { class: c, count }) => {
            c == class && matches!(count, Count::Exactly(0) | Count::AtMost(0))
        }
        (Fact::Present { class }, ConstraintKind::Present { class: c }) => c == class,
        // "Exactly one" says the presence only where there is one (`judge` checks that against the truth).
        (Fact::Present { class }, ConstraintKind::Count { class: c, count }) => {
            c == class && matches!(count, Count::Exactly(1) | Count::AtLeast(1))
        }
        (
            Fact::Count { class, count },
            ConstraintKind::Count {
                class: c,
                count: said,
            },
        ) => c == class && *said == Count::Exactly(*count),
        (Fact::Room { room }, ConstraintKind::RoomType { room: r }) => r == room,
        (Fact::Room { room }, ConstraintKind::Place { place, .. }) => *place == Place::Room(*room),
        (Fact::Relabel { class, wrong, .. }, ConstraintKind::Relabel { to, from, .. }) => {
            *to == Some(*class) && from.is_none_or(|f| f == *wrong)
        }
        (
            Fact::Relation {
                class,
                relation,
                landmark,
                ..
            },
            ConstraintKind::Relation {
                subject,
                relation: said,
                negated: false,
                landmarks,
            },
        ) => {
            let [other] = landmarks.as_slice() else {
                return false;
            };
            let (s, l) = (subject.class, other.class);
            let forward = s == Some(*class) && l == Some(*landmark);
            let backward = s == Some(*landmark) && l == Some(*class);
            match relation {
                FactRelation::On => {
                    forward && *said == Relation::On || backward && *said == Relation::Under
                }
                FactRelation::Under => {
                    forward && matches!(said, Relation::Under | Relation::Below)
                        || backward && matches!(said, Relation::On | Relation::Above)
                }
                FactRelation::NextTo => (forward || backward) && *said == Relation::NextTo,
                FactRelation::LeftOf => {
                    forward && *said == Relation::LeftOf || backward && *said == Relation::RightOf
                }
                FactRelation::RightOf => {
                    forward && *said == Relation::RightOf || backward && *said == Relation::LeftOf
                }
            }
        }
        _ => false,
    }
}

/// Whether a constraint denies a relation of the fact's two things that the fact's own relation excludes
/// ("the mug is on the cabinet, not under it"): true whenever the fact is, so harmless beside it.
fn denial_implied(fact: &Fact, constraint: &Constraint) -> bool {
    let (
        Fact::Relation {
            class,
            relation,
            landmark,
            ..
        },
        ConstraintKind::Relation {
            subject,
            relation: denied,
            negated: true,
            landmarks,
        },
    ) = (fact, &constraint.kind)
    else {
        return false;
    };
    let [other] = landmarks.as_slice() else {
        return false;
    };
    let stated = match relation {
        FactRelation::On => Relation::On,
        FactRelation::NextTo => Relation::NextTo,
        FactRelation::LeftOf => Relation::LeftOf,
        FactRelation::RightOf => Relation::RightOf,
        FactRelation::Under => Relation::Under,
    };
    subject.class == Some(*class) && other.class == Some(*landmark) && stated.excludes(*denied)
}

/// Whether a constraint that does not say the fact is still true of the scene and harmless (a presence,
/// absence, count or room type that the ground truth bears out).
fn true_of_scene(constraint: &Constraint, truth: &DemoScene, taxonomy: &Taxonomy) -> bool {
    let count_of =
        |class: ClassId| truth.objects.iter().filter(|o| o.class_id == class).count() as u32;
    let has = |class: ClassId| truth.labels.values.contains(&class.0);
    match &constraint.kind {
        ConstraintKind::Present { class } => has(*class),
        ConstraintKind::Absent { class } => !has(*class),
        ConstraintKind::Count { class, count } => {
            let n = count_of(*class);
            match count {
                Count::Exactly(k) => *k == n,
                Count::AtLeast(k) => n >= *k,
                Count::AtMost(k) => n <= *k,
            }
        }
        ConstraintKind::RoomType { room } => {
            taxonomy.room_by_name(&truth.metadata.room).map(|r| r.id) == Some(*room)
        }
        _ => false,
    }
}

/// Judges a note: was it read as the fact, and does the corrected scene show it?
fn judge(
    fact: &Fact,
    constraints: &[Constraint],
    correction: &Correction,
    first_new: usize,
    truth: &DemoScene,
    taxonomy: &Taxonomy,
) -> (Outcome, String) {
    let glosses = constraints
        .iter()
        .map(|c| c.gloss.clone())
        .collect::<Vec<_>>()
        .join("; ");
    if constraints.is_empty() {
        return (Outcome::NotUnderstood, "read as nothing".to_string());
    }
    // A constraint counts as saying the fact only when it is also true of the scene ("exactly one" for a
    // class with two objects is not the presence the operator stated).
    let counts = |c: &Constraint| {
        says(fact, c)
            && (!matches!(c.kind, ConstraintKind::Count { .. })
                || matches!(fact, Fact::Count { .. })
                || true_of_scene(c, truth, taxonomy))
    };
    let said = constraints.iter().any(counts);
    let stray = constraints
        .iter()
        .any(|c| !counts(c) && !true_of_scene(c, truth, taxonomy) && !denial_implied(fact, c));
    if !said || stray {
        return (Outcome::Misread, format!("read as: {glosses}"));
    }
    if let Some(question) = correction
        .questions
        .iter()
        .find(|q| q.constraint >= first_new)
    {
        return (
            Outcome::Asked,
            format!("{glosses}; asked: {}", question.text),
        );
    }
    if let Some(unmet) = correction.unmet.iter().find(|u| u.constraint >= first_new) {
        return (
            Outcome::Unmet,
            format!("{glosses}; unmet: {}", unmet.reason),
        );
    }
    // A constraint whose referents could not be resolved was never carried out.
    if let Some(issue) = correction
        .issues
        .iter()
        .find(|issue| issue.constraint() >= first_new)
    {
        return (Outcome::Unmet, format!("{glosses}; unmet: {issue}"));
    }
    (Outcome::Met, glosses)
}

/// The figures a trial is judged by.
#[derive(Clone, Debug, Default, Serialize)]
pub struct TrialSummary {
    pub scenes: usize,
    /// Mean gain against the no-note solve after one note (over the scenes with a note) and after every note
    /// (over every scene; a scene with nothing to say gains nothing), in points.
    pub gain_one: Scores,
    pub gain_all: Scores,
    /// Mean of the no-note solve against the classifier alone, in points.
    pub solve_over_classifier: Scores,
    /// Scenes worse than the no-note solve on some measure after every note.
    pub worse: Vec<String>,
    pub notes: usize,
    /// Notes not met: unmet, asked, misread or not understood.
    pub failed: usize,
    /// Answers the operator gave to questions, over all notes.
    pub answers: usize,
    pub wrong_to_right: u64,
    pub right_to_wrong: u64,
    pub median_millis: f64,
    pub max_millis: f64,
}

/// Sums up scene trials.
pub fn summarise(trials: &[SceneTrial]) -> TrialSummary {
    let count = trials.len().max(1) as f64;
    let mean = |pick: &dyn Fn(&SceneTrial) -> Scores| {
        let mut total = Scores::default();
        for trial in trials {
            let s = pick(trial);
            total.pixel += 100.0 * s.pixel / count;
            total.mean_iou += 100.0 * s.mean_iou / count;
            total.object += 100.0 * s.object / count;
            total.object_recall += 100.0 * s.object_recall / count;
            total.object_seen += 100.0 * s.object_seen / count;
        }
        total
    };
    let notes: Vec<&NoteRecord> = trials.iter().flat_map(|t| &t.notes).collect();
    let mut times: Vec<f64> = notes
        .iter()
        .map(|n| n.millis)
        .filter(|&m| m > 0.0)
        .collect();
    times.sort_by(f64::total_cmp);
    TrialSummary {
        scenes: trials.len(),
        gain_one: {
            // Over the scenes where the operator said at least one note.
            let spoken: Vec<&SceneTrial> = trials.iter().filter(|t| !t.notes.is_empty()).collect();
            let n = spoken.len().max(1) as f64;
            let mut total = Scores::default();
            for trial in spoken {
                let s = trial.gain_after(1);
                total.pixel += 100.0 * s.pixel / n;
                total.mean_iou += 100.0 * s.mean_iou / n;
                total.object += 100.0 * s.object / n;
                total.object_recall += 100.0 * s.object_recall / n;
                total.object_seen += 100.0 * s.object_seen / n;
            }
            total
        },
        gain_all: mean(&|t| t.gain()),
        solve_over_classifier: mean(&|t| t.steps[0].minus(&t.classifier)),
        worse: trials
            .iter()
            .filter(|t| {
                let g = t.gain();
                g.pixel < -1e-9
                    || g.mean_iou < -1e-9
                    || g.object < -1e-9
                    || g.object_recall < -1e-9
                    || g.object_seen < -1e-9
            })
            .map(|t| t.name.clone())
            .collect(),
        notes: notes.len(),
        failed: notes.iter().filter(|n| n.outcome != Outcome::Met).count(),
        answers: notes.iter().map(|n| n.answers).sum(),
        wrong_to_right: trials.iter().map(|t| t.wrong_to_right).sum(),
        right_to_wrong: trials.iter().map(|t| t.right_to_wrong).sum(),
        median_millis: times.get(times.len() / 2).copied().unwrap_or(0.0),
        max_millis: times.last().copied().unwrap_or(0.0),
    }
}
