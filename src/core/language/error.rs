//! The language stage's error types: grammar files that fail validation, and utterances the parser refuses.
//!
//! Owns: `GrammarError` (file and line of a bad grammar line) and `LanguageError` (carrying the length or
//! text it concerns; everything else about an utterance is a note or an ignored span in the `Parse`).
//! Must not: format for a particular front end; the CLI and service decide how to show these.

use std::path::PathBuf;

/// A grammar file (lexicon, rules or interval table) that could not be read or failed validation.
#[derive(Debug, thiserror::Error)]
pub enum GrammarError {
    #[error("cannot read grammar file {path}: {source}")]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("{file}:{line}: {message}")]
    Line {
        file: String,
        line: usize,
        message: String,
    },
    #[error("grammar: {0}")]
    Taxonomy(String),
}

impl GrammarError {
    /// An error on one numbered line of a named file.
    pub fn line(file: &str, line: usize, message: impl Into<String>) -> GrammarError {
        GrammarError::Line {
            file: file.to_string(),
            line,
            message: message.into(),
        }
    }
}

/// An utterance the parser refuses to read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum LanguageError {
    /// The utterance is longer than the parser's limit (in characters).
    #[error("utterance is {length} characters long; the limit is {limit}")]
    TooLong { length: usize, limit: usize },
    /// A focus string that is neither `object:ID` nor `pixel:X,Y`.
    #[error("focus '{text}' is not object:ID or pixel:X,Y")]
    BadFocus { text: String },
}
