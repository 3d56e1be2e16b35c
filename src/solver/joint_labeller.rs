//! The segment-labelling side of the joint solver: one call that labels a Potts problem, and a valid lower
//! bound of that problem's minimum.
//!
//! Owns: `label_segments` (the single place the joint solver asks for a segment labelling) and
//! `potts_lower_bound`.
//! Must not: know about hypotheses, rooms or constraints; it sees a plain `LabellingProblem`.
//!
//! Until the shared alpha-expansion lands, `label_segments` runs iterated conditional modes (each node in
//! turn takes its best label given its neighbours, until nothing changes); the joint solver never relies on
//! it being optimal, since it re-evaluates every candidate with the true energy and bounds separately.

use crate::solver::labelling::{LabellingProblem, LabellingResult};

/// The most sweeps of iterated conditional modes.
const MAX_SWEEPS: u32 = 30;

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

    fn of(&self, node: usize) -> &[(u32, f32)] {
        &self.entries[self.offsets[node]..self.offsets[node + 1]]
    }
}

/// Labels the problem starting from `initial` (one label per node; out-of-range labels are replaced).
pub(crate) fn label_segments(
    problem: &LabellingProblem,
    neighbours: &Neighbours,
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
    let mut costs = vec![0f32; label_count];
    while sweeps < MAX_SWEEPS {
        sweeps += 1;
        let mut changed = false;
        for node in 0..problem.node_count {
            costs.copy_from_slice(&problem.unary[node * label_count..(node + 1) * label_count]);
            for &(other, weight) in neighbours.of(node) {
                costs[labels[other as usize] as usize] -= weight;
            }
            let current = labels[node] as usize;
            let mut best = current;
            for (label, &cost) in costs.iter().enumerate() {
                if cost < costs[best] - 1e-7 {
                    best = label;
                }
            }
            if best != current {
                labels[node] = best as u16;
                changed = true;
            }
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
