//! The multi-label Potts problem the segment labelling reduces to, and its result.
//!
//! Owns: `LabellingProblem`, `LabellingResult`, `ExpansionOptions` and the energy of a labelling.
//! Must not: know where unaries come from; costs are plain numbers (lower is better).

use serde::{Deserialize, Serialize};

/// A Potts labelling problem: minimise sum of unary costs plus `weight` for every edge whose ends differ.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LabellingProblem {
    pub node_count: usize,
    pub label_count: usize,
    /// `unary[node * label_count + label]`: the cost of giving `node` that label.
    pub unary: Vec<f32>,
    /// `(a, b, weight)`: cost `weight >= 0` when nodes `a` and `b` take different labels.
    pub edges: Vec<(u32, u32, f32)>,
}

impl LabellingProblem {
    /// The energy of a labelling (one label per node), in double precision.
    pub fn energy(&self, labels: &[u16]) -> f64 {
        let mut total = 0.0f64;
        for (node, &label) in labels.iter().enumerate().take(self.node_count) {
            total += self.unary[node * self.label_count + label as usize] as f64;
        }
        for &(a, b, weight) in &self.edges {
            if labels[a as usize] != labels[b as usize] {
                total += weight as f64;
            }
        }
        total
    }
}

/// Options for alpha-expansion.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ExpansionOptions {
    /// Stop after this many full sweeps over the labels.
    pub max_sweeps: u32,
}

impl Default for ExpansionOptions {
    fn default() -> Self {
        ExpansionOptions { max_sweeps: 8 }
    }
}

/// The result of a labelling solve.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LabellingResult {
    pub labels: Vec<u16>,
    pub energy: f64,
    pub sweeps: u32,
}
