//! Which earlier constraints a newer one replaces, so an operator can change their mind ("no, it's a
//! towel") without the old and the new statement both staying in force and contradicting each other.
//!
//! Owns: `retire_superseded`, the rule that a later constraint about the same thing wins: a relabel or an
//! attribute of the same kind over overlapping segments, a presence, absence or count of the same class, a
//! relation or region with the same subject and relation, the room type.
//! Must not: ground, solve or build energies; it only filters grounded constraints.

use crate::grounding::{GroundedConstraint, GroundedKind, Target};

fn overlaps(a: &Target, b: &Target) -> bool {
    // Both lists are ascending.
    let (mut i, mut j) = (0, 0);
    while i < a.segments.len() && j < b.segments.len() {
        match a.segments[i].cmp(&b.segments[j]) {
            std::cmp::Ordering::Less => i += 1,
            std::cmp::Ordering::Greater => j += 1,
            std::cmp::Ordering::Equal => return true,
        }
    }
    a.hypotheses.iter().any(|h| b.hypotheses.contains(h))
}

/// Whether `newer` says something about the same thing as `older`, so only `newer` should hold.
pub fn supersedes(newer: &GroundedKind, older: &GroundedKind) -> bool {
    use GroundedKind::*;
    let class_of = |kind: &GroundedKind| match kind {
        Present { class } | Absent { class } | Count { class, .. } => Some(*class),
        _ => None,
    };
    match (newer, older) {
        (Relabel { target: a, .. }, Relabel { target: b, .. }) => overlaps(a, b),
        (
            Attribute {
                target: a,
                attribute: x,
            },
            Attribute {
                target: b,
                attribute: y,
            },
        ) => std::mem::discriminant(x) == std::mem::discriminant(y) && overlaps(a, b),
        (
            Relation {
                subject: a,
                relation: r,
                landmarks: la,
                ..
            },
            Relation {
                subject: b,
                relation: s,
                landmarks: lb,
                ..
            },
        ) => r == s && a == b && la == lb,
        (Region { subject: a, .. }, Region { subject: b, .. }) => a == b,
        (Room { .. }, Room { .. }) => true,
        _ => match (class_of(newer), class_of(older)) {
            (Some(a), Some(b)) => a == b,
            _ => false,
        },
    }
}

/// Removes from `in_force` every constraint one of `newer` supersedes; returns the constraint indices
/// removed, ascending.
pub fn retire_superseded(
    in_force: &mut Vec<GroundedConstraint>,
    newer: &[GroundedConstraint],
) -> Vec<usize> {
    let mut retired = Vec::new();
    in_force.retain(|older| {
        let replaced = newer.iter().any(|new| supersedes(&new.kind, &older.kind));
        if replaced {
            retired.push(older.constraint);
        }
        !replaced
    });
    retired.sort_unstable();
    retired
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ids::{ClassId, RoomId, SegmentId};
    use crate::language::constraint::Span;

    fn grounded(constraint: usize, kind: GroundedKind) -> GroundedConstraint {
        GroundedConstraint {
            constraint,
            span: Span::default(),
            hard: true,
            gloss: String::new(),
            kind,
        }
    }

    fn target(segments: &[u32]) -> Target {
        Target {
            segments: segments.iter().map(|&s| SegmentId(s)).collect(),
            hypotheses: Vec::new(),
        }
    }

    fn relabel(segments: &[u32], to: u16) -> GroundedKind {
        GroundedKind::Relabel {
            target: target(segments),
            from: None,
            to: Some(ClassId(to)),
        }
    }

    #[test]
    fn a_later_relabel_of_the_same_pixels_replaces_the_earlier_one_only() {
        let mut in_force = vec![
            grounded(0, relabel(&[3, 4], 21)),
            grounded(1, relabel(&[9], 21)),
            grounded(2, GroundedKind::Present { class: ClassId(5) }),
        ];
        let retired = retire_superseded(&mut in_force, &[grounded(3, relabel(&[4, 7], 37))]);
        assert_eq!(retired, vec![0]);
        assert_eq!(
            in_force.iter().map(|c| c.constraint).collect::<Vec<_>>(),
            vec![1, 2]
        );
    }

    #[test]
    fn counts_presence_and_absence_of_one_class_replace_each_other_and_rooms_replace_rooms() {
        let absent = GroundedKind::Absent { class: ClassId(5) };
        let present_other = GroundedKind::Present { class: ClassId(6) };
        let present = GroundedKind::Present { class: ClassId(5) };
        assert!(supersedes(&present, &absent));
        assert!(!supersedes(&present_other, &absent));
        let kitchen = GroundedKind::Room { room: RoomId(1) };
        let hall = GroundedKind::Room { room: RoomId(2) };
        assert!(supersedes(&kitchen, &hall));
        assert!(!supersedes(&kitchen, &absent));
        assert!(!supersedes(&relabel(&[1], 2), &relabel(&[3], 2)));
    }
}
