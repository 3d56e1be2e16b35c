//! A lower bound of the segment part of the joint energy (unaries and Potts smoothing), for the dual
//! function of `crate::solver::joint`: edge decomposition with an even split, optionally tightened by
//! min-sum diffusion.
//!
//! Owns: `PottsBound`.
//! Must not: label anything or know about hypotheses, rooms or constraints; it sees unaries and edges only.
//! Its tests live with the labeller's (`joint_labeller`), which share the brute-force minimum.

/// A lower bound of a Potts problem's minimum by edge decomposition: every node's unary is split over its
/// edges and each edge is minimised on its own (the sum of the parts' minima cannot exceed the minimum of
/// their sum). `bound` splits evenly; `diffused` improves the split by min-sum diffusion (Kovalevsky and Koval; reviewed
/// by Werner 2007, "A linear programming approach to max-sum problem: a review"): at each node, the
/// min-marginals of its edges are made equal by moving unary mass between them. The minimum of their
/// average is at least the average of their minima, so no step lowers the bound; the fixed points are
/// those of the local-polytope LP relaxation's dual.
pub(crate) struct PottsBound {
    label_count: usize,
    /// `1 / degree` of each node (0 for isolated nodes).
    share: Vec<f64>,
    isolated: Vec<usize>,
    edges: Vec<(usize, usize, f64)>,
    /// Per node, its edges as (edge index, 0 when the node is the edge's first end, else 1):
    /// `incident[incident_start[n]..incident_start[n + 1]]`.
    incident_start: Vec<usize>,
    incident: Vec<(usize, usize)>,
    /// The split's shifts: `shift[(2 e + side) L + x]` is added to the even share of the unary of edge
    /// `e`'s end `side` at label `x`; the shifts of one node's edges sum to 0 at every label. Allocated by
    /// the first diffusion only: most solves never diffuse, and zeroing it cost about a twentieth of a warm
    /// re-solve on the bench scene.
    shift: Vec<f64>,
    /// Scratch: each node's row minimum.
    row_minimum: Vec<f64>,
    /// Scratch: each node's unary row times its share.
    scaled: Vec<f64>,
    /// Scratch: min-marginals of one node's edges.
    marginals: Vec<f64>,
}

/// A diffusion stops once a sweep closes less than this share of what is left between its bound and the
/// caller's target (our own choice: on the demo scenes the sweeps after that gain a few thousandths of the
/// relative gap each).
const STOP_SHARE: f64 = 0.05;

impl PottsBound {
    pub(crate) fn new(
        node_count: usize,
        label_count: usize,
        edges: &[(u32, u32, f64)],
    ) -> PottsBound {
        let mut degree = vec![0u32; node_count];
        for &(a, b, _) in edges {
            degree[a as usize] += 1;
            degree[b as usize] += 1;
        }
        let mut incident_start = vec![0usize; node_count + 1];
        for node in 0..node_count {
            incident_start[node + 1] = incident_start[node] + degree[node] as usize;
        }
        let mut fill = incident_start.clone();
        let mut incident = vec![(0usize, 0usize); incident_start[node_count]];
        for (index, &(a, b, _)) in edges.iter().enumerate() {
            for (node, side) in [(a as usize, 0), (b as usize, 1)] {
                incident[fill[node]] = (index, side);
                fill[node] += 1;
            }
        }
        PottsBound {
            label_count,
            share: degree
                .iter()
                .map(|&d| if d == 0 { 0.0 } else { 1.0 / d as f64 })
                .collect(),
            isolated: (0..node_count).filter(|&node| degree[node] == 0).collect(),
            edges: edges
                .iter()
                .map(|&(a, b, w)| (a as usize, b as usize, w))
                .collect(),
            incident_start,
            incident,
            shift: Vec::new(),
            row_minimum: vec![0.0; node_count],
            scaled: Vec::new(),
            marginals: Vec::new(),
        }
    }

    /// The unary of edge `edge`'s end `side` (node `node`) at every label, written into `out`; returns its
    /// least value. Reads the even shares from `scaled` (filled by `even_split`).
    fn end_unary(&self, edge: usize, side: usize, node: usize, out: &mut [f64]) -> f64 {
        let label_count = self.label_count;
        let row = &self.scaled[node * label_count..(node + 1) * label_count];
        let shift =
            &self.shift[(2 * edge + side) * label_count..(2 * edge + side + 1) * label_count];
        for ((slot, &value), &moved) in out.iter_mut().zip(row).zip(shift) {
            *slot = value + moved;
        }
        lowest(out)
    }

    /// One diffusion step at `node`: equalise the min-marginals of its edges. Edge `e`'s min-marginal at
    /// label `x` is `share u(x) + shift_e(x) + t_e(x)` with `t_e(x) = min(v_e(x), min v_e + w_e)` over the
    /// other end's unary `v_e`; the node's own `share u(x)` is common to all its edges and cancels. Moving
    /// each marginal to their average sets `shift_e = mean(shift + t) - t_e`, and since a node's shifts sum
    /// to 0 at every label, `shift_e = mean(t) - t_e`: the node's old shifts are never read.
    fn diffuse(&mut self, node: usize, there: &mut [f64], average: &mut [f64]) {
        let label_count = self.label_count;
        let incident = self.incident_start[node]..self.incident_start[node + 1];
        let degree = incident.len();
        if degree < 2 {
            return;
        }
        let mut marginals = std::mem::take(&mut self.marginals);
        marginals.clear();
        marginals.resize(degree * label_count, 0.0);
        average.iter_mut().for_each(|v| *v = 0.0);
        for (slot, position) in incident.clone().enumerate() {
            let (edge, side) = self.incident[position];
            let (a, b, weight) = self.edges[edge];
            let other = if side == 0 { b } else { a };
            let cheapest = self.end_unary(edge, 1 - side, other, there) + weight;
            let row = &mut marginals[slot * label_count..(slot + 1) * label_count];
            for ((value, &here), sum) in row.iter_mut().zip(there.iter()).zip(average.iter_mut()) {
                *value = here.min(cheapest);
                *sum += *value;
            }
        }
        let inverse = 1.0 / degree as f64;
        average.iter_mut().for_each(|v| *v *= inverse);
        for (slot, position) in incident.enumerate() {
            let (edge, side) = self.incident[position];
            let row = &marginals[slot * label_count..(slot + 1) * label_count];
            let shift = &mut self.shift
                [(2 * edge + side) * label_count..(2 * edge + side + 1) * label_count];
            for ((moved, &mean), &value) in shift.iter_mut().zip(average.iter()).zip(row) {
                *moved = mean - value;
            }
        }
        self.marginals = marginals;
    }

    /// The bound of the even split (cheap: one pass over the edges), used inside the dual loop.
    pub(crate) fn bound(&mut self, unary: &[f64]) -> f64 {
        self.even_split(unary)
    }

    /// The bound after at most `sweeps` sweeps of diffusion, stopping early once a sweep raises it by less
    /// than `1e-9` relative, or by less than `STOP_SHARE` of what separates it from `target` (the value the
    /// caller knows no bound can pass, e.g. the energy of a state it holds less the rest of the dual). Never
    /// below `bound` for the same unaries.
    ///
    /// The split starts from the even split every time, so the bound depends on the inputs alone (a split
    /// kept from an earlier solve of the same scene started closer to the fixed point and stopped sooner,
    /// but made the reported bound depend on what was solved before).
    pub(crate) fn diffused(&mut self, unary: &[f64], sweeps: usize, target: f64) -> f64 {
        let label_count = self.label_count;
        let node_count = self.row_minimum.len();
        let even = self.even_split(unary);
        if unary.len() != node_count * label_count || unary.iter().any(|v| !v.is_finite()) {
            return even;
        }
        self.shift.clear();
        self.shift.resize(2 * self.edges.len() * label_count, 0.0);
        let mut here = vec![0.0; label_count];
        let mut there = vec![0.0; label_count];
        let mut average = vec![0.0; label_count];
        let mut best = even;
        for _ in 0..sweeps {
            for node in 0..node_count {
                self.diffuse(node, &mut there, &mut average);
            }
            let reached = self.split_bound(unary, &mut here, &mut there);
            let rise = reached - best;
            let rising = rise > 1e-9 * best.abs().max(1.0)
                && (!target.is_finite() || rise > STOP_SHARE * (target - best));
            best = best.max(reached);
            if !rising {
                break;
            }
        }
        best
    }

    /// The bound of the current split.
    fn split_bound(&self, unary: &[f64], here: &mut [f64], there: &mut [f64]) -> f64 {
        let label_count = self.label_count;
        let mut bound = 0.0;
        for &node in &self.isolated {
            bound += lowest(&unary[node * label_count..(node + 1) * label_count]);
        }
        for (edge, &(a, b, weight)) in self.edges.iter().enumerate() {
            let lowest_here = self.end_unary(edge, 0, a, here);
            let lowest_there = self.end_unary(edge, 1, b, there);
            bound += lowest_sum(here, there).min(lowest_here + lowest_there + weight);
        }
        bound
    }

    /// The even split's bound, for inputs the diffusion does not take.
    fn even_split(&mut self, unary: &[f64]) -> f64 {
        let label_count = self.label_count;
        let node_count = self.row_minimum.len();
        if unary.len() < node_count * label_count || label_count == 0 {
            return if self.edges.is_empty() && self.isolated.is_empty() {
                0.0
            } else {
                f64::NEG_INFINITY
            };
        }
        self.scaled.clear();
        self.scaled.reserve(node_count * label_count);
        for (node, minimum) in self.row_minimum.iter_mut().enumerate() {
            let row = &unary[node * label_count..(node + 1) * label_count];
            *minimum = row.iter().copied().fold(f64::INFINITY, f64::min);
            let share = self.share[node];
            self.scaled.extend(row.iter().map(|&value| value * share));
        }
        let mut bound = 0.0;
        for &node in &self.isolated {
            bound += self.row_minimum[node];
        }
        for &(a, b, weight) in &self.edges {
            let (share_a, share_b) = (self.share[a], self.share[b]);
            let row_a = &self.scaled[a * label_count..(a + 1) * label_count];
            let row_b = &self.scaled[b * label_count..(b + 1) * label_count];
            let same = lowest_sum(row_a, row_b);
            let apart = self.row_minimum[a] * share_a + self.row_minimum[b] * share_b + weight;
            bound += same.min(apart);
        }
        bound
    }
}

/// The least value of a finite slice (infinity when empty), in four running minima like `lowest_sum`.
fn lowest(values: &[f64]) -> f64 {
    let mut lanes = [f64::INFINITY; 4];
    let chunks = values.chunks_exact(4);
    let rest = chunks.remainder();
    for chunk in chunks {
        for lane in 0..4 {
            if chunk[lane] < lanes[lane] {
                lanes[lane] = chunk[lane];
            }
        }
    }
    let mut least = lanes[0].min(lanes[1]).min(lanes[2].min(lanes[3]));
    for &value in rest {
        least = least.min(value);
    }
    least
}

/// The least `a[x] + b[x]` over labels `x` (finite inputs): four running minima, so the additions do not
/// wait on one another; the minimum of a set does not depend on the order it is taken in.
fn lowest_sum(a: &[f64], b: &[f64]) -> f64 {
    let mut lanes = [f64::INFINITY; 4];
    let (a_chunks, b_chunks) = (a.chunks_exact(4), b.chunks_exact(4));
    let (a_rest, b_rest) = (a_chunks.remainder(), b_chunks.remainder());
    for (x, y) in a_chunks.zip(b_chunks) {
        for lane in 0..4 {
            let sum = x[lane] + y[lane];
            if sum < lanes[lane] {
                lanes[lane] = sum;
            }
        }
    }
    let mut lowest = lanes[0].min(lanes[1]).min(lanes[2].min(lanes[3]));
    for (x, y) in a_rest.iter().zip(b_rest) {
        lowest = lowest.min(x + y);
    }
    lowest
}
