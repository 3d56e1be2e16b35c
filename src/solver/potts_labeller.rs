//! The labeller the joint solver runs (`joint_labeller::Labeller`), offered on a plain Potts problem so it
//! can be checked and timed against reference alpha-expansions (`crate::expansion_reference`, GCO
//! in `benches/joint.rs`).
//!
//! Owns: `label_potts` and `CandidateLabels`.
//! Must not: add behaviour of its own; it builds the labeller's tables the way `solver::joint` does and calls
//! it once, as the joint solver does per labelling.

use crate::expansion::{cheapest_labels, validate_problem, LabellingError};
use crate::joint_labeller::{candidate_table, widen_to_coarse, Labeller, LabellerTables};
use crate::labelling::{LabellingProblem, LabellingResult};

/// Which labels a node may switch to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CandidateLabels {
    /// As the joint solver prunes them (before adding hypotheses' classes): each of the first `fine_count`
    /// nodes its few cheapest labels by unary, each later (coarse) node the labels of the fine nodes it has
    /// an edge to.
    Pruned { fine_count: usize },
    /// Every label: the plain expansion.
    All,
}

/// Labels `problem` with the product's labeller from every node's cheapest label (or `initial`), one call
/// of up to its sweep limit, as the joint solver runs it. `sweeps` in the result is 1: the labeller reports
/// no count of its own.
pub fn label_potts(
    problem: &LabellingProblem,
    initial: Option<&[u16]>,
    candidates: CandidateLabels,
) -> Result<LabellingResult, LabellingError> {
    validate_problem(problem)?;
    let unary: Vec<f64> = problem.unary.iter().map(|&cost| cost as f64).collect();
    let edges: Vec<(u32, u32, f64)> = problem
        .edges
        .iter()
        .map(|&(a, b, weight)| (a, b, weight as f64))
        .collect();
    let table = match candidates {
        CandidateLabels::Pruned { fine_count } => {
            let fine_count = fine_count.min(problem.node_count);
            let mut table = candidate_table(
                &unary[..fine_count * problem.label_count],
                fine_count,
                problem.label_count,
                &[],
            );
            widen_to_coarse(
                &mut table,
                fine_count,
                problem.node_count,
                problem.label_count,
                &edges,
            );
            table
        }
        CandidateLabels::All => Vec::new(),
    };
    let tables = LabellerTables::new(problem.node_count, problem.label_count, &edges, &table);
    let start = match initial {
        Some(labels) if labels.len() == problem.node_count => labels.to_vec(),
        _ => cheapest_labels(problem),
    };
    let mut labeller = Labeller::new(&tables);
    let labels = labeller.label(&unary, &start).to_vec();
    Ok(LabellingResult {
        energy: problem.energy(&labels),
        labels,
        sweeps: 1,
    })
}
