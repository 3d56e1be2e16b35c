//! Plane geometry shared by the scene graph and the relation factors of the energy: boxes, polygons, and
//! the spatial relations between objects (left of, on, inside, between...).
//!
//! Owns: `Point`, `Rect` (axis-aligned box) and `Polygon`, their measures (area, overlap, IoU,
//! containment, touching, distance), `GeometryError`, and the relation predicates with their thresholds
//! (`relations`). Coordinates are image pixels, `x` to the right and `y` downwards, in `f64`.
//! Must not: know about classes, segments, hypotheses or the solver; callers turn their objects into
//! shapes first. Being the same code for the output scene graph and for the constraint factors is the
//! point: a relation the operator asked for is judged exactly as the scene graph will later report it.

pub mod boxes;
pub mod polygon;
pub mod relations;

pub use boxes::{Point, Rect};
pub use polygon::Polygon;
pub use relations::{Placed, RelationThresholds};

/// A shape that cannot be built.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum GeometryError {
    #[error("coordinate {value} of {what} is not a finite number")]
    NotFinite { what: &'static str, value: f64 },
    #[error("box has x0 {x0} > x1 {x1} or y0 {y0} > y1 {y1}")]
    InvertedBox { x0: f64, y0: f64, x1: f64, y1: f64 },
    #[error("a polygon needs at least 3 vertices, got {count}")]
    TooFewVertices { count: usize },
    #[error("a depth of {value} mm is not a finite, positive number")]
    BadDepth { value: f64 },
}
