//! Spatial relations between two object footprints, as grounding, the energy and the scene graph use them.
//!
//! Owns: `Footprint` (box, centroid, area, optional depth) and `holds(relation, subject, landmarks)`.
//! Must not: know about hypotheses, segments or classes. This is the single bridge from the words of a
//! relation to the shared geometric predicates in `crate::geometry::relations` (whose thresholds are
//! documented there). Grounding and the energy's relation factors call it through
//! `super::measures::relation_holds`, which also asks the segment masks when one box encloses the other
//! for "next to"; the scene graph's reported relations use the same test on footprints it measured once
//! (`super::measures::relation_holds_measured`).

use serde::{Deserialize, Serialize};

use crate::geometry::{Placed, Rect, RelationThresholds};
use crate::language::constraint::Relation;
use crate::scene::BoundingBox;

/// What the predicates look at of an object.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Footprint {
    pub bbox: BoundingBox,
    pub centroid: (f32, f32),
    /// Pixels.
    pub area: u32,
    /// Mean depth in millimetres, when a depth map exists.
    pub depth_mm: Option<f32>,
}

fn placed(footprint: &Footprint) -> Placed {
    Placed {
        rect: Rect::from_bounding_box(&footprint.bbox),
        depth_mm: footprint
            .depth_mm
            .filter(|depth| depth.is_finite() && *depth > 0.0)
            .map(f64::from),
    }
}

/// Whether `subject` stands in `relation` to `landmarks` (two landmarks for `Between`, one otherwise), by
/// the shared predicates of `crate::geometry::relations` with their default thresholds.
pub fn holds(relation: Relation, subject: &Footprint, landmarks: &[Footprint]) -> bool {
    let Some(landmark) = landmarks.first() else {
        return false;
    };
    let thresholds = RelationThresholds::default();
    let (a, b) = (placed(subject), placed(landmark));
    match relation {
        Relation::LeftOf => thresholds.left_of(&a, &b),
        Relation::RightOf => thresholds.right_of(&a, &b),
        Relation::Above => thresholds.above(&a, &b),
        Relation::Below => thresholds.below(&a, &b),
        Relation::On => thresholds.on(&a, &b),
        Relation::Under => thresholds.under(&a, &b),
        Relation::NextTo => thresholds.next_to(&a, &b),
        Relation::InFrontOf => thresholds.in_front_of(&a, &b),
        Relation::Behind => thresholds.behind(&a, &b),
        Relation::Inside => thresholds.inside(&a, &b),
        Relation::Between => match landmarks.get(1) {
            Some(second) => thresholds.between(&a, &b, &placed(second)),
            None => false,
        },
    }
}

/// The plain words for a relation, as used in questions and reasons.
pub fn relation_words(relation: Relation) -> &'static str {
    match relation {
        Relation::On => "on",
        Relation::Under => "under",
        Relation::Above => "above",
        Relation::Below => "below",
        Relation::NextTo => "next to",
        Relation::LeftOf => "left of",
        Relation::RightOf => "right of",
        Relation::InFrontOf => "in front of",
        Relation::Behind => "behind",
        Relation::Inside => "inside",
        Relation::Between => "between",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn footprint(x0: u32, y0: u32, x1: u32, y1: u32) -> Footprint {
        let bbox = BoundingBox { x0, y0, x1, y1 };
        Footprint {
            bbox,
            centroid: ((x0 + x1) as f32 / 2.0, (y0 + y1) as f32 / 2.0),
            area: bbox.area() as u32,
            depth_mm: None,
        }
    }

    #[test]
    fn a_mug_resting_on_a_table_top_is_on_it_and_not_under_it() {
        let mug = footprint(40, 20, 50, 32);
        let table = footprint(10, 30, 90, 60);
        assert!(holds(Relation::On, &mug, &[table]));
        assert!(!holds(Relation::Under, &mug, &[table]));
        assert!(!holds(Relation::On, &table, &[mug]));
    }

    #[test]
    fn left_right_and_between_follow_the_centroids() {
        let lamp = footprint(0, 10, 10, 30);
        let sofa = footprint(20, 10, 60, 30);
        let plant = footprint(70, 10, 80, 30);
        assert!(holds(Relation::LeftOf, &lamp, &[sofa]));
        assert!(holds(Relation::RightOf, &plant, &[sofa]));
        assert!(!holds(Relation::LeftOf, &plant, &[sofa]));
        assert!(holds(Relation::Between, &sofa, &[plant, lamp]));
        assert!(!holds(Relation::Between, &lamp, &[sofa, plant]));
        assert!(!holds(Relation::Between, &lamp, &[sofa]));
    }

    #[test]
    fn depth_decides_in_front_when_present() {
        let mut chair = footprint(10, 10, 20, 20);
        let mut table = footprint(10, 10, 20, 20);
        chair.depth_mm = Some(1200.0);
        table.depth_mm = Some(2000.0);
        assert!(holds(Relation::InFrontOf, &chair, &[table]));
        assert!(holds(Relation::Behind, &table, &[chair]));
    }
}
