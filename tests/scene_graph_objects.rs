//! Scene-graph objects formed from final labels (`sayso::scenegraph::objects`): connected groups of equal
//! labels, split by accepted hypotheses only where a count says adjacent objects merged.

mod common;

use common::grid_scene::{grid_scene, Cell};
use sayso::hypotheses::{hypothesis_id, Hypothesis, HypothesisOrigin};
use sayso::ids::{ClassId, SegmentId};
use sayso::scene::{BoundingBox, Scene};
use sayso::scenegraph::objects::form_objects;

const BOOK: u16 = 26;
const WALL: u16 = 1;

/// A 5x1 strip of cells: book, book, book, wall, book.
fn strip() -> Scene {
    let cells: Vec<Cell> = (0..5)
        .map(|_| Cell {
            colour: [120, 90, 60],
            scores: vec![(BOOK, 0.9)],
        })
        .collect();
    grid_scene("juniper-lane-bookshelf", 5, 1, 4, &cells, &[0, 0, 0, 1, 2])
}

fn hypothesis(class: u16, members: &[u32]) -> Hypothesis {
    let members: Vec<SegmentId> = members.iter().map(|&s| SegmentId(s)).collect();
    Hypothesis {
        id: hypothesis_id(ClassId(class), &members),
        class: ClassId(class),
        members,
        bbox: BoundingBox::default(),
        score: 0.8,
        origin: HypothesisOrigin::FineGroup,
    }
}

fn members_of(objects: &[sayso::scenegraph::objects::FormedObject], class: u16) -> Vec<Vec<u32>> {
    let mut found: Vec<Vec<u32>> = objects
        .iter()
        .filter(|o| o.class.0 == class)
        .map(|o| o.members.iter().map(|s| s.0).collect())
        .collect();
    found.sort();
    found
}

#[test]
fn connected_labels_are_one_object_unless_a_count_asks_for_more() {
    let scene = strip();
    let labels = [BOOK, BOOK, BOOK, WALL, BOOK];
    let hypotheses = [
        hypothesis(BOOK, &[0]),
        hypothesis(BOOK, &[1, 2]),
        hypothesis(BOOK, &[4]),
    ];
    let accepted = [true, true, false];
    // No count: the three touching book cells are one object, the lone cell another, the wall a third.
    let plain = form_objects(&scene, &labels, &hypotheses, &accepted, &[]);
    assert_eq!(members_of(&plain, BOOK), vec![vec![0, 1, 2], vec![4]]);
    assert_eq!(members_of(&plain, WALL), vec![vec![3]]);
    // "There are two books": the labels already show two, nothing is split.
    let two = form_objects(
        &scene,
        &labels,
        &hypotheses,
        &accepted,
        &[(ClassId(BOOK), 2)],
    );
    assert_eq!(members_of(&two, BOOK), vec![vec![0, 1, 2], vec![4]]);
    // "There are three books": one short, so the merged group is split by its two accepted hypotheses.
    let three = form_objects(
        &scene,
        &labels,
        &hypotheses,
        &accepted,
        &[(ClassId(BOOK), 3)],
    );
    assert_eq!(members_of(&three, BOOK), vec![vec![0], vec![1, 2], vec![4]]);
    // Objects are named after the hypothesis they share most with; the unaccepted one still names the lone
    // cell, and the wall (no hypothesis) gets an id from its class and members.
    let named: Vec<_> = three
        .iter()
        .map(|o| (o.members.clone(), o.hypothesis))
        .collect();
    assert!(named.contains(&(vec![SegmentId(0)], hypotheses[0].id)));
    assert!(named.contains(&(vec![SegmentId(1), SegmentId(2)], hypotheses[1].id)));
    assert!(named.contains(&(vec![SegmentId(4)], hypotheses[2].id)));
    assert!(named.contains(&(
        vec![SegmentId(3)],
        hypothesis_id(ClassId(WALL), &[SegmentId(3)])
    )));
}

#[test]
fn a_group_with_one_accepted_hypothesis_is_not_split() {
    let scene = strip();
    let labels = [BOOK, BOOK, BOOK, WALL, WALL];
    let hypotheses = [hypothesis(BOOK, &[0, 1]), hypothesis(BOOK, &[2])];
    // Only one accepted hypothesis in the group: the count cannot be met by splitting, so nothing is cut.
    let objects = form_objects(
        &scene,
        &labels,
        &hypotheses,
        &[true, false],
        &[(ClassId(BOOK), 2)],
    );
    assert_eq!(members_of(&objects, BOOK), vec![vec![0, 1, 2]]);
    assert_eq!(members_of(&objects, WALL), vec![vec![3, 4]]);
}

#[test]
fn touching_objects_part_along_the_colour_boundary() {
    // Book cells 0..=4 all connected and labelled book: cells 0-1 are a red book, cells 2-4 a blue one.
    // Accepted hypotheses hold only cell 0 and cell 4; the other cells join across the lowest contrast, so
    // cell 2 (one hop from either seed's part) goes with the blue book, not with the lower-index red one.
    let colours = [
        [170, 30, 30],
        [170, 30, 30],
        [30, 40, 170],
        [30, 40, 170],
        [30, 40, 170],
    ];
    let cells: Vec<Cell> = colours
        .iter()
        .map(|&colour| Cell {
            colour,
            scores: vec![(BOOK, 0.9)],
        })
        .collect();
    let scene = grid_scene("juniper-lane-two-books", 5, 1, 4, &cells, &[0, 0, 1, 1, 1]);
    let labels = [BOOK; 5];
    let hypotheses = [hypothesis(BOOK, &[0]), hypothesis(BOOK, &[4])];
    let objects = form_objects(
        &scene,
        &labels,
        &hypotheses,
        &[true, true],
        &[(ClassId(BOOK), 2)],
    );
    assert_eq!(members_of(&objects, BOOK), vec![vec![0, 1], vec![2, 3, 4]]);
}
