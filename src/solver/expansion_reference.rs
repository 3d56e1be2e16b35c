//! Brute-force references for alpha-expansion: the exact optimum of a tiny Potts problem by trying every
//! labelling, and the best single expansion move by trying every subset of nodes.
//!
//! Owns: `brute_force_optimum`, `best_expansion_move_energy`, `data_and_smoothness`.
//! Must not: be used on the solving path; these are exponential and exist so tests can check
//! `alpha_expansion` against something simple enough to trust by reading.

use super::labelling::LabellingProblem;

/// The lowest energy over all `label_count ^ node_count` labellings and one labelling reaching it.
/// Only for tiny problems (at most about a million labellings).
pub fn brute_force_optimum(problem: &LabellingProblem) -> (Vec<u16>, f64) {
    let total = (problem.label_count as u64).pow(problem.node_count as u32);
    assert!(total <= 1 << 20, "brute force is for tiny problems");
    let mut labels = vec![0u16; problem.node_count];
    let mut best = (labels.clone(), problem.energy(&labels));
    for index in 1..total {
        let mut rest = index;
        for label in labels.iter_mut() {
            *label = (rest % problem.label_count as u64) as u16;
            rest /= problem.label_count as u64;
        }
        let energy = problem.energy(&labels);
        if energy < best.1 {
            best = (labels.clone(), energy);
        }
    }
    best
}

/// The lowest energy reachable from `labels` by one alpha-expansion move (any subset of nodes switching
/// to `alpha`), by trying all `2^node_count` subsets.
pub fn best_expansion_move_energy(problem: &LabellingProblem, labels: &[u16], alpha: u16) -> f64 {
    assert!(problem.node_count <= 16, "brute force is for tiny problems");
    let mut moved = labels.to_vec();
    let mut best = f64::INFINITY;
    for mask in 0u32..(1u32 << problem.node_count) {
        for (node, label) in moved.iter_mut().enumerate() {
            *label = if mask & (1 << node) != 0 {
                alpha
            } else {
                labels[node]
            };
        }
        best = best.min(problem.energy(&moved));
    }
    best
}

/// The energy split into its unary (data) part and its Potts (smoothness) part.
pub fn data_and_smoothness(problem: &LabellingProblem, labels: &[u16]) -> (f64, f64) {
    let data: f64 = labels
        .iter()
        .enumerate()
        .map(|(node, &label)| f64::from(problem.unary[node * problem.label_count + label as usize]))
        .sum();
    let smoothness: f64 = problem
        .edges
        .iter()
        .filter(|&&(a, b, _)| labels[a as usize] != labels[b as usize])
        .map(|&(_, _, weight)| f64::from(weight))
        .sum();
    (data, smoothness)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::expansion::{alpha_expansion, cheapest_labels, LabellingError};
    use crate::labelling::ExpansionOptions;
    use proptest::prelude::*;

    /// Tiny Potts problems: up to 7 nodes, up to 3 labels, integer-valued costs (exact in f32 and f64).
    fn tiny_problem() -> impl Strategy<Value = LabellingProblem> {
        (1usize..=7, 1usize..=3).prop_flat_map(|(node_count, label_count)| {
            let unary = proptest::collection::vec(0u8..30, node_count * label_count);
            let edges = proptest::collection::vec(
                (0..node_count as u32, 0..node_count as u32, 0u8..25),
                0..=node_count * 2,
            );
            (unary, edges).prop_map(move |(unary, edges)| LabellingProblem {
                node_count,
                label_count,
                unary: unary.into_iter().map(f32::from).collect(),
                edges: edges
                    .into_iter()
                    .map(|(a, b, w)| (a, b, f32::from(w)))
                    .collect(),
            })
        })
    }

    fn start_for(problem: &LabellingProblem, seed: &[u16]) -> Vec<u16> {
        (0..problem.node_count)
            .map(|node| seed[node % seed.len()] % problem.label_count as u16)
            .collect()
    }

    #[test]
    fn a_hand_worked_chain() {
        // Three nodes in a chain; the middle one prefers label 1 a little, its neighbours prefer 0 a lot.
        let problem = LabellingProblem {
            node_count: 3,
            label_count: 2,
            unary: vec![0.0, 10.0, 2.0, 0.0, 0.0, 10.0],
            edges: vec![(0, 1, 3.0), (1, 2, 3.0)],
        };
        let result = alpha_expansion(&problem, None, &ExpansionOptions::default()).unwrap();
        // Labelling 1 in the middle costs 0 + 6 of smoothing; 0 everywhere costs 2.
        assert_eq!(result.labels, vec![0, 0, 0]);
        assert_eq!(result.energy, 2.0);
        assert_eq!(brute_force_optimum(&problem).1, 2.0);
    }

    #[test]
    fn bad_problems_are_typed_errors() {
        let good = LabellingProblem {
            node_count: 2,
            label_count: 2,
            unary: vec![0.0; 4],
            edges: vec![(0, 1, 1.0)],
        };
        let options = ExpansionOptions::default();
        let mut nan = good.clone();
        nan.unary[3] = f32::NAN;
        assert!(matches!(
            alpha_expansion(&nan, None, &options),
            Err(LabellingError::UnaryNotFinite {
                node: 1,
                label: 1,
                ..
            })
        ));
        let mut short = good.clone();
        short.unary.pop();
        assert!(matches!(
            alpha_expansion(&short, None, &options),
            Err(LabellingError::UnaryLength {
                expected: 4,
                found: 3
            })
        ));
        let mut negative = good.clone();
        negative.edges[0].2 = -1.0;
        assert!(matches!(
            alpha_expansion(&negative, None, &options),
            Err(LabellingError::EdgeWeightInvalid { edge: 0, .. })
        ));
        let mut outside = good.clone();
        outside.edges.push((0, 5, 1.0));
        assert!(matches!(
            alpha_expansion(&outside, None, &options),
            Err(LabellingError::EdgeOutOfRange {
                edge: 1,
                node: 5,
                ..
            })
        ));
        let no_labels = LabellingProblem {
            label_count: 0,
            unary: vec![],
            ..good.clone()
        };
        assert!(matches!(
            alpha_expansion(&no_labels, None, &options),
            Err(LabellingError::NoLabels { node_count: 2 })
        ));
        assert!(matches!(
            alpha_expansion(&good, Some(&[0]), &options),
            Err(LabellingError::InitialLength {
                expected: 2,
                found: 1
            })
        ));
        assert!(matches!(
            alpha_expansion(&good, Some(&[0, 2]), &options),
            Err(LabellingError::InitialLabelOutOfRange {
                node: 1,
                label: 2,
                ..
            })
        ));
    }

    #[test]
    fn an_empty_problem_has_zero_energy() {
        let empty = LabellingProblem {
            node_count: 0,
            label_count: 3,
            unary: vec![],
            edges: vec![],
        };
        let result = alpha_expansion(&empty, None, &ExpansionOptions::default()).unwrap();
        assert!(result.labels.is_empty());
        assert_eq!(result.energy, 0.0);
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(300))]

        /// The factor-2 bound of Boykov, Veksler and Zabih for Potts (with non-negative unaries):
        /// E(expansion) <= E_data(optimum) + 2 E_smooth(optimum) <= 2 E(optimum).
        #[test]
        fn expansion_is_within_the_factor_two_bound(problem in tiny_problem()) {
            let result = alpha_expansion(&problem, None, &ExpansionOptions { max_sweeps: 100 }).unwrap();
            let (optimum_labels, optimum) = brute_force_optimum(&problem);
            let (data, smoothness) = data_and_smoothness(&problem, &optimum_labels);
            prop_assert!(result.energy >= optimum);
            prop_assert!(result.energy <= data + 2.0 * smoothness + 1e-9);
            prop_assert_eq!(result.energy, problem.energy(&result.labels));
        }

        /// No single expansion move improves the result (it is a local optimum of the move space).
        #[test]
        fn expansion_ends_at_a_local_optimum(problem in tiny_problem()) {
            let result = alpha_expansion(&problem, None, &ExpansionOptions { max_sweeps: 100 }).unwrap();
            for alpha in 0..problem.label_count as u16 {
                let best_move = best_expansion_move_energy(&problem, &result.labels, alpha);
                prop_assert!(best_move >= result.energy, "label {} improves {} to {}", alpha, result.energy, best_move);
            }
        }

        /// A warm start is never made worse, and the same inputs give the same output.
        #[test]
        fn warm_start_never_gets_worse_and_is_deterministic(
            problem in tiny_problem(),
            seed in proptest::collection::vec(0u16..3, 1..7),
            max_sweeps in 0u32..4,
        ) {
            let start = start_for(&problem, &seed);
            let options = ExpansionOptions { max_sweeps };
            let first = alpha_expansion(&problem, Some(&start), &options).unwrap();
            let second = alpha_expansion(&problem, Some(&start), &options).unwrap();
            prop_assert!(first.energy <= problem.energy(&start));
            prop_assert_eq!(&first, &second);
            let cold = alpha_expansion(&problem, None, &options).unwrap();
            prop_assert!(cold.energy <= problem.energy(&cheapest_labels(&problem)));
        }
    }
}
