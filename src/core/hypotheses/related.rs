//! Hypotheses placed by what the operator said about where an object is: "there's a laptop on the desk"
//! when the robot shows a heap of clothes there. For each thing the robot currently shows touching a
//! landmark hypothesis (a connected patch of one label), a hypothesis of the subject class over that patch,
//! when the stated relation holds between the patch and the landmark.
//!
//! Owns: `RelatedAsk` and `propose_related`.
//! Must not: read language or decide whether the relation holds (the caller passes the geometric test, the
//! same predicates that describe the output), or decide which hypotheses are real (the solver does).

use std::collections::BTreeSet;

use super::{connected_groups, extra_hypothesis, segment_neighbours, Hypothesis, HypothesisOrigin};
use crate::ids::{ClassId, HypothesisId, SegmentId};
use crate::scene::Scene;
use crate::unaries::Unaries;

/// One placement the operator stated: an object of class `subject` stands in some relation to an object of
/// class `landmark` (the relation itself is the caller's test, by the ask's index).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct RelatedAsk {
    pub subject: ClassId,
    pub landmark: ClassId,
}

/// Hypotheses of each ask's subject class over the patches the robot shows touching a hypothesis of the
/// ask's landmark class. `labels` are the fine segments' current labels (the "before" of the turn);
/// `may_take(label)` says whether a patch of that label may be read as the subject (the caller keeps
/// structure and living things out); `holds(ask, patch, landmark)` tests the stated relation. A patch
/// already of the subject or the landmark class is skipped, as is one an existing hypothesis of the
/// subject class covers exactly. Returned sorted by (class, members), with ids no hypothesis in
/// `existing` carries.
pub fn propose_related(
    scene: &Scene,
    unaries: &Unaries,
    labels: &[u16],
    existing: &[Hypothesis],
    asks: &[RelatedAsk],
    may_take: impl Fn(u16) -> bool,
    holds: impl Fn(usize, &[SegmentId], &[SegmentId]) -> bool,
) -> Vec<Hypothesis> {
    let segment_count = scene
        .segment_count()
        .min(unaries.segment_count())
        .min(labels.len());
    let class_count = unaries.class_count();
    let neighbours = segment_neighbours(scene, segment_count);
    // The patches the robot shows: connected groups of one label, and each segment's patch.
    let mut patches: Vec<Vec<SegmentId>> = Vec::new();
    let mut patch_of = vec![usize::MAX; segment_count];
    let mut shown: Vec<u16> = labels[..segment_count].to_vec();
    shown.sort_unstable();
    shown.dedup();
    for label in shown {
        for group in connected_groups(&neighbours, |s| labels[s] == label) {
            for member in &group {
                patch_of[member.index()] = patches.len();
            }
            patches.push(group);
        }
    }
    let covered: BTreeSet<(ClassId, &[SegmentId])> = existing
        .iter()
        .map(|h| (h.class, h.members.as_slice()))
        .collect();
    let mut proposed: BTreeSet<(ClassId, Vec<SegmentId>)> = BTreeSet::new();
    for (index, ask) in asks.iter().enumerate() {
        if ask.subject.index() >= class_count || ask.landmark.index() >= class_count {
            continue;
        }
        for landmark in existing.iter().filter(|h| h.class == ask.landmark) {
            let mut inside = vec![false; segment_count];
            for member in landmark
                .members
                .iter()
                .filter(|m| m.index() < segment_count)
            {
                inside[member.index()] = true;
            }
            // Patches with a segment outside the landmark next to one inside it.
            let mut touching: BTreeSet<usize> = BTreeSet::new();
            for member in landmark
                .members
                .iter()
                .filter(|m| m.index() < segment_count)
            {
                for &next in &neighbours[member.index()] {
                    if !inside[next] {
                        touching.insert(patch_of[next]);
                    }
                }
            }
            for patch in touching {
                let Some(members) = patches.get(patch) else {
                    continue;
                };
                let label = labels[members[0].index()];
                if label == ask.subject.0 || label == ask.landmark.0 || !may_take(label) {
                    continue;
                }
                if covered.contains(&(ask.subject, members.as_slice()))
                    || proposed.contains(&(ask.subject, members.clone()))
                {
                    continue;
                }
                if holds(index, members, &landmark.members) {
                    proposed.insert((ask.subject, members.clone()));
                }
            }
        }
    }
    let mut used: BTreeSet<HypothesisId> = existing.iter().map(|h| h.id).collect();
    proposed
        .into_iter()
        .map(|(class, members)| {
            extra_hypothesis(
                (scene, unaries),
                &mut used,
                class,
                members,
                HypothesisOrigin::Placed,
            )
        })
        .collect()
}
