//! Unicode normalisation of an utterance with a map back to the original characters.
//!
//! Owns: NFKC per grapheme cluster, removal of control and invisible format characters, folding of curly
//! quotes, primes and dashes to ASCII, lower-casing, and the offset map from each normalised character to
//! the original character range it came from.
//! Must not: split words or know any vocabulary; that is `tokens` and `lexicon`.

use unicode_normalization::UnicodeNormalization;
use unicode_segmentation::UnicodeSegmentation;

/// The normalised text and, for every normalised character, the original character range it came from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Normalised {
    pub text: String,
    /// `origin[i]` is the half-open original character range of normalised character `i`.
    pub origin: Vec<(usize, usize)>,
    /// Characters in the original utterance.
    pub original_length: usize,
}

/// Whether a character is an invisible format or bidirectional control character that should vanish.
fn is_invisible_format(character: char) -> bool {
    matches!(character,
        '\u{00AD}' | '\u{061C}' | '\u{180E}' | '\u{200B}'..='\u{200F}' | '\u{202A}'..='\u{202E}'
        | '\u{2060}'..='\u{2064}' | '\u{2066}'..='\u{206F}' | '\u{FEFF}' | '\u{FE00}'..='\u{FE0F}')
}

/// Folds typographic punctuation to the ASCII character an operator would type.
fn fold_punctuation(character: char) -> char {
    match character {
        '\u{2018}' | '\u{2019}' | '\u{201A}' | '\u{201B}' | '\u{2032}' | '\u{02BC}'
        | '\u{FF07}' | '`' | '\u{00B4}' => '\'',
        '\u{201C}' | '\u{201D}' | '\u{201E}' | '\u{201F}' | '\u{2033}' | '\u{00AB}'
        | '\u{00BB}' => '"',
        '\u{2010}' | '\u{2011}' | '\u{2012}' | '\u{2013}' | '\u{2014}' | '\u{2015}'
        | '\u{2212}' => '-',
        other => other,
    }
}

/// Appends one character's normalised form, each output character mapped to `range`.
fn push_normalised(
    character: char,
    range: (usize, usize),
    text: &mut String,
    origin: &mut Vec<(usize, usize)>,
) {
    if character.is_control() {
        if character.is_whitespace() {
            text.push(' ');
            origin.push(range);
        }
        return;
    }
    if is_invisible_format(character) {
        return;
    }
    let folded = fold_punctuation(character);
    if folded.is_ascii() {
        text.push(folded.to_ascii_lowercase());
        origin.push(range);
        return;
    }
    for lower in folded.to_lowercase() {
        text.push(lower);
        origin.push(range);
    }
}

/// Normalises an utterance: NFKC, invisible characters removed, controls to spaces, punctuation folded,
/// lower case. Never fails.
pub fn normalise(original: &str) -> Normalised {
    let mut text = String::with_capacity(original.len());
    let mut origin = Vec::with_capacity(original.len());
    if original.is_ascii() {
        // ASCII text: every byte is its own grapheme cluster except "\r\n", and NFKC leaves ASCII alone,
        // so a byte scan gives what the cluster walk below gives.
        let bytes = original.as_bytes();
        let mut position = 0usize;
        while position < bytes.len() {
            let width = if bytes[position] == b'\r' && bytes.get(position + 1) == Some(&b'\n') {
                2
            } else {
                1
            };
            let range = (position, position + width);
            for &byte in &bytes[position..position + width] {
                push_normalised(char::from(byte), range, &mut text, &mut origin);
            }
            position += width;
        }
        return Normalised {
            text,
            origin,
            original_length: bytes.len(),
        };
    }
    let mut position = 0usize;
    for grapheme in original.graphemes(true) {
        let width = grapheme.chars().count();
        let range = (position, position + width);
        position += width;
        if grapheme.len() == 1 {
            // One ASCII byte: NFKC leaves it alone.
            if let Some(character) = grapheme.chars().next() {
                push_normalised(character, range, &mut text, &mut origin);
            }
            continue;
        }
        for character in grapheme.nfkc() {
            push_normalised(character, range, &mut text, &mut origin);
        }
    }
    Normalised {
        text,
        origin,
        original_length: position,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn full_width_and_curly_quotes_fold_to_plain_lower_case() {
        let normalised = normalise("ＴＨＡＴ’S a “Mug”");
        assert_eq!(normalised.text, "that's a \"mug\"");
        assert_eq!(normalised.origin.len(), normalised.text.chars().count());
        assert_eq!(normalised.origin[0], (0, 1));
    }

    #[test]
    fn invisible_and_control_characters_vanish_but_offsets_stay_original() {
        let normalised = normalise("a\u{200B}\u{0007}b\tc");
        assert_eq!(normalised.text, "ab c");
        assert_eq!(normalised.origin[1], (3, 4));
        assert_eq!(normalised.origin[3], (5, 6));
        assert_eq!(normalised.original_length, 6);
    }

    #[test]
    fn combining_marks_compose_and_map_to_their_whole_cluster() {
        let normalised = normalise("cafe\u{0301}!");
        assert_eq!(normalised.text, "café!");
        assert_eq!(normalised.origin[3], (3, 5));
        assert_eq!(normalised.origin[4], (5, 6));
    }

    #[test]
    fn ascii_byte_scan_matches_the_cluster_walk() {
        // "\r\n" is one grapheme cluster (UAX #29, rule GB3): both spaces map to the pair.
        let normalised = normalise("A\r\nb`\x0bC\x01d");
        assert_eq!(normalised.text, "a  b' cd");
        assert_eq!(normalised.origin[1], (1, 3));
        assert_eq!(normalised.origin[2], (1, 3));
        assert_eq!(normalised.origin[3], (3, 4));
        assert_eq!(normalised.origin[7], (8, 9));
        assert_eq!(normalised.original_length, 9);
        // The same text with one non-ASCII character goes the cluster way and agrees on the ASCII part.
        let walked = normalise("A\r\nb`\x0bC\x01d\u{e9}");
        assert_eq!(walked.text, "a  b' cd\u{e9}");
        assert_eq!(&walked.origin[..8], &normalised.origin[..]);
    }
}
