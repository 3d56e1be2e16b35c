//! Object hypotheses: candidate objects the joint solver may switch on or off.
//!
//! Owns: `Hypothesis`, and building
//! hypotheses from detections (`crate::unaries::byo_detections::Detection`) and from proposals — connected groups of segments over the adjacency graph, at
//! the fine and the coarse level, for every class in each unit's top-k — with ids that depend only on the
//! class and the member segments; and, for classes a caller names (the operator mentioned them), connected
//! groups over a wider top-k that no hypothesis of the class holds yet (`propose_named`); and, where the
//! operator placed an object ("a laptop on the desk"), the patches shown touching the landmark read as the
//! subject (`related`).
//! Must not: decide which hypotheses are real (that is the solver's job) or read language.

use std::collections::BTreeMap;

pub mod related;
pub use related::{propose_related, RelatedAsk};

use serde::{Deserialize, Serialize};

use crate::ids::{ClassId, HypothesisId, SegmentId};
use crate::scene::{BoundingBox, Scene};
use crate::unaries::Unaries;

pub use crate::unaries::byo_detections::{Detection, DetectionMask};

/// Where a hypothesis came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "type", rename_all = "snake_case")]
pub enum HypothesisOrigin {
    /// The detection with this index in the list given.
    Detection { index: usize },
    /// A connected group of fine segments sharing the class in their top-k.
    FineGroup,
    /// One coarse region with the class in its top-k.
    CoarseRegion,
    /// A patch the robot showed as another class, where the operator placed an object of this class
    /// (`related::propose_related`).
    Placed,
}

/// One candidate object.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Hypothesis {
    pub id: HypothesisId,
    pub class: ClassId,
    /// Ascending.
    pub members: Vec<SegmentId>,
    pub bbox: BoundingBox,
    /// 0..1: how likely the object is real.
    pub score: f32,
    pub origin: HypothesisOrigin,
}

/// How hypotheses are proposed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ProposalOptions {
    /// Classes per segment considered (2 or 3). 2 by default: with 1600-segment scenes 3 gave object
    /// accuracy after the notes 0.7736 / 0.7942 on training renders (seeds 200000 / 200021) against
    /// 0.7758 / 0.7962.
    pub top_k: usize,
    /// A detection takes a segment when at least this share of the segment's pixels is inside it.
    pub member_share: f32,
    /// At most this many hypotheses are kept (highest score first, then by id).
    pub max_hypotheses: usize,
    /// For a class the operator names, segments with it among their this many best classes are grouped
    /// too (`propose_named`), where no hypothesis of the class holds them yet.
    #[serde(default = "default_named_top_k")]
    pub named_top_k: usize,
}

fn default_named_top_k() -> usize {
    5
}

impl Default for ProposalOptions {
    fn default() -> Self {
        ProposalOptions {
            top_k: 2,
            member_share: 0.5,
            max_hypotheses: 400,
            named_top_k: default_named_top_k(),
        }
    }
}

/// What is wrong with the inputs to hypothesis building.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum HypothesisError {
    #[error("unaries have {unaries} rows but the scene has {segments} segments")]
    SegmentCountMismatch { unaries: usize, segments: usize },
    #[error("detection {index} names class {class}, but the unaries have {class_count} classes")]
    UnknownClass {
        index: usize,
        class: ClassId,
        class_count: usize,
    },
    #[error("detection {index} has a mask of {found} pixels, the image has {expected}")]
    MaskSize {
        index: usize,
        found: usize,
        expected: usize,
    },
    #[error("detection {index} has a score of {score}, outside 0..1")]
    BadScore { index: usize, score: f32 },
}

/// The id of a hypothesis: FNV-1a over the class and the sorted member ids, so it is the same on every
/// re-solve of the scene no matter in what order hypotheses were found.
pub fn hypothesis_id(class: ClassId, members: &[SegmentId]) -> HypothesisId {
    let mut hash: u32 = 0x811c_9dc5;
    let mut feed = |bytes: &[u8]| {
        for &byte in bytes {
            hash ^= byte as u32;
            hash = hash.wrapping_mul(0x0100_0193);
        }
    };
    feed(&class.0.to_le_bytes());
    for member in members {
        feed(&member.0.to_le_bytes());
    }
    HypothesisId(hash)
}

fn bbox_of(scene: &Scene, members: &[SegmentId]) -> BoundingBox {
    let mut boxes = members
        .iter()
        .filter_map(|s| scene.stats.get(s.index()).map(|stats| stats.bbox));
    let first = boxes.next().unwrap_or_default();
    boxes.fold(first, |acc, b| acc.union(&b))
}

/// Area-weighted mean probability of `class` over `members`.
fn mean_probability(
    scene: &Scene,
    unaries: &Unaries,
    class: ClassId,
    members: &[SegmentId],
) -> f32 {
    let (mut weighted, mut total) = (0.0f64, 0.0f64);
    for member in members {
        let area = scene
            .stats
            .get(member.index())
            .map(|s| s.area.max(1))
            .unwrap_or(1) as f64;
        let log_probability = unaries.log_probs[[member.index(), class.index()]] as f64;
        weighted += area * log_probability.exp();
        total += area;
    }
    if total > 0.0 {
        (weighted / total) as f32
    } else {
        0.0
    }
}

/// Each of the first `segment_count` segments' `top_k` classes, best first.
fn segment_tops(unaries: &Unaries, segment_count: usize, top_k: usize) -> Vec<Vec<ClassId>> {
    (0..segment_count)
        .map(|s| {
            let row: Vec<f32> = unaries.log_probs.row(s).iter().copied().collect();
            top_classes(&row, top_k)
        })
        .collect()
}

/// Whether `class` is among the `top_k` classes of a row in `top_classes`' order (log-probability descending
/// by total order, ties by class id): fewer than `top_k` classes rank before it. `top_classes(row,
/// top_k).contains(class)` without ranking the whole row or allocating.
fn among_top(row: &[f32], class: usize, top_k: usize) -> bool {
    let Some(&own) = row.get(class) else {
        return false;
    };
    let mut ahead = 0;
    for (other, value) in row.iter().enumerate() {
        let order = value.total_cmp(&own);
        if order.is_gt() || (order.is_eq() && other < class) {
            ahead += 1;
            if ahead >= top_k {
                return false;
            }
        }
    }
    ahead < top_k
}

/// `id`, or the first id after it (wrapping) that `used` does not hold yet; marked used. Resolves the
/// (rare) id collisions deterministically.
fn claim_id(
    used: &mut std::collections::BTreeSet<HypothesisId>,
    mut id: HypothesisId,
) -> HypothesisId {
    while !used.insert(id) {
        id = HypothesisId(id.0.wrapping_add(1));
    }
    id
}

/// The `top_k` classes of a row of log-probabilities, best first (ties by class id): the first `top_k` of
/// the row sorted by that order, kept by one insertion pass instead of sorting the whole row (the order is
/// total, so both give the same classes in the same order).
fn top_classes(row: &[f32], top_k: usize) -> Vec<ClassId> {
    let mut kept: Vec<usize> = Vec::with_capacity(top_k.min(row.len()) + 1);
    for class in 0..row.len() {
        // Classes arrive in increasing id, so a later class tying a kept one ranks after it.
        let before = |&other: &usize| row[class].total_cmp(&row[other]).is_gt();
        let at = kept.len() - kept.iter().rev().take_while(|other| before(other)).count();
        if at < top_k {
            kept.insert(at, class);
            kept.truncate(top_k);
        }
    }
    kept.into_iter().map(|c| ClassId(c as u16)).collect()
}

/// Within one class, hypotheses must not share segments (or one object would be counted twice): detections
/// come first (best score first), then coarse regions, then fine groups; a hypothesis overlapping one already
/// kept for its class is dropped. Different classes may overlap; the segment agreement sorts them out.
fn keep_disjoint_per_class(hypotheses: &mut Vec<Hypothesis>) {
    let rank = |origin: &HypothesisOrigin| match origin {
        HypothesisOrigin::Detection { .. } => 0,
        HypothesisOrigin::CoarseRegion => 1,
        HypothesisOrigin::FineGroup => 2,
        HypothesisOrigin::Placed => 3,
    };
    let mut order: Vec<usize> = (0..hypotheses.len()).collect();
    order.sort_by(|&a, &b| {
        let (ha, hb) = (&hypotheses[a], &hypotheses[b]);
        ha.class
            .cmp(&hb.class)
            .then(rank(&ha.origin).cmp(&rank(&hb.origin)))
            .then(hb.score.total_cmp(&ha.score))
            .then(a.cmp(&b))
    });
    let mut keep = vec![false; hypotheses.len()];
    let mut taken: std::collections::BTreeSet<(ClassId, SegmentId)> = Default::default();
    for index in order {
        let hypothesis = &hypotheses[index];
        if hypothesis
            .members
            .iter()
            .all(|&s| !taken.contains(&(hypothesis.class, s)))
        {
            for &s in &hypothesis.members {
                taken.insert((hypothesis.class, s));
            }
            keep[index] = true;
        }
    }
    let mut index = 0;
    hypotheses.retain(|_| {
        index += 1;
        keep[index - 1]
    });
}

/// Builds the hypotheses of a scene. Output is sorted by (class, members), hence independent of input order.
pub fn build_hypotheses(
    scene: &Scene,
    unaries: &Unaries,
    detections: &[Detection],
    options: &ProposalOptions,
) -> Result<Vec<Hypothesis>, HypothesisError> {
    let segment_count = scene.segment_count();
    if unaries.segment_count() != segment_count {
        return Err(HypothesisError::SegmentCountMismatch {
            unaries: unaries.segment_count(),
            segments: segment_count,
        });
    }
    let class_count = unaries.class_count();
    // (class, members) -> (score, origin); the best score wins when two sources agree.
    let mut found: BTreeMap<(ClassId, Vec<SegmentId>), (f32, HypothesisOrigin)> = BTreeMap::new();
    let mut offer = |class: ClassId, members: Vec<SegmentId>, score: f32, origin| {
        if members.is_empty() {
            return;
        }
        let entry = found.entry((class, members)).or_insert((score, origin));
        if score > entry.0 {
            *entry = (score, origin);
        }
    };

    for (index, detection) in detections.iter().enumerate() {
        if detection.class.index() >= class_count {
            return Err(HypothesisError::UnknownClass {
                index,
                class: detection.class,
                class_count,
            });
        }
        if !(0.0..=1.0).contains(&detection.score) {
            return Err(HypothesisError::BadScore {
                index,
                score: detection.score,
            });
        }
        let map = &scene.segments;
        if let Some(mask) = &detection.mask {
            let expected = map.labels.len();
            if mask.width != map.width || mask.height != map.height || mask.inside.len() != expected
            {
                return Err(HypothesisError::MaskSize {
                    index,
                    found: mask.inside.len(),
                    expected,
                });
            }
        }
        let mut inside = vec![0u32; segment_count];
        let x1 = detection.bbox.x1.min(map.width);
        let y1 = detection.bbox.y1.min(map.height);
        for y in detection.bbox.y0.min(y1)..y1 {
            for x in detection.bbox.x0.min(x1)..x1 {
                let pixel = y as usize * map.width as usize + x as usize;
                let in_mask = detection
                    .mask
                    .as_ref()
                    .map(|mask| mask.inside[pixel])
                    .unwrap_or(true);
                if let (true, Some(&segment)) = (in_mask, map.labels.get(pixel)) {
                    if let Some(count) = inside.get_mut(segment as usize) {
                        *count += 1;
                    }
                }
            }
        }
        let members: Vec<SegmentId> = (0..segment_count)
            .filter(|&s| {
                let area = scene.stats.get(s).map(|st| st.area).unwrap_or(0).max(1);
                inside[s] as f32 >= options.member_share * area as f32
            })
            .map(|s| SegmentId(s as u32))
            .collect();
        offer(
            detection.class,
            members,
            detection.score,
            HypothesisOrigin::Detection { index },
        );
    }

    // Fine level: connected groups of segments that share the class in their top-k.
    let tops = segment_tops(unaries, segment_count, options.top_k);
    let neighbours = segment_neighbours(scene, segment_count);
    for class in 0..class_count {
        let class = ClassId(class as u16);
        for members in connected_groups(&neighbours, |s| tops[s].contains(&class)) {
            let score = mean_probability(scene, unaries, class, &members);
            offer(class, members, score, HypothesisOrigin::FineGroup);
        }
    }

    // Coarse level: each region, for every class in its top-k (summed log-probabilities over members).
    for members in &scene.coarse.members {
        let valid: Vec<SegmentId> = members
            .iter()
            .copied()
            .filter(|s| s.index() < segment_count)
            .collect();
        if valid.is_empty() {
            continue;
        }
        let mut row = vec![0.0f32; class_count];
        for member in &valid {
            for (class, value) in row.iter_mut().enumerate() {
                *value += unaries.log_probs[[member.index(), class]];
            }
        }
        for class in top_classes(&row, options.top_k) {
            let score = mean_probability(scene, unaries, class, &valid);
            offer(class, valid.clone(), score, HypothesisOrigin::CoarseRegion);
        }
    }

    let mut hypotheses: Vec<Hypothesis> = found
        .into_iter()
        .map(|((class, members), (score, origin))| Hypothesis {
            id: hypothesis_id(class, &members),
            bbox: bbox_of(scene, &members),
            class,
            members,
            score: if score.is_finite() { score } else { 0.0 },
            origin,
        })
        .collect();
    keep_disjoint_per_class(&mut hypotheses);
    if hypotheses.len() > options.max_hypotheses {
        let mut order: Vec<usize> = (0..hypotheses.len()).collect();
        order.sort_by(|&a, &b| {
            hypotheses[b]
                .score
                .total_cmp(&hypotheses[a].score)
                .then(a.cmp(&b))
        });
        let mut keep = vec![false; hypotheses.len()];
        for &index in order.iter().take(options.max_hypotheses) {
            keep[index] = true;
        }
        let mut index = 0;
        hypotheses.retain(|_| {
            index += 1;
            keep[index - 1]
        });
    }
    // Resolve the (rare) id collisions deterministically: later entries in sorted order step forward.
    let mut used = std::collections::BTreeSet::new();
    for hypothesis in &mut hypotheses {
        hypothesis.id = claim_id(&mut used, hypothesis.id);
    }
    Ok(hypotheses)
}

/// Extra hypotheses for classes the operator named: connected groups of fine segments that have the class
/// among their `options.named_top_k` best classes and that no hypothesis of the class in `existing` holds
/// (so a class's hypotheses stay disjoint). "There's a laptop on the desk" can then switch on a desk the
/// robot ranked third. Returned sorted by (class, members), with ids that no hypothesis in `existing`
/// carries; classes outside the unaries are skipped.
pub fn propose_named(
    scene: &Scene,
    unaries: &Unaries,
    existing: &[Hypothesis],
    classes: &[ClassId],
    options: &ProposalOptions,
) -> Vec<Hypothesis> {
    let segment_count = scene.segment_count().min(unaries.segment_count());
    let class_count = unaries.class_count();
    let mut classes: Vec<ClassId> = classes
        .iter()
        .copied()
        .filter(|c| c.index() < class_count)
        .collect();
    classes.sort();
    classes.dedup();
    if classes.is_empty() || options.named_top_k <= options.top_k {
        return Vec::new();
    }
    let neighbours = segment_neighbours(scene, segment_count);
    let mut used: std::collections::BTreeSet<HypothesisId> =
        existing.iter().map(|h| h.id).collect();
    let mut proposed = Vec::new();
    for class in classes {
        let mut held = vec![false; segment_count];
        for hypothesis in existing.iter().filter(|h| h.class == class) {
            for member in &hypothesis.members {
                if let Some(flag) = held.get_mut(member.index()) {
                    *flag = true;
                }
            }
        }
        // Only the named class is ranked in each row (`among_top`), not every row's whole top list.
        let ranked = |s: usize| {
            let row = unaries.log_probs.row(s);
            match row.as_slice() {
                Some(values) => among_top(values, class.index(), options.named_top_k),
                None => among_top(&row.to_vec(), class.index(), options.named_top_k),
            }
        };
        let open = |s: usize| !held[s] && ranked(s);
        for members in connected_groups(&neighbours, open) {
            proposed.push(extra_hypothesis(
                (scene, unaries),
                &mut used,
                class,
                members,
                HypothesisOrigin::FineGroup,
            ));
        }
    }
    proposed
}

/// A hypothesis added to an existing list: scored by the class's mean probability over its members, with an
/// id no hypothesis in `used` carries (claimed).
fn extra_hypothesis(
    (scene, unaries): (&Scene, &Unaries),
    used: &mut std::collections::BTreeSet<HypothesisId>,
    class: ClassId,
    members: Vec<SegmentId>,
    origin: HypothesisOrigin,
) -> Hypothesis {
    let score = mean_probability(scene, unaries, class, &members);
    Hypothesis {
        id: claim_id(used, hypothesis_id(class, &members)),
        bbox: bbox_of(scene, &members),
        class,
        members,
        score: if score.is_finite() { score } else { 0.0 },
        origin,
    }
}

/// The connected groups of the segments `open` admits, over `neighbours`: each group ascending, groups in
/// the order of their smallest member.
fn connected_groups(
    neighbours: &[Vec<usize>],
    open: impl Fn(usize) -> bool,
) -> Vec<Vec<SegmentId>> {
    let mut seen = vec![false; neighbours.len()];
    let mut groups = Vec::new();
    for start in 0..neighbours.len() {
        if seen[start] || !open(start) {
            continue;
        }
        seen[start] = true;
        let mut group = vec![start];
        let mut cursor = 0;
        while cursor < group.len() {
            let here = group[cursor];
            cursor += 1;
            for &next in &neighbours[here] {
                if !seen[next] && open(next) {
                    seen[next] = true;
                    group.push(next);
                }
            }
        }
        let mut members: Vec<SegmentId> = group.into_iter().map(|s| SegmentId(s as u32)).collect();
        members.sort();
        groups.push(members);
    }
    groups
}

/// Each fine segment's neighbours over the adjacency graph.
pub(crate) fn segment_neighbours(scene: &Scene, segment_count: usize) -> Vec<Vec<usize>> {
    // Each list sized to its degree first, so the pushes below never grow one.
    let mut degree = vec![0usize; segment_count];
    for edge in scene.adjacency.raw_edges() {
        let (a, b) = (edge.source().index(), edge.target().index());
        if a < segment_count && b < segment_count {
            degree[a] += 1;
            degree[b] += 1;
        }
    }
    let mut neighbours: Vec<Vec<usize>> = degree.into_iter().map(Vec::with_capacity).collect();
    for edge in scene.adjacency.raw_edges() {
        let (a, b) = (edge.source().index(), edge.target().index());
        if a < segment_count && b < segment_count {
            neighbours[a].push(b);
            neighbours[b].push(a);
        }
    }
    neighbours
}

#[cfg(test)]
mod tests {
    use super::*;

    proptest::proptest! {
        /// The insertion pass keeps the classes a full sort of the row by (log-probability descending, class
        /// id ascending) puts first, in that order, ties and all.
        #[test]
        fn top_classes_match_sorting_the_row(
            row in proptest::collection::vec(-4i8..1, 0..50),
            top_k in 0usize..8,
        ) {
            // Few distinct values, so ties are common.
            let row: Vec<f32> = row.into_iter().map(|v| v as f32 * 0.5).collect();
            let mut order: Vec<usize> = (0..row.len()).collect();
            order.sort_by(|&a, &b| row[b].total_cmp(&row[a]).then(a.cmp(&b)));
            let expected: Vec<ClassId> =
                order.into_iter().take(top_k).map(|c| ClassId(c as u16)).collect();
            proptest::prop_assert_eq!(top_classes(&row, top_k), expected);
        }

        /// Ranking one class gives the membership the full top list gives, for every class of the row.
        #[test]
        fn ranking_one_class_matches_the_top_list(
            row in proptest::collection::vec(-4i8..1, 1..50),
            top_k in 0usize..8,
        ) {
            let row: Vec<f32> = row.into_iter().map(|v| v as f32 * 0.5).collect();
            let top = top_classes(&row, top_k);
            for class in 0..row.len() {
                proptest::prop_assert_eq!(
                    among_top(&row, class, top_k),
                    top.contains(&ClassId(class as u16))
                );
            }
        }
    }
}
