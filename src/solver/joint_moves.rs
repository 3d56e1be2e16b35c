//! Local moves of the joint solver on a full state: pull every member of a hypothesis to its class, or away
//! from it; drop a class an absent factor wants gone (its hypotheses and labels together); on small
//! problems, polish with node, edge, group and class-wide moves. A state is kept when it is better.
//!
//! Owns: `try_hypothesis_moves`, `try_class_removals` and `MoveScorer`, which scores a move from the nodes it changes (their
//! unaries and edges, the hypotheses over them, the classes they support) instead of the whole labelling;
//! `polish`.
//! Must not: keep a state it has not scored with `Context::complete` (the exact completion), nor know what
//! the classes mean.

use crate::joint::{keep_better, warm_descent, Candidate, Context, Workspace};
use crate::joint_coupled::{coupled_value_with, ClassOrders, CoupledInputs};

/// A move is completed exactly only when its screened energy is this far below the best one; rounding in
/// the screened sum is far smaller.
const SCREEN_MARGIN: f64 = 1e-9;

/// The parts of one labelling's energy that a move over a few nodes changes, with scratch for scoring moves.
struct MoveScorer {
    /// Hypotheses each fine node is a member of: `member_of[member_start[s]..member_start[s + 1]]`.
    member_start: Vec<usize>,
    member_of: Vec<u32>,
    /// The segment part (unaries and smoothing) of the base labelling.
    segment_energy: f64,
    /// Members of each hypothesis whose base label is not its class.
    disagreeing: Vec<i64>,
    /// Fine segments of each label in the base labelling.
    support: Vec<i64>,
    cost_on: Vec<f64>,
    cost_off: Vec<f64>,
    adjust: Vec<f64>,
    segment_support: Vec<bool>,
    scratch_disagreeing: Vec<i64>,
    scratch_support: Vec<i64>,
    /// The coupled step's minimum at the base labelling, when the step is exact.
    base_coupled: Option<f64>,
    /// `CoupledTables::support_release`: how far the coupled minimum can fall when a class loses, or gains,
    /// its segment support.
    release: Vec<(f64, f64)>,
    /// The coupled step's per-class orders at the base labelling (when the step is exact), and scratch
    /// orders for a move: a move re-sorts only the classes whose hypotheses' costs or support it changes.
    orders: ClassOrders,
    scratch_orders: ClassOrders,
    /// Scratch: whether a move changed each class's costs or support.
    class_changed: Vec<bool>,
}

impl MoveScorer {
    fn new(context: &Context, base: &[u16]) -> MoveScorer {
        let energy = context.energy;
        let mut count = vec![0usize; energy.fine_count + 1];
        for hypothesis in &energy.hypotheses {
            for &s in &hypothesis.members {
                count[s as usize + 1] += 1;
            }
        }
        for s in 0..energy.fine_count {
            count[s + 1] += count[s];
        }
        let member_start = count.clone();
        let mut member_of = vec![0u32; member_start[energy.fine_count]];
        for (h, hypothesis) in energy.hypotheses.iter().enumerate() {
            for &s in &hypothesis.members {
                member_of[count[s as usize]] = h as u32;
                count[s as usize] += 1;
            }
        }
        let mut scorer = MoveScorer {
            member_start,
            member_of,
            segment_energy: 0.0,
            disagreeing: vec![0; energy.hypotheses.len()],
            support: vec![0; energy.label_count],
            cost_on: vec![0.0; energy.hypotheses.len()],
            cost_off: vec![0.0; energy.hypotheses.len()],
            adjust: vec![0.0; energy.label_count],
            segment_support: vec![false; energy.label_count],
            scratch_disagreeing: Vec::new(),
            scratch_support: Vec::new(),
            base_coupled: None,
            release: context.coupled.support_release(energy),
            orders: ClassOrders::default(),
            scratch_orders: ClassOrders::default(),
            class_changed: vec![false; energy.label_count],
        };
        scorer.rebase(context, base);
        scorer
    }

    /// Takes a new base labelling.
    fn rebase(&mut self, context: &Context, base: &[u16]) {
        let energy = context.energy;
        self.segment_energy = context.segment_energy(base);
        for (count, hypothesis) in self.disagreeing.iter_mut().zip(&energy.hypotheses) {
            *count = hypothesis
                .members
                .iter()
                .filter(|&&s| base[s as usize] != hypothesis.class)
                .count() as i64;
        }
        self.support.fill(0);
        for &label in base.iter().take(energy.fine_count) {
            self.support[label as usize] += 1;
        }
        self.base_coupled = None;
        if context.coupled.exact() {
            coupled_costs(
                context,
                &self.disagreeing,
                &self.support,
                &mut self.cost_on,
                &mut self.segment_support,
            );
            self.orders = ClassOrders::new(&self.inputs(context));
            self.base_coupled = Some(coupled_value_with(&self.inputs(context), &self.orders));
        }
    }

    /// The coupled step's inputs at the costs and support last written by `coupled_costs`.
    fn inputs<'a>(&'a self, context: &'a Context) -> CoupledInputs<'a> {
        CoupledInputs {
            energy: context.energy,
            tables: &context.coupled,
            cost_on: &self.cost_on,
            cost_off: &self.cost_off,
            presence_adjust: &self.adjust,
            segment_support: &self.segment_support,
            relaxed_presence: false,
        }
    }

    /// The coupled minimum at the move's costs and support (`scratch_disagreeing`, `scratch_support`,
    /// written into `cost_on` and `segment_support`): the base's orders with the classes the move changed
    /// re-sorted, the same value `coupled_value` gives.
    fn moved_coupled_value(&mut self, context: &Context) -> f64 {
        let energy = context.energy;
        self.class_changed.fill(false);
        for (h, hypothesis) in energy.hypotheses.iter().enumerate() {
            if self.scratch_disagreeing[h] != self.disagreeing[h] {
                self.class_changed[hypothesis.class as usize] = true;
            }
        }
        for (class, (&before, &after)) in self.support.iter().zip(&self.scratch_support).enumerate()
        {
            if (before > 0) != (after > 0) {
                self.class_changed[class] = true;
            }
        }
        let mut orders = std::mem::take(&mut self.scratch_orders);
        orders.clone_from(&self.orders);
        let inputs = self.inputs(context);
        for (class, &changed) in self.class_changed.iter().enumerate() {
            if changed {
                orders.refresh(&inputs, class);
            }
        }
        let value = coupled_value_with(&inputs, &orders);
        self.scratch_orders = orders;
        value
    }

    /// The energy `Context::complete` would give `labels`, which differ from `base` only at `changed` (fine
    /// nodes, each once); `None` when the coupled step is not exact here. When a lower bound of that energy
    /// already reaches `enough`, returns the bound instead of solving the coupled step: the coupled minimum
    /// at the base, less every fall of a hypothesis's on-cost (the minimum is a minimum of sums linear in
    /// the on-costs) and the `release` of every class that loses its last segment or gains its first.
    fn score(
        &mut self,
        context: &Context,
        base: &[u16],
        labels: &[u16],
        changed: &[u32],
        enough: f64,
    ) -> Option<f64> {
        let energy = context.energy;
        let label_count = energy.label_count;
        self.scratch_disagreeing.clone_from(&self.disagreeing);
        self.scratch_support.clone_from(&self.support);
        let mut delta = 0.0;
        for &node in changed {
            let node = node as usize;
            let (old, new) = (base[node], labels[node]);
            if old == new {
                continue;
            }
            let row = node * label_count;
            delta += context.unary[row + new as usize] - context.unary[row + old as usize];
            for (other, weight) in context.tables.neighbours(node) {
                // An edge between two changed nodes is counted once, from its larger end.
                if labels[other] != base[other] && other < node {
                    continue;
                }
                let before = (old != base[other]) as i32;
                let after = (new != labels[other]) as i32;
                delta += (after - before) as f64 * weight;
            }
            self.scratch_support[old as usize] -= 1;
            self.scratch_support[new as usize] += 1;
            for &h in &self.member_of[self.member_start[node]..self.member_start[node + 1]] {
                let class = energy.hypotheses[h as usize].class;
                self.scratch_disagreeing[h as usize] +=
                    (new != class) as i64 - (old != class) as i64;
            }
        }
        if let Some(base_coupled) = self.base_coupled {
            let mut fall = 0.0;
            for (h, hypothesis) in energy.hypotheses.iter().enumerate() {
                let moved = self.scratch_disagreeing[h] - self.disagreeing[h];
                if moved < 0 {
                    fall += hypothesis.agreement_weight * moved as f64;
                }
            }
            for (class, (&before, &after)) in
                self.support.iter().zip(&self.scratch_support).enumerate()
            {
                match (before > 0, after > 0) {
                    (true, false) => fall -= self.release[class].0,
                    (false, true) => fall -= self.release[class].1,
                    _ => {}
                }
            }
            let bound = self.segment_energy + delta + base_coupled + fall;
            if bound >= enough {
                return Some(bound);
            }
        }
        coupled_costs(
            context,
            &self.scratch_disagreeing,
            &self.scratch_support,
            &mut self.cost_on,
            &mut self.segment_support,
        );
        if !context.coupled.exact() {
            return None;
        }
        Some(self.segment_energy + delta + self.moved_coupled_value(context))
    }
}

/// The coupled step's inputs for a labelling given by its disagreeing members per hypothesis and its fine
/// segments per label: each hypothesis's on-cost and each class's segment support.
fn coupled_costs(
    context: &Context,
    disagreeing: &[i64],
    support: &[i64],
    cost_on: &mut [f64],
    segment_support: &mut [bool],
) {
    for ((cost, hypothesis), &count) in cost_on
        .iter_mut()
        .zip(&context.energy.hypotheses)
        .zip(disagreeing)
    {
        *cost = hypothesis.activation_cost + hypothesis.agreement_weight * count as f64;
    }
    for (flag, &count) in segment_support.iter_mut().zip(support) {
        *flag = count > 0;
    }
}

/// Pulls every member of each hypothesis to its class in turn (and, first, each away from it to its best
/// other label), and keeps any state that is better. Each move is screened by `MoveScorer`; only moves that
/// screen better are completed exactly.
pub(crate) fn try_hypothesis_moves(context: &Context, best: &mut Candidate) {
    let label_count = context.energy.label_count;
    let mut scorer = MoveScorer::new(context, &best.state.labels);
    let mut labels = best.state.labels.clone();
    let mut attempt = |labels: &[u16], changed: &[u32], best: &mut Candidate| {
        if labels == best.state.labels.as_slice() {
            return;
        }
        let enough = best.energy - SCREEN_MARGIN;
        let screened = scorer.score(context, &best.state.labels, labels, changed, enough);
        if screened.is_some_and(|value| value >= enough) {
            return;
        }
        let before = best.energy;
        keep_better(best, context.complete(labels.to_vec()));
        if best.energy != before {
            scorer.rebase(context, &best.state.labels);
        }
    };
    for hypothesis in &context.energy.hypotheses {
        // Members away from the class: each to its best other label.
        labels.clone_from(&best.state.labels);
        for &s in &hypothesis.members {
            let row = &context.unary[s as usize * label_count..(s as usize + 1) * label_count];
            let mut pick = None;
            for (label, &value) in row.iter().enumerate() {
                if label != hypothesis.class as usize
                    && pick.is_none_or(|(_, best): (usize, f64)| value < best)
                {
                    pick = Some((label, value));
                }
            }
            if let Some((label, _)) = pick {
                labels[s as usize] = label as u16;
            }
        }
        attempt(&labels, &hypothesis.members, best);
        labels.clone_from(&best.state.labels);
        for &s in &hypothesis.members {
            labels[s as usize] = hypothesis.class;
        }
        attempt(&labels, &hypothesis.members, best);
    }
}

/// For every class an absent factor wants gone that the best state still shows: every hypothesis of the
/// class switched off at once, then the warm start's descent from there (`joint::warm_descent`: labelled
/// given the flags, the class charged its weight, completed, repeated until the flags settle). Labelling given
/// hypotheses and completing given labels each keep a supported class in place (its hypothesis pulls its
/// segments, its segments support its hypothesis), so neither step alone can drop it; this move does both.
pub(crate) fn try_class_removals(
    context: &Context,
    workspace: &mut Workspace,
    best: &mut Candidate,
) {
    let energy = context.energy;
    for factor in &energy.absent_factors {
        let class = factor.class;
        let fine = energy.fine_count.min(best.state.labels.len());
        let shown = best.state.labels[..fine].contains(&class);
        if !shown {
            continue;
        }
        let mut start = best.state.clone();
        for (hypothesis, on) in energy.hypotheses.iter().zip(start.hypotheses_on.iter_mut()) {
            if hypothesis.class == class {
                *on = false;
            }
        }
        warm_descent(context, workspace, &start, best, &mut Vec::new());
    }
}

/// Moves scored with the true energy, until none improves (small problems only): one node to a label, both
/// ends of an edge to a label, and a coarse region node with all its linked nodes to a label.
pub(crate) fn polish(context: &Context, best: &mut Candidate) {
    let energy = context.energy;
    let mut groups: Vec<Vec<usize>> = (0..energy.node_count).map(|node| vec![node]).collect();
    for &(a, b, _) in &energy.edges {
        groups.push(vec![a as usize, b as usize]);
    }
    let mut linked: Vec<Vec<usize>> = vec![Vec::new(); energy.node_count];
    for &(a, b, _) in &energy.edges {
        if (b as usize) >= energy.fine_count {
            linked[b as usize].push(a as usize);
        }
        if (a as usize) >= energy.fine_count {
            linked[a as usize].push(b as usize);
        }
    }
    for hypothesis in &energy.hypotheses {
        groups.push(hypothesis.members.iter().map(|&s| s as usize).collect());
    }
    for (node, members) in linked.into_iter().enumerate() {
        if node >= energy.fine_count && !members.is_empty() {
            let mut group = members;
            group.push(node);
            groups.push(group);
        }
    }
    for _ in 0..10 {
        let mut improved = false;
        // Class-wide moves: every node of class `from` to `to`, or each to its best other label.
        let label_count = energy.label_count;
        for from in 0..label_count as u16 {
            if !best.state.labels.contains(&from) {
                continue;
            }
            for to in 0..=label_count as u16 {
                if to == from {
                    continue;
                }
                let mut labels = best.state.labels.clone();
                for (node, label) in labels.iter_mut().enumerate() {
                    if *label != from {
                        continue;
                    }
                    *label = if (to as usize) < label_count {
                        to
                    } else {
                        let row = &context.unary[node * label_count..(node + 1) * label_count];
                        let mut pick = (if from == 0 { 1 } else { 0 }, f64::INFINITY);
                        for (candidate, &value) in row.iter().enumerate() {
                            if candidate != from as usize && value < pick.1 {
                                pick = (candidate, value);
                            }
                        }
                        pick.0 as u16
                    };
                }
                let candidate = context.complete(labels);
                if candidate.energy < best.energy - 1e-12 {
                    *best = candidate;
                    improved = true;
                }
            }
        }
        for group in &groups {
            for label in 0..energy.label_count as u16 {
                if group.iter().all(|&node| best.state.labels[node] == label) {
                    continue;
                }
                let mut labels = best.state.labels.clone();
                for &node in group {
                    labels[node] = label;
                }
                let candidate = context.complete(labels);
                if candidate.energy < best.energy - 1e-12 {
                    *best = candidate;
                    improved = true;
                }
            }
        }
        if !improved {
            break;
        }
    }
}
