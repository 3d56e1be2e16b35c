//! Checks the geometric measures against shapely through a committed fixture.
//!
//! Owns: the fixture-driven test of `sayso_core::geometry` boxes and polygons.
//! Must not: run Python; the fixture was made by tests/fixtures/geometry/make_geometry_cases.py.

mod support;

use sayso_core::geometry::{Point, Polygon, Rect};
use serde::Deserialize;

#[derive(Deserialize)]
struct Fixture {
    source: String,
    cases: Vec<Case>,
}

#[derive(Deserialize)]
struct Case {
    kind: String,
    mode: String,
    a: serde_json::Value,
    b: serde_json::Value,
    intersection_area: f64,
    intersects: bool,
    touches: bool,
    a_covers_b: bool,
    b_covers_a: bool,
    a_contains_b: bool,
    distance: f64,
}

fn rect(value: &serde_json::Value) -> Rect {
    let corners: [f64; 4] =
        serde_json::from_value(value.clone()).expect("a box is [x0, y0, x1, y1]");
    Rect::new(corners[0], corners[1], corners[2], corners[3]).expect("fixture boxes are valid")
}

fn polygon(value: &serde_json::Value) -> Polygon {
    let points: Vec<[f64; 2]> =
        serde_json::from_value(value.clone()).expect("a polygon is [[x, y], ...]");
    Polygon::new(points.iter().map(|&[x, y]| Point::new(x, y)).collect())
        .expect("fixture polygons are valid")
}

fn close(ours: f64, theirs: f64) -> bool {
    (ours - theirs).abs() <= 1e-9 * (1.0 + theirs.abs())
}

/// Reference: shapely (PyPI), fixture made by tests/fixtures/geometry/make_geometry_cases.py.
#[test]
fn boxes_and_polygons_match_shapely() {
    let path = support::workspace_file("tests/fixtures/geometry/geometry_cases.json");
    let fixture: Fixture =
        serde_json::from_str(&std::fs::read_to_string(&path).expect("fixture exists"))
            .expect("fixture parses");
    assert!(fixture.source.starts_with("shapely"));
    assert_eq!(fixture.cases.len(), 200);
    let mut checked_kinds = std::collections::BTreeMap::new();
    for (index, case) in fixture.cases.iter().enumerate() {
        let label = format!("case {index} ({} {})", case.kind, case.mode);
        let (area, intersects, touches, a_covers_b, b_covers_a, a_contains_b, distance) =
            if case.kind == "box" {
                let (a, b) = (rect(&case.a), rect(&case.b));
                // The polygon code must agree with the box code on boxes.
                let (pa, pb) = (Polygon::from_rect(&a), Polygon::from_rect(&b));
                assert!(
                    close(pa.intersection_area(&pb), a.intersection_area(&b)),
                    "{label}"
                );
                assert_eq!(pa.touches(&pb), a.touches(&b, 0.0), "{label}");
                (
                    a.intersection_area(&b),
                    a.intersects(&b),
                    a.touches(&b, 0.0),
                    a.contains(&b),
                    b.contains(&a),
                    a.contains(&b) && b.area() > 0.0,
                    a.gap_distance(&b),
                )
            } else {
                let (a, b) = (polygon(&case.a), polygon(&case.b));
                assert!(
                    close(a.intersection_area(&b), b.intersection_area(&a)),
                    "{label}"
                );
                (
                    a.intersection_area(&b),
                    a.intersects(&b),
                    a.touches(&b),
                    a.covers(&b),
                    b.covers(&a),
                    a.contains(&b),
                    a.distance(&b),
                )
            };
        assert!(
            close(area, case.intersection_area),
            "{label}: area {area} vs {}",
            case.intersection_area
        );
        assert_eq!(intersects, case.intersects, "{label}: intersects");
        assert_eq!(touches, case.touches, "{label}: touches");
        assert_eq!(a_covers_b, case.a_covers_b, "{label}: a covers b");
        assert_eq!(b_covers_a, case.b_covers_a, "{label}: b covers a");
        assert_eq!(a_contains_b, case.a_contains_b, "{label}: a contains b");
        assert!(
            close(distance, case.distance),
            "{label}: distance {distance} vs {}",
            case.distance
        );
        *checked_kinds.entry(case.kind.as_str()).or_insert(0) += 1;
    }
    assert_eq!(
        checked_kinds.len(),
        3,
        "boxes, convex and non-convex polygons all checked"
    );
}
