//! The exact combinatorial step of the joint solver: hypotheses, presence, room type and constraint factors.
//!
//! Owns: `CoupledTables` (what the step needs from the energy, built once per solve) and minimising every term of the joint energy that does not involve segment-to-segment smoothing, given a
//! per-hypothesis on/off cost: enumerate room types; enumerate the on/off states of the (few) hypotheses that
//! tuple factors mention; per class, choose how many of the remaining hypotheses to switch on by sorting their
//! costs (so count factors are exact).
//! Must not: label segments; it reads segment labels only through the costs and supports it is given.

use crate::energy::{count_violation, JointEnergy};

/// The most hypotheses that tuple factors may mention for the step to stay exact (`2^14` states).
pub const MAX_ENUMERATED_HYPOTHESES: usize = 14;

/// What the step minimises over, besides the energy's own tables.
pub(crate) struct CoupledInputs<'a> {
    pub energy: &'a JointEnergy,
    /// `CoupledTables::new(energy)`, built once per solve.
    pub tables: &'a CoupledTables,
    /// Cost of each hypothesis being on, and off.
    pub cost_on: &'a [f64],
    pub cost_off: &'a [f64],
    /// Subtracted from every room's presence cost of a class (the presence multipliers).
    pub presence_adjust: &'a [f64],
    /// Classes that segment labels already make present.
    pub segment_support: &'a [bool],
    /// `true`: presence may be on without support (a relaxation, used for the lower bound).
    pub relaxed_presence: bool,
}

/// The minimiser of the step.
#[derive(Clone, Debug)]
pub(crate) struct CoupledResult {
    pub value: f64,
    pub hypotheses_on: Vec<bool>,
    pub room: u16,
    pub presence: Vec<bool>,
    /// `false` when tuple factors mentioned too many hypotheses and were left out (the value is then a lower
    /// bound of the true minimum, since those factors are non-negative).
    pub exact: bool,
}

struct ClassChoice {
    cost: f64,
    switched_on: usize,
    present: bool,
}

/// The parts of the coupled step that depend on the energy alone, built once per solve so each call only
/// sorts costs.
pub(crate) struct CoupledTables {
    by_class: Vec<Vec<usize>>,
    counts_by_class: Vec<Vec<usize>>,
    absent_weight: Vec<f64>,
    /// Hypotheses that tuple factors mention, ascending (empty when there are too many to enumerate).
    enumerated: Vec<usize>,
    position_in_enumerated: Vec<usize>,
    touches_enumerated: Vec<bool>,
    exact: bool,
    /// The other hypotheses of each class, `free[free_start[c]..free_start[c + 1]]`, ascending.
    free_start: Vec<usize>,
    free: Vec<usize>,
}

impl CoupledTables {
    pub(crate) fn new(energy: &JointEnergy) -> CoupledTables {
        let mut by_class = vec![Vec::new(); energy.label_count];
        for (index, hypothesis) in energy.hypotheses.iter().enumerate() {
            by_class[hypothesis.class as usize].push(index);
        }
        let mut counts_by_class = vec![Vec::new(); energy.label_count];
        for (index, factor) in energy.count_factors.iter().enumerate() {
            counts_by_class[factor.class as usize].push(index);
        }
        let mut absent_weight = vec![0.0; energy.label_count];
        for factor in &energy.absent_factors {
            absent_weight[factor.class as usize] += factor.weight;
        }
        let mut enumerated: Vec<usize> = energy
            .tuple_factors
            .iter()
            .flat_map(|factor| factor.tuples.iter().flatten().map(|&h| h as usize))
            .collect();
        enumerated.sort_unstable();
        enumerated.dedup();
        let exact = enumerated.len() <= MAX_ENUMERATED_HYPOTHESES;
        if !exact {
            enumerated.clear();
        }
        let mut position_in_enumerated = vec![usize::MAX; energy.hypotheses.len()];
        for (position, &h) in enumerated.iter().enumerate() {
            position_in_enumerated[h] = position;
        }
        let touches_enumerated = by_class
            .iter()
            .map(|members| {
                members
                    .iter()
                    .any(|&h| position_in_enumerated[h] != usize::MAX)
            })
            .collect();
        let mut free_start = vec![0];
        let mut free = Vec::new();
        for members in &by_class {
            free.extend(
                members
                    .iter()
                    .copied()
                    .filter(|&h| position_in_enumerated[h] == usize::MAX),
            );
            free_start.push(free.len());
        }
        CoupledTables {
            by_class,
            counts_by_class,
            absent_weight,
            enumerated,
            position_in_enumerated,
            touches_enumerated,
            exact,
            free_start,
            free,
        }
    }
}

/// Best choice for one class: `forced` gives the state of enumerated hypotheses; `free` the others sorted by
/// their on-minus-off cost.
#[allow(clippy::too_many_arguments)]
fn best_for_class(
    inputs: &CoupledInputs,
    tables: &CoupledTables,
    class: usize,
    room: usize,
    forced_on: usize,
    forced_cost: f64,
    free_deltas: &[f64],
    free_off_cost: f64,
) -> ClassChoice {
    let energy = inputs.energy;
    let present_cost = energy.presence_cost[room * energy.label_count + class]
        - inputs.presence_adjust[class]
        + tables.absent_weight[class];
    let mut best = ClassChoice {
        cost: f64::INFINITY,
        switched_on: 0,
        present: false,
    };
    let mut prefix = 0.0;
    for switched_on in 0..=free_deltas.len() {
        if switched_on > 0 {
            prefix += free_deltas[switched_on - 1];
        }
        let n = (forced_on + switched_on) as u32;
        let mut cost = forced_cost + free_off_cost + prefix;
        for &factor in &tables.counts_by_class[class] {
            let factor = &energy.count_factors[factor];
            cost += factor.weight * count_violation(factor.count, n) as f64;
        }
        let supported = n > 0 || inputs.segment_support[class];
        // Relaxed: presence may also be on without support, when that is cheaper.
        let (presence_cost, present) =
            if supported || (inputs.relaxed_presence && present_cost < 0.0) {
                (present_cost, true)
            } else {
                (0.0, false)
            };
        cost += presence_cost;
        if cost < best.cost {
            best = ClassChoice {
                cost,
                switched_on,
                present,
            };
        }
    }
    best
}

/// Minimises the coupled terms exactly (or, with too many enumerated hypotheses, a lower bound of them).
pub(crate) fn solve_coupled(inputs: &CoupledInputs) -> CoupledResult {
    let energy = inputs.energy;
    let tables = inputs.tables;
    let enumerated = &tables.enumerated;
    let position_in_enumerated = &tables.position_in_enumerated;
    let touches_enumerated = &tables.touches_enumerated;
    let exact = tables.exact;
    // Free hypotheses of each class, sorted by on-minus-off cost (ties by index, for determinism).
    let mut free_sorted = tables.free.clone();
    let mut free_deltas = vec![0.0; free_sorted.len()];
    let mut free_off = vec![0.0; energy.label_count];
    let range = |class: usize| tables.free_start[class]..tables.free_start[class + 1];
    for class in 0..energy.label_count {
        let free = &mut free_sorted[range(class)];
        free.sort_by(|&a, &b| {
            let delta_a = inputs.cost_on[a] - inputs.cost_off[a];
            let delta_b = inputs.cost_on[b] - inputs.cost_off[b];
            delta_a.total_cmp(&delta_b).then(a.cmp(&b))
        });
        for (delta, &h) in free_deltas[range(class)].iter_mut().zip(free.iter()) {
            *delta = inputs.cost_on[h] - inputs.cost_off[h];
        }
        free_off[class] = free.iter().map(|&h| inputs.cost_off[h]).sum();
    }

    let mut best_value = f64::INFINITY;
    let mut best_room = 0usize;
    let mut best_mask = 0u64;
    let mut flags = vec![false; energy.hypotheses.len()];
    let mask_count = 1u64 << enumerated.len();
    for room in 0..energy.room_count {
        let mut fixed_part = energy.room_cost[room];
        for class in 0..energy.label_count {
            if !touches_enumerated[class] {
                fixed_part += best_for_class(
                    inputs,
                    tables,
                    class,
                    room,
                    0,
                    0.0,
                    &free_deltas[range(class)],
                    free_off[class],
                )
                .cost;
            }
        }
        for mask in 0..mask_count {
            for (position, &h) in enumerated.iter().enumerate() {
                flags[h] = mask >> position & 1 == 1;
            }
            let mut value = fixed_part;
            if exact {
                for factor in &energy.tuple_factors {
                    value += JointEnergy::tuple_factor_cost(factor, &flags);
                }
            }
            for class in 0..energy.label_count {
                if !touches_enumerated[class] {
                    continue;
                }
                let (mut forced_on, mut forced_cost) = (0usize, 0.0);
                for &h in &tables.by_class[class] {
                    if position_in_enumerated[h] != usize::MAX {
                        if flags[h] {
                            forced_on += 1;
                            forced_cost += inputs.cost_on[h];
                        } else {
                            forced_cost += inputs.cost_off[h];
                        }
                    }
                }
                value += best_for_class(
                    inputs,
                    tables,
                    class,
                    room,
                    forced_on,
                    forced_cost,
                    &free_deltas[range(class)],
                    free_off[class],
                )
                .cost;
            }
            if value < best_value {
                best_value = value;
                best_room = room;
                best_mask = mask;
            }
        }
    }

    // Rebuild the minimiser.
    let mut hypotheses_on = vec![false; energy.hypotheses.len()];
    for (position, &h) in enumerated.iter().enumerate() {
        hypotheses_on[h] = best_mask >> position & 1 == 1;
    }
    let mut presence = vec![false; energy.label_count];
    for class in 0..energy.label_count {
        let (mut forced_on, mut forced_cost) = (0usize, 0.0);
        for &h in &tables.by_class[class] {
            if position_in_enumerated[h] != usize::MAX {
                if hypotheses_on[h] {
                    forced_on += 1;
                    forced_cost += inputs.cost_on[h];
                } else {
                    forced_cost += inputs.cost_off[h];
                }
            }
        }
        let choice = best_for_class(
            inputs,
            tables,
            class,
            best_room,
            forced_on,
            forced_cost,
            &free_deltas[range(class)],
            free_off[class],
        );
        for &h in free_sorted[range(class)].iter().take(choice.switched_on) {
            hypotheses_on[h] = true;
        }
        presence[class] = choice.present;
    }
    CoupledResult {
        value: best_value,
        hypotheses_on,
        room: best_room as u16,
        presence,
        exact,
    }
}
