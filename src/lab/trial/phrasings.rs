//! The operator phrasings of `sayso trial`: sentence templates written blind (by a helper shown only the class
//! list, the room list and the styles, before anyone looked at what the parser accepts), split into a
//! development half and a held-out half, and the words that fill them.
//!
//! Owns: reading `phrasings.toml`, `PhrasingSet`, filling a template's slots, English plurals and number words
//! for the slots. The plurals and number words are written here on purpose and not taken from the grammar's
//! lexicon: the operator must not speak the parser's own words back to it.
//! Must not: parse, ground or score anything.

use std::collections::BTreeMap;

use serde::Deserialize;

use super::TrialError;

const PHRASINGS: &str = include_str!("phrasings.toml");

/// Which half of the templates a trial speaks with.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PhrasingSet {
    /// Templates the project may look at while improving the parser.
    Dev,
    /// Templates kept for the figures that are reported; never used to decide parser changes.
    HeldOut,
}

impl PhrasingSet {
    /// The table name in `phrasings.toml`.
    pub fn table(self) -> &'static str {
        match self {
            PhrasingSet::Dev => "dev",
            PhrasingSet::HeldOut => "held_out",
        }
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Section {
    templates: Vec<String>,
}

/// The templates of one set, by section (`absent`, `count_exact`, `relation_on`, ...).
pub struct Phrasings {
    sections: BTreeMap<String, Vec<String>>,
}

impl Phrasings {
    /// The embedded templates of `set`.
    pub fn embedded(set: PhrasingSet) -> Result<Phrasings, TrialError> {
        let mut all: BTreeMap<String, BTreeMap<String, Section>> =
            toml::from_str(PHRASINGS).map_err(|error| TrialError::Phrasings(error.to_string()))?;
        let chosen = all
            .remove(set.table())
            .ok_or_else(|| TrialError::Phrasings(format!("no [{}.*] tables", set.table())))?;
        let sections: BTreeMap<String, Vec<String>> = chosen
            .into_iter()
            .map(|(name, section)| (name, section.templates))
            .collect();
        for (name, templates) in &sections {
            if templates.is_empty() {
                return Err(TrialError::Phrasings(format!(
                    "section {name} has no templates"
                )));
            }
        }
        Ok(Phrasings { sections })
    }

    /// The templates of a section (empty when the section does not exist).
    pub fn templates(&self, section: &str) -> &[String] {
        self.sections.get(section).map(Vec::as_slice).unwrap_or(&[])
    }
}

/// What fills a template's `{...}` slots.
#[derive(Clone, Debug, Default)]
pub struct Slots {
    pub class: String,
    pub wrong: String,
    pub room: String,
    pub landmark: String,
    pub count: u32,
}

/// Fills `{class}`, `{classes}`, `{n}`, `{wrong}`, `{room}` and `{landmark}`.
pub fn fill(template: &str, slots: &Slots) -> String {
    template
        .replace("{classes}", &plural(&slots.class))
        .replace("{class}", &slots.class)
        .replace("{n}", &number_word(slots.count))
        .replace("{wrong}", &slots.wrong)
        .replace("{room}", &slots.room.replace('_', " "))
        .replace("{landmark}", &slots.landmark)
}

/// The English plural of a class name (ordinary rules and the few irregular names the classes have).
pub fn plural(name: &str) -> String {
    match name {
        "shelf" => "shelves".to_string(),
        "person" => "people".to_string(),
        "clothes" | "stairs" => name.to_string(),
        _ if name.ends_with('s')
            || name.ends_with('x')
            || name.ends_with("ch")
            || name.ends_with("sh") =>
        {
            format!("{name}es")
        }
        _ => format!("{name}s"),
    }
}

/// A count as a word, "two" to "twelve"; larger counts as digits.
pub fn number_word(count: u32) -> String {
    const WORDS: [&str; 13] = [
        "zero", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine", "ten",
        "eleven", "twelve",
    ];
    WORDS
        .get(count as usize)
        .map(|word| word.to_string())
        .unwrap_or_else(|| count.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_sets_carry_every_section_the_operator_speaks() {
        for set in [PhrasingSet::Dev, PhrasingSet::HeldOut] {
            let phrasings = Phrasings::embedded(set).unwrap();
            for section in super::super::operator::SECTIONS {
                assert!(
                    phrasings.templates(section).len() >= 10,
                    "{set:?} {section}"
                );
            }
        }
    }

    #[test]
    fn the_halves_share_no_template() {
        let dev = Phrasings::embedded(PhrasingSet::Dev).unwrap();
        let held = Phrasings::embedded(PhrasingSet::HeldOut).unwrap();
        for section in super::super::operator::SECTIONS {
            for template in held.templates(section) {
                assert!(!dev.templates(section).contains(template), "{template}");
            }
        }
    }

    #[test]
    fn slots_fill_with_plurals_and_number_words() {
        let slots = Slots {
            class: "shelf".to_string(),
            room: "living_room".to_string(),
            count: 3,
            ..Slots::default()
        };
        assert_eq!(
            fill("{n} {classes} in the {room}, one {class}", &slots),
            "three shelves in the living room, one shelf"
        );
        assert_eq!(plural("box"), "boxes");
        assert_eq!(plural("mug"), "mugs");
        assert_eq!(number_word(14), "14");
    }
}
