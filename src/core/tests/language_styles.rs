//! The operator-styles corpora run through the parser: strict frame recall per style, constraints produced
//! from sentences that are not corrections, and relabels nobody asked for. Four corpora, each split into a
//! development and a held-out file: tests/language/styles_dev.jsonl and styles_heldout.jsonl (written blind
//! by tests/language/styles_generator/), and styles_fresh_dev.jsonl and styles_fresh_heldout.jsonl (written
//! by hand, blind, by a helper who never saw the parser; tests/language/styles_fresh.md says how), and
//! styles_fresh2_dev.jsonl and styles_fresh2_heldout.jsonl (written the same way by another helper;
//! tests/language/styles_fresh2.md), and styles_fresh3_dev.jsonl and styles_fresh3_heldout.jsonl (a third
//! helper, the same way; tests/language/styles_fresh3.md), and styles_fresh4_dev.jsonl and
//! styles_fresh4_heldout.jsonl (a fourth helper; tests/language/styles_fresh4.md).
//! tests/language/styles_widened_dev.jsonl holds lines written by the parser's own maintainers (session 9), a
//! line per variant of each construction widened then: development lines by definition, never a blind measure.
//!
//! Owns: reading the style files, scoring each line, printing the figures (and, for the development files
//! only, the failing lines) and holding the floors.
//! Must not: adjust expectations or print held-out lines; a held-out file is reported, never tuned on.

mod support;

use std::collections::BTreeMap;

use sayso_core::language::{parse_focus, Grammar};
use serde::Deserialize;

#[derive(Deserialize)]
struct Line {
    /// Style label.
    c: String,
    /// Utterance text.
    u: String,
    /// Expected constraints, `; `-separated, in the compact notation.
    e: String,
    /// Expected utterance kind (default: correction when constraints are expected, else unparsed).
    #[serde(default)]
    k: Option<String>,
    /// Focus: object:ID or pixel:X,Y.
    #[serde(default)]
    f: Option<String>,
}

/// The figures of one style file.
#[derive(Default)]
struct Score {
    /// Per style: (frame-exact lines, lines).
    per_style: BTreeMap<String, (usize, usize)>,
    /// Lines expected to carry no constraint.
    non_corrections: usize,
    /// Constraints the parse produced on those lines.
    spurious_constraints: usize,
    /// Lines whose parse holds a relabel while the expectation holds none.
    unasked_relabels: usize,
    /// Lines whose parse holds a constraint the expectation does not (a misread, not just a miss).
    misread_lines: usize,
    /// The failing lines, described.
    failures: Vec<String>,
    passed: usize,
    total: usize,
}

fn is_relabel(notation: &str) -> bool {
    notation.starts_with("relabel(")
}

fn score(grammar: &Grammar, text: &str) -> Score {
    let mut result = Score::default();
    for (index, raw) in text.lines().enumerate() {
        if raw.trim().is_empty() {
            continue;
        }
        let line: Line = serde_json::from_str(raw)
            .unwrap_or_else(|error| panic!("style line {}: {error}", index + 1));
        let focus = line
            .f
            .as_deref()
            .map(|text| parse_focus(text).expect("style focus"));
        let expected_kind = support::expected_kind(line.k.as_deref(), &line.e);
        let expected = support::split_expected(&line.e);
        let (kind, mut got) = support::parsed(grammar, &line.u, focus);
        // The styles notation writes a pronoun referent `^` whatever its number (styles_generator/check.py
        // accepts no `^*`); the parser's notation marks a plural one `^*`.
        for constraint in &mut got {
            *constraint = constraint.replace("(^*,", "(^,");
        }
        got.sort();
        if expected.is_empty() {
            result.non_corrections += 1;
            result.spurious_constraints += got.len();
        }
        if got.iter().any(|c| !expected.contains(c)) {
            result.misread_lines += 1;
        }
        if !expected.iter().any(|c| is_relabel(c)) && got.iter().any(|c| is_relabel(c)) {
            result.unasked_relabels += 1;
        }
        let ok = kind == expected_kind && got == expected;
        let entry = result.per_style.entry(line.c.clone()).or_default();
        entry.1 += 1;
        result.total += 1;
        if ok {
            entry.0 += 1;
            result.passed += 1;
        } else {
            result.failures.push(format!(
                "  line {} [{}] {:?}{}\n    expected {expected_kind} {expected:?}\n    got      {kind} {got:?}",
                index + 1,
                line.c,
                line.u,
                line.f.as_deref().map(|f| format!(" (focus {f})")).unwrap_or_default(),
            ));
        }
    }
    result
}

/// The grammar under test: the embedded one, or (while tuning) a directory named by SAYSO_STYLES_GRAMMAR.
fn grammar() -> Grammar {
    match std::env::var("SAYSO_STYLES_GRAMMAR") {
        Ok(directory) => {
            Grammar::load(std::path::Path::new(&directory)).expect("grammar directory")
        }
        Err(_) => Grammar::embedded().expect("embedded grammar"),
    }
}

fn load(name: &str) -> String {
    let path = support::workspace_file("tests/language").join(name);
    std::fs::read_to_string(&path).unwrap_or_else(|error| panic!("{}: {error}", path.display()))
}

fn recall(ok: usize, count: usize) -> f64 {
    100.0 * ok as f64 / count.max(1) as f64
}

fn print_figures(title: &str, result: &Score) {
    println!(
        "{title}: {}/{} frame-exact ({:.1}%); {} constraints from {} non-corrections; {} unasked relabels; {} lines misread",
        result.passed,
        result.total,
        recall(result.passed, result.total),
        result.spurious_constraints,
        result.non_corrections,
        result.unasked_relabels,
        result.misread_lines
    );
    for (style, (ok, count)) in &result.per_style {
        println!(
            "  {style:<18} {ok:>4}/{count:<4} {:>5.1}%",
            recall(*ok, *count)
        );
    }
}

/// What a file's figures must stay within: at least `lines` lines, recall at least `floor`%, at most
/// `most_spurious` constraints from non-corrections and `most_unasked` relabels nobody asked for.
struct Limits {
    lines: usize,
    floor: f64,
    most_spurious: usize,
    most_unasked: usize,
}

/// Scores `file`, prints its summary figures (never its lines) under `title`, and checks `limits`.
fn report_summary_only(grammar: &Grammar, file: &str, title: &str, limits: Limits) {
    let result = score(grammar, &load(file));
    print_figures(title, &result);
    assert!(
        result.total >= limits.lines,
        "{file} has {} lines",
        result.total
    );
    assert!(
        recall(result.passed, result.total) >= limits.floor,
        "{file}: recall {}/{} fell below {}%",
        result.passed,
        result.total,
        limits.floor
    );
    assert!(
        result.unasked_relabels <= limits.most_unasked,
        "{} relabels nobody asked for in {file}, more than {}",
        result.unasked_relabels,
        limits.most_unasked
    );
    assert!(
        result.spurious_constraints <= limits.most_spurious,
        "{} constraints from non-corrections in {file}, more than {}",
        result.spurious_constraints,
        limits.most_spurious
    );
}

/// Per-style floors on the development file: what the parser reached when the floors were last raised
/// (a regression fails the test).
/// Measured 2026-12-05 (session 5): 167 of 167 lines in every style (1002/1002).
const DEV_FLOORS: [(&str, f64); 6] = [
    ("asr_slip", 99.5),
    ("field_note", 99.5),
    ("hard", 99.5),
    ("not_a_correction", 99.5),
    ("speech", 99.5),
    ("typed_tidy", 99.5),
];

#[test]
fn development_styles_recall_per_style() {
    let grammar = grammar();
    let result = score(&grammar, &load("styles_dev.jsonl"));
    print_figures("styles dev", &result);
    if !result.failures.is_empty() {
        println!("failures:\n{}", result.failures.join("\n"));
    }
    assert!(
        result.total >= 1000,
        "the development file has {} lines",
        result.total
    );
    for (style, floor) in DEV_FLOORS {
        let (ok, count) = result.per_style.get(style).copied().unwrap_or_default();
        assert!(count > 0, "no development line of style {style}");
        assert!(
            recall(ok, count) >= floor,
            "style {style}: {ok}/{count} is below the floor of {floor}%"
        );
    }
    assert_eq!(
        result.unasked_relabels, 0,
        "a relabel nobody asked for on the development file"
    );
    assert_eq!(
        result.spurious_constraints, DEV_MAX_SPURIOUS,
        "constraints from non-corrections on the development file"
    );
}

const DEV_MAX_SPURIOUS: usize = 0;

/// Held-out floor at the measured figure (2026-12-05, session 5: 471/498 = 94.6%, no unasked relabel, one
/// constraint from 83 non-corrections; session 7: 473/498 = 95.0%, none, one; session 10: 474/498 = 95.2%,
/// none, one); the goal of no constraint is not reached yet.
const HELDOUT_FLOOR: f64 = 95.1;
const HELDOUT_MAX_SPURIOUS: usize = 1;

/// The held-out file is run for its figures only; its lines are never printed.
#[test]
fn heldout_styles_figures_are_reported() {
    let limits = Limits {
        lines: 450,
        floor: HELDOUT_FLOOR,
        most_spurious: HELDOUT_MAX_SPURIOUS,
        most_unasked: 0,
    };
    report_summary_only(
        &grammar(),
        "styles_heldout.jsonl",
        "styles held-out",
        limits,
    );
}

/// Per-style floors on the fresh development file (324 lines, 54 per style). When the file arrived the parser
/// of session 4 read 42, 48, 21, 44, 39 and 49 of 54 lines (243/324, 75.0%; 2 constraints from 54
/// non-corrections, 4 unasked relabels, 36 lines misread); at the end of session 5 it reads 53, 54, 46, 53,
/// 52 and 54 (312/324, 96.3%; none, none, 6); in session 7, 54 of 54 in every style (324/324, after one
/// expectation was corrected to the corpus's own `^` convention; none, none, none).
const FRESH_DEV_FLOORS: [(&str, f64); 6] = [
    ("asr_slip", 99.5),
    ("field_note", 99.5),
    ("hard", 99.5),
    ("not_a_correction", 99.5),
    ("speech", 99.5),
    ("typed_tidy", 99.5),
];

#[test]
fn fresh_development_styles_recall_per_style() {
    let grammar = grammar();
    let result = score(&grammar, &load("styles_fresh_dev.jsonl"));
    print_figures("styles fresh dev", &result);
    if !result.failures.is_empty() {
        println!("failures:\n{}", result.failures.join("\n"));
    }
    assert!(
        result.total >= 300,
        "the fresh development file has {} lines",
        result.total
    );
    for (style, floor) in FRESH_DEV_FLOORS {
        let (ok, count) = result.per_style.get(style).copied().unwrap_or_default();
        assert!(count > 0, "no fresh development line of style {style}");
        assert!(
            recall(ok, count) >= floor,
            "style {style}: {ok}/{count} is below the floor of {floor}%"
        );
    }
    assert_eq!(
        result.unasked_relabels, 0,
        "a relabel nobody asked for on the fresh development file"
    );
    assert_eq!(
        result.spurious_constraints, 0,
        "constraints from non-corrections on the fresh development file"
    );
}

/// Fresh held-out floor. When the file arrived the parser of session 4 read 120/156 (76.9%), no unasked
/// relabel, no constraint from 26 non-corrections; at the end of session 5, 134/156 (85.9%), none, none; in
/// session 7, after the parser changes the fresh development file prompted, 136/156 (87.2%), none, none;
/// after those the second fresh development file prompted, 142/156 (91.0%), none, none; in session 8, after
/// those the third fresh development file prompted, 143/156 (91.7%), none, none; in session 9, after the
/// constructions widened then, 144/156 (92.3%), none, none; in session 10, after those the fourth fresh
/// development file prompted, 145/156 (92.9%), none, none.
const FRESH_HELDOUT_FLOOR: f64 = 92.8;

/// The fresh held-out file is run for its figures only; its lines are never printed.
#[test]
fn fresh_heldout_styles_figures_are_reported() {
    let limits = Limits {
        lines: 150,
        floor: FRESH_HELDOUT_FLOOR,
        most_spurious: 0,
        most_unasked: 0,
    };
    report_summary_only(
        &grammar(),
        "styles_fresh_heldout.jsonl",
        "styles fresh held-out",
        limits,
    );
}

/// Per-style floors on the second fresh development file (300 lines, 50 per style; written by hand, blind,
/// by a helper who never saw the parser; tests/language/styles_fresh2.md says how). When the file arrived
/// (2026-12-05, session 7), before any change it prompted, the parser read 43, 49, 39, 42, 48 and 49 of 50
/// lines (270/300, 90.0%; 2 constraints from 50 non-corrections, no unasked relabel, 8 lines misread); the
/// parser of the session's start read 266/300 (88.7%; 2, none, 9). After the changes the file prompted:
/// 50, 50, 49, 49, 50 and 50 (298/300, 99.3%; 1, none, 1). In session 10, 50 of 50 in every style (300/300;
/// none, none, none).
const FRESH2_DEV_FLOORS: [(&str, f64); 6] = [
    ("asr_slip", 99.5),
    ("field_note", 99.5),
    ("hard", 99.5),
    ("not_a_correction", 99.5),
    ("speech", 99.5),
    ("typed_tidy", 99.5),
];
const FRESH2_DEV_MAX_SPURIOUS: usize = 0;

#[test]
fn fresh2_development_styles_recall_per_style() {
    let grammar = grammar();
    let result = score(&grammar, &load("styles_fresh2_dev.jsonl"));
    print_figures("styles fresh2 dev", &result);
    if !result.failures.is_empty() {
        println!("failures:\n{}", result.failures.join("\n"));
    }
    assert!(
        result.total >= 300,
        "the second fresh development file has {} lines",
        result.total
    );
    for (style, floor) in FRESH2_DEV_FLOORS {
        let (ok, count) = result.per_style.get(style).copied().unwrap_or_default();
        assert!(
            count > 0,
            "no second fresh development line of style {style}"
        );
        assert!(
            recall(ok, count) >= floor,
            "style {style}: {ok}/{count} is below the floor of {floor}%"
        );
    }
    assert_eq!(
        result.unasked_relabels, 0,
        "a relabel nobody asked for on the second fresh development file"
    );
    assert_eq!(
        result.spurious_constraints, FRESH2_DEV_MAX_SPURIOUS,
        "constraints from non-corrections on the second fresh development file"
    );
}

/// Second fresh held-out floor. When the file arrived, before any change it prompted, the parser read 132/150
/// (88.0%; no constraint from 25 non-corrections, no unasked relabel, 6 lines misread), as did the parser of
/// the session's start; after the changes the development file prompted, 135/150 (90.0%; none, none, 4); in
/// session 8, after those the third fresh development file prompted, 138/150 (92.0%; none, none, 2); in session
/// 9, after the constructions widened then, 140/150 (93.3%; none, none, 2); in session 10, 142/150 (94.7%;
/// none, none, 2).
const FRESH2_HELDOUT_FLOOR: f64 = 94.6;

/// The second fresh held-out file is run for its figures only; its lines are never printed.
#[test]
fn fresh2_heldout_styles_figures_are_reported() {
    let limits = Limits {
        lines: 150,
        floor: FRESH2_HELDOUT_FLOOR,
        most_spurious: 0,
        most_unasked: 0,
    };
    report_summary_only(
        &grammar(),
        "styles_fresh2_heldout.jsonl",
        "styles fresh2 held-out",
        limits,
    );
}

/// Per-style floors on the third fresh development file (300 lines, 50 per style; written by hand, blind, by a
/// helper who never saw the parser; tests/language/styles_fresh3.md says how). When the file arrived
/// (2026-12-05, session 8), before any change it prompted, the parser read 44, 44, 40, 44, 49 and 48 of 50
/// lines (269/300, 89.7%; no constraint from 50 non-corrections, no unasked relabel, 9 lines misread). After
/// the changes the file prompted: 49, 50, 49, 49, 49 and 50 (296/300, 98.7%; none, none, 1). In session 10:
/// 50, 50, 50, 49, 49 and 50 (298/300, 99.3%; none, none, 1).
const FRESH3_DEV_FLOORS: [(&str, f64); 6] = [
    ("asr_slip", 99.5),
    ("field_note", 99.5),
    ("hard", 99.5),
    ("not_a_correction", 97.5),
    ("speech", 97.5),
    ("typed_tidy", 99.5),
];

#[test]
fn fresh3_development_styles_recall_per_style() {
    let grammar = grammar();
    let result = score(&grammar, &load("styles_fresh3_dev.jsonl"));
    print_figures("styles fresh3 dev", &result);
    if !result.failures.is_empty() {
        println!("failures:\n{}", result.failures.join("\n"));
    }
    assert!(
        result.total >= 300,
        "the third fresh development file has {} lines",
        result.total
    );
    for (style, floor) in FRESH3_DEV_FLOORS {
        let (ok, count) = result.per_style.get(style).copied().unwrap_or_default();
        assert!(
            count > 0,
            "no third fresh development line of style {style}"
        );
        assert!(
            recall(ok, count) >= floor,
            "style {style}: {ok}/{count} is below the floor of {floor}%"
        );
    }
    assert_eq!(
        result.unasked_relabels, 0,
        "a relabel nobody asked for on the third fresh development file"
    );
    assert_eq!(
        result.spurious_constraints, 0,
        "constraints from non-corrections on the third fresh development file"
    );
}

/// Third fresh held-out floor. When the file arrived, before any change it prompted, the parser read 139/150
/// (92.7%; no constraint from 25 non-corrections, no unasked relabel, 2 lines misread); after the changes
/// the development file prompted, 140/150 (93.3%; none, none, 3); in session 9, after the constructions
/// widened then, 142/150 (94.7%; none, none, 3).
const FRESH3_HELDOUT_FLOOR: f64 = 94.6;

/// The third fresh held-out file is run for its figures only; its lines are never printed.
#[test]
fn fresh3_heldout_styles_figures_are_reported() {
    let limits = Limits {
        lines: 150,
        floor: FRESH3_HELDOUT_FLOOR,
        most_spurious: 0,
        most_unasked: 0,
    };
    report_summary_only(
        &grammar(),
        "styles_fresh3_heldout.jsonl",
        "styles fresh3 held-out",
        limits,
    );
}

/// The fourth fresh corpus (tests/language/styles_fresh4.md): 300 development and 150 held-out lines written
/// by hand, blind, by a helper who never saw the parser, copied in during session 9 before any parser change.
/// Nobody who changed the parser in that session saw either file. When the files arrived (2026-12-05, 18:14
/// UTC), before any change, the parser read dev 272/300 (90.7%; no constraint from 50 non-corrections, no
/// unasked relabel, 4 lines misread) and held-out 139/150 (92.7%; 2 constraints from 25 non-corrections, no
/// unasked relabel, 5 lines misread). After session 9's parser changes (made without sight of either file):
/// dev 274/300 (91.3%), held-out 139/150. From session 10 the development half is tuned on and prints its
/// failing lines, like the other development files; the held-out half stays summary-only. After session 10's
/// changes: dev 298/300 (99.3%; none, none, none), held-out 139/150 (92.7%; 2, none, 5).
const FRESH4_DEV_FLOOR: f64 = 99.2;
const FRESH4_HELDOUT_FLOOR: f64 = 92.6;
/// The goal is zero; the held-out half had 2 when it arrived.
const FRESH4_HELDOUT_MAX_SPURIOUS: usize = 2;

#[test]
fn fresh4_development_styles_recall() {
    let grammar = grammar();
    let result = score(&grammar, &load("styles_fresh4_dev.jsonl"));
    print_figures("styles fresh4 dev", &result);
    if !result.failures.is_empty() {
        println!("failures:\n{}", result.failures.join("\n"));
    }
    assert!(
        result.total >= 300,
        "the fourth fresh development file has {} lines",
        result.total
    );
    assert!(
        recall(result.passed, result.total) >= FRESH4_DEV_FLOOR,
        "fourth fresh development recall {}/{} fell below {FRESH4_DEV_FLOOR}%",
        result.passed,
        result.total
    );
    assert_eq!(
        result.unasked_relabels, 0,
        "a relabel nobody asked for on the fourth fresh development file"
    );
    assert_eq!(
        result.spurious_constraints, 0,
        "constraints from non-corrections on the fourth fresh development file"
    );
}

/// The fourth fresh held-out file is run for its figures only; its lines are never printed.
#[test]
fn fresh4_heldout_styles_figures_are_reported() {
    let limits = Limits {
        lines: 150,
        floor: FRESH4_HELDOUT_FLOOR,
        most_spurious: FRESH4_HELDOUT_MAX_SPURIOUS,
        most_unasked: 0,
    };
    report_summary_only(
        &grammar(),
        "styles_fresh4_heldout.jsonl",
        "styles fresh4 held-out",
        limits,
    );
}

/// The fifth hand-written corpus (`tests/language/styles_fresh5.md`): a new household, written in session 10
/// by a helper shown only the validator, the 48 example lines and the style list. Both halves were unseen by
/// everyone who changed the parser that session, so both are run for their figures only, and their lines are
/// never printed. Floors: the figures measured when the files arrived (2026-12-05, main at 5362a0b): dev
/// 276/300 (92.0%) with one relabel nobody asked for, held-out 138/150 (92.0%) with none; no constraint from
/// a non-correction in either. Recall floors are a tenth of a point under those; the dev file's unasked
/// relabel is a known fault to remove, not an allowance to grow. After the session's parser branch was merged
/// (it never saw these files): dev 282/300 (94.0%), held-out 139/150 (92.7%); the floors follow.
const FRESH5_FLOORS: [(&str, usize, f64, usize, usize); 2] = [
    ("styles_fresh5_dev.jsonl", 300, 93.9, 0, 1),
    ("styles_fresh5_heldout.jsonl", 150, 92.6, 0, 0),
];

#[test]
fn fresh5_styles_figures_are_reported() {
    let grammar = grammar();
    for (file, lines, floor, most_spurious, most_unasked) in FRESH5_FLOORS {
        let limits = Limits {
            lines,
            floor,
            most_spurious,
            most_unasked,
        };
        report_summary_only(&grammar, file, file, limits);
    }
}

/// Lines of the maintainers' own, one per variant of each construction widened in session 9 (verbs of
/// position and posture as a class, "near to", "round", "atop", "over on", field-note abbreviations read as
/// the one word they shorten, a denial of the same landmark by "it" whichever the two relations, a second
/// place by "it" after a landmark ("by the table, right next to it"), a landmark we do not know repaired by
/// one we do ("in the dishwasher, no, the sink"), a demonstrative naming a class denied ("that mug does not
/// exist"), "it's" restarting before a number ("is um it's three"), a finished move or placing ("has climbed
/// onto", "has been left by"), no spelling guess that adds a verb's ending, "+" between two things, the
/// word for colour in a note, a note's count followed by a place, words the recogniser split ("be low", "cup
/// board") or clipped ("sittin"), a possessive "'s" before a thing, and shorthand, drawn-out sounds and transitive uses that must stay unread), and
/// of those widened in session 10 (finished and past moves, what a thing or person is doing where it is,
/// age and liking words, a spaced dash as a colon, a compound after the verb that is no relabel ("that's dog
/// food"), "not X but Y is", a place by a word nobody knows, "not cat" pointed, "you've got a X there but it's
/// a Y", "so is" after a colour, a person or pet on a thing, a room said again, "actually six", "holds" and
/// "contains", side questions answered by a side, a room repairing a thing, a pointed apposition, "both"
/// before a place, household members and visitors who are never a relabel, "I make it", what the robot has
/// ("you've only got three"), "no such thing as", "isn't real", "the lamp you see", "we don't have", a
/// possessive side ("on the lamp's left"), "a bit" and "slightly" before a place, "looks like" opening a
/// statement and "call that a", how the robot split a thing ("into pieces"), "should sit", and what the
/// robot has placed ("you've put the laptop on the floor but it's on the desk"), "top one", "ate" only where a
/// number goes, wishes, plans and habits as talk, what a person or pet owns, and a thing or room said to be
/// something nobody knows: "the light in the hallway is broken" places nothing, "over they're", "look" alone,
/// "is too mugs", "the robot's in", "should be labelled", "relabel as" pointed, "that one there is a", "x 3"
/// apart, "mug count 2", a number of things never a relabel, and "next the", "nest to", "next door to").
/// Every line must read.
#[test]
fn widened_constructions_read_every_variant() {
    let grammar = grammar();
    let result = score(&grammar, &load("styles_widened_dev.jsonl"));
    print_figures("styles widened dev", &result);
    if !result.failures.is_empty() {
        println!("failures:\n{}", result.failures.join("\n"));
    }
    assert!(
        result.total >= 50,
        "the widened file has {} lines",
        result.total
    );
    assert_eq!(
        result.passed, result.total,
        "a widened construction no longer reads"
    );
    assert_eq!(result.unasked_relabels, 0);
    assert_eq!(result.spurious_constraints, 0);
}
