//! The `.lex` line syntax: one lexicon line to a phrase and its tag (or a rewrite), with the messages that
//! name what is wrong on a bad line; and the names of relations, regions and colour terms.
//!
//! Owns: reading `phrase -> kind [value] [flags]` and `phrase = replacement [when|unless after|before W|W]`
//! lines.
//! Must not: insert into the lexicon or generate plurals; `lexicon` does that with what this returns.

use crate::taxonomy::Taxonomy;

use super::constraint::{ColourTerm, ImageRegion, Relation, SizeTerm};
use super::lexicon::{Asks, Comparator, QuantityWord, Side, Tag};

/// One parsed lexicon line, before it is inserted.
pub(super) enum LexLine {
    Tag(Vec<String>, Tag, Option<ClassExtra>),
    Rewrite(Vec<String>, Vec<String>, Vec<Condition>),
}

/// A context a conditional rewrite needs: `when after WORD|WORD`, `when before WORD|<class>|<plural>`,
/// `unless ...` for the opposite.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Condition {
    /// The word before the phrase (after its own rewriting), else the word after it.
    pub after: bool,
    /// The condition holds when the neighbour is *not* listed.
    pub negated: bool,
    /// Listed words; `<class>` is any class word, `<plural>` a plural class word, `<number>` a number.
    pub words: Vec<String>,
}

/// Reads the conditions after a rewrite's replacement: `when|unless after|before WORD|WORD ...`.
fn split_conditions(right: &str) -> Result<(Vec<String>, Vec<Condition>), String> {
    let mut fields = right.split_whitespace().peekable();
    let mut replacement = Vec::new();
    while let Some(word) = fields.next_if(|word| *word != "when" && *word != "unless") {
        replacement.push(word.to_string());
    }
    let mut conditions = Vec::new();
    while let Some(keyword) = fields.next() {
        let side = fields.next().unwrap_or("");
        let after = match side {
            "after" => true,
            "before" => false,
            other => {
                return Err(format!(
                    "'{keyword}' must be followed by after or before, found '{other}'"
                ))
            }
        };
        let list = fields
            .next()
            .ok_or_else(|| format!("'{keyword} {side}' needs words joined by |"))?;
        let words: Vec<String> = list.split('|').map(str::to_string).collect();
        if words.iter().any(|word| word.is_empty()) {
            return Err(format!("empty word in '{list}'"));
        }
        conditions.push(Condition {
            after,
            negated: keyword == "unless",
            words,
        });
    }
    Ok((replacement, conditions))
}

/// Extra facts on a class line.
#[derive(Clone, Debug)]
pub(super) struct ClassExtra {
    pub(super) mass: bool,
    /// A plural-only word naming one thing ("the stairs": one staircase).
    pub(super) whole: bool,
    pub(super) plural_of: Option<String>,
}

pub(super) fn split_words(phrase: &str) -> Vec<String> {
    phrase.split_whitespace().map(str::to_string).collect()
}

pub(super) fn parse_line(line: &str, taxonomy: &Taxonomy) -> Result<LexLine, String> {
    if let Some((left, right)) = line.split_once(" = ") {
        let words = split_words(left);
        let (replacement, conditions) = split_conditions(right)?;
        if words.is_empty() || replacement.is_empty() {
            return Err("a rewrite needs words on both sides of ' = '".to_string());
        }
        return Ok(LexLine::Rewrite(words, replacement, conditions));
    }
    let Some((left, right)) = line.split_once(" -> ") else {
        return Err(format!(
            "expected 'phrase -> kind [value]' or 'phrase = replacement', found '{line}'"
        ));
    };
    let words = split_words(left);
    if words.is_empty() {
        return Err("the phrase before '->' is empty".to_string());
    }
    if words
        .iter()
        .any(|word| word.chars().any(|c| c.is_uppercase()))
    {
        return Err(format!("phrase '{left}' must be lower case"));
    }
    let fields: Vec<&str> = right.split_whitespace().collect();
    let kind = fields.first().copied().unwrap_or("");
    let value = fields.get(1).copied();
    let need_value = || value.ok_or_else(|| format!("kind '{kind}' needs a value"));
    let no_more = |count: usize| {
        if fields.len() > count {
            Err(format!(
                "unexpected '{}' after kind '{kind}'",
                fields[count]
            ))
        } else {
            Ok(())
        }
    };
    let mut extra = None;
    let tag = match kind {
        "class" => {
            let name = need_value()?;
            let class = taxonomy
                .class_by_name(name)
                .ok_or_else(|| format!("unknown class '{name}' (classes.toml lists the classes)"))?
                .id;
            let mut plural = false;
            let mut mass = false;
            let mut whole = false;
            let mut plural_of = None;
            match fields.get(2).copied() {
                None => {}
                Some("plural") => {
                    plural = true;
                    if fields.len() > 3 {
                        plural_of = Some(fields[3..].join(" "));
                    }
                }
                Some("mass") => {
                    mass = true;
                    no_more(3)?;
                }
                Some("whole") => {
                    plural = true;
                    whole = true;
                    no_more(3)?;
                }
                Some(other) => {
                    return Err(format!("class flag '{other}' is not plural, whole or mass"))
                }
            }
            extra = Some(ClassExtra {
                mass,
                whole,
                plural_of,
            });
            Tag::Class { class, plural }
        }
        "room" => {
            let name = need_value()?;
            no_more(2)?;
            Tag::Room(
                taxonomy
                    .room_by_name(name)
                    .ok_or_else(|| format!("unknown room '{name}'"))?
                    .id,
            )
        }
        "number" | "tens" => {
            let number: u32 = need_value()?
                .parse()
                .map_err(|_| format!("'{}' is not a whole number", value.unwrap_or("")))?;
            no_more(2)?;
            if kind == "number" {
                Tag::Number(number)
            } else {
                Tag::Tens(number)
            }
        }
        "quantity" => {
            let quantity = match need_value()? {
                "some" => QuantityWord::Some,
                "none" => QuantityWord::None,
                op @ ("exactly" | "at_least") => {
                    let number: u32 = fields
                        .get(2)
                        .and_then(|text| text.parse().ok())
                        .ok_or_else(|| format!("quantity '{op}' needs a whole number"))?;
                    no_more(3)?;
                    if op == "exactly" {
                        QuantityWord::Exactly(number)
                    } else {
                        QuantityWord::AtLeast(number)
                    }
                }
                other => {
                    return Err(format!(
                        "quantity '{other}' is not exactly, at_least, some or none"
                    ))
                }
            };
            Tag::Quantity(quantity)
        }
        "comparator" => {
            no_more(2)?;
            Tag::Comparator(match need_value()? {
                "exactly" => Comparator::Exactly,
                "at_least" => Comparator::AtLeast,
                "at_most" => Comparator::AtMost,
                "more_than" => Comparator::MoreThan,
                "fewer_than" => Comparator::FewerThan,
                other => return Err(format!("unknown comparator '{other}'")),
            })
        }
        "relation" => {
            no_more(2)?;
            Tag::Relation(parse_relation(need_value()?)?)
        }
        "region" => {
            no_more(2)?;
            Tag::Region(parse_region(need_value()?)?)
        }
        "side" => {
            no_more(2)?;
            Tag::Side(match need_value()? {
                "left" => Side::Left,
                "right" => Side::Right,
                other => return Err(format!("side '{other}' is not left or right")),
            })
        }
        "colour" => {
            no_more(2)?;
            Tag::Colour(parse_colour(need_value()?)?)
        }
        "size" => {
            no_more(2)?;
            Tag::Size(match need_value()? {
                "big" => SizeTerm::Big,
                "small" => SizeTerm::Small,
                other => return Err(format!("size '{other}' is not big or small")),
            })
        }
        "deictic" => {
            let pronoun = match need_value()? {
                "pronoun" => true,
                "demonstrative" => false,
                other => return Err(format!("deictic '{other}' is not pronoun or demonstrative")),
            };
            let plural = match fields.get(2).copied() {
                None => false,
                Some("plural") => true,
                Some(other) => return Err(format!("deictic flag '{other}' is not plural")),
            };
            no_more(3)?;
            Tag::Deictic { pronoun, plural }
        }
        "reciprocal" => {
            no_more(2)?;
            Tag::Reciprocal(parse_relation(need_value()?)?)
        }
        "question" => {
            no_more(2)?;
            Tag::Question(match value {
                None => Asks::Other,
                Some("count") => Asks::Count,
                Some("thing") => Asks::Thing,
                Some("place") => Asks::Place,
                Some("exists") => Asks::Exists,
                Some("side") => Asks::Side,
                Some(other) => {
                    return Err(format!(
                        "question '{other}' is not count, thing, place, exists or side"
                    ))
                }
            })
        }
        "thing" => {
            let plural = match value {
                None => false,
                Some("plural") => true,
                Some(other) => return Err(format!("thing flag '{other}' is not plural")),
            };
            no_more(2)?;
            Tag::Thing { plural }
        }
        simple => {
            no_more(1)?;
            match simple {
                "article" => Tag::Article,
                "no" => Tag::No,
                "determiner" => Tag::Determiner,
                "be" => Tag::Be,
                "there" => Tag::There,
                "negation" => Tag::Negation,
                "we" => Tag::We,
                "you" => Tag::You,
                "called" => Tag::Called,
                "missed" => Tag::Missed,
                "scene" => Tag::Scene,
                "have" => Tag::Have,
                "holds" => Tag::Holds,
                "see" => Tag::See,
                "remove" => Tag::Remove,
                "count" => Tag::Count,
                "change" => Tag::Change,
                "pointing" => Tag::Pointing,
                "with" => Tag::With,
                "as" => Tag::As,
                "and" => Tag::And,
                "or" => Tag::Or,
                "repair" => Tag::Repair,
                "filler" => Tag::Filler,
                "skip" => Tag::Skip,
                "request" => Tag::Request,
                "thanks" => Tag::Thanks,
                "greeting" => Tag::Greeting,
                "talk" => Tag::Talk,
                other => return Err(format!("unknown kind '{other}'")),
            }
        }
    };
    Ok(LexLine::Tag(words, tag, extra))
}

/// Reads a relation name as written in grammar files and the compact notation.
pub fn parse_relation(name: &str) -> Result<Relation, String> {
    Ok(match name {
        "on" => Relation::On,
        "under" => Relation::Under,
        "above" => Relation::Above,
        "below" => Relation::Below,
        "next_to" => Relation::NextTo,
        "left_of" => Relation::LeftOf,
        "right_of" => Relation::RightOf,
        "in_front_of" => Relation::InFrontOf,
        "behind" => Relation::Behind,
        "inside" => Relation::Inside,
        "between" => Relation::Between,
        other => return Err(format!("unknown relation '{other}'")),
    })
}

/// Reads an image region name.
pub fn parse_region(name: &str) -> Result<ImageRegion, String> {
    Ok(match name {
        "left" => ImageRegion::Left,
        "right" => ImageRegion::Right,
        "top" => ImageRegion::Top,
        "bottom" => ImageRegion::Bottom,
        "centre" => ImageRegion::Centre,
        "corner" => ImageRegion::Corner,
        "back" => ImageRegion::Back,
        "front" => ImageRegion::Front,
        other => return Err(format!("unknown region '{other}'")),
    })
}

/// Reads a basic colour term.
pub fn parse_colour(name: &str) -> Result<ColourTerm, String> {
    Ok(match name {
        "black" => ColourTerm::Black,
        "white" => ColourTerm::White,
        "red" => ColourTerm::Red,
        "green" => ColourTerm::Green,
        "yellow" => ColourTerm::Yellow,
        "blue" => ColourTerm::Blue,
        "brown" => ColourTerm::Brown,
        "purple" => ColourTerm::Purple,
        "pink" => ColourTerm::Pink,
        "orange" => ColourTerm::Orange,
        "grey" => ColourTerm::Grey,
        other => {
            return Err(format!(
                "'{other}' is not one of the eleven basic colour terms"
            ))
        }
    })
}
