//! Chunking: tagged items to phrases (noun phrases, relations, places, attributes), then self-repairs and
//! post-modifiers.
//!
//! Owns: `Chunk`, `NounPhrase`, the noun-phrase grammar (determiner, deictic or quantity, attributes, head),
//! quantity arithmetic ("more than 5" -> at least 6), self-repair ("the mug, no, the bowl": the earlier
//! phrase of the same kind is dropped) and attaching relation and region phrases to the noun phrase they
//! follow ("the mug next to the sink", "the chair on the left").
//! Must not: build constraints; `rules` and `actions` do that.

use crate::ids::{ClassId, RoomId};

use super::constraint::{Attribute, ImageRegion, Relation, Span};
use super::lexicon::{Asks, Comparator, QuantityWord, Side, Tag};
use super::parse::IgnoredReason;
use super::tagging::{Item, ItemTag};

/// A stated quantity of a noun phrase.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Quantity {
    Exactly(u32),
    AtLeast(u32),
    AtMost(u32),
    /// "some", "any".
    Some,
    /// "no".
    None,
}

/// A deictic word heading or determining a noun phrase.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DeicticWord {
    pub pronoun: bool,
    pub plural: bool,
}

/// A relation phrase attached to a noun phrase.
#[derive(Clone, Debug, PartialEq)]
pub struct AttachedRelation {
    pub relation: Relation,
    pub landmarks: Vec<NounPhrase>,
}

/// A noun phrase in words.
#[derive(Clone, Debug, PartialEq)]
pub struct NounPhrase {
    pub class: Option<ClassId>,
    pub deictic: Option<DeicticWord>,
    pub plural: bool,
    pub attributes: Vec<Attribute>,
    pub quantity: Option<Quantity>,
    pub relations: Vec<AttachedRelation>,
    pub region: Option<ImageRegion>,
    /// Introduced by "a" or "an": the shape of an identity statement ("is a towel").
    pub article: bool,
    pub span: Span,
}

/// What a chunk is.
#[derive(Clone, Debug, PartialEq)]
pub enum ChunkKind {
    NounPhrase(NounPhrase),
    Be,
    Negation,
    /// "no" not starting a noun phrase: a repair cue or a negation.
    No,
    There,
    Relation(Relation),
    Side(Side),
    Region(ImageRegion),
    Room(RoomId),
    /// A phrase naming the whole view ("the scene", "this room").
    Scene,
    /// A relation stated of two things at once ("side by side").
    Reciprocal(Relation),
    Attributes(Vec<Attribute>),
    /// A number or quantity word with no noun after it ("exactly two", "none"); `bare` for a number word
    /// alone, with no comparator ("there's one").
    Number {
        quantity: Quantity,
        bare: bool,
    },
    We,
    You,
    Called,
    Missed,
    Have,
    Holds,
    See,
    Remove,
    Count,
    Change,
    Pointing,
    As,
    And,
    /// "or" between two things.
    Or,
    /// "where" in a statement: the cleft "right of the desk is where the mug is".
    Where,
    Separator,
    Repair,
    /// Anything else; blocks rules from matching across it.
    Other,
}

/// One chunk with its span.
#[derive(Clone, Debug, PartialEq)]
pub struct Chunk {
    pub kind: ChunkKind,
    pub span: Span,
    pub misspelled: bool,
}

fn lexicon_tag(item: Option<&Item>) -> Option<Tag> {
    match item?.tag {
        ItemTag::Lexicon(tag) => Some(tag),
        _ => None,
    }
}

fn attribute_of(tag: Tag) -> Option<Attribute> {
    match tag {
        Tag::Colour(colour) => Some(Attribute::Colour(colour)),
        Tag::Size(size) => Some(Attribute::Size(size)),
        _ => None,
    }
}

fn apply_comparator(comparator: Comparator, number: u32) -> Quantity {
    match comparator {
        Comparator::Exactly => Quantity::Exactly(number),
        Comparator::AtLeast => Quantity::AtLeast(number),
        Comparator::AtMost => Quantity::AtMost(number),
        Comparator::MoreThan => Quantity::AtLeast(number.saturating_add(1)),
        Comparator::FewerThan => Quantity::AtMost(number.saturating_sub(1)),
    }
}

/// Tries to read a noun phrase (or a room or dangling number) at `start`; returns the chunk and items used.
fn noun_phrase_at(items: &[Item], start: usize) -> Option<(Chunk, usize)> {
    let mut index = start;
    let mut quantity = None;
    let mut deictic = None;
    let mut determiner = false;
    let mut article = false;
    let mut misspelled = false;
    let mut lead_number = None;
    let mut number_compared = false;
    let mut quantity_word = false;
    match lexicon_tag(items.get(index))? {
        Tag::Determiner => {
            determiner = true;
            index += 1;
        }
        Tag::Article => {
            article = true;
            index += 1;
        }
        Tag::Deictic { pronoun, plural } => {
            deictic = Some(DeicticWord { pronoun, plural });
            index += 1;
        }
        Tag::Quantity(word) => {
            quantity = Some(match word {
                QuantityWord::Exactly(n) => Quantity::Exactly(n),
                QuantityWord::AtLeast(n) => Quantity::AtLeast(n),
                QuantityWord::Some => Quantity::Some,
                QuantityWord::None => Quantity::None,
            });
            quantity_word = true;
            index += 1;
        }
        Tag::No => {
            quantity = Some(Quantity::None);
            index += 1;
        }
        Tag::Comparator(comparator) => {
            if let Some(Tag::Number(number)) = lexicon_tag(items.get(index + 1)) {
                quantity = Some(apply_comparator(comparator, number));
                lead_number = Some(number);
                number_compared = true;
                index += 2;
            } else {
                return None;
            }
        }
        _ => {}
    }
    if quantity.is_none() && deictic.is_none() {
        if let Some(Tag::Number(number)) = lexicon_tag(items.get(index)) {
            quantity = Some(Quantity::Exactly(number));
            lead_number = Some(number);
            index += 1;
        }
    }
    // A room word before a class word modifies it: "the kitchen table" is a table.
    if let (Some(Tag::Room(_)), Some(Tag::Class { .. })) = (
        lexicon_tag(items.get(index)),
        lexicon_tag(items.get(index + 1)),
    ) {
        index += 1;
    }
    // So does a singular class word before another ("the toy box" is a box, "the sofa cushion" a pillow), and,
    // after a determiner or "a", a word nobody knows ("the bedside table" is a table; the word is still
    // reported as unknown).
    if let (Some(item), Some(Tag::Class { .. })) =
        (items.get(index), lexicon_tag(items.get(index + 1)))
    {
        let class_modifier = matches!(item.tag, ItemTag::Lexicon(Tag::Class { plural: false, .. }));
        let unknown_modifier = item.tag == ItemTag::Unknown && (determiner || article);
        if class_modifier || unknown_modifier {
            index += 1;
        }
    }
    // A room after a determiner: "the kitchen".
    if let Some(Tag::Room(room)) = lexicon_tag(items.get(index)) {
        if quantity.is_none() && deictic.is_none() {
            let item = &items[index];
            let span = items[start].span.cover(item.span);
            return Some((
                Chunk {
                    kind: ChunkKind::Room(room),
                    span,
                    misspelled: item.misspelled,
                },
                index + 1 - start,
            ));
        }
    }
    // The whole view after a determiner or deictic: "the scene", "this room".
    if let Some(Tag::Scene) = lexicon_tag(items.get(index)) {
        if quantity.is_none() {
            let span = items[start].span.cover(items[index].span);
            return Some((
                Chunk {
                    kind: ChunkKind::Scene,
                    span,
                    misspelled: items[index].misspelled,
                },
                index + 1 - start,
            ));
        }
    }
    let mut attributes = Vec::new();
    while let Some(attribute) = lexicon_tag(items.get(index)).and_then(attribute_of) {
        misspelled |= items[index].misspelled;
        attributes.push(attribute);
        index += 1;
    }
    let mut class = None;
    let mut plural = false;
    let mut has_head = false;
    match lexicon_tag(items.get(index)) {
        Some(Tag::Class {
            class: head,
            plural: head_plural,
        }) => {
            misspelled |= items[index].misspelled;
            class = Some(head);
            plural = head_plural;
            has_head = true;
            index += 1;
        }
        Some(Tag::Thing {
            plural: head_plural,
        }) => {
            plural = head_plural;
            has_head = true;
            index += 1;
        }
        Some(Tag::Number(1))
            if attributes.is_empty()
                && (deictic.is_some() || (quantity.is_some() && lead_number.is_none())) =>
        {
            // "that one", "this one", "a single one".
            has_head = true;
            index += 1;
        }
        Some(Tag::Deictic {
            pronoun,
            plural: true,
        }) if (lead_number.is_some() || (quantity_word && quantity == Some(Quantity::None)))
            && attributes.is_empty() =>
        {
            // "two of them", "three of those", "none of them".
            deictic = Some(DeicticWord {
                pronoun,
                plural: true,
            });
            has_head = true;
            index += 1;
        }
        _ => {}
    }
    if !has_head {
        if let Some(word) = deictic.filter(|_| attributes.is_empty()) {
            let span = items[start].span;
            return Some((
                Chunk {
                    kind: ChunkKind::NounPhrase(NounPhrase {
                        class: None,
                        deictic: Some(word),
                        plural: word.plural,
                        attributes: Vec::new(),
                        quantity: None,
                        relations: Vec::new(),
                        region: None,
                        article: false,
                        span,
                    }),
                    span,
                    misspelled: false,
                },
                1,
            ));
        }
        let stated = lead_number.is_some() || quantity_word;
        if let (Some(quantity), true) = (quantity, stated && attributes.is_empty() && !determiner) {
            let span = items[start].span.cover(items[index - 1].span);
            return Some((
                Chunk {
                    kind: ChunkKind::Number {
                        quantity,
                        bare: lead_number.is_some() && !number_compared,
                    },
                    span,
                    misspelled: false,
                },
                index - start,
            ));
        }
        return None;
    }
    if let Some(word) = deictic {
        plural |= word.plural;
    }
    // "laptop x2 on desk" (read as "2 laptop"): a class word counted more than once names several things.
    if class.is_some()
        && matches!(
            quantity,
            Some(Quantity::Exactly(2..) | Quantity::AtLeast(2..))
        )
    {
        plural = true;
    }
    let span = items[start].span.cover(items[index - 1].span);
    Some((
        Chunk {
            kind: ChunkKind::NounPhrase(NounPhrase {
                class,
                deictic,
                plural,
                attributes,
                quantity,
                relations: Vec::new(),
                region: None,
                article,
                span,
            }),
            span,
            misspelled,
        },
        index - start,
    ))
}

/// Groups the items of one sentence into chunks.
pub fn chunk(items: &[Item]) -> Vec<Chunk> {
    let mut chunks = Vec::with_capacity(items.len());
    let mut index = 0;
    while index < items.len() {
        if let Some((mut chunk, used)) = noun_phrase_at(items, index) {
            // "Three fish tanks": a class word read through a spelling guess ("fish" as "dish") directly
            // before a word nobody knows is rather a modifier of an unknown head (English compounds end in
            // their head), so the phrase names nothing we know. A word known as written keeps its reading
            // ("twelve mugs total").
            // So is a singular class word known as written after "a" ("that's a coat rack"): English compounds
            // end in their head. Elsewhere a word after the noun is more often a verb or an aside ("the mug
            // you've got", "two stairs total"), and a plural modifier is rare.
            // And so is a bare singular class word right after the verb ("that's dog food").
            let after_verb = index > 0
                && items[index - 1].tag == ItemTag::Lexicon(Tag::Be)
                && matches!(items[index].tag, ItemTag::Lexicon(Tag::Class { .. }));
            let named = matches!(&chunk.kind, ChunkKind::NounPhrase(phrase)
                if phrase.class.is_some() && (chunk.misspelled || ((phrase.article || after_verb) && !phrase.plural)));
            // A participle after the noun ("the dog by the stove begging") is no compound head.
            let head_unknown = items.get(index + used.max(1)).is_some_and(|next| {
                next.tag == ItemTag::Unknown
                    && (chunk.misspelled
                        || !(next.text.ends_with("ing") || next.text.ends_with("ed")))
            });
            if named && head_unknown {
                chunk.kind = ChunkKind::Other;
            }
            chunks.push(chunk);
            index += used.max(1);
            continue;
        }
        let item = &items[index];
        // "The lamp is behind the chair, which is next to the desk": "which" (or "who") after a pause and
        // before a verb is the thing named just before it.
        if matches!(item.text.as_str(), "which" | "who")
            && matches!(
                items.get(index + 1).map(|next| next.tag),
                Some(ItemTag::Lexicon(Tag::Be))
            )
        {
            let before = chunks
                .len()
                .checked_sub(2)
                .and_then(|at| (chunks[at + 1].kind == ChunkKind::Separator).then(|| &chunks[at]));
            if let Some(Chunk {
                kind: ChunkKind::NounPhrase(named),
                ..
            }) = before
            {
                if named.class.is_some() && named.deictic.is_none() {
                    let phrase = NounPhrase {
                        quantity: None,
                        relations: Vec::new(),
                        region: None,
                        article: false,
                        span: item.span,
                        ..named.clone()
                    };
                    chunks.push(Chunk {
                        kind: ChunkKind::NounPhrase(phrase),
                        span: item.span,
                        misspelled: false,
                    });
                    index += 1;
                    continue;
                }
            }
        }
        let kind = match item.tag {
            ItemTag::Pause => ChunkKind::Separator,
            ItemTag::Unknown | ItemTag::TooLarge => ChunkKind::Other,
            ItemTag::Lexicon(tag) => match tag {
                Tag::Be => ChunkKind::Be,
                Tag::Negation => ChunkKind::Negation,
                Tag::No => ChunkKind::No,
                Tag::There => ChunkKind::There,
                Tag::Relation(relation) => ChunkKind::Relation(relation),
                Tag::Side(side) => ChunkKind::Side(side),
                Tag::Region(region) => ChunkKind::Region(region),
                Tag::Room(room) => ChunkKind::Room(room),
                Tag::Scene => ChunkKind::Scene,
                Tag::Reciprocal(relation) => ChunkKind::Reciprocal(relation),
                Tag::Colour(_) | Tag::Size(_) => {
                    ChunkKind::Attributes(attribute_of(tag).into_iter().collect())
                }
                Tag::Number(number) => ChunkKind::Number {
                    quantity: Quantity::Exactly(number),
                    bare: true,
                },
                Tag::We => ChunkKind::We,
                Tag::You => ChunkKind::You,
                Tag::Called => ChunkKind::Called,
                Tag::Missed => ChunkKind::Missed,
                Tag::Have => ChunkKind::Have,
                Tag::Holds => ChunkKind::Holds,
                Tag::See => ChunkKind::See,
                Tag::Remove => ChunkKind::Remove,
                Tag::Count => ChunkKind::Count,
                Tag::Change => ChunkKind::Change,
                Tag::Pointing => ChunkKind::Pointing,
                Tag::As => ChunkKind::As,
                Tag::And => ChunkKind::And,
                Tag::Or => ChunkKind::Or,
                Tag::Repair => ChunkKind::Repair,
                // "Right of the desk is where the mug is": "where" inside a statement joins a cleft.
                Tag::Question(Asks::Place | Asks::Side) => ChunkKind::Where,
                Tag::Request | Tag::Question(_) | Tag::Thanks | Tag::Greeting | Tag::Talk => {
                    ChunkKind::Separator
                }
                _ => ChunkKind::Other,
            },
        };
        chunks.push(Chunk {
            kind,
            span: item.span,
            misspelled: item.misspelled,
        });
        index += 1;
    }
    chunks
}

/// The kind a self-repair compares: the repaired phrase and its replacement must be alike.
#[derive(Clone, Copy, PartialEq, Eq)]
enum RepairKind {
    Noun,
    Relation,
    Attribute,
    Room,
}

fn repair_kind(kind: &ChunkKind) -> Option<RepairKind> {
    match kind {
        ChunkKind::NounPhrase(_) | ChunkKind::Number { .. } => Some(RepairKind::Noun),
        ChunkKind::Relation(_) | ChunkKind::Side(_) => Some(RepairKind::Relation),
        ChunkKind::Attributes(_) => Some(RepairKind::Attribute),
        ChunkKind::Room(_) => Some(RepairKind::Room),
        // "On the right, no sorry, the left of the desk": a region and a relation both say where.
        ChunkKind::Region(_) => Some(RepairKind::Relation),
        _ => None,
    }
}

/// Whether a repair replaces the number of a counted noun phrase with a bare number ("two books, no, three").
fn counted_then_number(earlier: &ChunkKind, replacement: &ChunkKind) -> bool {
    matches!(
        (earlier, replacement),
        (
            ChunkKind::NounPhrase(NounPhrase {
                class: Some(_),
                deictic: None,
                quantity: Some(Quantity::Exactly(_) | Quantity::AtLeast(_) | Quantity::AtMost(_)),
                ..
            }),
            ChunkKind::Number { .. },
        )
    )
}

/// Drops a repair's cue at `index`, the pauses just before it (never reaching back to `from`, the repaired
/// chunk) and everything after it up to `to`, the replacement already moved into place, reporting the dropped
/// words as a self-repair.
fn drop_repair_cue(
    chunks: &mut Vec<Chunk>,
    ignored: &mut Vec<(Span, IgnoredReason)>,
    from: usize,
    index: usize,
    to: usize,
) {
    let mut cut = index;
    while cut > from + 1 && chunks[cut - 1].kind == ChunkKind::Separator {
        cut -= 1;
    }
    ignored.push((
        chunks[cut].span.cover(chunks[to].span),
        IgnoredReason::SelfRepair,
    ));
    chunks.drain(cut..=to);
}

/// Applies self-repairs: at a cue, the nearest earlier chunk of the same kind as the chunk after the cue is
/// dropped together with everything up to the cue.
pub fn repair(chunks: Vec<Chunk>, ignored: &mut Vec<(Span, IgnoredReason)>) -> Vec<Chunk> {
    let mut chunks = chunks;
    let mut index = 0;
    while index < chunks.len() {
        let is_cue = matches!(chunks[index].kind, ChunkKind::Repair | ChunkKind::No);
        if !is_cue {
            index += 1;
            continue;
        }
        let next = (index + 1..chunks.len()).find(|&j| chunks[j].kind != ChunkKind::Separator);
        // "A rug and no, the microwave is not on the counter": "and no" joins a new clause, it repairs
        // nothing before it.
        let joined = chunks[index].kind == ChunkKind::No
            && index > 0
            && chunks[index - 1].kind == ChunkKind::And;
        let wanted = next
            .filter(|_| !joined)
            .and_then(|j| repair_kind(&chunks[j].kind));
        // "This room is the bed, no sorry, the kitchen": a room may take back a thing said in its place.
        let mut earlier = wanted.and_then(|wanted| {
            let near = (index.saturating_sub(4)..index).rev();
            near.clone()
                .find(|&k| repair_kind(&chunks[k].kind) == Some(wanted))
                .or_else(|| near.clone().find(|&k| wanted == RepairKind::Room
                    && matches!(&chunks[k].kind, ChunkKind::NounPhrase(phrase) if phrase.class.is_some())))
        });
        // "In the dishwasher, no, the sink": a landmark we do not know, repaired by one we do. The words
        // after the relation up to the cue, none of them known as a thing, are what the cue takes back.
        if earlier.is_none() && wanted == Some(RepairKind::Noun) {
            let mut before_cue = index;
            while before_cue > 0 && chunks[before_cue - 1].kind == ChunkKind::Separator {
                before_cue -= 1;
            }
            let unknown_thing = |kind: &ChunkKind| match kind {
                ChunkKind::Other => true,
                ChunkKind::NounPhrase(phrase) => phrase.class.is_none() && phrase.deictic.is_none(),
                _ => false,
            };
            let mut start = before_cue;
            while start > 0 && unknown_thing(&chunks[start - 1].kind) {
                start -= 1;
            }
            let any_unknown = (start..before_cue).any(|k| chunks[k].kind == ChunkKind::Other);
            if any_unknown && start > 0 && matches!(chunks[start - 1].kind, ChunkKind::Relation(_))
            {
                earlier = Some(start);
            }
        }
        // "Five pillows on the couch, no wait, six": a bare number repairs the nearest counted noun phrase,
        // past a landmark named after it.
        if let Some(j) = next.filter(|_| !joined) {
            let counted = (index.saturating_sub(6)..index)
                .rev()
                .find(|&k| counted_then_number(&chunks[k].kind, &chunks[j].kind));
            if counted.is_some() {
                earlier = counted;
            }
        }
        // "The television is in front of the sofa, no wait, the sofa's in front of the tv": a whole clause
        // after the cue repairs the whole clause before it.
        if let Some(j) = next.filter(|_| !joined) {
            let clause_follows =
                matches!(chunks[j].kind, ChunkKind::NounPhrase(_) | ChunkKind::There)
                    && chunks
                        .get(j + 1)
                        .is_some_and(|chunk| chunk.kind == ChunkKind::Be);
            let mut before_cue = index;
            while before_cue > 0 && chunks[before_cue - 1].kind == ChunkKind::Separator {
                before_cue -= 1;
            }
            let start = (0..before_cue)
                .rev()
                .find(|&k| matches!(chunks[k].kind, ChunkKind::Separator | ChunkKind::And))
                .map_or(0, |k| k + 1);
            // The clause before has the same opening (a noun phrase, or "there", then a verb) and one verb:
            // a run-on of several clauses is not taken back whole.
            let same_opening = std::mem::discriminant(&chunks[start].kind)
                == std::mem::discriminant(&chunks[j].kind)
                && chunks
                    .get(start + 1)
                    .is_some_and(|chunk| chunk.kind == ChunkKind::Be);
            let verbs = (start..before_cue)
                .filter(|&k| chunks[k].kind == ChunkKind::Be)
                .count();
            let clause_before = same_opening && verbs == 1;
            if clause_follows && clause_before {
                earlier = Some(start);
            }
        }
        // "There's a bag on the chair, no, a box": a replacement with "a" repairs the thing said with "a"
        // before the landmark ("a bag"), not the landmark ("the chair"); what came between stays.
        let swapped = match (earlier, next) {
            (Some(near), Some(to)) if near > 0 => match (&chunks[near].kind, &chunks[to].kind) {
                (ChunkKind::NounPhrase(landmark), ChunkKind::NounPhrase(replacement))
                    if replacement.article
                        && replacement.class.is_some()
                        && !landmark.article
                        && matches!(chunks[near - 1].kind, ChunkKind::Relation(_)) =>
                {
                    (index.saturating_sub(6)..near - 1).rev().find(|&k| {
                        matches!(&chunks[k].kind, ChunkKind::NounPhrase(phrase)
                            if phrase.article && phrase.class.is_some() && phrase.deictic.is_none())
                    })
                }
                _ => None,
            },
            _ => None,
        };
        if let (Some(from), Some(to)) = (swapped, next) {
            chunks[from] = chunks[to].clone();
            drop_repair_cue(&mut chunks, ignored, from, index, to);
            index = from + 1;
            continue;
        }
        match (earlier, next) {
            // "Nine chairs, actually no, six": a bare number after the cue replaces only the quantity of the
            // counted noun phrase it repairs.
            (Some(from), Some(to)) if counted_then_number(&chunks[from].kind, &chunks[to].kind) => {
                if let (ChunkKind::NounPhrase(phrase), ChunkKind::Number { quantity, .. }) =
                    (&chunks[from].kind, &chunks[to].kind)
                {
                    let mut phrase = phrase.clone();
                    phrase.quantity = Some(*quantity);
                    let misspelled = chunks[from].misspelled || chunks[to].misspelled;
                    chunks[from] = Chunk {
                        kind: ChunkKind::NounPhrase(phrase),
                        span: chunks[from].span,
                        misspelled,
                    };
                    // What came between ("on the couch" in "five pillows on the couch, no wait, six")
                    // stays; the cue, its pauses and the number go.
                    drop_repair_cue(&mut chunks, ignored, from, index, to);
                }
                index = from + 1;
            }
            (Some(from), Some(to)) => {
                ignored.push((
                    chunks[from].span.cover(chunks[index].span),
                    IgnoredReason::SelfRepair,
                ));
                chunks.drain(from..to);
                index = from;
            }
            _ => {
                // "No the box is not in front of the sofa", "and no the microwave is ...": "no" opening a
                // sentence or clause before a noun phrase with no quantity of its own answers what came
                // before; it does not count the noun.
                let opens_sentence = index == 0
                    || matches!(
                        chunks[index - 1].kind,
                        ChunkKind::Separator | ChunkKind::And
                    );
                let before_plain_phrase = next.is_some_and(|j| {
                    matches!(&chunks[j].kind, ChunkKind::NounPhrase(phrase)
                        if phrase.quantity.is_none() && (phrase.class.is_some() || phrase.deictic.is_some()))
                });
                if chunks[index].kind == ChunkKind::Repair
                    || next.is_none()
                    || next != Some(index + 1)
                    || (chunks[index].kind == ChunkKind::No
                        && opens_sentence
                        && before_plain_phrase)
                {
                    // A cue with nothing to repair, or "no," as a discourse marker.
                    ignored.push((chunks[index].span, IgnoredReason::FunctionWord));
                    chunks.remove(index);
                } else {
                    chunks[index].kind = ChunkKind::Negation;
                    index += 1;
                }
            }
        }
    }
    chunks
}

/// Attaches relation and region phrases to the noun phrase before them, and merges attribute lists
/// ("black and white").
pub fn attach(chunks: Vec<Chunk>, is_structure: impl Fn(ClassId) -> bool) -> Vec<Chunk> {
    let mut chunks = chunks;
    counts_after_nouns(&mut chunks);
    deny_alternatives(&mut chunks);
    // Attribute lists.
    let mut index = 0;
    while index + 1 < chunks.len() {
        if let ChunkKind::Attributes(_) = chunks[index].kind {
            let gap = matches!(
                chunks[index + 1].kind,
                ChunkKind::And | ChunkKind::Separator
            );
            let next = if gap { index + 2 } else { index + 1 };
            if let Some(ChunkKind::Attributes(more)) =
                chunks.get(next).map(|chunk| chunk.kind.clone())
            {
                let span = chunks[next].span;
                if let ChunkKind::Attributes(list) = &mut chunks[index].kind {
                    list.extend(more);
                }
                chunks[index].span = chunks[index].span.cover(span);
                chunks.drain(index + 1..=next);
                continue;
            }
        }
        index += 1;
    }
    // Relations and regions, right to left so landmarks carry their own modifiers.
    let mut index = chunks.len();
    while index > 0 {
        index -= 1;
        if !matches!(chunks[index].kind, ChunkKind::NounPhrase(_)) {
            continue;
        }
        loop {
            let attached = match chunks.get(index + 1).map(|chunk| &chunk.kind) {
                Some(ChunkKind::Region(region)) => {
                    let region = *region;
                    let span = chunks[index + 1].span;
                    if let ChunkKind::NounPhrase(phrase) = &mut chunks[index].kind {
                        if phrase.region.is_some() {
                            break;
                        }
                        phrase.region = Some(region);
                        phrase.span = phrase.span.cover(span);
                    }
                    chunks[index].span = chunks[index].span.cover(span);
                    chunks.remove(index + 1);
                    true
                }
                // "The vase is on the shelf right of the plant": a place after the landmark of "is on" or
                // "is in" is the subject's second place, not the landmark's.
                Some(ChunkKind::Relation(relation))
                    if *relation != Relation::Between
                        && index >= 2
                        && matches!(
                            chunks[index - 1].kind,
                            ChunkKind::Relation(Relation::On | Relation::Inside)
                        )
                        && chunks[index - 2].kind == ChunkKind::Be =>
                {
                    false
                }
                // "Five books on the floor by the bed", "the clock on the wall above the desk": the floor,
                // a wall or the ceiling is too large to be placed, so a place after one as the landmark of
                // another place is the thing's.
                Some(ChunkKind::Relation(relation))
                    if *relation != Relation::Between
                        && index >= 2
                        && matches!(chunks[index - 1].kind, ChunkKind::Relation(_))
                        && matches!(&chunks[index].kind, ChunkKind::NounPhrase(phrase)
                            if phrase.class.is_some_and(&is_structure)
                                && phrase.deictic.is_none()) =>
                {
                    false
                }
                // "There's a mug by the table, right next to it": a landmark placed by "it" would be placed by
                // itself, so the place is the subject's second one, with "it" the landmark.
                Some(ChunkKind::Relation(relation))
                    if *relation != Relation::Between
                        && index >= 1
                        && matches!(chunks[index - 1].kind, ChunkKind::Relation(_))
                        && matches!(chunks.get(index + 2).map(|chunk| &chunk.kind),
                            Some(ChunkKind::NounPhrase(landmark))
                                if landmark.class.is_none()
                                    && landmark.deictic.is_some_and(|word| word.pronoun && !word.plural)) =>
                {
                    false
                }
                Some(ChunkKind::Relation(relation)) => {
                    let relation = *relation;
                    let landmark_count = if relation == Relation::Between { 2 } else { 1 };
                    let landmarks = take_landmarks(&chunks, index + 2, landmark_count);
                    match landmarks {
                        Some((mut landmarks, used)) => {
                            let end = index + 1 + used;
                            let span = chunks[end].span;
                            if let ChunkKind::NounPhrase(phrase) = &mut chunks[index].kind {
                                // "A mug by the table, right next to it": a second place of the thing by
                                // "it" is by the first place's landmark.
                                let points_back = landmarks.len() == 1
                                    && landmarks[0].class.is_none()
                                    && landmarks[0]
                                        .deictic
                                        .is_some_and(|word| word.pronoun && !word.plural);
                                if let Some(previous) = phrase
                                    .relations
                                    .last()
                                    .filter(|previous| points_back && previous.landmarks.len() == 1)
                                {
                                    let span = landmarks[0].span;
                                    landmarks = vec![NounPhrase {
                                        span,
                                        ..previous.landmarks[0].clone()
                                    }];
                                }
                                phrase.relations.push(AttachedRelation {
                                    relation,
                                    landmarks,
                                });
                                phrase.span = phrase.span.cover(span);
                            }
                            chunks[index].span = chunks[index].span.cover(span);
                            chunks.drain(index + 1..=end);
                            true
                        }
                        None => false,
                    }
                }
                _ => false,
            };
            if !attached {
                break;
            }
        }
    }
    share_relations(&mut chunks);
    chunks
}

/// "chairs >= 6 around tbl": a note's count after a bare noun, before the place it gives, is the noun's count
/// ("at least 6 chairs around the table").
fn counts_after_nouns(chunks: &mut Vec<Chunk>) {
    let mut index = 0;
    while index + 2 < chunks.len() {
        let bare = matches!(&chunks[index].kind, ChunkKind::NounPhrase(phrase)
            if phrase.class.is_some() && phrase.quantity.is_none() && phrase.deictic.is_none()
                && !phrase.article);
        let placed = matches!(
            chunks[index + 2].kind,
            ChunkKind::Relation(_) | ChunkKind::Region(_)
        );
        if let (true, true, ChunkKind::Number { quantity, .. }) =
            (bare, placed, chunks[index + 1].kind.clone())
        {
            let span = chunks[index + 1].span;
            if let ChunkKind::NounPhrase(phrase) = &mut chunks[index].kind {
                phrase.quantity = Some(quantity);
                phrase.span = phrase.span.cover(span);
            }
            chunks[index].span = chunks[index].span.cover(span);
            chunks[index].misspelled |= chunks[index + 1].misspelled;
            chunks.remove(index + 1);
        }
        index += 1;
    }
}

/// "No cats or dogs": a thing joined by "or" to a denied one ("no X") is denied too, and the "or" joins them
/// as "and" would ("no cats and no dogs"). An "or" after a thing not denied is left alone.
fn deny_alternatives(chunks: &mut [Chunk]) {
    for index in 1..chunks.len().saturating_sub(1) {
        if chunks[index].kind != ChunkKind::Or {
            continue;
        }
        let denied = matches!(&chunks[index - 1].kind, ChunkKind::NounPhrase(phrase)
            if phrase.class.is_some() && matches!(phrase.quantity, Some(Quantity::None | Quantity::Exactly(0))));
        let plain = matches!(&chunks[index + 1].kind, ChunkKind::NounPhrase(phrase)
            if phrase.class.is_some() && phrase.deictic.is_none() && !phrase.article
                && matches!(phrase.quantity, None | Some(Quantity::None)));
        if denied && plain {
            if let ChunkKind::NounPhrase(phrase) = &mut chunks[index + 1].kind {
                phrase.quantity = Some(Quantity::None);
            }
            chunks[index].kind = ChunkKind::And;
        }
    }
}

/// "Four mugs and a plate in the sink": a stated noun phrase ("four mugs", "a plate") joined by "and" to a
/// located one shares its place. A phrase with "the" never does, so a landmark ("on the bed and the dog
/// under the table") keeps its own meaning.
fn share_relations(chunks: &mut [Chunk]) {
    for index in (0..chunks.len().saturating_sub(2)).rev() {
        let shared = match (&chunks[index + 1].kind, &chunks[index + 2].kind) {
            // "A table and a mug on it": a landmark that points back is the phrase before, never shared,
            // unless an owner comes first ("the desk has a laptop and a lamp on it").
            (ChunkKind::And, ChunkKind::NounPhrase(next))
                if (!next.relations.is_empty() || next.region.is_some())
                    && (index > 0
                        && matches!(
                            chunks[index - 1].kind,
                            ChunkKind::Have | ChunkKind::Holds
                        )
                        || !next.relations.iter().any(|attached| {
                            attached.landmarks.iter().any(|landmark| {
                                landmark.class.is_none()
                                    && landmark.deictic.is_some_and(|word| word.pronoun)
                            })
                        })) =>
            {
                (next.relations.clone(), next.region)
            }
            _ => continue,
        };
        // "dog & cat on rug": a phrase opening the clause is no landmark, so it shares the place too.
        let opens_clause = index == 0 || chunks[index - 1].kind == ChunkKind::Separator;
        if let ChunkKind::NounPhrase(phrase) = &mut chunks[index].kind {
            let stated = phrase.article
                || !matches!(
                    phrase.quantity,
                    None | Some(Quantity::None) | Some(Quantity::Exactly(0))
                )
                || (opens_clause && phrase.class.is_some() && phrase.deictic.is_none());
            if stated && phrase.relations.is_empty() && phrase.region.is_none() {
                phrase.relations = shared.0;
                phrase.region = shared.1;
            }
        }
    }
}

/// One landmark noun phrase at `start`, or two joined by "and" for "between"; returns them and the number
/// of chunks used.
fn take_landmarks(
    chunks: &[Chunk],
    start: usize,
    count: usize,
) -> Option<(Vec<NounPhrase>, usize)> {
    let first = match chunks.get(start).map(|chunk| &chunk.kind) {
        Some(ChunkKind::NounPhrase(phrase)) => phrase.clone(),
        _ => return None,
    };
    if count == 1 {
        return Some((vec![first], 1));
    }
    match (
        chunks.get(start + 1).map(|chunk| &chunk.kind),
        chunks.get(start + 2).map(|chunk| &chunk.kind),
    ) {
        (Some(ChunkKind::And), Some(ChunkKind::NounPhrase(second))) => {
            Some((vec![first, second.clone()], 3))
        }
        // "bowl between mug, plate": a note's comma joins the two landmarks when the clause ends there.
        (Some(ChunkKind::Separator), Some(ChunkKind::NounPhrase(second)))
            if chunks
                .get(start + 3)
                .is_none_or(|chunk| chunk.kind == ChunkKind::Separator) =>
        {
            Some((vec![first, second.clone()], 3))
        }
        _ => None,
    }
}
