//! Forming the scene graph's objects from a solved state: connected groups of equal final labels, split by
//! accepted hypotheses where the operator stated more objects of a class than the labels show apart.
//!
//! Owns: `form_objects` and the rule that names each object's hypothesis (and so its id).
//! Must not: change labels or hypotheses; it describes the state the solver returned.
//!
//! # The rule
//!
//! 1. The fine segments are grouped into 4-connected components of equal final label over the adjacency
//!    graph (what the label map shows as one patch of a class).
//! 2. When the operator said there are at least `k` objects of a class ("there are four books": a count
//!    constraint in force, exactly or at least `k`) and the labels show fewer than `k` components of it,
//!    adjacent objects have merged: components of the class are split, largest first, until there are `k`
//!    objects or none is left to split. A component is split among the accepted hypotheses of its class that
//!    hold members of it: each keeps its members in the component, and the other segments of the component
//!    are shared out by seeded region growing across the lowest colour contrast (see `split_component`).
//!    A component holding fewer than two accepted hypotheses of its class stays one object.
//!    Otherwise a component is one object, so pieces of one window that the hypothesis generator proposed
//!    separately are not reported as several windows, and a count already met by the labels is not
//!    second-guessed.
//!    Checked on training renders only (the 21 tuning renders of `sayso tune`, committed weights): the tuning
//!    objective is 0.5679 with this split and 0.5659 without it.
//! 3. Each object is named after a hypothesis so later notes can point at it (`Focus::Object`): the
//!    hypothesis of its class sharing the most member segments with it that no larger object took already;
//!    with none, an id computed from its class and members (`crate::hypotheses::hypothesis_id`), which no
//!    hypothesis of the list carries.

use std::cmp::Reverse;
use std::collections::{BTreeSet, BinaryHeap};

use crate::hypotheses::{hypothesis_id, Hypothesis};
use crate::ids::{ClassId, HypothesisId, SegmentId};
use crate::scene::Scene;

/// One object before it is dressed with masks and names: its class, members and hypothesis.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FormedObject {
    pub class: ClassId,
    /// Ascending.
    pub members: Vec<SegmentId>,
    pub hypothesis: HypothesisId,
    /// The index of the hypothesis in the list, when the object is named after one.
    pub hypothesis_index: Option<usize>,
}

/// Neighbour lists of the fine segments: (neighbour, colour contrast across the shared boundary).
fn neighbours(scene: &Scene) -> Vec<Vec<(usize, f32)>> {
    let count = scene.segment_count();
    let mut lists = vec![Vec::new(); count];
    for edge in scene.adjacency.raw_edges() {
        let (a, b) = (edge.source().index(), edge.target().index());
        if a < count && b < count && a != b {
            let contrast = edge.weight.colour_contrast;
            let contrast = if contrast.is_finite() {
                contrast.max(0.0)
            } else {
                0.0
            };
            lists[a].push((b, contrast));
            lists[b].push((a, contrast));
        }
    }
    for list in &mut lists {
        list.sort_by(|x, y| x.0.cmp(&y.0).then(x.1.total_cmp(&y.1)));
        list.dedup_by_key(|entry| entry.0);
    }
    lists
}

/// Components of equal label, each ascending, in order of their lowest segment.
fn components(labels: &[u16], neighbours: &[Vec<(usize, f32)>]) -> Vec<Vec<usize>> {
    let mut seen = vec![false; labels.len()];
    let mut found = Vec::new();
    for start in 0..labels.len() {
        if seen[start] {
            continue;
        }
        seen[start] = true;
        let mut group = vec![start];
        let mut cursor = 0;
        while cursor < group.len() {
            let here = group[cursor];
            cursor += 1;
            for &(next, _) in &neighbours[here] {
                if !seen[next] && labels[next] == labels[start] {
                    seen[next] = true;
                    group.push(next);
                }
            }
        }
        group.sort_unstable();
        found.push(group);
    }
    found
}

/// Splits one component among the accepted hypotheses of its class that hold members of it, by seeded
/// region growing (Adams and Bischof, 1994): the parts grow from the hypotheses' members, always taking next
/// the unclaimed segment of the component reached across the lowest colour contrast (ties: lower part, then
/// lower segment), so touching objects of different colours part along their boundary.
fn split_component(
    component: &[usize],
    class: ClassId,
    hypotheses: &[Hypothesis],
    accepted: &[bool],
    neighbours: &[Vec<(usize, f32)>],
    segment_count: usize,
) -> Vec<Vec<usize>> {
    let mut owner = vec![usize::MAX; segment_count];
    let mut inside = vec![false; segment_count];
    for &segment in component {
        inside[segment] = true;
    }
    let mut parts_found = 0usize;
    let mut frontier: BinaryHeap<Reverse<(u32, usize, usize, usize)>> = BinaryHeap::new();
    // Contrast in CIE76 units, kept to a thousandth so the queue orders integers.
    let key = |contrast: f32| (contrast * 1000.0).round() as u32;
    for (index, hypothesis) in hypotheses.iter().enumerate() {
        if hypothesis.class != class || !accepted.get(index).copied().unwrap_or(false) {
            continue;
        }
        let part = parts_found;
        let mut took = false;
        for member in &hypothesis.members {
            let segment = member.index();
            if segment < segment_count && inside[segment] && owner[segment] == usize::MAX {
                owner[segment] = part;
                took = true;
            }
        }
        if took {
            parts_found += 1;
        }
    }
    if parts_found < 2 {
        return vec![component.to_vec()];
    }
    let push_neighbours =
        |segment: usize,
         part: usize,
         owner: &[usize],
         frontier: &mut BinaryHeap<Reverse<(u32, usize, usize, usize)>>| {
            for &(next, contrast) in &neighbours[segment] {
                if inside[next] && owner[next] == usize::MAX {
                    frontier.push(Reverse((key(contrast), part, next, segment)));
                }
            }
        };
    for &segment in component {
        if owner[segment] != usize::MAX {
            push_neighbours(segment, owner[segment], &owner, &mut frontier);
        }
    }
    while let Some(Reverse((_, part, segment, _))) = frontier.pop() {
        if owner[segment] != usize::MAX {
            continue;
        }
        owner[segment] = part;
        push_neighbours(segment, part, &owner, &mut frontier);
    }
    let mut parts = vec![Vec::new(); parts_found];
    for &segment in component {
        // Every segment of a connected component is reached from some seed.
        if let Some(part) = parts.get_mut(owner[segment]) {
            part.push(segment);
        }
    }
    parts.retain(|part| !part.is_empty());
    parts
}

/// Forms the objects of a solved state (see the module doc). `labels` are the fine segments' final labels,
/// `accepted` one flag per hypothesis, `counted` the classes a count constraint in force names with the
/// least number of objects it asks for.
pub fn form_objects(
    scene: &Scene,
    labels: &[u16],
    hypotheses: &[Hypothesis],
    accepted: &[bool],
    counted: &[(ClassId, u32)],
) -> Vec<FormedObject> {
    let segment_count = scene.segment_count().min(labels.len());
    let labels = &labels[..segment_count];
    let neighbours = neighbours(scene);
    let all_components = components(labels, &neighbours);
    let mut pieces: Vec<(ClassId, Vec<usize>)> = Vec::new();
    let mut split_classes: Vec<(ClassId, u32)> = Vec::new();
    for &(class, wanted) in counted {
        let shown = all_components
            .iter()
            .filter(|component| labels[component[0]] == class.0)
            .count() as u32;
        if shown < wanted {
            split_classes.push((class, wanted - shown));
        }
    }
    // Components of classes to split, largest first; each split adds its parts minus one object.
    let mut order: Vec<usize> = (0..all_components.len()).collect();
    order.sort_by(|&a, &b| {
        all_components[b]
            .len()
            .cmp(&all_components[a].len())
            .then(a.cmp(&b))
    });
    let mut split = vec![false; all_components.len()];
    let mut parts_of: Vec<Vec<Vec<usize>>> = vec![Vec::new(); all_components.len()];
    for index in order {
        let component = &all_components[index];
        let class = ClassId(labels[component[0]]);
        let Some(missing) = split_classes
            .iter_mut()
            .find(|(c, missing)| *c == class && *missing > 0)
            .map(|(_, missing)| missing)
        else {
            continue;
        };
        let parts = split_component(
            component,
            class,
            hypotheses,
            accepted,
            &neighbours,
            segment_count,
        );
        if parts.len() > 1 {
            *missing = missing.saturating_sub(parts.len() as u32 - 1);
            split[index] = true;
            parts_of[index] = parts;
        }
    }
    for (index, component) in all_components.into_iter().enumerate() {
        let class = ClassId(labels[component[0]]);
        if split[index] {
            for part in std::mem::take(&mut parts_of[index]) {
                pieces.push((class, part));
            }
        } else {
            pieces.push((class, component));
        }
    }
    // Name larger objects first so they get the hypothesis they share the most with.
    let mut order: Vec<usize> = (0..pieces.len()).collect();
    order.sort_by(|&a, &b| {
        pieces[b]
            .1
            .len()
            .cmp(&pieces[a].1.len())
            .then(pieces[a].1[0].cmp(&pieces[b].1[0]))
    });
    let mut taken: BTreeSet<usize> = BTreeSet::new();
    let mut objects: Vec<FormedObject> = Vec::with_capacity(pieces.len());
    let mut in_piece = vec![false; segment_count];
    for index in order {
        let (class, members) = &pieces[index];
        for &segment in members {
            in_piece[segment] = true;
        }
        let mut best: Option<(usize, usize, bool)> = None;
        for (h, hypothesis) in hypotheses.iter().enumerate() {
            if hypothesis.class != *class || taken.contains(&h) {
                continue;
            }
            let shared = hypothesis
                .members
                .iter()
                .filter(|s| s.index() < segment_count && in_piece[s.index()])
                .count();
            let on = accepted.get(h).copied().unwrap_or(false);
            // Prefer accepted hypotheses, then the most shared members, then the lower index.
            let better = shared > 0
                && match best {
                    None => true,
                    Some((_, best_shared, best_on)) => (on, shared) > (best_on, best_shared),
                };
            if better {
                best = Some((h, shared, on));
            }
        }
        for &segment in members {
            in_piece[segment] = false;
        }
        let members: Vec<SegmentId> = members.iter().map(|&s| SegmentId(s as u32)).collect();
        let (hypothesis, hypothesis_index) = match best {
            Some((h, _, _)) => {
                taken.insert(h);
                (hypotheses[h].id, Some(h))
            }
            None => (hypothesis_id(*class, &members), None),
        };
        objects.push(FormedObject {
            class: *class,
            members,
            hypothesis,
            hypothesis_index,
        });
    }
    objects
}
