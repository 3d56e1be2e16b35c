//! The lexicon: phrases and their tags, read from `*.lex` files and the class taxonomy.
//!
//! Owns: building the lexicon from `.lex` files (duplicates and bad lines reported with file and line; the
//! line syntax itself is `lexicon_syntax`), `Tag`, the rewrite table for
//! contractions and casual spellings, class plurals (regular English rules plus listed irregular forms),
//! longest-phrase lookup and the words offered for spelling correction.
//! Must not: decide what a sentence means; it only says what each phrase can be.

use std::collections::HashMap;

use crate::ids::{ClassId, RoomId};
use crate::taxonomy::Taxonomy;

use super::constraint::{ColourTerm, ImageRegion, Relation, SizeTerm};
use super::error::GrammarError;
pub use super::lexicon_syntax::{parse_colour, parse_region, parse_relation};
use super::lexicon_syntax::{parse_line, split_words, Condition, LexLine};

/// A stated quantity before a comparator is applied.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum QuantityWord {
    Exactly(u32),
    AtLeast(u32),
    /// "some", "any": at least one, no number stated.
    Some,
    /// "no", "none of the": zero.
    None,
}

/// A word that modifies a following number.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Comparator {
    Exactly,
    AtLeast,
    AtMost,
    MoreThan,
    FewerThan,
}

/// A bare "left" or "right".
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Side {
    Left,
    Right,
}

/// What a question word asks for, when a fragment answering it later in the utterance can be read.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Asks {
    /// Nothing a fragment answer could complete ("why", "which", "do you").
    Other,
    /// "how many": a number answers it ("How many mugs? Exactly two.").
    Count,
    /// "what": a noun phrase answers it ("What's on the desk? A mug.").
    Thing,
    /// "where": a place answers it ("Where's the mug? On the desk."); also the cleft "X is where Y is".
    Place,
    /// "is there": "there is" or "there isn't" answers it ("Is there a mug? There is.").
    Exists,
    /// "which side of", "left or right of": a side answers it ("Is the mug left or right of the desk? Right.").
    Side,
}

/// What a phrase can be.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tag {
    Class {
        class: ClassId,
        plural: bool,
    },
    Room(RoomId),
    Number(u32),
    Tens(u32),
    Quantity(QuantityWord),
    Comparator(Comparator),
    Article,
    /// The word "no": a zero quantity, a negation or a repair cue, decided by context.
    No,
    Relation(Relation),
    Region(ImageRegion),
    Side(Side),
    Colour(ColourTerm),
    Size(SizeTerm),
    Deictic {
        pronoun: bool,
        plural: bool,
    },
    Thing {
        plural: bool,
    },
    /// A word for the whole view ("scene", "picture", "room"): never a landmark.
    Scene,
    /// A relation stated of two things at once ("side by side").
    Reciprocal(Relation),
    Determiner,
    Be,
    There,
    Negation,
    We,
    You,
    Called,
    Missed,
    /// "has", "contains": the owner has the thing (on it, in it).
    Have,
    /// "holds", "contains": the owner has the thing on it (furniture) or in it (anything else).
    Holds,
    /// "I see", "I count": the operator reports what is there.
    See,
    /// "remove", "get rid of", "you hallucinated": the thing is not there.
    Remove,
    /// "the number of", "count": names a count.
    Count,
    /// "change", "label": an order to relabel the thing that follows.
    Change,
    /// "I'm pointing at", "I selected": makes the phrase before it point at the operator's focus.
    Pointing,
    /// "to", "as": between a thing and its new name ("change this to a mug", "label it as a towel").
    As,
    /// "with", "w/": a modifier of the phrase before it, dropped up to the next verb or pause.
    With,
    And,
    /// "or": joins two things; under a denial each is denied ("not on the desk or the shelf").
    Or,
    Repair,
    Filler,
    Skip,
    Request,
    Question(Asks),
    Thanks,
    Greeting,
    /// "I wish", "used to", "always", "next year": the sentence is about a wish, a plan, a habit or another
    /// time, not what is in view now; it is talk, and none of it is read.
    Talk,
}

impl Tag {
    /// Whether a misspelling of this phrase should be accepted as the phrase.
    fn is_content(self) -> bool {
        matches!(
            self,
            Tag::Class { .. }
                | Tag::Room(_)
                | Tag::Colour(_)
                | Tag::Size(_)
                | Tag::Relation(_)
                | Tag::Number(_)
        )
    }
}

/// One class word as the lexicon knows it, for the inflection check.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ClassWord {
    pub singular: Option<String>,
    pub plural: Option<String>,
    pub class: ClassId,
    pub mass: bool,
}

/// A phrase continuation: the words after the first, and what the whole phrase maps to.
#[derive(Clone, Debug)]
struct Continuation<T> {
    rest: Vec<String>,
    value: T,
}

/// What a rewrite turns a phrase into, and the conditions under which it applies.
type Rewrite = (Vec<String>, Vec<Condition>);

/// The validated lexicon.
#[derive(Clone, Debug, Default)]
pub struct Lexicon {
    phrases: HashMap<String, Vec<Continuation<Tag>>>,
    rewrites: HashMap<String, Vec<Continuation<Rewrite>>>,
    class_words: Vec<ClassWord>,
    /// Single words offered for spelling correction, sorted for deterministic ties.
    spelling_words: Vec<(String, Tag)>,
    /// Plural-only class words that name one thing (`whole`): "the stairs" is one staircase.
    whole_words: Vec<String>,
}

/// A phrase found at a position: how many words it spans and its tag.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Found {
    pub words: usize,
    pub tag: Tag,
}

impl Lexicon {
    /// Whether a plural-only class phrase names one thing ("stairs"): its referent is not plural.
    pub fn names_one_thing(&self, phrase: &str) -> bool {
        self.whole_words.iter().any(|word| word == phrase)
    }

    /// Builds a lexicon from the taxonomy and named `.lex` texts (name, text), in order.
    pub fn build(taxonomy: &Taxonomy, files: &[(String, String)]) -> Result<Lexicon, GrammarError> {
        let mut lexicon = Lexicon::default();
        // Which class words are singular, plural or mass, collected before plurals are generated.
        let mut singulars: Vec<(String, ClassId)> = Vec::new();
        let mut explicit_plurals: HashMap<String, String> = HashMap::new();
        let mut plural_only: Vec<(String, ClassId)> = Vec::new();
        let mut masses: Vec<(String, ClassId)> = Vec::new();
        let mut seen: HashMap<String, String> = HashMap::new();
        for (file, text) in files {
            for (index, raw_line) in text.lines().enumerate() {
                let line_number = index + 1;
                let line = raw_line.split('#').next().unwrap_or("").trim();
                if line.is_empty() {
                    continue;
                }
                let parsed = parse_line(line, taxonomy)
                    .map_err(|message| GrammarError::line(file, line_number, message))?;
                let phrase_key = match &parsed {
                    LexLine::Tag(words, ..) => words.join(" "),
                    LexLine::Rewrite(words, _, conditions) if conditions.is_empty() => {
                        words.join(" ")
                    }
                    // A conditional rewrite may share its phrase with a tag or another condition.
                    LexLine::Rewrite(words, _, conditions) => {
                        format!("{} {conditions:?}", words.join(" "))
                    }
                };
                if let Some(previous) =
                    seen.insert(phrase_key.clone(), format!("{file}:{line_number}"))
                {
                    return Err(GrammarError::line(
                        file,
                        line_number,
                        format!("'{phrase_key}' is already defined at {previous}"),
                    ));
                }
                match parsed {
                    LexLine::Rewrite(words, replacement, conditions) => {
                        lexicon.insert_rewrite(words, replacement, conditions)
                    }
                    LexLine::Tag(words, tag, extra) => {
                        if let (Tag::Class { class, plural }, Some(extra)) = (tag, &extra) {
                            let phrase = words.join(" ");
                            if extra.whole {
                                lexicon.whole_words.push(phrase.clone());
                            }
                            if extra.mass {
                                masses.push((phrase.clone(), class));
                            } else if plural {
                                match &extra.plural_of {
                                    Some(singular) => {
                                        explicit_plurals.insert(singular.clone(), phrase.clone());
                                    }
                                    None => plural_only.push((phrase.clone(), class)),
                                }
                            } else {
                                singulars.push((phrase.clone(), class));
                            }
                        }
                        lexicon.insert_phrase(words, tag);
                    }
                }
            }
        }
        // Canonical class names are singular unless listed as plural-only.
        for info in taxonomy.classes() {
            let name = info.name.replace('_', " ");
            let listed = plural_only.iter().any(|(word, _)| *word == name)
                || singulars.iter().any(|(word, _)| *word == name)
                || masses.iter().any(|(word, _)| *word == name);
            if !listed {
                lexicon.insert_phrase(
                    split_words(&name),
                    Tag::Class {
                        class: info.id,
                        plural: false,
                    },
                );
                singulars.insert(0, (name, info.id));
            }
        }
        for (singular, class) in &singulars {
            let plural = explicit_plurals
                .get(singular)
                .cloned()
                .unwrap_or_else(|| regular_plural(singular));
            if !explicit_plurals.contains_key(singular) {
                if seen.contains_key(&plural) {
                    return Err(GrammarError::Taxonomy(format!(
                        "the plural '{plural}' of '{singular}' is already a phrase; list it as an irregular plural"
                    )));
                }
                lexicon.insert_phrase(
                    split_words(&plural),
                    Tag::Class {
                        class: *class,
                        plural: true,
                    },
                );
            }
            lexicon.class_words.push(ClassWord {
                singular: Some(singular.clone()),
                plural: Some(plural),
                class: *class,
                mass: false,
            });
        }
        for (word, class) in &plural_only {
            lexicon.class_words.push(ClassWord {
                singular: None,
                plural: Some(word.clone()),
                class: *class,
                mass: false,
            });
        }
        for (word, class) in &masses {
            lexicon.class_words.push(ClassWord {
                singular: Some(word.clone()),
                plural: None,
                class: *class,
                mass: true,
            });
        }
        for (explicit_singular, plural) in &explicit_plurals {
            if !singulars.iter().any(|(word, _)| word == explicit_singular) {
                return Err(GrammarError::Taxonomy(format!(
                    "'{plural}' is listed as the plural of '{explicit_singular}', which is not a class word"
                )));
            }
        }
        let mut spelling: Vec<(String, Tag)> = Vec::new();
        for (first, continuations) in &lexicon.phrases {
            for continuation in continuations {
                if continuation.rest.is_empty()
                    && continuation.value.is_content()
                    && first.chars().count() >= 3
                    && first.chars().all(|c| c.is_alphabetic())
                {
                    spelling.push((first.clone(), continuation.value));
                }
            }
        }
        spelling.sort_by(|a, b| a.0.cmp(&b.0));
        lexicon.spelling_words = spelling;
        Ok(lexicon)
    }

    fn insert_phrase(&mut self, words: Vec<String>, tag: Tag) {
        let mut words = words.into_iter();
        let Some(first) = words.next() else { return };
        let rest: Vec<String> = words.collect();
        let entry = self.phrases.entry(first).or_default();
        entry.push(Continuation { rest, value: tag });
        entry.sort_by_key(|continuation| std::cmp::Reverse(continuation.rest.len()));
    }

    fn insert_rewrite(
        &mut self,
        words: Vec<String>,
        replacement: Vec<String>,
        conditions: Vec<Condition>,
    ) {
        let mut words = words.into_iter();
        let Some(first) = words.next() else { return };
        let rest: Vec<String> = words.collect();
        let entry = self.rewrites.entry(first).or_default();
        entry.push(Continuation {
            rest,
            value: (replacement, conditions),
        });
        // Longest first; among equally long phrases, conditional rewrites before the plain one.
        entry.sort_by_key(|continuation| {
            (
                std::cmp::Reverse(continuation.rest.len()),
                continuation.value.1.is_empty(),
            )
        });
    }

    /// Whether one neighbour word (and the words after it, for a class phrase) meets a rewrite condition.
    fn condition_holds<S: AsRef<str>>(
        &self,
        condition: &Condition,
        previous: Option<&str>,
        following: &[S],
    ) -> bool {
        let listed = condition.words.iter().any(|wanted| {
            if condition.after {
                return match (previous, wanted.as_str()) {
                    (None, wanted) => wanted == "<start>",
                    // After a colon a new clause starts.
                    (Some(":"), "<start>") => true,
                    (Some(word), "<class>") => matches!(
                        self.longest_phrase(&[word]),
                        Some(Found {
                            tag: Tag::Class { .. },
                            ..
                        })
                    ),
                    (Some(word), wanted) => word == wanted,
                };
            }
            let Some(next) = following.first() else {
                return wanted == "<end>";
            };
            match wanted.as_str() {
                "<class>" | "<plural>" => match self.longest_phrase(following) {
                    Some(Found {
                        tag: Tag::Class { plural, .. },
                        ..
                    }) => wanted == "<class>" || plural,
                    _ => false,
                },
                "<number>" => {
                    next.as_ref().chars().all(|c| c.is_ascii_digit())
                        || matches!(
                            self.longest_phrase(following).map(|found| found.tag),
                            Some(Tag::Number(_) | Tag::Tens(_))
                        )
                }
                word => next.as_ref() == word,
            }
        });
        listed != condition.negated
    }

    /// The longest phrase starting at `words[0]`.
    pub fn longest_phrase<S: AsRef<str>>(&self, words: &[S]) -> Option<Found> {
        let first = words.first()?;
        let continuations = self.phrases.get(first.as_ref())?;
        continuations.iter().find_map(|continuation| {
            let rest = words.get(1..1 + continuation.rest.len())?;
            let matches = rest
                .iter()
                .zip(&continuation.rest)
                .all(|(word, expected)| word.as_ref() == expected);
            matches.then_some(Found {
                words: 1 + continuation.rest.len(),
                tag: continuation.value,
            })
        })
    }

    /// The longest rewrite starting at `words[0]` whose conditions hold: how many words it replaces and
    /// with what. `previous` is the word before, as already rewritten.
    pub fn longest_rewrite<S: AsRef<str>>(
        &self,
        words: &[S],
        previous: Option<&str>,
    ) -> Option<(usize, &[String])> {
        let first = words.first()?;
        let continuations = self.rewrites.get(first.as_ref())?;
        continuations.iter().find_map(|continuation| {
            let length = 1 + continuation.rest.len();
            let rest = words.get(1..length)?;
            let matches = rest
                .iter()
                .zip(&continuation.rest)
                .all(|(word, expected)| word.as_ref() == expected);
            let (replacement, conditions) = &continuation.value;
            let context = conditions
                .iter()
                .all(|condition| self.condition_holds(condition, previous, &words[length..]));
            (matches && context).then_some((length, replacement.as_slice()))
        })
    }

    /// Every class word with its singular and plural (for the inflection check).
    pub fn class_words(&self) -> &[ClassWord] {
        &self.class_words
    }

    /// Single content words for spelling correction, sorted.
    pub fn spelling_words(&self) -> &[(String, Tag)] {
        &self.spelling_words
    }

    /// Every whole phrase tagged `Number` or `Tens`, with its value.
    pub fn number_words(&self) -> Vec<(String, Tag)> {
        let mut words: Vec<(String, Tag)> = self
            .phrases
            .iter()
            .flat_map(|(first, continuations)| {
                continuations
                    .iter()
                    .filter(|continuation| {
                        continuation.rest.is_empty()
                            && matches!(continuation.value, Tag::Number(_) | Tag::Tens(_))
                    })
                    .map(move |continuation| (first.clone(), continuation.value))
            })
            .collect();
        words.sort_by(|a, b| a.0.cmp(&b.0));
        words
    }

    /// Every (phrase, tag) pair, sorted by phrase (for checks and listings).
    pub fn phrases(&self) -> Vec<(String, Tag)> {
        let mut all: Vec<(String, Tag)> = self
            .phrases
            .iter()
            .flat_map(|(first, continuations)| {
                continuations.iter().map(move |continuation| {
                    let mut phrase = first.clone();
                    for word in &continuation.rest {
                        phrase.push(' ');
                        phrase.push_str(word);
                    }
                    (phrase, continuation.value)
                })
            })
            .collect();
        all.sort_by(|a, b| a.0.cmp(&b.0));
        all
    }
}

/// The regular English plural of a phrase (the last word is inflected).
pub fn regular_plural(phrase: &str) -> String {
    let (head, last) = match phrase.rsplit_once(' ') {
        Some((head, last)) => (format!("{head} "), last),
        None => (String::new(), phrase),
    };
    let bytes = last.as_bytes();
    let ends = |suffix: &str| last.ends_with(suffix);
    let plural = if ends("s") || ends("x") || ends("z") || ends("ch") || ends("sh") {
        format!("{last}es")
    } else if ends("y")
        && bytes.len() >= 2
        && !matches!(bytes[bytes.len() - 2], b'a' | b'e' | b'i' | b'o' | b'u')
    {
        format!("{}ies", &last[..last.len() - 1])
    } else {
        format!("{last}s")
    };
    format!("{head}{plural}")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn build(text: &str) -> Result<Lexicon, GrammarError> {
        Lexicon::build(
            &Taxonomy::embedded(),
            &[("test.lex".to_string(), text.to_string())],
        )
    }

    #[test]
    fn a_bad_line_is_reported_with_file_and_line_number() {
        let error = build("# fine\ncouch -> class sofa\nbeanbag -> class throne\n").unwrap_err();
        assert_eq!(
            error.to_string(),
            "test.lex:3: unknown class 'throne' (classes.toml lists the classes)"
        );
        let error = build("couch -> class sofa\ncouch -> class bed\n").unwrap_err();
        assert!(error
            .to_string()
            .starts_with("test.lex:2: 'couch' is already defined at test.lex:1"));
        assert!(build("what is this\n").is_err());
    }

    #[test]
    fn longest_phrase_wins_and_plurals_are_generated() {
        let lexicon =
            build("next to -> relation next_to\nnext -> skip\ncouch -> class sofa\n").unwrap();
        let found = lexicon.longest_phrase(&["next", "to", "the"]).unwrap();
        assert_eq!(found.words, 2);
        let couches = lexicon.longest_phrase(&["couches"]).unwrap();
        assert!(matches!(couches.tag, Tag::Class { plural: true, .. }));
        assert!(lexicon.longest_phrase(&["boxes"]).is_some());
    }

    #[test]
    fn regular_plurals_follow_the_spelling_rules() {
        assert_eq!(regular_plural("box"), "boxes");
        assert_eq!(regular_plural("kitty"), "kitties");
        assert_eq!(regular_plural("toy"), "toys");
        assert_eq!(regular_plural("remote control"), "remote controls");
    }
}
