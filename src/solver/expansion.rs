//! Alpha-expansion for Potts labelling problems (Boykov, Veksler and Zabih, "Fast approximate energy
//! minimization via graph cuts", IEEE PAMI 2001).
//!
//! Owns: `alpha_expansion`, the reusable `ExpansionSolver` behind it, problem validation and
//! `LabellingError`.
//! Must not: know what labels or nodes mean, nor build the energy; it takes a `LabellingProblem` as given.
//!
//! One expansion move for label alpha lets every node either keep its label or switch to alpha. For Potts
//! smoothing that binary choice is submodular, so a single minimum cut finds the best move exactly. Writing
//! `x = 1` for "switch to alpha" (the sink side of the cut) and `x = 0` for "keep" (the source side), each
//! term is turned into capacities with the construction of Kolmogorov and Zabih ("What energy functions
//! can be minimized via graph cuts?", IEEE PAMI 2004):
//!
//! * unary: the source arc carries the cost of switching, the sink arc the cost of keeping;
//! * an edge `(p, q, w)` whose ends share a label: `w` both ways between `p` and `q`;
//! * an edge whose ends differ (`E(0,0) = E(0,1) = E(1,0) = w`, `E(1,1) = 0`): `w` added to the cost of
//!   `q` keeping its label, and an arc `p -> q` of capacity `w` (cut when `p` keeps and `q` switches);
//! * an edge with one end already alpha: `w` added to the other end's cost of keeping.
//!
//! Nodes already labelled alpha cannot change and are left out of the graph. Sweeps visit labels in
//! increasing order; a label whose last move failed is skipped until some other move changes the
//! labelling (its move would be the same). The run stops after a sweep without improvement or after
//! `max_sweeps`. Everything is deterministic: same problem and start, same labels.

use super::labelling::{ExpansionOptions, LabellingProblem, LabellingResult};
use super::maxflow::{FlowGraph, MaxFlowError};

/// A problem or start labelling that alpha-expansion cannot work on.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LabellingError {
    #[error("the problem has {node_count} nodes but no labels")]
    NoLabels { node_count: usize },
    #[error("the problem has {label_count} labels; at most 65536 fit a u16 label")]
    TooManyLabels { label_count: usize },
    #[error("the unary table has {found} entries; node_count x label_count is {expected}")]
    UnaryLength { expected: usize, found: usize },
    #[error("unary cost of node {node}, label {label} is {value}, not a finite number")]
    UnaryNotFinite {
        node: usize,
        label: usize,
        value: f32,
    },
    #[error("edge {edge} names node {node}, but the problem has {node_count} nodes")]
    EdgeOutOfRange {
        edge: usize,
        node: u32,
        node_count: usize,
    },
    #[error("edge {edge} has weight {weight}; weights must be finite and >= 0")]
    EdgeWeightInvalid { edge: usize, weight: f32 },
    #[error("the start labelling has {found} labels for {expected} nodes")]
    InitialLength { expected: usize, found: usize },
    #[error(
        "the start labelling gives node {node} label {label}, but there are {label_count} labels"
    )]
    InitialLabelOutOfRange {
        node: usize,
        label: u16,
        label_count: usize,
    },
    #[error("internal max-flow error: {0}")]
    Graph(#[from] MaxFlowError),
}

/// Checks sizes, finiteness and ranges of a problem.
pub fn validate_problem(problem: &LabellingProblem) -> Result<(), LabellingError> {
    let LabellingProblem {
        node_count,
        label_count,
        ..
    } = *problem;
    if node_count > 0 && label_count == 0 {
        return Err(LabellingError::NoLabels { node_count });
    }
    if label_count > usize::from(u16::MAX) + 1 {
        return Err(LabellingError::TooManyLabels { label_count });
    }
    let expected = node_count
        .checked_mul(label_count)
        .ok_or(LabellingError::TooManyLabels { label_count })?;
    if problem.unary.len() != expected {
        return Err(LabellingError::UnaryLength {
            expected,
            found: problem.unary.len(),
        });
    }
    if let Some(index) = problem.unary.iter().position(|cost| !cost.is_finite()) {
        return Err(LabellingError::UnaryNotFinite {
            node: index / label_count,
            label: index % label_count,
            value: problem.unary[index],
        });
    }
    for (edge, &(a, b, weight)) in problem.edges.iter().enumerate() {
        for node in [a, b] {
            if node as usize >= node_count {
                return Err(LabellingError::EdgeOutOfRange {
                    edge,
                    node,
                    node_count,
                });
            }
        }
        if !weight.is_finite() || weight < 0.0 {
            return Err(LabellingError::EdgeWeightInvalid { edge, weight });
        }
    }
    Ok(())
}

/// Runs alpha-expansion from `initial` (a warm start) or, without one, from every node's cheapest label.
pub fn alpha_expansion(
    problem: &LabellingProblem,
    initial: Option<&[u16]>,
    options: &ExpansionOptions,
) -> Result<LabellingResult, LabellingError> {
    ExpansionSolver::new().solve(problem, initial, options)
}

/// The per-node cheapest label (lowest index on ties). The problem must be valid.
pub fn cheapest_labels(problem: &LabellingProblem) -> Vec<u16> {
    if problem.label_count == 0 {
        return vec![0; problem.node_count];
    }
    problem
        .unary
        .chunks_exact(problem.label_count)
        .map(|costs| {
            let mut best = 0usize;
            for (label, &cost) in costs.iter().enumerate() {
                if cost < costs[best] {
                    best = label;
                }
            }
            best as u16
        })
        .collect()
}

/// Alpha-expansion with its buffers kept between solves, so repeated solves (warm re-solves after each
/// operator note) do not allocate.
#[derive(Clone, Debug, Default)]
pub struct ExpansionSolver {
    graph: FlowGraph,
    /// Graph node of each problem node for the current move, `u32::MAX` when the node is already alpha.
    graph_node: Vec<u32>,
    /// Per graph node: cost of keeping the current label and of switching to alpha.
    keep_cost: Vec<f64>,
    switch_cost: Vec<f64>,
    /// Problem node of each graph node.
    problem_node: Vec<u32>,
    candidate: Vec<u16>,
    /// Whether a label's last move failed and nothing has changed since.
    failed_unchanged: Vec<bool>,
}

impl ExpansionSolver {
    /// A solver with empty buffers.
    pub fn new() -> ExpansionSolver {
        ExpansionSolver::default()
    }

    /// Runs alpha-expansion; see `alpha_expansion`.
    pub fn solve(
        &mut self,
        problem: &LabellingProblem,
        initial: Option<&[u16]>,
        options: &ExpansionOptions,
    ) -> Result<LabellingResult, LabellingError> {
        validate_problem(problem)?;
        let mut labels = match initial {
            Some(start) => {
                if start.len() != problem.node_count {
                    return Err(LabellingError::InitialLength {
                        expected: problem.node_count,
                        found: start.len(),
                    });
                }
                if let Some(node) = start
                    .iter()
                    .position(|&label| label as usize >= problem.label_count)
                {
                    return Err(LabellingError::InitialLabelOutOfRange {
                        node,
                        label: start[node],
                        label_count: problem.label_count,
                    });
                }
                start.to_vec()
            }
            None => cheapest_labels(problem),
        };
        let mut energy = problem.energy(&labels);
        self.failed_unchanged.clear();
        self.failed_unchanged.resize(problem.label_count, false);
        let mut sweeps = 0;
        while sweeps < options.max_sweeps {
            sweeps += 1;
            let mut improved = false;
            for alpha in 0..problem.label_count {
                if self.failed_unchanged[alpha] {
                    continue;
                }
                match self.expansion_move(problem, &labels, energy, alpha as u16)? {
                    Some(new_energy) => {
                        std::mem::swap(&mut labels, &mut self.candidate);
                        energy = new_energy;
                        improved = true;
                        self.failed_unchanged.fill(false);
                    }
                    None => self.failed_unchanged[alpha] = true,
                }
            }
            if !improved {
                break;
            }
        }
        Ok(LabellingResult {
            labels,
            energy,
            sweeps,
        })
    }

    /// Finds the best alpha-expansion of `labels`. When it lowers the energy, leaves the new labelling
    /// in `self.candidate` and returns its energy.
    fn expansion_move(
        &mut self,
        problem: &LabellingProblem,
        labels: &[u16],
        energy: f64,
        alpha: u16,
    ) -> Result<Option<f64>, LabellingError> {
        let label_count = problem.label_count;
        self.graph.reset();
        self.graph_node.clear();
        self.keep_cost.clear();
        self.switch_cost.clear();
        self.problem_node.clear();
        // The energy of the nodes that are already alpha, which the cut does not see.
        let mut fixed_energy = 0.0f64;
        for (node, &label) in labels.iter().enumerate() {
            let row = node * label_count;
            if label == alpha {
                self.graph_node.push(u32::MAX);
                fixed_energy += f64::from(problem.unary[row + alpha as usize]);
            } else {
                self.graph_node.push(self.problem_node.len() as u32);
                self.problem_node.push(node as u32);
                self.keep_cost
                    .push(f64::from(problem.unary[row + label as usize]));
                self.switch_cost
                    .push(f64::from(problem.unary[row + alpha as usize]));
            }
        }
        if self.problem_node.is_empty() {
            return Ok(None);
        }
        self.graph.add_nodes(self.problem_node.len())?;
        for &(a, b, weight) in &problem.edges {
            if weight == 0.0 || a == b {
                continue;
            }
            let weight = f64::from(weight);
            let (graph_a, graph_b) = (self.graph_node[a as usize], self.graph_node[b as usize]);
            match (graph_a == u32::MAX, graph_b == u32::MAX) {
                (true, true) => {}
                (true, false) => self.keep_cost[graph_b as usize] += weight,
                (false, true) => self.keep_cost[graph_a as usize] += weight,
                (false, false) => {
                    if labels[a as usize] == labels[b as usize] {
                        self.graph
                            .add_edge(graph_a as usize, graph_b as usize, weight, weight)?;
                    } else {
                        self.keep_cost[graph_b as usize] += weight;
                        self.graph
                            .add_edge(graph_a as usize, graph_b as usize, weight, 0.0)?;
                    }
                }
            }
        }
        for graph_index in 0..self.problem_node.len() {
            self.graph.add_terminal_weights(
                graph_index,
                self.switch_cost[graph_index],
                self.keep_cost[graph_index],
            )?;
        }
        let cut = self.graph.max_flow();
        let predicted = cut + fixed_energy;
        // The cut value is the new energy up to rounding; only a clear gain is worth checking exactly.
        if predicted >= energy - 1e-9 * (1.0 + energy.abs()) {
            return Ok(None);
        }
        self.candidate.clear();
        self.candidate.extend_from_slice(labels);
        for (graph_index, &node) in self.problem_node.iter().enumerate() {
            if !self.graph.is_source_side(graph_index) {
                self.candidate[node as usize] = alpha;
            }
        }
        let new_energy = problem.energy(&self.candidate);
        if new_energy < energy {
            Ok(Some(new_energy))
        } else {
            Ok(None)
        }
    }
}
