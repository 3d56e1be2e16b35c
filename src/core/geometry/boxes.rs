//! Points and axis-aligned boxes: area, overlap, IoU, containment, touching and gap distance.
//!
//! Owns: `Point`, `Rect` and their measures.
//! Must not: know what the boxes belong to; relations between objects live in `relations.rs`.

use serde::{Deserialize, Serialize};

use super::GeometryError;
use crate::scene::BoundingBox;

/// A point in image pixels (`y` grows downwards).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Point {
    pub x: f64,
    pub y: f64,
}

impl Point {
    /// The point `(x, y)`.
    pub fn new(x: f64, y: f64) -> Point {
        Point { x, y }
    }

    /// Euclidean distance to `other`.
    pub fn distance(self, other: Point) -> f64 {
        (self.x - other.x).hypot(self.y - other.y)
    }
}

/// An axis-aligned box covering `x0..x1` by `y0..y1` (a closed region; zero width or height allowed).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Rect {
    x0: f64,
    y0: f64,
    x1: f64,
    y1: f64,
}

impl Rect {
    /// A box from its corners; they must be finite with `x0 <= x1` and `y0 <= y1`.
    pub fn new(x0: f64, y0: f64, x1: f64, y1: f64) -> Result<Rect, GeometryError> {
        for value in [x0, y0, x1, y1] {
            if !value.is_finite() {
                return Err(GeometryError::NotFinite { what: "box", value });
            }
        }
        if x0 > x1 || y0 > y1 {
            return Err(GeometryError::InvertedBox { x0, y0, x1, y1 });
        }
        Ok(Rect { x0, y0, x1, y1 })
    }

    /// The pixel box of a scene (`x1`, `y1` exclusive, so the box covers whole pixels).
    pub fn from_bounding_box(bbox: &BoundingBox) -> Rect {
        let x1 = bbox.x1.max(bbox.x0);
        let y1 = bbox.y1.max(bbox.y0);
        Rect {
            x0: f64::from(bbox.x0),
            y0: f64::from(bbox.y0),
            x1: f64::from(x1),
            y1: f64::from(y1),
        }
    }

    pub fn x0(&self) -> f64 {
        self.x0
    }
    pub fn y0(&self) -> f64 {
        self.y0
    }
    pub fn x1(&self) -> f64 {
        self.x1
    }
    pub fn y1(&self) -> f64 {
        self.y1
    }

    pub fn width(&self) -> f64 {
        self.x1 - self.x0
    }

    pub fn height(&self) -> f64 {
        self.y1 - self.y0
    }

    pub fn area(&self) -> f64 {
        self.width() * self.height()
    }

    pub fn centre(&self) -> Point {
        Point::new((self.x0 + self.x1) / 2.0, (self.y0 + self.y1) / 2.0)
    }

    /// The four corners, counter-clockwise on screen starting top-left (clockwise in maths axes).
    pub fn corners(&self) -> [Point; 4] {
        [
            Point::new(self.x0, self.y0),
            Point::new(self.x0, self.y1),
            Point::new(self.x1, self.y1),
            Point::new(self.x1, self.y0),
        ]
    }

    /// Length of the overlap of the two boxes' x ranges (negative: the gap between them).
    pub fn horizontal_overlap(&self, other: &Rect) -> f64 {
        self.x1.min(other.x1) - self.x0.max(other.x0)
    }

    /// Length of the overlap of the two boxes' y ranges (negative: the gap between them).
    pub fn vertical_overlap(&self, other: &Rect) -> f64 {
        self.y1.min(other.y1) - self.y0.max(other.y0)
    }

    /// Area of the intersection (0 when the boxes only touch or are apart).
    pub fn intersection_area(&self, other: &Rect) -> f64 {
        self.horizontal_overlap(other).max(0.0) * self.vertical_overlap(other).max(0.0)
    }

    /// Intersection over union; 0 when both boxes have no area.
    pub fn iou(&self, other: &Rect) -> f64 {
        let intersection = self.intersection_area(other);
        let union = self.area() + other.area() - intersection;
        if union > 0.0 {
            intersection / union
        } else {
            0.0
        }
    }

    /// The share of this box's area inside `other` (1 for a degenerate box lying inside `other`).
    pub fn fraction_inside(&self, other: &Rect) -> f64 {
        let area = self.area();
        if area > 0.0 {
            self.intersection_area(other) / area
        } else if other.contains(self) {
            1.0
        } else {
            0.0
        }
    }

    /// Whether `other` lies entirely in this box, boundary included (shapely's `covers`).
    pub fn contains(&self, other: &Rect) -> bool {
        other.x0 >= self.x0 && other.x1 <= self.x1 && other.y0 >= self.y0 && other.y1 <= self.y1
    }

    /// Whether the boxes share at least one point (shapely's `intersects`).
    pub fn intersects(&self, other: &Rect) -> bool {
        self.horizontal_overlap(other) >= 0.0 && self.vertical_overlap(other) >= 0.0
    }

    /// Whether the boxes' boundaries come within `tolerance` of each other without their interiors
    /// overlapping by more than `tolerance` in depth. With `tolerance = 0` this is shapely's `touches`
    /// for boxes with area: they meet, but their interiors are disjoint.
    pub fn touches(&self, other: &Rect, tolerance: f64) -> bool {
        let overlap_depth = self
            .horizontal_overlap(other)
            .min(self.vertical_overlap(other));
        self.gap_distance(other) <= tolerance && overlap_depth <= tolerance
    }

    /// The Euclidean distance between the closest points of the boxes (0 when they meet).
    pub fn gap_distance(&self, other: &Rect) -> f64 {
        let dx = (-self.horizontal_overlap(other)).max(0.0);
        let dy = (-self.vertical_overlap(other)).max(0.0);
        dx.hypot(dy)
    }

    /// The smallest box containing both.
    pub fn union(&self, other: &Rect) -> Rect {
        Rect {
            x0: self.x0.min(other.x0),
            y0: self.y0.min(other.y0),
            x1: self.x1.max(other.x1),
            y1: self.y1.max(other.y1),
        }
    }

    /// Whether `point` lies in the box, boundary included.
    pub fn contains_point(&self, point: Point) -> bool {
        point.x >= self.x0 && point.x <= self.x1 && point.y >= self.y0 && point.y <= self.y1
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn measures_of_two_hand_worked_boxes() {
        let a = Rect::new(0.0, 0.0, 4.0, 2.0).unwrap();
        let b = Rect::new(2.0, 1.0, 6.0, 5.0).unwrap();
        assert_eq!(a.intersection_area(&b), 2.0);
        // Union 8 + 16 - 2 = 22.
        assert_eq!(a.iou(&b), 2.0 / 22.0);
        assert_eq!(a.fraction_inside(&b), 0.25);
        assert!(a.intersects(&b) && !a.touches(&b, 0.0));
        let c = Rect::new(7.0, 6.0, 8.0, 8.0).unwrap();
        assert_eq!(b.gap_distance(&c), 2f64.sqrt());
        let beside = Rect::new(4.0, 0.0, 5.0, 1.0).unwrap();
        assert!(a.touches(&beside, 0.0));
        assert!(Rect::new(1.0, 0.0, 0.0, 1.0).is_err());
        assert!(Rect::new(f64::NAN, 0.0, 1.0, 1.0).is_err());
    }
}
