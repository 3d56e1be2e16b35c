//! Object hypotheses on a hand-built scene: stable ids, detections taking their segments, top-k proposals,
//! one object per segment within a class, and typed errors for inputs that do not fit.
//!
//! Owns: checks of `sayso::hypotheses` through its public API.
//! Must not: depend on the solver; it only inspects the hypothesis list.

mod common;

use common::grid_scene::{grid_scene, grid_unaries, Cell};
use sayso::hypotheses::{
    build_hypotheses, hypothesis_id, Detection, HypothesisError, HypothesisOrigin, ProposalOptions,
};
use sayso::ids::{ClassId, SegmentId};
use sayso::scene::BoundingBox;

/// A 4 x 2 strip of the Juniper Lane hallway: shoes (ranked second to bags) on the left, a rug on the right.
fn hallway() -> (sayso::scene::Scene, sayso::unaries::Unaries) {
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
        |list: &[sayso::hypotheses::Hypothesis]| list.iter().map(|h| h.id).collect::<Vec<_>>();
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
