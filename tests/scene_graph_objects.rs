//! Scene-graph objects formed from final labels (`sayso::scenegraph::objects`): connected groups of equal
//! labels, split along colour edges (geodesic k-medoids) only where a count says adjacent objects merged.

mod common;

use common::grid_scene::{grid_scene, Cell};
use sayso::hypotheses::{hypothesis_id, Hypothesis, HypothesisOrigin};
use sayso::ids::{ClassId, SegmentId};
use sayso::scene::{BoundingBox, Scene};
use sayso::scenegraph::objects::{form_objects, MIN_SHOWN_SEGMENTS};

const BOOK: u16 = 26;
const WALL: u16 = 1;

/// A 10x1 strip of cells labelled by `labels`, every cell the same colour.
fn strip() -> Scene {
    let cells: Vec<Cell> = (0..10)
        .map(|_| Cell {
            colour: [120, 90, 60],
            scores: vec![(BOOK, 0.9)],
        })
        .collect();
    grid_scene(
        "juniper-lane-bookshelf",
        10,
        1,
        4,
        &cells,
        &[0, 0, 0, 0, 1, 2, 2, 2, 2, 3],
    )
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
    // Two shelves of four books, each run closed by a wall cell.
    let labels = [BOOK, BOOK, BOOK, BOOK, WALL, BOOK, BOOK, BOOK, BOOK, WALL];
    let hypotheses = [
        hypothesis(BOOK, &[0, 1, 2, 3]),
        hypothesis(BOOK, &[5, 6]),
        hypothesis(BOOK, &[7, 8]),
    ];
    let accepted = [true, true, false];
    // No count: each run of touching book cells is one object; the walls are objects of their own.
    let plain = form_objects(&scene, &labels, &hypotheses, &accepted, &[]);
    assert_eq!(
        members_of(&plain, BOOK),
        vec![vec![0, 1, 2, 3], vec![5, 6, 7, 8]]
    );
    assert_eq!(members_of(&plain, WALL), vec![vec![4], vec![9]]);
    // "There are two books": the labels already show two, nothing is split.
    let two = form_objects(
        &scene,
        &labels,
        &hypotheses,
        &accepted,
        &[(ClassId(BOOK), 2)],
    );
    assert_eq!(members_of(&two, BOOK), members_of(&plain, BOOK));
    // "There are three books": one short, so the first of the two equal runs is cut in two (equal cells
    // and contrast: the medoids settle on the two halves).
    let three = form_objects(
        &scene,
        &labels,
        &hypotheses,
        &accepted,
        &[(ClassId(BOOK), 3)],
    );
    assert_eq!(
        members_of(&three, BOOK),
        vec![vec![0, 1], vec![2, 3], vec![5, 6, 7, 8]]
    );
    // Objects are named after the hypothesis they share most with (accepted first), one hypothesis per
    // object; a wall (no hypothesis) gets an id from its class and members.
    let named: Vec<_> = plain
        .iter()
        .map(|o| (o.members.clone(), o.hypothesis))
        .collect();
    let run = |range: std::ops::Range<u32>| range.map(SegmentId).collect::<Vec<_>>();
    assert!(named.contains(&(run(0..4), hypotheses[0].id)));
    assert!(named.contains(&(run(5..9), hypotheses[1].id)));
    assert!(named.contains(&(
        vec![SegmentId(4)],
        hypothesis_id(ClassId(WALL), &[SegmentId(4)])
    )));
}

#[test]
fn a_stray_fragment_is_not_an_object_the_count_already_sees() {
    let scene = strip();
    // Five book cells in a run and a lone book cell (a fragment of fewer than MIN_SHOWN_SEGMENTS).
    let labels = [BOOK, BOOK, BOOK, BOOK, BOOK, WALL, BOOK, WALL, WALL, WALL];
    const { assert!(MIN_SHOWN_SEGMENTS > 1) };
    let objects = form_objects(&scene, &labels, &[], &[], &[(ClassId(BOOK), 2)]);
    let books = members_of(&objects, BOOK);
    // The run is cut in two; the fragment stays an object of its own.
    assert_eq!(books.len(), 3, "{books:?}");
    assert!(books.contains(&vec![6]));
    let run: Vec<u32> = books
        .iter()
        .filter(|b| b != &&vec![6])
        .flatten()
        .copied()
        .collect();
    assert_eq!(run.len(), 5);
}

#[test]
fn touching_objects_part_along_the_colour_boundary() {
    // Book cells 0..=7 all connected and labelled book: cells 0-2 are a red book, cells 3-7 a blue one.
    // The cut follows the colour edge, not the middle of the run.
    let colours = [
        [170, 30, 30],
        [170, 30, 30],
        [170, 30, 30],
        [30, 40, 170],
        [30, 40, 170],
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
    let scene = grid_scene(
        "juniper-lane-two-books",
        8,
        1,
        4,
        &cells,
        &[0, 0, 0, 1, 1, 1, 1, 1],
    );
    let labels = [BOOK; 8];
    let objects = form_objects(&scene, &labels, &[], &[], &[(ClassId(BOOK), 2)]);
    assert_eq!(
        members_of(&objects, BOOK),
        vec![vec![0, 1, 2], vec![3, 4, 5, 6, 7]]
    );
}
