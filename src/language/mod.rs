//! The language stage: operator utterances in, typed constraints out.
//!
//! Owns: normalisation, tokenisation, the lexicon and rules read from `grammar/`, parsing, and the
//! constraint types in `constraint`.
//! Must not: look at scene content; referents stay words until the grounding stage resolves them.

pub mod constraint;
