//! Tests of the region solve: the reduced energy is the whole energy with the rest fixed, and a region
//! solve's answer is a state of the whole energy, no worse than its start, under a valid bound.
//!
//! Owns: those checks, on small random energies checked against brute force.
//! Must not: time anything.

use super::*;
use crate::energy::{AbsentFactor, Count, CountFactor, HypothesisTerm, UnaryFactor, ENERGY_SCHEMA};

/// A small random energy: `fine` fine nodes in a chain with cross links, one coarse node over the first
/// half, 3 labels, 2 rooms, 2 hypotheses, a count, an absent and a unary factor.
fn energy(seed: u64, fine: usize) -> JointEnergy {
    let mut state = seed | 1;
    let mut next = move || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 11) as f64 / (1u64 << 53) as f64
    };
    let label_count = 3;
    let node_count = fine + 1;
    let unary = (0..node_count * label_count)
        .map(|_| 4.0 * next() - 1.0)
        .collect();
    let mut edges = Vec::new();
    for a in 0..fine as u32 - 1 {
        edges.push((a, a + 1, 2.0 * next()));
        if a + 2 < fine as u32 && next() < 0.4 {
            edges.push((a, a + 2, next()));
        }
    }
    for a in 0..(fine / 2) as u32 {
        edges.push((a, fine as u32, 0.5 * next()));
    }
    JointEnergy {
        schema: ENERGY_SCHEMA,
        label_count,
        fine_count: fine,
        node_count,
        unary,
        edges,
        hypotheses: vec![
            HypothesisTerm {
                class: 1,
                members: vec![0, 1, 2],
                activation_cost: 2.0 * next() - 1.0,
                agreement_weight: next(),
            },
            HypothesisTerm {
                class: 2,
                members: (fine as u32 - 3..fine as u32).collect(),
                activation_cost: 2.0 * next() - 1.0,
                agreement_weight: next(),
            },
        ],
        room_count: 2,
        room_cost: vec![next(), next()],
        presence_cost: (0..2 * label_count).map(|_| 2.0 * next() - 1.0).collect(),
        count_factors: vec![CountFactor {
            class: 1,
            count: Count::AtLeast(1),
            weight: 3.0 * next(),
            source: Some(0),
        }],
        absent_factors: vec![AbsentFactor {
            class: 2,
            weight: 3.0 * next(),
            source: Some(1),
        }],
        tuple_factors: Vec::new(),
        unary_factors: vec![UnaryFactor {
            segments: vec![1, fine as u32 - 2],
            label: 0,
            wanted: true,
            weight: 2.0 * next(),
            source: Some(2),
        }],
    }
}

/// Every state of `energy` (labels, hypothesis flags, room), in a fixed order.
fn every_state(energy: &JointEnergy) -> impl Iterator<Item = JointState> + '_ {
    let nodes = energy.node_count as u32;
    let flags = energy.hypotheses.len() as u32;
    let labels = (energy.label_count as u64).pow(nodes);
    let total = labels * (1u64 << flags) * energy.room_count as u64;
    (0..total).map(move |mut code| {
        let labels = (0..nodes)
            .map(|_| {
                let label = (code % energy.label_count as u64) as u16;
                code /= energy.label_count as u64;
                label
            })
            .collect();
        let hypotheses_on = (0..flags)
            .map(|_| {
                let on = code % 2 == 1;
                code /= 2;
                on
            })
            .collect();
        JointState {
            labels,
            hypotheses_on,
            room: code as u16,
        }
    })
}

proptest::proptest! {
    /// The reduced energy of any state of the region equals the whole energy of that state with the fixed
    /// labels filled in, and it validates.
    #[test]
    fn the_reduced_energy_is_the_whole_energy_with_the_rest_fixed(
        seed in 0u64..u64::MAX,
        free_mask in 1u32..255,
        labels in proptest::collection::vec(0u16..3, 9),
        moved in proptest::collection::vec(0u16..3, 9),
        flags in proptest::collection::vec(proptest::bool::ANY, 2),
        room in 0u16..2,
    ) {
        let energy = energy(seed, 8);
        let free: Vec<u32> = (0..9u32).filter(|&n| free_mask & (1 << n) != 0).collect();
        let around = JointState { labels: labels.clone(), hypotheses_on: flags.clone(), room };
        let reduced = Reduced::new(&energy, &energy.folded_unary(), &around, &free);
        proptest::prop_assert!(reduced.energy.validate().is_ok());
        // A state that differs from `around` only in the region.
        let mut whole = around.clone();
        for &node in &free {
            whole.labels[node as usize] = moved[node as usize];
        }
        let restricted = reduced.restrict_state(&whole);
        let expected = energy.evaluate(&whole).expect("fits");
        let found = reduced.energy.evaluate(&restricted).expect("fits");
        proptest::prop_assert!((expected - found).abs() < 1e-9, "{} vs {}", expected, found);
        proptest::prop_assert_eq!(reduced.expand_state(&around, &restricted), whole);
    }

    /// A region solve answers a state of the whole energy with that state's energy, no higher than the
    /// warm start's, and a lower bound no higher than the brute-force minimum.
    #[test]
    fn a_region_solve_is_a_valid_answer_of_the_whole_energy(
        seed in 0u64..u64::MAX,
        labels in proptest::collection::vec(0u16..3, 8),
        seed_node in 0u32..7,
    ) {
        let energy = energy(seed, 7);
        let warm = WarmStart {
            state: JointState { labels, hypotheses_on: vec![false, true], room: 1 },
            multipliers: None,
        };
        let options = JointOptions::default();
        let (solution, outcome) =
            solve_joint_region(&energy, &warm, &[seed_node], &options).expect("solves");
        let evaluated = energy.evaluate(&solution.state).expect("fits");
        proptest::prop_assert!((evaluated - solution.energy).abs() < 1e-9);
        let start = energy.evaluate(&warm.state).expect("fits");
        proptest::prop_assert!(solution.energy <= start + 1e-9, "{} above the start {}", solution.energy, start);
        let minimum = every_state(&energy)
            .filter_map(|state| energy.evaluate(&state))
            .fold(f64::INFINITY, f64::min);
        proptest::prop_assert!(solution.lower_bound <= minimum + 1e-9);
        proptest::prop_assert!(solution.energy >= minimum - 1e-9);
        proptest::prop_assert!(outcome.solves >= 1);
    }
}

/// Nodes outside the region keep the warm start's labels, whatever their unaries ask.
#[test]
fn nodes_outside_the_region_keep_their_labels() {
    let energy = energy(7, 40);
    let warm = WarmStart {
        state: JointState {
            labels: vec![2; 41],
            hypotheses_on: vec![false, false],
            room: 0,
        },
        multipliers: None,
    };
    let (solution, outcome) =
        solve_joint_region(&energy, &warm, &[20], &JointOptions::default()).expect("solves");
    assert!(!outcome.whole, "{outcome:?}");
    let rings = outcome.rings as usize;
    for node in 0..40usize {
        // The chain with skip links: a node more than 2 * rings places away is outside the region.
        if node.abs_diff(20) > 2 * rings {
            assert_eq!(solution.state.labels[node], 2, "node {node}");
        }
    }
    // The loose solve: the same answer, the bound left to `tighten_bound`, which reaches at least the
    // even split's.
    let (mut loose, _) =
        solve_joint_region_loose(&energy, &warm, &[20], &JointOptions::default()).unwrap();
    assert_eq!(loose.state, solution.state);
    assert_eq!(loose.energy.to_bits(), solution.energy.to_bits());
    assert_eq!(loose.lower_bound, f64::NEG_INFINITY);
    crate::joint::tighten_bound(&energy, &mut loose, &JointOptions::default()).unwrap();
    assert!(loose.lower_bound >= solution.lower_bound - 1e-9);
    assert!(loose.lower_bound <= loose.energy);
    // No seed: the whole energy is solved.
    let (_, whole) = solve_joint_region(&energy, &warm, &[], &JointOptions::default()).unwrap();
    assert!(whole.whole);
}

/// A tightening handed an earlier one's memo (`tighten_bound_reusing`) reports the bound a fresh
/// tightening reports, to the bit: with the earlier one's own solution, with a worse energy found (another
/// target and stopping value for the same sweeps), and on another energy (another key: sweeps afresh).
#[test]
fn a_tightening_that_reuses_a_memo_reports_the_fresh_bound() {
    let options = JointOptions::default();
    let first = energy(11, 30);
    let warm = WarmStart {
        state: JointState {
            labels: vec![1; 31],
            hypotheses_on: vec![false, false],
            room: 0,
        },
        multipliers: None,
    };
    let (loose, _) = solve_joint_region_loose(&first, &warm, &[12], &options).unwrap();
    let fresh = |energy: &JointEnergy, solution: &JointSolution| {
        let mut fresh = solution.clone();
        crate::joint::tighten_bound(energy, &mut fresh, &options).unwrap();
        fresh.lower_bound.to_bits()
    };
    let mut recorded = loose.clone();
    let memo = crate::joint::tighten_bound_reusing(&first, &mut recorded, &options, None).unwrap();
    assert!(
        memo.is_some(),
        "the region solve's bound is loose, so it is tightened"
    );
    assert_eq!(recorded.lower_bound.to_bits(), fresh(&first, &loose));
    let mut again = loose.clone();
    crate::joint::tighten_bound_reusing(&first, &mut again, &options, memo.as_ref()).unwrap();
    assert_eq!(again.lower_bound.to_bits(), fresh(&first, &loose));
    let mut worse = loose.clone();
    worse.energy += 0.25 * worse.energy.abs().max(1.0);
    let mut reused = worse.clone();
    crate::joint::tighten_bound_reusing(&first, &mut reused, &options, memo.as_ref()).unwrap();
    assert_eq!(reused.lower_bound.to_bits(), fresh(&first, &worse));
    let second = energy(12, 30);
    let (other, _) = solve_joint_region_loose(&second, &warm, &[12], &options).unwrap();
    let mut elsewhere = other.clone();
    crate::joint::tighten_bound_reusing(&second, &mut elsewhere, &options, memo.as_ref()).unwrap();
    assert_eq!(elsewhere.lower_bound.to_bits(), fresh(&second, &other));
}
