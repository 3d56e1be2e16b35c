//! Spelling distance for accepting near-misses of lexicon words and suggesting words for unknown ones.
//!
//! Owns: optimal-string-alignment distance (Levenshtein plus adjacent transposition) with an early cut-off,
//! and the thresholds for "accept as a misspelling" and "offer as a suggestion".
//! Must not: know what the words mean; the lexicon supplies the candidates.

/// Optimal-string-alignment distance between two words, or `None` once it must exceed `limit`.
pub fn distance_within(left: &str, right: &str, limit: usize) -> Option<usize> {
    let a: Vec<char> = left.chars().collect();
    let b: Vec<char> = right.chars().collect();
    if a.len().abs_diff(b.len()) > limit {
        return None;
    }
    let width = b.len() + 1;
    let mut previous_previous: Vec<usize> = vec![0; width];
    let mut previous: Vec<usize> = (0..width).collect();
    let mut current: Vec<usize> = vec![0; width];
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
    }
}
