//! What the core crate's test binaries share: where the workspace's committed files are (fixtures, the
//! language corpora, the grammar), and the compact notation's lists of expected constraints.
//!
//! Owns: `workspace_file` and `split_expected`. Must not: hold tests, or read or write files.
#![allow(dead_code)]

use std::path::{Path, PathBuf};

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
