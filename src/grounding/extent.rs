//! The extent of an object as the scene is shown: a table the solver accepted as two coarse regions (its top
//! and its legs) is one table, and "the mug is on the table" is measured against all of it, as the scene
//! graph's relations are.
//!
//! Owns: `Extents`, the segments of each hypothesis's shown object.
//! Must not: decide which hypotheses are accepted (the caller passes the flags of the state the operator
//! saw) or measure relations (`super::measures`).

use crate::hypotheses::Hypothesis;
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
        let mut neighbours: Vec<Vec<usize>> = vec![Vec::new(); segment_count];
        for edge in scene.adjacency.raw_edges() {
            let (a, b) = (edge.source().index(), edge.target().index());
            if a < segment_count && b < segment_count {
                neighbours[a].push(b);
                neighbours[b].push(a);
            }
        }
        let on: Vec<usize> = (0..hypotheses.len())
            .filter(|&h| accepted.get(h).copied().unwrap_or(false))
            .collect();
        // Union-find over the accepted hypotheses: joined when of one class and touching.
        let mut parent: Vec<usize> = (0..hypotheses.len()).collect();
        fn root(parent: &mut [usize], mut h: usize) -> usize {
            while parent[h] != h {
                parent[h] = parent[parent[h]];
                h = parent[h];
            }
            h
        }
        // Which accepted hypothesis of each class claims (or borders) each segment, class by class.
        let mut classes: Vec<u16> = on.iter().map(|&h| hypotheses[h].class.0).collect();
        classes.sort_unstable();
        classes.dedup();
        let mut claim = vec![usize::MAX; segment_count];
        for class in classes {
            let of_class: Vec<usize> = on
                .iter()
                .copied()
                .filter(|&h| hypotheses[h].class.0 == class)
                .collect();
            for &h in &of_class {
                for member in hypotheses[h]
                    .members
                    .iter()
                    .filter(|m| m.index() < segment_count)
                {
                    let s = member.index();
                    for t in std::iter::once(s).chain(neighbours[s].iter().copied()) {
                        let other = claim[t];
                        if other != usize::MAX && other != h {
                            let (a, b) = (root(&mut parent, other), root(&mut parent, h));
                            if a != b {
                                parent[a.max(b)] = a.min(b);
                            }
                        }
                    }
                }
                for member in hypotheses[h]
                    .members
                    .iter()
                    .filter(|m| m.index() < segment_count)
                {
                    claim[member.index()] = h;
                }
            }
            for &h in &of_class {
                for member in hypotheses[h]
                    .members
                    .iter()
                    .filter(|m| m.index() < segment_count)
                {
                    claim[member.index()] = usize::MAX;
                }
            }
        }
        let mut group_of = vec![None; hypotheses.len()];
        let mut groups: Vec<Vec<SegmentId>> = Vec::new();
        let mut group_at_root: std::collections::BTreeMap<usize, usize> = Default::default();
        let mut sizes: std::collections::BTreeMap<usize, usize> = Default::default();
        for &h in &on {
            *sizes.entry(root(&mut parent, h)).or_default() += 1;
        }
        for &h in &on {
            let r = root(&mut parent, h);
            if sizes[&r] < 2 {
                continue;
            }
            let group = *group_at_root.entry(r).or_insert_with(|| {
                groups.push(Vec::new());
                groups.len() - 1
            });
            groups[group].extend_from_slice(&hypotheses[h].members);
            group_of[h] = Some(group);
        }
        for group in &mut groups {
            group.sort_unstable();
            group.dedup();
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
