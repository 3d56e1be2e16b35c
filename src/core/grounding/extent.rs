//! The extent of an object as the scene is shown: a table the solver accepted as two coarse regions (its top
//! and its legs) is one table, and "the mug is on the table" is measured against all of it, as the scene
//! graph's relations are.
//!
//! Owns: `Extents`, the segments of each hypothesis's shown object.
//! Must not: decide which hypotheses are accepted (the caller passes the flags of the state the operator
//! saw) or measure relations (`super::measures`).

use crate::hypotheses::{segment_neighbours, Hypothesis};
use crate::ids::SegmentId;
use crate::scene::Scene;

/// The shown extent of every hypothesis. An accepted hypothesis's extent is its members together with
/// those of every accepted hypothesis of its class it touches (shares a segment with, or lies next to over
/// the adjacency graph), transitively; a hypothesis not accepted is its own members.
#[derive(Clone, Debug, Default)]
pub struct Extents {
    /// Per hypothesis: `Some(group)` for an accepted hypothesis in a group of more than one, else `None`.
    group_of: Vec<Option<usize>>,
    /// Per group: its segments, ascending.
    groups: Vec<Vec<SegmentId>>,
}

impl Extents {
    /// Groups the accepted hypotheses. `accepted[h]` (missing: not accepted) flags the state shown.
    pub fn new(scene: &Scene, hypotheses: &[Hypothesis], accepted: &[bool]) -> Extents {
        let segment_count = scene.segment_count();
        let neighbours = segment_neighbours(scene, segment_count);
        // Accepted hypotheses class by class, so a segment's claim is always by the class at hand or an
        // earlier one.
        let mut on: Vec<usize> = (0..hypotheses.len())
            .filter(|&h| accepted.get(h).copied().unwrap_or(false))
            .collect();
        on.sort_by_key(|&h| (hypotheses[h].class, h));
        // Union-find: two accepted hypotheses of one class are joined when they share or border a segment.
        let mut parent: Vec<usize> = (0..hypotheses.len()).collect();
        fn root(parent: &mut [usize], mut h: usize) -> usize {
            while parent[h] != h {
                parent[h] = parent[parent[h]];
                h = parent[h];
            }
            h
        }
        let mut claim = vec![usize::MAX; segment_count];
        for &h in &on {
            let class = hypotheses[h].class;
            let members = || {
                hypotheses[h]
                    .members
                    .iter()
                    .map(|m| m.index())
                    .filter(|&s| s < segment_count)
            };
            for s in members() {
                for t in std::iter::once(s).chain(neighbours[s].iter().copied()) {
                    let other = claim[t];
                    if other != usize::MAX && other != h && hypotheses[other].class == class {
                        let (a, b) = (root(&mut parent, other), root(&mut parent, h));
                        parent[a.max(b)] = a.min(b);
                    }
                }
            }
            for s in members() {
                claim[s] = h;
            }
        }
        // Hypotheses per root; only groups of two or more differ from their own members.
        let mut by_root: std::collections::BTreeMap<usize, Vec<usize>> = Default::default();
        for &h in &on {
            by_root.entry(root(&mut parent, h)).or_default().push(h);
        }
        let mut group_of = vec![None; hypotheses.len()];
        let mut groups: Vec<Vec<SegmentId>> = Vec::new();
        for joined in by_root.into_values().filter(|joined| joined.len() > 1) {
            let mut segments: Vec<SegmentId> = joined
                .iter()
                .flat_map(|&h| hypotheses[h].members.iter().copied())
                .collect();
            segments.sort_unstable();
            segments.dedup();
            for h in joined {
                group_of[h] = Some(groups.len());
            }
            groups.push(segments);
        }
        Extents { group_of, groups }
    }

    /// The segments of hypothesis `h`'s shown object.
    pub fn of<'a>(&'a self, hypotheses: &'a [Hypothesis], h: usize) -> &'a [SegmentId] {
        match self.group_of.get(h).copied().flatten() {
            Some(group) => &self.groups[group],
            None => hypotheses
                .get(h)
                .map(|hypothesis| hypothesis.members.as_slice())
                .unwrap_or(&[]),
        }
    }
}
