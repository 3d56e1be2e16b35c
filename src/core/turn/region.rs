//! `region`: which solve each step of a turn runs, the whole energy or only the region its change touches.
//!
//! Owns: `solve_step` (a region solve from the step's start when `JointOptions::region_solve` is on and the
//! change is known, else the whole loose solve) and `factor_segments`.
//! Must not: decide what a turn solves or adds; `crate::turn::solve` does.

use crate::energy::{JointEnergy, UnaryFactor};
use crate::solver::joint::{solve_joint_loose, JointError, JointOptions, JointSolution, WarmStart};
use crate::solver::joint_region::solve_joint_region_loose;

/// Solves one step of a turn from `start`: with region solves on, a start and the fine nodes the step's
/// change touches (`seeds`), only the region grown from them moves (`solver::joint_region`); otherwise the
/// whole energy is solved. Either way the bound is left loose (a region's unset) for the turn to tighten
/// its answer's once (`solver::joint::tighten_bound`).
pub(crate) fn solve_step(
    energy: &JointEnergy,
    start: Option<&WarmStart>,
    seeds: Option<Vec<u32>>,
    options: &JointOptions,
) -> Result<JointSolution, JointError> {
    match (options.region_solve, start, seeds) {
        (true, Some(start), Some(seeds)) => {
            Ok(solve_joint_region_loose(energy, start, &seeds, options)?.0)
        }
        _ => solve_joint_loose(energy, start, options),
    }
}

/// The segments unary factors name, once each, ascending.
pub(crate) fn factor_segments(factors: &[UnaryFactor]) -> Vec<u32> {
    let mut segments: Vec<u32> = factors
        .iter()
        .flat_map(|factor| factor.segments.iter().copied())
        .collect();
    segments.sort_unstable();
    segments.dedup();
    segments
}
