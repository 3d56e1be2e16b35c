//! Checks the joint solver against exact optima from scipy.optimize.milp (the HiGHS MILP solver).
//!
//! Owns: loading `tests/fixtures/joint/instances.jsonl` (written by `tests/fixtures/joint/make_joint.py`,
//! which linearises the energy exactly and solves it with scipy.optimize.milp / HiGHS) and comparing.
//! Must not: reach into solver internals; it calls the public `solve_joint` on the serialised energy.

use sayso::energy::JointEnergy;
use sayso::solver::joint::{solve_joint, JointOptions};

#[derive(serde::Deserialize)]
struct Instance {
    name: String,
    energy: JointEnergy,
    optimum: f64,
}

fn instances() -> Vec<Instance> {
    let text = include_str!("fixtures/joint/instances.jsonl");
    text.lines()
        .filter(|line| !line.trim().is_empty())
        .map(|line| serde_json::from_str(line).expect("fixture line parses"))
        .collect()
}

fn relative(value: f64, optimum: f64) -> f64 {
    (value - optimum) / optimum.abs().max(1.0)
}

#[test]
fn joint_solver_matches_highs_optima() {
    let instances = instances();
    assert!(instances.len() >= 200, "only {} instances", instances.len());
    let options = JointOptions::default();
    let mut at_optimum = 0;
    let mut failures = Vec::new();
    for instance in &instances {
        let solution = solve_joint(&instance.energy, None, &options).expect("valid instance");
        // The reported energy is the energy of the reported state.
        let evaluated = instance
            .energy
            .evaluate(&solution.state)
            .expect("state fits");
        assert!(
            (evaluated - solution.energy).abs() < 1e-6,
            "{}: reported {} but state evaluates to {}",
            instance.name,
            solution.energy,
            evaluated
        );
        // No state is below the MILP optimum (this also checks the MILP's linearisation from below).
        assert!(
            solution.energy >= instance.optimum - 1e-6,
            "{}: energy {} below the MILP optimum {}",
            instance.name,
            solution.energy,
            instance.optimum
        );
        // The lower bound is a bound.
        assert!(
            solution.lower_bound <= instance.optimum + 1e-6,
            "{}: lower bound {} above the optimum {}",
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
        "optimum reached on {at_optimum} of {} ({share:.3})",
        instances.len()
    );
    assert!(failures.is_empty(), "more than 2% above: {failures:?}");
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
        let warm = sayso::solver::joint::WarmStart {
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
    let mut at_optimum = 0;
    let mut failures = Vec::new();
    for (index, instance) in instances.iter().enumerate() {
        let previous = solve_joint(&perturbed(&instance.energy, index as u64), None, options)
            .expect("valid perturbed instance");
        let warm = sayso::solver::joint::WarmStart {
            state: previous.state.clone(),
            multipliers: Some(previous.multipliers.clone()),
        };
        let solution = solve_joint(&instance.energy, Some(&warm), options).expect("valid instance");
        let evaluated = instance
            .energy
            .evaluate(&solution.state)
            .expect("state fits");
        assert!(
            (evaluated - solution.energy).abs() < 1e-6,
            "{}: reported {} but state evaluates to {}",
            instance.name,
            solution.energy,
            evaluated
        );
        assert!(
            solution.energy >= instance.optimum - 1e-6,
            "{}: warm energy {} below the MILP optimum {}",
            instance.name,
            solution.energy,
            instance.optimum
        );
        // Multipliers carried over from another energy still give a valid bound.
        assert!(
            solution.lower_bound <= instance.optimum + 1e-6,
            "{}: warm lower bound {} above the optimum {}",
            instance.name,
            solution.lower_bound,
            instance.optimum
        );
        let error = relative(solution.energy, instance.optimum);
        if error <= 1e-6 {
            at_optimum += 1;
        } else if error > 0.02 {
            failures.push(format!(
                "{}: warm {} vs optimum {}",
                instance.name, solution.energy, instance.optimum
            ));
        }
    }
    let share = at_optimum as f64 / instances.len() as f64;
    assert!(
        share >= 0.95,
        "warm: optimum reached on {at_optimum} of {} ({share:.3})",
        instances.len()
    );
    assert!(
        failures.is_empty(),
        "warm: more than 2% above: {failures:?}"
    );
}
