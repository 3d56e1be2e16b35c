//! A lower bound of the segment part of the joint energy (unaries and Potts smoothing), for the dual
//! function of `crate::joint`: edge decomposition with an even split, optionally tightened by
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
    /// The split: `end[(2 e + side) L + x]` is the part of the unary of edge `e`'s end `side` at label `x`
    /// that the edge carries (the even share plus the diffusion's shift); one node's parts sum to its unary.
    /// Allocated by the first diffusion only: most solves never diffuse.
    end: Vec<f64>,
    /// The least value of each part in `end`, kept with it so a node's neighbours need not rescan it.
    end_minimum: Vec<f64>,
    /// Each edge's minimum under the split as it stood after the last full sweep (or the even split); the
    /// bound is their sum (plus isolated nodes' minima).
    edge_value: Vec<f64>,
    /// Scratch: each node's row minimum.
    row_minimum: Vec<f64>,
    /// Scratch: each node's unary row times its share.
    scaled: Vec<f64>,
    /// Scratch: min-marginals of one node's edges.
    marginals: Vec<f64>,
    /// Run the sums in 256-bit registers where the processor has them (`wide_registers`); off only to
    /// check that both builds of the loops give the same bits.
    wide: bool,
}

/// Whether the processor runs AVX instructions: the bound's loops are then compiled for them as well. Each
/// label's sums and minima are the same operations in the same order either way (only more labels go in
/// one instruction), so the bound has the same bits.
fn wide_registers() -> bool {
    #[cfg(target_arch = "x86_64")]
    {
        std::arch::is_x86_feature_detected!("avx")
    }
    #[cfg(not(target_arch = "x86_64"))]
    {
        false
    }
}

/// Where a diffusion stops: the caller's target and stopping value (`PottsBound::diffused`), and the
/// bounds reached so far (the even split's, then each sweep's).
struct StopAt<'a> {
    target: f64,
    enough: f64,
    record: &'a mut Vec<f64>,
}

impl StopAt<'_> {
    /// Whether the bounds reached so far stop the diffusion.
    #[inline(always)]
    fn stops(&self) -> bool {
        replay_stop(self.record, usize::MAX, self.target, self.enough).is_some()
    }
}

/// The bound a diffusion of at most `sweeps` sweeps answers for `target` and `enough`, read from `record`
/// (the even split's bound, then each sweep's, as a run reached them): `PottsBound::diffused`'s stopping
/// rule, replayed on the same numbers, so the same bits. `None` when the record ends before that rule stops
/// and before `sweeps` sweeps (its run stopped sooner, for another target or stopping value).
pub(crate) fn replay_stop(record: &[f64], sweeps: usize, target: f64, enough: f64) -> Option<f64> {
    let (&even, reached) = record.split_first()?;
    let mut best = even;
    for &value in reached.iter().take(sweeps) {
        let rise = value - best;
        let rising = rise > 1e-9 * best.abs().max(1.0)
            && (!target.is_finite() || rise > STOP_SHARE * (target - best));
        best = best.max(value);
        if !rising || best >= enough {
            return Some(best);
        }
    }
    (reached.len() >= sweeps).then_some(best)
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
            end: Vec::new(),
            end_minimum: Vec::new(),
            edge_value: Vec::new(),
            row_minimum: vec![0.0; node_count],
            scaled: Vec::new(),
            marginals: Vec::new(),
            wide: wide_registers(),
        }
    }

    /// The same bound with the loops in their portable build only (to check the AVX build against).
    #[cfg(test)]
    pub(crate) fn portable(mut self) -> PottsBound {
        self.wide = false;
        self
    }

    /// Edge `edge`'s minimum under the current split.
    #[inline(always)]
    fn edge_minimum(&self, edge: usize) -> f64 {
        let label_count = self.label_count;
        let weight = self.edges[edge].2;
        let here = &self.end[2 * edge * label_count..(2 * edge + 1) * label_count];
        let there = &self.end[(2 * edge + 1) * label_count..(2 * edge + 2) * label_count];
        lowest_sum(here, there)
            .min(self.end_minimum[2 * edge] + self.end_minimum[2 * edge + 1] + weight)
    }

    /// One diffusion step at `node`: equalise the min-marginals of its edges. Edge `e`'s min-marginal at
    /// label `x` is `share u(x) + shift_e(x) + t_e(x)` with `t_e(x) = min(v_e(x), min v_e + w_e)` over the
    /// other end's part `v_e`; the node's own `share u(x)` is common to all its edges and cancels. Moving
    /// each marginal to their average sets `shift_e = mean(shift + t) - t_e`, and since a node's shifts sum
    /// to 0 at every label, `shift_e = mean(t) - t_e`: the node's old parts are never read. Keeps each
    /// written part's least value; the edges' minima are taken once per sweep (`diffused`), since an edge's
    /// minimum reads only its two parts and their least values, which the sweep's last write to it fixes.
    #[inline(always)]
    fn diffuse(&mut self, node: usize, average: &mut [f64]) {
        let label_count = self.label_count;
        let incident = self.incident_start[node]..self.incident_start[node + 1];
        let degree = incident.len();
        if degree < 2 {
            return;
        }
        let mut marginals = std::mem::take(&mut self.marginals);
        // Every row is written in full below, so the buffer only grows.
        if marginals.len() < degree * label_count {
            marginals.resize(degree * label_count, 0.0);
        }
        average.iter_mut().for_each(|v| *v = 0.0);
        for (slot, position) in incident.clone().enumerate() {
            let (edge, side) = self.incident[position];
            let weight = self.edges[edge].2;
            let other_end = 2 * edge + 1 - side;
            let cheapest = self.end_minimum[other_end] + weight;
            let there = &self.end[other_end * label_count..(other_end + 1) * label_count];
            let row = &mut marginals[slot * label_count..(slot + 1) * label_count];
            for ((value, &part), sum) in row.iter_mut().zip(there).zip(average.iter_mut()) {
                // A comparison, not `f64::min`: the parts are finite, and the loop vectorises.
                *value = if part < cheapest { part } else { cheapest };
                *sum += *value;
            }
        }
        let inverse = 1.0 / degree as f64;
        average.iter_mut().for_each(|v| *v *= inverse);
        let own = &self.scaled[node * label_count..(node + 1) * label_count];
        for (slot, position) in incident.enumerate() {
            let (edge, side) = self.incident[position];
            let row = &marginals[slot * label_count..(slot + 1) * label_count];
            let this_end = 2 * edge + side;
            let part = &mut self.end[this_end * label_count..(this_end + 1) * label_count];
            self.end_minimum[this_end] = write_part(part, own, average, row);
        }
        self.marginals = marginals;
    }

    /// The bound of the even split (cheap: one pass over the edges), used inside the dual loop.
    pub(crate) fn bound(&mut self, unary: &[f64]) -> f64 {
        #[cfg(target_arch = "x86_64")]
        if self.wide {
            // SAFETY: `wide` is set only when the processor runs AVX (`wide_registers`).
            return unsafe { self.even_split_avx(unary) };
        }
        self.even_split(unary)
    }

    /// `even_split` compiled for AVX.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx")]
    fn even_split_avx(&mut self, unary: &[f64]) -> f64 {
        self.even_split(unary)
    }

    /// `diffused_portable` compiled for AVX.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx")]
    fn diffused_avx(&mut self, unary: &[f64], sweeps: usize, stop: &mut StopAt) {
        self.diffused_portable(unary, sweeps, stop)
    }

    /// The bound after at most `sweeps` sweeps of diffusion, stopping early once a sweep raises it by less
    /// than `1e-9` relative, or by less than `STOP_SHARE` of what separates it from `target` (the value the
    /// caller knows no bound can pass, e.g. the energy of a state it holds less the rest of the dual), or
    /// once it reaches `enough` (what the caller counts as close; infinite to run the sweeps out). Never
    /// below `bound` for the same unaries. Each sweep's bound is the sum of the edges' minima, each taken once
    /// in the sweep, right after its later end is diffused (a diffusion step keeps the least value of each
    /// part it writes, so an edge's minimum reads its two parts once).
    ///
    /// The split starts from the even split every time, so the bound depends on the inputs alone (a split
    /// kept from an earlier solve of the same scene started closer to the fixed point and stopped sooner,
    /// but made the reported bound depend on what was solved before).
    pub(crate) fn diffused(
        &mut self,
        unary: &[f64],
        sweeps: usize,
        target: f64,
        enough: f64,
    ) -> f64 {
        let mut record = Vec::new();
        self.diffused_recorded(unary, sweeps, target, enough, &mut record)
    }

    /// `diffused`, leaving in `record` the even split's bound and then each sweep's, in order, as the
    /// sweeps reached them (`replay_stop` finds the same answer in it for any target and stopping value
    /// whose sweeps it covers).
    pub(crate) fn diffused_recorded(
        &mut self,
        unary: &[f64],
        sweeps: usize,
        target: f64,
        enough: f64,
        record: &mut Vec<f64>,
    ) -> f64 {
        record.clear();
        let mut stop = StopAt {
            target,
            enough,
            record: &mut *record,
        };
        #[cfg(target_arch = "x86_64")]
        let ran_wide = self.wide && {
            // SAFETY: `wide` is set only when the processor runs AVX (`wide_registers`).
            unsafe { self.diffused_avx(unary, sweeps, &mut stop) };
            true
        };
        #[cfg(not(target_arch = "x86_64"))]
        let ran_wide = false;
        if !ran_wide {
            self.diffused_portable(unary, sweeps, &mut stop);
        }
        replay_stop(record, sweeps, target, enough).unwrap_or(record[0])
    }

    /// `diffused`, in the build the caller's instructions allow (inlined into each): the even split's bound
    /// and each sweep's pushed on `record`, until `record` says stop.
    #[inline(always)]
    fn diffused_portable(&mut self, unary: &[f64], sweeps: usize, stop: &mut StopAt) {
        let label_count = self.label_count;
        let node_count = self.row_minimum.len();
        let even = self.even_split(unary);
        stop.record.push(even);
        if unary.len() != node_count * label_count || unary.iter().any(|v| !v.is_finite()) {
            return;
        }
        // The even split: each edge end carries its node's share.
        self.end.clear();
        self.end_minimum.clear();
        for &(a, b, _) in &self.edges {
            for node in [a, b] {
                self.end
                    .extend_from_slice(&self.scaled[node * label_count..(node + 1) * label_count]);
                self.end_minimum
                    .push(self.row_minimum[node] * self.share[node]);
            }
        }
        self.edge_value.clear();
        for edge in 0..self.edges.len() {
            let value = self.edge_minimum(edge);
            self.edge_value.push(value);
        }
        let isolated: f64 = self
            .isolated
            .iter()
            .map(|&node| self.row_minimum[node])
            .sum();
        let mut average = vec![0.0; label_count];
        for _ in 0..sweeps {
            for node in 0..node_count {
                self.diffuse(node, &mut average);
                // An edge's parts are final for the sweep once its later end is diffused (a node writes only
                // its own ends): its minimum is taken then, while both parts are still in cache.
                for position in self.incident_start[node]..self.incident_start[node + 1] {
                    let (edge, _) = self.incident[position];
                    let (a, b, _) = self.edges[edge];
                    if a.max(b) == node {
                        self.edge_value[edge] = self.edge_minimum(edge);
                    }
                }
            }
            let reached = isolated + self.edge_value.iter().sum::<f64>();
            stop.record.push(reached);
            if stop.stops() {
                break;
            }
        }
    }

    /// The even split's bound, for inputs the diffusion does not take.
    #[inline(always)]
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
            *minimum = lowest(row);
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

/// Writes `part[x] = own[x] + (mean[x] - marginal[x])` and returns the least value written, as `lowest`
/// would find it (four running minima; the minimum of a set does not depend on the order it is taken in).
#[inline(always)]
fn write_part(part: &mut [f64], own: &[f64], mean: &[f64], marginal: &[f64]) -> f64 {
    let mut lanes = [f64::INFINITY; 4];
    let mut parts = part.chunks_exact_mut(4);
    let (mut owns, mut means, mut marginals) = (
        own.chunks_exact(4),
        mean.chunks_exact(4),
        marginal.chunks_exact(4),
    );
    for (((p, o), m), t) in (&mut parts)
        .zip(&mut owns)
        .zip(&mut means)
        .zip(&mut marginals)
    {
        for lane in 0..4 {
            let value = o[lane] + (m[lane] - t[lane]);
            p[lane] = value;
            if value < lanes[lane] {
                lanes[lane] = value;
            }
        }
    }
    let mut least = lanes[0].min(lanes[1]).min(lanes[2].min(lanes[3]));
    for (((p, &o), &m), &t) in parts
        .into_remainder()
        .iter_mut()
        .zip(owns.remainder())
        .zip(means.remainder())
        .zip(marginals.remainder())
    {
        let value = o + (m - t);
        *p = value;
        least = least.min(value);
    }
    least
}

/// The least value of a finite slice (infinity when empty), in four running minima like `lowest_sum`.
#[inline(always)]
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
#[inline(always)]
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
