//! Where the repository's committed files are, for every test binary and bench: fixtures, demo scenes and
//! the shipped model, each named once instead of joined by hand in every test and bench.
//!
//! Owns: the repository root and the folders under it that tests read. Must not: read or write files.
#![allow(dead_code)]

use std::path::{Path, PathBuf};

/// The repository root (the root package's manifest directory).
pub fn repo() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// A committed fixture: `tests/fixtures/<relative>`.
pub fn fixture(relative: &str) -> PathBuf {
    repo().join("tests/fixtures").join(relative)
}

/// The committed demo scenes' folder.
pub fn demo_scenes() -> PathBuf {
    repo().join("demo_scenes")
}

/// The shipped segment classifier (named once, by `sayso_perception::pipeline::shipped_model_path`).
pub fn shipped_model() -> PathBuf {
    sayso_perception::pipeline::shipped_model_path()
}
