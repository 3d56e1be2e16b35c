//! Outside checks and behaviour tests for the language stage.
//!
//! Owns: number words against word2number, class plurals against inflect, colour words against the CSS named
//! colours, Allen's composition table against an independent enumeration, the conversation cases in
//! tests/language/conversations.jsonl, site word files, grammar errors, and no-panic / span properties.
//! Must not: run Python or reach the network; every reference value is a committed fixture.

mod support;

use std::collections::{BTreeMap, BTreeSet};

use proptest::prelude::*;
use sayso_core::language::allen::{converse, names_of, set_of, CompositionTable, ALL};
use sayso_core::language::lexicon::Tag;
use sayso_core::language::notation::{colour_name, notation_list};
use sayso_core::language::{ConflictKind, Conversation, Grammar, LanguageError};
use sayso_core::taxonomy::Taxonomy;

fn fixture(name: &str) -> String {
    std::fs::read_to_string(support::workspace_file("tests/fixtures/language").join(name))
        .unwrap_or_else(|error| panic!("fixture {name}: {error}"))
}

fn rows(text: &str) -> Vec<Vec<String>> {
    text.lines()
        .filter(|line| !line.starts_with('#') && !line.trim().is_empty())
        .map(|line| line.split('\t').map(str::to_string).collect())
        .collect()
}

fn grammar() -> Grammar {
    Grammar::embedded().expect("embedded grammar")
}

/// Reference: word2number 1.1 (PyPI), via tests/fixtures/language/make_numbers.py -> numbers.tsv.
#[test]
fn every_number_phrase_matches_word2number() {
    let grammar = grammar();
    let reference: BTreeMap<String, u32> = rows(&fixture("numbers.tsv"))
        .into_iter()
        .map(|row| (row[0].clone(), row[1].parse().expect("value")))
        .collect();
    // Every phrase the lexicon accepts: number words, tens words, and tens + unit with space or hyphen.
    let words = grammar.lexicon().number_words();
    let mut accepted = BTreeSet::new();
    for (word, tag) in &words {
        accepted.insert(word.clone());
        if let Tag::Tens(_) = tag {
            for (unit, unit_tag) in &words {
                if matches!(unit_tag, Tag::Number(1..=9)) {
                    accepted.insert(format!("{word} {unit}"));
                    accepted.insert(format!("{word}-{unit}"));
                }
            }
        }
    }
    assert_eq!(accepted, reference.keys().cloned().collect::<BTreeSet<_>>());
    for (phrase, value) in &reference {
        let parse = grammar
            .parse(&format!("there are {phrase} books"), None)
            .expect("parse");
        let notation = notation_list(&parse.constraints, grammar.taxonomy());
        let expected = match value {
            0 => "absent(book)".to_string(),
            n => format!("count(book, ={n})"),
        };
        assert_eq!(notation, [expected], "number phrase '{phrase}'");
    }
}

/// Reference: inflect 7.6.0 (PyPI), via tests/fixtures/language/make_plurals.py -> plurals.tsv.
#[test]
fn class_plurals_match_inflect() {
    let grammar = grammar();
    let reference = rows(&fixture("plurals.tsv"));
    let mut checked = 0;
    let lexicon_singulars: BTreeSet<String> = grammar
        .lexicon()
        .class_words()
        .iter()
        .filter(|word| !word.mass)
        .filter_map(|word| word.singular.clone())
        .collect();
    let reference_singulars: BTreeSet<String> = reference
        .iter()
        .filter(|row| row[1] == "singular")
        .map(|row| row[0].clone())
        .collect();
    assert_eq!(lexicon_singulars, reference_singulars);
    for row in &reference {
        let word = &row[0];
        let form = &row[2];
        match row[1].as_str() {
            "singular" => {
                let entry = grammar
                    .lexicon()
                    .class_words()
                    .iter()
                    .find(|entry| entry.singular.as_deref() == Some(word.as_str()))
                    .expect("class word");
                assert_eq!(
                    entry.plural.as_deref(),
                    Some(form.as_str()),
                    "plural of '{word}'"
                );
                // And the parser reads that plural as plural of the same class.
                let words: Vec<&str> = form.split(' ').collect();
                let found = grammar
                    .lexicon()
                    .longest_phrase(&words)
                    .expect("plural is a phrase");
                assert_eq!(
                    found.tag,
                    Tag::Class {
                        class: entry.class,
                        plural: true
                    },
                    "'{form}'"
                );
            }
            "plural_only" => {
                // inflect reads the word as a plural (it offers a singular), and so do we.
                assert_ne!(form, "False", "inflect does not see '{word}' as plural");
                let words: Vec<&str> = word.split(' ').collect();
                let found = grammar.lexicon().longest_phrase(&words).expect("phrase");
                assert!(
                    matches!(found.tag, Tag::Class { plural: true, .. }),
                    "'{word}'"
                );
            }
            other => panic!("unknown kind {other}"),
        }
        checked += 1;
    }
    assert!(checked > 90, "only {checked} class words checked");
}

/// Reference: W3C CSS Color Module Level 4 named colours (webcolors' CSS table, via
/// tests/fixtures/language/make_colours.py -> css_colours.tsv). A colour word that is a CSS name must map to
/// the basic term whose prototype is nearest in CIELAB; the eleven basic terms map to themselves.
#[test]
fn colour_words_match_css_named_colours() {
    let grammar = grammar();
    let mut checked = 0;
    for row in rows(&fixture("css_colours.tsv")) {
        let (word, nearest) = (&row[0], &row[5]);
        let found = grammar
            .lexicon()
            .longest_phrase(&[word.as_str()])
            .expect("colour word");
        let Tag::Colour(term) = found.tag else {
            panic!("'{word}' is not a colour")
        };
        let basic = [
            "black", "white", "red", "green", "yellow", "blue", "brown", "purple", "pink",
            "orange", "grey",
        ];
        if basic.contains(&word.as_str()) {
            assert_eq!(colour_name(term), word, "basic term '{word}'");
        } else {
            assert_eq!(
                colour_name(term),
                nearest,
                "'{word}' ({}) is nearest {nearest}",
                row[1]
            );
        }
        checked += 1;
    }
    assert!(checked >= 20);
}

/// Reference: Allen (1983) composition table; grammar/allen_composition.txt (point-algebra derivation) must equal
/// tests/fixtures/language/allen_enumerated.txt (brute-force enumeration of concrete intervals).
#[test]
fn allen_table_matches_enumeration_and_known_entries() {
    let table = CompositionTable::embedded().expect("table");
    let enumerated =
        CompositionTable::parse(&fixture("allen_enumerated.txt"), "allen_enumerated.txt")
            .expect("fixture");
    assert_eq!(table, enumerated);
    // Entries recalled from the paper's table (from memory).
    let entry =
        |r: &str, s: &str| names_of(table.compose(set_of(&[r]).unwrap(), set_of(&[s]).unwrap()));
    assert_eq!(entry("b", "b"), ["b"]);
    assert_eq!(entry("m", "m"), ["b"]);
    assert_eq!(entry("d", "d"), ["d"]);
    assert_eq!(entry("s", "s"), ["s"]);
    assert_eq!(entry("o", "o"), ["b", "m", "o"]);
    assert_eq!(entry("m", "mi"), ["f", "eq", "fi"]);
    assert_eq!(
        table.compose(set_of(&["b"]).unwrap(), set_of(&["bi"]).unwrap()),
        ALL
    );
    // Algebraic laws: eq is the identity, and (r s)^-1 = s^-1 r^-1.
    let names = [
        "b", "m", "o", "s", "d", "f", "eq", "fi", "di", "si", "oi", "mi", "bi",
    ];
    for r in names {
        let r_set = set_of(&[r]).unwrap();
        assert_eq!(table.compose(set_of(&["eq"]).unwrap(), r_set), r_set);
        for s in names {
            let s_set = set_of(&[s]).unwrap();
            assert_eq!(
                converse(table.compose(r_set, s_set)),
                table.compose(converse(s_set), converse(r_set))
            );
        }
    }
}

/// Conversation cases are data: tests/language/conversations.jsonl.
#[test]
fn conversation_cases_report_contradictions_and_redundancy_with_both_spans() {
    let grammar = grammar();
    let text = std::fs::read_to_string(support::workspace_file(
        "tests/language/conversations.jsonl",
    ))
    .expect("cases");
    for line in text.lines().filter(|line| !line.trim().is_empty()) {
        let case: serde_json::Value = serde_json::from_str(line).expect("case");
        let name = case["name"].as_str().unwrap_or("?");
        let mut conversation = Conversation::new(grammar.taxonomy().clone()).expect("conversation");
        let mut found = Vec::new();
        for (turn_index, turn) in case["turns"].as_array().expect("turns").iter().enumerate() {
            let parse = grammar
                .parse(turn.as_str().expect("turn"), None)
                .expect("parse");
            assert!(
                !parse.constraints.is_empty(),
                "{name}: turn {turn_index} parsed to nothing"
            );
            let report = conversation.add(&parse);
            for conflict in report.conflicts {
                assert!(
                    !conflict.earlier.is_empty(),
                    "{name}: a conflict without an earlier span"
                );
                assert!(conflict.later.span.end > conflict.later.span.start);
                found.push(conflict);
            }
        }
        let expected = case["expect"].as_array().expect("expect");
        assert_eq!(found.len(), expected.len(), "{name}: got {found:#?}");
        for (conflict, want) in found.iter().zip(expected) {
            let kind = match conflict.kind {
                ConflictKind::Contradiction => "contradiction",
                ConflictKind::Redundancy => "redundancy",
            };
            assert_eq!(
                kind,
                want["kind"].as_str().unwrap(),
                "{name}: {}",
                conflict.message
            );
            assert_eq!(
                conflict.later.turn as u64,
                want["turn"].as_u64().unwrap(),
                "{name}"
            );
            assert!(
                conflict
                    .earlier
                    .iter()
                    .any(|at| at.turn as u64 == want["earlier_turn"].as_u64().unwrap()),
                "{name}: {conflict:?}"
            );
        }
    }
}

#[test]
fn previous_deixis_binds_to_the_last_referent_across_turns() {
    let grammar = grammar();
    let mut conversation = Conversation::new(grammar.taxonomy().clone()).unwrap();
    conversation.add(&grammar.parse("the mug is on the table", None).unwrap());
    let turn = conversation.add(&grammar.parse("it's blue", None).unwrap());
    let mug = grammar.taxonomy().class_by_name("mug").unwrap().id;
    assert_eq!(turn.bindings.len(), 1);
    assert_eq!(
        turn.bindings[0]
            .referent
            .as_ref()
            .and_then(|referent| referent.class),
        Some(mug)
    );
}

#[test]
fn a_site_word_file_adds_words_without_recompiling() {
    let directory = tempfile::tempdir().unwrap();
    let root = support::workspace_file("grammar");
    for sub in ["lexicon", "rules", "site"] {
        std::fs::create_dir_all(directory.path().join(sub)).unwrap();
        for entry in std::fs::read_dir(root.join(sub)).unwrap() {
            let path = entry.unwrap().path();
            std::fs::copy(
                &path,
                directory.path().join(sub).join(path.file_name().unwrap()),
            )
            .unwrap();
        }
    }
    std::fs::write(
        directory.path().join("site/extra.lex"),
        "hammock -> class bed\n",
    )
    .unwrap();
    let grammar = Grammar::load(directory.path()).expect("grammar directory");
    let parse = grammar.parse("the cat is on the hammock", None).unwrap();
    assert_eq!(
        notation_list(&parse.constraints, grammar.taxonomy()),
        ["rel(cat, on, bed)"]
    );
    let before = Grammar::embedded()
        .unwrap()
        .parse("the cat is on the hammock", None)
        .unwrap();
    assert!(before.constraints.is_empty());
    std::fs::write(
        directory.path().join("site/bad.lex"),
        "# ok\nsofa bed -> class futon\n",
    )
    .unwrap();
    let error = Grammar::load(directory.path()).unwrap_err().to_string();
    assert!(
        error.starts_with("site/bad.lex:2: unknown class 'futon'"),
        "{error}"
    );
}

#[test]
fn too_long_input_is_a_typed_error_with_its_length() {
    let grammar = grammar();
    let text = "a".repeat(5000);
    assert_eq!(
        grammar.parse(&text, None).unwrap_err(),
        LanguageError::TooLong {
            length: 5000,
            limit: 4096
        }
    );
}

#[test]
fn spans_point_into_the_original_text_and_notes_explain_misspellings() {
    let grammar = grammar();
    let text = "UM, the “lamp” is next to the sofaa";
    let parse = grammar.parse(text, None).unwrap();
    let chars: Vec<char> = text.chars().collect();
    let constraint = &parse.constraints[0];
    let covered: String = chars[constraint.span.start..constraint.span.end]
        .iter()
        .collect();
    assert_eq!(covered, "the “lamp” is next to the sofaa");
    assert!(constraint.confidence < 1.0);
    assert!(parse.notes.iter().any(|note| matches!(&note.kind,
        sayso_core::language::NoteKind::MisspellingAccepted { written, read_as } if written == "sofaa" && read_as == "sofa")));
    let unknown = grammar.parse("the mug is on the ottoman", None).unwrap();
    assert!(unknown.notes.iter().any(|note| matches!(&note.kind,
        sayso_core::language::NoteKind::UnknownWord { written, .. } if written == "ottoman")));
}

#[test]
fn removing_or_renaming_a_safety_class_asks_for_confirmation() {
    let grammar = grammar();
    let needs = |text: &str| {
        grammar.parse(text, None).unwrap().notes.iter().any(|note| {
            matches!(
                note.kind,
                sayso_core::language::NoteKind::NeedsConfirmation { .. }
            )
        })
    };
    assert!(needs("that's a towel, not a cat"));
    assert!(needs("there are no people"));
    assert!(!needs("that's a towel, not a mug"));
    assert!(!needs("there is a dog"));
}

#[test]
fn parsing_is_deterministic() {
    let grammar = grammar();
    let text = "that's a cabinet, not a fridge, and there are two chairs";
    let first = serde_json::to_string(&grammar.parse(text, None).unwrap()).unwrap();
    for _ in 0..5 {
        assert_eq!(
            serde_json::to_string(&grammar.parse(text, None).unwrap()).unwrap(),
            first
        );
    }
}

#[test]
fn embedded_taxonomy_is_the_one_in_the_grammar() {
    assert_eq!(grammar().taxonomy(), &Taxonomy::embedded());
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]
    #[test]
    fn no_input_panics_and_every_span_lies_inside_it(text in "\\PC{0,80}|[a-z ,.'!?-]{0,120}") {
        let grammar = grammar();
        let length = text.chars().count();
        if let Ok(parse) = grammar.parse(&text, None) {
            for constraint in &parse.constraints {
                prop_assert!(constraint.span.start < constraint.span.end && constraint.span.end <= length);
            }
            for ignored in &parse.ignored {
                prop_assert!(ignored.span.end <= length);
            }
            for note in &parse.notes {
                prop_assert!(note.span.end <= length);
            }
        }
    }
}

#[test]
fn the_grammar_directory_on_disk_reads_the_same_as_the_embedded_copy() {
    let root = support::workspace_file("grammar");
    let loaded = Grammar::load(&root).expect("grammar directory");
    let embedded = grammar();
    assert_eq!(loaded.lexicon().phrases(), embedded.lexicon().phrases());
    assert_eq!(loaded.rules(), embedded.rules());
    assert_eq!(loaded.taxonomy(), embedded.taxonomy());
}
