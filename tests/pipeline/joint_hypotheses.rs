//! Object hypotheses on a hand-built scene: stable ids, detections taking their segments, top-k proposals,
//! wider proposals for named classes, one object per segment within a class, and typed errors for inputs
//! that do not fit.
//!
//! Owns: checks of `sayso_core::hypotheses` through its public API.
//! Must not: depend on the solver; it only inspects the hypothesis list.

use crate::common;

use common::grid_scene::{grid_scene, grid_unaries, Cell};
use sayso_core::hypotheses::{
    build_hypotheses, hypothesis_id, propose_named, Detection, HypothesisError, HypothesisOrigin,
    ProposalOptions,
};
use sayso_core::ids::{ClassId, SegmentId};
use sayso_core::scene::BoundingBox;

/// A 4 x 2 strip of the Juniper Lane hallway: shoes (ranked second to bags) on the left, a rug on the right.
fn hallway() -> (sayso_core::scene::Scene, sayso_perception::unaries::Unaries) {
    let (shoe, bag, rug) = (31u16, 30u16, 6u16);
    let mut cells = Vec::new();
    for index in 0..8 {
        let scores = if index % 4 < 2 {
            vec![(bag, 0.5), (shoe, 0.4)]
        } else {
            vec![(rug, 0.8)]
        };
        cells.push(Cell {
            colour: [90, 60, 40],
            scores,
        });
    }
    let region = [0, 0, 1, 1, 2, 2, 3, 3];
    let scene = grid_scene("juniper-lane-hallway", 4, 2, 10, &cells, &region);
    let unaries = grid_unaries(&cells, 41);
    (scene, unaries)
}

#[test]
fn second_ranked_classes_get_hypotheses_and_each_class_keeps_segments_apart() {
    let (scene, unaries) = hallway();
    let hypotheses = build_hypotheses(&scene, &unaries, &[], &ProposalOptions::default()).unwrap();
    assert!(
        hypotheses.iter().any(|h| h.class == ClassId(31)),
        "shoe, ranked second, is proposed"
    );
    for (i, a) in hypotheses.iter().enumerate() {
        for b in &hypotheses[i + 1..] {
            if a.class == b.class {
                assert!(
                    a.members.iter().all(|s| !b.members.contains(s)),
                    "{a:?} overlaps {b:?}"
                );
            }
        }
        assert_eq!(a.id, hypothesis_id(a.class, &a.members));
    }
}

#[test]
fn ids_do_not_depend_on_the_order_detections_arrive_in() {
    let (scene, unaries) = hallway();
    let detection = |x0, class| Detection {
        class: ClassId(class),
        bbox: BoundingBox {
            x0,
            y0: 0,
            x1: x0 + 10,
            y1: 20,
        },
        score: 0.9,
        mask: None,
    };
    let forward = [detection(0, 31), detection(30, 3)];
    let backward = [detection(30, 3), detection(0, 31)];
    let one = build_hypotheses(&scene, &unaries, &forward, &ProposalOptions::default()).unwrap();
    let two = build_hypotheses(&scene, &unaries, &backward, &ProposalOptions::default()).unwrap();
    let ids =
        |list: &[sayso_core::hypotheses::Hypothesis]| list.iter().map(|h| h.id).collect::<Vec<_>>();
    assert_eq!(ids(&one), ids(&two));
    let from_detection = one
        .iter()
        .find(|h| h.class == ClassId(31) && matches!(h.origin, HypothesisOrigin::Detection { .. }))
        .expect("the shoe detection is a hypothesis");
    assert_eq!(from_detection.members, vec![SegmentId(0), SegmentId(4)]);
}

#[test]
fn inputs_that_do_not_fit_are_typed_errors() {
    let (scene, unaries) = hallway();
    let bad_class = Detection {
        class: ClassId(200),
        bbox: BoundingBox::default(),
        score: 0.5,
        mask: None,
    };
    assert!(matches!(
        build_hypotheses(&scene, &unaries, &[bad_class], &ProposalOptions::default()),
        Err(HypothesisError::UnknownClass { index: 0, .. })
    ));
    let bad_score = Detection {
        class: ClassId(3),
        bbox: BoundingBox::default(),
        score: f32::NAN,
        mask: None,
    };
    assert!(matches!(
        build_hypotheses(&scene, &unaries, &[bad_score], &ProposalOptions::default()),
        Err(HypothesisError::BadScore { .. })
    ));
    let (_, fewer) = {
        let cells = vec![
            Cell {
                colour: [0, 0, 0],
                scores: vec![(0, 0.9)]
            };
            3
        ];
        ((), grid_unaries(&cells, 41))
    };
    assert!(matches!(
        build_hypotheses(&scene, &fewer, &[], &ProposalOptions::default()),
        Err(HypothesisError::SegmentCountMismatch {
            unaries: 3,
            segments: 8
        })
    ));
}

/// A 4 x 2 strip of the Juniper Lane study: a desk ranked third (after chair and table) on the left two
/// columns and fourth on the right two, where a chair is ranked first everywhere and the desk second in
/// one right-hand cell only.
fn study() -> (sayso_core::scene::Scene, sayso_perception::unaries::Unaries) {
    let (table, chair, desk, rug) = (7u16, 8u16, 14u16, 6u16);
    let mut cells = Vec::new();
    for index in 0..8 {
        let scores = match index % 4 {
            0 | 1 => vec![(chair, 0.5), (table, 0.3), (desk, 0.1)],
            2 if index == 2 => vec![(chair, 0.5), (desk, 0.3), (table, 0.1)],
            _ => vec![(chair, 0.5), (table, 0.2), (rug, 0.15), (desk, 0.1)],
        };
        cells.push(Cell {
            colour: [120, 90, 60],
            scores,
        });
    }
    let region = [0, 0, 1, 1, 2, 2, 3, 3];
    let scene = grid_scene("juniper-lane-study", 4, 2, 10, &cells, &region);
    (scene, grid_unaries(&cells, 41))
}

#[test]
fn a_named_class_ranked_low_gets_groups_where_none_of_its_hypotheses_reach() {
    let (scene, unaries) = study();
    let desk = ClassId(14);
    let options = ProposalOptions::default();
    let hypotheses = build_hypotheses(&scene, &unaries, &[], &options).unwrap();
    let held: Vec<SegmentId> = hypotheses
        .iter()
        .filter(|h| h.class == desk)
        .flat_map(|h| h.members.iter().copied())
        .collect();
    assert!(
        !held.is_empty(),
        "the desk ranked second in one cell is proposed at top-2"
    );
    assert!(held.len() < 8, "but not over the whole strip: {held:?}");

    let extra = propose_named(&scene, &unaries, &hypotheses, &[desk], &options);
    assert!(
        !extra.is_empty(),
        "naming the desk proposes it where it ranks third or fourth"
    );
    let mut covered = held.clone();
    for hypothesis in &extra {
        assert_eq!(hypothesis.class, desk);
        assert_eq!(hypothesis.origin, HypothesisOrigin::FineGroup);
        for member in &hypothesis.members {
            assert!(
                !covered.contains(member),
                "{member:?} is held twice for the desk"
            );
            covered.push(*member);
        }
        assert!(hypotheses.iter().all(|h| h.id != hypothesis.id));
    }
    covered.sort();
    let all: Vec<SegmentId> = (0..8).map(SegmentId).collect();
    assert_eq!(
        covered, all,
        "every segment with the desk in its top 5 is held once"
    );

    // Same inputs, same list; a class not named, or named but already everywhere, adds nothing.
    assert_eq!(
        extra,
        propose_named(&scene, &unaries, &hypotheses, &[desk, desk], &options)
    );
    assert!(propose_named(&scene, &unaries, &hypotheses, &[], &options).is_empty());
    let with_extra: Vec<_> = hypotheses.iter().chain(&extra).cloned().collect();
    assert!(propose_named(&scene, &unaries, &with_extra, &[desk], &options).is_empty());
    // The wider rank is what reaches the desk: at the ordinary top-2 nothing is added.
    let narrow = ProposalOptions {
        named_top_k: 2,
        ..options.clone()
    };
    assert!(propose_named(&scene, &unaries, &hypotheses, &[desk], &narrow).is_empty());
    // A class id outside the unaries is skipped, not a panic.
    assert!(propose_named(&scene, &unaries, &hypotheses, &[ClassId(400)], &options).is_empty());
}
