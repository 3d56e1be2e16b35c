//! The joint solver: minimises a `JointEnergy` over segment labels, hypotheses, presence and room type, and
//! proves how far from the optimum its answer can be.
//!
//! Owns: `solve_joint` (and `solve_joint_loose` with `tighten_bound`, the same solve with the bound's final
//! tightening deferred), its options, warm start and `JointSolution` (state, energy, lower bound, gap).
//! Must not: know about language, files or what classes mean; it reads numbers from `JointEnergy`.
//!
//! # Method
//!
//! Dual decomposition. The energy splits into a segment part (unaries and Potts smoothing, solved by the
//! segment labeller) and a coupled part (hypotheses, presence, room, constraint factors, solved exactly by
//! `joint_coupled`). The two meet in two places, each relaxed with Lagrange multipliers:
//! - agreement: `y_h g_h [x_s != c_h]` is written with a copy `q_hs` of `[x_s = c_h]`; multiplier `mu_hs` on
//!   `q_hs = [x_s = c_h]`;
//! - presence: `p_c >= [x_s = c]`, multiplier `nu_sc >= 0`; the coupled part may also switch presence on
//!   without support (dropping a constraint only lowers a minimum).
//!
//! For any multipliers, (a lower bound of the segment part) + (the exact minimum of the coupled part) is a
//! lower bound of the whole energy. Multipliers move by projected subgradient steps with Polyak step sizes.
//! Every iteration's segment labelling is also completed into a full state by the exact coupled step with the
//! labels fixed, and the best such state is kept; alternating (labels given hypotheses, hypotheses given
//! labels) and, on small problems, single-node moves scored with the true energy polish it. When labelling
//! given hypotheses, a class that absent factors want gone is charged their weight on every segment, so the
//! primal side drops it from the first iteration instead of waiting for the presence multipliers to rise.
//!
//! The loop stops at `max_iterations`, when the relative gap reaches `gap_tolerance`, or after
//! `STALL_ITERATIONS` iterations in a row that do not lower the best energy (`WARM_STALL_ITERATIONS` when
//! starting from previous multipliers). Moves (`joint_moves`) then drop each class an absent factor wants
//! gone (its hypotheses and its labels at once) and try each hypothesis's members pulled to, and away from,
//! its class. When the loop leaves a relative gap above `TIGHTEN_ABOVE_GAP`, the segment part's bound at
//! the best multipliers is tightened once by min-sum diffusion (`FINAL_SWEEPS` sweeps); every reported
//! bound is a valid one, whichever stop applied.
//!
//! With `JointOptions::warm_descent`, a warm start first descends from the previous state (labels given its
//! hypothesis flags, completed exactly, repeated while the flags change), so the best state starts good and
//! the loop stops after `WARM_DESCENT_STALL_ITERATIONS` iterations without a better energy. The dual side
//! (multipliers, the dual function, the subgradient step) lives in `joint_dual`.

use serde::{Deserialize, Serialize};

use crate::energy::{EnergyError, JointEnergy, JointState};
use crate::joint_coupled::{solve_coupled, CoupledInputs, CoupledTables};
pub use crate::joint_dual::BoundMemo;
use crate::joint_dual::{
    adapt_multipliers, diffused_dual_bound, dual_value, fresh_multipliers, subgradient_step,
    BoundInputs,
};
use crate::joint_labeller::{candidate_table, widen_to_coarse, Labeller, LabellerTables};
use crate::joint_moves::{polish, try_class_removals, try_hypothesis_moves};
use crate::potts_bound::PottsBound;

/// Options of the joint solver.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct JointOptions {
    /// Dual iterations at most.
    pub max_iterations: u32,
    /// Single-node polishing runs when `nodes * labels` is at most this.
    pub polish_budget: usize,
    /// Stop when the relative gap falls below this.
    pub gap_tolerance: f64,
    /// With a warm start, descend from the previous state (label given its hypothesis flags, complete
    /// exactly, repeat) before the dual loop. On by default: the bench's warm re-solve takes 2 iterations
    /// instead of 5 (1.27 ms against 2.30 ms median, same energy and bound). Measured on the demo notes with
    /// the weights file of that day (`sayso score --notes 2`, mean gains): pixel +4.2 -> +4.3, mIoU +14.5 -> +14.8, object (graph)
    /// +2.3 -> +2.0 (mostly a better no-note start in kitchen_breakfast, which the gain is counted from).
    #[serde(default = "default_warm_descent")]
    pub warm_descent: bool,
    /// A correction turn re-solves only the region its change touches (`crate::joint_region`), the rest
    /// held at the parent version's labels; off, every solve of a turn is a whole one.
    #[serde(default = "default_region_solve")]
    pub region_solve: bool,
}

impl Default for JointOptions {
    fn default() -> Self {
        JointOptions {
            max_iterations: 30,
            polish_budget: 512,
            gap_tolerance: 1e-9,
            warm_descent: true,
            region_solve: true,
        }
    }
}

fn default_warm_descent() -> bool {
    true
}

fn default_region_solve() -> bool {
    true
}

/// The Lagrange multipliers, kept so a re-solve can start from them.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, Default)]
pub struct Multipliers {
    /// `agreement[h][m]`: for member `m` of hypothesis `h`.
    pub agreement: Vec<Vec<f64>>,
    /// The presence multipliers `nu_sc` that are not zero, fine segments only, ascending by segment then
    /// class. A multiplier only rises where a segment takes a class the coupled part left absent, so a
    /// handful of the `fine_count * label_count` are ever non-zero.
    pub presence: Vec<PresenceMultiplier>,
}

/// One non-zero presence multiplier: `nu_sc` on `p_c >= [x_s = c]`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct PresenceMultiplier {
    pub segment: u32,
    pub class: u16,
    /// Positive and finite.
    pub value: f64,
}

/// A previous solution to start from.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct WarmStart {
    pub state: JointState,
    pub multipliers: Option<Multipliers>,
}

/// The joint solver's answer.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct JointSolution {
    pub state: JointState,
    /// Presence per class implied by the state.
    pub presence: Vec<bool>,
    pub energy: f64,
    /// No state has a lower energy than this.
    pub lower_bound: f64,
    /// `(energy - lower_bound) / max(|energy|, 1)`.
    pub relative_gap: f64,
    pub iterations: u32,
    /// `false` when tuple factors named too many hypotheses for the coupled step to enumerate them.
    pub coupled_exact: bool,
    pub multipliers: Multipliers,
}

/// What can go wrong solving.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum JointError {
    #[error("invalid energy: {0}")]
    Energy(#[from] EnergyError),
}

/// A full state and its energy.
pub(crate) struct Candidate {
    pub(crate) state: JointState,
    pub(crate) energy: f64,
}

/// Shared, read-only tables of one solve.
pub(crate) struct Context<'a> {
    pub(crate) energy: &'a JointEnergy,
    /// The unaries with unary factors folded in.
    pub(crate) unary: Vec<f64>,
    /// Adjacency and the labels each node may take in expansion moves.
    pub(crate) tables: LabellerTables,
    /// The coupled step's tables.
    pub(crate) coupled: CoupledTables,
}

/// The mutable side of one solve: the labellers (each remembers its last problem, so a call that follows a
/// similar one is cheap), the bound's scratch and an unary buffer.
pub(crate) struct Workspace<'t> {
    /// Labels the dual's segment part (unaries shifted by the multipliers).
    pub(crate) dual: Labeller<'t>,
    /// Labels segments given accepted hypotheses (the primal side).
    pub(crate) primal: Labeller<'t>,
    pub(crate) bound: PottsBound,
    pub(crate) unary: Vec<f64>,
}

impl<'t> Workspace<'t> {
    fn new(context: &'t Context) -> Workspace<'t> {
        let energy = context.energy;
        Workspace {
            dual: Labeller::new(&context.tables),
            primal: Labeller::new(&context.tables),
            bound: PottsBound::new(energy.node_count, energy.label_count, &energy.edges),
            unary: Vec::with_capacity(context.unary.len()),
        }
    }
}

impl Context<'_> {
    pub(crate) fn segment_energy(&self, labels: &[u16]) -> f64 {
        let label_count = self.energy.label_count;
        let mut total = 0.0;
        for (node, &label) in labels.iter().enumerate() {
            total += self.unary[node * label_count + label as usize];
        }
        for &(a, b, weight) in &self.energy.edges {
            if labels[a as usize] != labels[b as usize] {
                total += weight;
            }
        }
        total
    }

    /// The best full state with these labels: the coupled step is exact once labels are fixed.
    pub(crate) fn complete(&self, labels: Vec<u16>) -> Candidate {
        let energy = self.energy;
        let mut cost_on = Vec::with_capacity(energy.hypotheses.len());
        for hypothesis in &energy.hypotheses {
            let disagreeing = hypothesis
                .members
                .iter()
                .filter(|&&s| labels[s as usize] != hypothesis.class)
                .count();
            cost_on.push(
                hypothesis.activation_cost + hypothesis.agreement_weight * disagreeing as f64,
            );
        }
        let cost_off = vec![0.0; energy.hypotheses.len()];
        let mut support = vec![false; energy.label_count];
        for &label in labels.iter().take(energy.fine_count) {
            support[label as usize] = true;
        }
        let adjust = vec![0.0; energy.label_count];
        let coupled = solve_coupled(&CoupledInputs {
            energy,
            tables: &self.coupled,
            cost_on: &cost_on,
            cost_off: &cost_off,
            presence_adjust: &adjust,
            segment_support: &support,
            relaxed_presence: false,
        });
        let mut value = self.segment_energy(&labels) + coupled.value;
        let state = JointState {
            labels,
            hypotheses_on: coupled.hypotheses_on,
            room: coupled.room,
        };
        if !coupled.exact {
            // Tuple factors were left out of the step; score the state with the true energy.
            value = energy.evaluate(&state).unwrap_or(f64::INFINITY);
        }
        Candidate {
            state,
            energy: value,
        }
    }

    /// Labels given the accepted hypotheses of a state, then completes them.
    pub(crate) fn relabel_given_hypotheses(
        &self,
        workspace: &mut Workspace,
        state: &JointState,
    ) -> Candidate {
        let label_count = self.energy.label_count;
        let unary = &mut workspace.unary;
        unary.clear();
        unary.extend_from_slice(&self.unary);
        // A class the constraints want absent is charged its weight on every fine segment (an overestimate
        // once one segment pays it, so the labeller drops the class unless its unaries insist), unless an
        // accepted hypothesis makes it present anyway.
        let mut supported = vec![false; label_count];
        for (hypothesis, &on) in self.energy.hypotheses.iter().zip(&state.hypotheses_on) {
            supported[hypothesis.class as usize] |= on;
        }
        for factor in &self.energy.absent_factors {
            let class = factor.class as usize;
            if !supported[class] {
                for row in unary.chunks_mut(label_count).take(self.energy.fine_count) {
                    row[class] += factor.weight;
                }
            }
        }
        for (hypothesis, &on) in self.energy.hypotheses.iter().zip(&state.hypotheses_on) {
            if on {
                for &s in &hypothesis.members {
                    let row = s as usize * label_count;
                    for label in 0..label_count {
                        if label != hypothesis.class as usize {
                            unary[row + label] += hypothesis.agreement_weight;
                        }
                    }
                }
            }
        }
        let labels = workspace.primal.label(unary, &state.labels).to_vec();
        self.complete(labels)
    }
}

/// Expansion candidates: each fine node's cheapest labels and the classes of hypotheses over it; a coarse
/// node takes the union of its linked fine nodes' candidates.
fn candidates(energy: &JointEnergy, unary: &[f64]) -> Vec<bool> {
    let label_count = energy.label_count;
    let mut extra: Vec<(usize, u16)> = Vec::new();
    for hypothesis in &energy.hypotheses {
        for &s in &hypothesis.members {
            extra.push((s as usize, hypothesis.class));
        }
    }
    for factor in &energy.unary_factors {
        if factor.wanted {
            for &s in &factor.segments {
                extra.push((s as usize, factor.label));
            }
        }
    }
    let mut table = candidate_table(unary, energy.fine_count, label_count, &extra);
    widen_to_coarse(
        &mut table,
        energy.fine_count,
        energy.node_count,
        label_count,
        &energy.edges,
    );
    table
}

pub(crate) fn keep_better(best: &mut Candidate, candidate: Candidate) {
    if candidate.energy < best.energy - 1e-12 {
        *best = candidate;
    }
}

/// Sweeps of min-sum diffusion (`PottsBound::diffused`) that tighten the segment part's bound once, at
/// the best multipliers, after the loop. After "there's no door in here" on three demo scenes
/// (2026-12-03): relative gaps 1.02, 0.71 (bedroom_lazy_sunday, living_room_evening) with the even split
/// alone; 0.129, 0.094 with 8 sweeps; 0.124, 0.079 with 32. Diffusing inside every iteration of the loop
/// instead gave 0.27 and 0.068 but doubled the bench's solve times.
const FINAL_SWEEPS: usize = 8;

/// The final diffusion runs only when the loop leaves a relative gap above this. Below it the bound already
/// says the answer is close, and the sweeps cost about as much as a solve: on the bench scene (gap 0.0243
/// after the loop) 8 sweeps brought the gap to 0.0102 but the full solve from 4.23 to 7.31 ms median and the
/// warm re-solve from 2.20 to 5.24 ms (2026-12-03, load 1.5). On the demo scenes, where the even split
/// leaves gaps of 0.7 to 1.0, the same sweeps bring them to about 0.1 (see `FINAL_SWEEPS`). For the same
/// reason the sweeps stop once they bring the gap to this. On the bench's 16 demo turns, full and warm
/// (2026-12-04), that took the median reported gap from 0.023 to 0.041 (worst 0.057 both ways, energies
/// unchanged) and the diffusion's instructions on office_deadline's second turn from 96 to 45 million, of
/// 187 million for the whole warm re-solve (counted by callgrind).
const TIGHTEN_ABOVE_GAP: f64 = 0.05;

/// Dual iterations at most when starting from previous multipliers.
const WARM_ITERATIONS: u32 = 8;

/// The dual loop stops after this many iterations in a row that do not improve the best energy (a primal
/// stall). On the bench scene the bound moves by a few tenths of a percent over dozens of further iterations
/// while the energy found stays within 0.1%, so the loop stops once the primal side stops gaining.
const STALL_ITERATIONS: u32 = 2;

/// On problems small enough to polish, the loop stops only after this many iterations in a row that improve
/// neither the bound nor the energy: the bound usually closes the gap there, and a closed gap skips the
/// polishing pass (thousands of exact completions on a scene of a few dozen segments).
const SMALL_STALL_ITERATIONS: u32 = 4;

/// The primal stall that stops the loop when starting from previous multipliers.
const WARM_STALL_ITERATIONS: u32 = 1;

/// The same after a warm descent, whose start is already a local minimum: the first iteration rarely
/// improves on it, so one more is given to the dual's labelling (`sayso score --notes 2`: pixel +4.0, mIoU
/// +14.0 with 1; +4.3, +14.8 with 2).
const WARM_DESCENT_STALL_ITERATIONS: u32 = 2;

/// How many distinct states are kept for polishing.
const POOL_SIZE: usize = 6;

/// Keeps the `POOL_SIZE` lowest-energy distinct states.
fn remember(pool: &mut Vec<Candidate>, candidate: &Candidate) {
    if pool.iter().any(|kept| kept.state == candidate.state) {
        return;
    }
    pool.push(Candidate {
        state: candidate.state.clone(),
        energy: candidate.energy,
    });
    pool.sort_by(|a, b| a.energy.total_cmp(&b.energy));
    pool.truncate(POOL_SIZE);
}

fn argmin_labels(unary: &[f64], label_count: usize) -> Vec<u16> {
    unary
        .chunks(label_count)
        .map(|row| {
            let mut best = 0;
            for (label, &value) in row.iter().enumerate() {
                if value < row[best] {
                    best = label;
                }
            }
            best as u16
        })
        .collect()
}

/// Alternations at most in the warm start's descent.
const WARM_DESCENT_ROUNDS: usize = 4;

/// Descends from a previous state before the dual loop: labels given its hypothesis flags (flags that no
/// longer fit the energy count as off), completes them exactly, and repeats with the completed flags until
/// they stop changing. Keeps every state it passes in `best` and `pool`; returns the last flags it labelled
/// with, so the loop's alternation does not repeat them.
pub(crate) fn warm_descent(
    context: &Context,
    workspace: &mut Workspace,
    previous: &JointState,
    best: &mut Candidate,
    pool: &mut Vec<Candidate>,
) -> Vec<bool> {
    let energy = context.energy;
    let mut flags: Vec<bool> = (0..energy.hypotheses.len())
        .map(|h| previous.hypotheses_on.get(h).copied().unwrap_or(false))
        .collect();
    let mut state = JointState {
        labels: previous.labels.clone(),
        hypotheses_on: flags.clone(),
        room: 0,
    };
    for _ in 0..WARM_DESCENT_ROUNDS {
        let settled = context.relabel_given_hypotheses(workspace, &state);
        let converged = settled.state.hypotheses_on == flags;
        remember(pool, &settled);
        state = settled.state.clone();
        keep_better(best, settled);
        if converged {
            break;
        }
        flags.clone_from(&state.hypotheses_on);
    }
    flags
}

/// Minimises the energy; `warm` starts from a previous solution of the same (or a similar) energy. The
/// reported lower bound is tightened (`tighten_bound`) before it returns.
pub fn solve_joint(
    energy: &JointEnergy,
    warm: Option<&WarmStart>,
    options: &JointOptions,
) -> Result<JointSolution, JointError> {
    solve(energy, warm, options, true)
}

/// `solve_joint` without the final tightening of the lower bound on problems too large to polish (the
/// polishing pass reads the bound, so small problems are tightened either way): the state, energy,
/// iterations and multipliers are those `solve_joint` returns, the lower bound is the dual loop's, which may
/// be looser. For a solve whose bound is thrown away (a turn that solves again around the answer) or
/// tightened later by `tighten_bound`; `tighten_bound` on this solution gives `solve_joint`'s bound.
pub fn solve_joint_loose(
    energy: &JointEnergy,
    warm: Option<&WarmStart>,
    options: &JointOptions,
) -> Result<JointSolution, JointError> {
    solve(energy, warm, options, false)
}

/// Tightens a solution's lower bound as `solve_joint` does at its end: when the relative gap is above
/// `TIGHTEN_ABOVE_GAP`, the segment part's bound at the solution's multipliers is tightened by min-sum
/// diffusion. The bound stays valid for `energy` whatever the solution holds (any multipliers give a valid
/// bound; ones that do not fit the energy are refitted as a warm start refits them), and never passes the
/// solution's energy.
pub fn tighten_bound(
    energy: &JointEnergy,
    solution: &mut JointSolution,
    options: &JointOptions,
) -> Result<(), JointError> {
    tighten_bound_reusing(energy, solution, options, None).map(|_| ())
}

/// `tighten_bound`, given what an earlier tightening of the same scene computed (`earlier`, e.g. the parent
/// version's): when the diffusion's inputs are the same bits, its bound is read instead of computed again,
/// with the same result. Answers what this tightening computed or reused, to hand to the next (`None` when
/// the gap needed no tightening).
pub fn tighten_bound_reusing(
    energy: &JointEnergy,
    solution: &mut JointSolution,
    options: &JointOptions,
    earlier: Option<&BoundMemo>,
) -> Result<Option<BoundMemo>, JointError> {
    energy.validate()?;
    if !needs_tightening(solution.energy, solution.lower_bound, options) {
        return Ok(None);
    }
    let folded = energy.folded_unary();
    let coupled = CoupledTables::new(energy);
    let mut bound = PottsBound::new(energy.node_count, energy.label_count, &energy.edges);
    let mut unary = Vec::with_capacity(folded.len());
    let multipliers = adapt_multipliers(energy, &solution.multipliers);
    let inputs = BoundInputs {
        energy,
        folded: &folded,
        coupled: &coupled,
        bound: &mut bound,
        unary: &mut unary,
    };
    let mut memo = earlier.cloned();
    let lower_bound = tightened(
        inputs,
        &multipliers,
        (solution.energy, solution.lower_bound),
        options,
        Some(&mut memo),
    )
    .min(solution.energy);
    solution.lower_bound = lower_bound;
    solution.relative_gap = gap(solution.energy, lower_bound);
    Ok(memo)
}

/// Whether the final diffusion runs: the gap left is above `TIGHTEN_ABOVE_GAP` (and the tolerance).
fn needs_tightening(energy_found: f64, lower_bound: f64, options: &JointOptions) -> bool {
    gap(energy_found, lower_bound) > TIGHTEN_ABOVE_GAP.max(options.gap_tolerance)
}

/// `lower_bound`, raised by the diffused bound at `multipliers` when `needs_tightening` (with `memo`, as
/// `diffused_dual_bound` reuses and keeps one).
fn tightened(
    inputs: BoundInputs,
    multipliers: &Multipliers,
    (energy_found, lower_bound): (f64, f64),
    options: &JointOptions,
    memo: Option<&mut Option<BoundMemo>>,
) -> f64 {
    if !needs_tightening(energy_found, lower_bound, options) {
        return lower_bound;
    }
    let tighter = diffused_dual_bound(
        inputs,
        multipliers,
        FINAL_SWEEPS,
        energy_found,
        TIGHTEN_ABOVE_GAP.max(options.gap_tolerance),
        memo,
    );
    lower_bound.max(tighter)
}

pub(crate) fn solve(
    energy: &JointEnergy,
    warm: Option<&WarmStart>,
    options: &JointOptions,
    tighten: bool,
) -> Result<JointSolution, JointError> {
    energy.validate()?;
    let unary = energy.folded_unary();
    let tables = LabellerTables::new(
        energy.node_count,
        energy.label_count,
        &energy.edges,
        &candidates(energy, &unary),
    );
    let context = Context {
        energy,
        unary,
        tables,
        coupled: CoupledTables::new(energy),
    };
    let mut workspace = Workspace::new(&context);
    let label_count = energy.label_count;

    let mut multipliers = fresh_multipliers(energy);
    let mut warm_multipliers = false;
    let mut start_labels = argmin_labels(&context.unary, label_count);
    let mut best = context.complete(start_labels.clone());
    let mut pool: Vec<Candidate> = Vec::new();
    let mut last_alternated: Option<Vec<bool>> = None;
    if let Some(warm) = warm {
        let fits = warm.state.labels.len() == energy.node_count
            && warm
                .state
                .labels
                .iter()
                .all(|&label| (label as usize) < label_count);
        if fits {
            start_labels = warm.state.labels.clone();
            if options.warm_descent {
                last_alternated = Some(warm_descent(
                    &context,
                    &mut workspace,
                    &warm.state,
                    &mut best,
                    &mut pool,
                ));
            } else {
                keep_better(&mut best, context.complete(warm.state.labels.clone()));
            }
        }
        if let Some(previous) = &warm.multipliers {
            multipliers = adapt_multipliers(energy, previous);
            warm_multipliers = true;
        }
    }
    // Without a warm start, no separate relabelling of the start: the first iteration's alternation labels
    // given hypotheses.

    let mut lower_bound = f64::NEG_INFINITY;
    let mut coupled_exact = true;
    let mut scale = 1.0;
    let mut since_improvement = 0;
    let mut iterations = 0;
    let mut segment_start = start_labels;
    let mut best_multipliers = multipliers.clone();
    let mut stalled = 0;
    // Small enough to polish: the stop rule of the primal stall is the patient one (see `SMALL_STALL_ITERATIONS`).
    let small = energy.node_count * label_count <= options.polish_budget;
    remember(&mut pool, &best);
    // From previous multipliers the dual is already near its optimum: a few steps refine it.
    let iteration_limit = if warm_multipliers {
        options.max_iterations.min(WARM_ITERATIONS)
    } else {
        options.max_iterations
    };
    while iterations < iteration_limit {
        iterations += 1;
        let dual = dual_value(&context, &mut workspace, &multipliers, &segment_start);
        coupled_exact &= dual.coupled.exact;
        if dual.bound > lower_bound + 1e-12 {
            lower_bound = dual.bound;
            best_multipliers = multipliers.clone();
            since_improvement = 0;
        } else {
            since_improvement += 1;
            if since_improvement >= 4 {
                scale *= 0.5;
                since_improvement = 0;
            }
        }
        let candidate = context.complete(dual.segment_labels.clone());
        let previous_best = best.energy;
        if last_alternated.as_ref() != Some(&candidate.state.hypotheses_on) {
            last_alternated = Some(candidate.state.hypotheses_on.clone());
            let alternated = context.relabel_given_hypotheses(&mut workspace, &candidate.state);
            remember(&mut pool, &alternated);
            keep_better(&mut best, alternated);
        }
        remember(&mut pool, &candidate);
        keep_better(&mut best, candidate);
        if best.energy < previous_best - 1e-12 {
            stalled = 0;
        } else if !small || since_improvement > 0 {
            // A small problem keeps going while its bound still rises: closing the gap there saves the
            // polishing pass, which costs far more than a few more iterations.
            stalled += 1;
        }
        // From previous multipliers the dual starts near its optimum: the first iteration without a better
        // energy ends it.
        let stall_limit = if small {
            SMALL_STALL_ITERATIONS
        } else if warm_multipliers {
            if options.warm_descent {
                WARM_DESCENT_STALL_ITERATIONS
            } else {
                WARM_STALL_ITERATIONS
            }
        } else {
            STALL_ITERATIONS
        };
        if stalled >= stall_limit {
            break;
        }
        if gap(best.energy, lower_bound) <= options.gap_tolerance || scale < 1e-4 {
            break;
        }
        segment_start = dual.segment_labels.clone();
        if !subgradient_step(energy, &mut multipliers, &dual, best.energy, scale) {
            break;
        }
    }
    try_class_removals(&context, &mut workspace, &mut best);
    try_hypothesis_moves(&context, &mut best);
    if tighten || small {
        let inputs = BoundInputs {
            energy,
            folded: &context.unary,
            coupled: &context.coupled,
            bound: &mut workspace.bound,
            unary: &mut workspace.unary,
        };
        lower_bound = tightened(
            inputs,
            &best_multipliers,
            (best.energy, lower_bound),
            options,
            None,
        );
    }
    if small && gap(best.energy, lower_bound) > options.gap_tolerance {
        // Polish the best few distinct states found, not only the best one, and starts from each
        // constant labelling.
        remember(&mut pool, &best);
        for label in 0..label_count as u16 {
            let constant = context.complete(vec![label; energy.node_count]);
            let settled = context.relabel_given_hypotheses(&mut workspace, &constant.state);
            remember(&mut pool, &settled);
        }
        for mut start in pool {
            try_hypothesis_moves(&context, &mut start);
            polish(&context, &mut start);
            keep_better(&mut best, start);
        }
    }
    let presence = energy.presence(&best.state);
    // Rounding in the bound's sums must not let it pass the energy of a state we hold.
    let lower_bound = lower_bound.min(best.energy);
    Ok(JointSolution {
        presence,
        energy: best.energy,
        lower_bound,
        relative_gap: gap(best.energy, lower_bound),
        iterations,
        coupled_exact,
        multipliers: best_multipliers,
        state: best.state,
    })
}

fn gap(energy: f64, lower_bound: f64) -> f64 {
    if lower_bound == f64::NEG_INFINITY {
        return f64::INFINITY;
    }
    ((energy - lower_bound) / energy.abs().max(1.0)).max(0.0)
}
