//! The segment-labelling side of the joint solver: a reusable labeller for the Potts part of the energy, and
//! a valid lower bound of that part's minimum.
//!
//! Owns: `LabellerTables` (adjacency and each node's candidate labels, built once per solve), `Labeller`
//! (alpha-expansion with its flow graph and buffers kept across calls, and memory of which moves are known to
//! fail) and `candidate_table`.
//! Must not: know about hypotheses, rooms or constraints; it sees unaries and edges only.
//!
//! # Method
//!
//! Alpha-expansion (Boykov, Veksler, Zabih 2001) with label pruning: a node may only move to its few cheapest
//! labels or to labels the caller adds (hypotheses over it, factors asking for a label), common practice for
//! many-label Potts problems. Each move is a minimum cut on the Boykov-Kolmogorov graph of
//! `crate::maxflow`, reset (not reallocated) between moves, and re-scored exactly before it is kept.
//! A node whose unary for `alpha` exceeds its current unary by more than the weights of its edges to
//! neighbours that are, or may become, `alpha` never switches in that move (switching it back would lower
//! the energy of any cut), so it stays out of the graph: on the bench scene the nodes per cut fall from
//! about 74 to about 28.
//!
//! A labeller remembers the unaries and labels of its last call. A move for label `alpha` depends only on the
//! nodes that may take `alpha`, their unaries at their own label and at `alpha`, and the labels of their
//! neighbours; a move that failed stays failed until one of those changes. So each call diffs the new
//! unaries and start labels against the remembered ones and only re-tries the labels they touch (the
//! bookkeeping GCO keeps within one run, carried across calls). The result is the one a run over every label
//! would give; the joint solver's later dual iterations, whose multipliers move only a few unaries, then cost
//! a handful of moves each.

use crate::maxflow::FlowGraph;

/// The most sweeps over all labels in one call. Sweeps stop as soon as one changes nothing, which leaves a
/// local minimum of the allowed expansion moves (every label's move tried on the final labelling and
/// failed); the cap only guards against rounding making moves cycle. Each sweep after the first re-tries
/// only the labels the last changes touched, so converging costs little more than the first sweep.
const MAX_SWEEPS: u32 = 100;

/// Labels a node may switch to: its `CANDIDATE_LABELS` cheapest by unary (label pruning, common practice for
/// many-label Potts problems); the move is re-scored exactly, so pruning can only miss improvements.
const CANDIDATE_LABELS: usize = 4;

/// A move is kept when it lowers the energy by more than this.
const MOVE_TOLERANCE: f64 = 1e-7;

/// A node is left out of a move only when its unary rises by this much more than the smoothing it could
/// save, so rounding in either sum cannot leave out a node that the cut would switch.
const PRUNE_MARGIN: f64 = 1e-9;

/// Read-only tables of one solve, shared by every labeller of it.
pub(crate) struct LabellerTables {
    node_count: usize,
    label_count: usize,
    /// Compressed adjacency: node `n`'s neighbours are `neighbour[start[n]..start[n + 1]]`.
    adjacency_start: Vec<usize>,
    neighbour: Vec<u32>,
    weight: Vec<f64>,
    /// Candidate labels of each node, compressed the same way.
    labels_start: Vec<usize>,
    node_labels: Vec<u16>,
    /// Nodes that may take each label, compressed by label.
    nodes_start: Vec<usize>,
    label_nodes: Vec<u32>,
    /// `allowed[node * label_count + label]`: the label is among the node's candidates.
    allowed: Vec<bool>,
    /// The weight of all of each node's edges: no move can save a node more smoothing than this.
    total_weight: Vec<f64>,
}

impl LabellerTables {
    /// Tables for `node_count` nodes, the edges (self-loops and zero weights dropped) and
    /// `candidates[node * label_count + label]` (an empty slice allows every label).
    pub(crate) fn new(
        node_count: usize,
        label_count: usize,
        edges: &[(u32, u32, f64)],
        candidates: &[bool],
    ) -> LabellerTables {
        let mut degree = vec![0usize; node_count + 1];
        for &(a, b, weight) in edges {
            if a != b && weight != 0.0 {
                degree[a as usize] += 1;
                degree[b as usize] += 1;
            }
        }
        let mut adjacency_start = vec![0usize; node_count + 1];
        for node in 0..node_count {
            adjacency_start[node + 1] = adjacency_start[node] + degree[node];
        }
        let total = adjacency_start[node_count];
        let mut neighbour = vec![0u32; total];
        let mut weight = vec![0.0f64; total];
        let mut fill = adjacency_start.clone();
        for &(a, b, w) in edges {
            if a == b || w == 0.0 {
                continue;
            }
            for (from, to) in [(a, b), (b, a)] {
                let slot = &mut fill[from as usize];
                neighbour[*slot] = to;
                weight[*slot] = w;
                *slot += 1;
            }
        }
        let all = candidates.len() != node_count * label_count;
        let allowed_table: Vec<bool> = if all {
            vec![true; node_count * label_count]
        } else {
            candidates.to_vec()
        };
        let allowed = |node: usize, label: usize| allowed_table[node * label_count + label];
        let mut labels_start = Vec::with_capacity(node_count + 1);
        let mut node_labels = Vec::new();
        labels_start.push(0);
        for node in 0..node_count {
            for label in 0..label_count {
                if allowed(node, label) {
                    node_labels.push(label as u16);
                }
            }
            labels_start.push(node_labels.len());
        }
        let mut nodes_start = Vec::with_capacity(label_count + 1);
        let mut label_nodes = Vec::new();
        nodes_start.push(0);
        for label in 0..label_count {
            for node in 0..node_count {
                if allowed(node, label) {
                    label_nodes.push(node as u32);
                }
            }
            nodes_start.push(label_nodes.len());
        }
        let total_weight = (0..node_count)
            .map(|node| {
                weight[adjacency_start[node]..adjacency_start[node + 1]]
                    .iter()
                    .sum()
            })
            .collect();
        LabellerTables {
            total_weight,
            node_count,
            label_count,
            adjacency_start,
            neighbour,
            weight,
            labels_start,
            node_labels,
            nodes_start,
            label_nodes,
            allowed: allowed_table,
        }
    }

    /// Node `node`'s neighbours and edge weights (self-loops and zero weights left out).
    pub(crate) fn neighbours(&self, node: usize) -> impl Iterator<Item = (usize, f64)> + '_ {
        let range = self.adjacency_start[node]..self.adjacency_start[node + 1];
        self.neighbour[range.clone()]
            .iter()
            .zip(&self.weight[range])
            .map(|(&other, &weight)| (other as usize, weight))
    }

    fn candidates_of(&self, node: usize) -> &[u16] {
        &self.node_labels[self.labels_start[node]..self.labels_start[node + 1]]
    }

    fn nodes_of(&self, label: usize) -> &[u32] {
        &self.label_nodes[self.nodes_start[label]..self.nodes_start[label + 1]]
    }
}

/// Alpha-expansion over one solve's tables, with its buffers and its memory of the last call.
pub(crate) struct Labeller<'a> {
    tables: &'a LabellerTables,
    /// The unaries and labels the last call ended with (empty before the first call).
    unary: Vec<f64>,
    labels: Vec<u16>,
    /// Labels whose move may succeed: not tried since something it depends on changed.
    dirty: Vec<bool>,
    graph: FlowGraph,
    /// Graph node of each node during a move, `u32::MAX` when not in the move.
    graph_node: Vec<u32>,
    active: Vec<u32>,
    keep_cost: Vec<f64>,
    switch_cost: Vec<f64>,
    /// Leave out of each move the nodes that provably keep their label (`reach`); off only to check that
    /// pruning changes nothing.
    prune: bool,
    /// Moves solved by a cut, and the nodes they put in the graph (for measuring pruning).
    cuts: u64,
    cut_nodes: u64,
}

impl<'a> Labeller<'a> {
    pub(crate) fn new(tables: &'a LabellerTables) -> Labeller<'a> {
        Labeller {
            tables,
            unary: Vec::new(),
            labels: Vec::new(),
            dirty: vec![true; tables.label_count],
            graph: FlowGraph::new(),
            graph_node: vec![u32::MAX; tables.node_count],
            active: Vec::new(),
            keep_cost: Vec::new(),
            switch_cost: Vec::new(),
            prune: true,
            cuts: 0,
            cut_nodes: 0,
        }
    }

    /// A labeller that puts every candidate node in every move (the plain expansion), to check pruning.
    #[cfg(test)]
    fn without_pruning(tables: &'a LabellerTables) -> Labeller<'a> {
        Labeller {
            prune: false,
            ..Labeller::new(tables)
        }
    }

    /// The most that switching `node` to `alpha` can lower the smoothing in a move of `alpha`, whatever the
    /// other nodes do: the weights of its edges to neighbours that are, or may become, `alpha` (an edge to a
    /// neighbour that keeps another label is cut after the switch, so it cannot gain). A node whose unary
    /// rises by more than this never switches in a minimum cut: switching it back would lower the energy.
    fn reach(&self, node: usize, alpha: u16) -> f64 {
        let tables = self.tables;
        let column = alpha as usize;
        let mut reach = PRUNE_MARGIN;
        for (other, weight) in tables.neighbours(node) {
            if self.labels[other] == alpha || tables.allowed[other * tables.label_count + column] {
                reach += weight;
            }
        }
        reach
    }

    /// How many moves were solved by a cut so far, and how many nodes those cuts held in all.
    #[cfg(test)]
    pub(crate) fn cut_counts(&self) -> (u64, u64) {
        (self.cuts, self.cut_nodes)
    }

    /// Marks the labels whose move reads node `node`'s label: its own candidates and its neighbours'.
    fn label_changed(&mut self, node: usize) {
        let tables = self.tables;
        for &label in tables.candidates_of(node) {
            self.dirty[label as usize] = true;
        }
        for (other, _) in tables.neighbours(node) {
            for &label in tables.candidates_of(other) {
                self.dirty[label as usize] = true;
            }
        }
    }

    /// Takes new unaries and start labels (out-of-range labels become 0), marking the moves they touch.
    fn load(&mut self, unary: &[f64], start: &[u16]) {
        let tables = self.tables;
        let label_count = tables.label_count;
        let start_label = |node: usize| match start.get(node) {
            Some(&label) if (label as usize) < label_count => label,
            _ => 0,
        };
        if self.labels.len() != tables.node_count || self.unary.len() != unary.len() {
            self.unary.clear();
            self.unary.extend_from_slice(unary);
            self.labels = (0..tables.node_count).map(start_label).collect();
            self.dirty.fill(true);
            return;
        }
        for node in 0..tables.node_count {
            let row = node * label_count..(node + 1) * label_count;
            let label = start_label(node);
            let relabelled = label != self.labels[node];
            if relabelled {
                // Every move this node or a neighbour may join reads its label (and so its unaries).
                self.labels[node] = label;
                self.label_changed(node);
            }
            let (old, new) = (&self.unary[row.clone()], &unary[row.clone()]);
            if old == new {
                continue;
            }
            if !relabelled {
                if old[label as usize] != new[label as usize] {
                    // The cost of keeping the label moved: every move this node may join reads it.
                    for &candidate in tables.candidates_of(node) {
                        self.dirty[candidate as usize] = true;
                    }
                } else {
                    for &candidate in tables.candidates_of(node) {
                        if old[candidate as usize] != new[candidate as usize] {
                            self.dirty[candidate as usize] = true;
                        }
                    }
                }
            }
            self.unary[row].copy_from_slice(new);
        }
    }

    /// Labels the problem with these unaries (`node_count * label_count`, finite) from `start` by
    /// alpha-expansion sweeps; returns the labelling.
    pub(crate) fn label(&mut self, unary: &[f64], start: &[u16]) -> &[u16] {
        self.load(unary, start);
        for _ in 0..MAX_SWEEPS {
            let mut changed = false;
            for alpha in 0..self.tables.label_count {
                if self.dirty[alpha] {
                    self.dirty[alpha] = false;
                    changed |= self.expansion_move(alpha as u16);
                }
            }
            if !changed {
                break;
            }
        }
        &self.labels
    }

    /// One expansion move: every node that may take `alpha` keeps its label or switches to it; the others
    /// keep theirs. Solved exactly by a minimum cut; kept when it lowers the energy.
    fn expansion_move(&mut self, alpha: u16) -> bool {
        let tables = self.tables;
        let label_count = tables.label_count;
        let alpha_index = alpha as usize;
        self.active.clear();
        self.keep_cost.clear();
        self.switch_cost.clear();
        for &node in tables.nodes_of(alpha_index) {
            let label = self.labels[node as usize];
            if label == alpha {
                continue;
            }
            let row = node as usize * label_count;
            let (keep, switch) = (
                self.unary[row + label as usize],
                self.unary[row + alpha_index],
            );
            // `total_weight` first: it bounds `reach` and needs no walk over the neighbours.
            let rise = switch - keep;
            if self.prune
                && switch > keep
                && (rise > tables.total_weight[node as usize] + PRUNE_MARGIN
                    || rise > self.reach(node as usize, alpha))
            {
                // Switching costs more than the smoothing it could ever save: the node keeps its label.
                continue;
            }
            self.graph_node[node as usize] = self.active.len() as u32;
            self.active.push(node);
            self.keep_cost.push(keep);
            self.switch_cost.push(switch);
        }
        if self.active.is_empty() {
            return false;
        }
        self.cuts += 1;
        self.cut_nodes += self.active.len() as u64;
        self.graph.reset();
        // Node counts and capacities are finite and in range, so the graph calls cannot fail.
        let _ = self.graph.add_nodes(self.active.len());
        for position in 0..self.active.len() {
            let node = self.active[position] as usize;
            let label = self.labels[node];
            for (other, weight) in tables.neighbours(node) {
                let other_label = self.labels[other];
                let other_position = self.graph_node[other];
                if other_position == u32::MAX {
                    if label != other_label {
                        self.keep_cost[position] += weight;
                    }
                    if alpha != other_label {
                        self.switch_cost[position] += weight;
                    }
                } else if (other_position as usize) > position {
                    // Both ends in the move: added once, from the earlier end.
                    let other_position = other_position as usize;
                    if label == other_label {
                        let _ = self
                            .graph
                            .add_edge(position, other_position, weight, weight);
                    } else {
                        self.keep_cost[other_position] += weight;
                        let _ = self.graph.add_edge(position, other_position, weight, 0.0);
                    }
                }
            }
        }
        for position in 0..self.active.len() {
            let _ = self.graph.add_terminal_weights(
                position,
                self.switch_cost[position],
                self.keep_cost[position],
            );
        }
        self.graph.max_flow();
        // The exact change in energy of switching the sink side, over the touched unaries and edges.
        let switched = |labeller: &Labeller, node: usize| {
            let position = labeller.graph_node[node];
            position != u32::MAX && !labeller.graph.is_source_side(position as usize)
        };
        let mut delta = 0.0f64;
        let mut any = false;
        for position in 0..self.active.len() {
            let node = self.active[position] as usize;
            let label = self.labels[node];
            let node_switched = switched(self, node);
            if node_switched {
                any = true;
                let row = node * label_count;
                delta += self.unary[row + alpha_index] - self.unary[row + label as usize];
            }
            let new_label = if node_switched { alpha } else { label };
            for (other, weight) in tables.neighbours(node) {
                let other_position = self.graph_node[other];
                if other_position != u32::MAX && (other_position as usize) < position {
                    continue;
                }
                let other_label = self.labels[other];
                let other_new = if switched(self, other) {
                    alpha
                } else {
                    other_label
                };
                let before = (label != other_label) as i32 as f64;
                let after = (new_label != other_new) as i32 as f64;
                delta += (after - before) * weight;
            }
        }
        let improved = any && delta < -MOVE_TOLERANCE;
        if improved {
            for position in 0..self.active.len() {
                let node = self.active[position] as usize;
                if !self.graph.is_source_side(position) {
                    self.labels[node] = alpha;
                    self.label_changed(node);
                }
            }
            // An expansion of the new labelling is an expansion of the old one: `alpha` cannot gain again.
            self.dirty[alpha_index] = false;
        }
        for &node in &self.active {
            self.graph_node[node as usize] = u32::MAX;
        }
        improved
    }
}

/// `candidates[node * label_count + label]`: the label is among the node's cheapest few by `unary`, or in
/// `extra` (labels the caller knows can be pulled in, e.g. by hypotheses over the node).
pub(crate) fn candidate_table(
    unary: &[f64],
    node_count: usize,
    label_count: usize,
    extra: &[(usize, u16)],
) -> Vec<bool> {
    let mut table = vec![false; node_count * label_count];
    for node in 0..node_count {
        let row = &unary[node * label_count..(node + 1) * label_count];
        // The cheapest few in the total order (cost, then label), kept sorted by one insertion pass: labels
        // arrive in increasing order, so a later label ties with a kept one only by losing to it.
        let mut cheapest = [(f64::INFINITY, usize::MAX); CANDIDATE_LABELS];
        let mut kept = 0;
        for (label, &cost) in row.iter().enumerate() {
            if kept == CANDIDATE_LABELS && cost.total_cmp(&cheapest[kept - 1].0).is_ge() {
                continue;
            }
            let mut at = kept.min(CANDIDATE_LABELS - 1);
            while at > 0 && cost.total_cmp(&cheapest[at - 1].0).is_lt() {
                cheapest[at] = cheapest[at - 1];
                at -= 1;
            }
            cheapest[at] = (cost, label);
            kept = (kept + 1).min(CANDIDATE_LABELS);
        }
        for &(_, label) in &cheapest[..kept] {
            table[node * label_count + label] = true;
        }
    }
    for &(node, label) in extra {
        if node < node_count && (label as usize) < label_count {
            table[node * label_count + label as usize] = true;
        }
    }
    table
}

/// Grows a candidate table of the first `fine_count` nodes to all `node_count` nodes: a coarse node (index
/// `fine_count` and up) may take every label one of the fine nodes it is linked to may take.
pub(crate) fn widen_to_coarse<W: Copy>(
    table: &mut Vec<bool>,
    fine_count: usize,
    node_count: usize,
    label_count: usize,
    edges: &[(u32, u32, W)],
) {
    table.resize(node_count * label_count, false);
    for &(a, b, _) in edges {
        let (fine, coarse) = match (a as usize, b as usize) {
            (a, b) if a < fine_count && b >= fine_count => (a, b),
            (a, b) if b < fine_count && a >= fine_count => (b, a),
            _ => continue,
        };
        for label in 0..label_count {
            if table[fine * label_count + label] {
                table[coarse * label_count + label] = true;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::potts_bound::PottsBound;

    /// The one-pass selection keeps the same labels as sorting each row by (cost, label) and taking the
    /// first `CANDIDATE_LABELS`, ties and all.
    #[test]
    fn candidate_selection_matches_sorting() {
        let label_count = 9;
        let mut state = 12345u64;
        let mut next = || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((state >> 33) % 5) as f64
        };
        let node_count = 300;
        let unary: Vec<f64> = (0..node_count * label_count).map(|_| next()).collect();
        let table = candidate_table(&unary, node_count, label_count, &[(7, 8)]);
        for node in 0..node_count {
            let row = &unary[node * label_count..(node + 1) * label_count];
            let mut order: Vec<usize> = (0..label_count).collect();
            order.sort_by(|a, b| row[*a].total_cmp(&row[*b]).then(a.cmp(b)));
            let mut expected = vec![false; label_count];
            for &label in order.iter().take(CANDIDATE_LABELS) {
                expected[label] = true;
            }
            if node == 7 {
                expected[8] = true;
            }
            assert_eq!(
                &table[node * label_count..(node + 1) * label_count],
                &expected[..]
            );
        }
        // Fewer labels than the candidate count: every label is a candidate.
        assert!(candidate_table(&[1.0, 0.0], 1, 2, &[]).iter().all(|&c| c));
    }

    fn brute_force_minimum(unary: &[f64], label_count: usize, edges: &[(u32, u32, f64)]) -> f64 {
        let node_count = unary.len() / label_count;
        let total = label_count.pow(node_count as u32);
        let mut best = f64::INFINITY;
        for code in 0..total {
            let mut rest = code;
            let labels: Vec<usize> = (0..node_count)
                .map(|_| {
                    let label = rest % label_count;
                    rest /= label_count;
                    label
                })
                .collect();
            let mut energy: f64 = labels
                .iter()
                .enumerate()
                .map(|(node, &label)| unary[node * label_count + label])
                .sum();
            for &(a, b, weight) in edges {
                if labels[a as usize] != labels[b as usize] {
                    energy += weight;
                }
            }
            best = best.min(energy);
        }
        best
    }

    fn energy(unary: &[f64], label_count: usize, edges: &[(u32, u32, f64)], labels: &[u16]) -> f64 {
        let mut total: f64 = labels
            .iter()
            .enumerate()
            .map(|(node, &label)| unary[node * label_count + label as usize])
            .sum();
        for &(a, b, weight) in edges {
            if labels[a as usize] != labels[b as usize] {
                total += weight;
            }
        }
        total
    }

    const RING: [(u32, u32); 6] = [(0, 1), (1, 2), (2, 3), (3, 4), (0, 4), (1, 3)];

    /// `RING` with these weights.
    fn ring_edges(weights: &[f64]) -> Vec<(u32, u32, f64)> {
        RING.iter()
            .zip(weights)
            .map(|(&(a, b), &w)| (a, b, w))
            .collect()
    }

    /// Worked example: a chain a - b - c with weight 3, unaries a = (0, 4), b = (0, 0), c = (4, 0). The
    /// minimum is 3 (a and b take label 0, c label 1, one cut edge); the even split bounds it by 0 (each
    /// edge sees half of b and pays nothing). On a tree the local-polytope relaxation is exact (Wainwright
    /// and Jordan 2008), and diffusion reaches 3 here.
    #[test]
    fn diffusion_closes_the_even_split_gap_on_a_chain() {
        let unary = [0.0, 4.0, 0.0, 0.0, 4.0, 0.0];
        let edges = [(0, 1, 3.0), (1, 2, 3.0)];
        assert_eq!(brute_force_minimum(&unary, 2, &edges), 3.0);
        let mut bound = PottsBound::new(3, 2, &edges);
        assert_eq!(bound.bound(&unary), 0.0);
        let diffused = bound.diffused(&unary, 50, f64::INFINITY, f64::INFINITY);
        assert!((diffused - 3.0).abs() < 1e-6, "{diffused}");
        // Bad input: the wrong length or a non-finite unary falls back to the even split.
        assert_eq!(
            bound.diffused(&unary[..4], 50, f64::INFINITY, f64::INFINITY),
            f64::NEG_INFINITY
        );
        let mut broken = unary;
        broken[2] = f64::NAN;
        let even = bound.bound(&broken);
        assert_eq!(
            bound
                .diffused(&broken, 50, f64::INFINITY, f64::INFINITY)
                .to_bits(),
            even.to_bits()
        );
    }

    /// Random Potts unaries in [-2, 8) and edges (each pair with chance `edge_chance`, weight in [0, 3))
    /// from a linear congruential generator seeded with `seed` (Knuth's MMIX constants).
    fn random_potts(
        seed: u64,
        node_count: usize,
        label_count: usize,
        edge_chance: f64,
    ) -> (Vec<f64>, Vec<(u32, u32, f64)>) {
        let mut state = seed;
        let mut next = move || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        let unary: Vec<f64> = (0..node_count * label_count)
            .map(|_| 10.0 * next() - 2.0)
            .collect();
        let mut edges = Vec::new();
        for a in 0..node_count as u32 {
            for b in a + 1..node_count as u32 {
                if next() < edge_chance {
                    edges.push((a, b, 3.0 * next()));
                }
            }
        }
        (unary, edges)
    }

    proptest::proptest! {
        /// The bound's loops compiled for AVX give the same bits as their portable build, for the even
        /// split and for every number of diffusion sweeps, on label counts that fill a register or leave a
        /// remainder (on a processor without AVX both sides run the portable build).
        #[test]
        fn wide_registers_give_the_bound_the_same_bits(
            node_count in 2usize..24,
            label_count in 1usize..46,
            seed in 0u64..u64::MAX,
            sweeps in 0usize..12,
        ) {
            let (unary, edges) = random_potts(seed, node_count, label_count, 0.3);
            let mut wide = PottsBound::new(node_count, label_count, &edges);
            let mut portable = PottsBound::new(node_count, label_count, &edges).portable();
            proptest::prop_assert_eq!(wide.bound(&unary).to_bits(), portable.bound(&unary).to_bits());
            let target = f64::INFINITY;
            proptest::prop_assert_eq!(
                wide.diffused(&unary, sweeps, target, target).to_bits(),
                portable.diffused(&unary, sweeps, target, target).to_bits()
            );
        }

        /// A diffusion's record (the even split's bound and each sweep's) answers a later diffusion of the
        /// same unaries with another target and stopping value with the same bits, wherever the record covers
        /// the later one's stop (`replay_stop`); where it does not, the replay says so rather than guess.
        #[test]
        fn a_recorded_diffusion_replays_another_stop_with_the_same_bits(
            node_count in 2usize..16,
            label_count in 1usize..9,
            seed in 0u64..u64::MAX,
            sweeps in 0usize..10,
            first in (0.0f64..1.5, 0.0f64..1.5),
            second in (0.0f64..1.5, 0.0f64..1.5),
        ) {
            let (unary, edges) = random_potts(seed, node_count, label_count, 0.4);
            let mut bound = PottsBound::new(node_count, label_count, &edges);
            // Targets and stopping values around the even split's bound, so runs stop at various sweeps.
            let even = bound.bound(&unary);
            let scale = even.abs().max(1.0);
            let stops = |(target, enough): (f64, f64)| (even + target * scale, even + enough * scale);
            let (target, enough) = stops(first);
            let mut record = Vec::new();
            let recorded = bound.diffused_recorded(&unary, sweeps, target, enough, &mut record);
            proptest::prop_assert_eq!(
                recorded.to_bits(),
                bound.diffused(&unary, sweeps, target, enough).to_bits()
            );
            proptest::prop_assert_eq!(
                crate::potts_bound::replay_stop(&record, sweeps, target, enough).map(f64::to_bits),
                Some(recorded.to_bits())
            );
            let (target, enough) = stops(second);
            let fresh = bound.diffused(&unary, sweeps, target, enough);
            if let Some(replayed) = crate::potts_bound::replay_stop(&record, sweeps, target, enough) {
                proptest::prop_assert_eq!(replayed.to_bits(), fresh.to_bits());
            } else {
                proptest::prop_assert!(record.len() <= sweeps, "a full record must answer");
            }
        }

        #[test]
        fn lower_bound_never_exceeds_the_brute_force_minimum(
            unary in proptest::collection::vec(-3.0f64..3.0, 15),
            weights in proptest::collection::vec(0.0f64..2.0, 6),
        ) {
            let edges = ring_edges(&weights);
            let minimum = brute_force_minimum(&unary, 3, &edges);
            let mut bound = PottsBound::new(5, 3, &edges);
            let even = bound.bound(&unary);
            proptest::prop_assert!(even <= minimum + 1e-9);
            // Diffusion never lowers the bound and never passes the minimum.
            let diffused = bound.diffused(&unary, 20, f64::INFINITY, f64::INFINITY);
            proptest::prop_assert!(diffused >= even - 1e-9);
            proptest::prop_assert!(diffused <= minimum + 1e-9, "{} > {}", diffused, minimum);
        }

        /// The even split is its definition: per edge, the least of "both ends at one label" (each end's
        /// unary times `1 / degree`) and "apart" (the ends' own minima plus the weight); isolated nodes add
        /// their minimum. Label counts 1 to 10 cover the four-lane minimum's leftover lanes.
        #[test]
        fn even_split_is_its_definition(
            label_count in 1usize..11,
            unary in proptest::collection::vec(-3.0f64..3.0, 60),
            weights in proptest::collection::vec(0.0f64..2.0, 6),
        ) {
            // Nodes 0..5 on the ring, node 5 isolated.
            let edges = ring_edges(&weights);
            let unary = &unary[..6 * label_count];
            let row = |node: usize| &unary[node * label_count..(node + 1) * label_count];
            let lowest = |node: usize| row(node).iter().copied().fold(f64::INFINITY, f64::min);
            let mut degree = [0.0f64; 6];
            for &(a, b, _) in &edges {
                degree[a as usize] += 1.0;
                degree[b as usize] += 1.0;
            }
            let mut expected = lowest(5);
            for &(a, b, w) in &edges {
                let (a, b) = (a as usize, b as usize);
                let same = (0..label_count)
                    .map(|x| row(a)[x] / degree[a] + row(b)[x] / degree[b])
                    .fold(f64::INFINITY, f64::min);
                expected += same.min(lowest(a) / degree[a] + lowest(b) / degree[b] + w);
            }
            let mut bound = PottsBound::new(6, label_count, &edges);
            let even = bound.bound(unary);
            proptest::prop_assert!((even - expected).abs() < 1e-9, "{} vs {}", even, expected);
        }

        /// A labeller that remembers earlier calls gives the labelling a fresh one gives.
        #[test]
        fn remembering_labeller_matches_a_fresh_one(
            unaries in proptest::collection::vec(proptest::collection::vec(-3.0f64..3.0, 15), 1..5),
            weights in proptest::collection::vec(0.0f64..2.0, 6),
            start in proptest::collection::vec(0u16..3, 5),
        ) {
            let edges = ring_edges(&weights);
            let tables = LabellerTables::new(5, 3, &edges, &[]);
            let mut kept = Labeller::new(&tables);
            let mut from = start.clone();
            for unary in &unaries {
                let remembered = kept.label(unary, &from).to_vec();
                let fresh = Labeller::new(&tables).label(unary, &from).to_vec();
                proptest::prop_assert_eq!(&remembered, &fresh);
                // Never worse than where it started.
                proptest::prop_assert!(
                    energy(unary, 3, &edges, &remembered) <= energy(unary, 3, &edges, &from) + 1e-9
                );
                from = remembered;
            }
        }
    }

    /// A 3 x 3 grid with its diagonals in one direction: 16 edges.
    fn grid_edges(weights: &[f64]) -> Vec<(u32, u32, f64)> {
        let mut edges = Vec::new();
        for row in 0..3u32 {
            for column in 0..3u32 {
                let node = row * 3 + column;
                if column < 2 {
                    edges.push((node, node + 1));
                }
                if row < 2 {
                    edges.push((node, node + 3));
                }
                if row < 2 && column < 2 {
                    edges.push((node, node + 4));
                }
            }
        }
        edges
            .into_iter()
            .zip(weights)
            .map(|((a, b), &w)| (a, b, w))
            .collect()
    }

    proptest::proptest! {
        /// Leaving out nodes that provably keep their label gives the energy the plain expansion gives, with
        /// every label allowed and with candidate lists.
        #[test]
        fn pruned_expansion_matches_the_plain_one(
            unaries in proptest::collection::vec(proptest::collection::vec(-3.0f64..3.0, 45), 1..4),
            weights in proptest::collection::vec(0.0f64..1.5, 20),
            start in proptest::collection::vec(0u16..5, 9),
            allowed in proptest::collection::vec(proptest::bool::weighted(0.6), 45),
            restrict in proptest::bool::ANY,
        ) {
            let edges = grid_edges(&weights);
            let candidates = if restrict { allowed } else { Vec::new() };
            let tables = LabellerTables::new(9, 5, &edges, &candidates);
            let mut pruned = Labeller::new(&tables);
            let mut plain = Labeller::without_pruning(&tables);
            let mut from = start.clone();
            for unary in &unaries {
                let with = pruned.label(unary, &from).to_vec();
                let without = plain.label(unary, &from).to_vec();
                let (e_with, e_without) =
                    (energy(unary, 5, &edges, &with), energy(unary, 5, &edges, &without));
                proptest::prop_assert!((e_with - e_without).abs() < 1e-9,
                    "pruned {} vs plain {}", e_with, e_without);
                from = with;
            }
            // Pruning never puts more nodes in a cut.
            proptest::prop_assert!(pruned.cut_counts().1 <= plain.cut_counts().1);
        }
    }

    #[test]
    fn a_node_that_cannot_gain_stays_out_of_the_cut() {
        // Node 2's unary for label 1 is 5 above its own; its one edge weighs 1, so it never switches.
        let edges = [(0, 1, 1.0), (1, 2, 1.0)];
        let tables = LabellerTables::new(3, 2, &edges, &[]);
        let unary = [2.0, 0.0, 2.0, 0.0, 0.0, 5.0];
        let mut pruned = Labeller::new(&tables);
        let mut plain = Labeller::without_pruning(&tables);
        assert_eq!(pruned.label(&unary, &[0, 0, 0]), &[1, 1, 0]);
        assert_eq!(plain.label(&unary, &[0, 0, 0]), &[1, 1, 0]);
        assert!(pruned.cut_counts().1 < plain.cut_counts().1);
    }

    #[test]
    fn expansion_reaches_the_minimum() {
        let edges = [(0, 1, 1.0), (1, 2, 1.0)];
        let tables = LabellerTables::new(3, 2, &edges, &[]);
        let unary = [0.0, 2.0, 0.4, 0.0, 0.0, 2.0];
        let mut labeller = Labeller::new(&tables);
        assert_eq!(labeller.label(&unary, &[1, 1, 1]), &[0, 0, 0]);
        assert!((energy(&unary, 2, &edges, &[0, 0, 0]) - 0.4).abs() < 1e-12);
    }
}
