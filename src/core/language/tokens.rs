//! Tokenisation of normalised text into words and clause punctuation, with spans into the original text.
//!
//! Owns: `Token`, word boundaries (Unicode UAX #29 via unicode-segmentation), which punctuation separates
//! clauses or sentences, note symbols kept as words for the lexicon to read ("/", "+", "&", "=", "@", a
//! spaced dash), and word fragments cut off with a hyphen ("the m- the mug").
//! Must not: know any vocabulary; tagging is `lexicon`'s job.

use unicode_segmentation::UnicodeSegmentation;

use super::constraint::Span;
use super::normalise::Normalised;

/// What a token is before tagging.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TokenShape {
    /// A word (letters or digits).
    Word,
    /// A comma, colon or dash-like pause inside a sentence.
    Pause,
    /// A full stop, exclamation mark or semicolon ending a sentence.
    Stop,
    /// A question mark ending a sentence.
    QuestionMark,
}

/// One token with its text (normalised) and span (original characters).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Token {
    pub text: String,
    pub shape: TokenShape,
    pub span: Span,
    /// A word cut off by a hyphen and a space ("m-"): a stutter fragment.
    pub fragment: bool,
}

/// Splits normalised text into tokens.
pub fn tokenise(normalised: &Normalised) -> Vec<Token> {
    let text = &normalised.text;
    let mut tokens = Vec::new();
    // Map byte offsets to character offsets as we walk the pieces in order.
    // Pieces tile the text, so a running character count gives each piece's character offset.
    let mut character_index = 0usize;
    let pieces: Vec<(usize, &str)> = text.split_word_bound_indices().collect();
    for (piece_index, (_, piece)) in pieces.iter().enumerate() {
        let length = piece.chars().count();
        let start = character_index;
        let end = character_index + length;
        let spaced = |offset: isize| {
            let neighbour = piece_index as isize + offset;
            neighbour < 0
                || pieces
                    .get(neighbour as usize)
                    .is_none_or(|(_, next)| next.chars().all(char::is_whitespace))
        };
        let shape = if piece.chars().any(|c| c.is_alphanumeric()) {
            Some(TokenShape::Word)
        } else if is_note_symbol(piece)
            && (*piece != "-"
                || (spaced(-1) && spaced(1))
                || pieces.get(piece_index + 1).map(|(_, next)| *next) == Some(">"))
        {
            // Note shorthand ("/", "+", "&", "=", ">=", an arrow "->", a spaced dash): a word the lexicon
            // rewrites.
            Some(TokenShape::Word)
        } else {
            match *piece {
                "," | ":" => Some(TokenShape::Pause),
                "." | "!" | ";" => Some(TokenShape::Stop),
                "?" => Some(TokenShape::QuestionMark),
                _ => None,
            }
        };
        if let Some(shape) = shape {
            let fragment = shape == TokenShape::Word
                && pieces.get(piece_index + 1).map(|(_, next)| *next) == Some("-")
                && pieces
                    .get(piece_index + 2)
                    .map(|(_, next)| next.chars().all(char::is_whitespace))
                    .unwrap_or(true);
            if let Some(span) = original_span(normalised, start, end) {
                // Symbols written together (">=", "<=") make one word.
                if let Some(previous) = tokens.last_mut().filter(|previous: &&mut Token| {
                    is_note_symbol(&previous.text)
                        && is_note_symbol(piece)
                        && previous.span.end == span.start
                }) {
                    previous.text.push_str(piece);
                    previous.span = previous.span.cover(span);
                    character_index = end;
                    continue;
                }
                tokens.push(Token {
                    text: piece.to_string(),
                    shape,
                    span,
                    fragment,
                });
            }
        }
        character_index = end;
    }
    tokens
}

/// Symbols that field notes use as words or separators: the lexicon says what each one means.
fn is_note_symbol(piece: &str) -> bool {
    !piece.is_empty() && piece.chars().all(|c| "/+&=<>~@".contains(c)) || piece == "-"
}

/// The original span of normalised characters `start..end`.
fn original_span(normalised: &Normalised, start: usize, end: usize) -> Option<Span> {
    if start >= end {
        return None;
    }
    let first = normalised.origin.get(start)?;
    let last = normalised.origin.get(end - 1)?;
    Some(Span::new(first.0, last.1))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::language::normalise::normalise;

    #[test]
    fn words_keep_apostrophes_and_spans_point_into_the_original() {
        let tokens = tokenise(&normalise("That’s a mug, ok?"));
        let texts: Vec<&str> = tokens.iter().map(|token| token.text.as_str()).collect();
        assert_eq!(texts, ["that's", "a", "mug", ",", "ok", "?"]);
        assert_eq!(tokens[0].span, Span::new(0, 6));
        assert_eq!(tokens[5].shape, TokenShape::QuestionMark);
    }

    #[test]
    fn a_hyphen_before_a_space_marks_a_fragment_but_a_compound_does_not() {
        let tokens = tokenise(&normalise("the m- the forty-two"));
        assert!(tokens[1].fragment);
        assert!(!tokens[3].fragment);
        assert_eq!(tokens[4].text, "two");
    }
}
