//! The joint solve of one region: a re-solve that lets only the nodes near what changed move, the rest held
//! at a previous state's labels, widened when the answer reaches the region's edge and replaced by the
//! whole solve when the region grows past a share of the scene.
//!
//! Owns: `solve_joint_region` (and `solve_joint_region_loose`, the same without the bound), `RegionOutcome`, `touched_nodes` (where two energies of a scene differ; `touched_by_constraints` when
//! only their constraint parts can), and
//! the reduced energy a region is solved on.
//! Must not: decide which nodes a change touches (the caller names them); know about language, files or
//! what classes mean.
//!
//! # Method
//!
//! With the labels outside the region fixed, the energy is exactly a smaller joint energy over the region's
//! nodes (conditioning, as in any block-coordinate method): an edge from a free node to a fixed one becomes
//! a unary term of the free node (its weight on every label but the fixed one), a hypothesis's fixed members
//! that disagree with its class add their agreement weight to its activation cost, a class some fixed fine
//! segment carries is present whatever the region does (its presence cost and its absent factors become a
//! constant), and every constant is added to each room's cost, so the reduced energy of a state is the whole
//! energy of that state with the fixed labels filled in. Hypotheses, rooms and factors over hypotheses stay
//! whole. The reduced energy is solved by `crate::joint`'s loose solve from the previous state and
//! multipliers restricted to the region.
//!
//! The region is the seeds grown by `rings` hops over the fine segments' edges, with every coarse node linked
//! to one of its fine nodes. When a node of the outermost ring changes label, the change may go on past the
//! region: the rings are doubled and the region solved again from the answer. Past `MAX_FREE_SHARE` of the
//! fine nodes, the whole energy is solved instead (`solve_joint_loose`).
//!
//! The reported lower bound is one of the whole energy: the even split of the segment part at the previous
//! multipliers with the region's own in their place (any multipliers give a valid bound).

use crate::energy::{JointEnergy, JointState};
use crate::joint::{
    solve, solve_joint_loose, JointError, JointOptions, JointSolution, Multipliers,
};
use crate::joint::{PresenceMultiplier, WarmStart};
use crate::joint_coupled::CoupledTables;
use crate::joint_dual::{adapt_multipliers, even_split_dual_bound, BoundInputs};
use crate::potts_bound::PottsBound;

/// Hops over fine edges the region first reaches from its seeds.
pub const INITIAL_RINGS: u32 = 3;

/// Doublings of the rings at most before the whole energy is solved.
const MAX_WIDENINGS: u32 = 3;

/// Past this share of the fine nodes free, the whole energy is solved instead.
pub const MAX_FREE_SHARE: f64 = 0.5;

/// How a region solve went.
#[derive(Clone, Debug, PartialEq)]
pub struct RegionOutcome {
    /// Fine and coarse nodes free in the last solve (all nodes when the whole energy was solved).
    pub free_nodes: usize,
    /// Rings of the last region (0 when the whole energy was solved).
    pub rings: u32,
    /// Regions solved (each widening adds one).
    pub solves: u32,
    /// The whole energy was solved: no seed, a warm start that does not fit, or the region grew too large.
    pub whole: bool,
}

/// Solves `energy` letting only the region grown from `seeds` (fine node ids) move, the other nodes held at
/// `warm`'s labels; see the module's method. The solution is one of the whole energy (its state, energy and
/// a valid lower bound of the whole energy). Without a seed, or with a warm start whose labels do not fit,
/// it is `solve_joint_loose`.
pub fn solve_joint_region(
    energy: &JointEnergy,
    warm: &WarmStart,
    seeds: &[u32],
    options: &JointOptions,
) -> Result<(JointSolution, RegionOutcome), JointError> {
    region(energy, warm, seeds, options, true)
}

/// `solve_joint_region` without the whole energy's bound when a region was solved: its lower bound is
/// `f64::NEG_INFINITY` (relative gap infinite), for a solve whose bound is thrown away or set by
/// `crate::joint::tighten_bound` (which then tightens from the even split at the solution's multipliers, a
/// bound at least the one `solve_joint_region` reports). A whole solve is `solve_joint_loose`'s, as there.
pub fn solve_joint_region_loose(
    energy: &JointEnergy,
    warm: &WarmStart,
    seeds: &[u32],
    options: &JointOptions,
) -> Result<(JointSolution, RegionOutcome), JointError> {
    region(energy, warm, seeds, options, false)
}

fn region(
    energy: &JointEnergy,
    warm: &WarmStart,
    seeds: &[u32],
    options: &JointOptions,
    with_bound: bool,
) -> Result<(JointSolution, RegionOutcome), JointError> {
    energy.validate()?;
    let whole = |energy: &JointEnergy| -> Result<(JointSolution, RegionOutcome), JointError> {
        let solution = solve_joint_loose(energy, Some(warm), options)?;
        Ok((
            solution,
            RegionOutcome {
                free_nodes: energy.node_count,
                rings: 0,
                solves: 1,
                whole: true,
            },
        ))
    };
    let fits = warm.state.labels.len() == energy.node_count
        && warm
            .state
            .labels
            .iter()
            .all(|&label| (label as usize) < energy.label_count);
    let seeds: Vec<u32> = seeds
        .iter()
        .copied()
        .filter(|&s| (s as usize) < energy.fine_count)
        .collect();
    if !fits || seeds.is_empty() {
        return whole(energy);
    }
    let graph = FineGraph::new(energy);
    let folded = energy.folded_unary();
    let previous = warm
        .multipliers
        .as_ref()
        .map(|m| adapt_multipliers(energy, m))
        .unwrap_or_else(|| adapt_multipliers(energy, &Multipliers::default()));
    let mut start = warm.clone();
    let mut rings = INITIAL_RINGS;
    let mut solves = 0;
    loop {
        let (distance, free) = graph.grow(energy, &seeds, rings);
        let free_fine = free
            .iter()
            .filter(|&&n| (n as usize) < energy.fine_count)
            .count();
        if free_fine as f64 > MAX_FREE_SHARE * energy.fine_count as f64 {
            let (solution, mut outcome) = whole(energy)?;
            outcome.solves += solves;
            return Ok((solution, outcome));
        }
        let reduced = Reduced::new(energy, &folded, &start.state, &free);
        let reduced_warm = WarmStart {
            state: reduced.restrict_state(&start.state),
            multipliers: Some(reduced.restrict_multipliers(energy, &previous)),
        };
        let solved = solve(&reduced.energy, Some(&reduced_warm), options, false)?;
        solves += 1;
        let state = reduced.expand_state(&start.state, &solved.state);
        let reached_edge = free.iter().any(|&node| {
            let node = node as usize;
            node < energy.fine_count
                && distance[node] == rings
                && state.labels[node] != start.state.labels[node]
        });
        let multipliers = reduced.expand_multipliers(energy, &previous, &solved.multipliers);
        if reached_edge && solves <= MAX_WIDENINGS {
            start = WarmStart {
                state,
                multipliers: None,
            };
            rings *= 2;
            continue;
        }
        let lower_bound = if with_bound {
            whole_bound(energy, &folded, &multipliers).min(solved.energy)
        } else {
            f64::NEG_INFINITY
        };
        let solution = JointSolution {
            presence: energy.presence(&state),
            energy: solved.energy,
            lower_bound,
            relative_gap: gap(solved.energy, lower_bound),
            iterations: solved.iterations,
            coupled_exact: solved.coupled_exact,
            multipliers,
            state,
        };
        return Ok((
            solution,
            RegionOutcome {
                free_nodes: free.len(),
                rings,
                solves,
                whole: false,
            },
        ));
    }
}

/// The fine nodes where `after` differs from `before` (what a change between two energies of one scene
/// touches), read with `labels` (the state the re-solve starts from): each node whose unary row differs, the
/// members of each hypothesis added or changed, the segments of each unary factor added or removed, the
/// members of each hypothesis in a tuple factor added or removed, and, for a count or absent factor added or
/// removed, the fine nodes labelled its class and the members of the hypotheses of its class. `None` when a
/// change reaches every node: other shapes or edges, other room or presence costs, a coarse node's unary,
/// fewer hypotheses.
pub fn touched_nodes(
    before: &JointEnergy,
    after: &JointEnergy,
    labels: &[u16],
) -> Option<Vec<u32>> {
    if before.edges != after.edges || before.unary.len() != after.unary.len() {
        return None;
    }
    touched(before, after, labels, true)
}

/// `touched_nodes` for a `before` that holds only the constraint part of an energy of the same scene: the
/// same counts, hypotheses, room and presence costs and factors, but no unary table and no edges (what
/// `sayso_core::energy::build::build_constraint_part` builds, so a turn builds its segment part once). The
/// segment part is taken to be `after`'s; the answer is `touched_nodes` against the whole `before`.
pub fn touched_by_constraints(
    before: &JointEnergy,
    after: &JointEnergy,
    labels: &[u16],
) -> Option<Vec<u32>> {
    touched(before, after, labels, false)
}

/// `touched_nodes`, the unary rows compared only when `compare_unary` (the caller has checked the tables
/// have one length and the edges are equal, or that `before` shares `after`'s segment part).
fn touched(
    before: &JointEnergy,
    after: &JointEnergy,
    labels: &[u16],
    compare_unary: bool,
) -> Option<Vec<u32>> {
    if before.label_count != after.label_count
        || before.fine_count != after.fine_count
        || before.node_count != after.node_count
        || before.room_count != after.room_count
        || labels.len() != after.node_count
        || before.hypotheses.len() > after.hypotheses.len()
        || before.room_cost != after.room_cost
        || before.presence_cost != after.presence_cost
    {
        return None;
    }
    let label_count = after.label_count;
    let mut touched = vec![false; after.fine_count];
    if compare_unary {
        for (node, (old, new)) in before
            .unary
            .chunks(label_count)
            .zip(after.unary.chunks(label_count))
            .enumerate()
        {
            if old != new {
                *touched.get_mut(node)? = true;
            }
        }
    }
    let mut mark = |segments: &[u32]| {
        for &segment in segments {
            if let Some(flag) = touched.get_mut(segment as usize) {
                *flag = true;
            }
        }
    };
    for (h, new) in after.hypotheses.iter().enumerate() {
        match before.hypotheses.get(h) {
            Some(old) if old == new => {}
            Some(old) => {
                mark(&old.members);
                mark(&new.members);
            }
            None => mark(&new.members),
        }
    }
    for factor in one_sided(&before.unary_factors, &after.unary_factors) {
        mark(&factor.segments);
    }
    for factor in one_sided(&before.tuple_factors, &after.tuple_factors) {
        for tuple in &factor.tuples {
            for &h in tuple {
                if let Some(hypothesis) = after.hypotheses.get(h as usize) {
                    mark(&hypothesis.members);
                }
            }
        }
    }
    let mut classes: Vec<u16> = one_sided(&before.count_factors, &after.count_factors)
        .map(|factor| factor.class)
        .chain(one_sided(&before.absent_factors, &after.absent_factors).map(|factor| factor.class))
        .collect();
    classes.sort_unstable();
    classes.dedup();
    for &class in &classes {
        for hypothesis in after.hypotheses.iter().filter(|h| h.class == class) {
            mark(&hypothesis.members);
        }
    }
    let mut seeds = Vec::new();
    for (node, flag) in touched.iter().enumerate() {
        if *flag || classes.binary_search(&labels[node]).is_ok() {
            seeds.push(node as u32);
        }
    }
    Some(seeds)
}

/// The entries of either list that the other does not hold as many times (a multiset difference, both ways).
fn one_sided<'a, T: PartialEq>(before: &'a [T], after: &'a [T]) -> impl Iterator<Item = &'a T> {
    let extra = |from: &'a [T], other: &'a [T]| {
        from.iter().enumerate().filter(move |&(index, item)| {
            let earlier = from[..index].iter().filter(|x| *x == item).count();
            other.iter().filter(|x| *x == item).count() <= earlier
        })
    };
    extra(before, after)
        .chain(extra(after, before))
        .map(|(_, item)| item)
}

fn gap(energy: f64, lower_bound: f64) -> f64 {
    if lower_bound == f64::NEG_INFINITY {
        return f64::INFINITY;
    }
    ((energy - lower_bound) / energy.abs().max(1.0)).max(0.0)
}

/// The whole energy's dual at `multipliers`, the segment part by the even split.
fn whole_bound(energy: &JointEnergy, folded: &[f64], multipliers: &Multipliers) -> f64 {
    let coupled = CoupledTables::new(energy);
    let mut bound = PottsBound::new(energy.node_count, energy.label_count, &energy.edges);
    let mut unary = Vec::with_capacity(folded.len());
    even_split_dual_bound(
        BoundInputs {
            energy,
            folded,
            coupled: &coupled,
            bound: &mut bound,
            unary: &mut unary,
        },
        multipliers,
    )
}

/// The fine segments' adjacency (compressed) and each coarse node's fine neighbours.
struct FineGraph {
    start: Vec<usize>,
    neighbour: Vec<u32>,
    /// `(fine, coarse)` links.
    links: Vec<(u32, u32)>,
}

impl FineGraph {
    fn new(energy: &JointEnergy) -> FineGraph {
        let fine = energy.fine_count;
        let mut degree = vec![0usize; fine + 1];
        let mut links = Vec::new();
        for &(a, b, _) in &energy.edges {
            let (a, b) = (a as usize, b as usize);
            if a == b {
                continue;
            }
            match (a < fine, b < fine) {
                (true, true) => {
                    degree[a] += 1;
                    degree[b] += 1;
                }
                (true, false) => links.push((a as u32, b as u32)),
                (false, true) => links.push((b as u32, a as u32)),
                (false, false) => {}
            }
        }
        let mut start = vec![0usize; fine + 1];
        for node in 0..fine {
            start[node + 1] = start[node] + degree[node];
        }
        let mut neighbour = vec![0u32; start[fine]];
        let mut fill = start.clone();
        for &(a, b, _) in &energy.edges {
            let (a, b) = (a as usize, b as usize);
            if a != b && a < fine && b < fine {
                neighbour[fill[a]] = b as u32;
                fill[a] += 1;
                neighbour[fill[b]] = a as u32;
                fill[b] += 1;
            }
        }
        FineGraph {
            start,
            neighbour,
            links,
        }
    }

    /// Hops from the seeds (`u32::MAX` beyond `rings`) and the free nodes, ascending: fine nodes within
    /// `rings` hops, then the coarse nodes linked to one of them.
    fn grow(&self, energy: &JointEnergy, seeds: &[u32], rings: u32) -> (Vec<u32>, Vec<u32>) {
        let fine = energy.fine_count;
        let mut distance = vec![u32::MAX; fine];
        let mut frontier: Vec<u32> = Vec::new();
        for &seed in seeds {
            if distance[seed as usize] == u32::MAX {
                distance[seed as usize] = 0;
                frontier.push(seed);
            }
        }
        for hop in 1..=rings {
            let mut next = Vec::new();
            for &node in &frontier {
                let node = node as usize;
                for &other in &self.neighbour[self.start[node]..self.start[node + 1]] {
                    if distance[other as usize] == u32::MAX {
                        distance[other as usize] = hop;
                        next.push(other);
                    }
                }
            }
            if next.is_empty() {
                break;
            }
            frontier = next;
        }
        let mut coarse_free = vec![false; energy.node_count - fine];
        for &(f, c) in &self.links {
            if distance[f as usize] != u32::MAX {
                coarse_free[c as usize - fine] = true;
            }
        }
        let free: Vec<u32> = (0..fine as u32)
            .filter(|&n| distance[n as usize] != u32::MAX)
            .chain(
                (0..coarse_free.len())
                    .filter(|&c| coarse_free[c])
                    .map(|c| (c + fine) as u32),
            )
            .collect();
        (distance, free)
    }
}

/// The energy over a region's nodes with the rest fixed (see the module's method), and its node numbering.
struct Reduced {
    energy: JointEnergy,
    /// The whole energy's node of each reduced node.
    nodes: Vec<u32>,
    /// The reduced node of each whole node, `u32::MAX` when fixed.
    index: Vec<u32>,
    /// For each hypothesis, the positions of its free members in its member list.
    free_members: Vec<Vec<usize>>,
}

impl Reduced {
    /// `free` ascending, fine nodes first; `labels` of `state` hold the fixed nodes' labels.
    fn new(energy: &JointEnergy, folded: &[f64], state: &JointState, free: &[u32]) -> Reduced {
        let label_count = energy.label_count;
        let labels = &state.labels;
        let mut index = vec![u32::MAX; energy.node_count];
        for (position, &node) in free.iter().enumerate() {
            index[node as usize] = position as u32;
        }
        let fine_count = free
            .iter()
            .filter(|&&n| (n as usize) < energy.fine_count)
            .count();
        let mut unary = Vec::with_capacity(free.len() * label_count);
        for &node in free {
            let row = node as usize * label_count;
            unary.extend_from_slice(&folded[row..row + label_count]);
        }
        let mut constant = 0.0;
        for (node, &label) in labels.iter().enumerate() {
            if index[node] == u32::MAX {
                constant += folded[node * label_count + label as usize];
            }
        }
        let mut edges = Vec::new();
        for &(a, b, weight) in &energy.edges {
            let (ia, ib) = (index[a as usize], index[b as usize]);
            match (ia != u32::MAX, ib != u32::MAX) {
                (true, true) => edges.push((ia, ib, weight)),
                (true, false) | (false, true) => {
                    let (free_node, fixed) = if ia != u32::MAX { (ia, b) } else { (ib, a) };
                    let row = free_node as usize * label_count;
                    let fixed_label = labels[fixed as usize] as usize;
                    for (label, cost) in unary[row..row + label_count].iter_mut().enumerate() {
                        if label != fixed_label {
                            *cost += weight;
                        }
                    }
                }
                (false, false) => {
                    if labels[a as usize] != labels[b as usize] {
                        constant += weight;
                    }
                }
            }
        }
        let mut hypotheses = energy.hypotheses.clone();
        let mut free_members = Vec::with_capacity(hypotheses.len());
        for hypothesis in &mut hypotheses {
            let mut kept = Vec::new();
            let mut positions = Vec::new();
            let mut disagreeing = 0usize;
            for (position, &member) in hypothesis.members.iter().enumerate() {
                let reduced = index[member as usize];
                if reduced == u32::MAX {
                    disagreeing += (labels[member as usize] != hypothesis.class) as usize;
                } else {
                    kept.push(reduced);
                    positions.push(position);
                }
            }
            hypothesis.activation_cost += hypothesis.agreement_weight * disagreeing as f64;
            hypothesis.members = kept;
            free_members.push(positions);
        }
        // Classes a fixed fine segment carries are present whatever the region does.
        let mut forced = vec![false; label_count];
        for (node, &label) in labels.iter().enumerate().take(energy.fine_count) {
            if index[node] == u32::MAX {
                forced[label as usize] = true;
            }
        }
        let mut room_cost = energy.room_cost.clone();
        let mut presence_cost = energy.presence_cost.clone();
        for (room, cost) in room_cost.iter_mut().enumerate() {
            for class in 0..label_count {
                if forced[class] {
                    *cost += presence_cost[room * label_count + class];
                    presence_cost[room * label_count + class] = 0.0;
                }
            }
        }
        let mut absent_factors = Vec::new();
        for factor in &energy.absent_factors {
            if forced[factor.class as usize] {
                constant += factor.weight;
            } else {
                absent_factors.push(factor.clone());
            }
        }
        for cost in &mut room_cost {
            *cost += constant;
        }
        let reduced = JointEnergy {
            schema: energy.schema,
            label_count,
            fine_count,
            node_count: free.len(),
            unary,
            edges,
            hypotheses,
            room_count: energy.room_count,
            room_cost,
            presence_cost,
            count_factors: energy.count_factors.clone(),
            absent_factors,
            tuple_factors: energy.tuple_factors.clone(),
            unary_factors: Vec::new(),
        };
        Reduced {
            energy: reduced,
            nodes: free.to_vec(),
            index,
            free_members,
        }
    }

    fn restrict_state(&self, state: &JointState) -> JointState {
        JointState {
            labels: self
                .nodes
                .iter()
                .map(|&n| state.labels[n as usize])
                .collect(),
            hypotheses_on: state.hypotheses_on.clone(),
            room: state.room,
        }
    }

    /// `around`'s labels with the region's from `solved`, and `solved`'s hypotheses and room.
    fn expand_state(&self, around: &JointState, solved: &JointState) -> JointState {
        let mut labels = around.labels.clone();
        for (&node, &label) in self.nodes.iter().zip(&solved.labels) {
            labels[node as usize] = label;
        }
        JointState {
            labels,
            hypotheses_on: solved.hypotheses_on.clone(),
            room: solved.room,
        }
    }

    /// Whole multipliers (fitted to the whole energy) restricted to the region.
    fn restrict_multipliers(&self, energy: &JointEnergy, whole: &Multipliers) -> Multipliers {
        let agreement = whole
            .agreement
            .iter()
            .zip(&self.free_members)
            .map(|(row, positions)| positions.iter().map(|&p| row[p]).collect())
            .collect();
        let presence = whole
            .presence
            .iter()
            .filter_map(|entry| {
                let reduced = self.index[entry.segment as usize];
                ((entry.segment as usize) < energy.fine_count && reduced != u32::MAX).then_some(
                    PresenceMultiplier {
                        segment: reduced,
                        ..*entry
                    },
                )
            })
            .collect();
        Multipliers {
            agreement,
            presence,
        }
    }

    /// `whole` with the region's multipliers put in from `reduced`.
    fn expand_multipliers(
        &self,
        energy: &JointEnergy,
        whole: &Multipliers,
        reduced: &Multipliers,
    ) -> Multipliers {
        let mut agreement = whole.agreement.clone();
        for ((row, positions), values) in agreement
            .iter_mut()
            .zip(&self.free_members)
            .zip(&reduced.agreement)
        {
            for (&position, &value) in positions.iter().zip(values) {
                row[position] = value;
            }
        }
        let mut presence: Vec<PresenceMultiplier> = whole
            .presence
            .iter()
            .filter(|entry| self.index[entry.segment as usize] == u32::MAX)
            .copied()
            .collect();
        presence.extend(
            reduced
                .presence
                .iter()
                .filter(|entry| (entry.segment as usize) < self.energy.fine_count)
                .map(|entry| PresenceMultiplier {
                    segment: self.nodes[entry.segment as usize],
                    ..*entry
                }),
        );
        presence.retain(|entry| (entry.segment as usize) < energy.fine_count);
        presence.sort_unstable_by_key(|entry| (entry.segment, entry.class));
        Multipliers {
            agreement,
            presence,
        }
    }
}

#[cfg(test)]
mod tests;
