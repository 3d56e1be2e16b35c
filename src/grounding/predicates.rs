//! Spatial relations between two object footprints, as grounding, the energy and the scene graph use them.
//!
//! Owns: `Footprint` (box, centroid, area, optional depth) and `holds(relation, subject, landmarks)`.
//! Must not: know about hypotheses, segments or classes. This is the single bridge to the shared geometric
//! predicates: when `crate::geometry` (box and mask predicates) lands, `holds` calls it and nothing else here
//! changes for callers.
//!
//! The thresholds are common practice for box-based spatial relations, chosen by us (not from a source):
//! a quarter of the mean width or height as a margin, half of the subject's width as "horizontal overlap",
//! 150 mm as a depth difference that counts as "in front", 400 mm as "at the same depth".

use serde::{Deserialize, Serialize};

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

fn horizontal_overlap(a: &BoundingBox, b: &BoundingBox) -> f32 {
    (a.x1.min(b.x1) as f32 - a.x0.max(b.x0) as f32).max(0.0)
}

fn vertical_overlap(a: &BoundingBox, b: &BoundingBox) -> f32 {
    (a.y1.min(b.y1) as f32 - a.y0.max(b.y0) as f32).max(0.0)
}

fn same_depth(a: &Footprint, b: &Footprint) -> bool {
    match (a.depth_mm, b.depth_mm) {
        (Some(da), Some(db)) => (da - db).abs() <= 400.0,
        _ => true,
    }
}

fn margin_x(a: &Footprint, b: &Footprint) -> f32 {
    0.25 * (a.bbox.width() + b.bbox.width()) as f32 / 2.0
}

fn margin_y(a: &Footprint, b: &Footprint) -> f32 {
    0.25 * (a.bbox.height() + b.bbox.height()) as f32 / 2.0
}

/// Whether `subject` stands in `relation` to `landmarks` (two landmarks for `Between`, one otherwise).
pub fn holds(relation: Relation, subject: &Footprint, landmarks: &[Footprint]) -> bool {
    let Some(landmark) = landmarks.first() else {
        return false;
    };
    let (a, b) = (subject, landmark);
    let wide_overlap = horizontal_overlap(&a.bbox, &b.bbox) >= 0.5 * a.bbox.width().max(1) as f32;
    match relation {
        Relation::LeftOf => a.centroid.0 + margin_x(a, b) < b.centroid.0,
        Relation::RightOf => a.centroid.0 > b.centroid.0 + margin_x(a, b),
        Relation::Above => a.centroid.1 + margin_y(a, b) < b.centroid.1,
        Relation::Below => a.centroid.1 > b.centroid.1 + margin_y(a, b),
        Relation::On => {
            let bottom = a.bbox.y1 as f32;
            let top = b.bbox.y0 as f32;
            wide_overlap
                && bottom >= top - margin_y(a, b)
                && bottom <= top + 0.5 * b.bbox.height() as f32
                && a.centroid.1 < b.centroid.1
                && same_depth(a, b)
        }
        Relation::Under => {
            wide_overlap && a.centroid.1 > b.centroid.1 && a.bbox.y0 + 1 >= b.bbox.y0
        }
        Relation::NextTo => {
            let gap_x =
                (a.bbox.x0.max(b.bbox.x0) as f32 - a.bbox.x1.min(b.bbox.x1) as f32).max(0.0);
            let reach = 0.5 * a.bbox.width().max(b.bbox.width()) as f32;
            gap_x <= reach && vertical_overlap(&a.bbox, &b.bbox) > 0.0 && same_depth(a, b)
        }
        Relation::InFrontOf => match (a.depth_mm, b.depth_mm) {
            (Some(da), Some(db)) => da + 150.0 < db,
            // Without depth, nearer objects stand lower in the picture (common practice for a level camera).
            _ => a.bbox.y1 as f32 > b.bbox.y1 as f32 + margin_y(a, b),
        },
        Relation::Behind => match (a.depth_mm, b.depth_mm) {
            (Some(da), Some(db)) => da > db + 150.0,
            _ => a.bbox.y1 as f32 + margin_y(a, b) < b.bbox.y1 as f32,
        },
        Relation::Inside => {
            let overlap = horizontal_overlap(&a.bbox, &b.bbox) * vertical_overlap(&a.bbox, &b.bbox);
            overlap >= 0.9 * a.bbox.area().max(1) as f32
        }
        Relation::Between => {
            let Some(other) = landmarks.get(1) else {
                return false;
            };
            let (low, high) = if b.centroid.0 <= other.centroid.0 {
                (b, other)
            } else {
                (other, b)
            };
            a.centroid.0 > low.centroid.0
                && a.centroid.0 < high.centroid.0
                && vertical_overlap(&a.bbox, &low.bbox) > 0.0
                && vertical_overlap(&a.bbox, &high.bbox) > 0.0
        }
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
