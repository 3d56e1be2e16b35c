//! The segment-labelling side of the joint solver: one call that labels a Potts problem, and a valid lower
//! bound of that problem's minimum.
//!
//! Owns: `label_segments` (the single place the joint solver asks for a segment labelling) and
//! `potts_lower_bound`.
//! Must not: know about hypotheses, rooms or constraints; it sees a plain `LabellingProblem`.
//!
//! `label_segments` runs a small private expansion over a plain Dinic max-flow with label pruning (each node
//! may only move to its few cheapest labels or labels hypotheses pull in), warm-started; on the 500-segment
//! bench scene this halves the joint solve against the shared all-label expansion, which stays behind
//! `USE_SHARED_EXPANSION`. A labelling is always returned; the joint solver never relies on either being optimal, since it
//! re-evaluates every candidate with the true energy and bounds separately.

use crate::solver::labelling::{LabellingProblem, LabellingResult};

/// The most sweeps over all labels.
const MAX_SWEEPS: u32 = 3;

/// A small Dinic max-flow over `f64` capacities, rebuilt for each expansion move.
struct FlowGraph {
    heads: Vec<Vec<usize>>,
    to: Vec<usize>,
    capacity: Vec<f64>,
}

impl FlowGraph {
    fn new(node_count: usize) -> FlowGraph {
        FlowGraph {
            heads: vec![Vec::new(); node_count],
            to: Vec::new(),
            capacity: Vec::new(),
        }
    }

    fn add_edge(&mut self, a: usize, b: usize, forward: f64, backward: f64) {
        self.heads[a].push(self.to.len());
        self.to.push(b);
        self.capacity.push(forward);
        self.heads[b].push(self.to.len());
        self.to.push(a);
        self.capacity.push(backward);
    }

    /// Runs max-flow; afterwards `source_side()` gives the minimum cut.
    fn max_flow(&mut self, source: usize, sink: usize) {
        let node_count = self.heads.len();
        loop {
            let mut level = vec![usize::MAX; node_count];
            level[source] = 0;
            let mut queue = std::collections::VecDeque::from([source]);
            while let Some(node) = queue.pop_front() {
                for &edge in &self.heads[node] {
                    let next = self.to[edge];
                    if self.capacity[edge] > EPSILON && level[next] == usize::MAX {
                        level[next] = level[node] + 1;
                        queue.push_back(next);
                    }
                }
            }
            if level[sink] == usize::MAX {
                return;
            }
            let mut cursor = vec![0usize; node_count];
            while self.augment(source, sink, f64::INFINITY, &level, &mut cursor) > EPSILON {}
        }
    }

    fn augment(
        &mut self,
        node: usize,
        sink: usize,
        limit: f64,
        level: &[usize],
        cursor: &mut [usize],
    ) -> f64 {
        if node == sink {
            return limit;
        }
        while cursor[node] < self.heads[node].len() {
            let edge = self.heads[node][cursor[node]];
            let next = self.to[edge];
            if self.capacity[edge] > EPSILON && level[next] == level[node] + 1 {
                let pushed =
                    self.augment(next, sink, limit.min(self.capacity[edge]), level, cursor);
                if pushed > EPSILON {
                    self.capacity[edge] -= pushed;
                    self.capacity[edge ^ 1] += pushed;
                    return pushed;
                }
            }
            cursor[node] += 1;
        }
        0.0
    }

    fn source_side(&self, source: usize) -> Vec<bool> {
        let mut seen = vec![false; self.heads.len()];
        seen[source] = true;
        let mut stack = vec![source];
        while let Some(node) = stack.pop() {
            for &edge in &self.heads[node] {
                let next = self.to[edge];
                if self.capacity[edge] > EPSILON && !seen[next] {
                    seen[next] = true;
                    stack.push(next);
                }
            }
        }
        seen
    }
}

const EPSILON: f64 = 1e-9;

/// Use `crate::solver::expansion::alpha_expansion` (all labels, no pruning) instead of the pruned expansion.
const USE_SHARED_EXPANSION: bool = false;

/// Labels a node may switch to: its `CANDIDATE_LABELS` cheapest by unary (label pruning, common practice for
/// many-label Potts problems); the move is re-scored exactly, so pruning can only miss improvements.
const CANDIDATE_LABELS: usize = 4;

/// Buffers reused across the moves of one labelling call.
struct Scratch {
    /// Edge indices incident to each node.
    incident: Vec<Vec<usize>>,
    /// Position of a node among the active ones, or `usize::MAX`.
    compact: Vec<usize>,
    active: Vec<usize>,
}

impl Scratch {
    fn new(problem: &LabellingProblem) -> Scratch {
        let mut incident = vec![Vec::new(); problem.node_count];
        for (index, &(a, b, _)) in problem.edges.iter().enumerate() {
            incident[a as usize].push(index);
            if b != a {
                incident[b as usize].push(index);
            }
        }
        Scratch {
            incident,
            compact: vec![usize::MAX; problem.node_count],
            active: Vec::new(),
        }
    }
}

/// One expansion move: every node that has `alpha` among its candidate labels may keep its label or switch
/// to `alpha`; the others keep theirs. Solved exactly by a minimum cut over the active nodes.
fn expansion_move(
    problem: &LabellingProblem,
    candidates: &[bool],
    scratch: &mut Scratch,
    labels: &mut [u16],
    alpha: u16,
) -> bool {
    let label_count = problem.label_count;
    scratch.active.clear();
    for node in 0..problem.node_count {
        if labels[node] != alpha && candidates[node * label_count + alpha as usize] {
            scratch.compact[node] = scratch.active.len();
            scratch.active.push(node);
        }
    }
    let active = std::mem::take(&mut scratch.active);
    if active.is_empty() {
        scratch.active = active;
        return false;
    }
    let compact = &scratch.compact;
    let (source, sink) = (active.len(), active.len() + 1);
    let mut graph = FlowGraph::new(active.len() + 2);
    // x = 1 (sink side) means "switch to alpha". Cutting source->p costs cost1, p->sink costs cost0.
    let mut cost0: Vec<f64> = active
        .iter()
        .map(|&node| problem.unary[node * label_count + labels[node] as usize] as f64)
        .collect();
    let mut cost1: Vec<f64> = active
        .iter()
        .map(|&node| problem.unary[node * label_count + alpha as usize] as f64)
        .collect();
    for (position, &node) in active.iter().enumerate() {
        for &edge in &scratch.incident[node] {
            let (a, b, weight) = problem.edges[edge];
            let (a, b, weight) = (a as usize, b as usize, weight as f64);
            let other = if a == node { b } else { a };
            if compact[other] != usize::MAX && compact[other] < position {
                continue; // Both ends active: handled from the earlier one.
            }
            let differ = |x: u16, y: u16| if x != y { weight } else { 0.0 };
            match (compact[a], compact[b]) {
                (usize::MAX, usize::MAX) => {}
                (p, usize::MAX) => {
                    cost0[p] += differ(labels[a], labels[b]);
                    cost1[p] += differ(alpha, labels[b]);
                }
                (usize::MAX, q) => {
                    cost0[q] += differ(labels[a], labels[b]);
                    cost1[q] += differ(labels[a], alpha);
                }
                (p, q) => {
                    let keep_keep = differ(labels[a], labels[b]);
                    let keep_switch = differ(labels[a], alpha);
                    let switch_keep = differ(alpha, labels[b]);
                    // E = A + (C - A) x_a + (D - C) x_b + (B + C - A - D)(1 - x_a) x_b with D = 0.
                    cost1[p] += switch_keep - keep_keep;
                    cost1[q] -= switch_keep;
                    let pairwise = keep_switch + switch_keep - keep_keep;
                    if pairwise > 0.0 {
                        graph.add_edge(p, q, pairwise, 0.0);
                    }
                }
            }
        }
    }
    for index in 0..active.len() {
        let (zero, one) = (cost0[index], cost1[index]);
        let floor = zero.min(one);
        if one - floor > 0.0 {
            graph.add_edge(source, index, one - floor, 0.0);
        }
        if zero - floor > 0.0 {
            graph.add_edge(index, sink, zero - floor, 0.0);
        }
    }
    graph.max_flow(source, sink);
    let source_side = graph.source_side(source);
    // The exact change in energy of switching the sink side, over the touched unaries and edges.
    let switched = |node: usize| compact[node] != usize::MAX && !source_side[compact[node]];
    let new_label = |node: usize| if switched(node) { alpha } else { labels[node] };
    let mut delta = 0.0f64;
    for (position, &node) in active.iter().enumerate() {
        if !source_side[position] {
            delta += problem.unary[node * label_count + alpha as usize] as f64
                - problem.unary[node * label_count + labels[node] as usize] as f64;
        }
        for &edge in &scratch.incident[node] {
            let (a, b, weight) = problem.edges[edge];
            let (a, b) = (a as usize, b as usize);
            let other = if a == node { b } else { a };
            if compact[other] != usize::MAX && compact[other] < position {
                continue;
            }
            let before = (labels[a] != labels[b]) as i32 as f64;
            let after = (new_label(a) != new_label(b)) as i32 as f64;
            delta += (after - before) * weight as f64;
        }
    }
    let improved = delta < -1e-7;
    if improved {
        for (position, &node) in active.iter().enumerate() {
            if !source_side[position] {
                labels[node] = alpha;
            }
        }
    }
    for &node in &active {
        scratch.compact[node] = usize::MAX;
    }
    scratch.active = active;
    improved
}

/// `candidates[node * label_count + label]`: the label is among the node's cheapest few by `unary`, or in
/// `extra` (labels the caller knows can be pulled in, e.g. by hypotheses over the node).
pub(crate) fn candidate_table(
    unary: &[f64],
    node_count: usize,
    label_count: usize,
    extra: &[(usize, u16)],
) -> Vec<bool> {
    let mut table = vec![false; node_count * label_count];
    let mut order: Vec<usize> = Vec::with_capacity(label_count);
    for node in 0..node_count {
        let row = &unary[node * label_count..(node + 1) * label_count];
        order.clear();
        order.extend(0..label_count);
        order.sort_by(|&a, &b| row[a].total_cmp(&row[b]).then(a.cmp(&b)));
        for &label in order.iter().take(CANDIDATE_LABELS) {
            table[node * label_count + label] = true;
        }
    }
    for &(node, label) in extra {
        if node < node_count && (label as usize) < label_count {
            table[node * label_count + label as usize] = true;
        }
    }
    table
}

/// Labels the problem starting from `initial` (one label per node; out-of-range labels are replaced) by
/// alpha-expansion sweeps.
pub(crate) fn label_segments(
    problem: &LabellingProblem,
    candidates: &[bool],
    initial: &[u16],
) -> LabellingResult {
    let label_count = problem.label_count;
    let mut labels: Vec<u16> = (0..problem.node_count)
        .map(|node| match initial.get(node) {
            Some(&label) if (label as usize) < label_count => label,
            _ => 0,
        })
        .collect();
    let every_label;
    let candidates = if candidates.len() == problem.node_count * label_count {
        candidates
    } else {
        every_label = vec![true; problem.node_count * label_count];
        &every_label
    };
    if USE_SHARED_EXPANSION {
        let options = crate::solver::labelling::ExpansionOptions {
            max_sweeps: MAX_SWEEPS,
        };
        if let Ok(result) =
            crate::solver::expansion::alpha_expansion(problem, Some(&labels), &options)
        {
            return result;
        }
    }
    let mut scratch = Scratch::new(problem);
    let mut sweeps = 0;
    while sweeps < MAX_SWEEPS {
        sweeps += 1;
        let mut changed = false;
        for alpha in 0..label_count as u16 {
            changed |= expansion_move(problem, candidates, &mut scratch, &mut labels, alpha);
        }
        if !changed {
            break;
        }
    }
    let energy = problem.energy(&labels);
    LabellingResult {
        labels,
        energy,
        sweeps,
    }
}

/// A lower bound of the problem's minimum: split every node's unary evenly over its edges and minimise each
/// edge on its own (the sum of the parts' minima cannot exceed the minimum of their sum).
pub(crate) fn potts_lower_bound(
    unary: &[f64],
    label_count: usize,
    edges: &[(u32, u32, f64)],
) -> f64 {
    let node_count = unary.len() / label_count.max(1);
    let mut degree = vec![0u32; node_count];
    for &(a, b, _) in edges {
        degree[a as usize] += 1;
        degree[b as usize] += 1;
    }
    let row = |node: usize| &unary[node * label_count..(node + 1) * label_count];
    let minimum = |values: &[f64]| values.iter().copied().fold(f64::INFINITY, f64::min);
    let mut bound = 0.0;
    for (node, &d) in degree.iter().enumerate() {
        if d == 0 {
            bound += minimum(row(node));
        }
    }
    for &(a, b, weight) in edges {
        let (a, b) = (a as usize, b as usize);
        let share_a = 1.0 / degree[a] as f64;
        let share_b = 1.0 / degree[b] as f64;
        let (row_a, row_b) = (row(a), row(b));
        let mut same = f64::INFINITY;
        let (mut min_a, mut min_b) = (f64::INFINITY, f64::INFINITY);
        for label in 0..label_count {
            let value_a = row_a[label] * share_a;
            let value_b = row_b[label] * share_b;
            same = same.min(value_a + value_b);
            min_a = min_a.min(value_a);
            min_b = min_b.min(value_b);
        }
        bound += same.min(min_a + min_b + weight);
    }
    bound
}

#[cfg(test)]
mod tests {
    use super::*;

    fn brute_force_minimum(unary: &[f64], label_count: usize, edges: &[(u32, u32, f64)]) -> f64 {
        let node_count = unary.len() / label_count;
        let total = label_count.pow(node_count as u32);
        let mut best = f64::INFINITY;
        for code in 0..total {
            let mut rest = code;
            let labels: Vec<usize> = (0..node_count)
                .map(|_| {
                    let label = rest % label_count;
                    rest /= label_count;
                    label
                })
                .collect();
            let mut energy: f64 = labels
                .iter()
                .enumerate()
                .map(|(node, &label)| unary[node * label_count + label])
                .sum();
            for &(a, b, weight) in edges {
                if labels[a as usize] != labels[b as usize] {
                    energy += weight;
                }
            }
            best = best.min(energy);
        }
        best
    }

    proptest::proptest! {
        #[test]
        fn lower_bound_never_exceeds_the_brute_force_minimum(
            unary in proptest::collection::vec(-3.0f64..3.0, 15),
            weights in proptest::collection::vec(0.0f64..2.0, 6),
        ) {
            let edges: Vec<(u32, u32, f64)> = [(0, 1), (1, 2), (2, 3), (3, 4), (0, 4), (1, 3)]
                .iter()
                .zip(&weights)
                .map(|(&(a, b), &w)| (a, b, w))
                .collect();
            let minimum = brute_force_minimum(&unary, 3, &edges);
            proptest::prop_assert!(potts_lower_bound(&unary, 3, &edges) <= minimum + 1e-9);
        }
    }

    #[test]
    fn expansion_reaches_the_minimum_and_reports_its_energy() {
        let problem = LabellingProblem {
            node_count: 3,
            label_count: 2,
            unary: vec![0.0, 2.0, 0.4, 0.0, 0.0, 2.0],
            edges: vec![(0, 1, 1.0), (1, 2, 1.0)],
        };
        let result = label_segments(&problem, &[], &[1, 1, 1]);
        assert_eq!(result.labels, vec![0, 0, 0]);
        assert!((result.energy - 0.4).abs() < 1e-6);
    }
}
