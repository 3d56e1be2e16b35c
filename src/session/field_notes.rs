//! Field notes in bulk: a file of (scene id, utterance) records applied to stored scenes, with a report.
//!
//! Owns: reading JSON Lines (`{"scene_id": 3, "text": "...", "focus": {...}}`) or TSV (`3<TAB>text`)
//! records, applying each through the coordinator in one conversation per scene, and the report that sorts
//! every record into applied, needs confirmation, needs clarification, not understood, nothing to change or
//! skipped — each with its reason.
//! Must not: draw progress (the CLI does, through the callback) or bypass the coordinator's rules.

use std::collections::HashMap;

use serde::{Deserialize, Serialize};

use crate::correction_log::{ConversationKey, SceneKey};

use super::coordinator::Coordinator;
use crate::wire::{FocusIn, TurnStatus};

/// One record of a field-notes file.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FieldNote {
    pub scene_id: i64,
    pub text: String,
    #[serde(default)]
    pub focus: Option<FocusIn>,
}

/// How one record ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize, PartialOrd, Ord)]
#[serde(rename_all = "snake_case")]
pub enum NoteOutcome {
    Applied,
    NeedsConfirmation,
    NeedsClarification,
    NotUnderstood,
    NothingToChange,
    /// The record could not be tried: unreadable, unknown scene, empty text...
    Skipped,
}

/// The report line of one record.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct NoteResult {
    /// 1-based line in the file.
    pub line: usize,
    pub scene_id: Option<i64>,
    pub text: String,
    pub outcome: NoteOutcome,
    pub reason: String,
    pub turn_id: Option<i64>,
}

/// The whole report.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, Default)]
pub struct FieldNotesReport {
    pub counts: std::collections::BTreeMap<String, usize>,
    pub results: Vec<NoteResult>,
}

/// Parses the records of a file; blank lines and lines starting with `#` are skipped. A line that cannot
/// be read becomes an `Err` with its reason, kept in place so the report names it.
pub fn parse_notes(text: &str) -> Vec<(usize, Result<FieldNote, String>)> {
    parse_note_bytes(text.as_bytes())
}

/// As `parse_notes`, for a file's bytes: a line that is not UTF-8 is reported (with the offset of its first
/// bad byte) and the other lines are read as usual.
pub fn parse_note_bytes(bytes: &[u8]) -> Vec<(usize, Result<FieldNote, String>)> {
    let mut records = Vec::new();
    let mut lines: Vec<&[u8]> = bytes.split(|&byte| byte == b'\n').collect();
    if lines.last().is_some_and(|line| line.is_empty()) {
        lines.pop();
    }
    for (index, raw) in lines.into_iter().enumerate() {
        let raw = match std::str::from_utf8(raw) {
            Ok(text) => text,
            Err(error) => {
                records.push((
                    index + 1,
                    Err(format!(
                        "the line is not UTF-8 text (the first bad byte is at column {})",
                        error.valid_up_to() + 1
                    )),
                ));
                continue;
            }
        };
        let line = raw.trim_end_matches('\r');
        if line.trim().is_empty() || line.trim_start().starts_with('#') {
            continue;
        }
        let parsed = if line.trim_start().starts_with('{') {
            serde_json::from_str::<FieldNote>(line)
                .map_err(|error| format!("not a field-note JSON record: {error}"))
        } else {
            match line.split_once('\t') {
                Some((scene, utterance)) => scene
                    .trim()
                    .parse::<i64>()
                    .map(|scene_id| FieldNote {
                        scene_id,
                        text: utterance.trim().to_string(),
                        focus: None,
                    })
                    .map_err(|_| format!("the scene id {:?} is not a number", scene.trim())),
                None => Err("expected `scene id<TAB>utterance` or a JSON object".to_string()),
            }
        };
        records.push((index + 1, parsed));
    }
    records
}

fn outcome_of(status: TurnStatus) -> NoteOutcome {
    match status {
        TurnStatus::Applied | TurnStatus::Confirmed | TurnStatus::Redone => NoteOutcome::Applied,
        TurnStatus::NeedsConfirmation => NoteOutcome::NeedsConfirmation,
        TurnStatus::NeedsClarification => NoteOutcome::NeedsClarification,
        TurnStatus::NothingToChange => NoteOutcome::NothingToChange,
        TurnStatus::NotUnderstood | TurnStatus::Rejected | TurnStatus::Undone => {
            NoteOutcome::NotUnderstood
        }
    }
}

fn outcome_name(outcome: NoteOutcome) -> &'static str {
    match outcome {
        NoteOutcome::Applied => "applied",
        NoteOutcome::NeedsConfirmation => "needs_confirmation",
        NoteOutcome::NeedsClarification => "needs_clarification",
        NoteOutcome::NotUnderstood => "not_understood",
        NoteOutcome::NothingToChange => "nothing_to_change",
        NoteOutcome::Skipped => "skipped",
    }
}

/// Applies every record of a notes file's bytes as `operator`, one conversation per scene, calling
/// `progress(done, total)`. A line that cannot be read is reported skipped with its reason; the rest go on.
pub fn apply_notes(
    coordinator: &Coordinator,
    notes: impl AsRef<[u8]>,
    operator: &str,
    mut progress: impl FnMut(usize, usize),
) -> FieldNotesReport {
    let records = parse_note_bytes(notes.as_ref());
    let total = records.len();
    let mut conversations: HashMap<SceneKey, ConversationKey> = HashMap::new();
    let mut report = FieldNotesReport::default();
    for (done, (line, record)) in records.into_iter().enumerate() {
        let result = match record {
            Err(reason) => NoteResult {
                line,
                scene_id: None,
                text: String::new(),
                outcome: NoteOutcome::Skipped,
                reason,
                turn_id: None,
            },
            Ok(note) => apply_one(coordinator, &mut conversations, operator, line, note),
        };
        *report
            .counts
            .entry(outcome_name(result.outcome).to_string())
            .or_insert(0) += 1;
        report.results.push(result);
        progress(done + 1, total);
    }
    report
}

fn apply_one(
    coordinator: &Coordinator,
    conversations: &mut HashMap<SceneKey, ConversationKey>,
    operator: &str,
    line: usize,
    note: FieldNote,
) -> NoteResult {
    let skipped = |reason: String| NoteResult {
        line,
        scene_id: Some(note.scene_id),
        text: note.text.clone(),
        outcome: NoteOutcome::Skipped,
        reason,
        turn_id: None,
    };
    let scene = SceneKey(note.scene_id);
    let conversation = match conversations.get(&scene) {
        Some(conversation) => *conversation,
        None => match coordinator.open_conversation(scene, operator) {
            Ok(opened) => {
                let key = ConversationKey(opened.conversation_id);
                conversations.insert(scene, key);
                key
            }
            Err(error) => return skipped(format!("{}: {}", error.code, error.message)),
        },
    };
    match coordinator.utterance(conversation, operator, &note.text, note.focus) {
        Err(error) => skipped(format!("{}: {}", error.code, error.message)),
        Ok(reply) => {
            let outcome = outcome_of(reply.status);
            let reason = match outcome {
                // A change said many times ("object removed: sofa" for six pieces) is said once, counted,
                // as `fix` says it.
                NoteOutcome::Applied => crate::pipeline::counted_once(
                    reply
                        .changes
                        .iter()
                        .map(|change| change.description.clone())
                        .collect(),
                )
                .join("; "),
                NoteOutcome::NeedsConfirmation => reply
                    .pending
                    .as_ref()
                    .map(|pending| pending.reason.clone())
                    .unwrap_or_default(),
                NoteOutcome::NeedsClarification => reply.question.clone().unwrap_or_default(),
                NoteOutcome::NotUnderstood => reply.reason.clone().unwrap_or_default(),
                NoteOutcome::NothingToChange => "the scene already agrees".to_string(),
                NoteOutcome::Skipped => String::new(),
            };
            NoteResult {
                line,
                scene_id: Some(note.scene_id),
                text: note.text,
                outcome,
                reason,
                turn_id: Some(reply.turn_id),
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn json_lines_and_tsv_records_are_read_and_bad_lines_kept_with_reasons() {
        let text = "# Juniper Lane walk-through, Tuesday\n\
                    {\"scene_id\": 2, \"text\": \"that's a towel, not a cat\", \"focus\": {\"type\": \"pixel\", \"x\": 3, \"y\": 4}}\n\
                    \n\
                    5\tthe mug on the shelf is a vase\n\
                    x\tnonsense\n\
                    no tab here\n";
        let records = parse_notes(text);
        assert_eq!(records.len(), 4);
        assert_eq!(records[0].0, 2);
        let first = records[0].1.as_ref().unwrap();
        assert_eq!(first.scene_id, 2);
        assert_eq!(first.focus, Some(FocusIn::Pixel { x: 3, y: 4 }));
        assert_eq!(
            records[1].1.as_ref().unwrap().text,
            "the mug on the shelf is a vase"
        );
        assert!(records[2].1.as_ref().unwrap_err().contains("\"x\""));
        assert!(records[3].1.is_err());
        assert_eq!(records[3].0, 6);
    }

    #[test]
    fn a_line_with_a_bad_byte_is_reported_and_the_rest_are_read() {
        let bytes = b"2\tthe mug is a vase\r\n3\tthe cat is a to\xffwel\n4\tthe rug is a mat";
        let records = parse_note_bytes(bytes);
        assert_eq!(records.len(), 3);
        assert_eq!(records[0].1.as_ref().unwrap().text, "the mug is a vase");
        assert_eq!(records[1].0, 2);
        let reason = records[1].1.as_ref().unwrap_err();
        assert!(
            reason.contains("not UTF-8") && reason.contains("column 18"),
            "{reason}"
        );
        assert_eq!(records[2].0, 3);
        assert_eq!(records[2].1.as_ref().unwrap().scene_id, 4);
    }
}
