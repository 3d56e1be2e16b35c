//! The exact combinatorial step of the joint solver: hypotheses, presence, room type and constraint factors.
//!
//! Owns: `CoupledTables` (what the step needs from the energy, built once per solve) and minimising every term of the joint energy that does not involve segment-to-segment smoothing, given a
//! per-hypothesis on/off cost: enumerate room types; enumerate the on/off states of the (few) hypotheses that
//! tuple factors mention; per class, choose how many of the remaining hypotheses to switch on by sorting their
//! costs (so count factors are exact). `coupled_value_with` gives the minimum alone, without the minimiser,
//! from per-class orders (`ClassOrders`) a caller may keep across small changes.
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

impl CoupledTables {
    /// Whether `solve_coupled` is exact for this energy (tuple factors mention few enough hypotheses).
    pub(crate) fn exact(&self) -> bool {
        self.exact
    }

    /// Per class, how far the coupled minimum (presence adjustments zero, presence not relaxed) can fall
    /// when that class's segment support changes and nothing else does: `(lost, gained)`. Without support
    /// and with no hypothesis on, a class is absent; with support it is present and pays its presence
    /// cost. So a state of one problem is a state of the other at the same flags and room, with that room's
    /// presence cost added or taken away: losing support lowers the minimum by at most the largest
    /// presence cost over the rooms, gaining it by at most the most negative one (each 0 when there is no
    /// such cost).
    pub(crate) fn support_release(&self, energy: &JointEnergy) -> Vec<(f64, f64)> {
        (0..energy.label_count)
            .map(|class| {
                let mut release = (0.0f64, 0.0f64);
                for room in 0..energy.room_count {
                    let cost = energy.presence_cost[room * energy.label_count + class]
                        + self.absent_weight[class];
                    release.0 = release.0.max(cost);
                    release.1 = release.1.max(-cost);
                }
                release
            })
            .collect()
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
    let present_cost = presence_cost(inputs, tables, room, class);
    let mut best = ClassChoice {
        cost: f64::INFINITY,
        switched_on: 0,
        present: false,
    };
    let counts = room_independent_costs(
        inputs,
        tables,
        class,
        forced_on,
        forced_cost,
        free_deltas,
        free_off_cost,
    );
    for (switched_on, n, mut cost) in counts {
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

/// For each number of free hypotheses switched on (cheapest first), that number, the class's object count
/// `n` and the room-independent cost: the enumerated and free hypotheses' costs plus the count factors at
/// `n`.
#[allow(clippy::too_many_arguments)]
fn room_independent_costs<'a>(
    inputs: &'a CoupledInputs,
    tables: &'a CoupledTables,
    class: usize,
    forced_on: usize,
    forced_cost: f64,
    free_deltas: &'a [f64],
    free_off_cost: f64,
) -> impl Iterator<Item = (usize, u32, f64)> + 'a {
    let energy = inputs.energy;
    let mut prefix = 0.0;
    (0..=free_deltas.len()).map(move |switched_on| {
        if switched_on > 0 {
            prefix += free_deltas[switched_on - 1];
        }
        let n = (forced_on + switched_on) as u32;
        let mut cost = forced_cost + free_off_cost + prefix;
        for &factor in &tables.counts_by_class[class] {
            let factor = &energy.count_factors[factor];
            cost += factor.weight * count_violation(factor.count, n) as f64;
        }
        (switched_on, n, cost)
    })
}

/// The cost of class `class` being present in room `room`: the room's presence statistic, less the
/// presence multipliers, plus the absent factors' weight.
fn presence_cost(inputs: &CoupledInputs, tables: &CoupledTables, room: usize, class: usize) -> f64 {
    let energy = inputs.energy;
    energy.presence_cost[room * energy.label_count + class] - inputs.presence_adjust[class]
        + tables.absent_weight[class]
}

/// The room-independent part of one class's choice. A class's cost in room `r` is the minimum over how many
/// hypotheses are on of (their costs and count factors, which do not depend on the room) plus the presence
/// cost `K[r, c]` when the class is present; so only the cheapest count with presence on and the one count
/// that may leave it off (none on, no segment support) can win in any room.
#[derive(Clone, Copy)]
struct ClassParts {
    /// The least room-independent cost among counts that make the class present (infinite if none).
    supported: f64,
    /// The room-independent cost with nothing on and no support, when that is possible (else infinite).
    unsupported: f64,
}

impl ClassParts {
    fn new(
        inputs: &CoupledInputs,
        tables: &CoupledTables,
        class: usize,
        forced_on: usize,
        forced_cost: f64,
        free_deltas: &[f64],
        free_off_cost: f64,
    ) -> ClassParts {
        let mut parts = ClassParts {
            supported: f64::INFINITY,
            unsupported: f64::INFINITY,
        };
        // The same sums `best_for_class` adds the presence cost to, so the costs agree to the bit.
        let counts = room_independent_costs(
            inputs,
            tables,
            class,
            forced_on,
            forced_cost,
            free_deltas,
            free_off_cost,
        );
        for (_, n, cost) in counts {
            if n > 0 || inputs.segment_support[class] {
                parts.supported = parts.supported.min(cost);
            } else {
                parts.unsupported = cost;
            }
        }
        parts
    }

    /// The class's least cost in a room whose presence cost is `present_cost`; equal to
    /// `best_for_class(..).cost` (rounding is monotone, so the least sum is the least part plus the cost).
    fn cost(&self, present_cost: f64, relaxed: bool) -> f64 {
        let off = if relaxed && present_cost < 0.0 {
            self.unsupported + present_cost
        } else {
            self.unsupported + 0.0
        };
        // `best_for_class` keeps the first count with the least cost; the value is the same either way.
        (self.supported + present_cost).min(off)
    }
}

/// Per class, its free hypotheses sorted by on-minus-off cost and what the search reads of them: the part
/// of the step that depends on one class's costs and support alone.
#[derive(Clone, Default)]
pub(crate) struct ClassOrders {
    /// Free hypotheses of each class (`CoupledTables::free_start` ranges), sorted by on-minus-off cost, ties
    /// by index.
    free_sorted: Vec<usize>,
    free_deltas: Vec<f64>,
    /// Each class's free hypotheses' off-costs, summed.
    free_off: Vec<f64>,
    /// Each class's room-independent parts with none of its enumerated hypotheses on.
    free_parts: Vec<ClassParts>,
    /// Scratch for the sort.
    keyed: Vec<(f64, usize)>,
}

impl ClassOrders {
    /// Orders of every class.
    pub(crate) fn new(inputs: &CoupledInputs) -> ClassOrders {
        let tables = inputs.tables;
        let label_count = inputs.energy.label_count;
        let mut orders = ClassOrders {
            free_sorted: tables.free.clone(),
            free_deltas: vec![0.0; tables.free.len()],
            free_off: vec![0.0; label_count],
            free_parts: vec![
                ClassParts {
                    supported: f64::INFINITY,
                    unsupported: f64::INFINITY,
                };
                label_count
            ],
            keyed: Vec::new(),
        };
        for class in 0..label_count {
            orders.refresh(inputs, class);
        }
        orders
    }

    /// Recomputes class `class`'s order and parts from `inputs` (its hypotheses' costs, its support).
    pub(crate) fn refresh(&mut self, inputs: &CoupledInputs, class: usize) {
        let tables = inputs.tables;
        let range = tables.free_start[class]..tables.free_start[class + 1];
        // Sorted by on-minus-off cost (ties by index, for determinism). The key (cost, index) is a total
        // order, so an unstable sort of the keys gives the one order a stable sort of the indices gave,
        // without its scratch buffer or a cost lookup per comparison.
        self.keyed.clear();
        self.keyed.extend(
            tables.free[range.clone()]
                .iter()
                .map(|&h| (inputs.cost_on[h] - inputs.cost_off[h], h)),
        );
        self.keyed
            .sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        for ((sorted, delta), &(key, h)) in self.free_sorted[range.clone()]
            .iter_mut()
            .zip(&mut self.free_deltas[range.clone()])
            .zip(&self.keyed)
        {
            *sorted = h;
            *delta = key;
        }
        self.free_off[class] = self.keyed.iter().map(|&(_, h)| inputs.cost_off[h]).sum();
        self.free_parts[class] = ClassParts::new(
            inputs,
            tables,
            class,
            0,
            0.0,
            &self.free_deltas[range],
            self.free_off[class],
        );
    }
}

/// The search's minimum and where it was found.
struct Search {
    best_value: f64,
    best_room: usize,
    best_mask: u64,
}

/// The value `solve_coupled` returns, without rebuilding its minimiser (the flags and presence of every
/// class), for callers that only compare values.
#[cfg(test)]
pub(crate) fn coupled_value(inputs: &CoupledInputs) -> f64 {
    search(inputs, &ClassOrders::new(inputs)).best_value
}

/// `coupled_value` with the classes' orders given: `orders` must be `ClassOrders::new(inputs)`, or orders
/// of other inputs with every class whose costs or support differ refreshed (`ClassOrders::refresh`). A
/// caller scoring many small changes of one problem keeps the orders of the rest; the value is the same to
/// the bit, since each class's part is computed by the same code from the same numbers.
pub(crate) fn coupled_value_with(inputs: &CoupledInputs, orders: &ClassOrders) -> f64 {
    search(inputs, orders).best_value
}

/// Minimises the coupled terms exactly (or, with too many enumerated hypotheses, a lower bound of them).
pub(crate) fn solve_coupled(inputs: &CoupledInputs) -> CoupledResult {
    let energy = inputs.energy;
    let tables = inputs.tables;
    let enumerated = &tables.enumerated;
    let position_in_enumerated = &tables.position_in_enumerated;
    let orders = ClassOrders::new(inputs);
    let Search {
        best_value,
        best_room,
        best_mask,
    } = search(inputs, &orders);
    let ClassOrders {
        free_sorted,
        free_deltas,
        free_off,
        ..
    } = orders;
    let range = |class: usize| tables.free_start[class]..tables.free_start[class + 1];
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
        exact: tables.exact,
    }
}

/// The search over rooms and enumerated flags for the least value (see `solve_coupled`), from the classes'
/// orders (`ClassOrders`).
fn search(inputs: &CoupledInputs, orders: &ClassOrders) -> Search {
    let energy = inputs.energy;
    let tables = inputs.tables;
    let enumerated = &tables.enumerated;
    let position_in_enumerated = &tables.position_in_enumerated;
    let touches_enumerated = &tables.touches_enumerated;
    let exact = tables.exact;
    let free_deltas = &orders.free_deltas;
    let free_off = &orders.free_off;
    let range = |class: usize| tables.free_start[class]..tables.free_start[class + 1];

    // Room-independent parts first; each room then only adds its presence costs (see `ClassParts`).
    let relaxed = inputs.relaxed_presence;
    let free_parts = &orders.free_parts;
    let fixed_part: Vec<f64> = (0..energy.room_count)
        .map(|room| {
            let mut fixed = energy.room_cost[room];
            for (class, parts) in free_parts.iter().enumerate() {
                if !touches_enumerated[class] {
                    fixed += parts.cost(presence_cost(inputs, tables, room, class), relaxed);
                }
            }
            fixed
        })
        .collect();
    let touched: Vec<usize> = (0..energy.label_count)
        .filter(|&class| touches_enumerated[class])
        .collect();
    let mut best_value = f64::INFINITY;
    let mut best_room = 0usize;
    let mut best_mask = 0u64;
    let mut flags = vec![false; energy.hypotheses.len()];
    let mut tuple_costs = Vec::with_capacity(energy.tuple_factors.len());
    let mut touched_parts = Vec::with_capacity(touched.len());
    let mask_count = 1u64 << enumerated.len();
    for mask in 0..mask_count {
        for (position, &h) in enumerated.iter().enumerate() {
            flags[h] = mask >> position & 1 == 1;
        }
        tuple_costs.clear();
        if exact {
            for factor in &energy.tuple_factors {
                tuple_costs.push(JointEnergy::tuple_factor_cost(factor, &flags));
            }
        }
        touched_parts.clear();
        for &class in &touched {
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
            touched_parts.push(ClassParts::new(
                inputs,
                tables,
                class,
                forced_on,
                forced_cost,
                &free_deltas[range(class)],
                free_off[class],
            ));
        }
        for (room, &fixed) in fixed_part.iter().enumerate() {
            let mut value = fixed;
            for &cost in &tuple_costs {
                value += cost;
            }
            for (&class, parts) in touched.iter().zip(&touched_parts) {
                value += parts.cost(presence_cost(inputs, tables, room, class), relaxed);
            }
            // The first (room, mask) in room-major order among equal values, as a room-major scan keeps.
            if value < best_value || (value == best_value && (room, mask) < (best_room, best_mask))
            {
                best_value = value;
                best_room = room;
                best_mask = mask;
            }
        }
    }
    Search {
        best_value,
        best_room,
        best_mask,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::energy::Count;
    use crate::energy::{AbsentFactor, CountFactor, HypothesisTerm, TupleFactor, ENERGY_SCHEMA};

    /// Count factors `(class, kind, k)`, absent classes, and tuples with their `negated` flag.
    type Factors<'a> = (&'a [(u16, u8, u32)], &'a [u16], &'a [(Vec<u32>, bool)]);

    /// A small energy: `labels` classes, `rooms` room types, hypotheses of the given classes, and the
    /// coupled factors; the segment part is a single node (the step never reads it).
    fn energy(
        labels: usize,
        rooms: usize,
        classes: &[u16],
        room_cost: &[f64],
        presence_cost: &[f64],
        factors: Factors,
    ) -> JointEnergy {
        let (counts, absent, tuples) = factors;
        JointEnergy {
            schema: ENERGY_SCHEMA,
            label_count: labels,
            fine_count: 1,
            node_count: 1,
            unary: vec![0.0; labels],
            edges: Vec::new(),
            hypotheses: classes
                .iter()
                .map(|&class| HypothesisTerm {
                    class,
                    members: vec![0],
                    activation_cost: 0.0,
                    agreement_weight: 1.0,
                })
                .collect(),
            room_count: rooms,
            room_cost: room_cost[..rooms].to_vec(),
            presence_cost: presence_cost[..rooms * labels].to_vec(),
            count_factors: counts
                .iter()
                .map(|&(class, kind, k)| CountFactor {
                    class: class % labels as u16,
                    count: match kind % 3 {
                        0 => Count::Exactly(k),
                        1 => Count::AtLeast(k),
                        _ => Count::AtMost(k),
                    },
                    weight: 1.5,
                    source: None,
                })
                .collect(),
            absent_factors: absent
                .iter()
                .map(|&class| AbsentFactor {
                    class: class % labels as u16,
                    weight: 2.0,
                    source: None,
                })
                .collect(),
            tuple_factors: tuples
                .iter()
                .map(|(tuple, negated)| TupleFactor {
                    tuples: vec![tuple.iter().map(|&h| h % classes.len() as u32).collect()],
                    negated: *negated,
                    weight: 2.5,
                    source: None,
                })
                .collect(),
            unary_factors: Vec::new(),
        }
    }

    /// The coupled terms of one room and one set of flags, straight from their definitions: a class is
    /// present when supported (an accepted hypothesis or segment support) and, relaxed, also when that is
    /// cheaper.
    fn coupled_value(inputs: &CoupledInputs, room: usize, flags: &[bool]) -> f64 {
        let energy = inputs.energy;
        let mut value = energy.room_cost[room];
        for (h, &on) in flags.iter().enumerate() {
            value += if on {
                inputs.cost_on[h]
            } else {
                inputs.cost_off[h]
            };
        }
        let counts = energy.hypothesis_counts(flags);
        for (class, &count) in counts.iter().enumerate() {
            let mut present_cost = energy.presence_cost[room * energy.label_count + class]
                - inputs.presence_adjust[class];
            for factor in &energy.absent_factors {
                if factor.class as usize == class {
                    present_cost += factor.weight;
                }
            }
            if count > 0 || inputs.segment_support[class] {
                value += present_cost;
            } else if inputs.relaxed_presence {
                value += present_cost.min(0.0);
            }
        }
        for factor in &energy.count_factors {
            value +=
                factor.weight * count_violation(factor.count, counts[factor.class as usize]) as f64;
        }
        for factor in &energy.tuple_factors {
            value += JointEnergy::tuple_factor_cost(factor, flags);
        }
        value
    }

    proptest::proptest! {
        /// The step's minimum over rooms and flags is the brute-force minimum, and its minimiser attains it;
        /// `coupled_value` gives the same minimum.
        #[test]
        fn coupled_step_matches_brute_force(
            labels in 2usize..5,
            rooms in 1usize..4,
            classes in proptest::collection::vec(0u16..4, 0..7),
            room_cost in proptest::collection::vec(-2.0f64..2.0, 3),
            presence_cost in proptest::collection::vec(-3.0f64..3.0, 12),
            cost_on in proptest::collection::vec(-2.0f64..2.0, 6),
            cost_off in proptest::collection::vec(-1.0f64..1.0, 6),
            adjust in proptest::collection::vec(0.0f64..1.5, 4),
            support in proptest::collection::vec(proptest::bool::ANY, 4),
            counts in proptest::collection::vec((0u16..4, 0u8..3, 0u32..3), 0..3),
            absent in proptest::collection::vec(0u16..4, 0..2),
            tuples in proptest::collection::vec(
                (proptest::collection::vec(0u32..6, 1..3), proptest::bool::ANY), 0..3),
            relaxed in proptest::bool::ANY,
        ) {
            let classes: Vec<u16> = classes.iter().map(|&c| c % labels as u16).collect();
            let tuples = if classes.is_empty() { Vec::new() } else { tuples };
            let energy = energy(
                labels,
                rooms,
                &classes,
                &room_cost,
                &presence_cost,
                (&counts, &absent, &tuples),
            );
            let tables = CoupledTables::new(&energy);
            let hypotheses = classes.len();
            let inputs = CoupledInputs {
                energy: &energy,
                tables: &tables,
                cost_on: &cost_on[..hypotheses],
                cost_off: &cost_off[..hypotheses],
                presence_adjust: &adjust[..labels],
                segment_support: &support[..labels],
                relaxed_presence: relaxed,
            };
            let result = solve_coupled(&inputs);
            // The value alone is the same search's, to the bit.
            proptest::prop_assert_eq!(super::coupled_value(&inputs).to_bits(), result.value.to_bits());
            let mut minimum = f64::INFINITY;
            for room in 0..rooms {
                for mask in 0u32..1 << hypotheses {
                    let flags: Vec<bool> = (0..hypotheses).map(|h| mask >> h & 1 == 1).collect();
                    minimum = minimum.min(coupled_value(&inputs, room, &flags));
                }
            }
            proptest::prop_assert!(result.exact);
            proptest::prop_assert!((result.value - minimum).abs() < 1e-9,
                "step {} vs brute force {}", result.value, minimum);
            let attained = coupled_value(&inputs, result.room as usize, &result.hypotheses_on);
            proptest::prop_assert!((attained - minimum).abs() < 1e-9,
                "minimiser scores {} vs brute force {}", attained, minimum);
        }

        /// The screen of `joint_moves::MoveScorer`: after the on-costs move and some classes lose or gain
        /// their segment support, the minimum is at least the old one plus every fall of an on-cost, less
        /// each changed class's `support_release`. Fails if either release is taken as 0: a class whose
        /// presence costs something gets cheaper once it need not be present, and one whose presence pays
        /// gets cheaper once it must be.
        #[test]
        fn support_release_bounds_the_fall(
            labels in 2usize..5,
            rooms in 1usize..4,
            classes in proptest::collection::vec(0u16..4, 0..7),
            room_cost in proptest::collection::vec(-2.0f64..2.0, 3),
            presence_cost in proptest::collection::vec(-3.0f64..3.0, 12),
            before_on in proptest::collection::vec(-2.0f64..2.0, 6),
            after_on in proptest::collection::vec(-2.0f64..2.0, 6),
            support_before in proptest::collection::vec(proptest::bool::ANY, 4),
            support_after in proptest::collection::vec(proptest::bool::ANY, 4),
            counts in proptest::collection::vec((0u16..4, 0u8..3, 0u32..3), 0..3),
            absent in proptest::collection::vec(0u16..4, 0..2),
            tuples in proptest::collection::vec(
                (proptest::collection::vec(0u32..6, 1..3), proptest::bool::ANY), 0..3),
        ) {
            let classes: Vec<u16> = classes.iter().map(|&c| c % labels as u16).collect();
            let tuples = if classes.is_empty() { Vec::new() } else { tuples };
            let energy = energy(
                labels,
                rooms,
                &classes,
                &room_cost,
                &presence_cost,
                (&counts, &absent, &tuples),
            );
            let tables = CoupledTables::new(&energy);
            let hypotheses = classes.len();
            let zeros = vec![0.0; labels.max(hypotheses)];
            let solve = |cost_on: &[f64], support: &[bool]| {
                solve_coupled(&CoupledInputs {
                    energy: &energy,
                    tables: &tables,
                    cost_on: &cost_on[..hypotheses],
                    cost_off: &zeros[..hypotheses],
                    presence_adjust: &zeros[..labels],
                    segment_support: &support[..labels],
                    relaxed_presence: false,
                })
                .value
            };
            let before = solve(&before_on, &support_before);
            let after = solve(&after_on, &support_after);
            // Orders kept from the first problem, with the classes whose costs or support changed refreshed,
            // give the second problem's value to the bit (what `joint_moves::MoveScorer` relies on).
            let inputs_before = CoupledInputs {
                energy: &energy,
                tables: &tables,
                cost_on: &before_on[..hypotheses],
                cost_off: &zeros[..hypotheses],
                presence_adjust: &zeros[..labels],
                segment_support: &support_before[..labels],
                relaxed_presence: false,
            };
            let inputs_after = CoupledInputs {
                cost_on: &after_on[..hypotheses],
                segment_support: &support_after[..labels],
                ..inputs_before
            };
            let mut orders = ClassOrders::new(&inputs_before);
            for class in 0..labels {
                let costs_moved = (0..hypotheses)
                    .any(|h| classes[h] as usize == class && before_on[h] != after_on[h]);
                if costs_moved || support_before[class] != support_after[class] {
                    orders.refresh(&inputs_after, class);
                }
            }
            proptest::prop_assert_eq!(
                coupled_value_with(&inputs_after, &orders).to_bits(),
                after.to_bits()
            );
            let release = tables.support_release(&energy);
            let mut bound = before;
            for h in 0..hypotheses {
                bound += (after_on[h] - before_on[h]).min(0.0);
            }
            for class in 0..labels {
                match (support_before[class], support_after[class]) {
                    (true, false) => bound -= release[class].0,
                    (false, true) => bound -= release[class].1,
                    _ => {}
                }
            }
            proptest::prop_assert!(bound <= after + 1e-9, "bound {} above the minimum {}", bound, after);
        }
    }
}
