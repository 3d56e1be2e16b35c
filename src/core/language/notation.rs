//! The compact constraint notation used by the corpus and the CLI, and the plain-English glosses.
//!
//! Owns: rendering a constraint as `rel(lamp, left_of, sofa)`, `count(chair, =2)`,
//! `relabel(@, cat -> towel)` and so on (the notation is documented in grammar/README.md), and the short
//! English gloss stored on each constraint.
//! Must not: parse utterances; this is output formatting only.

use std::fmt::Write;

use crate::taxonomy::{how_many, Taxonomy};

use super::constraint::{
    Attribute, ColourTerm, Constraint, ConstraintKind, Count, Deixis, ImageRegion, Place, Referent,
    Relation, SizeTerm,
};

/// The notation name of a relation.
pub fn relation_name(relation: Relation) -> &'static str {
    match relation {
        Relation::On => "on",
        Relation::Under => "under",
        Relation::Above => "above",
        Relation::Below => "below",
        Relation::NextTo => "next_to",
        Relation::LeftOf => "left_of",
        Relation::RightOf => "right_of",
        Relation::InFrontOf => "in_front_of",
        Relation::Behind => "behind",
        Relation::Inside => "inside",
        Relation::Between => "between",
    }
}

/// The notation name of an image region.
pub fn region_name(region: ImageRegion) -> &'static str {
    match region {
        ImageRegion::Left => "left",
        ImageRegion::Right => "right",
        ImageRegion::Top => "top",
        ImageRegion::Bottom => "bottom",
        ImageRegion::Centre => "centre",
        ImageRegion::Corner => "corner",
        ImageRegion::Back => "back",
        ImageRegion::Front => "front",
    }
}

/// The name of a basic colour term.
pub fn colour_name(colour: ColourTerm) -> &'static str {
    match colour {
        ColourTerm::Black => "black",
        ColourTerm::White => "white",
        ColourTerm::Red => "red",
        ColourTerm::Green => "green",
        ColourTerm::Yellow => "yellow",
        ColourTerm::Blue => "blue",
        ColourTerm::Brown => "brown",
        ColourTerm::Purple => "purple",
        ColourTerm::Pink => "pink",
        ColourTerm::Orange => "orange",
        ColourTerm::Grey => "grey",
    }
}

/// The name of an attribute value.
pub fn attribute_name(attribute: Attribute) -> &'static str {
    match attribute {
        Attribute::Colour(colour) => colour_name(colour),
        Attribute::Size(SizeTerm::Big) => "big",
        Attribute::Size(SizeTerm::Small) => "small",
    }
}

/// A referent in notation: `@` focus, `^` previous, `red.mug*{next_to sink}<left>`.
pub fn referent_notation(referent: &Referent, taxonomy: &Taxonomy) -> String {
    let mut out = String::new();
    match referent.deixis {
        Some(Deixis::Focus) => out.push('@'),
        Some(Deixis::Previous) => out.push('^'),
        None => {}
    }
    for attribute in &referent.attributes {
        out.push_str(attribute_name(*attribute));
        out.push('.');
    }
    match referent.class {
        Some(class) => out.push_str(taxonomy.class_name(class)),
        None if referent.deixis.is_none() => out.push_str("thing"),
        None => {}
    }
    if referent.plural {
        out.push('*');
    }
    for clause in &referent.relations {
        out.push('{');
        if clause.negated {
            out.push('!');
        }
        out.push_str(relation_name(clause.relation));
        out.push(' ');
        let landmarks: Vec<String> = clause
            .landmarks
            .iter()
            .map(|landmark| referent_notation(landmark, taxonomy))
            .collect();
        out.push_str(&landmarks.join(" & "));
        out.push('}');
    }
    if let Some(region) = referent.region {
        let _ = write!(out, "<{}>", region_name(region));
    }
    out
}

fn count_notation(count: Count) -> String {
    match count {
        Count::Exactly(n) => format!("={n}"),
        Count::AtLeast(n) => format!(">={n}"),
        Count::AtMost(n) => format!("<={n}"),
    }
}

/// A constraint in the compact notation.
pub fn constraint_notation(kind: &ConstraintKind, taxonomy: &Taxonomy) -> String {
    let name = move |class| taxonomy.class_name(class);
    match kind {
        ConstraintKind::Present { class } => format!("present({})", name(*class)),
        ConstraintKind::Absent { class } => format!("absent({})", name(*class)),
        ConstraintKind::Count { class, count } => {
            format!("count({}, {})", name(*class), count_notation(*count))
        }
        ConstraintKind::Relation {
            subject,
            relation,
            negated,
            landmarks,
        } => {
            let mut out = format!(
                "rel({}, {}{}",
                referent_notation(subject, taxonomy),
                if *negated { "!" } else { "" },
                relation_name(*relation)
            );
            for landmark in landmarks {
                out.push_str(", ");
                out.push_str(&referent_notation(landmark, taxonomy));
            }
            out.push(')');
            out
        }
        ConstraintKind::Place { subject, place } => match place {
            Place::Room(room) => format!(
                "place({}, room:{})",
                referent_notation(subject, taxonomy),
                taxonomy
                    .room(*room)
                    .map(|info| info.name.as_str())
                    .unwrap_or("unknown")
            ),
            Place::Region(region) => format!(
                "place({}, {})",
                referent_notation(subject, taxonomy),
                region_name(*region)
            ),
        },
        ConstraintKind::Relabel { target, from, to } => format!(
            "relabel({}, {} -> {})",
            referent_notation(target, taxonomy),
            from.map(name).unwrap_or(""),
            to.map(name).unwrap_or("")
        )
        .replace(",  ->", ", ->"),
        ConstraintKind::Attribute { target, attribute } => format!(
            "attr({}, {})",
            referent_notation(target, taxonomy),
            attribute_name(*attribute)
        ),
        ConstraintKind::RoomType { room } => format!(
            "room({})",
            taxonomy
                .room(*room)
                .map(|info| info.name.as_str())
                .unwrap_or("unknown")
        ),
    }
}

/// A referent in plain English.
pub fn referent_gloss(referent: &Referent, taxonomy: &Taxonomy) -> String {
    let mut words: Vec<String> = Vec::new();
    match referent.deixis {
        Some(Deixis::Focus) => words.push("the pointed-at".to_string()),
        Some(Deixis::Previous) => words.push("the last-mentioned".to_string()),
        None => words.push("the".to_string()),
    }
    for attribute in &referent.attributes {
        words.push(attribute_name(*attribute).to_string());
    }
    let head = match referent.class {
        Some(class) => taxonomy.class_name(class).replace('_', " "),
        None => "thing".to_string(),
    };
    words.push(if referent.plural {
        format!("{head}(s)")
    } else {
        head
    });
    for clause in &referent.relations {
        let landmarks: Vec<String> = clause
            .landmarks
            .iter()
            .map(|landmark| referent_gloss(landmark, taxonomy))
            .collect();
        words.push(format!(
            "{} {}",
            relation_name(clause.relation).replace('_', " "),
            landmarks.join(" and ")
        ));
    }
    if let Some(region) = referent.region {
        words.push(format!("at the {}", region_name(region)));
    }
    words.join(" ")
}

/// A constraint in plain English.
pub fn constraint_gloss(kind: &ConstraintKind, taxonomy: &Taxonomy) -> String {
    let name = |class| taxonomy.class_name(class).replace('_', " ");
    let counted = |n: u32, class| how_many(n as usize, taxonomy.class_name(class));
    let room_name = |room| {
        taxonomy
            .room(room)
            .map(|info| info.name.replace('_', " "))
            .unwrap_or_else(|| "unknown".to_string())
    };
    match kind {
        ConstraintKind::Present { class } => format!("at least one {} is in view", name(*class)),
        ConstraintKind::Absent { class } => format!("no {} is in view", name(*class)),
        ConstraintKind::Count { class, count } => match count {
            Count::Exactly(n) => format!("exactly {} in view", counted(*n, *class)),
            Count::AtLeast(n) => format!("at least {} in view", counted(*n, *class)),
            Count::AtMost(n) => format!("at most {} in view", counted(*n, *class)),
        },
        ConstraintKind::Relation {
            subject,
            relation,
            negated,
            landmarks,
        } => {
            let landmarks: Vec<String> = landmarks
                .iter()
                .map(|landmark| referent_gloss(landmark, taxonomy))
                .collect();
            format!(
                "{} is {}{} {}",
                referent_gloss(subject, taxonomy),
                if *negated { "not " } else { "" },
                relation_name(*relation).replace('_', " "),
                landmarks.join(" and ")
            )
        }
        ConstraintKind::Place { subject, place } => match place {
            Place::Room(room) => format!(
                "{} is in the {}",
                referent_gloss(subject, taxonomy),
                room_name(*room)
            ),
            Place::Region(region) => format!(
                "{} is at the {} of the image",
                referent_gloss(subject, taxonomy),
                region_name(*region)
            ),
        },
        ConstraintKind::Relabel { target, from, to } => {
            let mut out = referent_gloss(target, taxonomy);
            if let Some(from) = from {
                let _ = write!(out, " is not a {}", name(*from));
            }
            if let Some(to) = to {
                if from.is_some() {
                    out.push(',');
                }
                let _ = write!(out, " is a {}", name(*to));
            }
            if from.is_none() && to.is_none() {
                out.push_str(" is not there");
            }
            out
        }
        ConstraintKind::Attribute { target, attribute } => format!(
            "{} is {}",
            referent_gloss(target, taxonomy),
            attribute_name(*attribute)
        ),
        ConstraintKind::RoomType { room } => format!("the room is a {}", room_name(*room)),
    }
}

/// Every constraint of a parse in notation, in order.
pub fn notation_list(constraints: &[Constraint], taxonomy: &Taxonomy) -> Vec<String> {
    constraints
        .iter()
        .map(|constraint| constraint_notation(&constraint.kind, taxonomy))
        .collect()
}
