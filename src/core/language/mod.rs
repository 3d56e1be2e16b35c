//! The language stage: operator utterances in, typed constraints out.
//!
//! Owns: normalisation, tokenisation, the lexicon and rules read from `grammar/`, parsing, the compact
//! notation, the conversation (deictic binding, contradiction and redundancy across turns) and the
//! interval-algebra check behind it, plus the constraint types in `constraint`.
//! Must not: look at scene content; referents stay words until the grounding stage resolves them.
//!
//! ```
//! use sayso_core::language::Grammar;
//!
//! let grammar = Grammar::embedded().expect("the embedded grammar is valid");
//! let parse = grammar.parse("there are two chairs by the table", None).unwrap();
//! let notation = sayso_core::language::notation::notation_list(&parse.constraints, grammar.taxonomy());
//! assert_eq!(notation, ["count(chair, =2)", "rel(chair*, next_to, table)"]);
//! ```

mod actions;
pub mod allen;
mod answers;
mod asides;
mod chunks;
pub mod constraint;
pub mod conversation;
pub mod error;
pub mod lexicon;
mod lexicon_syntax;
pub mod normalise;
pub mod notation;
pub mod parse;
pub mod rules;
pub mod spelling;
mod tagging;
pub mod tokens;

pub use conversation::{Conflict, ConflictKind, Conversation, Turn};
pub use error::{GrammarError, LanguageError};
pub use parse::{
    parse_focus, Grammar, Ignored, IgnoredReason, Note, NoteKind, Parse, UtteranceKind,
};
