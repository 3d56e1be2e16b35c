//! End-to-end turns of `correct` on a small hand-built scene of the Juniper Lane flat's kitchen.
//!
//! Owns: checks of hypotheses, grounding, the energy, the solver and the scene graph working together:
//! counts switching on a second-ranked object, a relabel held back for safety until confirmed, a clarifying
//! question for an ambiguous reference, typed issues for bad references, contradictions reported, and
//! byte-identical output for identical input.
//! Must not: depend on other stages' unfinished parts; the scene and unaries are built by hand.

use crate::common;

use common::grid_scene::{grid_scene, grid_unaries, Cell};
use common::turns::{constraint, turn, Stage};
use sayso_core::energy::build::{EnergyWeights, RoomClassPrior};
use sayso_core::grounding::{GroundingContext, GroundingIssue, KnownObject};
use sayso_core::hypotheses::ProposalOptions;
use sayso_core::ids::{ClassId, ObjectId};
use sayso_core::language::constraint::{
    Constraint, ConstraintKind, Count, Deixis, Focus, ImageRegion, Referent, Span,
};
use sayso_core::scene::Scene;
use sayso_core::scenegraph::changes::{ChangeKind, ChangeStatus};
use sayso_core::scenegraph::instances::InstanceCuts;
use sayso_core::taxonomy::Taxonomy;
use sayso_core::turn::solve::{correct, Correction, SolveRequest};
use sayso_perception::unaries::Unaries;
use sayso_solver::joint::JointOptions;

const COLUMNS: u32 = 8;
const ROWS: u32 = 6;

struct Kitchen {
    taxonomy: Taxonomy,
    scene: Scene,
    unaries: Unaries,
}

fn class(taxonomy: &Taxonomy, name: &str) -> u16 {
    taxonomy.class_by_name(name).unwrap().id.0
}

/// The kitchen at Juniper Lane: wall above, a table with a blue mug and a white mug (which the classifier
/// takes for a bowl) beside a pot plant, and a folded grey towel on the floor that it takes for a cat.
fn kitchen() -> Kitchen {
    let taxonomy = Taxonomy::embedded();
    let c = |name| class(&taxonomy, name);
    let mut cells = Vec::new();
    let mut region = Vec::new();
    for row in 0..ROWS {
        for column in 0..COLUMNS {
            let (cell, r) = match (column, row) {
                (_, 0..=1) => (
                    Cell {
                        colour: [220, 210, 190],
                        scores: vec![(c("wall"), 0.9)],
                    },
                    0,
                ),
                (2, 2) => (
                    Cell {
                        colour: [40, 70, 180],
                        scores: vec![(c("mug"), 0.7), (c("bowl"), 0.2)],
                    },
                    3,
                ),
                (6, 2) => (
                    Cell {
                        colour: [240, 240, 235],
                        scores: vec![(c("bowl"), 0.55), (c("mug"), 0.35)],
                    },
                    4,
                ),
                (7, 2) => (
                    Cell {
                        colour: [40, 150, 60],
                        scores: vec![(c("plant"), 0.8)],
                    },
                    6,
                ),
                (_, 2) => (
                    Cell {
                        colour: [220, 210, 190],
                        scores: vec![(c("wall"), 0.9)],
                    },
                    0,
                ),
                (2..=6, 3) => (
                    Cell {
                        colour: [150, 100, 60],
                        scores: vec![(c("table"), 0.85)],
                    },
                    2,
                ),
                (0..=1, 4) => (
                    Cell {
                        colour: [130, 130, 130],
                        scores: vec![(c("cat"), 0.6), (c("towel"), 0.3)],
                    },
                    5,
                ),
                _ => (
                    Cell {
                        colour: [110, 80, 50],
                        scores: vec![(c("floor"), 0.9)],
                    },
                    1,
                ),
            };
            cells.push(cell);
            region.push(r);
        }
    }
    let scene = grid_scene("juniper-lane-kitchen", COLUMNS, ROWS, 10, &cells, &region);
    let unaries = grid_unaries(&cells, taxonomy.class_count());
    Kitchen {
        taxonomy,
        scene,
        unaries,
    }
}

fn run(
    kitchen: &Kitchen,
    previous: Option<&Correction>,
    constraints: &[Constraint],
    context: &GroundingContext,
    confirm_safety: bool,
) -> Correction {
    let cuts = InstanceCuts::embedded(&kitchen.taxonomy).unwrap();
    let stage = Stage {
        scene: &kitchen.scene,
        unaries: &kitchen.unaries,
        taxonomy: &kitchen.taxonomy,
        cuts: &cuts,
    };
    turn(&stage, previous, constraints, context, confirm_safety)
}

fn objects_of(correction: &Correction, class: u16) -> usize {
    correction
        .graph
        .objects
        .iter()
        .filter(|o| o.class.0 == class)
        .count()
}

#[test]
fn the_committed_prior_is_counted_from_training_renders() {
    // models/room_class_prior.json comes from `sayso tune` (models/README.md): its probabilities must be the
    // documented smoothing of the counts stored beside them, over training renders only.
    let taxonomy = Taxonomy::embedded();
    let prior = RoomClassPrior::embedded().unwrap();
    assert_eq!(prior.schema, sayso_core::energy::build::PRIOR_SCHEMA);
    assert_eq!(prior.room_count, taxonomy.rooms().len());
    assert_eq!(prior.class_count, taxonomy.class_count());
    let counts = prior
        .counts
        .as_ref()
        .expect("the committed prior carries its counts");
    assert_eq!(counts.scenes.len(), prior.room_count);
    assert!(counts.scenes.iter().all(|&n| n > 0), "{:?}", counts.scenes);
    for room in 0..prior.room_count {
        for class in 0..prior.class_count {
            let seen = counts.present[room * prior.class_count + class];
            assert!(seen <= counts.scenes[room]);
            let laplace = (seen as f64 + 1.0) / (counts.scenes[room] as f64 + 2.0);
            assert!((prior.present[room * prior.class_count + class] - laplace).abs() < 1e-12);
        }
        let add_one = (counts.scenes[room] as f64 + 1.0)
            / (counts.scene_count() as f64 + prior.room_count as f64);
        assert!((prior.room_prior[room] - add_one).abs() < 1e-12);
    }
    for a in 0..prior.class_count {
        for b in 0..prior.class_count {
            let pair = counts.co_occurrence[a * prior.class_count + b];
            assert_eq!(pair, counts.co_occurrence[b * prior.class_count + a]);
            assert!(pair <= counts.co_occurrence[a * prior.class_count + a]);
        }
    }
    assert!(prior.source.contains("seeds 100000.."), "{}", prior.source);
    assert_ne!(prior, RoomClassPrior::from_taxonomy(&taxonomy));
}

#[test]
fn a_count_switches_on_the_mug_ranked_second() {
    let kitchen = kitchen();
    let mug = class(&kitchen.taxonomy, "mug");
    let before = run(&kitchen, None, &[], &GroundingContext::default(), false);
    assert_eq!(objects_of(&before, mug), 1, "{:?}", before.graph.objects);
    let two_mugs = [constraint(
        ConstraintKind::Count {
            class: ClassId(mug),
            count: Count::Exactly(2),
        },
        0.95,
        "two mugs",
    )];
    let after = run(
        &kitchen,
        Some(&before),
        &two_mugs,
        &GroundingContext::default(),
        false,
    );
    assert_eq!(objects_of(&after, mug), 2, "{:?}", after.graph.objects);
    let white_mug_segment = 2 * COLUMNS as usize + 6;
    assert_eq!(after.graph.segment_labels[white_mug_segment].0, mug);
    let relabelled = after.changes.iter().find(|change| {
        matches!(change.kind, ChangeKind::SegmentRelabelled { segment, .. } if segment.index() == white_mug_segment)
    });
    let relabelled = relabelled.expect("the white mug's segment is in the change list");
    assert_eq!(relabelled.causes[0].constraint, 0);
    assert_eq!(relabelled.status, ChangeStatus::Applied);
    assert!(after.unmet.is_empty(), "{:?}", after.unmet);
    assert!(after.solution.lower_bound <= after.solution.energy);
}

#[test]
fn renaming_a_cat_waits_for_confirmation() {
    let kitchen = kitchen();
    let (cat, towel) = (
        class(&kitchen.taxonomy, "cat"),
        class(&kitchen.taxonomy, "towel"),
    );
    let target = Referent {
        deixis: Some(Deixis::Focus),
        ..Referent::class(ClassId(cat), Span::new(0, 4))
    };
    let relabel = [constraint(
        ConstraintKind::Relabel {
            target: Referent {
                class: None,
                ..target
            },
            from: Some(ClassId(cat)),
            to: Some(ClassId(towel)),
        },
        0.95,
        "that is a towel, not a cat",
    )];
    let context = GroundingContext {
        focus: Some(Focus::Pixel { x: 5, y: 45 }),
        ..Default::default()
    };
    let cat_segment = 4 * COLUMNS as usize;

    let held = run(&kitchen, None, &relabel, &context, false);
    assert_eq!(
        held.graph.segment_labels[cat_segment].0, cat,
        "held back without confirmation"
    );
    let pending = held
        .changes
        .iter()
        .filter(|c| c.status == ChangeStatus::Pending)
        .count();
    assert!(pending >= 1, "{:?}", held.changes);
    assert!(held.changes.iter().all(
        |c| c.status != ChangeStatus::Pending || c.warning.as_deref().unwrap().contains("cat")
    ));

    let confirmed = run(&kitchen, None, &relabel, &context, true);
    assert_eq!(confirmed.graph.segment_labels[cat_segment].0, towel);
    assert_eq!(confirmed.graph.segment_labels[cat_segment + 1].0, towel);
    assert!(confirmed
        .changes
        .iter()
        .all(|c| c.status == ChangeStatus::Applied));
    assert_eq!(objects_of(&confirmed, cat), 0);
    assert_eq!(objects_of(&confirmed, towel), 1);
}

#[test]
fn an_ambiguous_mug_gets_a_question_not_a_guess() {
    let kitchen = kitchen();
    let mug = class(&kitchen.taxonomy, "mug");
    let bowl = class(&kitchen.taxonomy, "bowl");
    let two_mugs = [constraint(
        ConstraintKind::Count {
            class: ClassId(mug),
            count: Count::Exactly(2),
        },
        0.95,
        "two mugs",
    )];
    let first = run(
        &kitchen,
        None,
        &two_mugs,
        &GroundingContext::default(),
        false,
    );
    assert_eq!(objects_of(&first, mug), 2);
    let relabel = [constraint(
        ConstraintKind::Relabel {
            target: Referent::class(ClassId(mug), Span::new(4, 7)),
            from: Some(ClassId(mug)),
            to: Some(ClassId(bowl)),
        },
        0.95,
        "the mug is a bowl",
    )];
    let second = run(
        &kitchen,
        Some(&first),
        &relabel,
        &GroundingContext::default(),
        false,
    );
    assert_eq!(second.questions.len(), 1);
    let question = &second.questions[0].text;
    assert_eq!(
        question,
        "which of the two mugs: the one on the table or the one left of the plant?"
    );
    assert_eq!(objects_of(&second, mug), 2, "nothing was guessed");
}

#[test]
fn bad_references_are_typed_issues_and_nothing_panics() {
    let kitchen = kitchen();
    let focus_thing = Referent {
        class: None,
        deixis: Some(Deixis::Focus),
        ..Referent::class(ClassId(0), Span::new(0, 4))
    };
    let relabel = |to: u16| ConstraintKind::Relabel {
        target: focus_thing.clone(),
        from: None,
        to: Some(ClassId(to)),
    };
    let outside = GroundingContext {
        focus: Some(Focus::Pixel { x: 500, y: 5 }),
        ..Default::default()
    };
    let result = run(
        &kitchen,
        None,
        &[constraint(relabel(3), 0.9, "that is a door")],
        &outside,
        false,
    );
    assert!(
        matches!(
            result.issues[..],
            [GroundingIssue::FocusOutside { x: 500, .. }]
        ),
        "{:?}",
        result.issues
    );

    let unknown = GroundingContext {
        focus: Some(Focus::Object {
            id: ObjectId(12345),
        }),
        objects: vec![KnownObject {
            id: ObjectId(1),
            hypothesis: sayso_core::ids::HypothesisId(1),
            class: None,
            members: Vec::new(),
        }],
        ..Default::default()
    };
    let result = run(
        &kitchen,
        None,
        &[constraint(relabel(3), 0.9, "that is a door")],
        &unknown,
        false,
    );
    assert!(matches!(
        result.issues[..],
        [GroundingIssue::UnknownObject {
            id: ObjectId(12345),
            ..
        }]
    ));

    let result = run(
        &kitchen,
        None,
        &[constraint(
            ConstraintKind::Present { class: ClassId(99) },
            0.9,
            "a thing",
        )],
        &GroundingContext::default(),
        false,
    );
    assert!(matches!(
        result.issues[..],
        [GroundingIssue::UnknownClass {
            class: ClassId(99),
            ..
        }]
    ));
    let no_focus = run(
        &kitchen,
        None,
        &[constraint(relabel(3), 0.9, "that is a door")],
        &GroundingContext::default(),
        false,
    );
    assert!(matches!(
        no_focus.issues[..],
        [GroundingIssue::NoFocus { .. }]
    ));
}

#[test]
fn contradictory_hard_constraints_are_reported() {
    let kitchen = kitchen();
    let mug = ClassId(class(&kitchen.taxonomy, "mug"));
    let constraints = [
        constraint(
            ConstraintKind::Count {
                class: mug,
                count: Count::Exactly(2),
            },
            0.95,
            "two mugs",
        ),
        constraint(ConstraintKind::Absent { class: mug }, 0.95, "no mugs"),
    ];
    let result = run(
        &kitchen,
        None,
        &constraints,
        &GroundingContext::default(),
        false,
    );
    assert!(!result.unmet.is_empty());
    assert!(
        result.unmet.iter().any(|u| u.contradictory),
        "{:?}",
        result.unmet
    );
}

#[test]
fn the_same_turn_gives_the_same_bytes() {
    let kitchen = kitchen();
    let mug = ClassId(class(&kitchen.taxonomy, "mug"));
    let constraints = [constraint(
        ConstraintKind::Count {
            class: mug,
            count: Count::AtLeast(2),
        },
        0.7,
        "at least two mugs",
    )];
    let first = run(
        &kitchen,
        None,
        &constraints,
        &GroundingContext::default(),
        false,
    );
    let second = run(
        &kitchen,
        None,
        &constraints,
        &GroundingContext::default(),
        false,
    );
    assert_eq!(
        serde_json::to_vec(&first).unwrap(),
        serde_json::to_vec(&second).unwrap()
    );
    let map = sayso_core::scenegraph::label_map(&kitchen.scene, &first.graph.segment_labels);
    assert_eq!(map.values.len(), 80 * 60);
    let png = sayso_core::raster::encode_index_png(&map).unwrap();
    let decoded =
        sayso_core::raster::decode_index_png(&png, std::path::Path::new("map.png"), 1 << 20)
            .unwrap();
    assert_eq!(decoded.values, map.values);
    for object in &first.graph.objects {
        let mask = object.mask.decode();
        let inside = mask.iter().filter(|&&m| m).count();
        assert_eq!(inside, object.members.len() * 100);
    }
}

#[test]
fn nan_unaries_and_empty_energies_are_typed_errors() {
    let mut kitchen = kitchen();
    kitchen.unaries.log_probs[[3, 2]] = f32::NAN;
    let prior = RoomClassPrior::embedded().unwrap();
    let request = SolveRequest {
        scene: &kitchen.scene,
        unaries: &kitchen.unaries,
        taxonomy: &kitchen.taxonomy,
        detections: &[],
        previous: None,
        constraints: &[],
        context: &GroundingContext::default(),
        confirm_safety: false,
        prior: &prior,
        weights: &EnergyWeights::default(),
        proposals: &ProposalOptions::default(),
        options: &JointOptions::default(),
        instance_cuts: &InstanceCuts::embedded(&kitchen.taxonomy).unwrap(),
    };
    let error = correct(&request).unwrap_err().to_string();
    assert!(error.contains("segment 3 class 2"), "{error}");

    let empty: sayso_core::energy::JointEnergy = serde_json::from_str(
        r#"{"schema":1,"label_count":2,"fine_count":0,"node_count":0,"unary":[],"edges":[],"hypotheses":[],
            "room_count":1,"room_cost":[0.0],"presence_cost":[0.0,0.0]}"#,
    )
    .unwrap();
    assert!(matches!(
        sayso_solver::joint::solve_joint(&empty, None, &JointOptions::default()),
        Err(sayso_solver::joint::JointError::Energy(
            sayso_core::energy::EnergyError::NoSegments
        ))
    ));
}

#[test]
fn a_superseded_constraint_is_never_named_as_a_cause() {
    // Turn 1 says kitchen, turn 2 changes its mind: bathroom. The room change of turn 2 is moved by the
    // room factor alone (no segment or hypothesis factor names it), so its causes come from the fallback:
    // only constraints in force, never the retired "kitchen".
    let kitchen = kitchen();
    let room = |name: &str| kitchen.taxonomy.room_by_name(name).unwrap().id;
    let say_kitchen = [constraint(
        ConstraintKind::RoomType {
            room: room("kitchen"),
        },
        0.95,
        "this is the kitchen",
    )];
    let first = run(
        &kitchen,
        None,
        &say_kitchen,
        &GroundingContext::default(),
        false,
    );
    assert_eq!(first.graph.room, room("kitchen"));
    let say_bathroom = [constraint(
        ConstraintKind::RoomType {
            room: room("bathroom"),
        },
        0.95,
        "no, the bathroom",
    )];
    let second = run(
        &kitchen,
        Some(&first),
        &say_bathroom,
        &GroundingContext::default(),
        false,
    );
    assert_eq!(second.graph.room, room("bathroom"));
    let room_change = second
        .changes
        .iter()
        .find(|change| matches!(change.kind, ChangeKind::RoomChanged { .. }))
        .expect("the room change is listed");
    let causes: Vec<usize> = room_change.causes.iter().map(|c| c.constraint).collect();
    assert_eq!(causes, vec![1], "{:?}", room_change.causes);
    assert!(second
        .changes
        .iter()
        .flat_map(|change| &change.causes)
        .all(|cause| cause.constraint != 0 && cause.gloss != "this is the kitchen"));
}

#[test]
fn a_side_picks_among_things_and_is_read_relatively_when_nothing_lies_there() {
    // Two mugs: column 2 (left third) and column 6 (right third); one plant, at column 7 (right third).
    let kitchen = kitchen();
    let (mug, bowl, plant, vase) = (
        class(&kitchen.taxonomy, "mug"),
        class(&kitchen.taxonomy, "bowl"),
        class(&kitchen.taxonomy, "plant"),
        class(&kitchen.taxonomy, "vase"),
    );
    let two_mugs = [constraint(
        ConstraintKind::Count {
            class: ClassId(mug),
            count: Count::Exactly(2),
        },
        0.95,
        "two mugs",
    )];
    let first = run(
        &kitchen,
        None,
        &two_mugs,
        &GroundingContext::default(),
        false,
    );
    assert_eq!(objects_of(&first, mug), 2);
    let relabel_at = |from: u16, to: u16, region: ImageRegion, gloss: &str| {
        [constraint(
            ConstraintKind::Relabel {
                target: Referent {
                    region: Some(region),
                    ..Referent::class(ClassId(from), Span::new(0, 3))
                },
                from: Some(ClassId(from)),
                to: Some(ClassId(to)),
            },
            0.95,
            gloss,
        )]
    };
    let (left_mug, right_mug) = (2 * COLUMNS as usize + 2, 2 * COLUMNS as usize + 6);
    let right = run(
        &kitchen,
        Some(&first),
        &relabel_at(
            mug,
            bowl,
            ImageRegion::Right,
            "the mug on the right is a bowl",
        ),
        &GroundingContext::default(),
        false,
    );
    assert!(right.questions.is_empty(), "{:?}", right.questions);
    assert_eq!(right.graph.segment_labels[right_mug].0, bowl);
    assert_eq!(right.graph.segment_labels[left_mug].0, mug);
    let left = run(
        &kitchen,
        Some(&first),
        &relabel_at(
            mug,
            bowl,
            ImageRegion::Left,
            "the mug on the left is a bowl",
        ),
        &GroundingContext::default(),
        false,
    );
    assert!(left.questions.is_empty(), "{:?}", left.questions);
    assert_eq!(left.graph.segment_labels[left_mug].0, bowl);
    assert_eq!(left.graph.segment_labels[right_mug].0, mug);
    // No plant lies in the left third: "the plant on the left" is the leftmost plant, the only one.
    let plant_segment = 2 * COLUMNS as usize + 7;
    let relative = run(
        &kitchen,
        Some(&first),
        &relabel_at(
            plant,
            vase,
            ImageRegion::Left,
            "the plant on the left is a vase",
        ),
        &GroundingContext::default(),
        false,
    );
    assert!(relative.issues.is_empty(), "{:?}", relative.issues);
    assert_eq!(relative.graph.segment_labels[plant_segment].0, vase);
}
