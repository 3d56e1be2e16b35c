//! The relations the scene graph reports between its objects. On a scene of up to `ALL_PAIRS_UP_TO`
//! objects every ordered pair is tested; on a larger one each object is tested only against the
//! `NEAREST` objects whose boxes lie nearest its own (found through a grid over the boxes), so the pass
//! grows with objects times `NEAREST` instead of objects squared, and the graph says so
//! (`SceneGraph::relations_nearest`).
//!
//! Owns: `relate`, the candidate pairs and their two limits.
//! Must not: decide what a relation means (`crate::grounding::relation_holds_measured` does), form
//! objects or name classes.

use crate::geometry::Rect;
use crate::grounding::{relation_holds_measured, Footprint};
use crate::language::constraint::Relation;
use crate::scene::Scene;

use super::{ObjectRelation, SceneObject, REPORTED_RELATIONS};

/// Up to this many objects every ordered pair is tested (a room photo has tens of objects; 300 objects
/// are about 90,000 pairs). Our own choice.
pub const ALL_PAIRS_UP_TO: usize = 300;

/// Above `ALL_PAIRS_UP_TO` objects, each object is tested against this many others: those whose boxes lie
/// nearest its own (gap between the boxes, ties by object order). Our own choice.
pub const NEAREST: usize = 24;

/// The relations between `objects` (with their `footprints`, in the same order), subject by subject in
/// object order, landmarks in object order, relations in `REPORTED_RELATIONS` order. Objects of a
/// structure class (`is_structure`) are never subjects and are landmarks of `On` only. Answers the
/// relations and, when the scene had too many objects for every pair, the number of nearest objects each
/// was tested against.
pub fn relate(
    scene: &Scene,
    objects: &[SceneObject],
    footprints: &[Footprint],
    is_structure: impl Fn(&SceneObject) -> bool,
) -> (Vec<ObjectRelation>, Option<u32>) {
    let count = objects.len().min(footprints.len());
    let structure: Vec<bool> = objects[..count].iter().map(&is_structure).collect();
    let nearest = (count > ALL_PAIRS_UP_TO).then(|| {
        let rects: Vec<Rect> = footprints[..count]
            .iter()
            .map(|footprint| Rect::from_bounding_box(&footprint.bbox))
            .collect();
        NearestBoxes::new(rects, scene.width(), scene.height())
    });
    let mut relations = Vec::new();
    let mut landmarks = Vec::new();
    for a in 0..count {
        if structure[a] {
            continue;
        }
        landmarks.clear();
        match &nearest {
            Some(grid) => grid.nearest(a, NEAREST, &mut landmarks),
            None => landmarks.extend((0..count).filter(|&b| b != a)),
        }
        for &b in &landmarks {
            for relation in REPORTED_RELATIONS {
                if structure[b] && relation != Relation::On {
                    continue;
                }
                if relation_holds_measured(
                    scene,
                    relation,
                    (&objects[a].members, &footprints[a]),
                    (&objects[b].members, &footprints[b]),
                ) {
                    relations.push(ObjectRelation {
                        subject: objects[a].id,
                        relation,
                        object: objects[b].id,
                    });
                }
            }
        }
    }
    (relations, nearest.map(|_| NEAREST as u32))
}

/// A grid over the image whose cells list the boxes that cover them (about one box a cell), to find a
/// box's nearest others ring by ring.
struct NearestBoxes {
    rects: Vec<Rect>,
    cell: f64,
    columns: usize,
    rows: usize,
    cells: Vec<Vec<u32>>,
}

impl NearestBoxes {
    fn new(rects: Vec<Rect>, width: u32, height: u32) -> NearestBoxes {
        let (width, height) = (f64::from(width.max(1)), f64::from(height.max(1)));
        let cell = (width * height / rects.len().max(1) as f64).sqrt().max(4.0);
        let columns = (width / cell).ceil().max(1.0) as usize;
        let rows = (height / cell).ceil().max(1.0) as usize;
        let mut grid = NearestBoxes {
            rects: Vec::new(),
            cell,
            columns,
            rows,
            cells: vec![Vec::new(); columns * rows],
        };
        for (index, rect) in rects.iter().enumerate() {
            let (c0, c1, r0, r1) = grid.span(rect);
            for row in r0..=r1 {
                for column in c0..=c1 {
                    grid.cells[row * columns + column].push(index as u32);
                }
            }
        }
        grid.rects = rects;
        grid
    }

    /// The cells a box covers: first and last column, first and last row (clamped to the grid).
    fn span(&self, rect: &Rect) -> (usize, usize, usize, usize) {
        let at =
            |value: f64, last: usize| ((value / self.cell).floor().max(0.0) as usize).min(last);
        // The box covers pixels up to (not including) x1 and y1.
        let (x1, y1) = (
            rect.x1().max(rect.x0() + 1.0),
            rect.y1().max(rect.y0() + 1.0),
        );
        (
            at(rect.x0(), self.columns - 1),
            at(x1 - 1.0, self.columns - 1),
            at(rect.y0(), self.rows - 1),
            at(y1 - 1.0, self.rows - 1),
        )
    }

    /// The `k` boxes nearest box `subject` (smallest gap, ties by index), in index order, into `out`.
    /// Rings of cells are searched outwards from the subject's own; after ring `r`, every box within
    /// `r` cells' width (less a pixel) of the subject's box has been seen, so the search stops once `k`
    /// seen boxes lie that near, or the whole grid has been searched.
    fn nearest(&self, subject: usize, k: usize, out: &mut Vec<usize>) {
        let rect = &self.rects[subject];
        let (c0, c1, r0, r1) = self.span(rect);
        let mut seen = std::collections::HashSet::new();
        let mut found: Vec<(f64, usize)> = Vec::new();
        let mut ring = 0usize;
        loop {
            let (e0, e1) = (c0.saturating_sub(ring), (c1 + ring).min(self.columns - 1));
            let (f0, f1) = (r0.saturating_sub(ring), (r1 + ring).min(self.rows - 1));
            for row in f0..=f1 {
                for column in e0..=e1 {
                    let inner = ring > 0
                        && (c0.saturating_sub(ring - 1)..=c1 + ring - 1).contains(&column)
                        && (r0.saturating_sub(ring - 1)..=r1 + ring - 1).contains(&row);
                    if inner {
                        continue;
                    }
                    for &other in &self.cells[row * self.columns + column] {
                        let other = other as usize;
                        if other != subject && seen.insert(other) {
                            found.push((rect.gap_distance(&self.rects[other]), other));
                        }
                    }
                }
            }
            // A box whose gap is at most this lies in the cells searched so far (a pixel short of the ring's
            // width: a box ending just left of the subject's first cell lies in the cell before).
            let reach = ring as f64 * self.cell - 1.0;
            let whole = e0 == 0 && f0 == 0 && e1 == self.columns - 1 && f1 == self.rows - 1;
            if whole || found.iter().filter(|(gap, _)| *gap <= reach).count() >= k {
                break;
            }
            ring += 1;
        }
        found.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        found.truncate(k);
        out.extend(found.iter().map(|&(_, index)| index));
        out.sort_unstable();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rect(x0: f64, y0: f64, x1: f64, y1: f64) -> Rect {
        Rect::new(x0, y0, x1, y1).unwrap()
    }

    /// The grid's nearest boxes are those a sort of every gap gives (ties by index), on boxes of many
    /// sizes: small ones scattered by a fixed linear congruential sequence, a few wide shelves and a box
    /// the size of the picture.
    #[test]
    fn the_grid_finds_the_nearest_boxes_every_gap_sorted_gives() {
        let (width, height) = (640u32, 480u32);
        let mut rects = vec![
            rect(0.0, 0.0, 640.0, 480.0),
            rect(20.0, 300.0, 600.0, 320.0),
        ];
        let mut state = 12_345u64;
        let mut next = |limit: u64| {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1);
            (state >> 33) % limit
        };
        for _ in 0..400 {
            let (x, y) = (next(620) as f64, next(460) as f64);
            let (w, h) = (1 + next(40), 1 + next(30));
            rects.push(rect(
                x,
                y,
                (x + w as f64).min(640.0),
                (y + h as f64).min(480.0),
            ));
        }
        let grid = NearestBoxes::new(rects.clone(), width, height);
        for k in [1, 5, NEAREST, 500] {
            for subject in (0..rects.len()).step_by(7) {
                let mut found = Vec::new();
                grid.nearest(subject, k, &mut found);
                let mut every: Vec<(f64, usize)> = (0..rects.len())
                    .filter(|&other| other != subject)
                    .map(|other| (rects[subject].gap_distance(&rects[other]), other))
                    .collect();
                every.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
                let mut expected: Vec<usize> = every.iter().take(k).map(|&(_, i)| i).collect();
                expected.sort_unstable();
                assert_eq!(found, expected, "subject {subject}, k {k}");
            }
        }
    }

    /// Objects of the blocks scene: object `i` is segment `i % segments` (with an id of its own), so a
    /// scene of more objects than segments repeats them.
    fn objects_of(count: usize) -> (Vec<SceneObject>, Vec<Footprint>) {
        let scene = crate::scene::test_scenes::blocks();
        let segments = scene.segment_count();
        let objects: Vec<SceneObject> = (0..count)
            .map(|index| {
                let members = vec![crate::ids::SegmentId((index % segments) as u32)];
                SceneObject {
                    id: crate::ids::ObjectId(index as u32),
                    hypothesis: crate::ids::HypothesisId(index as u32),
                    class: crate::ids::ClassId(1),
                    class_name: "cabinet".to_string(),
                    score: 0.0,
                    bbox: crate::grounding::footprint_of(scene, &members).bbox,
                    mask: super::super::RunLengthMask::from_segments(scene, &members),
                    members,
                }
            })
            .collect();
        let footprints = objects
            .iter()
            .map(|object| crate::grounding::footprint_of(scene, &object.members))
            .collect();
        (objects, footprints)
    }

    /// Up to `ALL_PAIRS_UP_TO` objects every pair is tested; above, each subject's relations name only
    /// its `NEAREST` nearest objects, those relations are the ones every pair gives for those pairs, and
    /// the answer says how many were tested.
    #[test]
    fn above_the_limit_each_object_is_related_to_its_nearest_only() {
        let scene = crate::scene::test_scenes::blocks();
        let (objects, footprints) = objects_of(ALL_PAIRS_UP_TO);
        let (all, nearest) = relate(scene, &objects, &footprints, |_| false);
        assert_eq!(nearest, None);
        let subjects: std::collections::BTreeSet<_> = all.iter().map(|r| r.subject).collect();
        assert!(
            all.iter()
                .filter(|r| r.subject == objects[0].id)
                .map(|r| r.object)
                .collect::<std::collections::BTreeSet<_>>()
                .len()
                > NEAREST,
            "every pair is tested up to the limit"
        );
        assert!(subjects.len() > ALL_PAIRS_UP_TO / 2);

        let (objects, footprints) = objects_of(ALL_PAIRS_UP_TO + 1);
        let (capped, nearest) = relate(scene, &objects, &footprints, |_| false);
        assert_eq!(nearest, Some(NEAREST as u32));
        assert!(!capped.is_empty());
        let rects: Vec<Rect> = footprints
            .iter()
            .map(|f| Rect::from_bounding_box(&f.bbox))
            .collect();
        let grid = NearestBoxes::new(rects, scene.width(), scene.height());
        for (a, object) in objects.iter().enumerate() {
            let mut near = Vec::new();
            grid.nearest(a, NEAREST, &mut near);
            let mut expected = Vec::new();
            for &b in &near {
                for relation in REPORTED_RELATIONS {
                    if relation_holds_measured(
                        scene,
                        relation,
                        (&objects[a].members, &footprints[a]),
                        (&objects[b].members, &footprints[b]),
                    ) {
                        expected.push((relation, objects[b].id));
                    }
                }
            }
            let found: Vec<_> = capped
                .iter()
                .filter(|r| r.subject == object.id)
                .map(|r| (r.relation, r.object))
                .collect();
            assert_eq!(found, expected, "subject {a}");
        }
    }

    /// One box alone has no neighbours; boxes at the picture's far corners still find each other.
    #[test]
    fn a_lone_box_has_none_and_far_corners_meet() {
        let rects = [rect(0.0, 0.0, 2.0, 2.0)];
        let grid = NearestBoxes::new(rects.to_vec(), 100, 100);
        let mut found = Vec::new();
        grid.nearest(0, 3, &mut found);
        assert!(found.is_empty());
        let rects = [rect(0.0, 0.0, 2.0, 2.0), rect(97.0, 97.0, 100.0, 100.0)];
        let grid = NearestBoxes::new(rects.to_vec(), 100, 100);
        grid.nearest(0, 3, &mut found);
        assert_eq!(found, [1]);
    }
}
