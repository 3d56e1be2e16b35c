//! Conversation words: utterances that steer the conversation ("undo", "yes", "no, the other one") and
//! answers to a question ("the second from the left", "the one on the right", "object 12", "this one").
//!
//! Owns: the phrase lists of `grammar/conversation.toml` and reading an answer's words into a `Choice`.
//! Must not: look at the scene or pick a candidate; `super::answer` matches a choice to candidates.

use std::sync::OnceLock;

use regex::Regex;
use serde::Deserialize;

/// The default phrase lists, compiled in.
pub const EMBEDDED_CONVERSATION: &str = include_str!("../../../grammar/conversation.toml");

/// An utterance that steers the conversation.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Command {
    Undo,
    Redo,
    Confirm,
    Reject,
    /// "No, the other one": the previous answer picked the wrong candidate.
    OtherOne,
}

/// Which side an answer names.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Side {
    Left,
    Right,
    Top,
    Bottom,
    Middle,
}

/// What an answer to "which one?" says.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Choice {
    /// The n-th candidate (1-based) counted from a side ("the second from the left", "the last one").
    Position { n: usize, from: Side },
    /// The candidate furthest to a side, or the middle one.
    Side(Side),
    /// A scene-graph object id ("object 12", "#12").
    Object(u32),
    /// "This one", "here": whatever the focus sent with the answer points at.
    Pointed,
    /// The words of one of the question's descriptions ("the one left of the table").
    Described(String),
}

#[derive(Deserialize)]
struct Lists {
    fillers: Vec<String>,
    undo: Vec<String>,
    redo: Vec<String>,
    confirm: Vec<String>,
    reject: Vec<String>,
    other: Vec<String>,
}

struct Phrases {
    fillers: Vec<String>,
    commands: Vec<(String, Command)>,
}

fn phrases() -> &'static Phrases {
    static PHRASES: OnceLock<Phrases> = OnceLock::new();
    PHRASES.get_or_init(|| {
        // The embedded file is checked by a unit test; a broken edit falls back to no conversation words.
        let lists: Lists = toml::from_str(EMBEDDED_CONVERSATION).unwrap_or(Lists {
            fillers: Vec::new(),
            undo: Vec::new(),
            redo: Vec::new(),
            confirm: Vec::new(),
            reject: Vec::new(),
            other: Vec::new(),
        });
        let mut commands = Vec::new();
        for (list, command) in [
            (&lists.undo, Command::Undo),
            (&lists.redo, Command::Redo),
            (&lists.confirm, Command::Confirm),
            (&lists.reject, Command::Reject),
            (&lists.other, Command::OtherOne),
        ] {
            commands.extend(list.iter().map(|phrase| (normalise(phrase), command)));
        }
        Phrases {
            fillers: lists.fillers.iter().map(|f| normalise(f)).collect(),
            commands,
        }
    })
}

/// Lower case, apostrophes kept, every other non-alphanumeric run one space.
pub fn normalise(text: &str) -> String {
    let mut out = String::new();
    let mut space = false;
    for c in text.chars() {
        let c = match c {
            '\u{2019}' | '\u{2018}' => '\'',
            other => other,
        };
        if c.is_alphanumeric() || c == '\'' || c == '#' {
            if space && !out.is_empty() {
                out.push(' ');
            }
            space = false;
            out.extend(c.to_lowercase());
        } else {
            space = true;
        }
    }
    out
}

/// The text with filler words taken off both ends.
fn trimmed(text: &str) -> String {
    let fillers = &phrases().fillers;
    let mut words: Vec<&str> = text.split(' ').filter(|w| !w.is_empty()).collect();
    loop {
        let before = words.len();
        for filler in fillers {
            let parts: Vec<&str> = filler.split(' ').collect();
            if words.len() > parts.len() && words.starts_with(&parts) {
                words.drain(..parts.len());
            }
            if words.len() > parts.len() && words.ends_with(&parts) {
                words.truncate(words.len() - parts.len());
            }
        }
        if words.len() == before {
            break;
        }
    }
    words.join(" ")
}

/// The conversation command an utterance is, if it is one.
pub fn command(utterance: &str) -> Option<Command> {
    let said = normalise(utterance);
    let lookup = |text: &str| {
        phrases()
            .commands
            .iter()
            .find(|(phrase, _)| phrase == text)
            .map(|&(_, command)| command)
    };
    lookup(&said).or_else(|| lookup(&trimmed(&said)))
}

fn ordinal(word: &str) -> Option<usize> {
    const WORDS: [&str; 10] = [
        "first", "second", "third", "fourth", "fifth", "sixth", "seventh", "eighth", "ninth",
        "tenth",
    ];
    if let Some(position) = WORDS.iter().position(|w| *w == word) {
        return Some(position + 1);
    }
    let digits: String = word.chars().take_while(char::is_ascii_digit).collect();
    let suffix = &word[digits.len()..];
    if !digits.is_empty() && matches!(suffix, "st" | "nd" | "rd" | "th" | "") {
        return digits.parse().ok().filter(|&n| n > 0);
    }
    None
}

fn side(word: &str) -> Option<Side> {
    Some(match word {
        "left" | "leftmost" | "left most" => Side::Left,
        "right" | "rightmost" | "right most" => Side::Right,
        "top" | "upper" | "topmost" | "higher" => Side::Top,
        "bottom" | "lower" | "bottommost" | "lowest" => Side::Bottom,
        "middle" | "centre" | "center" | "central" => Side::Middle,
        _ => return None,
    })
}

fn patterns() -> &'static [Regex; 5] {
    static PATTERNS: OnceLock<[Regex; 5]> = OnceLock::new();
    PATTERNS.get_or_init(|| {
        let compile = |pattern: &str| Regex::new(pattern).expect("a fixed pattern compiles");
        [
            // "object 12", "#12", "id 12", "obj 12"
            compile(r"^(?:the )?(?:object|obj|id|item) ?#? ?(\d+)$|^#(\d+)$"),
            // "the second from the left", "2nd from the right", "the last one", "number 3"
            compile(
                r"^(?:it's |its |it is )?(?:the )?(?:(\w+)|number (\d+)|no (\d+))(?: one| of them| \w+)?(?: (?:from|counting from) the (left|right|top|bottom))?$",
            ),
            // "the one on the left", "the left one", "the one in the middle", "leftmost"
            compile(
                r"^(?:it's |its |it is )?(?:the )?(?:one )?(?:on |at |in )?(?:the )?(left|right|top|bottom|middle|centre|center|leftmost|rightmost|upper|lower)(?: one| side)?$",
            ),
            // "the left one", "the middle one"
            compile(r"^(?:the )?(left|right|middle|top|bottom|upper|lower) ?(?:one|\w+)?$"),
            // "this one", "that one", "here", "this", "that", "there", "him", "her"
            compile(r"^(?:this|that|here|there|this one|that one|this here|right here|over here|there one)$"),
        ]
    })
}

/// Reads the words of an answer to "which one?", if they are one. `descriptions` are the question's own
/// descriptions of its candidates, which an answer may repeat.
pub fn choice(utterance: &str, descriptions: &[String]) -> Option<Choice> {
    let said = trimmed(&normalise(utterance));
    if said.is_empty() {
        return None;
    }
    for description in descriptions {
        let described = normalise(description);
        let bare = described.trim_start_matches("the ").to_string();
        if said == described || said == bare || said == format!("it's {described}") {
            return Some(Choice::Described(described));
        }
    }
    let [object, position, side_pattern, side_first, pointed] = patterns();
    if let Some(captures) = object.captures(&said) {
        let digits = captures.get(1).or_else(|| captures.get(2))?;
        return digits.as_str().parse().ok().map(Choice::Object);
    }
    if pointed.is_match(&said) {
        return Some(Choice::Pointed);
    }
    if let Some(captures) = position.captures(&said) {
        let from = captures
            .get(4)
            .and_then(|m| side(m.as_str()))
            .unwrap_or(Side::Left);
        let n = if let Some(number) = captures.get(2).or_else(|| captures.get(3)) {
            number.as_str().parse().ok()
        } else {
            let word = captures.get(1).map_or("", |m| m.as_str());
            if word == "last" {
                let reversed = match from {
                    Side::Right => Side::Left,
                    Side::Top => Side::Bottom,
                    Side::Bottom => Side::Top,
                    _ => Side::Right,
                };
                return Some(Choice::Position {
                    n: 1,
                    from: reversed,
                });
            }
            ordinal(word)
        };
        if let Some(n) = n {
            return Some(Choice::Position { n, from });
        }
        if let Some(side) = captures.get(1).and_then(|m| side(m.as_str())) {
            return Some(Choice::Side(side));
        }
    }
    for pattern in [side_pattern, side_first] {
        if let Some(captures) = pattern.captures(&said) {
            if let Some(side) = captures.get(1).and_then(|m| side(m.as_str())) {
                return Some(Choice::Side(side));
            }
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_embedded_phrase_lists_read() {
        let lists: Lists = toml::from_str(EMBEDDED_CONVERSATION).expect("conversation.toml reads");
        assert!(lists.undo.iter().any(|p| p == "undo"));
        assert!(!phrases().commands.is_empty());
    }

    #[test]
    fn commands_are_recognised_through_fillers_and_punctuation() {
        assert_eq!(command("Undo."), Some(Command::Undo));
        assert_eq!(command("ok, undo that please"), Some(Command::Undo));
        assert_eq!(command("Yes."), Some(Command::Confirm));
        assert_eq!(command("no, the other one"), Some(Command::OtherOne));
        assert_eq!(command("No."), Some(Command::Reject));
        assert_eq!(command("redo"), Some(Command::Redo));
        assert_eq!(command("no cat on the sofa"), None);
        assert_eq!(command("that's a towel, not a cat"), None);
    }

    #[test]
    fn answers_name_positions_sides_ids_and_pointing() {
        let none: [String; 0] = [];
        assert_eq!(
            choice("the first from the left", &none),
            Some(Choice::Position {
                n: 1,
                from: Side::Left
            })
        );
        assert_eq!(
            choice("the 2nd from the right", &none),
            Some(Choice::Position {
                n: 2,
                from: Side::Right
            })
        );
        assert_eq!(
            choice("third one", &none),
            Some(Choice::Position {
                n: 3,
                from: Side::Left
            })
        );
        assert_eq!(
            choice("the last one", &none),
            Some(Choice::Position {
                n: 1,
                from: Side::Right
            })
        );
        assert_eq!(
            choice("the one on the right", &none),
            Some(Choice::Side(Side::Right))
        );
        assert_eq!(
            choice("the left one", &none),
            Some(Choice::Side(Side::Left))
        );
        assert_eq!(choice("object 12", &none), Some(Choice::Object(12)));
        assert_eq!(choice("#7", &none), Some(Choice::Object(7)));
        assert_eq!(choice("this one", &none), Some(Choice::Pointed));
        let described = ["the one left of the table".to_string()];
        assert_eq!(
            choice("The one left of the table.", &described),
            Some(Choice::Described("the one left of the table".into()))
        );
        assert_eq!(choice("the mug is on the table", &none), None);
        assert_eq!(choice("two chairs", &none), None);
    }
}
