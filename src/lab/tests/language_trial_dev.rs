//! The development half of the trial's operator phrasings (`src/lab/trial/phrasings.toml`, `[dev.*]` only) run
//! through the parser with many fillers. A filled sentence is read as the fact its section states, or
//! missed (no constraint it does not state: the operator is told what was not understood), never misread
//! (a constraint it does not state). No template may be misread for any filler; each section's share read
//! as stated must stay at its floor.
//!
//! Owns: the intended reading of each section, the fillers, the floors, and the per-section pass share
//! (printed, with the missed and misread templates).
//! Must not: read the held-out half; its templates are kept for the figures `sayso trial` reports.

use std::collections::BTreeMap;

use sayso_core::ids::{ClassId, RoomId};
use sayso_core::language::constraint::{
    Constraint, ConstraintKind, Count, Deixis, Focus, Relation,
};
use sayso_core::language::notation::notation_list;
use sayso_core::language::Grammar;
use sayso_lab::trial::operator::SECTIONS;
use sayso_lab::trial::phrasings::{fill, PhrasingSet, Phrasings, Slots};

/// Number words the count sections are filled with (`fill` spells them out).
const COUNTS: [u32; 6] = [2, 3, 4, 6, 11, 12];
/// Landmarks of the relation sections.
const LANDMARKS: [&str; 7] = [
    "table", "desk", "sofa", "counter", "shelf", "bed", "cabinet",
];
/// Wrong classes the robot shows in the relabel section.
const WRONG: [&str; 4] = ["wall", "floor", "chair", "cat"];

/// The fact a filled sentence states.
#[derive(Clone, Debug)]
enum Fact {
    Absent(ClassId),
    Present(ClassId),
    Count(ClassId, u32),
    Room(RoomId),
    Relabel {
        class: ClassId,
        wrong: ClassId,
    },
    Relation {
        class: ClassId,
        relation: Relation,
        landmark: ClassId,
    },
}

impl Fact {
    fn class(&self) -> Option<ClassId> {
        match *self {
            Fact::Absent(class) | Fact::Present(class) | Fact::Count(class, _) => Some(class),
            Fact::Relabel { class, .. } | Fact::Relation { class, .. } => Some(class),
            Fact::Room(_) => None,
        }
    }
}

/// Whether a constraint states the fact (a relation may be stated from the landmark's end).
fn says(fact: &Fact, kind: &ConstraintKind) -> bool {
    match (fact, kind) {
        (Fact::Absent(class), ConstraintKind::Absent { class: said }) => said == class,
        (Fact::Absent(class), ConstraintKind::Count { class: said, count }) => {
            said == class && *count == Count::Exactly(0)
        }
        (Fact::Present(class), ConstraintKind::Present { class: said }) => said == class,
        (Fact::Present(class), ConstraintKind::Count { class: said, count }) => {
            said == class && matches!(count, Count::AtLeast(1) | Count::Exactly(1))
        }
        (Fact::Count(class, n), ConstraintKind::Count { class: said, count }) => {
            said == class && *count == Count::Exactly(*n)
        }
        (Fact::Room(room), ConstraintKind::RoomType { room: said }) => said == room,
        (Fact::Relabel { class, wrong }, ConstraintKind::Relabel { target, from, to }) => {
            *to == Some(*class)
                && from.is_none_or(|from| from == *wrong)
                && target.deixis == Some(Deixis::Focus)
        }
        (
            Fact::Relation {
                class,
                relation,
                landmark,
            },
            ConstraintKind::Relation {
                subject,
                relation: said,
                negated: false,
                landmarks,
            },
        ) => {
            let [other] = landmarks.as_slice() else {
                return false;
            };
            let forward = subject.class == Some(*class) && other.class == Some(*landmark);
            let backward = subject.class == Some(*landmark) && other.class == Some(*class);
            // As `sayso trial` judges: "under" also reads as "below", and from the landmark's end as "on"
            // or "above".
            let (direct, converse): (&[Relation], &[Relation]) = match relation {
                Relation::On => (&[Relation::On], &[Relation::Under]),
                Relation::Under => (
                    &[Relation::Under, Relation::Below],
                    &[Relation::On, Relation::Above],
                ),
                Relation::LeftOf => (&[Relation::LeftOf], &[Relation::RightOf]),
                Relation::RightOf => (&[Relation::RightOf], &[Relation::LeftOf]),
                Relation::NextTo => (&[Relation::NextTo], &[Relation::NextTo]),
                _ => (&[], &[]),
            };
            forward && direct.contains(said) || backward && converse.contains(said)
        }
        _ => false,
    }
}

/// Whether a constraint that does not state the fact is still allowed beside it: a presence or count of
/// the fact's class that agrees with it, next to a relation or a relabel (or a presence beside a count), or
/// a denied relation of the fact's two things that the fact's relation excludes.
fn allowed_beside(fact: &Fact, kind: &ConstraintKind) -> bool {
    let agrees = |class: &ClassId, count: Option<Count>| {
        Some(*class) == fact.class()
            && match (fact, count) {
                (Fact::Absent(_) | Fact::Room(_), _) => false,
                (Fact::Count(_, n), Some(count)) => count.admits(*n),
                (_, Some(count)) => count.admits(1) || count == Count::AtLeast(2),
                (_, None) => true,
            }
    };
    match kind {
        // "The mug is on the cabinet, not under it": a denial the fact's own relation excludes, as `sayso
        // trial` judges.
        ConstraintKind::Relation {
            subject,
            relation: denied,
            negated: true,
            landmarks,
        } => match (fact, landmarks.as_slice()) {
            (
                Fact::Relation {
                    class,
                    relation,
                    landmark,
                },
                [other],
            ) => {
                subject.class == Some(*class)
                    && other.class == Some(*landmark)
                    && relation.excludes(*denied)
            }
            _ => false,
        },
        ConstraintKind::Present { class } => agrees(class, None),
        ConstraintKind::Count { class, count } => {
            !matches!(fact, Fact::Count(..)) && agrees(class, Some(*count))
        }
        _ => false,
    }
}

fn judge(fact: &Fact, constraints: &[Constraint]) -> bool {
    constraints.iter().any(|c| says(fact, &c.kind))
        && constraints
            .iter()
            .all(|c| says(fact, &c.kind) || allowed_beside(fact, &c.kind))
}

fn class_id(grammar: &Grammar, name: &str) -> ClassId {
    grammar
        .taxonomy()
        .class_by_name(name)
        .unwrap_or_else(|| panic!("class {name}"))
        .id
}

fn relation_of(section: &str) -> Option<Relation> {
    Some(match section {
        "relation_on" => Relation::On,
        "relation_next_to" => Relation::NextTo,
        "relation_left_of" => Relation::LeftOf,
        "relation_right_of" => Relation::RightOf,
        "relation_under" => Relation::Under,
        _ => return None,
    })
}

/// Every (slots, fact) a section's templates are filled with.
fn fillers(grammar: &Grammar, section: &str) -> Vec<(Slots, Fact)> {
    let taxonomy = grammar.taxonomy();
    let classes: Vec<(String, ClassId)> = taxonomy
        .classes()
        .iter()
        .map(|info| (info.name.clone(), info.id))
        .collect();
    let with_class = |class: &str| Slots {
        class: class.to_string(),
        ..Slots::default()
    };
    let mut out = Vec::new();
    match section {
        "absent" | "present" => {
            for (name, id) in &classes {
                let fact = if section == "absent" {
                    Fact::Absent(*id)
                } else {
                    Fact::Present(*id)
                };
                out.push((with_class(name), fact));
            }
        }
        "count_exact" | "count_one" => {
            let counts: &[u32] = if section == "count_one" {
                &[1]
            } else {
                &COUNTS
            };
            for (name, id) in &classes {
                for &count in counts {
                    let slots = Slots {
                        count,
                        ..with_class(name)
                    };
                    out.push((slots, Fact::Count(*id, count)));
                }
            }
        }
        "room" => {
            for room in taxonomy.rooms() {
                let slots = Slots {
                    room: room.name.clone(),
                    ..Slots::default()
                };
                out.push((slots, Fact::Room(room.id)));
            }
        }
        "relabel_point" => {
            for (name, id) in &classes {
                for wrong in WRONG.iter().filter(|wrong| **wrong != name.as_str()) {
                    let slots = Slots {
                        wrong: wrong.to_string(),
                        ..with_class(name)
                    };
                    let fact = Fact::Relabel {
                        class: *id,
                        wrong: class_id(grammar, wrong),
                    };
                    out.push((slots, fact));
                }
            }
        }
        _ => {
            let relation = relation_of(section).unwrap_or_else(|| panic!("section {section}"));
            for (name, id) in &classes {
                for landmark in LANDMARKS.iter().filter(|l| **l != name.as_str()) {
                    let slots = Slots {
                        landmark: landmark.to_string(),
                        ..with_class(name)
                    };
                    let fact = Fact::Relation {
                        class: *id,
                        relation,
                        landmark: class_id(grammar, landmark),
                    };
                    out.push((slots, fact));
                }
            }
        }
    }
    out
}

/// Per-section floors on the share of filled sentences read as stated, in percent: just under what the
/// parser reached when they were last set (2026-12-05, after a fifth batch of blind templates, every other
/// one of 24 per section into each half less those repeating one already in either half: absent 98.3,
/// count_exact 98.3, count_one 100, present 96.7, relabel_point 95.0, relation_left_of 98.2,
/// relation_next_to 100, relation_on 96.5, relation_right_of 96.5, relation_under 100, room 98.3;
/// 106,965 of 109,221 filled sentences, none misread). Before the parser changes that batch prompted, the
/// whole file read at 92.8%, 3 templates misread. Session 7 (parser changes prompted by the styles corpora):
/// 107,405 -> 107,927 (98.8%), none misread; present 100, relabel_point 98.3, relation_on 98.2.
const FLOORS: [(&str, f64); 11] = [
    ("absent", 98.0),
    ("count_exact", 98.0),
    ("count_one", 99.5),
    ("present", 99.5),
    ("relabel_point", 98.0),
    ("relation_left_of", 98.0),
    ("relation_next_to", 99.5),
    ("relation_on", 98.0),
    ("relation_right_of", 96.0),
    ("relation_under", 99.5),
    ("room", 98.0),
];

/// How a filled sentence was read.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Reading {
    /// The fact, and nothing the fact does not allow beside it.
    Stated,
    /// Not the fact, but nothing wrong either: the operator is asked again or told what was not understood.
    Missed,
    /// A constraint the sentence does not state: the worst outcome, it can change labels nobody asked to.
    Misread,
}

fn reading(fact: &Fact, constraints: &[Constraint]) -> Reading {
    if judge(fact, constraints) {
        Reading::Stated
    } else if constraints
        .iter()
        .all(|c| says(fact, &c.kind) || allowed_beside(fact, &c.kind))
    {
        Reading::Missed
    } else {
        Reading::Misread
    }
}

#[test]
fn dev_phrasings_read_as_the_fact_they_state() {
    let grammar = Grammar::embedded().expect("embedded grammar");
    let phrasings = Phrasings::embedded(PhrasingSet::Dev).expect("dev phrasings");
    let mut per_section: BTreeMap<&str, (usize, usize)> = BTreeMap::new();
    let mut missed: Vec<String> = Vec::new();
    let mut misread: Vec<String> = Vec::new();
    for section in SECTIONS {
        let focus = (section == "relabel_point").then_some(Focus::Pixel { x: 10, y: 10 });
        let fillers = fillers(&grammar, section);
        for template in phrasings.templates(section) {
            let mut failed_here = 0;
            let mut worst = Reading::Stated;
            let mut example = None;
            for (slots, fact) in &fillers {
                let sentence = fill(template, slots);
                let parse = grammar.parse(&sentence, focus).expect("parse");
                let entry = per_section.entry(section).or_default();
                entry.1 += 1;
                let read = reading(fact, &parse.constraints);
                if read == Reading::Stated {
                    entry.0 += 1;
                    continue;
                }
                failed_here += 1;
                let first_misread = read == Reading::Misread && worst != Reading::Misread;
                if first_misread || example.is_none() || (slots.class == "mug" && read == worst) {
                    example = Some(format!(
                        "{sentence:?} -> {:?}",
                        notation_list(&parse.constraints, grammar.taxonomy())
                    ));
                }
                if read == Reading::Misread {
                    worst = Reading::Misread;
                } else if worst == Reading::Stated {
                    worst = Reading::Missed;
                }
            }
            if let Some(example) = example {
                let line = format!(
                    "  [{section}] {failed_here}/{} {template:?}\n      e.g. {example}",
                    fillers.len()
                );
                if worst == Reading::Misread {
                    misread.push(line);
                } else {
                    missed.push(line);
                }
            }
        }
    }
    let mut total = (0, 0);
    for (section, (passed, count)) in &per_section {
        total.0 += passed;
        total.1 += count;
        println!(
            "  {section:<18} {passed:>5}/{count:<5} {:>5.1}%",
            100.0 * *passed as f64 / *count as f64
        );
    }
    println!(
        "dev phrasings: {}/{} read as stated ({:.1}%)",
        total.0,
        total.1,
        100.0 * total.0 as f64 / total.1 as f64
    );
    if !missed.is_empty() {
        println!(
            "templates not read (nothing wrong stated; failed fillers, an example):\n{}",
            missed.join("\n")
        );
    }
    if !misread.is_empty() {
        println!(
            "MISREAD templates (a wrong constraint; failed fillers, an example):\n{}",
            misread.join("\n")
        );
    }
    assert!(
        misread.is_empty(),
        "{} templates read as a constraint they do not state",
        misread.len()
    );
    for (section, floor) in FLOORS {
        let (passed, count) = per_section.get(section).copied().unwrap_or_default();
        assert!(count > 0, "no filled sentence in section {section}");
        let share = 100.0 * passed as f64 / count as f64;
        assert!(
            share >= floor,
            "section {section}: {passed}/{count} ({share:.1}%) is below the floor of {floor}%"
        );
    }
}
