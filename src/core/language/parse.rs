//! The parser: a loaded grammar turns one utterance into a `Parse` (constraints, utterance kind, ignored
//! spans and notes).
//!
//! Owns: `Grammar` (taxonomy, lexicon and rules, from the embedded defaults or a directory with a site
//! word directory), the length limit, sentence classification (correction, request, question, thanks,
//! chit-chat, empty, unparsed), and running the stages normalise -> tokens -> tagging -> asides -> chunks ->
//! (answers: a fragment completed from the question before it) -> rules -> actions in order.
//! Must not: remember earlier utterances (that is `conversation`) or touch scene content.

use std::path::Path;

use serde::{Deserialize, Serialize};

use crate::taxonomy::Taxonomy;

use super::actions::Builder;
use super::answers::{asked, complete, Asked};
use super::asides::{
    contrast_subjects, drop_asides, drop_names, drop_shown_clause, resolve_pointing, with_contents,
};
use super::chunks::{attach, chunk, repair, ChunkKind};
use super::constraint::{Constraint, ConstraintKind, Deixis, Focus, Referent, Span};
use super::error::{GrammarError, LanguageError};
use super::lexicon::{Lexicon, Tag};
use super::normalise::normalise;
use super::notation::constraint_gloss;
use super::rules::{best_match, parse_rules, Action, Rule};
use super::tagging::{clean, tag_sentences, ItemTag};
use super::tokens::tokenise;

/// The longest utterance the parser reads, in characters.
pub const DEFAULT_LENGTH_LIMIT: usize = 4096;

/// What kind of utterance it was.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum UtteranceKind {
    /// At least one constraint was read.
    Correction,
    /// Asks the robot to do something.
    Request,
    Question,
    Thanks,
    ChitChat,
    /// Nothing but spaces and punctuation.
    Empty,
    /// Words, but no constraint and no other recognised kind.
    Unparsed,
}

impl UtteranceKind {
    /// The snake_case name used in JSON and the corpus.
    pub fn name(self) -> &'static str {
        match self {
            UtteranceKind::Correction => "correction",
            UtteranceKind::Request => "request",
            UtteranceKind::Question => "question",
            UtteranceKind::Thanks => "thanks",
            UtteranceKind::ChitChat => "chit_chat",
            UtteranceKind::Empty => "empty",
            UtteranceKind::Unparsed => "unparsed",
        }
    }
}

/// Why part of the utterance was not used.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum IgnoredReason {
    Filler,
    Stutter,
    SelfRepair,
    FunctionWord,
    UnknownWord,
    /// The sentence is a request, question, thanks or chit-chat.
    NotACorrection,
    /// Known words that no rule could use.
    NoRuleMatched,
}

/// A part of the utterance that was not used, and why.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Ignored {
    pub span: Span,
    pub reason: IgnoredReason,
}

/// Something the operator may want to know about the reading.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "note", rename_all = "snake_case")]
pub enum NoteKind {
    MisspellingAccepted {
        written: String,
        read_as: String,
    },
    UnknownWord {
        written: String,
        suggestions: Vec<String>,
    },
    NumberTooLarge {
        written: String,
    },
    /// The constraint would remove or rename a safety-critical class (a person, pet or hazard): the operator
    /// must confirm it explicitly before it is applied.
    NeedsConfirmation {
        class: String,
    },
}

/// A note with the span it concerns.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Note {
    pub span: Span,
    #[serde(flatten)]
    pub kind: NoteKind,
}

/// The reading of one utterance.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Parse {
    pub utterance_kind: UtteranceKind,
    pub constraints: Vec<Constraint>,
    pub ignored: Vec<Ignored>,
    pub notes: Vec<Note>,
}

/// The default grammar files, compiled in so the binary works anywhere.
const EMBEDDED_LEXICON: &[(&str, &str)] = &[
    (
        "lexicon/classes.lex",
        include_str!("../../../grammar/lexicon/classes.lex"),
    ),
    (
        "lexicon/colours.lex",
        include_str!("../../../grammar/lexicon/colours.lex"),
    ),
    (
        "lexicon/notes.lex",
        include_str!("../../../grammar/lexicon/notes.lex"),
    ),
    (
        "lexicon/numbers.lex",
        include_str!("../../../grammar/lexicon/numbers.lex"),
    ),
    (
        "lexicon/quantities.lex",
        include_str!("../../../grammar/lexicon/quantities.lex"),
    ),
    (
        "lexicon/slips.lex",
        include_str!("../../../grammar/lexicon/slips.lex"),
    ),
    (
        "lexicon/words.lex",
        include_str!("../../../grammar/lexicon/words.lex"),
    ),
    (
        "site/juniper_lane.lex",
        include_str!("../../../grammar/site/juniper_lane.lex"),
    ),
];
const EMBEDDED_RULES: &[(&str, &str)] = &[(
    "rules/core.rules",
    include_str!("../../../grammar/rules/core.rules"),
)];

/// A loaded, validated grammar: taxonomy, lexicon and clause rules.
#[derive(Clone, Debug)]
pub struct Grammar {
    taxonomy: Taxonomy,
    lexicon: Lexicon,
    rules: Vec<Rule>,
    length_limit: usize,
}

fn owned(files: &[(&str, &str)]) -> Vec<(String, String)> {
    files
        .iter()
        .map(|(name, text)| (name.to_string(), text.to_string()))
        .collect()
}

/// Reads every file with the extension in a directory, sorted by name; a missing directory is empty.
fn read_directory(
    directory: &Path,
    extension: &str,
    label: &str,
) -> Result<Vec<(String, String)>, GrammarError> {
    let entries = match std::fs::read_dir(directory) {
        Ok(entries) => entries,
        Err(error) if error.kind() == std::io::ErrorKind::NotFound => return Ok(Vec::new()),
        Err(source) => {
            return Err(GrammarError::Io {
                path: directory.to_path_buf(),
                source,
            })
        }
    };
    let mut paths: Vec<std::path::PathBuf> = entries
        .filter_map(|entry| entry.ok().map(|entry| entry.path()))
        .filter(|path| path.extension().and_then(|ext| ext.to_str()) == Some(extension))
        .collect();
    paths.sort();
    let mut files = Vec::new();
    for path in paths {
        let text = std::fs::read_to_string(&path).map_err(|source| GrammarError::Io {
            path: path.clone(),
            source,
        })?;
        let name = path
            .file_name()
            .map(|name| format!("{label}/{}", name.to_string_lossy()))
            .unwrap_or_else(|| path.display().to_string());
        files.push((name, text));
    }
    Ok(files)
}

impl Grammar {
    /// The grammar compiled into the binary (grammar/ at build time).
    pub fn embedded() -> Result<Grammar, GrammarError> {
        Grammar::from_texts(
            Taxonomy::embedded(),
            &owned(EMBEDDED_LEXICON),
            &owned(EMBEDDED_RULES),
        )
    }

    /// Reads a grammar directory: `classes.toml` (or the embedded taxonomy), `lexicon/*.lex`,
    /// `rules/*.rules` and the site words in `site/*.lex`.
    pub fn load(directory: &Path) -> Result<Grammar, GrammarError> {
        let classes = directory.join("classes.toml");
        let taxonomy = if classes.exists() {
            Taxonomy::load(&classes).map_err(|error| GrammarError::Taxonomy(error.to_string()))?
        } else {
            Taxonomy::embedded()
        };
        let mut lexicon_files = read_directory(&directory.join("lexicon"), "lex", "lexicon")?;
        lexicon_files.extend(read_directory(&directory.join("site"), "lex", "site")?);
        let rule_files = read_directory(&directory.join("rules"), "rules", "rules")?;
        Grammar::from_texts(taxonomy, &lexicon_files, &rule_files)
    }

    /// Builds a grammar from texts (name, text); used by `load`, `embedded` and tests.
    pub fn from_texts(
        taxonomy: Taxonomy,
        lexicon_files: &[(String, String)],
        rule_files: &[(String, String)],
    ) -> Result<Grammar, GrammarError> {
        let lexicon = Lexicon::build(&taxonomy, lexicon_files)?;
        let rules = parse_rules(rule_files)?;
        Ok(Grammar {
            taxonomy,
            lexicon,
            rules,
            length_limit: DEFAULT_LENGTH_LIMIT,
        })
    }

    /// The same grammar with a different utterance length limit (in characters).
    pub fn with_length_limit(mut self, limit: usize) -> Grammar {
        self.length_limit = limit;
        self
    }

    pub fn taxonomy(&self) -> &Taxonomy {
        &self.taxonomy
    }

    pub fn lexicon(&self) -> &Lexicon {
        &self.lexicon
    }

    pub fn rules(&self) -> &[Rule] {
        &self.rules
    }

    /// Parses one utterance. `focus` is what the operator pointed at, if anything.
    pub fn parse(&self, utterance: &str, focus: Option<Focus>) -> Result<Parse, LanguageError> {
        let length = utterance.chars().count();
        if length > self.length_limit {
            return Err(LanguageError::TooLong {
                length,
                limit: self.length_limit,
            });
        }
        let normalised = normalise(utterance);
        let tokens = tokenise(&normalised);
        let mut notes = Vec::new();
        let mut ignored_raw: Vec<(Span, IgnoredReason)> = Vec::new();
        let sentences = tag_sentences(&self.lexicon, &tokens, &mut notes, &mut ignored_raw);
        let mut builder = Builder::new(focus.is_some(), &self.taxonomy);
        let structure = |class: crate::ids::ClassId| {
            self.taxonomy
                .class(class)
                .is_some_and(|info| info.group == crate::taxonomy::ClassGroup::Structure)
        };
        let mut other_kinds: Vec<UtteranceKind> = Vec::new();
        // Symbols, emoji and unknown scripts count as content; spaces and clause punctuation do not.
        let mut any_words = normalised
            .text
            .chars()
            .any(|c| !c.is_whitespace() && !",.;:!?'\"-".contains(c));
        // A question leaves something open that the next sentence may answer with a fragment.
        let mut pending: Option<Asked> = None;
        for mut sentence in sentences {
            sentence.items = resolve_pointing(sentence.items);
            let asks = sentence.items.iter().find_map(|item| match item.tag {
                ItemTag::Lexicon(Tag::Question(asks)) => Some(asks),
                _ => None,
            });
            let open = pending.take();
            let words = sentence
                .items
                .iter()
                .filter(|item| item.tag != ItemTag::Pause)
                .count();
            if words == 0 {
                continue;
            }
            any_words = true;
            if let Some(kind) = classify(&sentence.items, sentence.question_mark) {
                let talk = sentence
                    .items
                    .iter()
                    .any(|item| item.tag == ItemTag::Lexicon(Tag::Talk));
                if talk || (kind != UtteranceKind::Thanks && kind != UtteranceKind::ChitChat) {
                    if let Some(span) = sentence.span {
                        ignored_raw.push((span, IgnoredReason::NotACorrection));
                    }
                    other_kinds.push(kind);
                    // "Why is there a mug? There isn't one.": what a question names is what a later "one"
                    // or "it" of the same utterance means.
                    let mut scratch = Vec::new();
                    let items = clean(sentence.items, &mut scratch);
                    let chunks = attach(repair(chunk(&items), &mut scratch), structure);
                    for chunk in &chunks {
                        builder.mention_asked(chunk);
                    }
                    if kind == UtteranceKind::Question {
                        pending = asks.and_then(|asks| asked(asks, &chunks, focus.is_some()));
                        // "Is the mug left or right of the desk? It's on the shelf.": the thing a side
                        // question asks about, not its landmark, is what a later "it" means.
                        if let Some(Asked::Side { subject, .. }) = &pending {
                            builder.mention_asked(&super::chunks::Chunk {
                                kind: ChunkKind::NounPhrase(subject.clone()),
                                span: subject.span,
                                misspelled: false,
                            });
                        }
                    }
                    continue;
                }
                other_kinds.push(kind);
            }
            let support = |class: crate::ids::ClassId| {
                self.taxonomy
                    .class(class)
                    .is_some_and(|info| info.group == crate::taxonomy::ClassGroup::Furniture)
            };
            let items = with_contents(clean(sentence.items, &mut ignored_raw), support);
            let items = drop_asides(items, &mut ignored_raw);
            let living = |class: crate::ids::ClassId| {
                self.taxonomy
                    .class(class)
                    .is_some_and(|info| info.group == crate::taxonomy::ClassGroup::Living)
            };
            let items = drop_names(items, living, &mut ignored_raw);
            let items = contrast_subjects(drop_shown_clause(items, &mut ignored_raw));
            let mut chunks = repair(chunk(&items), &mut ignored_raw);
            if let Some(open) = &open {
                chunks = complete(open, chunks);
            }
            let chunks = attach(chunks, structure);
            let mut position = 0;
            while position < chunks.len() {
                if chunks[position].kind == ChunkKind::Separator {
                    position += 1;
                    continue;
                }
                // "And" joins clauses; only a rule that opens with it ("and so is the cat") reads it.
                if chunks[position].kind == ChunkKind::And {
                    match best_match(&self.rules, &chunks, position)
                        .filter(|found| found.rule.opens_with_and())
                    {
                        Some(found) => {
                            builder.apply(&found, &chunks, position);
                            for chunk in &chunks[position..position + found.length] {
                                builder.mention(chunk, true);
                            }
                            position += found.length;
                        }
                        None => position += 1,
                    }
                    continue;
                }
                match best_match(&self.rules, &chunks, position) {
                    Some(found) => {
                        if found.rule.action == Action::Unread {
                            let end = position + found.length - 1;
                            let span = chunks[position].span.cover(chunks[end].span);
                            ignored_raw.push((span, IgnoredReason::NoRuleMatched));
                        }
                        builder.apply(&found, &chunks, position);
                        // A noun phrase of words that state nothing ("you've put the laptop on the floor")
                        // is what a later "it" means, as one no rule used is.
                        let used = found.rule.action != Action::Unread;
                        for chunk in &chunks[position..position + found.length] {
                            builder.mention(chunk, used);
                        }
                        position += found.length;
                    }
                    None => {
                        ignored_raw.push((chunks[position].span, IgnoredReason::NoRuleMatched));
                        builder.mention(&chunks[position], false);
                        position += 1;
                    }
                }
            }
        }
        let mut constraints = join_relabels(builder.constraints);
        for constraint in &mut constraints {
            constraint.gloss = constraint_gloss(&constraint.kind, &self.taxonomy);
            let removed = match &constraint.kind {
                ConstraintKind::Relabel {
                    from: Some(class), ..
                }
                | ConstraintKind::Absent { class } => Some(*class),
                _ => None,
            };
            if let Some(class) = removed.filter(|class| self.taxonomy.is_safety_critical(*class)) {
                notes.push(Note {
                    span: constraint.span,
                    kind: NoteKind::NeedsConfirmation {
                        class: self.taxonomy.class_name(class).to_string(),
                    },
                });
            }
        }
        let utterance_kind = if !constraints.is_empty() {
            UtteranceKind::Correction
        } else if !any_words {
            UtteranceKind::Empty
        } else {
            [
                UtteranceKind::Question,
                UtteranceKind::Request,
                UtteranceKind::Thanks,
                UtteranceKind::ChitChat,
            ]
            .into_iter()
            .find(|kind| other_kinds.contains(kind))
            .unwrap_or(UtteranceKind::Unparsed)
        };
        ignored_raw.sort_by_key(|(span, _)| (span.start, span.end));
        ignored_raw.dedup();
        Ok(Parse {
            utterance_kind,
            constraints,
            ignored: ignored_raw
                .into_iter()
                .map(|(span, reason)| Ignored { span, reason })
                .collect(),
            notes,
        })
    }
}

/// Tidies what the rules built: a constraint said twice is kept once, and a denial followed by a naming of
/// the same thing ("it's not the wall. it's the ceiling") is one relabel with both classes.
fn join_relabels(built: Vec<Constraint>) -> Vec<Constraint> {
    let mut out: Vec<Constraint> = Vec::new();
    for constraint in built {
        // Said twice ("the telly's on the wall, you know, mounted on the wall"): the same constraint, wherever
        // its words were.
        if out
            .iter()
            .any(|earlier| same_saying(&earlier.kind, &constraint.kind))
        {
            continue;
        }
        // "The lamp is red, not yellow, it's red": "it" (the previous referent) said again what the
        // constraint before said of the lamp.
        let takes_up_previous = about(&constraint.kind).is_some_and(|target| {
            target.deixis == Some(Deixis::Previous) && target.class.is_none()
        });
        if let Some(previous) = out
            .last()
            .and_then(|last| about(&last.kind))
            .filter(|_| takes_up_previous)
        {
            let mut bound = constraint.kind.clone();
            if let Some(target) = about_mut(&mut bound) {
                if target.deixis == Some(Deixis::Previous) && target.class.is_none() {
                    *target = previous.clone();
                    if out.iter().any(|earlier| same_saying(&earlier.kind, &bound)) {
                        continue;
                    }
                }
            }
        }
        if let (
            Some(Constraint {
                kind:
                    ConstraintKind::Relabel {
                        target: earlier_target,
                        from: Some(_),
                        to: to @ None,
                    },
                span,
                ..
            }),
            ConstraintKind::Relabel {
                target,
                from: None,
                to: Some(named),
            },
        ) = (out.last_mut(), &constraint.kind)
        {
            if same_thing(target, earlier_target) {
                *to = Some(*named);
                *span = span.cover(constraint.span);
                continue;
            }
        }
        // "You think that's a pillow but it's a blanket": the first naming is what the robot shows.
        if let (
            Some(Constraint {
                kind:
                    ConstraintKind::Relabel {
                        target: earlier_target,
                        from: from @ None,
                        to: to @ Some(_),
                    },
                span,
                ..
            }),
            ConstraintKind::Relabel {
                target,
                from: None,
                to: Some(named),
            },
        ) = (out.last_mut(), &constraint.kind)
        {
            if same_thing(target, earlier_target) && *to != Some(*named) {
                *from = *to;
                *to = Some(*named);
                *span = span.cover(constraint.span);
                continue;
            }
        }
        // "You say there's no mug, but there is one": a later presence of a class the utterance said was
        // absent (or the other way round) takes back the earlier one, as a self-repair does.
        if let Some(class) = presence_of(&constraint.kind) {
            let taken_back = |earlier: &Constraint| {
                presence_of(&earlier.kind) == Some(class)
                    && is_absence(&earlier.kind) != is_absence(&constraint.kind)
            };
            out.retain(|earlier| !taken_back(earlier));
        }
        out.push(constraint);
    }
    out
}

/// What an attribute, place or relation constraint is about.
fn about(kind: &ConstraintKind) -> Option<&Referent> {
    match kind {
        ConstraintKind::Attribute { target, .. } => Some(target),
        ConstraintKind::Place { subject, .. } | ConstraintKind::Relation { subject, .. } => {
            Some(subject)
        }
        _ => None,
    }
}

fn about_mut(kind: &mut ConstraintKind) -> Option<&mut Referent> {
    match kind {
        ConstraintKind::Attribute { target, .. } => Some(target),
        ConstraintKind::Place { subject, .. } | ConstraintKind::Relation { subject, .. } => {
            Some(subject)
        }
        _ => None,
    }
}

/// Whether two constraints say the same thing, wherever their words were (spans are not compared).
fn same_saying(a: &ConstraintKind, b: &ConstraintKind) -> bool {
    fn same(a: &Referent, b: &Referent) -> bool {
        a.class == b.class
            && a.deixis == b.deixis
            && a.plural == b.plural
            && a.attributes == b.attributes
            && a.region == b.region
            && a.relations.len() == b.relations.len()
            && a.relations.iter().zip(&b.relations).all(|(x, y)| {
                x.relation == y.relation
                    && x.negated == y.negated
                    && x.landmarks.len() == y.landmarks.len()
                    && x.landmarks
                        .iter()
                        .zip(&y.landmarks)
                        .all(|(p, q)| same(p, q))
            })
    }
    match (a, b) {
        (
            ConstraintKind::Relation {
                subject: s1,
                relation: r1,
                negated: n1,
                landmarks: l1,
            },
            ConstraintKind::Relation {
                subject: s2,
                relation: r2,
                negated: n2,
                landmarks: l2,
            },
        ) => {
            r1 == r2
                && n1 == n2
                && same(s1, s2)
                && l1.len() == l2.len()
                && l1.iter().zip(l2).all(|(p, q)| same(p, q))
        }
        (
            ConstraintKind::Place {
                subject: s1,
                place: p1,
            },
            ConstraintKind::Place {
                subject: s2,
                place: p2,
            },
        ) => p1 == p2 && same(s1, s2),
        (
            ConstraintKind::Attribute {
                target: t1,
                attribute: a1,
            },
            ConstraintKind::Attribute {
                target: t2,
                attribute: a2,
            },
        ) => a1 == a2 && same(t1, t2),
        (
            ConstraintKind::Relabel {
                target: t1,
                from: f1,
                to: o1,
            },
            ConstraintKind::Relabel {
                target: t2,
                from: f2,
                to: o2,
            },
        ) => f1 == f2 && o1 == o2 && same(t1, t2),
        _ => a == b,
    }
}

/// Whether a later relabel's target is the earlier one's thing: "it" with nothing named (the previous
/// referent), or the same pointed or named thing taken up by a pronoun ("that's not a wall, it's the
/// ceiling" while pointing).
fn same_thing(later: &Referent, earlier: &Referent) -> bool {
    let previous = later.deixis == Some(Deixis::Previous) && later.class.is_none();
    let taken_up = later.deixis == earlier.deixis
        && later.class == earlier.class
        && later.relations.is_empty()
        && (later.deixis.is_some() || later.class.is_some());
    previous || taken_up
}

/// The class a presence, absence or count constraint is about.
fn presence_of(kind: &ConstraintKind) -> Option<crate::ids::ClassId> {
    match kind {
        ConstraintKind::Present { class }
        | ConstraintKind::Absent { class }
        | ConstraintKind::Count { class, .. } => Some(*class),
        _ => None,
    }
}

/// Whether a presence, absence or count constraint says there is none.
fn is_absence(kind: &ConstraintKind) -> bool {
    match kind {
        ConstraintKind::Absent { .. } => true,
        ConstraintKind::Count { count, .. } => !count.admits(1) && !count.admits(2),
        _ => false,
    }
}

/// Classifies a sentence that is not a correction by its cue words; `None` means "read it for constraints".
fn classify(items: &[super::tagging::Item], question_mark: bool) -> Option<UtteranceKind> {
    let first = items.iter().find(|item| {
        !matches!(
            item.tag,
            ItemTag::Pause | ItemTag::Lexicon(Tag::Filler) | ItemTag::Lexicon(Tag::Skip)
        )
    });
    // "Could you check under the sofa?": a request put as a question is still a request.
    if question_mark {
        // "So, how was your day?": a question that is nothing but a pleasantry is talk.
        let pleasantry = items.iter().all(|item| {
            matches!(
                item.tag,
                ItemTag::Pause | ItemTag::Lexicon(Tag::Filler | Tag::Skip | Tag::Greeting)
            )
        });
        return Some(match first.map(|item| item.tag) {
            Some(ItemTag::Lexicon(Tag::Request)) => UtteranceKind::Request,
            _ if pleasantry && first.is_some() => UtteranceKind::ChitChat,
            _ => UtteranceKind::Question,
        });
    }
    let first = first?;
    match first.tag {
        // "is the book on the counter", "is that a cat or a bottle": a sentence opening with "is" asks.
        // "I'm off to bed" ("i" is skipped) is no question, nor is a verb of several words ("looks like the
        // kitchen to me").
        ItemTag::Lexicon(Tag::Be) if first.text == "am" || first.text.contains(' ') => {}
        ItemTag::Lexicon(Tag::Question(_) | Tag::Be) => return Some(UtteranceKind::Question),
        ItemTag::Lexicon(Tag::Request) => return Some(UtteranceKind::Request),
        _ => {}
    }
    let has = |wanted: Tag| {
        items
            .iter()
            .any(|item| item.tag == ItemTag::Lexicon(wanted))
    };
    // "Hold on, stop moving": talk, then a request opening a later clause.
    let request_after_pause = items
        .windows(2)
        .any(|pair| pair[0].tag == ItemTag::Pause && pair[1].tag == ItemTag::Lexicon(Tag::Request));
    if has(Tag::Talk) {
        Some(UtteranceKind::ChitChat)
    } else if has(Tag::Thanks) {
        Some(UtteranceKind::Thanks)
    } else if first.tag == ItemTag::Lexicon(Tag::Greeting) && request_after_pause {
        Some(UtteranceKind::Request)
    } else if has(Tag::Greeting) {
        Some(UtteranceKind::ChitChat)
    } else {
        None
    }
}

/// Reads a focus string: `object:ID` or `pixel:X,Y`.
pub fn parse_focus(text: &str) -> Result<Focus, LanguageError> {
    let bad = || LanguageError::BadFocus {
        text: text.to_string(),
    };
    if let Some(id) = text.strip_prefix("object:") {
        let id: u32 = id.trim().parse().map_err(|_| bad())?;
        return Ok(Focus::Object {
            id: crate::ids::ObjectId(id),
        });
    }
    if let Some(pixel) = text.strip_prefix("pixel:") {
        let (x, y) = pixel.split_once(',').ok_or_else(bad)?;
        return Ok(Focus::Pixel {
            x: x.trim().parse().map_err(|_| bad())?,
            y: y.trim().parse().map_err(|_| bad())?,
        });
    }
    Err(bad())
}
