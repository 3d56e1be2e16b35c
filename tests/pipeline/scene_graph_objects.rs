//! Scene-graph objects formed from final labels (`sayso_core::scenegraph::objects`): connected groups of equal
//! labels, split along colour edges (geodesic k-medoids) only where a count says adjacent objects merged.

use crate::common;

use common::grid_scene::{grid_scene, Cell};
use sayso_core::hypotheses::{hypothesis_id, Hypothesis, HypothesisOrigin};
use sayso_core::ids::{ClassId, SegmentId};
use sayso_core::scene::{BoundingBox, Scene};
use sayso_core::scenegraph::instances::InstanceCuts;
use sayso_core::scenegraph::objects::{form_objects, FormedObject, MIN_SHOWN_SEGMENTS};
use sayso_core::taxonomy::Taxonomy;

/// `form_objects` with no class ever cut, so the count rule is seen alone.
fn form_uncut(
    scene: &Scene,
    labels: &[u16],
    hypotheses: &[Hypothesis],
    accepted: &[bool],
    counted: &[(ClassId, u32)],
) -> Vec<FormedObject> {
    let cuts = InstanceCuts::none(Taxonomy::embedded().class_count());
    form_objects(scene, labels, hypotheses, accepted, counted, &cuts)
}

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

/// A row of 4-pixel book cells of the given colours, coarse regions by `regions`.
fn coloured_row(name: &str, colours: &[[u8; 3]], regions: &[u32]) -> Scene {
    let cells: Vec<Cell> = colours
        .iter()
        .map(|&colour| Cell {
            colour,
            scores: vec![(BOOK, 0.9)],
        })
        .collect();
    grid_scene(name, colours.len() as u32, 1, 4, &cells, regions)
}

/// Six book cells in one run: red, red, blue, green, green, yellow (each colour one book; CIE76 contrast
/// between the colours far above the committed book cut, between equal colours 0), then a grey wall cell.
fn book_row() -> Scene {
    coloured_row(
        "juniper-lane-book-row",
        &[
            [170, 30, 30],
            [170, 30, 30],
            [30, 40, 170],
            [30, 150, 40],
            [30, 150, 40],
            [220, 200, 40],
            [200, 200, 200],
        ],
        &[0, 0, 0, 0, 0, 0, 1],
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

fn members_of(objects: &[FormedObject], class: u16) -> Vec<Vec<u32>> {
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
    let plain = form_uncut(&scene, &labels, &hypotheses, &accepted, &[]);
    assert_eq!(
        members_of(&plain, BOOK),
        vec![vec![0, 1, 2, 3], vec![5, 6, 7, 8]]
    );
    assert_eq!(members_of(&plain, WALL), vec![vec![4], vec![9]]);
    // "There are two books": the labels already show two, nothing is split.
    let two = form_uncut(
        &scene,
        &labels,
        &hypotheses,
        &accepted,
        &[(ClassId(BOOK), 2)],
    );
    assert_eq!(members_of(&two, BOOK), members_of(&plain, BOOK));
    // "There are three books": one short, so the first of the two equal runs is cut in two (equal cells
    // and contrast: the medoids settle on the two halves).
    let three = form_uncut(
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
    let objects = form_uncut(&scene, &labels, &[], &[], &[(ClassId(BOOK), 2)]);
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
fn a_small_patch_the_solver_switched_on_counts_as_shown() {
    let scene = strip();
    // The same five-cell run and lone cell as above, but a book hypothesis over the lone cell.
    let labels = [BOOK, BOOK, BOOK, BOOK, BOOK, WALL, BOOK, WALL, WALL, WALL];
    let hypotheses = [hypothesis(BOOK, &[0, 1, 2, 3, 4]), hypothesis(BOOK, &[6])];
    let counted = [(ClassId(BOOK), 2)];
    // Switched on: the lone cell is a book the count already sees, so the run stays whole.
    let objects = form_uncut(&scene, &labels, &hypotheses, &[true, true], &counted);
    assert_eq!(
        members_of(&objects, BOOK),
        vec![vec![0, 1, 2, 3, 4], vec![6]]
    );
    // Proposed but left off: it is a fragment again, and the run is cut to make up the count.
    let objects = form_uncut(&scene, &labels, &hypotheses, &[true, false], &counted);
    assert_eq!(members_of(&objects, BOOK).len(), 3);
}

#[test]
fn touching_objects_part_along_the_colour_boundary() {
    // Book cells 0..=7 all connected and labelled book: cells 0-2 are a red book, cells 3-7 a blue one.
    // The cut follows the colour edge, not the middle of the run.
    let scene = coloured_row(
        "juniper-lane-two-books",
        &[
            [170, 30, 30],
            [170, 30, 30],
            [170, 30, 30],
            [30, 40, 170],
            [30, 40, 170],
            [30, 40, 170],
            [30, 40, 170],
            [30, 40, 170],
        ],
        &[0, 0, 0, 1, 1, 1, 1, 1],
    );
    let labels = [BOOK; 8];
    let objects = form_uncut(&scene, &labels, &[], &[], &[(ClassId(BOOK), 2)]);
    assert_eq!(
        members_of(&objects, BOOK),
        vec![vec![0, 1, 2], vec![3, 4, 5, 6, 7]]
    );
}

#[test]
fn books_of_different_colours_side_by_side_are_separate_objects_under_the_committed_cuts() {
    let scene = book_row();
    let labels = [BOOK, BOOK, BOOK, BOOK, BOOK, BOOK, WALL];
    let taxonomy = Taxonomy::embedded();
    let cuts = InstanceCuts::embedded(&taxonomy).unwrap();
    assert!(
        cuts.cut(ClassId(BOOK)).is_some(),
        "the committed file cuts books"
    );
    let objects = form_objects(&scene, &labels, &[], &[], &[], &cuts);
    assert_eq!(
        members_of(&objects, BOOK),
        vec![vec![0, 1], vec![2], vec![3, 4], vec![5]]
    );
    // The wall is never cut, and with no cuts the run is one book.
    assert_eq!(members_of(&objects, WALL), vec![vec![6]]);
    assert_eq!(
        members_of(&form_uncut(&scene, &labels, &[], &[], &[]), BOOK),
        vec![vec![0, 1, 2, 3, 4, 5]]
    );
}

#[test]
fn counted_cuts_part_books_that_differ_in_colour_and_leave_single_walls_whole() {
    use sayso_core::scenegraph::instance_statistics::{
        InstanceCutCounts, CANDIDATE_CUTS, MIN_OBJECTS,
    };
    // The book row above as ground truth: books are instances 1..=4 (cells 0-1, 2, 3-4, 5), the wall
    // instance 5 (cell 6). Counted five times, so books reach MIN_OBJECTS (20) and the wall does not.
    let cell = 4u32;
    let scene = book_row();
    let instance_of_cell = [1u16, 1, 2, 3, 3, 4, 5];
    let (width, height) = (7 * cell, cell);
    let mut labels = Vec::new();
    let mut instances = Vec::new();
    for _y in 0..height {
        for x in 0..width {
            let c = (x / cell) as usize;
            labels.push(if c == 6 { WALL } else { BOOK });
            instances.push(instance_of_cell[c]);
        }
    }
    let taxonomy = Taxonomy::embedded();
    let mut counts = InstanceCutCounts::new(taxonomy.class_count());
    for _ in 0..5 {
        counts.add_scene(&scene, &labels, &instances).unwrap();
    }
    assert_eq!(counts.scene_count(), 5);
    const { assert!(MIN_OBJECTS == 20) };
    // Never cut: one patch of six cells against books of at most two: nothing matched, one patch invented.
    let whole = counts.tally(BOOK as usize, 0).unwrap();
    assert_eq!((whole.matched, whole.invented, whole.missed), (0, 5, 20));
    // The smallest candidate parts every colour edge and no same-colour one: all 20 books found.
    let finest = counts.tally(BOOK as usize, 1).unwrap();
    assert_eq!((finest.matched, finest.invented, finest.missed), (20, 0, 0));
    let chosen = counts.chosen();
    let book_cut = chosen[BOOK as usize].expect("books are cut");
    assert!(CANDIDATE_CUTS.contains(&book_cut));
    assert_eq!(
        chosen[WALL as usize], None,
        "5 wall objects are below MIN_OBJECTS"
    );
    let file = counts
        .to_file(&taxonomy, "test".into(), &counts.typical_sizes())
        .unwrap();
    assert_eq!(file.cuts.keys().collect::<Vec<_>>(), vec!["book"]);
    let cuts = InstanceCuts::from_file(&file, &taxonomy).unwrap();
    let final_labels = [BOOK, BOOK, BOOK, BOOK, BOOK, BOOK, WALL];
    let objects = form_objects(&scene, &final_labels, &[], &[], &[], &cuts);
    assert_eq!(members_of(&objects, BOOK).len(), 4);
    // A raster of the wrong size is refused, and counts nothing.
    assert!(counts.add_scene(&scene, &labels[1..], &instances).is_err());
    assert_eq!(counts.scene_count(), 5);
}

#[test]
fn a_count_does_not_cut_a_patch_into_pieces_under_half_the_typical_size() {
    // Two shoe patches of four 16-pixel cells: the first at 0.7 m (depth-scaled area 31.4), the second at
    // 1 m (64), with a typical shoe of 64. "Three shoes": one is missing, so a patch is cut; the first is
    // too small to hold two shoes of at least half the typical size, so the second is cut.
    const SHOE: u16 = 31;
    let taxonomy = Taxonomy::embedded();
    assert_eq!(taxonomy.class_name(ClassId(SHOE)), "shoe");
    let mut scene = strip();
    let depth = [
        700.0, 700.0, 700.0, 700.0, 1000.0, 1000.0, 1000.0, 1000.0, 1000.0, 1000.0,
    ];
    let mut stats = scene.stats.as_ref().clone();
    for (stat, &mm) in stats.iter_mut().zip(&depth) {
        stat.mean_depth_mm = Some(mm);
    }
    scene.stats = std::sync::Arc::new(stats);
    let labels = [SHOE, SHOE, SHOE, SHOE, WALL, SHOE, SHOE, SHOE, SHOE, WALL];
    let sized = InstanceCuts::from_json(
        r#"{"schema":1,"source":"test","cuts":{},"typical_sizes":{"shoe":64.0}}"#,
        &taxonomy,
    )
    .unwrap();
    let counted = [(ClassId(SHOE), 3)];
    let shoes = members_of(
        &form_objects(&scene, &labels, &[], &[], &counted, &sized),
        SHOE,
    );
    assert_eq!(shoes.len(), 3, "{shoes:?}");
    assert!(shoes.contains(&vec![0, 1, 2, 3]), "{shoes:?}");
    // Without a typical size the count cuts the first patch in the order (the lower segments).
    let plain = members_of(&form_uncut(&scene, &labels, &[], &[], &counted), SHOE);
    assert_eq!(plain.len(), 3, "{plain:?}");
    assert!(plain.contains(&vec![5, 6, 7, 8]), "{plain:?}");
}

#[test]
fn a_bottle_drawn_as_one_segment_counts_as_shown_when_it_is_bottle_sized() {
    // "Two bottles" over a strip with a lone bottle cell and a run of four bottle cells at 1 m (depth-scaled
    // area 4 x 16 = 64: one typical bottle). With the lone cell at 2 m (16 x 4 = 64, a typical bottle) it
    // counts as shown, though it is one segment: the count is met and the run stays whole. At 1 m the lone
    // cell is a quarter of a bottle, a fragment the count does not see, so the run is cut in two (each half
    // of it at least half a typical bottle).
    const BOTTLE: u16 = 24;
    let taxonomy = Taxonomy::embedded();
    assert_eq!(taxonomy.class_name(ClassId(BOTTLE)), "bottle");
    let labels = [
        BOTTLE, WALL, BOTTLE, BOTTLE, BOTTLE, BOTTLE, WALL, WALL, WALL, WALL,
    ];
    let sized = InstanceCuts::from_json(
        r#"{"schema":1,"source":"test","cuts":{},"typical_sizes":{"bottle":64.0}}"#,
        &taxonomy,
    )
    .unwrap();
    let at = |lone_mm: f32| {
        let mut scene = strip();
        let mut stats = scene.stats.as_ref().clone();
        for (index, stat) in stats.iter_mut().enumerate() {
            stat.mean_depth_mm = Some(if index == 0 { lone_mm } else { 1000.0 });
        }
        scene.stats = std::sync::Arc::new(stats);
        members_of(
            &form_objects(&scene, &labels, &[], &[], &[(ClassId(BOTTLE), 2)], &sized),
            BOTTLE,
        )
    };
    const { assert!(MIN_SHOWN_SEGMENTS > 1) };
    let shown = at(2000.0);
    assert_eq!(shown, vec![vec![0], vec![2, 3, 4, 5]], "{shown:?}");
    let fragment = at(1000.0);
    assert_eq!(fragment.len(), 3, "{fragment:?}");
    assert!(fragment.contains(&vec![0]), "{fragment:?}");
    assert!(fragment.iter().all(|b| b.len() <= 2), "{fragment:?}");
}

#[test]
fn a_count_cuts_the_patch_with_a_plain_seam_not_merely_the_largest() {
    // Six book cells of one colour (one long book, no seam), a wall cell, then four book cells, two red
    // and two blue (two books meeting along a colour edge). "Three books": one is missing. The patch to cut
    // is the one with a seam, though the uniform patch is larger; cutting the largest would split the long
    // book and leave the two coloured ones as one.
    let scene = coloured_row(
        "juniper-lane-long-book",
        &[
            [120, 90, 60],
            [120, 90, 60],
            [120, 90, 60],
            [120, 90, 60],
            [120, 90, 60],
            [120, 90, 60],
            [200, 200, 200],
            [170, 30, 30],
            [170, 30, 30],
            [30, 40, 170],
            [30, 40, 170],
        ],
        &[0, 0, 0, 0, 0, 0, 1, 2, 2, 2, 2],
    );
    let labels = [
        BOOK, BOOK, BOOK, BOOK, BOOK, BOOK, WALL, BOOK, BOOK, BOOK, BOOK,
    ];
    let books = members_of(
        &form_uncut(&scene, &labels, &[], &[], &[(ClassId(BOOK), 3)]),
        BOOK,
    );
    assert_eq!(
        books,
        vec![vec![0, 1, 2, 3, 4, 5], vec![7, 8], vec![9, 10]],
        "{books:?}"
    );
}

#[test]
fn a_sliver_of_the_class_does_not_count_as_an_object_shown() {
    // Forty-four book cells in one colour (two books side by side, no visible seam), a wall cell, and a
    // separate patch of four book cells: enough segments to count, but under a tenth of the large patch's
    // pixels (`SHOWN_LARGEST_SHARE`), so a sliver and not the second book. "Two books": the large patch is
    // cut in two.
    let mut colours = vec![[120u8, 90, 60]; 44];
    colours.push([200, 200, 200]);
    colours.extend([[120u8, 90, 60]; 4]);
    let mut regions = vec![0u32; 44];
    regions.push(1);
    regions.extend([2u32; 4]);
    let scene = coloured_row("juniper-lane-sliver", &colours, &regions);
    let mut labels = vec![BOOK; 44];
    labels.push(WALL);
    labels.extend([BOOK; 4]);
    let books = members_of(
        &form_uncut(&scene, &labels, &[], &[], &[(ClassId(BOOK), 2)]),
        BOOK,
    );
    assert_eq!(books.len(), 3, "{books:?}");
    assert!(books.contains(&vec![45, 46, 47, 48]), "{books:?}");
    assert!(!books.contains(&(0..44).collect::<Vec<u32>>()), "{books:?}");
}
