//! A note leaves no specks behind. When a turn takes segments off a class ("there's no desk in here", a
//! relabel, a count's surplus taken away), the pieces the solve hands to classes no note concerns are not new
//! objects of their own: a sliver of box or shelf where the desk was is noise the operator has to look past.
//!
//! Owns: `leftover_factors` (hard factors that send such a piece to the label around it).
//! Must not: solve, or change labels itself; `crate::turn::solve` adds the factors and solves again.
//!
//! # The rule
//!
//! An object of the corrected graph is a leftover when its class is one no note of the turn concerns
//! (`super::locality::Concern`), it covers less than a speck (`super::capped::speck_area`), and every one of
//! its segments had another label before the turn. Its segments then carry a hard factor against its class
//! and one towards the label it shares the longest boundary with, leaving out its own class and the labels its
//! segments had before the turn (the class the note took away). A piece another hard factor already sends
//! somewhere (a count's surplus handed to the label around it) is left to that factor.

use std::collections::BTreeMap;

use crate::energy::{UnaryFactor, HARD_WEIGHT};
use crate::scene::Scene;

use super::capped::speck_area;
use super::locality::Concern;
use super::SceneGraph;

/// Hard factors moving every leftover of `graph` (see the module doc) to the label around it. `before` holds
/// the fine segments' labels before the turn; `pinned` the factors already on the labels, whose hard ones
/// keep their segments out of this rule.
pub fn leftover_factors(
    scene: &Scene,
    graph: &SceneGraph,
    concern: &Concern,
    before: &[u16],
    pinned: &[UnaryFactor],
) -> Vec<UnaryFactor> {
    let mut held: Vec<u32> = pinned
        .iter()
        .filter(|factor| factor.weight >= HARD_WEIGHT)
        .flat_map(|factor| factor.segments.iter().copied())
        .collect();
    held.sort_unstable();
    held.dedup();
    let speck = speck_area(scene);
    let mut factors = Vec::new();
    for object in &graph.objects {
        let class = object.class.0;
        if concern.class(class) {
            continue;
        }
        let area: u64 = object
            .members
            .iter()
            .filter_map(|m| scene.stats.get(m.index()))
            .map(|stats| u64::from(stats.area))
            .sum();
        let moved = object
            .members
            .iter()
            .all(|m| before.get(m.index()).is_some_and(|&was| was != class));
        let free = object
            .members
            .iter()
            .all(|m| held.binary_search(&m.0).is_err());
        if area >= speck || !moved || !free || object.members.is_empty() {
            continue;
        }
        let mut left_out: Vec<u16> = object
            .members
            .iter()
            .filter_map(|m| before.get(m.index()).copied())
            .collect();
        left_out.push(class);
        let Some(around) = label_around(scene, graph, &object.members, &left_out) else {
            continue;
        };
        let segments: Vec<u32> = object.members.iter().map(|s| s.0).collect();
        factors.push(UnaryFactor {
            segments: segments.clone(),
            label: class,
            wanted: false,
            weight: HARD_WEIGHT,
            source: None,
        });
        factors.push(UnaryFactor {
            segments,
            label: around,
            wanted: true,
            weight: HARD_WEIGHT,
            source: None,
        });
    }
    factors
}

/// The label that shares the longest boundary with some segments, among the labels not `left_out` (ties go to
/// the lower label).
pub(crate) fn label_around(
    scene: &Scene,
    graph: &SceneGraph,
    members: &[crate::ids::SegmentId],
    left_out: &[u16],
) -> Option<u16> {
    let mut inside: Vec<u32> = members.iter().map(|s| s.0).collect();
    inside.sort_unstable();
    let mut shared: BTreeMap<u16, u64> = BTreeMap::new();
    for edge in scene.adjacency.raw_edges() {
        let (a, b) = (edge.source().index() as u32, edge.target().index() as u32);
        let outside = match (
            inside.binary_search(&a).is_ok(),
            inside.binary_search(&b).is_ok(),
        ) {
            (true, false) => b,
            (false, true) => a,
            _ => continue,
        };
        let Some(label) = graph.segment_labels.get(outside as usize) else {
            continue;
        };
        if !left_out.contains(&label.0) {
            *shared.entry(label.0).or_insert(0) += u64::from(edge.weight.boundary_length);
        }
    }
    shared
        .into_iter()
        .max_by(|a, b| a.1.cmp(&b.1).then(b.0.cmp(&a.0)))
        .map(|(label, _)| label)
}
