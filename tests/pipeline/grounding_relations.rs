//! "Next to" a landmark whose box encloses the subject (a wall behind a cabinet, a rug around a chair):
//! boxes cannot tell whether the two touch, so `sayso_core::grounding::relation_holds` asks the segment
//! adjacency graph and the segments' depths.

use crate::common;

use std::sync::Arc;

use common::grid_scene::{grid_scene, Cell};
use sayso_core::grounding::relation_holds;
use sayso_core::ids::SegmentId;
use sayso_core::language::constraint::Relation;
use sayso_core::scene::Scene;

/// A 5x5 grid of 10-pixel cells: the border ring (16 cells), the inner ring (8 cells), the centre cell.
fn rings() -> Scene {
    let cells: Vec<Cell> = (0..25)
        .map(|_| Cell {
            colour: [200, 200, 190],
            scores: vec![(1, 0.9)],
        })
        .collect();
    grid_scene("juniper-lane-rings", 5, 5, 10, &cells, &[0; 25])
}

fn segments(indices: &[u32]) -> Vec<SegmentId> {
    indices.iter().map(|&s| SegmentId(s)).collect()
}

const BORDER: [u32; 16] = [0, 1, 2, 3, 4, 5, 9, 10, 14, 15, 19, 20, 21, 22, 23, 24];
const INNER: [u32; 8] = [6, 7, 8, 11, 13, 16, 17, 18];

#[test]
fn an_enclosed_subject_is_next_to_the_landmark_only_where_their_segments_meet() {
    let scene = rings();
    let centre = segments(&[12]);
    let border = segments(&BORDER);
    let mut border_and_inner = border.clone();
    border_and_inner.extend(segments(&INNER));
    border_and_inner.sort();
    // The centre's box lies inside the border's box but no centre segment touches a border segment.
    assert!(!relation_holds(
        &scene,
        Relation::NextTo,
        &centre,
        &[border.as_slice()]
    ));
    // With the inner ring in the landmark, the centre touches it.
    assert!(relation_holds(
        &scene,
        Relation::NextTo,
        &centre,
        &[border_and_inner.as_slice()]
    ));
    // The inner ring touches the border, seen from either side.
    let inner = segments(&INNER);
    assert!(relation_holds(
        &scene,
        Relation::NextTo,
        &inner,
        &[border.as_slice()]
    ));
    // Other relations keep the box predicates: the centre is not left of the ring around it.
    assert!(!relation_holds(
        &scene,
        Relation::LeftOf,
        &centre,
        &[border_and_inner.as_slice()]
    ));
}

#[test]
fn touching_in_the_picture_at_very_different_depths_is_not_next_to() {
    let mut scene = rings();
    let mut stats = (*scene.stats).clone();
    for stat in stats.iter_mut() {
        stat.mean_depth_mm = Some(3000.0);
    }
    // The centre is two metres in front of everything around it (the shared near_depth_mm is far less).
    stats[12].mean_depth_mm = Some(1000.0);
    scene.stats = Arc::new(stats);
    let centre = segments(&[12]);
    let mut around = segments(&BORDER);
    around.extend(segments(&INNER));
    around.sort();
    assert!(!relation_holds(
        &scene,
        Relation::NextTo,
        &centre,
        &[around.as_slice()]
    ));
    // At the same depth it is next to it again.
    let mut stats = (*scene.stats).clone();
    stats[12].mean_depth_mm = Some(3000.0);
    scene.stats = Arc::new(stats);
    assert!(relation_holds(
        &scene,
        Relation::NextTo,
        &centre,
        &[around.as_slice()]
    ));
}

mod grounding_a_sentence {
    use super::*;
    use sayso_core::grounding::{
        ground, GroundedKind, Grounding, GroundingContext, GroundingIssue, SceneView,
    };
    use sayso_core::hypotheses::{hypothesis_id, Hypothesis, HypothesisOrigin};
    use sayso_core::ids::ClassId;
    use sayso_core::language::constraint::Constraint;
    use sayso_core::language::Grammar;
    use sayso_core::scene::BoundingBox;
    use sayso_core::taxonomy::Taxonomy;

    fn hypothesis(class: ClassId, members: &[u32]) -> Hypothesis {
        let members = segments(members);
        Hypothesis {
            id: hypothesis_id(class, &members),
            class,
            members,
            bbox: BoundingBox::default(),
            score: 0.8,
            origin: HypothesisOrigin::FineGroup,
        }
    }

    /// Grounds `constraints` with every hypothesis accepted.
    fn ground_all_accepted(
        constraints: &[Constraint],
        scene: &Scene,
        taxonomy: &Taxonomy,
        hypotheses: &[Hypothesis],
    ) -> Grounding {
        let accepted = vec![true; hypotheses.len()];
        let view = SceneView {
            scene,
            taxonomy,
            hypotheses,
            accepted: &accepted,
            class_count: taxonomy.class_count(),
        };
        ground(constraints, &view, &GroundingContext::default())
    }

    #[test]
    fn a_relation_that_holds_for_no_candidate_says_what_is_in_view() {
        let grammar = Grammar::embedded().expect("embedded grammar");
        let taxonomy = grammar.taxonomy().clone();
        let class = |name: &str| taxonomy.class_by_name(name).expect("known class").id;
        let scene = rings();
        let parse = grammar
            .parse("the table next to the wall is a chair", None)
            .expect("parses");
        let mut hypotheses = vec![
            hypothesis(class("wall"), &BORDER),
            hypothesis(class("table"), &[12]),
        ];
        let grounding = ground_all_accepted(&parse.constraints, &scene, &taxonomy, &hypotheses);
        assert!(grounding.constraints.is_empty());
        assert_eq!(
            grounding.issues,
            vec![GroundingIssue::NoneInRelation {
                constraint: 0,
                found: "1 table".to_string(),
                words: "the table next to the wall".to_string(),
            }]
        );
        assert_eq!(
            grounding.issues[0].to_string(),
            "constraint 0: 1 table in view, but none matches \"the table next to the wall\""
        );

        // A second table, on the inner ring, touches the wall: it is the one meant.
        hypotheses.push(hypothesis(class("table"), &[6]));
        let grounding = ground_all_accepted(&parse.constraints, &scene, &taxonomy, &hypotheses);
        assert!(grounding.issues.is_empty(), "{:?}", grounding.issues);
        match &grounding.constraints[0].kind {
            GroundedKind::Relabel { target, .. } => assert_eq!(target.hypotheses, vec![2]),
            other => panic!("expected a relabel, got {other:?}"),
        }
    }
}

#[test]
fn the_scene_graphs_measured_test_agrees_with_relation_holds_on_every_pair() {
    // The scene graph measures every object's footprint once and calls `relation_holds_measured`; it must
    // answer as grounding and the energy do.
    use sayso_core::grounding::{footprint_of, relation_holds_measured};
    let scene = rings();
    let mut border_and_inner = segments(&BORDER);
    border_and_inner.extend(segments(&INNER));
    border_and_inner.sort();
    let sets = [
        segments(&[12]),
        segments(&BORDER),
        segments(&INNER),
        border_and_inner,
        segments(&[0, 1, 5]),
        segments(&[18, 19, 23, 24]),
    ];
    let mut next_to_by_masks = 0;
    for subject in &sets {
        for landmark in &sets {
            for relation in sayso_core::scenegraph::REPORTED_RELATIONS {
                let whole = relation_holds(&scene, relation, subject, &[landmark.as_slice()]);
                let measured = relation_holds_measured(
                    &scene,
                    relation,
                    (subject, &footprint_of(&scene, subject)),
                    (landmark, &footprint_of(&scene, landmark)),
                );
                assert_eq!(whole, measured, "{relation:?} {subject:?} {landmark:?}");
                if relation == Relation::NextTo && whole {
                    next_to_by_masks += 1;
                }
            }
        }
    }
    assert!(next_to_by_masks > 0, "some pair is next to another");
}
