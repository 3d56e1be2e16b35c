//! Questions answered in the same note: "How many mugs? Exactly two.", "What's on the desk? A mug.",
//! "Where's the lamp? Left of the sofa.", "Is the mug left or right of the desk? Right.".
//!
//! Owns: reading what a question sentence leaves open (`Asked`: a count of a named class, an unnamed thing
//! with a stated place, the place of a named thing) and completing the fragment of the next sentence with
//! it, so the ordinary rules read "Exactly two." as "exactly two mugs" and "A mug." as "a mug on the desk".
//! A question is answered only by the sentence right after it, and only by a fragment of the expected shape;
//! anything else is read as it stands (and what no rule reads is reported as not understood).
//! Must not: build constraints; the rules and actions do that with the completed chunks.

use super::chunks::{AttachedRelation, Chunk, ChunkKind, NounPhrase, Quantity};
use super::constraint::{ImageRegion, Relation};
use super::lexicon::{Asks, Side};

/// What a question left open for the next sentence to answer.
#[derive(Clone, Debug, PartialEq)]
pub enum Asked {
    /// "How many mugs (are there)?": a number answers with a count of the phrase's class.
    Count(NounPhrase),
    /// "What's on the desk?", "what's that by the sofa?": a noun phrase answers, and the thing it names
    /// has the place the question stated.
    Thing { relations: Vec<AttachedRelation> },
    /// "Where's the lamp?": a relation phrase answers with the place of the named thing.
    Place(NounPhrase),
    /// "Is there a mug?": "there is" or "there isn't" answers with its presence or absence.
    Exists(NounPhrase),
    /// "Which side of the desk is the mug on?", "is the mug left or right of the desk?": a side answers with
    /// the subject left or right of the landmark.
    Side {
        subject: NounPhrase,
        landmark: NounPhrase,
    },
}

/// A chunk that may stand around the open part of a question without changing what it asks.
fn is_frame(kind: &ChunkKind) -> bool {
    matches!(
        kind,
        ChunkKind::Be
            | ChunkKind::There
            | ChunkKind::Separator
            | ChunkKind::Where
            | ChunkKind::You
            | ChunkKind::See
    )
}

/// What a question sentence (its chunks, relations attached) leaves open, if a fragment could answer it.
/// `has_focus`: with a pointed thing, "what's that on the desk?" asks about it, and "it's a mug" is a
/// relabel the ordinary rules read; no answer is completed then.
pub fn asked(asks: Asks, chunks: &[Chunk], has_focus: bool) -> Option<Asked> {
    let content: Vec<&ChunkKind> = chunks
        .iter()
        .map(|chunk| &chunk.kind)
        .filter(|kind| !is_frame(kind))
        .collect();
    match asks {
        Asks::Count => match content.as_slice() {
            // Only a plain class: "how many mugs on the desk?" asks for a count no constraint states.
            [ChunkKind::NounPhrase(phrase)]
                if phrase.class.is_some()
                    && phrase.deictic.is_none()
                    && phrase.quantity.is_none()
                    && phrase.relations.is_empty()
                    && phrase.region.is_none() =>
            {
                Some(Asked::Count(phrase.clone()))
            }
            _ => None,
        },
        Asks::Place => match content.as_slice() {
            [ChunkKind::NounPhrase(phrase)]
                if phrase.class.is_some()
                    && phrase.deictic.is_none()
                    && phrase.relations.is_empty()
                    && phrase.region.is_none() =>
            {
                Some(Asked::Place(phrase.clone()))
            }
            _ => None,
        },
        Asks::Thing => {
            let relations = match content.as_slice() {
                // "What's that on the desk?", "what's the thing by the sofa?"
                [ChunkKind::NounPhrase(phrase)]
                    if phrase.class.is_none()
                        && phrase.quantity.is_none()
                        && phrase.region.is_none()
                        && !(has_focus && phrase.deictic.is_some()) =>
                {
                    phrase.relations.clone()
                }
                // "What's beside the desk?"
                [ChunkKind::Relation(relation), ChunkKind::NounPhrase(landmark)]
                    if *relation != Relation::Between && landmark.relations.is_empty() =>
                {
                    vec![AttachedRelation {
                        relation: *relation,
                        landmarks: vec![landmark.clone()],
                    }]
                }
                _ => return None,
            };
            let named = |phrase: &NounPhrase| phrase.class.is_some() && phrase.deictic.is_none();
            let well_formed = relations.len() == 1
                && relations[0].relation != Relation::Between
                && relations[0].landmarks.iter().all(named);
            well_formed.then_some(Asked::Thing { relations })
        }
        Asks::Exists => match content.as_slice() {
            [ChunkKind::NounPhrase(phrase)]
                if phrase.class.is_some()
                    && phrase.deictic.is_none()
                    && matches!(phrase.quantity, None | Some(Quantity::Some))
                    && phrase.relations.is_empty()
                    && phrase.region.is_none() =>
            {
                Some(Asked::Exists(phrase.clone()))
            }
            _ => None,
        },
        Asks::Side => {
            // The question word before both things names the landmark first ("which side of the desk is
            // the mug on"); between them, the subject ("is the mug left or right of the desk").
            let asked_at = chunks
                .iter()
                .position(|chunk| chunk.kind == ChunkKind::Where)?;
            let things: Vec<(usize, &NounPhrase)> = chunks
                .iter()
                .enumerate()
                .filter_map(|(index, chunk)| match &chunk.kind {
                    ChunkKind::NounPhrase(phrase) => Some((index, phrase)),
                    _ => None,
                })
                .collect();
            let plain = |phrase: &NounPhrase| {
                phrase.class.is_some()
                    && phrase.deictic.is_none()
                    && phrase.relations.is_empty()
                    && phrase.region.is_none()
                    && !matches!(phrase.quantity, Some(Quantity::None | Quantity::Exactly(0)))
            };
            // Nothing but the two things, the question word, the verb and a closing "on".
            let others = content.iter().all(|kind| {
                matches!(
                    kind,
                    ChunkKind::NounPhrase(_) | ChunkKind::Relation(Relation::On)
                )
            });
            match things.as_slice() {
                [(first_at, first), (_, second)] if others && plain(first) && plain(second) => {
                    let (subject, landmark) = if asked_at < *first_at {
                        (second, first)
                    } else {
                        (first, second)
                    };
                    Some(Asked::Side {
                        subject: (*subject).clone(),
                        landmark: (*landmark).clone(),
                    })
                }
                _ => None,
            }
        }
        Asks::Other => None,
    }
}

/// Completes the fragment at the start of the sentence after a question (chunks before relations are
/// attached); returns the chunks unchanged when the sentence is not an answer of the expected shape.
pub fn complete(asked: &Asked, chunks: Vec<Chunk>) -> Vec<Chunk> {
    // A pause or "yes" opening the answer is left out of the fragment.
    let start = chunks
        .iter()
        .position(|chunk| chunk.kind != ChunkKind::Separator)
        .unwrap_or(chunks.len());
    let mut chunks = chunks;
    let fragment = chunks.split_off(start);
    chunks.extend(complete_clause(asked, fragment));
    chunks
}

/// `complete` on a sentence that opens with the fragment.
fn complete_clause(asked: &Asked, chunks: Vec<Chunk>) -> Vec<Chunk> {
    let mut chunks = chunks;
    // The fragment is the whole sentence or its first clause: "Exactly two.", "A mug, which you missed."
    let clause_end = chunks
        .iter()
        .position(|chunk| matches!(chunk.kind, ChunkKind::Separator | ChunkKind::And))
        .unwrap_or(chunks.len());
    match asked {
        Asked::Count(phrase) => {
            if clause_end != 1 {
                return chunks;
            }
            if let ChunkKind::Number { quantity, .. } = chunks[0].kind {
                let mut counted = phrase.clone();
                counted.quantity = Some(quantity);
                counted.article = false;
                counted.span = chunks[0].span;
                chunks[0].kind = ChunkKind::NounPhrase(counted);
            }
        }
        Asked::Thing { relations } => {
            let answer = match &chunks[..clause_end] {
                // "A mug.", "The lamp."
                [Chunk {
                    kind: ChunkKind::NounPhrase(phrase),
                    ..
                }] => Some((phrase.clone(), 1)),
                // "It's a mug."
                [Chunk {
                    kind: ChunkKind::NounPhrase(pronoun),
                    ..
                }, Chunk {
                    kind: ChunkKind::Be,
                    ..
                }, Chunk {
                    kind: ChunkKind::NounPhrase(phrase),
                    ..
                }] if pronoun.class.is_none()
                    && pronoun.deictic.is_some_and(|word| word.pronoun) =>
                {
                    Some((phrase.clone(), 3))
                }
                _ => None,
            };
            if let Some((mut phrase, used)) = answer {
                let plain = phrase.class.is_some()
                    && phrase.deictic.is_none()
                    && phrase.relations.is_empty()
                    && phrase.region.is_none()
                    && !matches!(phrase.quantity, Some(Quantity::None | Quantity::Exactly(0)));
                if plain {
                    phrase.relations = relations.clone();
                    let span = chunks[0].span.cover(chunks[used - 1].span);
                    chunks.splice(
                        0..used,
                        [Chunk {
                            kind: ChunkKind::NounPhrase(phrase),
                            span,
                            misspelled: chunks[..used].iter().any(|chunk| chunk.misspelled),
                        }],
                    );
                }
            }
        }
        Asked::Exists(phrase) => {
            // "There is.", "there isn't": the question's thing goes after the verb.
            let fragment = match &chunks[..clause_end] {
                [Chunk {
                    kind: ChunkKind::There,
                    ..
                }, Chunk {
                    kind: ChunkKind::Be,
                    ..
                }] => Some(2),
                [Chunk {
                    kind: ChunkKind::There,
                    ..
                }, Chunk {
                    kind: ChunkKind::Be,
                    ..
                }, Chunk {
                    kind: ChunkKind::Negation,
                    ..
                }] => Some(3),
                _ => None,
            };
            if let Some(used) = fragment {
                let mut named = phrase.clone();
                named.quantity = None;
                named.article = true;
                named.span = chunks[used - 1].span;
                let span = named.span;
                chunks.insert(
                    used,
                    Chunk {
                        kind: ChunkKind::NounPhrase(named),
                        span,
                        misspelled: false,
                    },
                );
            }
        }
        Asked::Side { subject, landmark } => {
            // "Right.", "The left.", "On the left.": the side alone.
            // "The left", "the right side": a determiner left alone before the side.
            let said = match &chunks[..clause_end] {
                [Chunk {
                    kind: ChunkKind::Other,
                    ..
                }, rest @ ..] => rest,
                all => all,
            };
            let side = match said {
                [Chunk {
                    kind: ChunkKind::Side(side),
                    ..
                }] => Some(*side),
                [Chunk {
                    kind: ChunkKind::Region(ImageRegion::Left),
                    ..
                }] => Some(Side::Left),
                [Chunk {
                    kind: ChunkKind::Region(ImageRegion::Right),
                    ..
                }] => Some(Side::Right),
                _ => None,
            };
            if let Some(side) = side {
                let span = chunks[0].span.cover(chunks[clause_end - 1].span);
                let relation = match side {
                    Side::Left => Relation::LeftOf,
                    Side::Right => Relation::RightOf,
                };
                let phrase = |named: &NounPhrase| {
                    let mut named = named.clone();
                    named.quantity = None;
                    named.article = false;
                    named.span = span;
                    Chunk {
                        kind: ChunkKind::NounPhrase(named),
                        span,
                        misspelled: false,
                    }
                };
                let said = [
                    phrase(subject),
                    Chunk {
                        kind: ChunkKind::Relation(relation),
                        span,
                        misspelled: false,
                    },
                    phrase(landmark),
                ];
                chunks.splice(0..clause_end, said);
            }
        }
        Asked::Place(phrase) => {
            // "On the desk.", "Left of the sofa." (a relation and its landmark, nothing else).
            let fragment = matches!(
                &chunks[..clause_end],
                [Chunk {
                    kind: ChunkKind::Relation(relation),
                    ..
                }, Chunk {
                    kind: ChunkKind::NounPhrase(landmark),
                    ..
                }] if *relation != Relation::Between && landmark.class.is_some()
            );
            if fragment {
                let mut subject = phrase.clone();
                subject.quantity = None;
                subject.article = false;
                subject.span = chunks[0].span;
                let span = chunks[0].span;
                chunks.insert(
                    0,
                    Chunk {
                        kind: ChunkKind::NounPhrase(subject),
                        span,
                        misspelled: false,
                    },
                );
            }
        }
    }
    chunks
}
