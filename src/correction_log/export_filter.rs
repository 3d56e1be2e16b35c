//! Which accepted corrections an export leaves out, and why: corrections that were undone (their example no
//! longer counts), corrections later contradicted (most of the pixels they changed carry another label in
//! the scene as it now stands), and proposals the operator rejected (they never became examples, but the
//! export names them so its reader knows they were seen).
//!
//! Owns: `LeftOut`, `LeftOutReason`, `ExportAudit`, `audit`, `CONTRADICTED_SHARE`.
//! Must not: write files; `export` writes what this keeps.

use std::collections::HashMap;

use serde::Serialize;

use super::{CorrectionLog, ExampleRow, LogError, SceneKey, VersionKey};

/// A correction counts as contradicted when more than this share of the pixels it changed carry another
/// label in the scene's current version (our rule: a majority of its own change has been overruled).
pub const CONTRADICTED_SHARE: f64 = 0.5;

/// Why a correction was left out.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(tag = "reason", rename_all = "snake_case")]
pub enum LeftOutReason {
    /// The correction was undone (and not redone).
    Undone,
    /// Later corrections relabelled `share` of the pixels this one changed.
    Contradicted { share: f64, current_version: i64 },
    /// A proposal held for confirmation that the operator rejected; it never became an example.
    Rejected,
}

/// One correction an export did not write.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LeftOut {
    pub scene_name: String,
    /// The scene version it made, when it made one.
    pub scene_version: Option<i64>,
    pub utterance: String,
    #[serde(flatten)]
    pub reason: LeftOutReason,
}

/// The examples to write and what was left out.
#[derive(Clone, Debug, PartialEq)]
pub struct ExportAudit {
    pub kept: Vec<ExampleRow>,
    pub left_out: Vec<LeftOut>,
}

fn decode(bytes: &[u8]) -> Option<Vec<u16>> {
    crate::raster::decode_index_png(bytes, std::path::Path::new("stored label map"), u64::MAX)
        .ok()
        .map(|image| image.values)
}

/// The share of the pixels `before -> after` changed that `current` labels otherwise; `None` when the
/// correction changed no pixel or the maps differ in size.
fn overruled_share(before: &[u16], after: &[u16], current: &[u16]) -> Option<f64> {
    if before.len() != after.len() || after.len() != current.len() {
        return None;
    }
    let (mut changed, mut overruled) = (0usize, 0usize);
    for ((b, a), c) in before.iter().zip(after).zip(current) {
        if b != a {
            changed += 1;
            overruled += usize::from(c != a);
        }
    }
    (changed > 0).then(|| overruled as f64 / changed as f64)
}

/// Splits the log's counting examples into those to export and those contradicted since, and lists the
/// undone corrections and rejected proposals.
pub fn audit(log: &CorrectionLog) -> Result<ExportAudit, LogError> {
    let mut left_out = Vec::new();
    for (scene_name, version, utterance) in log.undone_examples()? {
        left_out.push(LeftOut {
            scene_name,
            scene_version: Some(version),
            utterance,
            reason: LeftOutReason::Undone,
        });
    }
    for (scene_name, utterance) in log.rejected_turns()? {
        left_out.push(LeftOut {
            scene_name,
            scene_version: None,
            utterance,
            reason: LeftOutReason::Rejected,
        });
    }
    let heads: HashMap<SceneKey, VersionKey> = log
        .scenes()?
        .into_iter()
        .map(|scene| (scene.key, scene.head))
        .collect();
    let mut current_labels: HashMap<SceneKey, Option<Vec<u16>>> = HashMap::new();
    let mut kept = Vec::new();
    for example in log.training_examples()? {
        let head = heads.get(&example.scene).copied();
        let current = match current_labels.get(&example.scene) {
            Some(found) => found.clone(),
            None => {
                let decoded = match head {
                    Some(head) => decode(&log.version(head)?.0.labels_png),
                    None => None,
                };
                current_labels.insert(example.scene, decoded.clone());
                decoded
            }
        };
        let share = match (
            current,
            decode(&log.blob(&example.labels_before_hash)?),
            decode(&log.blob(&example.labels_after_hash)?),
        ) {
            (Some(current), Some(before), Some(after)) => {
                overruled_share(&before, &after, &current)
            }
            _ => None,
        };
        match (share, head) {
            (Some(share), Some(head)) if share > CONTRADICTED_SHARE => left_out.push(LeftOut {
                scene_name: example.scene_name.clone(),
                scene_version: Some(example.version.0),
                utterance: example.utterance.clone(),
                reason: LeftOutReason::Contradicted {
                    share,
                    current_version: head.0,
                },
            }),
            _ => kept.push(example),
        }
    }
    Ok(ExportAudit { kept, left_out })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::raster::{encode_index_png, IndexImage};
    use crate::{NewScene, NewTurn, StateRecord, TurnEffect};

    fn labels(values: [u16; 4]) -> StateRecord {
        StateRecord {
            labels_png: encode_index_png(&IndexImage {
                width: 2,
                height: 2,
                values: values.to_vec(),
            })
            .unwrap(),
            summary_json: "{}".into(),
            engine_state: vec![],
            model: None,
        }
    }

    fn turn<'a>(
        conversation: crate::ConversationKey,
        kind: &'a str,
        text: &'a str,
        effect: TurnEffect,
    ) -> NewTurn<'a> {
        NewTurn {
            conversation,
            kind,
            text,
            focus_json: None,
            status: "applied",
            constraints_json: "[]",
            result_json: "{}",
            answer_json: None,
            operator: "mira",
            effect,
        }
    }

    #[test]
    fn undone_rejected_and_overruled_corrections_are_left_out_and_named() {
        let directory = tempfile::tempdir().unwrap();
        let mut log = CorrectionLog::open(&directory.path().join("log.sqlite")).unwrap();
        let registered = labels([1, 1, 1, 1]);
        let (scene, first) = log
            .register_scene(&NewScene {
                name: "juniper-lane-hall",
                image_png: &[7; 4],
                input_json: "{}",
                parts: &[],
                operator: "mira",
                state: &registered,
            })
            .unwrap();
        let conversation = log.open_conversation(scene, "mira").unwrap().key;
        let new_version = |base, state, text: &str| TurnEffect::NewVersion {
            base,
            state,
            utterance: text.into(),
            constraints_json: "[]".into(),
        };
        // "a towel" changes three pixels; "a rug" then relabels two of them: the towel is overruled.
        let (_, towel) = log
            .commit_turn(
                &turn(
                    conversation,
                    "utterance",
                    "a towel",
                    new_version(first, labels([1, 7, 7, 7]), "a towel"),
                ),
                None,
            )
            .unwrap();
        let towel = towel.unwrap();
        let (_, rug) = log
            .commit_turn(
                &turn(
                    conversation,
                    "utterance",
                    "a rug",
                    new_version(towel, labels([1, 7, 9, 9]), "a rug"),
                ),
                None,
            )
            .unwrap();
        let rug = rug.unwrap();
        // "a cat" is made and undone.
        let (_, cat) = log
            .commit_turn(
                &turn(
                    conversation,
                    "utterance",
                    "a cat",
                    new_version(rug, labels([3, 7, 9, 9]), "a cat"),
                ),
                None,
            )
            .unwrap();
        let cat = cat.unwrap();
        log.commit_turn(
            &turn(
                conversation,
                "undo",
                "undo",
                TurnEffect::MoveHead {
                    from: cat,
                    to: rug,
                    deactivate: Some(cat),
                    activate: None,
                },
            ),
            None,
        )
        .unwrap();
        // A proposal the operator turned down.
        log.commit_turn(
            &turn(
                conversation,
                "reject",
                "no person there",
                TurnEffect::ClearPending,
            ),
            None,
        )
        .unwrap();

        let audit = audit(&log).unwrap();
        assert_eq!(
            audit
                .kept
                .iter()
                .map(|e| e.utterance.as_str())
                .collect::<Vec<_>>(),
            ["a rug"]
        );
        let reasons: Vec<(&str, &LeftOutReason)> = audit
            .left_out
            .iter()
            .map(|left| (left.utterance.as_str(), &left.reason))
            .collect();
        assert_eq!(reasons.len(), 3, "{reasons:?}");
        assert!(reasons.contains(&("a cat", &LeftOutReason::Undone)));
        assert!(reasons.contains(&("no person there", &LeftOutReason::Rejected)));
        assert!(reasons.iter().any(|(text, reason)| *text == "a towel"
            && matches!(reason, LeftOutReason::Contradicted { share, current_version }
                if (*share - 2.0 / 3.0).abs() < 1e-12 && *current_version == rug.0)));
    }

    #[test]
    fn a_change_mostly_relabelled_since_is_overruled() {
        // The correction changed pixels 1, 2 and 3 to class 7; since then 2 and 3 became class 9.
        let before = [1, 1, 1, 1];
        let after = [1, 7, 7, 7];
        let current = [1, 7, 9, 9];
        let share = overruled_share(&before, &after, &current).unwrap();
        assert!((share - 2.0 / 3.0).abs() < 1e-12);
        assert!(share > CONTRADICTED_SHARE);
        assert_eq!(overruled_share(&before, &after, &after), Some(0.0));
        assert_eq!(overruled_share(&before, &before, &after), None);
        assert_eq!(overruled_share(&before, &after, &[1]), None);
    }
}
