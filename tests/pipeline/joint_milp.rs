//! Checks the joint solver against exact optima from scipy.optimize.milp (the HiGHS MILP solver).
//!
//! Owns: loading `tests/fixtures/joint/instances.jsonl` (written by `tests/fixtures/joint/make_joint.py`,
//! which linearises the energy exactly and solves it with scipy.optimize.milp / HiGHS) and comparing.
//! Must not: reach into solver internals; it calls the public `solve_joint` on the serialised energy.

use sayso_core::energy::JointEnergy;
use sayso_solver::joint::{solve_joint, JointOptions, JointSolution};

#[derive(serde::Deserialize)]
struct Instance {
    name: String,
    energy: JointEnergy,
    optimum: f64,
}

fn instances() -> Vec<Instance> {
    let text = include_str!("../fixtures/joint/instances.jsonl");
    text.lines()
        .filter(|line| !line.trim().is_empty())
        .map(|line| serde_json::from_str(line).expect("fixture line parses"))
        .collect()
}

fn relative(value: f64, optimum: f64) -> f64 {
    (value - optimum) / optimum.abs().max(1.0)
}

/// Solves every instance with `solve` and checks the criteria against the HiGHS optima: the reported energy
/// is the state's, no state is below the optimum, the lower bound is a bound, at least 95% reach the
/// optimum and the rest are within 2%. `what` names the run in messages.
fn meets_the_optimality_criteria(
    what: &str,
    instances: &[Instance],
    solve: impl Fn(usize, &Instance) -> JointSolution,
) {
    let mut at_optimum = 0;
    let mut failures = Vec::new();
    for (index, instance) in instances.iter().enumerate() {
        let solution = solve(index, instance);
        // The reported energy is the energy of the reported state.
        let evaluated = instance
            .energy
            .evaluate(&solution.state)
            .expect("state fits");
        assert!(
            (evaluated - solution.energy).abs() < 1e-6,
            "{what} {}: reported {} but state evaluates to {}",
            instance.name,
            solution.energy,
            evaluated
        );
        // No state is below the MILP optimum (this also checks the MILP's linearisation from below).
        assert!(
            solution.energy >= instance.optimum - 1e-6,
            "{what} {}: energy {} below the MILP optimum {}",
            instance.name,
            solution.energy,
            instance.optimum
        );
        // The lower bound is a bound (also with multipliers carried over from another energy).
        assert!(
            solution.lower_bound <= instance.optimum + 1e-6,
            "{what} {}: lower bound {} above the optimum {}",
            instance.name,
            solution.lower_bound,
            instance.optimum
        );
        let error = relative(solution.energy, instance.optimum);
        if error <= 1e-6 {
            at_optimum += 1;
        } else if error > 0.02 {
            failures.push(format!(
                "{}: {} vs optimum {}",
                instance.name, solution.energy, instance.optimum
            ));
        }
    }
    let share = at_optimum as f64 / instances.len() as f64;
    assert!(
        share >= 0.95,
        "{what}: optimum reached on {at_optimum} of {} ({share:.3})",
        instances.len()
    );
    assert!(
        failures.is_empty(),
        "{what}: more than 2% above: {failures:?}"
    );
}

#[test]
fn joint_solver_matches_highs_optima() {
    let instances = instances();
    assert!(instances.len() >= 200, "only {} instances", instances.len());
    let options = JointOptions::default();
    meets_the_optimality_criteria("cold", &instances, |_, instance| {
        solve_joint(&instance.energy, None, &options).expect("valid instance")
    });
}

#[test]
fn same_instance_gives_the_same_bytes() {
    let instances = instances();
    let options = JointOptions::default();
    for instance in instances.iter().take(20) {
        let first = solve_joint(&instance.energy, None, &options).unwrap();
        let second = solve_joint(&instance.energy, None, &options).unwrap();
        assert_eq!(
            serde_json::to_string(&first).unwrap(),
            serde_json::to_string(&second).unwrap()
        );
    }
}

#[test]
fn warm_start_from_the_solution_keeps_its_energy() {
    let instances = instances();
    let options = JointOptions::default();
    for instance in instances.iter().take(30) {
        let cold = solve_joint(&instance.energy, None, &options).unwrap();
        let warm = sayso_solver::joint::WarmStart {
            state: cold.state.clone(),
            multipliers: Some(cold.multipliers.clone()),
        };
        let again = solve_joint(&instance.energy, Some(&warm), &options).unwrap();
        assert!(again.energy <= cold.energy + 1e-9, "{}", instance.name);
    }
}

/// The instance as a previous turn might have seen it: every unary moved by up to 0.25 (a deterministic
/// xorshift sequence seeded by the instance's position) and its last constraint factor not yet said.
fn perturbed(energy: &JointEnergy, seed: u64) -> JointEnergy {
    let mut state = seed.wrapping_mul(0x9e37_79b9_7f4a_7c15) | 1;
    let mut next = || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state % 1001) as f64 / 1000.0 - 0.5
    };
    let mut previous = energy.clone();
    for value in &mut previous.unary {
        *value += 0.5 * next();
    }
    if previous.unary_factors.pop().is_none()
        && previous.tuple_factors.pop().is_none()
        && previous.count_factors.pop().is_none()
    {
        previous.absent_factors.pop();
    }
    previous
}

#[test]
fn warm_start_from_a_perturbed_instance_meets_the_optimality_criteria() {
    // The default options descend from the previous state first.
    assert!(JointOptions::default().warm_descent);
    warm_start_from_perturbed(&JointOptions::default());
}

#[test]
fn warm_start_without_the_descent_meets_the_optimality_criteria() {
    warm_start_from_perturbed(&JointOptions {
        warm_descent: false,
        ..JointOptions::default()
    });
}

fn warm_start_from_perturbed(options: &JointOptions) {
    let instances = instances();
    meets_the_optimality_criteria("warm", &instances, |index, instance| {
        let previous = solve_joint(&perturbed(&instance.energy, index as u64), None, options)
            .expect("valid perturbed instance");
        let warm = sayso_solver::joint::WarmStart {
            state: previous.state.clone(),
            multipliers: Some(previous.multipliers.clone()),
        };
        solve_joint(&instance.energy, Some(&warm), options).expect("valid instance")
    });
}

/// Worked example (optimum by hand): a row of 300 segments that the unaries call a door (cost 0) rather
/// than wall (cost 1 each), two overlapping door hypotheses (segments 0-199 and 100-299, activation -3,
/// agreement 10 a segment), strong smoothing, and the operator's "there's no door" (absent factor, weight
/// 1000). Keeping the door costs 1000 - 6; all wall with both hypotheses off costs 300, the minimum. The
/// row is too large for the solver's polishing of small problems. Started from the door state, a
/// labelling given the hypothesis keeps the door (agreement) and a completion given the labels keeps the
/// hypotheses (they lower the energy while the labels show a door anyway); the solve, cold or warm, must
/// still reach the minimum. (The demo-scene version of this trap, which needs the class-removal move, is
/// in `tests/pipeline/demo_scenes.rs`.)
#[test]
fn a_class_held_up_by_its_own_hypothesis_is_dropped_when_the_operator_says_it_is_absent() {
    use sayso_core::energy::{AbsentFactor, HypothesisTerm, JointState};
    let segments = 300usize;
    let mut unary = Vec::new();
    for _ in 0..segments {
        unary.extend_from_slice(&[1.0, 0.0]); // wall, door
    }
    let energy = JointEnergy {
        schema: sayso_core::energy::ENERGY_SCHEMA,
        label_count: 2,
        fine_count: segments,
        node_count: segments,
        unary,
        edges: (0..segments as u32 - 1).map(|s| (s, s + 1, 5.0)).collect(),
        hypotheses: vec![
            HypothesisTerm {
                class: 1,
                members: (0..200).collect(),
                activation_cost: -3.0,
                agreement_weight: 10.0,
            },
            HypothesisTerm {
                class: 1,
                members: (100..300).collect(),
                activation_cost: -3.0,
                agreement_weight: 10.0,
            },
        ],
        room_count: 1,
        room_cost: vec![0.0],
        presence_cost: vec![0.0, 0.0],
        count_factors: vec![],
        absent_factors: vec![AbsentFactor {
            class: 1,
            weight: 1000.0,
            source: Some(0),
        }],
        tuple_factors: vec![],
        unary_factors: vec![],
    };
    let door = JointState {
        labels: vec![1; segments],
        hypotheses_on: vec![true, true],
        room: 0,
    };
    assert!((energy.evaluate(&door).unwrap() - 994.0).abs() < 1e-9);
    for options in [
        JointOptions::default(),
        JointOptions {
            warm_descent: false,
            ..JointOptions::default()
        },
    ] {
        let warm = sayso_solver::joint::WarmStart {
            state: door.clone(),
            multipliers: None,
        };
        for start in [None, Some(&warm)] {
            let solved = solve_joint(&energy, start, &options).unwrap();
            assert!(
                (solved.energy - 300.0).abs() < 1e-9,
                "energy {} from {:?}",
                solved.energy,
                start.map(|w| &w.state.labels)
            );
            assert_eq!(solved.state.labels, vec![0; segments]);
            assert!(solved.lower_bound <= 300.0 + 1e-9);
        }
    }
}
