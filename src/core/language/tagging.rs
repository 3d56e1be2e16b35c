//! Tagging: tokens to lexicon items, with rewrites, numbers, spelling correction and speech clean-up.
//!
//! Owns: applying rewrites ("that's" -> "that is", "r" -> "are", "bag's" -> "bag is", conditional slips
//! such as "to" -> "two" before a plural class word), note counts ("mugs x9" -> "9 mugs", "3+" -> "at least
//! 3"), longest-phrase
//! tagging, digits and compound numbers ("forty-two"), accepting misspellings, and removing fillers,
//! function words, cut-off fragments and stuttered repeats, each recorded as ignored with a reason.
//! Must not: group items into phrases or decide meaning; that is `chunks` and `rules`.

use super::constraint::{ImageRegion, Relation, Span};
use super::lexicon::{Lexicon, Tag};
use super::parse::{IgnoredReason, Note, NoteKind};
use super::spelling::{accept_limit, ascii_distance_within, distance_within, SUGGESTION_LIMIT};
use super::tokens::{Token, TokenShape};

/// What an item is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ItemTag {
    Lexicon(Tag),
    /// A pause (comma, colon).
    Pause,
    /// A word the lexicon does not know.
    Unknown,
    /// A number too large to count with.
    TooLarge,
}

/// One tagged phrase.
#[derive(Clone, Debug, PartialEq)]
pub struct Item {
    pub tag: ItemTag,
    pub span: Span,
    /// The normalised words of the phrase, joined by spaces.
    pub text: String,
    /// The phrase was read as a misspelling of a lexicon word.
    pub misspelled: bool,
}

/// A word after rewriting: text plus where it came from.
#[derive(Clone, Debug)]
struct Word {
    text: String,
    span: Span,
    shape: TokenShape,
    fragment: bool,
}

/// The items of one sentence and how it ended.
#[derive(Clone, Debug, Default)]
pub struct Sentence {
    pub items: Vec<Item>,
    pub question_mark: bool,
    pub span: Option<Span>,
}

/// Sounds of hesitation, which never belong to a phrase (fillers that are words, such as "like", stay for
/// the lexicon to judge).
const HESITATIONS: [&str; 8] = ["uh", "um", "umm", "uhm", "er", "erm", "hmm", "ah"];

/// Applies rewrites and splits tokens into sentences of words.
fn rewrite(
    lexicon: &Lexicon,
    tokens: &[Token],
    ignored: &mut Vec<(Span, IgnoredReason)>,
) -> Vec<Word> {
    let mut words: Vec<Word> = Vec::with_capacity(tokens.len() + 4);
    let mut index = 0;
    while index < tokens.len() {
        let token = &tokens[index];
        // "On the uh left of the desk": a hesitation sound between two words is dropped before phrases are
        // matched, so it cannot split a phrase.
        let between_words = words
            .last()
            .is_some_and(|word| word.shape == TokenShape::Word)
            && tokens
                .get(index + 1)
                .is_some_and(|next| next.shape == TokenShape::Word);
        if token.shape == TokenShape::Word
            && between_words
            && HESITATIONS.contains(&token.text.as_str())
        {
            ignored.push((token.span, IgnoredReason::Filler));
            index += 1;
            continue;
        }
        // "On the the left of": a word said twice is one word before phrases are matched.
        let repeated = words.last().is_some_and(|word| {
            word.shape == TokenShape::Word && !word.fragment && word.text == token.text
        });
        if token.shape == TokenShape::Word && repeated {
            ignored.push((token.span, IgnoredReason::Stutter));
            index += 1;
            continue;
        }
        if token.shape != TokenShape::Word {
            words.push(Word {
                text: token.text.clone(),
                span: token.span,
                shape: token.shape,
                fragment: false,
            });
            index += 1;
            continue;
        }
        if let Some(number) = note_multiplier(&token.text) {
            // "mugs by desk x9": the count moves before the clause's first class word ("9 mugs by desk").
            let clause_start = words
                .iter()
                .rposition(|word| word.shape != TokenShape::Word)
                .map_or(0, |index| index + 1);
            let head = (clause_start..words.len()).find(|&index| {
                matches!(
                    lexicon.longest_phrase(&[words[index].text.as_str()]),
                    Some(super::lexicon::Found {
                        tag: Tag::Class { .. },
                        ..
                    })
                )
            });
            // "x6 remotes": opening the clause, the count stays where it is, before the noun.
            let position = head.or_else(|| (clause_start == words.len()).then_some(words.len()));
            if let Some(head) = position {
                words.insert(
                    head,
                    Word {
                        text: number.to_string(),
                        span: token.span,
                        shape: TokenShape::Word,
                        fragment: false,
                    },
                );
                index += 1;
                continue;
            }
        }
        let glued_plus = token.text == "+"
            && words.last().is_some_and(|last| {
                last.span.end == token.span.start
                    && !last.text.is_empty()
                    && last.text.chars().all(|c| c.is_ascii_digit())
            });
        if glued_plus {
            // "3+": at least three.
            if let Some(last) = words.pop() {
                for text in ["at", "least"] {
                    words.push(Word {
                        text: text.to_string(),
                        span: last.span,
                        shape: TokenShape::Word,
                        fragment: false,
                    });
                }
                words.push(last);
            }
            index += 1;
            continue;
        }
        // A window of following word tokens for multi-word rewrites.
        let window: Vec<&str> = tokens[index..]
            .iter()
            .take(6)
            .take_while(|token| token.shape == TokenShape::Word)
            .map(|token| token.text.as_str())
            .collect();
        // A colon is a pause, but a rewrite may name it as the word before ("fridge: yes").
        let previous = words
            .last()
            .filter(|word| word.shape == TokenShape::Word || word.text == ":")
            .map(|word| word.text.as_str());
        if let Some((length, replacement)) = lexicon.longest_rewrite(&window, previous) {
            let span = tokens[index].span.cover(tokens[index + length - 1].span);
            // "box betw. bed and desk": a period glued to a clipped relation word, with words after it,
            // marks the clipping; a relation never ends a note.
            let words_of: Vec<&str> = replacement.iter().map(String::as_str).collect();
            // "cab. under sink": so does one glued to a clipped class word the notes expand.
            let is_relation = matches!(
                lexicon.longest_phrase(&words_of),
                Some(super::lexicon::Found { tag: Tag::Relation(_) | Tag::Class { .. }, words })
                    if words == words_of.len()
            ) && length == 1
                && token.text.chars().count() < words_of.concat().chars().count();
            let clipped = is_relation
                && tokens.get(index + length).is_some_and(|dot| {
                    dot.text == "." && dot.span.start == tokens[index + length - 1].span.end
                })
                && tokens
                    .get(index + length + 1)
                    .is_some_and(|next| next.shape == TokenShape::Word);
            for text in replacement {
                // A rewrite to punctuation ("/ = ;") separates clauses like the punctuation itself.
                let shape = match text.as_str() {
                    "," | ":" => TokenShape::Pause,
                    ";" | "." => TokenShape::Stop,
                    _ => TokenShape::Word,
                };
                words.push(Word {
                    text: text.clone(),
                    span,
                    shape,
                    fragment: false,
                });
            }
            index += length + usize::from(clipped);
            continue;
        }
        if let Some((word, used)) = rejoined(lexicon, tokens, index) {
            words.push(word);
            index += used;
            continue;
        }
        let on_the = words.len() >= 2
            && words[words.len() - 1].text == "the"
            && matches!(words[words.len() - 2].text.as_str(), "on" | "to" | "at");
        if let Some((word, used)) = side_of_owner(lexicon, tokens, index).filter(|_| on_the) {
            // "On the lamp's left": "on the left of the lamp".
            for text in [word, "of", "the"] {
                words.push(Word {
                    text: text.to_string(),
                    span: token.span,
                    shape: TokenShape::Word,
                    fragment: false,
                });
            }
            words.push(Word {
                text: token.text.trim_end_matches("'s").to_string(),
                span: token.span,
                shape: TokenShape::Word,
                fragment: false,
            });
            index += used;
            continue;
        }
        if let Some(stem) = token.text.strip_suffix("'s") {
            let is_noun = matches!(
                lexicon.longest_phrase(&[stem]).map(|found| found.tag),
                Some(Tag::Class { .. } | Tag::Thing { .. } | Tag::Deictic { .. })
            );
            // "My sister's bag", "the dog's red bowl": before a thing (or its colour or size and then a thing)
            // the "'s" is a possessive, and the clause is about the thing owned, so the owner is left out.
            // Read as "is" it would name the owner: "that's my aunt's bag" is no relabel to a person.
            let found_at = |at: usize| {
                let following: Vec<&str> = tokens
                    .iter()
                    .skip(at)
                    .take(4)
                    .map(|next| next.text.as_str())
                    .collect();
                lexicon.longest_phrase(&following)
            };
            let owns = match found_at(index + 1) {
                Some(super::lexicon::Found {
                    tag: Tag::Class { .. },
                    ..
                }) => true,
                Some(super::lexicon::Found {
                    tag: Tag::Colour(_) | Tag::Size(_),
                    words,
                }) => matches!(
                    found_at(index + 1 + words).map(|found| found.tag),
                    Some(Tag::Class { .. })
                ),
                _ => false,
            };
            let owner_is_a_thing = matches!(
                lexicon.longest_phrase(&[stem]).map(|found| found.tag),
                Some(Tag::Class { .. })
            );
            if owns && owner_is_a_thing {
                index += 1;
                continue;
            }
            if is_noun {
                words.push(Word {
                    text: stem.to_string(),
                    span: token.span,
                    shape: TokenShape::Word,
                    fragment: false,
                });
                words.push(Word {
                    text: "is".to_string(),
                    span: token.span,
                    shape: TokenShape::Word,
                    fragment: false,
                });
                index += 1;
                continue;
            }
        }
        words.push(Word {
            text: token.text.clone(),
            span: token.span,
            shape: token.shape,
            fragment: token.fragment,
        });
        index += 1;
    }
    words
}

/// A word the recogniser split or clipped, put back together: two words that are one thing or relation word
/// written apart ("be hind", "cup board", "arm chair") when the two are no phrase of their own, and a word
/// with its final "g" dropped ("sittin", "layin") when only the full form is known. `None` for anything else.
fn rejoined(lexicon: &Lexicon, tokens: &[Token], index: usize) -> Option<(Word, usize)> {
    let token = &tokens[index];
    let known = |text: &str| lexicon.longest_phrase(&[text]).is_some();
    let plain = |text: &str| !text.is_empty() && text.chars().all(|c| c.is_ascii_lowercase());
    if !plain(&token.text) {
        return None;
    }
    if let Some(next) = tokens
        .get(index + 1)
        .filter(|next| next.shape == TokenShape::Word && plain(&next.text))
    {
        // Joined on the stack: this runs at every pair of words, so it must not allocate.
        let mut buffer = [0u8; 24];
        let length = token.text.len() + next.text.len();
        let joined = match buffer.get_mut(..length) {
            Some(slot) => {
                slot[..token.text.len()].copy_from_slice(token.text.as_bytes());
                slot[token.text.len()..].copy_from_slice(next.text.as_bytes());
                std::str::from_utf8(slot).unwrap_or_default()
            }
            None => "",
        };
        let one_word = !joined.is_empty()
            && matches!(
                lexicon.longest_phrase(&[joined]),
                Some(super::lexicon::Found {
                    tag: Tag::Class { .. } | Tag::Relation(_),
                    words: 1,
                })
            );
        let a_phrase_apart = lexicon
            .longest_phrase(&[token.text.as_str(), next.text.as_str()])
            .is_some_and(|found| found.words == 2);
        if one_word && joined.len() >= 5 && !a_phrase_apart {
            return Some((
                Word {
                    text: joined.to_string(),
                    span: token.span.cover(next.span),
                    shape: TokenShape::Word,
                    fragment: false,
                },
                2,
            ));
        }
    }
    if token.text.len() < 5 || !token.text.ends_with("in") || known(&token.text) {
        return None;
    }
    let clipped = format!("{}g", token.text);
    if known(&clipped) {
        return Some((
            Word {
                text: clipped,
                span: token.span,
                shape: TokenShape::Word,
                fragment: false,
            },
            1,
        ));
    }
    None
}

/// "The lamp's left (side)", "the desk's right hand side": a thing's side, said with a possessive (after "on
/// the", "to the" or "at the"). Returns the side word and how many tokens the phrase takes.
fn side_of_owner(
    lexicon: &Lexicon,
    tokens: &[Token],
    index: usize,
) -> Option<(&'static str, usize)> {
    let stem = tokens[index].text.strip_suffix("'s")?;
    if !matches!(
        lexicon.longest_phrase(&[stem]).map(|found| found.tag),
        Some(Tag::Class { .. })
    ) {
        return None;
    }
    let side = match tokens.get(index + 1).map(|next| next.text.as_str()) {
        Some("left") => "left",
        Some("right") => "right",
        _ => return None,
    };
    let text = |at: usize| tokens.get(at).map(|token| token.text.as_str());
    let used = match (text(index + 2), text(index + 3)) {
        (Some("side"), _) => 3,
        (Some("hand"), Some("side")) => 4,
        _ => 2,
    };
    Some((side, used))
}

/// The count of a note's multiplier ("x9", "x 12" is not one): `Some(9)`.
fn note_multiplier(text: &str) -> Option<u32> {
    // "x9" after the noun, or "3x" before it.
    let digits = text.strip_prefix('x').or_else(|| text.strip_suffix('x'))?;
    if digits.is_empty() || !digits.chars().all(|c| c.is_ascii_digit()) {
        return None;
    }
    digits.parse().ok().filter(|number| *number < 1_000_000)
}

/// Tags tokens into sentences of items; records notes and ignored spans.
pub fn tag_sentences(
    lexicon: &Lexicon,
    tokens: &[Token],
    notes: &mut Vec<Note>,
    ignored: &mut Vec<(Span, IgnoredReason)>,
) -> Vec<Sentence> {
    let words = rewrite(lexicon, tokens, ignored);
    let mut sentences = Vec::new();
    let mut current = Sentence::default();
    let mut index = 0;
    while index < words.len() {
        let word = &words[index];
        match word.shape {
            TokenShape::Stop | TokenShape::QuestionMark => {
                current.question_mark |= word.shape == TokenShape::QuestionMark;
                sentences.push(std::mem::take(&mut current));
                index += 1;
                continue;
            }
            TokenShape::Pause => {
                current.items.push(Item {
                    tag: ItemTag::Pause,
                    span: word.span,
                    text: word.text.clone(),
                    misspelled: false,
                });
                index += 1;
                continue;
            }
            TokenShape::Word => {}
        }
        current.span = Some(current.span.map_or(word.span, |span| span.cover(word.span)));
        if word.fragment {
            ignored.push((word.span, IgnoredReason::Stutter));
            index += 1;
            continue;
        }
        let window: Vec<&str> = words[index..]
            .iter()
            .take(6)
            .take_while(|word| word.shape == TokenShape::Word && !word.fragment)
            .map(|word| word.text.as_str())
            .collect();
        if let Some(found) = lexicon.longest_phrase(&window) {
            let last = &words[index + found.words - 1];
            let mut item = Item {
                tag: ItemTag::Lexicon(found.tag),
                span: word.span.cover(last.span),
                text: window[..found.words].join(" "),
                misspelled: false,
            };
            if let Tag::Class {
                class,
                plural: true,
            } = found.tag
            {
                if lexicon.names_one_thing(&item.text) {
                    item.tag = ItemTag::Lexicon(Tag::Class {
                        class,
                        plural: false,
                    });
                }
            }
            index += found.words;
            // "forty two", "forty-two": a tens word and a unit word make one number.
            if let Tag::Tens(tens) = found.tag {
                if let Some(next) = words
                    .get(index)
                    .filter(|next| next.shape == TokenShape::Word)
                {
                    if let Some(Found {
                        tag: Tag::Number(unit @ 1..=9),
                        words: 1,
                    }) = lexicon
                        .longest_phrase(&[next.text.as_str()])
                        .map(Found::from)
                    {
                        item.tag = ItemTag::Lexicon(Tag::Number(tens + unit));
                        item.span = item.span.cover(next.span);
                        item.text = format!("{} {}", item.text, next.text);
                        index += 1;
                    }
                }
                if let ItemTag::Lexicon(Tag::Tens(value)) = item.tag {
                    item.tag = ItemTag::Lexicon(Tag::Number(value));
                }
            }
            current.items.push(item);
            continue;
        }
        index += 1;
        if word.text.chars().all(|c| c.is_ascii_digit()) {
            match word.text.parse::<u32>() {
                Ok(number) if number < 1_000_000 => current.items.push(Item {
                    tag: ItemTag::Lexicon(Tag::Number(number)),
                    span: word.span,
                    text: word.text.clone(),
                    misspelled: false,
                }),
                _ => {
                    notes.push(Note {
                        span: word.span,
                        kind: NoteKind::NumberTooLarge {
                            written: word.text.clone(),
                        },
                    });
                    current.items.push(Item {
                        tag: ItemTag::TooLarge,
                        span: word.span,
                        text: word.text.clone(),
                        misspelled: false,
                    });
                }
            }
            continue;
        }
        match correct_spelling(lexicon, &word.text) {
            Spelling::Accepted(read_as, tag) => {
                notes.push(Note {
                    span: word.span,
                    kind: NoteKind::MisspellingAccepted {
                        written: word.text.clone(),
                        read_as: read_as.clone(),
                    },
                });
                current.items.push(Item {
                    tag: ItemTag::Lexicon(tag),
                    span: word.span,
                    text: read_as,
                    misspelled: true,
                });
            }
            Spelling::Unknown(suggestions) => {
                notes.push(Note {
                    span: word.span,
                    kind: NoteKind::UnknownWord {
                        written: word.text.clone(),
                        suggestions,
                    },
                });
                ignored.push((word.span, IgnoredReason::UnknownWord));
                current.items.push(Item {
                    tag: ItemTag::Unknown,
                    span: word.span,
                    text: word.text.clone(),
                    misspelled: false,
                });
            }
        }
    }
    sentences.push(current);
    sentences.retain(|sentence| sentence.span.is_some());
    sentences
}

/// A looked-up phrase, for pattern matching on length and tag together.
struct Found {
    tag: Tag,
    words: usize,
}

impl From<super::lexicon::Found> for Found {
    fn from(found: super::lexicon::Found) -> Found {
        Found {
            tag: found.tag,
            words: found.words,
        }
    }
}

enum Spelling {
    Accepted(String, Tag),
    Unknown(Vec<String>),
}

/// Reads an unknown word as a near lexicon word, or lists suggestions.
fn correct_spelling(lexicon: &Lexicon, word: &str) -> Spelling {
    let length = word.chars().count();
    if length > 30 || !word.chars().all(char::is_alphabetic) {
        return Spelling::Unknown(Vec::new());
    }
    let accept = accept_limit(word);
    let mut best: Option<(usize, &str, Tag)> = None;
    let mut suggestions: Vec<(usize, &str)> = Vec::new();
    // Only the three nearest suggestions are kept and only a word within `accept` can be accepted, so once
    // three lie within some distance, a farther candidate changes nothing and its alignment is cut off early.
    let mut nearest = [SUGGESTION_LIMIT; 3];
    let ascii = word.is_ascii();
    for (candidate, tag) in lexicon.spelling_words() {
        let limit = nearest[2].max(accept);
        let distance = if ascii && candidate.is_ascii() {
            ascii_distance_within(word.as_bytes(), candidate.as_bytes(), limit)
        } else {
            distance_within(word, candidate, limit)
        };
        if let Some(distance) = distance {
            suggestions.push((distance, candidate));
            if distance < nearest[2] {
                nearest[2] = distance;
                nearest.sort_unstable();
            }
            // A slip of the keys rarely changes a short word's first letter: "hooks" is a word we do not
            // know, not "books".
            let same_start = length >= 8 || word.chars().next() == candidate.chars().next();
            // Nor does it add a verb's ending: "jumped" is a verb we do not know, not "jumper".
            let same_ending = ["ed", "ing"]
                .iter()
                .all(|ending| !word.ends_with(ending) || candidate.ends_with(ending));
            if distance <= accept
                && same_start
                && same_ending
                && best.is_none_or(|(best_distance, ..)| distance < best_distance)
            {
                best = Some((distance, candidate, *tag));
            }
        }
    }
    if let Some((_, candidate, tag)) = best {
        return Spelling::Accepted(candidate.to_string(), tag);
    }
    if let Some((candidate, tag)) = abbreviation(lexicon, word) {
        return Spelling::Accepted(candidate.to_string(), tag);
    }
    // Only the three nearest are offered: select them, then order those three.
    if suggestions.len() > 3 {
        suggestions.select_nth_unstable(2);
        suggestions.truncate(3);
    }
    suggestions.sort_unstable();
    Spelling::Unknown(
        suggestions
            .into_iter()
            .take(3)
            .map(|(_, word)| word.to_string())
            .collect(),
    )
}

/// Reads a field-note abbreviation as the one thing, room or relation word it can shorten ("shlf", "bdrm",
/// "frdg", "cpbd"): a word of three to five letters, starting with the same letter, whose letters after the
/// first are consonants found in order in the lexicon word, ending on that word's last consonant, with no letter
/// twice in a row. Exactly one
/// such word must fit (two fits mean the note is unknown, never a guess), and it must be longer than the
/// abbreviation.
fn abbreviation<'lexicon>(lexicon: &'lexicon Lexicon, word: &str) -> Option<(&'lexicon str, Tag)> {
    const VOWELS: &[u8] = b"aeiouy";
    let bytes = word.as_bytes();
    // A letter said twice in a row is a sound drawn out ("brr", "hmmm", "shh"), not a shortening.
    if !(3..=5).contains(&bytes.len())
        || !bytes.iter().all(u8::is_ascii_lowercase)
        || bytes[1..].iter().any(|byte| VOWELS.contains(byte))
        || bytes.windows(2).any(|pair| pair[0] == pair[1])
    {
        return None;
    }
    let mut found: Option<(&str, Tag)> = None;
    for (candidate, tag) in lexicon.spelling_words() {
        if !matches!(tag, Tag::Class { .. } | Tag::Room(_) | Tag::Relation(_)) {
            continue;
        }
        let letters = candidate.as_bytes();
        if letters.len() <= bytes.len() || letters.first() != bytes.first() {
            continue;
        }
        let last_consonant = letters.iter().rev().find(|byte| !VOWELS.contains(byte));
        if last_consonant != bytes.last() || !is_subsequence(&bytes[1..], &letters[1..]) {
            continue;
        }
        // Two words for one thing ("sofa", "settee") are one reading, and the shorter word is kept; two
        // different things are two readings, and the abbreviation stays unknown.
        match found {
            Some((_, other_tag)) if other_tag != *tag => return None,
            Some((other, _)) if other.len() <= candidate.len() => {}
            _ => found = Some((candidate, *tag)),
        }
    }
    found
}

/// Whether `short` appears in `long` in order (not necessarily adjacent).
fn is_subsequence(short: &[u8], long: &[u8]) -> bool {
    let mut rest = long.iter();
    short.iter().all(|byte| rest.any(|other| other == byte))
}

/// Whether the kept items end with a landmark: a relation word, then a noun phrase of determiner, colour,
/// size and class words ending in the class word ("on the big table").
fn ends_landmark(kept: &[Item]) -> bool {
    let Some((last, before)) = kept.split_last() else {
        return false;
    };
    if !matches!(last.tag, ItemTag::Lexicon(Tag::Class { .. })) {
        return false;
    }
    for item in before.iter().rev() {
        match item.tag {
            ItemTag::Lexicon(Tag::Relation(_)) => return true,
            ItemTag::Lexicon(
                Tag::Determiner | Tag::Article | Tag::Colour(_) | Tag::Size(_) | Tag::Class { .. },
            ) => {}
            _ => return false,
        }
    }
    false
}

/// "In the middle of the table", "at the top of the shelf": a region phrase followed by "of" and a class word
/// names a part of that thing, not a part of the picture. The middle or top of a thing is on it; another part
/// ("the left end of", "the corner of the desk") is dropped, so the region is never stated of the picture.
/// "In the middle of the room" (a word for the whole view) keeps its region, and "on the right side of the
/// picture" is a region of the picture, not a relation to it.
fn parts_of_things(mut items: Vec<Item>) -> Vec<Item> {
    for index in 0..items.len().saturating_sub(1) {
        // "On the right side of the picture": a side of the whole view is a region of the picture.
        let side = match items[index].tag {
            ItemTag::Lexicon(Tag::Relation(Relation::LeftOf)) => Some(ImageRegion::Left),
            ItemTag::Lexicon(Tag::Relation(Relation::RightOf)) => Some(ImageRegion::Right),
            _ => None,
        };
        if let Some(side) = side {
            let of_view = items[index + 1..]
                .iter()
                .find(|item| !matches!(item.tag, ItemTag::Lexicon(Tag::Determiner)))
                .is_some_and(|item| item.tag == ItemTag::Lexicon(Tag::Scene));
            if of_view {
                items[index].tag = ItemTag::Lexicon(Tag::Region(side));
            }
            continue;
        }
        let ItemTag::Lexicon(Tag::Region(region)) = items[index].tag else {
            continue;
        };
        if items[index + 1].text != "of" {
            continue;
        }
        let names_thing = items[index + 2..]
            .iter()
            .find(|item| {
                !matches!(
                    item.tag,
                    ItemTag::Lexicon(
                        Tag::Determiner
                            | Tag::Article
                            | Tag::Colour(_)
                            | Tag::Size(_)
                            | Tag::Filler
                    )
                )
            })
            .is_some_and(|item| matches!(item.tag, ItemTag::Lexicon(Tag::Class { .. })));
        if names_thing {
            items[index].tag = match region {
                ImageRegion::Centre | ImageRegion::Top => {
                    ItemTag::Lexicon(Tag::Relation(Relation::On))
                }
                _ => ItemTag::Lexicon(Tag::Skip),
            };
        }
    }
    items
}

/// Removes fillers (with the pauses around them), function words and stuttered repeats. Unknown words stay:
/// no rule matches across one, so a clause with a word nobody understood is never read as something else
/// ("the plant is buy the window" is not "the plant is the window").
pub fn clean(items: Vec<Item>, ignored: &mut Vec<(Span, IgnoredReason)>) -> Vec<Item> {
    let items = parts_of_things(items);
    // Fillers and function words.
    let mut kept: Vec<Item> = Vec::with_capacity(items.len());
    let mut drop_next_pause = false;
    // "The bowl is on the table um next to the plate": a filler between a landmark and a relation word is a
    // pause, so the second relation is the subject's, not the landmark's.
    for item in items {
        match item.tag {
            ItemTag::Lexicon(Tag::Filler) => {
                ignored.push((item.span, IgnoredReason::Filler));
                if kept.last().is_some_and(|last| last.tag == ItemTag::Pause) {
                    kept.pop();
                }
                drop_next_pause = true;
            }
            ItemTag::Lexicon(Tag::Skip) => ignored.push((item.span, IgnoredReason::FunctionWord)),
            ItemTag::Pause if drop_next_pause => drop_next_pause = false,
            _ => {
                drop_next_pause = false;
                if matches!(item.tag, ItemTag::Lexicon(Tag::Relation(_))) && ends_landmark(&kept) {
                    let after = kept.last().map_or(0, |last| last.span.end);
                    let filler = ignored.iter().find(|(span, reason)| {
                        *reason == IgnoredReason::Filler
                            && span.start >= after
                            && span.end <= item.span.start
                    });
                    if let Some((span, _)) = filler {
                        kept.push(Item {
                            tag: ItemTag::Pause,
                            span: *span,
                            text: ",".to_string(),
                            misspelled: false,
                        });
                    }
                }
                kept.push(item);
            }
        }
    }
    // Stuttered repeats of one to four items, pauses between them ignored.
    let content: Vec<usize> = (0..kept.len())
        .filter(|&index| kept[index].tag != ItemTag::Pause)
        .collect();
    let mut removed = vec![false; kept.len()];
    let mut position = 0;
    while position < content.len() {
        let mut advanced = false;
        for length in (1..=4).rev() {
            if position + 2 * length > content.len() {
                continue;
            }
            let first = &content[position..position + length];
            let second = &content[position + length..position + 2 * length];
            let same = first
                .iter()
                .zip(second)
                .all(|(&a, &b)| kept[a].text == kept[b].text && kept[a].tag == kept[b].tag);
            // "a bowl under desk, desk w/ 10 vases": a landmark ending one clause and the subject opening
            // the next, a pause between, are two mentions, not a stutter.
            let paused = second[0] > first[length - 1] + 1;
            let landmark = first[0] > 0
                && matches!(kept[first[0] - 1].tag, ItemTag::Lexicon(Tag::Relation(_)));
            let same = same && !(length == 1 && paused && landmark);
            if same {
                let from = first[0];
                let to = second[0];
                for flag in removed.iter_mut().take(to).skip(from) {
                    *flag = true;
                }
                ignored.push((
                    kept[from].span.cover(kept[to - 1].span),
                    IgnoredReason::Stutter,
                ));
                position += length;
                advanced = true;
                break;
            }
        }
        if !advanced {
            position += 1;
        }
    }
    kept.into_iter()
        .zip(removed)
        .filter_map(|(item, removed)| (!removed).then_some(item))
        .collect()
}
