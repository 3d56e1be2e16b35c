//! Forming the scene graph's objects from a solved state: connected groups of equal final labels, split
//! along colour edges and depth steps where the operator counted more objects of a class than the labels
//! show.
//!
//! Owns: `form_objects` and the rule that names each object's hypothesis (and so its id).
//! Must not: change labels or hypotheses; it describes the state the solver returned.
//!
//! # The rule
//!
//! 1. The fine segments are grouped into 4-connected components of equal final label over the adjacency
//!    graph (what the label map shows as one patch of a class), joined only across edges no stronger than
//!    the class's cut (`super::instances`, `models/instance_cuts.json`): books side by side on a shelf
//!    share a label but not a colour (the strengths are re-chosen on solved training renders by
//!    `sayso_lab::tuning_cuts`). A patch of a class with a typical size is then parted by its depth-scaled
//!    area (`super::instances::part_by_size`: chairs pushed together, pillows side by side).
//! 2. When the operator said there are at least `k` objects of a class ("there are four chairs": a count
//!    constraint in force, exactly or at least `k`) and the labels show fewer than `k` components of it,
//!    adjacent objects have merged: components of the class are split, largest first, until there are `k`
//!    objects or none is left to split. Only components of at least `MIN_SHOWN_SEGMENTS` segments count as
//!    shown: a stray segment or two of "chair" on a table edge is not a chair the operator counted; but
//!    a smaller component does count when an accepted hypothesis of its class holds at least half of its
//!    segments (the solver switched that object on; books on a shelf are often one to three segments of a
//!    2400-segment scene). A component is split into as many pieces as are missing plus one by geodesic
//!    k-medoids over the segment adjacency graph (`super::split`), so pieces meet along colour edges and
//!    depth steps; for a class with a typical size, into no more pieces than leaves each at least half of
//!    it (a shoe-sized patch is not cut in two to make up a count). The accepted hypotheses are not used to
//!    cut: one hypothesis often spans the very objects that merged (two chairs joined through a table
//!    edge). Otherwise a component is one object, so pieces of one window are not reported as several
//!    windows, and a count already met by the labels is not second-guessed.
//! 3. Each object is named after a hypothesis so later notes can point at it (`Focus::Object`): the
//!    hypothesis of its class sharing the most member segments with it that no larger object took already;
//!    with none, an id computed from its class and members (`crate::hypotheses::hypothesis_id`), which no
//!    hypothesis of the list carries.
//!
//! Each of these choices was measured on training renders against the alternatives; the figures and what
//! was tried and not taken are in `docs/decisions.md` ("Forming objects").

use std::collections::BTreeSet;

use crate::hypotheses::{hypothesis_id, Hypothesis};
use crate::ids::{ClassId, HypothesisId, SegmentId};
use crate::scene::Scene;

use super::bisect::{bisect_to_count, Sizing};
use super::instances::{components, neighbours, part_by_size, scaled_area, InstanceCuts};

/// Components of fewer fine segments than this do not count as objects the labels show apart when a count
/// asks for more (see the module doc; chosen on training renders, figures in `docs/decisions.md`).
pub const MIN_SHOWN_SEGMENTS: usize = 4;

/// For a class with a typical size, a component of fewer segments than `MIN_SHOWN_SEGMENTS` still counts
/// as shown when its depth-scaled area is at least this share of the typical size (a bottle drawn as one
/// or two segments of a 2400-segment scene is a bottle the operator counted, not a fragment). The share
/// is the one the count split already keeps pieces above, not tuned. Training renders (seeds 200000 /
/// 200021, `examples/render_objects.rs`): object accuracy after the notes 0.7818 / 0.8051 with and
/// without this rule (their count notes rarely name a sized class). Found from a demo scene where "there
/// are three bottles" cut a whole bottle because the other two, one segment each, were not counted.
pub const SHOWN_TYPICAL_SHARE: f64 = 0.5;

/// A patch under this share of its class's largest patch in the scene (pixels) is a fragment, not an object
/// the labels show apart, when a count asks for more (a cabinet's plinth strip under the cabinets, a stray
/// sliver at the picture's edge). Our own choice, from the development trial's bathrooms and kitchens.
pub const SHOWN_LARGEST_SHARE: f64 = 0.1;

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

/// Forms the objects of a solved state (see the module doc). `labels` are the fine segments' final labels,
/// `accepted` one flag per hypothesis, `counted` the classes a count constraint in force names with the
/// least number of objects it asks for, `cuts` where a patch of a class holds several objects.
pub fn form_objects(
    scene: &Scene,
    labels: &[u16],
    hypotheses: &[Hypothesis],
    accepted: &[bool],
    counted: &[(ClassId, u32)],
    cuts: &InstanceCuts,
) -> Vec<FormedObject> {
    let segment_count = scene.segment_count().min(labels.len());
    let labels = &labels[..segment_count];
    let neighbours = neighbours(scene);
    let depth: Vec<Option<f32>> = scene.stats.iter().map(|stat| stat.mean_depth_mm).collect();
    let area: Vec<u32> = scene.stats.iter().map(|stat| stat.area).collect();
    let all_components: Vec<Vec<usize>> =
        components(labels, &neighbours, &depth, |class, strength| {
            cuts.joins(class, strength)
        })
        .into_iter()
        .flat_map(
            |component| match cuts.typical_size(ClassId(labels[component[0]])) {
                Some(typical) => part_by_size(&component, typical, &neighbours, &depth, &area),
                None => vec![component],
            },
        )
        .collect();
    let mut pieces: Vec<(ClassId, Vec<usize>)> = Vec::new();
    let mut split_classes: Vec<(ClassId, u32)> = Vec::new();
    let mut eligible = vec![false; all_components.len()];
    let sizing = Sizing {
        neighbours: &neighbours,
        depth: &depth,
        area: &area,
        cuts,
    };
    for &(class, wanted) in counted {
        // The class's largest patch: a patch far smaller than it is a fragment, not an object counted.
        let largest = all_components
            .iter()
            .filter(|component| labels[component[0]] == class.0)
            .map(|component| sizing.pixels(component))
            .max()
            .unwrap_or(0);
        // Enough segments, or (for a class with a typical size) enough of a typical object.
        let big_enough = |component: &[usize]| {
            let sized = |typical: f32| {
                scaled_area(component, &depth, &area)
                    .is_some_and(|scaled| scaled >= SHOWN_TYPICAL_SHARE * f64::from(typical))
            };
            // A patch the solver switched a hypothesis of its class on for is an object it shows.
            let backed = || {
                hypotheses.iter().zip(accepted).any(|(hypothesis, &on)| {
                    on && hypothesis.class == class
                        && 2 * hypothesis
                            .members
                            .iter()
                            .filter(|s| component.binary_search(&s.index()).is_ok())
                            .count()
                            >= component.len()
                })
            };
            let credible = sizing.pixels(component) as f64 >= SHOWN_LARGEST_SHARE * largest as f64;
            credible
                && (component.len() >= MIN_SHOWN_SEGMENTS
                    || cuts.typical_size(class).is_some_and(sized)
                    || backed())
        };
        let mut shown = 0u32;
        for (index, component) in all_components.iter().enumerate() {
            if labels[component[0]] == class.0 && big_enough(component) {
                shown += 1;
                eligible[index] = true;
            }
        }
        if shown < wanted {
            split_classes.push((class, wanted - shown));
        }
    }
    // Pieces of classes to split are cut in two, the cleanest cut first, until the count is made up.
    let parts_of = bisect_to_count(
        &all_components,
        &eligible,
        labels,
        &mut split_classes,
        &sizing,
    );
    let split: Vec<bool> = parts_of.iter().map(|parts| parts.len() > 1).collect();
    let mut parts_of = parts_of;
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
