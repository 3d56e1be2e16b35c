//! A conversation: successive parses, with deictic binding and contradiction and redundancy checks.
//!
//! Owns: the most recent referent (for "it", "that" without focus), the counts and relations stated so far,
//! and `Conflict` reports carrying both spans (earlier and later, with their turn numbers). Counts are
//! compared as intervals; relations per image axis with Allen's interval algebra (`allen`).
//! Must not: merge or drop constraints; it reports and the caller decides.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::ids::ClassId;
use crate::taxonomy::Taxonomy;

use super::allen::{axis_sets, CompositionTable, Network, RelationSet, AXES};
use super::constraint::{Constraint, ConstraintKind, Count, Deixis, Referent, Relation, Span};
use super::error::GrammarError;
use super::notation::constraint_notation;
use super::parse::Parse;

/// Where a constraint was stated.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Location {
    /// 0-based turn number.
    pub turn: usize,
    pub span: Span,
}

/// Whether a new statement clashes with or repeats earlier ones.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ConflictKind {
    Contradiction,
    Redundancy,
}

/// A contradiction or redundancy, with every span involved.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Conflict {
    pub kind: ConflictKind,
    /// The earlier statements involved (at least one).
    pub earlier: Vec<Location>,
    /// The statement that clashed or added nothing.
    pub later: Location,
    pub message: String,
}

/// A deictic word bound to what it refers to.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Binding {
    pub span: Span,
    /// The referent it was bound to; `None` when nothing earlier was named.
    pub referent: Option<Referent>,
}

/// What adding one parse to the conversation found.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Turn {
    pub turn: usize,
    pub bindings: Vec<Binding>,
    pub conflicts: Vec<Conflict>,
}

/// A count interval stated or implied for a class.
#[derive(Clone, Debug)]
struct CountFact {
    class: ClassId,
    low: u32,
    high: Option<u32>,
    /// Stated as a count, presence or absence (not implied by a relation).
    explicit: bool,
    at: Location,
    text: String,
}

/// A relation between two classes.
#[derive(Clone, Debug)]
struct RelationFact {
    subject: ClassId,
    landmark: ClassId,
    relation: Relation,
    negated: bool,
    at: Location,
    text: String,
}

/// The state of one conversation.
#[derive(Clone, Debug)]
pub struct Conversation {
    taxonomy: Taxonomy,
    table: CompositionTable,
    turn: usize,
    last_referent: Option<Referent>,
    counts: Vec<CountFact>,
    relations: Vec<RelationFact>,
}

fn count_interval(count: Count) -> (u32, Option<u32>) {
    match count {
        Count::Exactly(n) => (n, Some(n)),
        Count::AtLeast(n) => (n, None),
        Count::AtMost(n) => (0, Some(n)),
    }
}

fn describe(low: u32, high: Option<u32>) -> String {
    match high {
        Some(high) if high == low => format!("exactly {low}"),
        Some(high) => format!("between {low} and {high}"),
        None => format!("at least {low}"),
    }
}

impl Conversation {
    /// A new conversation using the embedded interval table.
    pub fn new(taxonomy: Taxonomy) -> Result<Conversation, GrammarError> {
        Ok(Conversation {
            taxonomy,
            table: CompositionTable::embedded()?,
            turn: 0,
            last_referent: None,
            counts: Vec::new(),
            relations: Vec::new(),
        })
    }

    /// The referent "it" or an unfocused "that" would bind to now.
    pub fn last_referent(&self) -> Option<&Referent> {
        self.last_referent.as_ref()
    }

    /// Adds one parse: binds deictic words, checks every constraint against what was said before (including
    /// earlier constraints of the same utterance), and records it.
    pub fn add(&mut self, parse: &Parse) -> Turn {
        self.add_constraints(&parse.constraints)
    }

    /// Adds one utterance's constraints (as `add` does for a parse).
    pub fn add_constraints(&mut self, constraints: &[Constraint]) -> Turn {
        let turn = self.turn;
        self.turn += 1;
        let mut bindings = Vec::new();
        let mut conflicts = Vec::new();
        for constraint in constraints {
            let mut bound = constraint.clone();
            self.bind(&mut bound, &mut bindings);
            let at = Location {
                turn,
                span: constraint.span,
            };
            let text = constraint_notation(&constraint.kind, &self.taxonomy);
            self.check_counts(&bound, at, &text, &mut conflicts);
            self.check_relation(&bound, at, &text, &mut conflicts);
            if let Some(referent) = main_referent(&bound.kind) {
                if referent.class.is_some() || referent.deixis == Some(Deixis::Focus) {
                    self.last_referent = Some(referent.clone());
                }
            }
        }
        Turn {
            turn,
            bindings,
            conflicts,
        }
    }

    /// Replaces "previous" deictic referents by the referent they point at (class, plural kept from the word).
    fn bind(&mut self, constraint: &mut Constraint, bindings: &mut Vec<Binding>) {
        let last = self.last_referent.clone();
        let mut visit = |referent: &mut Referent| {
            if referent.deixis == Some(Deixis::Previous) {
                bindings.push(Binding {
                    span: referent.span,
                    referent: last.clone(),
                });
                if referent.class.is_none() {
                    referent.class = last.as_ref().and_then(|previous| previous.class);
                }
            }
        };
        match &mut constraint.kind {
            ConstraintKind::Relation {
                subject, landmarks, ..
            } => {
                visit(subject);
                landmarks.iter_mut().for_each(&mut visit);
            }
            ConstraintKind::Place { subject, .. } => visit(subject),
            ConstraintKind::Relabel { target, .. } => visit(target),
            ConstraintKind::Attribute { target, .. } => visit(target),
            _ => {}
        }
    }

    fn check_counts(
        &mut self,
        constraint: &Constraint,
        at: Location,
        text: &str,
        conflicts: &mut Vec<Conflict>,
    ) {
        let mut new_facts: Vec<(ClassId, u32, Option<u32>, bool)> = Vec::new();
        match &constraint.kind {
            ConstraintKind::Present { class } => new_facts.push((*class, 1, None, true)),
            ConstraintKind::Absent { class } => new_facts.push((*class, 0, Some(0), true)),
            ConstraintKind::Count { class, count } => {
                let (low, high) = count_interval(*count);
                new_facts.push((*class, low, high, true));
            }
            ConstraintKind::Relation {
                subject,
                negated,
                landmarks,
                ..
            } => {
                if let Some(class) = subject.class.filter(|_| !*negated) {
                    new_facts.push((class, 1, None, false));
                }
                for landmark in landmarks {
                    if let Some(class) = landmark.class {
                        new_facts.push((class, 1, None, false));
                    }
                }
            }
            ConstraintKind::Place { subject, .. } => {
                if let Some(class) = subject.class {
                    new_facts.push((class, 1, None, false));
                }
            }
            ConstraintKind::Attribute { target, .. } => {
                if let Some(class) = target.class {
                    new_facts.push((class, 1, None, false));
                }
            }
            ConstraintKind::Relabel {
                to: Some(class), ..
            } => new_facts.push((*class, 1, None, false)),
            _ => {}
        }
        for (class, low, high, explicit) in new_facts {
            let name = self.taxonomy.class_name(class).to_string();
            let mut clash = Vec::new();
            let mut repeats = Vec::new();
            for earlier in self.counts.iter().filter(|fact| fact.class == class) {
                let joint_low = low.max(earlier.low);
                let joint_high = match (high, earlier.high) {
                    (Some(a), Some(b)) => Some(a.min(b)),
                    (a, b) => a.or(b),
                };
                if joint_high.is_some_and(|joint_high| joint_high < joint_low) {
                    clash.push(earlier);
                } else if explicit
                    && earlier.explicit
                    && low <= earlier.low
                    && match (high, earlier.high) {
                        (None, _) => true,
                        (Some(a), Some(b)) => a >= b,
                        (Some(_), None) => false,
                    }
                {
                    repeats.push(earlier);
                }
            }
            if let Some(first) = clash.first() {
                conflicts.push(Conflict {
                    kind: ConflictKind::Contradiction,
                    earlier: clash.iter().map(|fact| fact.at).collect(),
                    later: at,
                    message: format!(
                        "'{text}' needs {} {name} but '{}' said {}",
                        describe(low, high),
                        first.text,
                        describe(first.low, first.high)
                    ),
                });
            } else if let Some(first) = repeats.first() {
                conflicts.push(Conflict {
                    kind: ConflictKind::Redundancy,
                    earlier: repeats.iter().map(|fact| fact.at).collect(),
                    later: at,
                    message: format!("'{text}' adds nothing to '{}'", first.text),
                });
            }
            self.counts.push(CountFact {
                class,
                low,
                high,
                explicit,
                at,
                text: text.to_string(),
            });
        }
    }

    fn check_relation(
        &mut self,
        constraint: &Constraint,
        at: Location,
        text: &str,
        conflicts: &mut Vec<Conflict>,
    ) {
        let ConstraintKind::Relation {
            subject,
            relation,
            negated,
            landmarks,
        } = &constraint.kind
        else {
            return;
        };
        let (Some(subject_class), [landmark]) = (subject.class, landmarks.as_slice()) else {
            return;
        };
        let Some(landmark_class) = landmark.class else {
            return;
        };
        if subject_class == landmark_class {
            return;
        }
        let fact = RelationFact {
            subject: subject_class,
            landmark: landmark_class,
            relation: *relation,
            negated: *negated,
            at,
            text: text.to_string(),
        };
        // The same relation stated again, or its plain negation.
        let same_pair: Vec<&RelationFact> = self
            .relations
            .iter()
            .filter(|earlier| {
                earlier.subject == fact.subject
                    && earlier.landmark == fact.landmark
                    && earlier.relation == fact.relation
            })
            .collect();
        if let Some(earlier) = same_pair
            .iter()
            .find(|earlier| earlier.negated != fact.negated)
        {
            conflicts.push(Conflict {
                kind: ConflictKind::Contradiction,
                earlier: vec![earlier.at],
                later: at,
                message: format!("'{text}' denies '{}'", earlier.text),
            });
            self.relations.push(fact);
            return;
        }
        if let Some(earlier) = same_pair.first() {
            conflicts.push(Conflict {
                kind: ConflictKind::Redundancy,
                earlier: vec![earlier.at],
                later: at,
                message: format!("'{text}' repeats '{}'", earlier.text),
            });
            self.relations.push(fact);
            return;
        }
        let new_sets = axis_sets(fact.relation, fact.negated);
        let mut redundant_axes = 0;
        let mut constrained_axes = 0;
        let mut redundancy_sources: Vec<Location> = Vec::new();
        for (axis_index, axis) in AXES.iter().enumerate() {
            let Some(new_set) = new_sets[axis_index] else {
                continue;
            };
            constrained_axes += 1;
            let earlier: Vec<&RelationFact> = self
                .relations
                .iter()
                .filter(|earlier| {
                    axis_sets(earlier.relation, earlier.negated)[axis_index].is_some()
                })
                .collect();
            if earlier.is_empty() {
                continue;
            }
            // Without the new fact: what do the earlier ones already imply for this pair?
            let (mut network, nodes) = self.network(&earlier, axis_index);
            let (Some(&from), Some(&to)) = (nodes.get(&fact.subject), nodes.get(&fact.landmark))
            else {
                continue;
            };
            if !self.table.path_consistent(&mut network) {
                continue;
            }
            let implied = network.get(from, to);
            if implied & !new_set == 0 {
                redundant_axes += 1;
                redundancy_sources.extend(earlier.iter().map(|fact| fact.at));
                continue;
            }
            if !network.constrain(from, to, new_set) || !self.table.path_consistent(&mut network) {
                let culprits = self.culprits(&earlier, &fact, axis_index, new_set);
                conflicts.push(Conflict {
                    kind: ConflictKind::Contradiction,
                    earlier: culprits.iter().map(|fact| fact.at).collect(),
                    later: at,
                    message: format!(
                        "'{text}' cannot hold on the {} axis together with {}",
                        format!("{axis:?}").to_lowercase(),
                        culprits
                            .iter()
                            .map(|fact| format!("'{}'", fact.text))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                });
                self.relations.push(fact);
                return;
            }
        }
        if constrained_axes > 0 && redundant_axes == constrained_axes {
            redundancy_sources.sort_by_key(|location| (location.turn, location.span.start));
            redundancy_sources.dedup();
            conflicts.push(Conflict {
                kind: ConflictKind::Redundancy,
                earlier: redundancy_sources,
                later: at,
                message: format!("'{text}' follows from what was already said"),
            });
        }
        self.relations.push(fact);
    }

    /// A network over the classes in `facts` on one axis.
    fn network(
        &self,
        facts: &[&RelationFact],
        axis_index: usize,
    ) -> (Network, BTreeMap<ClassId, usize>) {
        let mut nodes = BTreeMap::new();
        for fact in facts {
            let next = nodes.len();
            nodes.entry(fact.subject).or_insert(next);
            let next = nodes.len();
            nodes.entry(fact.landmark).or_insert(next);
        }
        let mut network = Network::new(nodes.len());
        for fact in facts {
            if let (Some(set), Some(&from), Some(&to)) = (
                axis_sets(fact.relation, fact.negated)[axis_index],
                nodes.get(&fact.subject),
                nodes.get(&fact.landmark),
            ) {
                network.constrain(from, to, set);
            }
        }
        (network, nodes)
    }

    /// The smallest set of earlier facts found that clash with the new one: a single fact if one suffices,
    /// otherwise all of them.
    fn culprits<'a>(
        &self,
        earlier: &[&'a RelationFact],
        fact: &RelationFact,
        axis_index: usize,
        new_set: RelationSet,
    ) -> Vec<&'a RelationFact> {
        for candidate in earlier {
            let (mut network, nodes) = self.network(&[*candidate, fact], axis_index);
            if let (Some(&from), Some(&to)) = (nodes.get(&fact.subject), nodes.get(&fact.landmark))
            {
                let _ = network.constrain(from, to, new_set);
                if !self.table.path_consistent(&mut network) || network.get(from, to) == 0 {
                    return vec![*candidate];
                }
            }
        }
        earlier.to_vec()
    }
}

/// The referent a constraint is mainly about (for later deictic words).
fn main_referent(kind: &ConstraintKind) -> Option<&Referent> {
    match kind {
        ConstraintKind::Relation { subject, .. } | ConstraintKind::Place { subject, .. } => {
            Some(subject)
        }
        ConstraintKind::Relabel { target, .. } | ConstraintKind::Attribute { target, .. } => {
            Some(target)
        }
        _ => None,
    }
}
