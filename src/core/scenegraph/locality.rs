//! A note never costs what was right: a turn moves only labels its notes concern.
//!
//! Owns: `Concern` (the classes and segments the constraints in force are about), `stray_factors` (hard
//! factors that put back every fine segment the solve moved between two labels no note concerns) and
//! `overreach_factors` (the same for what a count asking for fewer objects took from outside the class's span).
//! Must not: solve; `super::correct` adds the factors and solves again.
//!
//! # The rule
//!
//! A class is concerned when a constraint of the turn names it (presence, absence, count, either end of a
//! relation, a place's subject, a relabel's old or new class, an attribute's target), when a presence,
//! absence or count in force names it, or when a hypothesis a grounded constraint in force resolved to is of
//! that class; a segment is concerned when a grounded target of
//! the turn covers it. After the solve, a fine segment that moved from an unconcerned label to another
//! unconcerned label, outside every concerned segment, is a stray: "there are two pillows" has no business
//! turning a wall patch into floor. Strays are held at their label before the turn by hard factors and the turn
//! is solved once more. A room type stated in the turn concerns every class (the room changes every class's
//! prior), so it is left alone.
//!
//! A count that asks for fewer objects of a class than the labels show apart ("just one desk", "two
//! counters") joins parts; it never grows the class outward. A fine segment it moved into the class from a
//! label the turn's own notes do not name (nor an absence in force), whose centre lies outside the box
//! spanning every segment of the class before the turn, overreached (a counter strip lengthened over the stove
//! at its end; "only one counter" taking pieces of a towel an earlier note counted) and is held at its label
//! too, also in a turn that states a room type.

use crate::energy::{UnaryFactor, HARD_WEIGHT};
use crate::grounding::{GroundedConstraint, GroundedKind, Target};
use crate::hypotheses::{segment_neighbours, Hypothesis};
use crate::language::constraint::{Constraint, ConstraintKind};

/// What the constraints in force are about.
pub struct Concern {
    classes: Vec<bool>,
    segments: Vec<bool>,
    /// Classes the turn's own constraints name, or an absence in force names: what a count asking for fewer
    /// may take segments from (the rest are held by `overreach_factors`).
    named: Vec<bool>,
}

fn targets(kind: &GroundedKind) -> Vec<&Target> {
    match kind {
        GroundedKind::Relation {
            subject, landmarks, ..
        } => std::iter::once(subject).chain(landmarks).collect(),
        GroundedKind::Region { subject, .. } => vec![subject],
        GroundedKind::Relabel { target, .. } | GroundedKind::Attribute { target, .. } => {
            vec![target]
        }
        _ => Vec::new(),
    }
}

impl Concern {
    /// The concern of a turn (`constraints`, whose grounded forms are those of `in_force` numbered from
    /// `first`), or `None` when the turn states a room type.
    pub fn of_turn(
        constraints: &[Constraint],
        in_force: &[GroundedConstraint],
        first: usize,
        hypotheses: &[Hypothesis],
        class_count: usize,
        segment_count: usize,
    ) -> Option<Concern> {
        let mut classes = vec![false; class_count];
        fn mark(classes: &mut [bool], class: Option<crate::ids::ClassId>) {
            if let Some(flag) = class.and_then(|c| classes.get_mut(c.index())) {
                *flag = true;
            }
        }
        for constraint in constraints {
            match &constraint.kind {
                ConstraintKind::RoomType { .. } => return None,
                ConstraintKind::Place {
                    place: crate::language::constraint::Place::Room(_),
                    ..
                } => return None,
                ConstraintKind::Present { class }
                | ConstraintKind::Absent { class }
                | ConstraintKind::Count { class, .. } => mark(&mut classes, Some(*class)),
                ConstraintKind::Relation {
                    subject, landmarks, ..
                } => {
                    mark(&mut classes, subject.class);
                    for landmark in landmarks {
                        mark(&mut classes, landmark.class);
                    }
                }
                ConstraintKind::Place { subject, .. } => mark(&mut classes, subject.class),
                ConstraintKind::Relabel { target, from, to } => {
                    mark(&mut classes, target.class);
                    mark(&mut classes, *from);
                    mark(&mut classes, *to);
                }
                ConstraintKind::Attribute { target, .. } => mark(&mut classes, target.class),
            }
        }
        let mut named = classes.clone();
        let mut segments = vec![false; segment_count];
        for grounded in in_force {
            if let GroundedKind::Absent { class } = grounded.kind {
                if let Some(flag) = named.get_mut(class.index()) {
                    *flag = true;
                }
            }
            // Earlier notes' classes too: what they moved is theirs to keep moving.
            if let GroundedKind::Present { class }
            | GroundedKind::Absent { class }
            | GroundedKind::Count { class, .. } = grounded.kind
            {
                mark(&mut classes, Some(class));
            }
            for target in targets(&grounded.kind) {
                for &h in &target.hypotheses {
                    mark(
                        &mut classes,
                        hypotheses.get(h).map(|hypothesis| hypothesis.class),
                    );
                }
                if grounded.constraint >= first {
                    for segment in &target.segments {
                        if let Some(flag) = segments.get_mut(segment.index()) {
                            *flag = true;
                        }
                    }
                }
            }
        }
        Some(Concern {
            classes,
            segments,
            named,
        })
    }

    /// A concern with no class and no segment in it: every move is measured against the rules (a room-type
    /// turn's count in force, which `of_turn` leaves alone).
    pub fn nothing(class_count: usize, segment_count: usize) -> Concern {
        Concern {
            classes: vec![false; class_count],
            segments: vec![false; segment_count],
            named: vec![false; class_count],
        }
    }

    /// Whether a note of the turn concerns class `label` (an unknown label counts as concerned).
    pub(crate) fn class(&self, label: u16) -> bool {
        self.classes.get(label as usize).copied().unwrap_or(true)
    }

    /// Whether the turn's own constraints (or an absence in force) name class `label` (an unknown label counts
    /// as named).
    fn named(&self, label: u16) -> bool {
        self.named.get(label as usize).copied().unwrap_or(true)
    }
}

/// Hard factors holding every stray fine segment (see the module doc) at its label `before`, one factor per
/// label. Empty when nothing strayed.
pub fn stray_factors(concern: &Concern, before: &[u16], after: &[u16]) -> Vec<UnaryFactor> {
    let mut by_label: std::collections::BTreeMap<u16, Vec<u32>> = std::collections::BTreeMap::new();
    for (segment, (&was, &now)) in before
        .iter()
        .zip(after)
        .enumerate()
        .take(concern.segments.len())
    {
        if was != now && !concern.segments[segment] && !concern.class(was) && !concern.class(now) {
            by_label.entry(was).or_default().push(segment as u32);
        }
    }
    held_at(by_label)
}

/// One hard factor per label holding the segments listed under it at that label.
fn held_at(by_label: std::collections::BTreeMap<u16, Vec<u32>>) -> Vec<UnaryFactor> {
    by_label
        .into_iter()
        .map(|(label, segments)| UnaryFactor {
            segments,
            label,
            wanted: true,
            weight: HARD_WEIGHT,
            source: None,
        })
        .collect()
}

/// Hard factors holding at their label before the turn the fine segments that a count asking for fewer
/// objects of its class (`caps`: class and most objects; it asks for fewer when the class's segments before
/// the turn form more than that many connected parts) moved into the class from a label the turn does not
/// name, outside the box spanning the class's segments before the turn (see the module doc).
pub fn overreach_factors(
    concern: &Concern,
    scene: &crate::scene::Scene,
    caps: &[(u16, u32)],
    before: &[u16],
    after: &[u16],
) -> Vec<UnaryFactor> {
    let count = concern.segments.len().min(before.len()).min(after.len());
    let mut held: std::collections::BTreeMap<u16, Vec<u32>> = std::collections::BTreeMap::new();
    for &(class, most) in caps {
        let of_class: Vec<usize> = (0..count).filter(|&s| before[s] == class).collect();
        if parts(scene, before, class, &of_class) <= most as usize {
            continue;
        }
        let Some(span) = span_of(scene, &of_class) else {
            continue;
        };
        for segment in 0..count {
            let was = before[segment];
            if was == class
                || after[segment] != class
                || concern.segments[segment]
                || concern.named(was)
            {
                continue;
            }
            let Some(stats) = scene.stats.get(segment) else {
                continue;
            };
            let (x, y) = stats.centroid;
            let inside = x >= span.0 && x <= span.2 && y >= span.1 && y <= span.3;
            if !inside {
                held.entry(was).or_default().push(segment as u32);
            }
        }
    }
    held_at(held)
}

/// The connected parts (over the segment adjacency) that the segments `members`, all labelled `class` in
/// `labels`, form.
fn parts(scene: &crate::scene::Scene, labels: &[u16], class: u16, members: &[usize]) -> usize {
    let neighbours = segment_neighbours(scene, labels.len().min(scene.segment_count()));
    let mut seen = vec![false; neighbours.len()];
    let mut found = 0;
    for &start in members {
        if seen[start] {
            continue;
        }
        found += 1;
        seen[start] = true;
        let mut stack = vec![start];
        while let Some(at) = stack.pop() {
            for &next in &neighbours[at] {
                if !seen[next] && labels[next] == class {
                    seen[next] = true;
                    stack.push(next);
                }
            }
        }
    }
    found
}

/// The box (x0, y0, x1, y1, in pixels, inclusive) spanning the boxes of some segments.
fn span_of(scene: &crate::scene::Scene, members: &[usize]) -> Option<(f32, f32, f32, f32)> {
    let mut span: Option<(f32, f32, f32, f32)> = None;
    for &member in members {
        let Some(stats) = scene.stats.get(member) else {
            continue;
        };
        let b = &stats.bbox;
        let (x0, y0, x1, y1) = (b.x0 as f32, b.y0 as f32, b.x1 as f32, b.y1 as f32);
        span = Some(match span {
            None => (x0, y0, x1, y1),
            Some(s) => (s.0.min(x0), s.1.min(y0), s.2.max(x1), s.3.max(y1)),
        });
    }
    span
}

#[cfg(test)]
mod tests {
    use super::*;

    fn concern(classes: &[u16], segments: &[usize]) -> Concern {
        let mut c = Concern {
            classes: vec![false; 8],
            segments: vec![false; 6],
            named: vec![false; 8],
        };
        for &class in classes {
            c.classes[class as usize] = true;
            c.named[class as usize] = true;
        }
        for &segment in segments {
            c.segments[segment] = true;
        }
        c
    }

    #[test]
    fn only_moves_between_unconcerned_labels_outside_the_targets_are_strays() {
        // Class 3 is the note's; segment 5 is inside its target.
        let concern = concern(&[3], &[5]);
        let before = [0u16, 1, 3, 0, 1, 2];
        let after = [1u16, 3, 0, 0, 2, 1];
        // 0: 0->1 stray; 1: 1->3 concerned; 2: 3->0 concerned; 3: unmoved; 4: 1->2 stray; 5: in the target.
        let factors = stray_factors(&concern, &before, &after);
        let held: Vec<(u16, Vec<u32>)> = factors
            .iter()
            .map(|f| (f.label, f.segments.clone()))
            .collect();
        assert_eq!(held, vec![(0, vec![0]), (1, vec![4])]);
        assert!(factors.iter().all(|f| f.wanted && f.weight == HARD_WEIGHT));
    }

    #[test]
    fn a_room_type_concerns_everything() {
        use crate::ids::RoomId;
        use crate::language::constraint::Span;
        let room = Constraint {
            kind: ConstraintKind::RoomType { room: RoomId(2) },
            span: Span::new(0, 4),
            confidence: 1.0,
            gloss: "the room is a bedroom".to_string(),
        };
        assert!(Concern::of_turn(&[room], &[], 0, &[], 8, 6).is_none());
    }
}
