//! Spelling distance for accepting near-misses of lexicon words and suggesting words for unknown ones.
//!
//! Owns: optimal-string-alignment distance (Levenshtein plus adjacent transposition) with an early cut-off,
//! and the thresholds for "accept as a misspelling" and "offer as a suggestion".
//! Must not: know what the words mean; the lexicon supplies the candidates.

/// Optimal-string-alignment distance between two words, or `None` once it must exceed `limit`.
///
/// ASCII words are compared byte by byte and short words use rows on the stack: this runs once per lexicon
/// word for every unknown word, so it must not allocate.
pub fn distance_within(left: &str, right: &str, limit: usize) -> Option<usize> {
    if left.is_ascii() && right.is_ascii() {
        return alignment_within(left.as_bytes(), right.as_bytes(), limit);
    }
    let a: Vec<char> = left.chars().collect();
    let b: Vec<char> = right.chars().collect();
    alignment_within(&a, &b, limit)
}

/// `distance_within` for two ASCII words given as bytes.
///
/// Before aligning, a cheap lower bound: a letter in one word that the other lacks costs at least one edit
/// per distinct such letter (a substitution, insertion or deletion removes at most one on each side; a
/// transposition none), so more of them than `limit` on either side rules the pair out.
pub fn ascii_distance_within(left: &[u8], right: &[u8], limit: usize) -> Option<usize> {
    if left.len().abs_diff(right.len()) > limit {
        return None;
    }
    let (left_letters, right_letters) = (letter_set(left), letter_set(right));
    let only_left = (left_letters & !right_letters).count_ones() as usize;
    let only_right = (right_letters & !left_letters).count_ones() as usize;
    if only_left.max(only_right) > limit {
        return None;
    }
    alignment_within(left, right, limit)
}

/// The bytes of a word as a 64-bit set (byte modulo 64: two bytes may share a bit, which only weakens the
/// bound, never breaks it).
fn letter_set(word: &[u8]) -> u64 {
    word.iter()
        .fold(0u64, |set, &byte| set | 1u64 << (byte & 63))
}

/// Rows up to this width live on the stack.
const STACK_ROW: usize = 48;

fn alignment_within<T: PartialEq>(a: &[T], b: &[T], limit: usize) -> Option<usize> {
    if a.len().abs_diff(b.len()) > limit {
        return None;
    }
    let width = b.len() + 1;
    if width <= STACK_ROW {
        let mut rows = [[0usize; STACK_ROW]; 3];
        let [first, second, third] = &mut rows;
        alignment_rows(
            a,
            b,
            limit,
            &mut first[..width],
            &mut second[..width],
            &mut third[..width],
        )
    } else {
        let mut rows = vec![0usize; 3 * width];
        let (first, rest) = rows.split_at_mut(width);
        let (second, third) = rest.split_at_mut(width);
        alignment_rows(a, b, limit, first, second, third)
    }
}

fn alignment_rows<'row, T: PartialEq>(
    a: &[T],
    b: &[T],
    limit: usize,
    mut previous_previous: &'row mut [usize],
    mut previous: &'row mut [usize],
    mut current: &'row mut [usize],
) -> Option<usize> {
    for (j, cell) in previous.iter_mut().enumerate() {
        *cell = j;
    }
    for i in 1..=a.len() {
        current[0] = i;
        let mut row_minimum = current[0];
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            let mut value = (previous[j] + 1)
                .min(current[j - 1] + 1)
                .min(previous[j - 1] + cost);
            if i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] {
                value = value.min(previous_previous[j - 2] + 1);
            }
            current[j] = value;
            row_minimum = row_minimum.min(value);
        }
        if row_minimum > limit {
            return None;
        }
        std::mem::swap(&mut previous_previous, &mut previous);
        std::mem::swap(&mut previous, &mut current);
    }
    let distance = previous[b.len()];
    (distance <= limit).then_some(distance)
}

/// The largest distance at which an unknown word of this length is read as a misspelling.
pub fn accept_limit(word: &str) -> usize {
    match word.chars().count() {
        0..=3 => 0,
        4..=7 => 1,
        _ => 2,
    }
}

/// The largest distance at which a word is offered as a suggestion.
pub const SUGGESTION_LIMIT: usize = 3;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn transpositions_count_once_and_limits_cut_off() {
        assert_eq!(distance_within("chiars", "chairs", 2), Some(1));
        assert_eq!(distance_within("sofaa", "sofa", 1), Some(1));
        assert_eq!(distance_within("kitten", "sitting", 3), Some(3));
        assert_eq!(distance_within("kitten", "sitting", 2), None);
        assert_eq!(distance_within("", "mug", 3), Some(3));
        // Non-ASCII words go through characters, long ones through rows on the heap.
        assert_eq!(distance_within("café", "cafe", 1), Some(1));
        assert_eq!(distance_within("naïve", "navie", 1), None);
        let long = "a".repeat(60);
        assert_eq!(distance_within(&long, &format!("{long}bc"), 2), Some(2));
        assert_eq!(distance_within(&long, &format!("{long}bcd"), 2), None);
        // The letter-set bound agrees with the alignment.
        for (left, right) in [
            ("sofa", "soap"),
            ("chair", "chiar"),
            ("lamp", "plum"),
            ("cup", "xyz"),
        ] {
            for limit in 0..4 {
                assert_eq!(
                    ascii_distance_within(left.as_bytes(), right.as_bytes(), limit),
                    distance_within(left, right, limit),
                    "{left} {right} {limit}"
                );
            }
        }
    }
}
