//! The spatial relations between two objects (or, for `between`, three), judged from their boxes in the
//! image and, when known, their depth.
//!
//! Owns: `Placed` (a box with an optional depth), `RelationThresholds` and one predicate per relation.
//! Must not: know the words for the relations or the classes of the objects; the energy and the scene
//! graph map their own relation names onto these functions.
//!
//! Every predicate reads "subject RELATION landmark" (`left_of(mug, sink)`: the mug is left of the
//! sink). Image axes: `x` to the right, `y` downwards, so "above" means a smaller `y`. The thresholds are
//! common-practice choices of ours, not values from a standard; each is documented on its field.
//!
//! * `left_of`, `right_of`, `above`, `below`: the subject's centre lies in the 90-degree cone around
//!   that direction from the landmark's centre (the dominant axis of the offset decides), and neither
//!   box is inside the other.
//! * `on`: the subject overlaps the landmark horizontally by at least `support_overlap` of its width,
//!   its bottom edge lies between `contact_tolerance` above the landmark's top edge and the landmark's
//!   vertical middle, its centre is above the landmark's centre, and, with depth for both, their
//!   depths differ by at most `contact_depth_mm`.
//! * `under`: the subject overlaps the landmark horizontally by at least `support_overlap` of its width,
//!   its centre is below the landmark's centre, and its bottom edge reaches the landmark's bottom edge
//!   (within `contact_tolerance`) or lower.
//! * `next_to`: the gap between the boxes is at most `near_fraction` of the larger of the two boxes'
//!   shorter sides, neither box is inside the other, their IoU is below `distinct_iou`, and, with depth
//!   for both, their depths differ by at most `near_depth_mm`.
//! * `inside`: at least `inside_fraction` of the subject's area lies in the landmark, which is larger.
//! * `between`: the subject's centre lies in the convex hull of the two landmarks' boxes but in neither
//!   box.
//! * `in_front_of`, `behind`: the boxes overlap horizontally and, with depth for both, the subject is
//!   nearer (farther) than the landmark by at least `depth_margin_mm` or `depth_margin_fraction` of the
//!   landmark's depth, whichever is larger. Without depth, the ground-contact cue stands in: the nearer
//!   object's bottom edge is lower in the image by at least `contact_tolerance`.

use serde::{Deserialize, Serialize};

use super::boxes::{Point, Rect};
use super::polygon::{PointLocation, Polygon};
use super::GeometryError;

/// An object's box in the image and, when a depth map exists, its typical depth in millimetres.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Placed {
    pub rect: Rect,
    pub depth_mm: Option<f64>,
}

impl Placed {
    /// An object without depth.
    pub fn flat(rect: Rect) -> Placed {
        Placed {
            rect,
            depth_mm: None,
        }
    }

    /// An object with a depth, which must be finite and positive.
    pub fn with_depth(rect: Rect, depth_mm: f64) -> Result<Placed, GeometryError> {
        if !depth_mm.is_finite() || depth_mm <= 0.0 {
            return Err(GeometryError::BadDepth { value: depth_mm });
        }
        Ok(Placed {
            rect,
            depth_mm: Some(depth_mm),
        })
    }
}

/// The thresholds of the relation predicates. All are common-practice choices of ours.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct RelationThresholds {
    /// Share of a box's area inside another for "inside" (and for "one box is inside the other").
    pub inside_fraction: f64,
    /// Share of the subject's width that must overlap the landmark for "on" and "under".
    pub support_overlap: f64,
    /// Slack in pixels for edges meeting ("on", "under", the ground-contact cue); the larger of this
    /// and `contact_tolerance_fraction` of the subject's height is used.
    pub contact_tolerance_px: f64,
    pub contact_tolerance_fraction: f64,
    /// Largest depth difference for objects in contact ("on").
    pub contact_depth_mm: f64,
    /// Largest gap for "next to", as a share of the larger of the two boxes' shorter sides.
    pub near_fraction: f64,
    /// Largest depth difference for "next to".
    pub near_depth_mm: f64,
    /// Boxes overlapping this much (IoU) are the same place, not neighbours.
    pub distinct_iou: f64,
    /// Smallest depth difference for "in front of" / "behind": the larger of the two margins.
    pub depth_margin_mm: f64,
    pub depth_margin_fraction: f64,
}

impl Default for RelationThresholds {
    fn default() -> Self {
        RelationThresholds {
            inside_fraction: 0.9,
            support_overlap: 0.5,
            contact_tolerance_px: 3.0,
            contact_tolerance_fraction: 0.15,
            contact_depth_mm: 500.0,
            near_fraction: 0.5,
            near_depth_mm: 500.0,
            distinct_iou: 0.5,
            depth_margin_mm: 100.0,
            depth_margin_fraction: 0.05,
        }
    }
}

impl RelationThresholds {
    fn contact_tolerance(&self, subject: &Rect) -> f64 {
        self.contact_tolerance_px
            .max(self.contact_tolerance_fraction * subject.height())
    }

    fn either_inside(&self, a: &Rect, b: &Rect) -> bool {
        a.fraction_inside(b) >= self.inside_fraction || b.fraction_inside(a) >= self.inside_fraction
    }

    /// The subject's centre offset from the landmark's centre, `(dx, dy)`.
    fn offset(subject: &Rect, landmark: &Rect) -> (f64, f64) {
        let (s, l) = (subject.centre(), landmark.centre());
        (s.x - l.x, s.y - l.y)
    }

    pub fn left_of(&self, subject: &Placed, landmark: &Placed) -> bool {
        let (dx, dy) = Self::offset(&subject.rect, &landmark.rect);
        -dx > dy.abs() && !self.either_inside(&subject.rect, &landmark.rect)
    }

    pub fn right_of(&self, subject: &Placed, landmark: &Placed) -> bool {
        self.left_of(landmark, subject)
    }

    pub fn above(&self, subject: &Placed, landmark: &Placed) -> bool {
        let (dx, dy) = Self::offset(&subject.rect, &landmark.rect);
        -dy > dx.abs() && !self.either_inside(&subject.rect, &landmark.rect)
    }

    pub fn below(&self, subject: &Placed, landmark: &Placed) -> bool {
        self.above(landmark, subject)
    }

    fn supported_overlap(&self, subject: &Rect, landmark: &Rect) -> bool {
        let width = subject.width();
        let overlap = subject.horizontal_overlap(landmark);
        if width > 0.0 {
            overlap >= self.support_overlap * width
        } else {
            overlap >= 0.0
        }
    }

    pub fn on(&self, subject: &Placed, landmark: &Placed) -> bool {
        let (s, l) = (&subject.rect, &landmark.rect);
        let tolerance = self.contact_tolerance(s);
        let bottom_meets_top = s.y1() >= l.y0() - tolerance && s.y1() <= l.centre().y;
        let depth_agrees = match (subject.depth_mm, landmark.depth_mm) {
            (Some(a), Some(b)) => (a - b).abs() <= self.contact_depth_mm,
            _ => true,
        };
        self.supported_overlap(s, l)
            && bottom_meets_top
            && s.centre().y < l.centre().y
            && depth_agrees
    }

    pub fn under(&self, subject: &Placed, landmark: &Placed) -> bool {
        let (s, l) = (&subject.rect, &landmark.rect);
        let tolerance = self.contact_tolerance(s);
        self.supported_overlap(s, l) && s.centre().y > l.centre().y && s.y1() >= l.y1() - tolerance
    }

    pub fn next_to(&self, subject: &Placed, landmark: &Placed) -> bool {
        let (s, l) = (&subject.rect, &landmark.rect);
        let scale = s.width().min(s.height()).max(l.width().min(l.height()));
        let depth_agrees = match (subject.depth_mm, landmark.depth_mm) {
            (Some(a), Some(b)) => (a - b).abs() <= self.near_depth_mm,
            _ => true,
        };
        s.gap_distance(l) <= self.near_fraction * scale
            && !self.either_inside(s, l)
            && s.iou(l) < self.distinct_iou
            && depth_agrees
    }

    pub fn inside(&self, subject: &Placed, landmark: &Placed) -> bool {
        subject.rect.fraction_inside(&landmark.rect) >= self.inside_fraction
            && subject.rect.area() < landmark.rect.area()
    }

    pub fn between(&self, subject: &Placed, first: &Placed, second: &Placed) -> bool {
        let centre = subject.rect.centre();
        if first.rect.contains_point(centre) || second.rect.contains_point(centre) {
            return false;
        }
        let mut corners: Vec<Point> = first.rect.corners().to_vec();
        corners.extend(second.rect.corners());
        match convex_hull(corners) {
            Some(hull) => hull.locate(centre) != PointLocation::Outside,
            None => false,
        }
    }

    pub fn in_front_of(&self, subject: &Placed, landmark: &Placed) -> bool {
        let (s, l) = (&subject.rect, &landmark.rect);
        if s.horizontal_overlap(l) <= 0.0 {
            return false;
        }
        match (subject.depth_mm, landmark.depth_mm) {
            (Some(near), Some(far)) => {
                near + self.depth_margin_mm.max(self.depth_margin_fraction * far) <= far
            }
            _ => s.y1() >= l.y1() + self.contact_tolerance(s),
        }
    }

    pub fn behind(&self, subject: &Placed, landmark: &Placed) -> bool {
        self.in_front_of(landmark, subject)
    }
}

/// The convex hull of the points (Andrew's monotone chain); `None` when they are all collinear.
fn convex_hull(mut points: Vec<Point>) -> Option<Polygon> {
    points.sort_by(|a, b| a.x.total_cmp(&b.x).then(a.y.total_cmp(&b.y)));
    points.dedup();
    let turn = |o: Point, a: Point, b: Point| (a.x - o.x) * (b.y - o.y) - (a.y - o.y) * (b.x - o.x);
    let half_hull = |ordered: &mut dyn Iterator<Item = Point>| {
        let mut chain: Vec<Point> = Vec::new();
        for point in ordered {
            while chain.len() >= 2
                && turn(chain[chain.len() - 2], chain[chain.len() - 1], point) <= 0.0
            {
                chain.pop();
            }
            chain.push(point);
        }
        chain.pop();
        chain
    };
    let mut hull = half_hull(&mut points.iter().copied());
    hull.extend(half_hull(&mut points.iter().rev().copied()));
    Polygon::new(hull).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn placed(x0: f64, y0: f64, x1: f64, y1: f64) -> Placed {
        Placed::flat(Rect::new(x0, y0, x1, y1).unwrap())
    }

    /// A kitchen corner of the Juniper Lane flat, drawn on graph paper: a counter, a kettle standing on
    /// it, a mug beside the kettle, a cat under the counter and a bread bin at the far end.
    #[test]
    fn the_juniper_lane_kitchen_corner() {
        let rules = RelationThresholds::default();
        let counter = placed(100.0, 300.0, 600.0, 460.0);
        let kettle = placed(200.0, 220.0, 260.0, 305.0);
        let mug = placed(275.0, 270.0, 300.0, 302.0);
        let cat = placed(300.0, 400.0, 380.0, 475.0);
        let bread_bin = placed(500.0, 240.0, 580.0, 302.0);
        assert!(rules.on(&kettle, &counter));
        assert!(rules.on(&mug, &counter));
        assert!(!rules.on(&counter, &kettle));
        assert!(rules.next_to(&mug, &kettle) && rules.next_to(&kettle, &mug));
        assert!(!rules.next_to(&mug, &bread_bin));
        assert!(rules.left_of(&kettle, &bread_bin) && rules.right_of(&bread_bin, &kettle));
        assert!(!rules.left_of(&bread_bin, &kettle));
        assert!(rules.above(&kettle, &cat) && rules.below(&cat, &kettle));
        assert!(rules.under(&cat, &counter));
        assert!(!rules.under(&kettle, &counter));
        assert!(rules.between(&mug, &kettle, &bread_bin));
        assert!(!rules.between(&cat, &kettle, &bread_bin));
        assert!(rules.inside(&placed(120.0, 320.0, 180.0, 380.0), &counter));
        assert!(!rules.inside(&kettle, &counter));
        // Without depth the lower bottom edge is nearer: the cat is in front of the counter.
        assert!(rules.in_front_of(&cat, &counter) && rules.behind(&counter, &cat));
        // With depth, depth decides.
        let near_mug = Placed::with_depth(mug.rect, 1200.0).unwrap();
        let far_kettle = Placed::with_depth(kettle.rect, 1600.0).unwrap();
        assert!(
            !rules.in_front_of(&near_mug, &far_kettle),
            "no horizontal overlap"
        );
        let far_bin =
            Placed::with_depth(Rect::new(280.0, 200.0, 340.0, 300.0).unwrap(), 1600.0).unwrap();
        assert!(rules.in_front_of(&near_mug, &far_bin) && rules.behind(&far_bin, &near_mug));
        assert!(Placed::with_depth(mug.rect, f64::NAN).is_err());
    }
}
