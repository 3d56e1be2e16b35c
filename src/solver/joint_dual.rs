//! The dual side of the joint solver: the Lagrange multipliers' start (fresh, or fitted from a previous
//! solve), one evaluation of the dual function (segment part bounded and labelled, coupled part solved
//! exactly with relaxed presence), and the projected subgradient step that moves the multipliers.
//!
//! Owns: `fresh_multipliers`, `adapt_multipliers`, `DualValue`, `dual_value`, `diffused_dual_bound`
//! (with `BoundMemo`, what one diffusion found, reused when the next has the same inputs),
//! `even_split_dual_bound`, `subgradient_step`.
//! Must not: keep primal states or decide when the loop stops (that is `crate::joint`); it knows
//! nothing of language, files or what classes mean.

use crate::energy::JointEnergy;
use crate::joint::{Context, Multipliers, PresenceMultiplier, Workspace};
use crate::joint_coupled::{solve_coupled, CoupledInputs, CoupledResult, CoupledTables};
use crate::potts_bound::{replay_stop, PottsBound};

pub(crate) fn fresh_multipliers(energy: &JointEnergy) -> Multipliers {
    Multipliers {
        agreement: energy
            .hypotheses
            .iter()
            .map(|h| vec![0.0; h.members.len()])
            .collect(),
        presence: Vec::new(),
    }
}

/// Previous multipliers fitted to this energy: rows whose shape still matches are kept, others start at 0
/// (any multipliers give a valid bound, so this only affects speed).
pub(crate) fn adapt_multipliers(energy: &JointEnergy, previous: &Multipliers) -> Multipliers {
    let mut multipliers = fresh_multipliers(energy);
    for (row, old) in multipliers.agreement.iter_mut().zip(&previous.agreement) {
        if row.len() == old.len() && old.iter().all(|v| v.is_finite()) {
            row.copy_from_slice(old);
        }
    }
    let fits = |entry: &PresenceMultiplier| {
        (entry.segment as usize) < energy.fine_count
            && (entry.class as usize) < energy.label_count
            && entry.value.is_finite()
            && entry.value > 0.0
    };
    let ascending = previous
        .presence
        .windows(2)
        .all(|pair| (pair[0].segment, pair[0].class) < (pair[1].segment, pair[1].class));
    if ascending && previous.presence.iter().all(fits) {
        multipliers.presence.clone_from(&previous.presence);
    }
    multipliers
}

/// The dual function at some multipliers, with the minimisers of its two parts.
pub(crate) struct DualValue {
    pub(crate) bound: f64,
    pub(crate) segment_labels: Vec<u16>,
    pub(crate) coupled: CoupledResult,
    copies: Vec<Vec<bool>>,
}

/// The segment part's unaries (`folded`, the energy's unaries with unary factors folded in) shifted by the
/// multipliers, written into `unary`.
fn shift_unary(
    energy: &JointEnergy,
    folded: &[f64],
    unary: &mut Vec<f64>,
    multipliers: &Multipliers,
) {
    let label_count = energy.label_count;
    unary.clear();
    unary.extend_from_slice(folded);
    for (h, hypothesis) in energy.hypotheses.iter().enumerate() {
        for (m, &s) in hypothesis.members.iter().enumerate() {
            unary[s as usize * label_count + hypothesis.class as usize] -=
                multipliers.agreement[h][m];
        }
    }
    for entry in &multipliers.presence {
        unary[entry.segment as usize * label_count + entry.class as usize] += entry.value;
    }
}

/// The coupled part's exact minimum at the multipliers (presence relaxed).
fn coupled_minimum(
    energy: &JointEnergy,
    tables: &CoupledTables,
    multipliers: &Multipliers,
) -> CoupledResult {
    let label_count = energy.label_count;
    let mut cost_on = Vec::with_capacity(energy.hypotheses.len());
    let mut cost_off = Vec::with_capacity(energy.hypotheses.len());
    for (h, hypothesis) in energy.hypotheses.iter().enumerate() {
        let g = hypothesis.agreement_weight;
        let on: f64 = multipliers.agreement[h].iter().map(|&mu| mu.min(g)).sum();
        let off: f64 = multipliers.agreement[h].iter().map(|&mu| mu.min(0.0)).sum();
        cost_on.push(hypothesis.activation_cost + on);
        cost_off.push(off);
    }
    let mut adjust = vec![0.0; label_count];
    for entry in &multipliers.presence {
        adjust[entry.class as usize] += entry.value;
    }
    let no_support = vec![false; label_count];
    solve_coupled(&CoupledInputs {
        energy,
        tables,
        cost_on: &cost_on,
        cost_off: &cost_off,
        presence_adjust: &adjust,
        segment_support: &no_support,
        relaxed_presence: true,
    })
}

/// What the diffused bound reads: the energy, its folded unaries (`JointEnergy::folded_unary`) and the
/// coupled step's tables, with the bound's and the shifted unaries' scratch.
pub(crate) struct BoundInputs<'a> {
    pub(crate) energy: &'a JointEnergy,
    pub(crate) folded: &'a [f64],
    pub(crate) coupled: &'a CoupledTables,
    pub(crate) bound: &'a mut PottsBound,
    pub(crate) unary: &'a mut Vec<f64>,
}

/// The dual function at `multipliers` with the segment part bounded by `sweeps` sweeps of min-sum
/// diffusion (`PottsBound::diffused`) instead of the even split: a tighter valid bound, too costly for
/// every iteration of the loop, taken once at the best multipliers. The sweeps stop early once they close
/// little of the gap to `energy_found`, the energy of a state the caller holds, or once the relative gap
/// to it (as `crate::joint` reports it) is at most `close_gap`.
///
/// With `memo`, the sweeps are skipped when the memo recorded a run on the same graph and shifted unary
/// table (its key, `diffusion_key`, against this one's) that covers where this one stops; otherwise the
/// memo is left holding this run's record. Without it, nothing is hashed.
pub(crate) fn diffused_dual_bound(
    inputs: BoundInputs,
    multipliers: &Multipliers,
    sweeps: usize,
    energy_found: f64,
    close_gap: f64,
    memo: Option<&mut Option<BoundMemo>>,
) -> f64 {
    shift_unary(inputs.energy, inputs.folded, inputs.unary, multipliers);
    let coupled = coupled_minimum(inputs.energy, inputs.coupled, multipliers).value;
    let enough = energy_found - close_gap * energy_found.abs().max(1.0) - coupled;
    let target = energy_found - coupled;
    let Some(memo) = memo else {
        return inputs.bound.diffused(inputs.unary, sweeps, target, enough) + coupled;
    };
    let key = diffusion_key(inputs.energy, inputs.unary);
    let reused = memo
        .as_ref()
        .filter(|earlier| earlier.key == key)
        .and_then(|earlier| replay_stop(&earlier.record, sweeps, target, enough));
    let segment_bound = match reused {
        Some(bound) => bound,
        None => {
            let mut record = Vec::new();
            let bound =
                inputs
                    .bound
                    .diffused_recorded(inputs.unary, sweeps, target, enough, &mut record);
            *memo = Some(BoundMemo { key, record });
            bound
        }
    };
    segment_bound + coupled
}

/// What one final diffusion computed (`diffused_dual_bound`): the bound it reached before its first sweep
/// and after each, under a key of the inputs those depend on (the graph and the shifted unary table; not
/// the target and stopping value, which only decide where a run stops). A later turn of the same scene
/// whose segment part and multipliers are as its parent's (on the demo scenes, every turn so far: the
/// turns change the coupled part) replays the stopping rule on the recorded bounds (`replay_stop`) instead
/// of sweeping, and sweeps afresh only when its rule would run past the recorded sweeps. The diffusion is a
/// fixed sequence of floating-point operations on those inputs, so a replayed bound has the bits a new run
/// gives. A memo is a cache kept with the version it came from (in memory, and with the version's stored
/// state so a restart keeps it); its key also names the diffusion's arithmetic (`DIFFUSION_FORMAT`), so a
/// memo another build's diffusion recorded never matches.
#[derive(Clone, Debug, serde::Serialize, serde::Deserialize)]
pub struct BoundMemo {
    key: [u64; 2],
    record: Vec<f64>,
}

/// A memo is a cache: two values holding different memos are still equal.
impl PartialEq for BoundMemo {
    fn eq(&self, _other: &BoundMemo) -> bool {
        true
    }
}

/// The version of the diffusion's arithmetic (`PottsBound::diffused`) that memos are recorded by, part of
/// every memo's key with the package version: raise it with any change to the sweeps' operations or their
/// order, so a memo stored by a build before it is never replayed.
const DIFFUSION_FORMAT: u64 = 1;

/// A 128-bit fingerprint of what the diffusion's sweeps read (and `DIFFUSION_FORMAT`): the node and label counts, every edge (both
/// ends and the weight's bits) and the shifted unary table's bits. Two independent 64-bit multiply-xorshift
/// lanes over the same words, each finished by the SplitMix64 finaliser (Steele, Lea and Flood 2014, "Fast
/// splittable pseudorandom number generators"): not a cryptographic hash (the inputs are the solver's own
/// numbers, nobody chooses them to collide), and a false match needs both lanes to collide at once. About
/// 0.2 million words for a production scene, a few instructions each, against about 30 million
/// instructions of diffusion.
fn diffusion_key(energy: &JointEnergy, unary: &[f64]) -> [u64; 2] {
    const FIRST: u64 = 0x9e37_79b9_7f4a_7c15;
    const SECOND: u64 = 0xc2b2_ae3d_27d4_eb4f;
    let mut lanes = [FIRST, SECOND];
    let mut take = |word: u64| {
        lanes[0] = (lanes[0] ^ word).wrapping_mul(FIRST);
        lanes[0] ^= lanes[0] >> 29;
        lanes[1] = (lanes[1] ^ word.rotate_left(23)).wrapping_mul(SECOND);
        lanes[1] ^= lanes[1] >> 31;
    };
    take(DIFFUSION_FORMAT);
    for byte in env!("CARGO_PKG_VERSION").bytes() {
        take(u64::from(byte));
    }
    take(energy.node_count as u64);
    take(energy.label_count as u64);
    take(energy.edges.len() as u64);
    for &(a, b, weight) in &energy.edges {
        take(u64::from(a) << 32 | u64::from(b));
        take(weight.to_bits());
    }
    take(unary.len() as u64);
    for value in unary {
        take(value.to_bits());
    }
    lanes.map(|mut word| {
        word = (word ^ (word >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        word = (word ^ (word >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        word ^ (word >> 31)
    })
}

/// The dual function at `multipliers` with the segment part bounded by the even split alone
/// (`PottsBound::bound`): the valid bound one dual iteration reports, without labelling anything.
pub(crate) fn even_split_dual_bound(inputs: BoundInputs, multipliers: &Multipliers) -> f64 {
    shift_unary(inputs.energy, inputs.folded, inputs.unary, multipliers);
    let coupled = coupled_minimum(inputs.energy, inputs.coupled, multipliers).value;
    inputs.bound.bound(inputs.unary) + coupled
}

/// One evaluation of the dual function at the current multipliers.
pub(crate) fn dual_value(
    context: &Context,
    workspace: &mut Workspace,
    multipliers: &Multipliers,
    start: &[u16],
) -> DualValue {
    let energy = context.energy;
    shift_unary(energy, &context.unary, &mut workspace.unary, multipliers);
    let segment_bound = workspace.bound.bound(&workspace.unary);
    let segment_labels = workspace.dual.label(&workspace.unary, start).to_vec();
    let coupled = coupled_minimum(energy, &context.coupled, multipliers);
    let copies = energy
        .hypotheses
        .iter()
        .enumerate()
        .map(|(h, hypothesis)| {
            let threshold = if coupled.hypotheses_on[h] {
                hypothesis.agreement_weight
            } else {
                0.0
            };
            multipliers.agreement[h]
                .iter()
                .map(|&mu| mu < threshold)
                .collect()
        })
        .collect();
    DualValue {
        bound: segment_bound + coupled.value,
        segment_labels,
        coupled,
        copies,
    }
}

/// Moves the multipliers one projected subgradient step; returns `false` when the subgradient is zero.
pub(crate) fn subgradient_step(
    energy: &JointEnergy,
    multipliers: &mut Multipliers,
    dual: &DualValue,
    target: f64,
    scale: f64,
) -> bool {
    let labels = &dual.segment_labels;
    let mut norm = 0.0;
    for (h, hypothesis) in energy.hypotheses.iter().enumerate() {
        for (m, &s) in hypothesis.members.iter().enumerate() {
            let indicator = labels[s as usize] == hypothesis.class;
            let g = dual.copies[h][m] as i32 as f64 - indicator as i32 as f64;
            norm += g * g;
        }
    }
    // Presence: `g_sc = [x_s = c] - p_c`; a zero multiplier with `g_sc <= 0` stays at zero (projection), so
    // only the non-zero ones and the segments whose own class the coupled part left absent take part.
    let present = &dual.coupled.presence;
    let presence_g = |segment: u32, class: u16| {
        (labels[segment as usize] == class) as i32 as f64 - present[class as usize] as i32 as f64
    };
    let rising = |segment: &u32| !present[labels[*segment as usize] as usize];
    for entry in &multipliers.presence {
        let g = presence_g(entry.segment, entry.class);
        norm += g * g;
    }
    // Segments whose label is not yet marked present and have no multiplier yet: each starts one.
    let starting: Vec<(u32, u16)> = (0..energy.fine_count as u32)
        .filter(rising)
        .map(|segment| (segment, labels[segment as usize]))
        .filter(|key| {
            multipliers
                .presence
                .binary_search_by_key(key, |entry| (entry.segment, entry.class))
                .is_err()
        })
        .collect();
    norm += starting.len() as f64;
    if norm == 0.0 {
        return false;
    }
    let step = scale * (target - dual.bound).max(1e-6) / norm;
    for (h, hypothesis) in energy.hypotheses.iter().enumerate() {
        for (m, &s) in hypothesis.members.iter().enumerate() {
            let indicator = labels[s as usize] == hypothesis.class;
            let g = dual.copies[h][m] as i32 as f64 - indicator as i32 as f64;
            multipliers.agreement[h][m] += step * g;
        }
    }
    let added: Vec<PresenceMultiplier> = starting
        .into_iter()
        .map(|(segment, class)| PresenceMultiplier {
            segment,
            class,
            value: step,
        })
        .collect();
    for entry in &mut multipliers.presence {
        entry.value = (entry.value + step * presence_g(entry.segment, entry.class)).max(0.0);
    }
    multipliers.presence.retain(|entry| entry.value > 0.0);
    multipliers.presence.extend(added);
    multipliers
        .presence
        .sort_unstable_by_key(|entry| (entry.segment, entry.class));
    true
}
