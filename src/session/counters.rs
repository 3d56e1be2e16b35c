//! What the session counts as it works: turns and corrections committed, and the solver's relative gaps.
//!
//! Owns: `TurnCounters` (shared, lock-free counters and one small gap histogram) and the gap buckets.
//! Must not: render any exposition format or count requests; the service's metrics read these counters and
//! print them beside their own.

use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Mutex;

/// Upper bounds of the relative solver gap buckets.
pub const GAP_BUCKETS: [f64; 7] = [0.0, 0.001, 0.01, 0.02, 0.05, 0.1, 0.5];

/// The solver gaps seen so far: per bucket the count at or below its bound (cumulative), their sum and how
/// many there were.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct GapHistogram {
    pub cumulative: [u64; GAP_BUCKETS.len()],
    pub sum: f64,
    pub total: u64,
}

/// The session's counters. Shared by every turn.
#[derive(Default, Debug)]
pub struct TurnCounters {
    turns_logged: AtomicU64,
    corrections_logged: AtomicU64,
    solver_gap: Mutex<GapHistogram>,
}

impl TurnCounters {
    /// Records one committed turn, and whether it made a correction (a new scene version).
    pub fn record_turn(&self, made_correction: bool) {
        self.turns_logged.fetch_add(1, Ordering::Relaxed);
        if made_correction {
            self.corrections_logged.fetch_add(1, Ordering::Relaxed);
        }
    }

    /// Records a solver's relative gap.
    pub fn record_solver_gap(&self, gap: f64) {
        let mut histogram = self
            .solver_gap
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        for (count, bound) in histogram.cumulative.iter_mut().zip(GAP_BUCKETS) {
            if gap <= bound {
                *count += 1;
            }
        }
        histogram.sum += gap;
        histogram.total += 1;
    }

    /// Turns committed since start.
    pub fn turns_logged(&self) -> u64 {
        self.turns_logged.load(Ordering::Relaxed)
    }

    /// Corrections committed since start.
    pub fn corrections_logged(&self) -> u64 {
        self.corrections_logged.load(Ordering::Relaxed)
    }

    /// The solver gaps seen so far.
    pub fn solver_gaps(&self) -> GapHistogram {
        self.solver_gap
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .clone()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gaps_fall_into_cumulative_buckets_and_turns_are_counted() {
        let counters = TurnCounters::default();
        counters.record_solver_gap(0.0);
        counters.record_solver_gap(0.015);
        counters.record_turn(true);
        counters.record_turn(false);
        let gaps = counters.solver_gaps();
        assert_eq!(gaps.cumulative, [1, 1, 1, 2, 2, 2, 2]);
        assert_eq!(gaps.total, 2);
        assert!((gaps.sum - 0.015).abs() < 1e-12);
        assert_eq!(
            (counters.turns_logged(), counters.corrections_logged()),
            (2, 1)
        );
    }
}
