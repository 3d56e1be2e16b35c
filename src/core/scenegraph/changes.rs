//! What changed between two solved states, why, and which constraints remain unmet.
//!
//! Owns: `Change` (segment relabelled, object added or removed, room changed) with its causes, the safety
//! rule that holds back removing or renaming a safety-critical class, and `Unmet` constraints with reasons.
//! Must not: solve; it compares states and reads factor costs.

use serde::{Deserialize, Serialize};

use crate::energy::{count_violation, JointEnergy, JointState, HARD_WEIGHT};
use crate::hypotheses::Hypothesis;
use crate::ids::{ClassId, HypothesisId, RoomId, SegmentId};
use crate::language::constraint::Span;
use crate::taxonomy::Taxonomy;

/// What changed.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "type", rename_all = "snake_case")]
pub enum ChangeKind {
    SegmentRelabelled {
        segment: SegmentId,
        from: ClassId,
        to: ClassId,
    },
    ObjectAdded {
        hypothesis: HypothesisId,
        class: ClassId,
    },
    ObjectRemoved {
        hypothesis: HypothesisId,
        class: ClassId,
    },
    RoomChanged {
        from: RoomId,
        to: RoomId,
    },
}

/// Whether a change is in the returned scene.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ChangeStatus {
    Applied,
    /// Held back until the operator confirms (it would remove or rename a safety-critical class).
    Pending,
}

/// A constraint that caused a change.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Cause {
    pub constraint: usize,
    pub span: Span,
    pub gloss: String,
}

/// One change with its causes.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Change {
    pub kind: ChangeKind,
    pub status: ChangeStatus,
    pub causes: Vec<Cause>,
    pub warning: Option<String>,
}

/// A constraint the solution does not satisfy.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Unmet {
    pub constraint: usize,
    pub span: Span,
    /// A hard constraint that is violated: it contradicts the others or the evidence.
    pub contradictory: bool,
    pub reason: String,
}

/// The span and gloss of each constraint, by index.
pub type ConstraintLabels = Vec<(Span, String)>;

fn cause(labels: &ConstraintLabels, constraint: usize) -> Option<Cause> {
    labels.get(constraint).map(|(span, gloss)| Cause {
        constraint,
        span: *span,
        gloss: gloss.clone(),
    })
}

/// Constraints whose factors mention a segment or a class.
fn causes_for_segment(
    energy: &JointEnergy,
    fallback: &[usize],
    segment: u32,
    classes: [u16; 2],
) -> Vec<usize> {
    let mut found: Vec<usize> = Vec::new();
    for factor in &energy.unary_factors {
        if factor.segments.contains(&segment) {
            found.extend(factor.source);
        }
    }
    for factor in &energy.count_factors {
        if classes.contains(&factor.class) {
            found.extend(factor.source);
        }
    }
    for factor in &energy.absent_factors {
        if classes.contains(&factor.class) {
            found.extend(factor.source);
        }
    }
    finish(found, fallback)
}

fn causes_for_hypothesis(
    energy: &JointEnergy,
    fallback: &[usize],
    hypothesis: usize,
) -> Vec<usize> {
    let class = energy.hypotheses.get(hypothesis).map(|h| h.class);
    let mut found: Vec<usize> = Vec::new();
    for factor in &energy.tuple_factors {
        if factor
            .tuples
            .iter()
            .flatten()
            .any(|&h| h as usize == hypothesis)
        {
            found.extend(factor.source);
        }
    }
    for factor in &energy.count_factors {
        if Some(factor.class) == class {
            found.extend(factor.source);
        }
    }
    for factor in &energy.absent_factors {
        if Some(factor.class) == class {
            found.extend(factor.source);
        }
    }
    finish(found, fallback)
}

/// Sorted, unique; when no factor mentions the item, the `fallback` constraints share the cause (the joint
/// re-solve moved it through smoothing or agreement): the caller passes the constraints of this turn that
/// are in force, so a constraint that was superseded or never grounded is never named as a cause.
fn finish(mut found: Vec<usize>, fallback: &[usize]) -> Vec<usize> {
    found.sort_unstable();
    found.dedup();
    if found.is_empty() {
        found = fallback.to_vec();
        found.sort_unstable();
        found.dedup();
    }
    found
}

/// The changes from `before` to `after`; hypotheses are matched by id, so the two lists may differ. An
/// object is reported added (removed) only when some member segment's label moved to (from) its class.
/// `fallback` names the constraints credited with a change no factor mentions (see `finish`).
#[allow(clippy::too_many_arguments)]
pub fn list_changes(
    energy: &JointEnergy,
    taxonomy: &Taxonomy,
    labels: &ConstraintLabels,
    fallback: &[usize],
    before: &JointState,
    before_hypotheses: &[Hypothesis],
    after: &JointState,
    after_hypotheses: &[Hypothesis],
) -> Vec<Change> {
    let mut changes = Vec::new();
    let make = |kind: ChangeKind, causes: Vec<usize>| {
        let safety_class = match &kind {
            ChangeKind::SegmentRelabelled { from, .. } => Some(*from),
            ChangeKind::ObjectRemoved { class, .. } => Some(*class),
            _ => None,
        };
        let warning = safety_class
            .filter(|&class| taxonomy.is_safety_critical(class))
            .map(|class| {
                format!(
                    "this would remove or rename a {}, which is safety-critical; confirm to apply it",
                    taxonomy.class_name(class)
                )
            });
        Change {
            status: if warning.is_some() {
                ChangeStatus::Pending
            } else {
                ChangeStatus::Applied
            },
            causes: causes
                .into_iter()
                .filter_map(|c| cause(labels, c))
                .collect(),
            warning,
            kind,
        }
    };
    for segment in 0..energy.fine_count {
        let (from, to) = match (before.labels.get(segment), after.labels.get(segment)) {
            (Some(&from), Some(&to)) => (from, to),
            _ => continue,
        };
        if from != to {
            let causes = causes_for_segment(energy, fallback, segment as u32, [from, to]);
            changes.push(make(
                ChangeKind::SegmentRelabelled {
                    segment: SegmentId(segment as u32),
                    from: ClassId(from),
                    to: ClassId(to),
                },
                causes,
            ));
        }
    }
    let accepted =
        |hypotheses: &[Hypothesis], state: &JointState| -> Vec<(HypothesisId, ClassId, usize)> {
            let mut list: Vec<_> = hypotheses
                .iter()
                .enumerate()
                .filter(|(index, _)| state.hypotheses_on.get(*index).copied().unwrap_or(false))
                .map(|(index, h)| (h.id, h.class, index))
                .collect();
            list.sort();
            list
        };
    let was = accepted(before_hypotheses, before);
    let now = accepted(after_hypotheses, after);
    // A hypothesis switched on or off shows only where some member's label moved to or from its class;
    // otherwise the picture is the same and the flip is the solver's bookkeeping, not a change to report.
    let moved = |hypothesis: Option<&Hypothesis>, class: ClassId, arriving: bool| {
        hypothesis.is_some_and(|h| {
            h.members.iter().any(|s| {
                let (from, to) = (
                    before.labels.get(s.index()).copied(),
                    after.labels.get(s.index()).copied(),
                );
                let (from, to) = if arriving { (from, to) } else { (to, from) };
                to == Some(class.0) && from != Some(class.0)
            })
        })
    };
    for &(id, class, before_index) in &was {
        if !now.iter().any(|&(other, _, _)| other == id)
            && moved(before_hypotheses.get(before_index), class, false)
        {
            let index = after_hypotheses.iter().position(|h| h.id == id);
            let causes = index
                .map(|i| causes_for_hypothesis(energy, fallback, i))
                .unwrap_or_else(|| finish(Vec::new(), fallback));
            changes.push(make(
                ChangeKind::ObjectRemoved {
                    hypothesis: id,
                    class,
                },
                causes,
            ));
        }
    }
    for &(id, class, index) in &now {
        if !was.iter().any(|&(other, _, _)| other == id)
            && moved(after_hypotheses.get(index), class, true)
        {
            let causes = causes_for_hypothesis(energy, fallback, index);
            changes.push(make(
                ChangeKind::ObjectAdded {
                    hypothesis: id,
                    class,
                },
                causes,
            ));
        }
    }
    if before.room != after.room {
        changes.push(make(
            ChangeKind::RoomChanged {
                from: RoomId(before.room),
                to: RoomId(after.room),
            },
            finish(Vec::new(), fallback),
        ));
    }
    changes
}

/// Every constraint whose factors still cost something in `state`, with a plain reason.
pub fn unmet_constraints(
    energy: &JointEnergy,
    taxonomy: &Taxonomy,
    labels: &ConstraintLabels,
    state: &JointState,
) -> Vec<Unmet> {
    let mut unmet: Vec<Unmet> = Vec::new();
    let mut push = |source: Option<usize>, weight: f64, reason: String| {
        if let Some(constraint) = source {
            if unmet.iter().any(|u| u.constraint == constraint) {
                return;
            }
            let span = labels.get(constraint).map(|l| l.0).unwrap_or_default();
            unmet.push(Unmet {
                constraint,
                span,
                contradictory: weight >= HARD_WEIGHT,
                reason,
            });
        }
    };
    let counts = energy.hypothesis_counts(&state.hypotheses_on);
    let presence = energy.presence(state);
    for factor in &energy.count_factors {
        let n = counts[factor.class as usize];
        if count_violation(factor.count, n) > 0 {
            push(
                factor.source,
                factor.weight,
                format!(
                    "sayso finds {n} {} it can stand behind, which does not fit the count",
                    taxonomy.class_name(ClassId(factor.class))
                ),
            );
        }
    }
    for factor in &energy.absent_factors {
        if presence[factor.class as usize] {
            push(
                factor.source,
                factor.weight,
                format!(
                    "the evidence for a {} is too strong to remove it",
                    taxonomy.class_name(ClassId(factor.class))
                ),
            );
        }
    }
    for factor in &energy.tuple_factors {
        if JointEnergy::tuple_factor_cost(factor, &state.hypotheses_on) > 0.0 {
            let reason = if factor.tuples.is_empty() {
                "nothing in the picture can be placed that way".to_string()
            } else if factor.negated {
                "the objects still stand that way in the picture".to_string()
            } else {
                "no object that fits could be accepted without contradicting the rest".to_string()
            };
            push(factor.source, factor.weight, reason);
        }
    }
    for factor in &energy.unary_factors {
        let wrong = factor
            .segments
            .iter()
            .filter(|&&s| {
                (state.labels.get(s as usize).copied() == Some(factor.label)) != factor.wanted
            })
            .count();
        if wrong > 0 {
            push(
                factor.source,
                factor.weight,
                format!(
                    "{wrong} of {} segments keep a different label because the picture disagrees",
                    factor.segments.len()
                ),
            );
        }
    }
    unmet.sort_by_key(|u| u.constraint);
    unmet
}
