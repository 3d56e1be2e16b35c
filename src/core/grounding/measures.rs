//! What grounding measures of a set of segments: its footprint (box, centroid, area, depth), its mean
//! colour, whether it lies in a named part of the picture, and whether it stands in a relation to others.
//!
//! Owns: `footprint_of`, `mean_colour`, `in_region` and `relation_holds`, the one test of a relation
//! between sets of segments that grounding and the energy's relation factors share.
//! Must not: know about words, hypotheses or classes; it looks at segments and the shared geometric
//! predicates (`super::predicates`, `crate::geometry`).

use super::predicates::{holds, Footprint};
use crate::geometry::{Rect, RelationThresholds};
use crate::ids::SegmentId;
use crate::language::constraint::{ImageRegion, Relation};
use crate::scene::Scene;

/// The footprint of a set of segments.
pub fn footprint_of(scene: &Scene, members: &[SegmentId]) -> Footprint {
    let (mut area, mut sum_x, mut sum_y) = (0u64, 0.0f64, 0.0f64);
    let (mut depth_sum, mut depth_weight) = (0.0f64, 0.0f64);
    let mut bbox: Option<crate::scene::BoundingBox> = None;
    for member in members {
        if let Some(stats) = scene.stats.get(member.index()) {
            let a = stats.area as u64;
            area += a;
            sum_x += stats.centroid.0 as f64 * a as f64;
            sum_y += stats.centroid.1 as f64 * a as f64;
            if let Some(depth) = stats.mean_depth_mm {
                depth_sum += depth as f64 * a as f64;
                depth_weight += a as f64;
            }
            bbox = Some(bbox.map(|b| b.union(&stats.bbox)).unwrap_or(stats.bbox));
        }
    }
    let denominator = area.max(1) as f64;
    Footprint {
        bbox: bbox.unwrap_or_default(),
        centroid: ((sum_x / denominator) as f32, (sum_y / denominator) as f32),
        area: area.min(u32::MAX as u64) as u32,
        depth_mm: (depth_weight > 0.0).then(|| (depth_sum / depth_weight) as f32),
    }
}

/// Whether the segments of `subject` stand in `relation` to the landmarks' segments: `holds` on their
/// footprints, except for "next to" when one box encloses the other (a wall, floor or rug behind or around
/// a thing: "the chair next to the wall"). Boxes cannot tell there whether the two touch, so the masks
/// decide: next to when a segment of one shares a boundary with a segment of the other and, with depth for
/// both, the two segments' depths differ by at most the shared `near_depth_mm` (a chair a metre in front
/// of a wall touches it in the picture only).
pub fn relation_holds(
    scene: &Scene,
    relation: Relation,
    subject: &[SegmentId],
    landmarks: &[&[SegmentId]],
) -> bool {
    let subject_footprint = footprint_of(scene, subject);
    let landmark_footprints: Vec<Footprint> = landmarks
        .iter()
        .map(|members| footprint_of(scene, members))
        .collect();
    if holds(relation, &subject_footprint, &landmark_footprints) {
        return true;
    }
    match (landmarks, landmark_footprints.first()) {
        ([landmark], Some(landmark_footprint)) => touching_next_to(
            scene,
            relation,
            (subject, &subject_footprint),
            (landmark, landmark_footprint),
        ),
        _ => false,
    }
}

/// `relation_holds` for one landmark whose footprint, like the subject's, is already measured (the scene
/// graph measures every object once and tests every pair).
pub fn relation_holds_measured(
    scene: &Scene,
    relation: Relation,
    subject: (&[SegmentId], &Footprint),
    landmark: (&[SegmentId], &Footprint),
) -> bool {
    holds(relation, subject.1, std::slice::from_ref(landmark.1))
        || touching_next_to(scene, relation, subject, landmark)
}

/// The mask test of "next to" when one box encloses the other (see `relation_holds`).
fn touching_next_to(
    scene: &Scene,
    relation: Relation,
    subject: (&[SegmentId], &Footprint),
    landmark: (&[SegmentId], &Footprint),
) -> bool {
    relation == Relation::NextTo
        && enclosed(subject.1, landmark.1)
        && touching(scene, subject.0, landmark.0)
}

/// One box lies (almost) wholly inside the other, by the shared `inside_fraction`.
fn enclosed(a: &Footprint, b: &Footprint) -> bool {
    let (a, b) = (
        Rect::from_bounding_box(&a.bbox),
        Rect::from_bounding_box(&b.bbox),
    );
    let fraction = RelationThresholds::default().inside_fraction;
    a.fraction_inside(&b) >= fraction || b.fraction_inside(&a) >= fraction
}

/// Some segment of `a` is adjacent to some segment of `b` at about the same depth, and the two share no
/// segment.
fn touching(scene: &Scene, a: &[SegmentId], b: &[SegmentId]) -> bool {
    // Membership of `b` as one flag per segment of the scene (cheaper than hashing every member, and this
    // runs for every pair of objects a scene graph relates); an id outside the scene is looked up in `b`.
    let segment_count = scene.segment_count();
    let mut in_b = vec![false; segment_count];
    for segment in b {
        if let Some(flag) = in_b.get_mut(segment.index()) {
            *flag = true;
        }
    }
    let b_contains = |segment: &SegmentId| match in_b.get(segment.index()) {
        Some(&flag) => flag,
        None => b.contains(segment),
    };
    if a.iter().any(b_contains) {
        return false;
    }
    let near_depth_mm = RelationThresholds::default().near_depth_mm;
    let depth = |segment: SegmentId| {
        scene
            .stats
            .get(segment.index())
            .and_then(|stats| stats.mean_depth_mm)
            .filter(|depth| depth.is_finite() && *depth > 0.0)
    };
    a.iter().any(|&segment| {
        let node = petgraph::graph::NodeIndex::new(segment.index());
        segment.index() < scene.adjacency.node_count()
            && scene.adjacency.neighbors(node).any(|neighbour| {
                let other = scene.adjacency[neighbour];
                b_contains(&other)
                    && match (depth(segment), depth(other)) {
                        (Some(x), Some(y)) => (f64::from(x) - f64::from(y)).abs() <= near_depth_mm,
                        _ => true,
                    }
            })
    })
}

/// Mean CIELAB colour of a set of segments, area-weighted.
pub fn mean_colour(scene: &Scene, members: &[SegmentId]) -> crate::color::Lab {
    let (mut l, mut a, mut b, mut total) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for member in members {
        if let Some(stats) = scene.stats.get(member.index()) {
            let w = stats.area.max(1) as f64;
            l += stats.mean_lab.l as f64 * w;
            a += stats.mean_lab.a as f64 * w;
            b += stats.mean_lab.b as f64 * w;
            total += w;
        }
    }
    let total = total.max(1e-9);
    crate::color::Lab {
        l: (l / total) as f32,
        a: (a / total) as f32,
        b: (b / total) as f32,
    }
}

/// Whether a footprint lies in a named part of the image (thirds of the width or height).
pub fn in_region(footprint: &Footprint, region: ImageRegion, width: u32, height: u32) -> bool {
    let (x, y) = (
        footprint.centroid.0 / width.max(1) as f32,
        footprint.centroid.1 / height.max(1) as f32,
    );
    match region {
        ImageRegion::Left => x < 1.0 / 3.0,
        ImageRegion::Right => x > 2.0 / 3.0,
        ImageRegion::Top => y < 1.0 / 3.0,
        ImageRegion::Bottom => y > 2.0 / 3.0,
        ImageRegion::Centre => {
            (1.0 / 3.0..=2.0 / 3.0).contains(&x) && (1.0 / 3.0..=2.0 / 3.0).contains(&y)
        }
        ImageRegion::Corner => !(0.25..=0.75).contains(&x) && !(0.25..=0.75).contains(&y),
        // Far from the camera: higher in the picture, or deeper than 3 m when depth exists.
        ImageRegion::Back => match footprint.depth_mm {
            Some(depth) => depth > 3000.0,
            None => y < 0.5,
        },
        ImageRegion::Front => match footprint.depth_mm {
            Some(depth) => depth < 1500.0,
            None => y > 0.5,
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::test_scenes::blocks;

    /// `touching` as first written, with the landmark's members in a hash set: the reference.
    fn touching_by_hash_set(scene: &Scene, a: &[SegmentId], b: &[SegmentId]) -> bool {
        let b_set: std::collections::HashSet<SegmentId> = b.iter().copied().collect();
        if a.iter().any(|segment| b_set.contains(segment)) {
            return false;
        }
        a.iter().any(|&segment| {
            let node = petgraph::graph::NodeIndex::new(segment.index());
            segment.index() < scene.adjacency.node_count()
                && scene
                    .adjacency
                    .neighbors(node)
                    .any(|neighbour| b_set.contains(&scene.adjacency[neighbour]))
        })
    }

    /// Two neighbouring segments touch; a set never touches one it shares a segment with; a segment id
    /// outside the scene touches nothing.
    #[test]
    fn neighbours_touch_and_shared_segments_do_not() {
        let scene = blocks();
        let first = petgraph::graph::NodeIndex::new(0);
        let neighbour = scene
            .adjacency
            .neighbors(first)
            .next()
            .map(|node| scene.adjacency[node])
            .expect("segment 0 has a neighbour");
        let (zero, beside) = (vec![SegmentId(0)], vec![neighbour]);
        assert!(touching(scene, &zero, &beside));
        assert!(touching(scene, &beside, &zero));
        let both = vec![SegmentId(0), neighbour];
        assert!(!touching(scene, &zero, &both));
        let outside = vec![SegmentId(scene.segment_count() as u32 + 5)];
        assert!(!touching(scene, &outside, &beside));
        assert!(!touching(scene, &outside, &outside));
    }

    proptest::proptest! {
        /// Member flags give the answer the hash set gives (the picture has no depth, so adjacency and
        /// shared segments decide), ids outside the scene included.
        #[test]
        fn touching_matches_the_hash_set_reference(
            a in proptest::collection::vec(0u32..80, 0..10),
            b in proptest::collection::vec(0u32..80, 0..10),
        ) {
            let scene = blocks();
            let ids = |picks: &[u32]| picks.iter().map(|&p| SegmentId(p)).collect::<Vec<_>>();
            let (a, b) = (ids(&a), ids(&b));
            proptest::prop_assert_eq!(touching(scene, &a, &b), touching_by_hash_set(scene, &a, &b));
        }
    }
}
