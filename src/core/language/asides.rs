//! Asides: phrases that name no referent of their own, settled on the tagged items before chunking.
//!
//! Owns: pointing phrases ("the thing I'm pointing at", "what I'm looking at" become a demonstrative, so they
//! point at the operator's focus), locatives that name the whole view ("in this room", "in the picture",
//! "in this one": dropped, never a landmark), "with" modifiers ("the mug w/ the box around it": dropped up to
//! the next verb or pause), intensifiers directly before a relation ("right next to", "just left of") and
//! the name of a household member or pet after the word for them ("my grandad Osric", "our puppy, Noodle,"),
//! a note's "sofa w/ five cushions" (a piece of furniture with counted things: they are on it), what the robot
//! shows of a thing ("the lamp you see"), "not X but Y is" put in the order "Y, not X, is", and a pointed
//! thing said again before the verb.
//! Must not: decide what a clause means; it only re-tags or drops items, recording what it dropped.

use super::constraint::{Relation, Span};
use super::lexicon::{Side, Tag};
use super::parse::IgnoredReason;
use super::tagging::{Item, ItemTag};

fn tag_of(item: Option<&Item>) -> Option<Tag> {
    match item?.tag {
        ItemTag::Lexicon(tag) => Some(tag),
        _ => None,
    }
}

const DEMONSTRATIVE: Tag = Tag::Deictic {
    pronoun: false,
    plural: false,
};

/// Turns "the thing I'm pointing at" into "that thing" and "what I'm looking at" into "that". A pointing
/// phrase after no noun is kept (a rule reads "I'm pointing at a mug"). Runs before the sentence is
/// classified, so "what I'm looking at is a mug" is not taken for a question.
pub fn resolve_pointing(items: Vec<Item>) -> Vec<Item> {
    let mut out: Vec<Item> = Vec::with_capacity(items.len());
    for item in items {
        if item.tag != ItemTag::Lexicon(Tag::Pointing) {
            out.push(item);
            continue;
        }
        match tag_of(out.last()) {
            Some(Tag::Question(_)) => {
                let previous = out.last_mut().expect("a previous item");
                previous.tag = ItemTag::Lexicon(DEMONSTRATIVE);
                previous.span = previous.span.cover(item.span);
            }
            Some(Tag::Class { plural, .. } | Tag::Thing { plural }) => {
                point_at_head(&mut out, item.span, plural)
            }
            Some(Tag::Number(1)) => point_at_head(&mut out, item.span, false),
            _ => out.push(item),
        }
    }
    drop_pointed_apposition(out)
}

/// "That one, the one my hand is on, is a mug": a pointed thing opening the sentence, said again between
/// pauses before the verb, is one thing; the second saying and its pauses go.
fn drop_pointed_apposition(items: Vec<Item>) -> Vec<Item> {
    let phrase_end = |from: usize| {
        if !matches!(
            tag_of(items.get(from)),
            Some(Tag::Deictic { pronoun: false, .. })
        ) {
            return None;
        }
        let mut at = from + 1;
        while matches!(
            tag_of(items.get(at)),
            Some(
                Tag::Number(1)
                    | Tag::Colour(_)
                    | Tag::Size(_)
                    | Tag::Class { .. }
                    | Tag::Thing { .. }
            )
        ) {
            at += 1;
        }
        Some(at)
    };
    let pause = |at: usize| items.get(at).is_some_and(|item| item.tag == ItemTag::Pause);
    let Some(first) = phrase_end(0).filter(|&at| pause(at)) else {
        return items;
    };
    let Some(second) = phrase_end(first + 1).filter(|&at| pause(at)) else {
        return items;
    };
    if tag_of(items.get(second + 1)) != Some(Tag::Be) {
        return items;
    }
    let mut items = items;
    items.drain(first..=second);
    items
}

/// Makes the noun phrase ending in the last item deictic: its determiner or article becomes a
/// demonstrative, or one is put before it.
fn point_at_head(items: &mut Vec<Item>, pointing: Span, plural: bool) {
    let head = items.len() - 1;
    items[head].span = items[head].span.cover(pointing);
    let mut start = head;
    while start > 0
        && matches!(
            tag_of(items.get(start - 1)),
            Some(Tag::Colour(_) | Tag::Size(_))
        )
    {
        start -= 1;
    }
    let deictic = Tag::Deictic {
        pronoun: false,
        plural,
    };
    match tag_of(start.checked_sub(1).and_then(|index| items.get(index))) {
        Some(Tag::Determiner | Tag::Article) => items[start - 1].tag = ItemTag::Lexicon(deictic),
        Some(Tag::Deictic { .. }) => {}
        _ => {
            let span = items[start].span;
            items.insert(
                start,
                Item {
                    tag: ItemTag::Lexicon(deictic),
                    span: Span::new(span.start, span.start),
                    text: "that".to_string(),
                    misspelled: false,
                },
            );
        }
    }
}

/// How many items a locative starting at `index` covers: "in" or "on" with the whole view ("in the
/// picture", "in this room", "on screen"), or "in this one".
fn locative_length(items: &[Item], index: usize) -> Option<usize> {
    let Some(Tag::Relation(Relation::Inside | Relation::On)) = tag_of(items.get(index)) else {
        return None;
    };
    let lead = matches!(
        tag_of(items.get(index + 1)),
        Some(Tag::Determiner | Tag::Article | Tag::Deictic { pronoun: false, .. })
    );
    let head = index + 1 + usize::from(lead);
    match tag_of(items.get(head)) {
        Some(Tag::Scene) => Some(head + 1 - index),
        Some(Tag::Number(1))
            if lead && matches!(tag_of(items.get(index + 1)), Some(Tag::Deictic { .. })) =>
        {
            Some(head + 1 - index)
        }
        _ => None,
    }
}

/// Whether an item ends a "with" modifier: a pause, a verb, or a word that starts a new clause.
fn ends_modifier(item: &Item) -> bool {
    match item.tag {
        ItemTag::Pause => true,
        ItemTag::Lexicon(tag) => matches!(
            tag,
            Tag::Be
                | Tag::There
                | Tag::And
                | Tag::Repair
                | Tag::Have
                | Tag::Holds
                | Tag::See
                | Tag::Remove
                | Tag::Missed
                | Tag::Called
                | Tag::Change
        ),
        _ => false,
    }
}

/// Whether the "with" at `index` follows a pause (or opens the sentence) and comes before a number.
fn opens_counted_clause(items: &[Item], index: usize) -> bool {
    let after_pause = index == 0 || items[index - 1].tag == ItemTag::Pause;
    let before_number = matches!(
        tag_of(items.get(index + 1)),
        Some(Tag::Number(_) | Tag::Tens(_))
    );
    after_pause && before_number
}

/// Drops locatives, "with" modifiers and intensifiers before a relation, recording each as ignored.
pub fn drop_asides(items: Vec<Item>, ignored: &mut Vec<(Span, IgnoredReason)>) -> Vec<Item> {
    let mut kept: Vec<Item> = Vec::with_capacity(items.len());
    let mut index = 0;
    while index < items.len() {
        let dropped = if let Some(length) = locative_length(&items, index) {
            length
        } else if items[index].tag == ItemTag::Lexicon(Tag::With)
            && opens_counted_clause(&items, index)
        {
            // "We're in the bathroom, with four towels by the sink": after a pause, "with" and a counted
            // noun open a clause of their own; only the word "with" is dropped.
            1
        } else if items[index].tag == ItemTag::Lexicon(Tag::With) {
            1 + items[index + 1..]
                .iter()
                .take_while(|item| !ends_modifier(item))
                .count()
        } else {
            let intensifier = matches!(
                tag_of(items.get(index)),
                Some(Tag::Side(Side::Right) | Tag::Comparator(_))
            );
            let before_relation = matches!(
                tag_of(items.get(index + 1)),
                Some(Tag::Relation(_) | Tag::Region(_))
            );
            usize::from(intensifier && before_relation)
        };
        if dropped == 0 {
            kept.push(items[index].clone());
            index += 1;
            continue;
        }
        let span = items[index].span.cover(items[index + dropped - 1].span);
        ignored.push((span, IgnoredReason::FunctionWord));
        index += dropped;
    }
    kept
}

/// Drops a name said first, before the word for the person or pet it names, at a clause's start: "Saffi the
/// cat is in the bag", "Pilchard, the cat, is on the blanket" (the pauses around the apposition go too).
fn drop_names_before(
    items: Vec<Item>,
    living: &impl Fn(crate::ids::ClassId) -> bool,
    ignored: &mut Vec<(Span, IgnoredReason)>,
) -> Vec<Item> {
    let mut removed = vec![false; items.len()];
    for index in 0..items.len() {
        // "Marzipan, the dog, and Fennel, the cat, are on the rug": a name after "and" opens a conjunct.
        let opens_clause = index == 0
            || matches!(
                items[index - 1].tag,
                ItemTag::Pause | ItemTag::Lexicon(Tag::And)
            );
        if items[index].tag != ItemTag::Unknown || !opens_clause {
            continue;
        }
        let mut next = index + 1;
        let opened = items
            .get(next)
            .is_some_and(|item| item.tag == ItemTag::Pause);
        if opened {
            next += 1;
        }
        while matches!(tag_of(items.get(next)), Some(Tag::Determiner)) {
            next += 1;
        }
        let names_living = matches!(
            tag_of(items.get(next)),
            Some(Tag::Class { class, plural: false }) if living(class)
        );
        if !names_living {
            continue;
        }
        removed[index] = true;
        let mut span = items[index].span;
        if opened {
            removed[index + 1] = true;
            span = span.cover(items[index + 1].span);
            if items
                .get(next + 1)
                .is_some_and(|item| item.tag == ItemTag::Pause)
            {
                removed[next + 1] = true;
            }
        }
        ignored.push((span, IgnoredReason::FunctionWord));
    }
    items
        .into_iter()
        .zip(removed)
        .filter_map(|(item, removed)| (!removed).then_some(item))
        .collect()
}

/// Drops a name given after a word for a person or a pet ("my grandad Osric", "our puppy, Noodle, is"): a
/// word nobody knows directly after such a class word (or between two pauses after it) is what they are
/// called, which says nothing more about the scene.
pub fn drop_names(
    items: Vec<Item>,
    living: impl Fn(crate::ids::ClassId) -> bool,
    ignored: &mut Vec<(Span, IgnoredReason)>,
) -> Vec<Item> {
    if !items.iter().any(|item| item.tag == ItemTag::Unknown) {
        return items;
    }
    let items = drop_names_before(items, &living, ignored);
    let mut kept: Vec<Item> = Vec::with_capacity(items.len());
    let mut index = 0;
    while index < items.len() {
        let after_living = matches!(
            tag_of(kept.last()),
            Some(Tag::Class { class, plural: false }) if living(class)
        );
        // "That's dog food", "it's cat litter": a bare word for a pet or person right after the verb, with
        // no determiner of its own, modifies the word after it (English compounds end in their head); a
        // name follows a word that names one of them ("our dog Rex", "the cat Saffi").
        let modifier = kept.len() >= 2 && tag_of(kept.get(kept.len() - 2)) == Some(Tag::Be);
        if after_living && !modifier {
            let name = |at: usize| {
                items
                    .get(at)
                    .is_some_and(|item| item.tag == ItemTag::Unknown)
            };
            let pause = |at: usize| items.get(at).is_some_and(|item| item.tag == ItemTag::Pause);
            // "puppy Noodle" or "puppy, Noodle," (both pauses go with the name).
            let length = if name(index) {
                1
            } else if pause(index) && name(index + 1) && pause(index + 2) {
                3
            } else {
                0
            };
            if length > 0 {
                let span = items[index].span.cover(items[index + length - 1].span);
                ignored.push((span, IgnoredReason::FunctionWord));
                index += length;
                continue;
            }
        }
        kept.push(items[index].clone());
        index += 1;
    }
    kept
}

/// "The lamp you see isn't there", "the mug you've got there is a bowl": "you" and a verb of seeing or having
/// right after a class word and before the verb are what the robot shows of the thing, a relative clause
/// that names nothing more; they are dropped and reported.
pub fn drop_shown_clause(items: Vec<Item>, ignored: &mut Vec<(Span, IgnoredReason)>) -> Vec<Item> {
    let mut items = items;
    let mut index = 1;
    while index + 2 < items.len() {
        let after_thing = matches!(tag_of(items.get(index - 1)), Some(Tag::Class { .. }));
        let shown = tag_of(items.get(index)) == Some(Tag::You)
            && matches!(tag_of(items.get(index + 1)), Some(Tag::See | Tag::Have));
        let mut end = index + 2;
        if tag_of(items.get(end)) == Some(Tag::There) {
            end += 1;
        }
        let verb_follows = matches!(tag_of(items.get(end)), Some(Tag::Be | Tag::Negation));
        if after_thing && shown && verb_follows {
            ignored.push((
                items[index].span.cover(items[end - 1].span),
                IgnoredReason::FunctionWord,
            ));
            items.drain(index..end);
        }
        index += 1;
    }
    items
}

/// "Not the cat but the dog is on the sofa": a denied thing opening the sentence, then "but" and the thing
/// meant, then the verb, is put in the order of "the dog, not the cat, is on the sofa", which the rules read
/// as a relation of the one, denied of the other. "Not the table: the towel is on the counter" (no "but")
/// is left alone.
pub fn contrast_subjects(items: Vec<Item>) -> Vec<Item> {
    let phrase_end = |from: usize| {
        let mut at = from;
        while matches!(
            tag_of(items.get(at)),
            Some(Tag::Determiner | Tag::Article | Tag::Colour(_) | Tag::Size(_))
        ) {
            at += 1;
        }
        matches!(tag_of(items.get(at)), Some(Tag::Class { .. })).then_some(at + 1)
    };
    let opens_denied = tag_of(items.first()) == Some(Tag::Negation);
    let Some(denied_end) = opens_denied.then(|| phrase_end(1)).flatten() else {
        return items;
    };
    let but = items
        .get(denied_end)
        .is_some_and(|item| item.text == "but" && item.tag == ItemTag::Lexicon(Tag::And));
    let Some(meant_end) = but.then(|| phrase_end(denied_end + 1)).flatten() else {
        return items;
    };
    if tag_of(items.get(meant_end)) != Some(Tag::Be) {
        return items;
    }
    let pause = |span: Span| Item {
        tag: ItemTag::Pause,
        span,
        text: ",".to_string(),
        misspelled: false,
    };
    let mut out = Vec::with_capacity(items.len() + 2);
    out.extend_from_slice(&items[denied_end + 1..meant_end]);
    out.push(pause(items[denied_end].span));
    out.extend_from_slice(&items[..denied_end]);
    out.push(pause(items[denied_end].span));
    out.extend_from_slice(&items[meant_end..]);
    out
}

/// "sofa w/ five cushions", "table with 6 plates": a piece of furniture (`support`) followed by "with" and a
/// counted class says those things are on it, read as "sofa has five cushions on it". Anything else keeps
/// its "with" for `drop_asides`.
pub fn with_contents(items: Vec<Item>, support: impl Fn(crate::ids::ClassId) -> bool) -> Vec<Item> {
    if !items
        .iter()
        .any(|item| item.tag == ItemTag::Lexicon(Tag::With))
    {
        return items;
    }
    let mut out: Vec<Item> = Vec::with_capacity(items.len() + 2);
    let mut index = 0;
    while index < items.len() {
        let owner = index > 0
            && matches!(
                tag_of(items.get(index - 1)),
                Some(Tag::Class { class, plural: false }) if support(class)
            );
        let counted = matches!(
            tag_of(items.get(index + 1)),
            Some(Tag::Number(_) | Tag::Tens(_))
        );
        let mut head = index + 2;
        while matches!(tag_of(items.get(head)), Some(Tag::Colour(_) | Tag::Size(_))) {
            head += 1;
        }
        let contents = matches!(tag_of(items.get(head)), Some(Tag::Class { .. }));
        if items[index].tag == ItemTag::Lexicon(Tag::With) && owner && counted && contents {
            out.push(Item {
                tag: ItemTag::Lexicon(Tag::Have),
                ..items[index].clone()
            });
            out.extend(items[index + 1..=head].iter().cloned());
            let end = items[head].span.end;
            for (tag, text) in [
                (Tag::Relation(Relation::On), "on"),
                (
                    Tag::Deictic {
                        pronoun: true,
                        plural: false,
                    },
                    "it",
                ),
            ] {
                out.push(Item {
                    tag: ItemTag::Lexicon(tag),
                    span: Span::new(end, end),
                    text: text.to_string(),
                    misspelled: false,
                });
            }
            index = head + 1;
            continue;
        }
        out.push(items[index].clone());
        index += 1;
    }
    out
}
