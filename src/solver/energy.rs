//! The joint energy: one number for a whole explanation of the scene, and every term that makes it up.
//!
//! Owns: `JointEnergy` (the serialised form the solver reads and the MILP fixtures write), evaluating it for a
//! given state and validating it. Turning a scene, its unaries, object hypotheses and grounded constraints
//! into one is `sayso_core::energy::build`'s.
//! Must not: search for the minimum (that is `crate::joint`), parse words or touch files.
//!
//! # The energy, term by term
//!
//! Variables: a label `x_i` for every node (fine segments `0..fine_count`, then one node per coarse region),
//! an on/off flag `y_h` for every object hypothesis, a room type `r`, and for every class a presence flag
//! `p_c = 1` exactly when some fine segment is labelled `c` or some accepted hypothesis has class `c`.
//! Lower is better. All costs are in nats (natural-log units) so they add with `-log p` unaries.
//!
//! | term | formula | weight (`models/energy_weights.json`, read by `build::EnergyWeights::embedded`) |
//! |---|---|---|
//! | segment unary | `sum_s U[s, x_s]`, `U = -log p(class \| segment)` | 1 |
//! | smoothing (contrast-sensitive Potts) | `sum_(a,b) w_ab [x_a != x_b]`, `w_ab = lambda * boundary_length * exp(-contrast^2 / (2 sigma^2))` | `lambda` per boundary pixel, `sigma` in CIE76 units: tuned (hand-set start 0.02, 12) |
//! | fine/coarse agreement (coarse link) | an extra node per coarse region joined to each member by a Potts edge of weight `w_fc` | `w_fc`: tuned (hand-set start 0.3) |
//! | hypothesis score | `sum_h y_h a_h`, `a_h = -log(score / (1 - score))`, score clamped to 0.02..0.98 (negative for likely objects) | 1 |
//! | hypothesis-segment agreement | `sum_h y_h g_h * #{s in members(h) : x_s != class(h)}` | `g_h` per segment: tuned (hand-set start 1.5); `HARD_WEIGHT` for the subject of a hard relation, relabel, place or attribute (the object the operator placed or named is drawn in full when on) |
//! | room prior | `R[r] = -log P(r)`, plus `w_meta` for every room other than the one scene metadata names | `P(r)` counted with the room-class statistics; `w_meta = 6` |
//! | presence / room-class statistics | `sum_c K[r, c] p_c`, `K[r, c] = -log P(c present \| r) + log P(c absent \| r)` | 1; `P` in `models/room_class_prior.json`, counted over training renders by `sayso tune` (Laplace's rule; `energy::statistics`) |
//! | class co-occurrence | through the room: classes are independent given `r`, so co-occurrence is the mixture over rooms; the counted co-occurrence table is stored in the prior file's `counts` | — |
//! | count (present = at least 1) | `w * dist(n_c, admissible set)`, `n_c = sum_{class(h) = c} y_h` | soft 4, hard `HARD_WEIGHT` |
//! | absent | `w * p_c` | soft 4, hard `HARD_WEIGHT` |
//! | relation, relabel of an object | tuple factor: `w` unless some listed pair (or single) of hypotheses is all on; negated: `w` for every listed tuple that is all on. A pair is listed when the relation holds between the two objects as shown: an accepted hypothesis stands for itself and the accepted hypotheses of its class it touches (`crate::grounding::Extents`) | soft 3, hard `HARD_WEIGHT` |
//! | relabel / attribute / region of segments | unary factor: `w` for every listed segment whose label is (or, `wanted`, is not) `label` | soft 3 per segment |
//! | room type stated | added to `R[r]`: `w` for every other room | soft 6, hard `HARD_WEIGHT` |
//!
//! The weights marked "tuned" are chosen by `sayso tune` on training renders, never on demo scenes (the
//! search and its objective are documented in `crate::tuning` and `models/README.md`); the others keep their
//! hand-set values. `build::EnergyWeights::default()` keeps the hand-set starting values.
//!
//! A constraint is *hard* when the operator was definite (parser confidence at least 0.9); a hard factor uses
//! `HARD_WEIGHT`, large enough to dominate every other term of a real scene, and is reported as a conflict when
//! the solution still violates it (the solver never forces an unsatisfiable set).

use serde::{Deserialize, Serialize};

/// A cardinality: how many objects of a class a count factor admits (the language stage's counts are these).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(tag = "op", content = "n", rename_all = "snake_case")]
pub enum Count {
    Exactly(u32),
    AtLeast(u32),
    AtMost(u32),
}

impl Count {
    /// Whether `n` satisfies the count.
    pub fn admits(self, n: u32) -> bool {
        match self {
            Count::Exactly(k) => n == k,
            Count::AtLeast(k) => n >= k,
            Count::AtMost(k) => n <= k,
        }
    }
}

/// The schema of the serialised energy.
pub const ENERGY_SCHEMA: u32 = 1;

/// The weight of a hard factor: larger than any sum of the other terms in a scene of the sizes sayso takes.
pub const HARD_WEIGHT: f64 = 1000.0;

/// One object hypothesis as the energy sees it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct HypothesisTerm {
    pub class: u16,
    /// Fine segment indices, ascending.
    pub members: Vec<u32>,
    /// `a_h`: the cost of switching the hypothesis on.
    pub activation_cost: f64,
    /// `g_h`: the cost per member segment whose label differs from the class, when on.
    pub agreement_weight: f64,
}

/// A cardinality factor over the hypotheses of one class.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CountFactor {
    pub class: u16,
    pub count: Count,
    pub weight: f64,
    /// The index of the constraint this came from, for the change list.
    #[serde(default)]
    pub source: Option<usize>,
}

/// A penalty on a class being present at all.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AbsentFactor {
    pub class: u16,
    pub weight: f64,
    #[serde(default)]
    pub source: Option<usize>,
}

/// A factor over small tuples of hypotheses (singles or pairs).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TupleFactor {
    /// Hypothesis indices; each tuple has one or two entries.
    pub tuples: Vec<Vec<u32>>,
    /// `false`: cost `weight` unless some tuple is all on. `true`: cost `weight` per tuple that is all on.
    pub negated: bool,
    pub weight: f64,
    #[serde(default)]
    pub source: Option<usize>,
}

/// A factor on the labels of some segments.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct UnaryFactor {
    pub segments: Vec<u32>,
    pub label: u16,
    /// `true`: cost `weight` per listed segment not labelled `label`; `false`: per segment labelled `label`.
    pub wanted: bool,
    pub weight: f64,
    #[serde(default)]
    pub source: Option<usize>,
}

/// The whole joint energy of one scene under one set of constraints, in the form the solver reads.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct JointEnergy {
    pub schema: u32,
    pub label_count: usize,
    /// Nodes `0..fine_count` are fine segments; the rest are coarse regions.
    pub fine_count: usize,
    pub node_count: usize,
    /// `unary[node * label_count + label]`.
    pub unary: Vec<f64>,
    /// Potts edges `(a, b, weight)`, including the fine/coarse agreement links.
    pub edges: Vec<(u32, u32, f64)>,
    pub hypotheses: Vec<HypothesisTerm>,
    pub room_count: usize,
    /// `R[r]`.
    pub room_cost: Vec<f64>,
    /// `K[r * label_count + c]`.
    pub presence_cost: Vec<f64>,
    #[serde(default)]
    pub count_factors: Vec<CountFactor>,
    #[serde(default)]
    pub absent_factors: Vec<AbsentFactor>,
    #[serde(default)]
    pub tuple_factors: Vec<TupleFactor>,
    #[serde(default)]
    pub unary_factors: Vec<UnaryFactor>,
}

/// One full assignment of the energy's variables.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct JointState {
    /// One label per node.
    pub labels: Vec<u16>,
    /// One flag per hypothesis.
    pub hypotheses_on: Vec<bool>,
    pub room: u16,
}

/// What is wrong with an energy.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum EnergyError {
    #[error("energy schema {found} is not supported (this build reads {ENERGY_SCHEMA})")]
    Schema { found: u32 },
    #[error("the scene has no segments")]
    NoSegments,
    #[error("the energy needs at least one label and one room type")]
    NoLabels,
    #[error("{table} has {found} entries, expected {expected}")]
    Shape {
        table: &'static str,
        found: usize,
        expected: usize,
    },
    #[error("{what} is not a finite number")]
    NotFinite { what: String },
    #[error("{what} refers to {kind} {index}, which does not exist")]
    OutOfRange {
        what: String,
        kind: &'static str,
        index: usize,
    },
    #[error("weight of {what} is negative")]
    NegativeWeight { what: String },
    #[error("{0}")]
    Build(String),
}

/// The distance from `n` to the set a count admits.
pub fn count_violation(count: Count, n: u32) -> u32 {
    match count {
        Count::Exactly(k) => n.abs_diff(k),
        Count::AtLeast(k) => k.saturating_sub(n),
        Count::AtMost(k) => n.saturating_sub(k),
    }
}

impl JointEnergy {
    /// Checks shapes, ranges and finiteness so the solver can index without further checks.
    pub fn validate(&self) -> Result<(), EnergyError> {
        if self.schema != ENERGY_SCHEMA {
            return Err(EnergyError::Schema { found: self.schema });
        }
        if self.fine_count == 0 {
            return Err(EnergyError::NoSegments);
        }
        if self.label_count == 0 || self.room_count == 0 || self.label_count > u16::MAX as usize {
            return Err(EnergyError::NoLabels);
        }
        let shape = |table, found, expected| {
            if found == expected {
                Ok(())
            } else {
                Err(EnergyError::Shape {
                    table,
                    found,
                    expected,
                })
            }
        };
        if self.node_count < self.fine_count {
            return Err(EnergyError::Shape {
                table: "node_count",
                found: self.node_count,
                expected: self.fine_count,
            });
        }
        shape(
            "unary",
            self.unary.len(),
            self.node_count * self.label_count,
        )?;
        shape("room_cost", self.room_cost.len(), self.room_count)?;
        shape(
            "presence_cost",
            self.presence_cost.len(),
            self.room_count * self.label_count,
        )?;
        let finite = |value: f64, what: &dyn Fn() -> String| {
            if value.is_finite() {
                Ok(())
            } else {
                Err(EnergyError::NotFinite { what: what() })
            }
        };
        for (index, &value) in self.unary.iter().enumerate() {
            finite(value, &|| {
                format!(
                    "unary of node {} label {}",
                    index / self.label_count,
                    index % self.label_count
                )
            })?;
        }
        for (index, &value) in self.room_cost.iter().chain(&self.presence_cost).enumerate() {
            finite(value, &|| format!("room or presence cost {index}"))?;
        }
        let node = |what: &dyn Fn() -> String, index: usize, limit: usize, kind| {
            if index < limit {
                Ok(())
            } else {
                Err(EnergyError::OutOfRange {
                    what: what(),
                    kind,
                    index,
                })
            }
        };
        let weight = |what: &dyn Fn() -> String, value: f64| {
            if !value.is_finite() {
                Err(EnergyError::NotFinite { what: what() })
            } else if value < 0.0 {
                Err(EnergyError::NegativeWeight { what: what() })
            } else {
                Ok(())
            }
        };
        for (index, &(a, b, w)) in self.edges.iter().enumerate() {
            node(
                &|| format!("edge {index}"),
                a as usize,
                self.node_count,
                "node",
            )?;
            node(
                &|| format!("edge {index}"),
                b as usize,
                self.node_count,
                "node",
            )?;
            weight(&|| format!("edge {index}"), w)?;
        }
        for (index, hypothesis) in self.hypotheses.iter().enumerate() {
            let what = || format!("hypothesis {index}");
            node(&what, hypothesis.class as usize, self.label_count, "label")?;
            finite(hypothesis.activation_cost, &what)?;
            weight(&what, hypothesis.agreement_weight)?;
            for &member in &hypothesis.members {
                node(&what, member as usize, self.fine_count, "segment")?;
            }
        }
        for (index, factor) in self.count_factors.iter().enumerate() {
            node(
                &|| format!("count factor {index}"),
                factor.class as usize,
                self.label_count,
                "label",
            )?;
            weight(&|| format!("count factor {index}"), factor.weight)?;
        }
        for (index, factor) in self.absent_factors.iter().enumerate() {
            node(
                &|| format!("absent factor {index}"),
                factor.class as usize,
                self.label_count,
                "label",
            )?;
            weight(&|| format!("absent factor {index}"), factor.weight)?;
        }
        for (index, factor) in self.tuple_factors.iter().enumerate() {
            weight(&|| format!("tuple factor {index}"), factor.weight)?;
            for tuple in &factor.tuples {
                if tuple.is_empty() || tuple.len() > 2 {
                    return Err(EnergyError::Build(format!(
                        "tuple factor {index} has a tuple of {} hypotheses (1 or 2 allowed)",
                        tuple.len()
                    )));
                }
                for &member in tuple {
                    node(
                        &|| format!("tuple factor {index}"),
                        member as usize,
                        self.hypotheses.len(),
                        "hypothesis",
                    )?;
                }
            }
        }
        for (index, factor) in self.unary_factors.iter().enumerate() {
            node(
                &|| format!("unary factor {index}"),
                factor.label as usize,
                self.label_count,
                "label",
            )?;
            weight(&|| format!("unary factor {index}"), factor.weight)?;
            for &segment in &factor.segments {
                node(
                    &|| format!("unary factor {index}"),
                    segment as usize,
                    self.fine_count,
                    "segment",
                )?;
            }
        }
        Ok(())
    }

    /// The unary table with every unary factor folded in (what the segment labelling sees).
    pub fn folded_unary(&self) -> Vec<f64> {
        let mut unary = self.unary.clone();
        for factor in &self.unary_factors {
            for &segment in &factor.segments {
                let row = segment as usize * self.label_count;
                for label in 0..self.label_count {
                    let is_label = label == factor.label as usize;
                    if is_label != factor.wanted {
                        unary[row + label] += factor.weight;
                    }
                }
            }
        }
        unary
    }

    /// Presence per class implied by a state: some fine segment or accepted hypothesis of the class.
    pub fn presence(&self, state: &JointState) -> Vec<bool> {
        let mut present = vec![false; self.label_count];
        for &label in state.labels.iter().take(self.fine_count) {
            if let Some(flag) = present.get_mut(label as usize) {
                *flag = true;
            }
        }
        for (hypothesis, &on) in self.hypotheses.iter().zip(&state.hypotheses_on) {
            if on {
                present[hypothesis.class as usize] = true;
            }
        }
        present
    }

    /// The number of accepted hypotheses per class.
    pub fn hypothesis_counts(&self, hypotheses_on: &[bool]) -> Vec<u32> {
        let mut counts = vec![0u32; self.label_count];
        for (hypothesis, &on) in self.hypotheses.iter().zip(hypotheses_on) {
            if on {
                counts[hypothesis.class as usize] += 1;
            }
        }
        counts
    }

    /// The cost a tuple factor adds for these hypothesis flags.
    pub fn tuple_factor_cost(factor: &TupleFactor, hypotheses_on: &[bool]) -> f64 {
        let all_on = |tuple: &Vec<u32>| {
            tuple
                .iter()
                .all(|&h| hypotheses_on.get(h as usize).copied().unwrap_or(false))
        };
        if factor.negated {
            factor.tuples.iter().filter(|tuple| all_on(tuple)).count() as f64 * factor.weight
        } else if factor.tuples.iter().any(all_on) {
            0.0
        } else {
            factor.weight
        }
    }

    /// The energy of a state; `None` when the state does not fit the energy's shape.
    pub fn evaluate(&self, state: &JointState) -> Option<f64> {
        if state.labels.len() != self.node_count
            || state.hypotheses_on.len() != self.hypotheses.len()
            || state.room as usize >= self.room_count
            || state
                .labels
                .iter()
                .any(|&label| label as usize >= self.label_count)
        {
            return None;
        }
        let unary = self.folded_unary();
        let mut total = 0.0;
        for (node, &label) in state.labels.iter().enumerate() {
            total += unary[node * self.label_count + label as usize];
        }
        for &(a, b, weight) in &self.edges {
            if state.labels[a as usize] != state.labels[b as usize] {
                total += weight;
            }
        }
        for (hypothesis, &on) in self.hypotheses.iter().zip(&state.hypotheses_on) {
            if on {
                let disagreeing = hypothesis
                    .members
                    .iter()
                    .filter(|&&s| state.labels[s as usize] != hypothesis.class)
                    .count();
                total +=
                    hypothesis.activation_cost + hypothesis.agreement_weight * disagreeing as f64;
            }
        }
        let room = state.room as usize;
        total += self.room_cost[room];
        let present = self.presence(state);
        for (class, &flag) in present.iter().enumerate() {
            if flag {
                total += self.presence_cost[room * self.label_count + class];
            }
        }
        let counts = self.hypothesis_counts(&state.hypotheses_on);
        for factor in &self.count_factors {
            total +=
                factor.weight * count_violation(factor.count, counts[factor.class as usize]) as f64;
        }
        for factor in &self.absent_factors {
            if present[factor.class as usize] {
                total += factor.weight;
            }
        }
        for factor in &self.tuple_factors {
            total += Self::tuple_factor_cost(factor, &state.hypotheses_on);
        }
        Some(total)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tiny() -> JointEnergy {
        JointEnergy {
            schema: ENERGY_SCHEMA,
            label_count: 2,
            fine_count: 2,
            node_count: 2,
            unary: vec![0.0, 1.0, 1.0, 0.0],
            edges: vec![(0, 1, 0.5)],
            hypotheses: vec![HypothesisTerm {
                class: 1,
                members: vec![0, 1],
                activation_cost: -1.0,
                agreement_weight: 2.0,
            }],
            room_count: 1,
            room_cost: vec![0.0],
            presence_cost: vec![0.1, 0.2],
            count_factors: vec![CountFactor {
                class: 1,
                count: Count::Exactly(0),
                weight: 4.0,
                source: None,
            }],
            absent_factors: vec![],
            tuple_factors: vec![],
            unary_factors: vec![],
        }
    }

    #[test]
    fn evaluate_adds_every_term_by_hand() {
        let energy = tiny();
        energy.validate().unwrap();
        let state = JointState {
            labels: vec![0, 1],
            hypotheses_on: vec![true],
            room: 0,
        };
        // unary 0 + 0, edge 0.5, hypothesis -1 + 2 * 1 disagreeing, presence 0.1 + 0.2, count |1 - 0| * 4.
        let expected = 0.5 - 1.0 + 2.0 + 0.3 + 4.0;
        assert!((energy.evaluate(&state).unwrap() - expected).abs() < 1e-12);
    }

    #[test]
    fn bad_shapes_and_values_are_typed_errors() {
        let mut energy = tiny();
        energy.unary.pop();
        assert!(matches!(
            energy.validate(),
            Err(EnergyError::Shape { table: "unary", .. })
        ));
        let mut energy = tiny();
        energy.unary[0] = f64::NAN;
        assert!(matches!(
            energy.validate(),
            Err(EnergyError::NotFinite { .. })
        ));
        let mut energy = tiny();
        energy.hypotheses[0].members.push(9);
        assert!(matches!(
            energy.validate(),
            Err(EnergyError::OutOfRange { .. })
        ));
        let mut energy = tiny();
        energy.fine_count = 0;
        assert_eq!(energy.validate(), Err(EnergyError::NoSegments));
    }
}
