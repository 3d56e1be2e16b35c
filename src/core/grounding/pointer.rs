//! Where a pointed pixel reaches: the thing under the pointer as the picture draws it, grown from the pointed
//! segment over neighbours of like colour and depth, and stopped at colour edges and depth steps.
//!
//! Owns: `pointed_region` and its thresholds. Must not: look at labels or hypotheses (what the robot believes
//! is exactly what a pointing operator may be correcting) or decide what the region becomes.
//!
//! # The rule
//!
//! Best-first growth from the pointed segment: the neighbour of the region closest in mean colour to the
//! region's area-weighted mean joins when its colour differs from the member it borders by at most
//! `EDGE_DELTA_E`, from the region's mean by at most `REGION_DELTA_E` (CIE76), its mean depth differs from
//! that member's by at most `DEPTH_STEP` of the nearer one, and the region stays within `max_area` pixels.
//! When the growth does not close at edges but is stopped only by `max_area` (a door a shade darker than its
//! wall), it runs again at `TIGHTER` fractions of the thresholds and the first growth that closes is taken;
//! failing all, the tightest (a relabel that covers too little is completed by the solve; one that covers a
//! wall is not undone).
//! The thresholds were chosen on training renders (seeds from 200000, never the demo or trial seeds) with
//! `examples/pointer_reach.rs`, which reports how well the grown region covers the pointed ground-truth
//! object.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

use crate::color::Lab;
use crate::ids::SegmentId;
use crate::scene::Scene;

/// Colour step across one boundary that stops the growth (CIE76).
pub const EDGE_DELTA_E: f32 = 8.0;
/// Colour distance from the region's mean that stops the growth (CIE76).
pub const REGION_DELTA_E: f32 = 10.0;
/// Relative depth step across one boundary that stops the growth.
pub const DEPTH_STEP: f32 = 0.04;

#[derive(PartialEq)]
struct Candidate {
    distance: f32,
    segment: usize,
    from: usize,
}

impl Eq for Candidate {}

impl Ord for Candidate {
    fn cmp(&self, other: &Self) -> Ordering {
        // Smallest distance first.
        other
            .distance
            .total_cmp(&self.distance)
            .then(other.segment.cmp(&self.segment))
    }
}

impl PartialOrd for Candidate {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

fn depth_step(a: Option<f32>, b: Option<f32>) -> f32 {
    match (a, b) {
        (Some(a), Some(b)) if a.is_finite() && b.is_finite() && a.min(b) > 0.0 => {
            (a - b).abs() / a.min(b)
        }
        _ => 0.0,
    }
}

/// The segments the pointer at `seed` reaches (ascending; always holds `seed` when it is in the scene).
pub fn pointed_region(scene: &Scene, seed: SegmentId, max_area: u64) -> Vec<SegmentId> {
    pointed_region_with(
        scene,
        seed,
        max_area,
        EDGE_DELTA_E,
        REGION_DELTA_E,
        DEPTH_STEP,
    )
}

/// `pointed_region` with explicit thresholds (for choosing them): the growth at those thresholds when it
/// closes at edges within `max_area`; when it only stops at `max_area` (the thing pointed at is not set off
/// from its surroundings at those thresholds: a door in a wall of nearly its colour), the growth again at
/// each of `TIGHTER` times the thresholds in turn, and the first that closes. When none closes, the tightest
/// growth: a relabel that covers too little is completed by the solve, one that covers a wall is not undone.
pub fn pointed_region_with(
    scene: &Scene,
    seed: SegmentId,
    max_area: u64,
    edge_delta_e: f32,
    region_delta_e: f32,
    depth_limit: f32,
) -> Vec<SegmentId> {
    pointed_region_tries(
        scene,
        seed,
        max_area,
        [edge_delta_e, region_delta_e, depth_limit],
        &TIGHTER,
    )
}

/// `pointed_region_with` with the threshold scales tried after the first (for choosing them).
pub fn pointed_region_tries(
    scene: &Scene,
    seed: SegmentId,
    max_area: u64,
    [edge_delta_e, region_delta_e, depth_limit]: [f32; 3],
    tighter: &[f32],
) -> Vec<SegmentId> {
    let mut last = Vec::new();
    for &scale in std::iter::once(&1.0).chain(tighter) {
        let (members, closed) = grow(
            scene,
            seed,
            max_area,
            edge_delta_e * scale,
            region_delta_e * scale,
            depth_limit * scale,
        );
        if closed {
            return members;
        }
        last = members;
    }
    last
}

/// The threshold scales tried, in turn, when growth at the chosen thresholds does not close (our own choice,
/// checked with `examples/pointer_reach.rs` on training renders).
pub const TIGHTER: [f32; 3] = [0.75, 0.5, 0.35];

/// Best-first growth at fixed thresholds; the members (ascending) and whether growth closed at edges before
/// the area limit refused a neighbour.
fn grow(
    scene: &Scene,
    seed: SegmentId,
    max_area: u64,
    edge_delta_e: f32,
    region_delta_e: f32,
    depth_limit: f32,
) -> (Vec<SegmentId>, bool) {
    let count = scene.segment_count().min(scene.stats.len());
    if seed.index() >= count {
        return (Vec::new(), true);
    }
    if scene.stats[seed.index()].area == 0 {
        return (vec![seed], true);
    }
    let mut closed = true;
    let stats = &scene.stats;
    let mut inside = vec![false; count];
    let mut queued = vec![false; count];
    inside[seed.index()] = true;
    let mut members = vec![seed];
    let mut area = u64::from(stats[seed.index()].area);
    let (mut sum_l, mut sum_a, mut sum_b) = {
        let lab = stats[seed.index()].mean_lab;
        let w = area as f32;
        (lab.l * w, lab.a * w, lab.b * w)
    };
    let mean = |l: f32, a: f32, b: f32, area: u64| Lab {
        l: l / area as f32,
        a: a / area as f32,
        b: b / area as f32,
    };
    let mut heap = BinaryHeap::new();
    let push_neighbours = |from: usize,
                           heap: &mut BinaryHeap<Candidate>,
                           queued: &mut Vec<bool>,
                           inside: &[bool],
                           centre: Lab| {
        for neighbour in scene
            .adjacency
            .neighbors(petgraph::graph::NodeIndex::new(from))
        {
            let n = neighbour.index();
            if n >= count || inside[n] || queued[n] {
                continue;
            }
            queued[n] = true;
            heap.push(Candidate {
                distance: stats[n].mean_lab.delta_e(centre),
                segment: n,
                from,
            });
        }
    };
    push_neighbours(
        seed.index(),
        &mut heap,
        &mut queued,
        &inside,
        stats[seed.index()].mean_lab,
    );
    while let Some(candidate) = heap.pop() {
        let n = candidate.segment;
        let centre = mean(sum_l, sum_a, sum_b, area);
        let edge = stats[n].mean_lab.delta_e(stats[candidate.from].mean_lab);
        let step = depth_step(stats[n].mean_depth_mm, stats[candidate.from].mean_depth_mm);
        let grown = area + u64::from(stats[n].area);
        let alike = edge <= edge_delta_e
            && stats[n].mean_lab.delta_e(centre) <= region_delta_e
            && step <= depth_limit;
        if alike && grown > max_area {
            closed = false;
        }
        if !alike || grown > max_area {
            // Another member may border it more gently later.
            queued[n] = false;
            continue;
        }
        inside[n] = true;
        members.push(SegmentId(n as u32));
        area = grown;
        let lab = stats[n].mean_lab;
        let w = stats[n].area as f32;
        sum_l += lab.l * w;
        sum_a += lab.a * w;
        sum_b += lab.b * w;
        push_neighbours(
            n,
            &mut heap,
            &mut queued,
            &inside,
            mean(sum_l, sum_a, sum_b, area),
        );
    }
    members.sort_unstable();
    (members, closed)
}
