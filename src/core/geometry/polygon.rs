//! Simple polygons (no holes, no self-crossings): area, point location, overlap area, covering,
//! intersecting, touching and distance.
//!
//! Owns: `Polygon`, `PointLocation` and the segment primitives they use.
//! Must not: know what the polygons outline. Comparisons are exact (no epsilon): results are exact for
//! coordinates on a coarse grid such as whole or half pixels, and within rounding otherwise.

use serde::{Deserialize, Serialize};

use super::boxes::{Point, Rect};
use super::GeometryError;

/// Where a point lies relative to a polygon.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PointLocation {
    Inside,
    Boundary,
    Outside,
}

/// A simple polygon given by its vertices in order (either orientation, not repeating the first).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Polygon {
    vertices: Vec<Point>,
}

/// The cross product of `b - a` and `c - a`: positive when `a, b, c` turn counter-clockwise in maths
/// axes, zero when collinear.
fn cross(a: Point, b: Point, c: Point) -> f64 {
    (b.x - a.x) * (c.y - a.y) - (b.y - a.y) * (c.x - a.x)
}

/// Whether `p` lies on the closed segment `a b`.
fn on_segment(a: Point, b: Point, p: Point) -> bool {
    cross(a, b, p) == 0.0
        && p.x >= a.x.min(b.x)
        && p.x <= a.x.max(b.x)
        && p.y >= a.y.min(b.y)
        && p.y <= a.y.max(b.y)
}

/// Whether the closed segments `a b` and `c d` share a point.
fn segments_intersect(a: Point, b: Point, c: Point, d: Point) -> bool {
    let d1 = cross(c, d, a);
    let d2 = cross(c, d, b);
    let d3 = cross(a, b, c);
    let d4 = cross(a, b, d);
    if ((d1 > 0.0 && d2 < 0.0) || (d1 < 0.0 && d2 > 0.0))
        && ((d3 > 0.0 && d4 < 0.0) || (d3 < 0.0 && d4 > 0.0))
    {
        return true;
    }
    on_segment(c, d, a) || on_segment(c, d, b) || on_segment(a, b, c) || on_segment(a, b, d)
}

/// Distance from `p` to the closed segment `a b`.
fn point_segment_distance(p: Point, a: Point, b: Point) -> f64 {
    let (dx, dy) = (b.x - a.x, b.y - a.y);
    let length_squared = dx * dx + dy * dy;
    if length_squared == 0.0 {
        return p.distance(a);
    }
    let t = (((p.x - a.x) * dx + (p.y - a.y) * dy) / length_squared).clamp(0.0, 1.0);
    p.distance(Point::new(a.x + t * dx, a.y + t * dy))
}

/// Distance between the closed segments `a b` and `c d`.
fn segment_distance(a: Point, b: Point, c: Point, d: Point) -> f64 {
    if segments_intersect(a, b, c, d) {
        return 0.0;
    }
    point_segment_distance(a, c, d)
        .min(point_segment_distance(b, c, d))
        .min(point_segment_distance(c, a, b))
        .min(point_segment_distance(d, a, b))
}

/// Parameters `t` in `[0, 1]` along `a -> b` where the segment meets `c d` (crossings, touching
/// endpoints and the ends of a collinear overlap).
fn meeting_parameters(a: Point, b: Point, c: Point, d: Point, into: &mut Vec<f64>) {
    let (rx, ry) = (b.x - a.x, b.y - a.y);
    let (sx, sy) = (d.x - c.x, d.y - c.y);
    let denominator = rx * sy - ry * sx;
    let length_squared = rx * rx + ry * ry;
    if length_squared == 0.0 {
        return;
    }
    if denominator == 0.0 {
        for p in [c, d] {
            if on_segment(a, b, p) {
                into.push(((p.x - a.x) * rx + (p.y - a.y) * ry) / length_squared);
            }
        }
        return;
    }
    let t = ((c.x - a.x) * sy - (c.y - a.y) * sx) / denominator;
    let u = ((c.x - a.x) * ry - (c.y - a.y) * rx) / denominator;
    if (0.0..=1.0).contains(&t) && (0.0..=1.0).contains(&u) {
        into.push(t);
    }
}

/// The part of `subject` inside the half-plane left of `a -> b` (Sutherland-Hodgman, one edge).
fn clip_to_half_plane(subject: &[Point], a: Point, b: Point, orientation: f64) -> Vec<Point> {
    let mut output = Vec::with_capacity(subject.len() + 2);
    let Some(&last) = subject.last() else {
        return output;
    };
    let mut previous = last;
    for &current in subject {
        let current_side = cross(a, b, current) * orientation;
        let previous_side = cross(a, b, previous) * orientation;
        if current_side >= 0.0 {
            if previous_side < 0.0 {
                output.push(crossing(previous, current, previous_side, current_side));
            }
            output.push(current);
        } else if previous_side >= 0.0 {
            output.push(crossing(previous, current, previous_side, current_side));
        }
        previous = current;
    }
    output
}

/// The point on `p -> q` where the signed side changes from `side_p` to `side_q`.
fn crossing(p: Point, q: Point, side_p: f64, side_q: f64) -> Point {
    let t = side_p / (side_p - side_q);
    Point::new(p.x + t * (q.x - p.x), p.y + t * (q.y - p.y))
}

fn shoelace(vertices: &[Point]) -> f64 {
    let mut twice = 0.0;
    for (index, &p) in vertices.iter().enumerate() {
        let q = vertices[(index + 1) % vertices.len()];
        twice += p.x * q.y - q.x * p.y;
    }
    twice / 2.0
}

impl Polygon {
    /// A polygon from at least three finite vertices; a repeated closing vertex is dropped.
    pub fn new(mut vertices: Vec<Point>) -> Result<Polygon, GeometryError> {
        if vertices.len() > 1 && vertices.first() == vertices.last() {
            vertices.pop();
        }
        if vertices.len() < 3 {
            return Err(GeometryError::TooFewVertices {
                count: vertices.len(),
            });
        }
        for vertex in &vertices {
            for value in [vertex.x, vertex.y] {
                if !value.is_finite() {
                    return Err(GeometryError::NotFinite {
                        what: "polygon vertex",
                        value,
                    });
                }
            }
        }
        Ok(Polygon { vertices })
    }

    /// The outline of a box.
    pub fn from_rect(rect: &Rect) -> Polygon {
        Polygon {
            vertices: rect.corners().to_vec(),
        }
    }

    pub fn vertices(&self) -> &[Point] {
        &self.vertices
    }

    fn edges(&self) -> impl Iterator<Item = (Point, Point)> + '_ {
        let count = self.vertices.len();
        (0..count).map(move |index| (self.vertices[index], self.vertices[(index + 1) % count]))
    }

    /// Signed area: positive for counter-clockwise order in maths axes (clockwise on screen).
    pub fn signed_area(&self) -> f64 {
        shoelace(&self.vertices)
    }

    pub fn area(&self) -> f64 {
        self.signed_area().abs()
    }

    /// The axis-aligned box around the polygon.
    pub fn bounding_rect(&self) -> Rect {
        let mut rect = (
            f64::INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NEG_INFINITY,
        );
        for vertex in &self.vertices {
            rect = (
                rect.0.min(vertex.x),
                rect.1.min(vertex.y),
                rect.2.max(vertex.x),
                rect.3.max(vertex.y),
            );
        }
        Rect::new(rect.0, rect.1, rect.2, rect.3).unwrap_or_else(|_| {
            // Unreachable: vertices are finite and there are at least three.
            Rect::from_bounding_box(&Default::default())
        })
    }

    /// Whether every turn goes the same way (collinear vertices allowed).
    pub fn is_convex(&self) -> bool {
        let count = self.vertices.len();
        let mut sign = 0.0f64;
        for index in 0..count {
            let turn = cross(
                self.vertices[index],
                self.vertices[(index + 1) % count],
                self.vertices[(index + 2) % count],
            );
            if turn != 0.0 {
                if sign != 0.0 && turn.signum() != sign {
                    return false;
                }
                sign = turn.signum();
            }
        }
        true
    }

    /// Where `point` lies: inside, on the boundary, or outside (crossing-number test).
    pub fn locate(&self, point: Point) -> PointLocation {
        let mut inside = false;
        for (a, b) in self.edges() {
            if on_segment(a, b, point) {
                return PointLocation::Boundary;
            }
            if (a.y > point.y) != (b.y > point.y) {
                let x_at = a.x + (point.y - a.y) / (b.y - a.y) * (b.x - a.x);
                if point.x < x_at {
                    inside = !inside;
                }
            }
        }
        if inside {
            PointLocation::Inside
        } else {
            PointLocation::Outside
        }
    }

    /// Splits the polygon into triangles (ear clipping); their areas sum to the polygon's area.
    pub fn triangles(&self) -> Vec<[Point; 3]> {
        let mut ring: Vec<Point> = self.vertices.clone();
        if shoelace(&ring) < 0.0 {
            ring.reverse();
        }
        let mut triangles = Vec::with_capacity(ring.len().saturating_sub(2));
        let mut guard = 0usize;
        while ring.len() > 3 && guard < 4 * self.vertices.len() * self.vertices.len() {
            guard += 1;
            let count = ring.len();
            let mut clipped = false;
            for index in 0..count {
                let (previous, current, next) = (
                    ring[(index + count - 1) % count],
                    ring[index],
                    ring[(index + 1) % count],
                );
                let turn = cross(previous, current, next);
                if turn == 0.0 {
                    // A collinear vertex adds nothing; drop it.
                    ring.remove(index);
                    clipped = true;
                    break;
                }
                if turn < 0.0 {
                    continue;
                }
                let blocked = ring.iter().enumerate().any(|(other, &p)| {
                    other != index
                        && other != (index + 1) % count
                        && other != (index + count - 1) % count
                        && cross(previous, current, p) >= 0.0
                        && cross(current, next, p) >= 0.0
                        && cross(next, previous, p) >= 0.0
                });
                if !blocked {
                    triangles.push([previous, current, next]);
                    ring.remove(index);
                    clipped = true;
                    break;
                }
            }
            if !clipped {
                break;
            }
        }
        if ring.len() == 3 {
            triangles.push([ring[0], ring[1], ring[2]]);
        }
        triangles
    }

    /// The area of `self` inside the convex polygon `clip` (Sutherland-Hodgman).
    fn area_inside_convex(subject: &[Point], clip: &[Point]) -> f64 {
        let orientation = shoelace(clip).signum();
        if orientation == 0.0 {
            return 0.0;
        }
        let mut piece = subject.to_vec();
        for index in 0..clip.len() {
            piece = clip_to_half_plane(
                &piece,
                clip[index],
                clip[(index + 1) % clip.len()],
                orientation,
            );
            if piece.is_empty() {
                return 0.0;
            }
        }
        shoelace(&piece).abs()
    }

    /// The area of the intersection of the two polygons. Exact up to rounding for any simple polygons:
    /// the second is cut into convex triangles when it is not convex.
    pub fn intersection_area(&self, other: &Polygon) -> f64 {
        if !self.bounding_rect().intersects(&other.bounding_rect()) {
            return 0.0;
        }
        if other.is_convex() {
            return Polygon::area_inside_convex(&self.vertices, &other.vertices);
        }
        if self.is_convex() {
            return Polygon::area_inside_convex(&other.vertices, &self.vertices);
        }
        other
            .triangles()
            .iter()
            .map(|triangle| Polygon::area_inside_convex(&self.vertices, triangle))
            .sum()
    }

    /// Whether the boundaries or interiors share any point (shapely's `intersects`).
    pub fn intersects(&self, other: &Polygon) -> bool {
        if !self.bounding_rect().intersects(&other.bounding_rect()) {
            return false;
        }
        for (a, b) in self.edges() {
            for (c, d) in other.edges() {
                if segments_intersect(a, b, c, d) {
                    return true;
                }
            }
        }
        self.locate(other.vertices[0]) != PointLocation::Outside
            || other.locate(self.vertices[0]) != PointLocation::Outside
    }

    /// Whether no point of `other` lies outside `self` (shapely's `covers`): every piece of `other`'s
    /// boundary between meeting points with `self`'s boundary is checked at its middle.
    pub fn covers(&self, other: &Polygon) -> bool {
        let mut parameters = Vec::new();
        for (a, b) in other.edges() {
            parameters.clear();
            parameters.extend([0.0, 1.0]);
            for (c, d) in self.edges() {
                meeting_parameters(a, b, c, d, &mut parameters);
            }
            parameters.sort_by(f64::total_cmp);
            if self.locate(a) == PointLocation::Outside {
                return false;
            }
            for pair in parameters.windows(2) {
                let middle = (pair[0] + pair[1]) / 2.0;
                let point = Point::new(a.x + middle * (b.x - a.x), a.y + middle * (b.y - a.y));
                if self.locate(point) == PointLocation::Outside {
                    return false;
                }
            }
        }
        true
    }

    /// `covers` with interiors meeting (shapely's `contains`, for polygons with area).
    pub fn contains(&self, other: &Polygon) -> bool {
        self.covers(other) && other.area() > 0.0
    }

    /// Whether the polygons meet only on their boundaries (shapely's `touches`).
    pub fn touches(&self, other: &Polygon) -> bool {
        self.intersects(other) && self.intersection_area(other) == 0.0
    }

    /// The distance between the closest points (0 when they intersect).
    pub fn distance(&self, other: &Polygon) -> f64 {
        if self.intersects(other) {
            return 0.0;
        }
        let mut best = f64::INFINITY;
        for (a, b) in self.edges() {
            for (c, d) in other.edges() {
                best = best.min(segment_distance(a, b, c, d));
            }
        }
        best
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn polygon(points: &[(f64, f64)]) -> Polygon {
        Polygon::new(points.iter().map(|&(x, y)| Point::new(x, y)).collect()).unwrap()
    }

    #[test]
    fn an_l_shape_measured_by_hand() {
        // An L: a 4 x 4 square without its top-right 2 x 2 quarter, area 12.
        let l_shape = polygon(&[
            (0.0, 0.0),
            (4.0, 0.0),
            (4.0, 2.0),
            (2.0, 2.0),
            (2.0, 4.0),
            (0.0, 4.0),
        ]);
        assert_eq!(l_shape.area(), 12.0);
        assert!(!l_shape.is_convex());
        let triangle_area: f64 = l_shape.triangles().iter().map(|t| shoelace(t).abs()).sum();
        assert_eq!(triangle_area, 12.0);
        let missing_quarter = polygon(&[(2.0, 2.0), (4.0, 2.0), (4.0, 4.0), (2.0, 4.0)]);
        assert_eq!(l_shape.intersection_area(&missing_quarter), 0.0);
        assert!(l_shape.touches(&missing_quarter));
        assert!(!l_shape.covers(&missing_quarter));
        let big = polygon(&[(-1.0, -1.0), (5.0, -1.0), (5.0, 5.0), (-1.0, 5.0)]);
        assert!(big.covers(&l_shape) && !l_shape.covers(&big));
        assert_eq!(l_shape.intersection_area(&big), 12.0);
        assert_eq!(big.intersection_area(&l_shape), 12.0);
        let far = polygon(&[(7.0, 0.0), (8.0, 0.0), (8.0, 1.0)]);
        assert_eq!(l_shape.distance(&far), 3.0);
        assert_eq!(l_shape.locate(Point::new(3.0, 3.0)), PointLocation::Outside);
        assert_eq!(l_shape.locate(Point::new(1.0, 3.0)), PointLocation::Inside);
        assert_eq!(
            l_shape.locate(Point::new(4.0, 1.0)),
            PointLocation::Boundary
        );
        assert!(Polygon::new(vec![Point::new(0.0, 0.0), Point::new(1.0, 1.0)]).is_err());
    }
}
