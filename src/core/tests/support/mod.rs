//! What the core crate's test binaries share: where the workspace's committed files are (fixtures, the
//! language corpora, the grammar), and the compact notation's lists of expected constraints.
//!
//! Owns: `workspace_file`, `split_expected`, `expected_kind` and `parsed`. Must not: hold tests, or read or
//! write files.
#![allow(dead_code)]

use std::path::{Path, PathBuf};

use sayso_core::language::constraint::Focus;
use sayso_core::language::notation::notation_list;
use sayso_core::language::{Grammar, LanguageError};

/// A committed file or folder, by its path from the workspace root (`sayso_core::shipped::WORKSPACE_DIR`).
pub fn workspace_file(relative: &str) -> PathBuf {
    Path::new(sayso_core::shipped::WORKSPACE_DIR).join(relative)
}

/// A `; `-separated list of expected constraints in the compact notation, trimmed, empty parts left out,
/// sorted (the order a parse lists them in does not count).
pub fn split_expected(text: &str) -> Vec<String> {
    let mut list: Vec<String> = text
        .split("; ")
        .map(str::trim)
        .filter(|part| !part.is_empty())
        .map(str::to_string)
        .collect();
    list.sort();
    list
}

/// The utterance kind a corpus line expects: its own `k`, else a correction when it lists constraints, else
/// unparsed.
pub fn expected_kind(kind: Option<&str>, expected: &str) -> String {
    match kind {
        Some(kind) => kind.to_string(),
        None if expected.trim().is_empty() => "unparsed".into(),
        None => "correction".into(),
    }
}

/// What the parser makes of `text`: the utterance kind's name (or "error" and the error) and the constraints
/// in the compact notation, sorted.
pub fn parsed(grammar: &Grammar, text: &str, focus: Option<Focus>) -> (String, Vec<String>) {
    let (kind, mut got) = match grammar.parse(text, focus) {
        Ok(parse) => (
            parse.utterance_kind.name().to_string(),
            notation_list(&parse.constraints, grammar.taxonomy()),
        ),
        Err(LanguageError::TooLong { .. }) => ("error".to_string(), Vec::new()),
        Err(other) => (format!("error: {other}"), Vec::new()),
    };
    got.sort();
    (kind, got)
}
