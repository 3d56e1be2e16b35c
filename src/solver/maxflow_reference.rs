//! Plain, obviously-correct references for the max-flow kernel: Edmonds-Karp on a dense matrix, a
//! brute-force minimum cut over every source/sink split, and the capacity of a given cut.
//!
//! Owns: `FlowProblem` (a graph written as plain lists) and the three reference functions.
//! Must not: be used on the solving path; these are slow by design (dense, O(V E^2), or 2^n) and exist
//! so tests can check `FlowGraph` against something simple enough to trust by reading.

use super::maxflow::{FlowGraph, MaxFlowError};

/// A two-terminal graph as plain lists.
#[derive(Clone, Debug, PartialEq)]
pub struct FlowProblem {
    pub node_count: usize,
    /// `(cap_source, cap_sink)` per node, both >= 0.
    pub terminal: Vec<(f64, f64)>,
    /// `(from, to, capacity, reverse_capacity)`.
    pub edges: Vec<(usize, usize, f64, f64)>,
}

impl FlowProblem {
    /// Builds the fast solver's graph for this problem.
    pub fn to_flow_graph(&self) -> Result<FlowGraph, MaxFlowError> {
        let mut graph = FlowGraph::with_capacity(self.node_count, self.edges.len());
        graph.add_nodes(self.node_count)?;
        for (node, &(cap_source, cap_sink)) in self.terminal.iter().enumerate() {
            graph.add_terminal_weights(node, cap_source, cap_sink)?;
        }
        for &(from, to, capacity, reverse) in &self.edges {
            graph.add_edge(from, to, capacity, reverse)?;
        }
        Ok(graph)
    }
}

/// The capacity of the cut with `source_side[v]` telling which side node `v` is on.
pub fn cut_capacity(problem: &FlowProblem, source_side: &[bool]) -> f64 {
    let mut total = 0.0;
    for (node, &(cap_source, cap_sink)) in problem.terminal.iter().enumerate() {
        // The source arc is cut when the node is on the sink side, and the other way round.
        total += if source_side[node] {
            cap_sink
        } else {
            cap_source
        };
    }
    for &(from, to, capacity, reverse) in &problem.edges {
        if source_side[from] && !source_side[to] {
            total += capacity;
        }
        if source_side[to] && !source_side[from] {
            total += reverse;
        }
    }
    total
}

/// The minimum cut by trying all `2^node_count` splits. Only for `node_count <= 16`.
pub fn brute_force_min_cut(problem: &FlowProblem) -> f64 {
    assert!(problem.node_count <= 16, "brute force is for tiny graphs");
    let mut best = f64::INFINITY;
    let mut sides = vec![false; problem.node_count];
    for mask in 0u32..(1u32 << problem.node_count) {
        for (node, side) in sides.iter_mut().enumerate() {
            *side = mask & (1 << node) != 0;
        }
        best = best.min(cut_capacity(problem, &sides));
    }
    best
}

/// Edmonds-Karp (shortest augmenting paths by breadth-first search) on a dense residual matrix, with
/// the source as node `node_count` and the sink as `node_count + 1`.
pub fn edmonds_karp(problem: &FlowProblem) -> f64 {
    let size = problem.node_count + 2;
    let source = problem.node_count;
    let sink = problem.node_count + 1;
    let mut residual = vec![0.0f64; size * size];
    for (node, &(cap_source, cap_sink)) in problem.terminal.iter().enumerate() {
        residual[source * size + node] += cap_source;
        residual[node * size + sink] += cap_sink;
    }
    for &(from, to, capacity, reverse) in &problem.edges {
        if from != to {
            residual[from * size + to] += capacity;
            residual[to * size + from] += reverse;
        }
    }
    let mut flow = 0.0;
    loop {
        let mut previous = vec![usize::MAX; size];
        previous[source] = source;
        let mut queue = std::collections::VecDeque::from([source]);
        while let Some(node) = queue.pop_front() {
            for next in 0..size {
                if previous[next] == usize::MAX && residual[node * size + next] > 0.0 {
                    previous[next] = node;
                    queue.push_back(next);
                }
            }
        }
        if previous[sink] == usize::MAX {
            return flow;
        }
        let mut bottleneck = f64::INFINITY;
        let mut node = sink;
        while node != source {
            let parent = previous[node];
            bottleneck = bottleneck.min(residual[parent * size + node]);
            node = parent;
        }
        let mut node = sink;
        while node != source {
            let parent = previous[node];
            residual[parent * size + node] -= bottleneck;
            residual[node * size + parent] += bottleneck;
            node = parent;
        }
        flow += bottleneck;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn problem_strategy(max_nodes: usize) -> impl Strategy<Value = FlowProblem> {
        (1..=max_nodes).prop_flat_map(|node_count| {
            let terminal = proptest::collection::vec((0u8..20, 0u8..20), node_count);
            let edges = proptest::collection::vec(
                (0..node_count, 0..node_count, 0u8..20, 0u8..20),
                0..node_count * 3,
            );
            (terminal, edges).prop_map(move |(terminal, edges)| FlowProblem {
                node_count,
                terminal: terminal
                    .into_iter()
                    .map(|(a, b)| (a as f64, b as f64))
                    .collect(),
                edges: edges
                    .into_iter()
                    .map(|(a, b, c, d)| (a, b, c as f64, d as f64))
                    .collect(),
            })
        })
    }

    #[test]
    fn a_hand_worked_graph() {
        // Source feeds node 0 (3) and node 1 (2); 0 -> 1 (1), 0 -> sink via node 2 (2 then 4), 1 -> sink (2).
        let problem = FlowProblem {
            node_count: 3,
            terminal: vec![(3.0, 0.0), (2.0, 2.0), (0.0, 4.0)],
            edges: vec![(0, 1, 1.0, 0.0), (0, 2, 2.0, 0.0)],
        };
        // 2 straight through node 1, and from node 0: 2 via node 2 plus 1 into node 1 that node 1 cannot
        // pass on (its sink arc is full) = 4.
        assert_eq!(edmonds_karp(&problem), 4.0);
        assert_eq!(brute_force_min_cut(&problem), 4.0);
        let mut graph = problem.to_flow_graph().unwrap();
        assert_eq!(graph.max_flow(), 4.0);
    }

    #[test]
    fn negative_terminal_weights_fold_into_the_other_side() {
        let mut graph = FlowGraph::new();
        graph.add_nodes(1).unwrap();
        graph.add_terminal_weights(0, 5.0, 2.0).unwrap();
        graph.add_terminal_weights(0, -1.0, 0.0).unwrap();
        // Source 4, sink 2 after folding: flow 2 straight through.
        assert_eq!(graph.max_flow(), 2.0);
        assert!(graph.is_source_side(0));
    }

    #[test]
    fn bad_input_is_a_typed_error() {
        let mut graph = FlowGraph::new();
        graph.add_nodes(2).unwrap();
        assert!(matches!(
            graph.add_edge(0, 2, 1.0, 1.0),
            Err(MaxFlowError::NodeOutOfRange { node: 2, .. })
        ));
        assert!(matches!(
            graph.add_edge(0, 1, -1.0, 1.0),
            Err(MaxFlowError::NegativeCapacity { .. })
        ));
        assert!(matches!(
            graph.add_terminal_weights(0, f64::NAN, 1.0),
            Err(MaxFlowError::NotFinite { .. })
        ));
        assert!(!graph.is_source_side(7));
    }

    #[test]
    fn reset_reuses_the_graph() {
        let mut graph = FlowGraph::new();
        graph.add_nodes(2).unwrap();
        graph.add_terminal_weights(0, 9.0, 0.0).unwrap();
        graph.add_terminal_weights(1, 0.0, 9.0).unwrap();
        graph.add_edge(0, 1, 3.0, 0.0).unwrap();
        assert_eq!(graph.max_flow(), 3.0);
        graph.reset();
        assert_eq!(graph.node_count(), 0);
        graph.add_nodes(1).unwrap();
        graph.add_terminal_weights(0, 1.5, 2.5).unwrap();
        assert_eq!(graph.max_flow(), 1.5);
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(400))]

        #[test]
        fn edmonds_karp_matches_brute_force(problem in problem_strategy(9)) {
            prop_assert_eq!(edmonds_karp(&problem), brute_force_min_cut(&problem));
        }

        #[test]
        fn boykov_kolmogorov_matches_the_references(problem in problem_strategy(10)) {
            let mut graph = problem.to_flow_graph().unwrap();
            let flow = graph.max_flow();
            prop_assert_eq!(flow, brute_force_min_cut(&problem));
            // The reported sides are a certificate: their cut equals the flow.
            let sides: Vec<bool> = (0..problem.node_count).map(|n| graph.is_source_side(n)).collect();
            prop_assert_eq!(cut_capacity(&problem, &sides), flow);
        }

        #[test]
        fn boykov_kolmogorov_matches_edmonds_karp_on_larger_graphs(problem in problem_strategy(40)) {
            let mut graph = problem.to_flow_graph().unwrap();
            let flow = graph.max_flow();
            prop_assert_eq!(flow, edmonds_karp(&problem));
            let sides: Vec<bool> = (0..problem.node_count).map(|n| graph.is_source_side(n)).collect();
            prop_assert_eq!(cut_capacity(&problem, &sides), flow);
        }
    }
}
