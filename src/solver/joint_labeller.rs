//! The segment-labelling side of the joint solver: one call that labels a Potts problem, and a valid lower
//! bound of that problem's minimum.
//!
//! Owns: `label_segments` (the single place the joint solver asks for a segment labelling) and
//! `potts_lower_bound`.
//! Must not: know about hypotheses, rooms or constraints; it sees a plain `LabellingProblem`.
//!
//! Until the shared alpha-expansion (`crate::solver::expansion`) lands, `label_segments` runs a small private
//! alpha-expansion over a plain Dinic max-flow, rebuilt per move; the joint solver never relies on it being
//! optimal, since it re-evaluates every candidate with the true energy and bounds separately.

use crate::solver::labelling::{LabellingProblem, LabellingResult};

/// The most sweeps over all labels.
const MAX_SWEEPS: u32 = 8;

/// Neighbour lists of a problem, built once per joint solve.
pub(crate) struct Neighbours {
    offsets: Vec<usize>,
    entries: Vec<(u32, f32)>,
}

impl Neighbours {
    pub(crate) fn new(problem: &LabellingProblem) -> Neighbours {
        let mut degree = vec![0usize; problem.node_count + 1];
        for &(a, b, _) in &problem.edges {
            degree[a as usize] += 1;
            degree[b as usize] += 1;
        }
        let mut offsets = vec![0usize; problem.node_count + 1];
        for node in 0..problem.node_count {
            offsets[node + 1] = offsets[node] + degree[node];
        }
        let mut fill = offsets.clone();
        let mut entries = vec![(0u32, 0f32); offsets[problem.node_count]];
        for &(a, b, weight) in &problem.edges {
            entries[fill[a as usize]] = (b, weight);
            fill[a as usize] += 1;
            entries[fill[b as usize]] = (a, weight);
            fill[b as usize] += 1;
        }
        Neighbours { offsets, entries }
    }

    #[allow(dead_code)]
    fn of(&self, node: usize) -> &[(u32, f32)] {
        &self.entries[self.offsets[node]..self.offsets[node + 1]]
    }
}

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

/// One expansion move: every node may keep its label or switch to `alpha`; solved exactly by a cut.
fn expansion_move(problem: &LabellingProblem, labels: &mut [u16], alpha: u16) -> bool {
    let node_count = problem.node_count;
    let label_count = problem.label_count;
    let (source, sink) = (node_count, node_count + 1);
    let mut graph = FlowGraph::new(node_count + 2);
    // x = 1 (sink side) means "switch to alpha". Cutting source->p costs cost1, p->sink costs cost0.
    let mut cost0 = vec![0.0f64; node_count];
    let mut cost1 = vec![0.0f64; node_count];
    for node in 0..node_count {
        cost0[node] = problem.unary[node * label_count + labels[node] as usize] as f64;
        cost1[node] = problem.unary[node * label_count + alpha as usize] as f64;
    }
    for &(a, b, weight) in &problem.edges {
        let (a, b, weight) = (a as usize, b as usize, weight as f64);
        let differ = |x: u16, y: u16| if x != y { weight } else { 0.0 };
        let keep_keep = differ(labels[a], labels[b]);
        let keep_switch = differ(labels[a], alpha);
        let switch_keep = differ(alpha, labels[b]);
        // E = A + (C - A) x_a + (D - C) x_b + (B + C - A - D)(1 - x_a) x_b with D = 0.
        cost1[a] += switch_keep - keep_keep;
        cost1[b] -= switch_keep;
        let pairwise = keep_switch + switch_keep - keep_keep;
        if pairwise > 0.0 {
            graph.add_edge(a, b, pairwise, 0.0);
        }
    }
    for node in 0..node_count {
        let (zero, one) = (cost0[node], cost1[node]);
        let floor = zero.min(one);
        if one - floor > 0.0 {
            graph.add_edge(source, node, one - floor, 0.0);
        }
        if zero - floor > 0.0 {
            graph.add_edge(node, sink, zero - floor, 0.0);
        }
    }
    graph.max_flow(source, sink);
    let source_side = graph.source_side(source);
    let before = problem.energy(labels);
    let mut proposal = labels.to_vec();
    for node in 0..node_count {
        if !source_side[node] {
            proposal[node] = alpha;
        }
    }
    let after = problem.energy(&proposal);
    if after < before - 1e-7 {
        labels.copy_from_slice(&proposal);
        true
    } else {
        false
    }
}

/// Labels the problem starting from `initial` (one label per node; out-of-range labels are replaced) by
/// alpha-expansion sweeps.
pub(crate) fn label_segments(
    problem: &LabellingProblem,
    _neighbours: &Neighbours,
    initial: &[u16],
) -> LabellingResult {
    let label_count = problem.label_count;
    let mut labels: Vec<u16> = (0..problem.node_count)
        .map(|node| match initial.get(node) {
            Some(&label) if (label as usize) < label_count => label,
            _ => 0,
        })
        .collect();
    let mut sweeps = 0;
    while sweeps < MAX_SWEEPS {
        sweeps += 1;
        let mut changed = false;
        for alpha in 0..label_count as u16 {
            changed |= expansion_move(problem, &mut labels, alpha);
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
    fn conditional_modes_reach_a_local_minimum_and_report_its_energy() {
        let problem = LabellingProblem {
            node_count: 3,
            label_count: 2,
            unary: vec![0.0, 2.0, 0.4, 0.0, 0.0, 2.0],
            edges: vec![(0, 1, 1.0), (1, 2, 1.0)],
        };
        let neighbours = Neighbours::new(&problem);
        let result = label_segments(&problem, &neighbours, &[1, 1, 1]);
        assert_eq!(result.labels, vec![0, 0, 0]);
        assert!((result.energy - 0.4).abs() < 1e-6);
    }
}
