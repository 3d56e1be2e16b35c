//! The service on a PostgreSQL log (a real server, `tests/postgres_support`): `sayso migrate` prepares the
//! database, two replicas on one database serve one conversation turn about turn, the coordinator restores
//! what it wrote after a restart (read from the stored snapshot, no chain replayed), and `sayso export`
//! reads the same store.

use crate::postgres_support;
use crate::service_support;

use std::process::Command;
use std::sync::Arc;

use sayso_core::raster::IndexImage;
use sayso_correction_log::{ConversationKey, SceneKey};
use sayso_session::JointCorrector;
use sayso_session::{Coordinator, CoordinatorSettings, OpenError, SceneUpload};
use sayso_wire::{FocusIn, TurnStatus};
use service_support::{picture_of, register_checkerboard, shipped_engine};

const FLOOR: u16 = service_support::CHECKERBOARD_FLOOR;
const CELL: u32 = service_support::CHECKERBOARD_CELL;

fn sayso(arguments: &[&str]) -> (bool, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .args(arguments)
        .output()
        .expect("the binary runs");
    (
        output.status.success(),
        format!(
            "{}{}",
            String::from_utf8_lossy(&output.stdout),
            String::from_utf8_lossy(&output.stderr)
        ),
    )
}

fn open(url: &str, corrector: Arc<JointCorrector>) -> Result<Coordinator, OpenError> {
    Coordinator::open_postgres(
        corrector,
        url,
        &CoordinatorSettings {
            log_path: std::path::PathBuf::from("unused"),
            pixel_limit: sayso_core::raster::DEFAULT_PIXEL_LIMIT,
            demo_dir: std::path::PathBuf::from("none"),
        },
    )
}

fn say(coordinator: &Coordinator, conversation: ConversationKey, text: &str) -> TurnStatus {
    coordinator
        .utterance(
            conversation,
            "odile",
            text,
            Some(FocusIn::Pixel {
                x: CELL + CELL / 2,
                y: CELL / 2,
            }),
        )
        .expect("answered")
        .status
}

#[test]
fn the_service_keeps_its_log_on_postgresql_across_a_restart() {
    let url = postgres_support::fresh_database();
    // A replica does not migrate: before `sayso migrate` it refuses to start, naming the command.
    let refused = open(&url, shipped_engine())
        .err()
        .expect("refused before migrating");
    assert!(refused.to_string().contains("sayso migrate"), "{refused}");
    let (ok, said) = sayso(&["migrate", "--database", &url]);
    assert!(ok, "{said}");
    assert!(said.contains("applied 1, 2, 3, 4"), "{said}");
    let (ok, said) = sayso(&["migrate", "--database", &url]);
    assert!(ok && said.contains("nothing to do"), "{said}");

    let (scene, conversation, label_map) = {
        // Any number of replicas on one database: a conversation's turns alternate between two, and
        // each reads what the other wrote (the scene's head and the conversation's turns) before solving.
        let first = open(&url, shipped_engine()).expect("opens on the migrated database");
        let second =
            open(&url, shipped_engine()).expect("a second replica opens on the same database");
        let (scene, conversation) = register_checkerboard(&first);
        let replicas = [&first, &second];
        for (index, text) in ["that's a towel", "no, it's a mug", "that's a towel"]
            .into_iter()
            .enumerate()
        {
            let (speaking, other) = (replicas[index % 2], replicas[(index + 1) % 2]);
            assert_eq!(
                say(speaking, conversation, text),
                TurnStatus::Applied,
                "{text}"
            );
            assert_eq!(
                other.label_map_png(scene).unwrap(),
                speaking.label_map_png(scene).unwrap(),
                "after {text:?} both replicas show the same head"
            );
        }
        let history = first.history(conversation).expect("the history reads");
        assert_eq!(
            history.turns.len(),
            3,
            "the first replica sees the second's turn"
        );
        assert_eq!(first.scene_ids(), second.scene_ids());
        assert_eq!(
            second.health().unwrap().conversations,
            1,
            "counts come from the database"
        );
        (scene, conversation, first.label_map_png(scene).unwrap())
    };

    let corrector = shipped_engine();
    let restarted = open(&url, corrector.clone()).expect("reopens once the first has gone");
    assert_eq!(restarted.label_map_png(scene).unwrap(), label_map);
    assert_eq!(
        say(&restarted, conversation, "no, it's a mug"),
        TurnStatus::Applied
    );
    assert_eq!(
        corrector.replayed_turns(),
        0,
        "the head came from its snapshot"
    );
    let examples = restarted.with_log(|log| log.training_examples().unwrap().len());
    assert_eq!(examples, 4);
    drop(restarted);

    let out = tempfile::tempdir().unwrap();
    let dataset = out.path().join("dataset");
    let (ok, said) = sayso(&[
        "export",
        "--database",
        &url,
        "--output",
        dataset.to_str().unwrap(),
    ]);
    assert!(ok, "{said}");
    let index = std::fs::read_to_string(dataset.join("index.jsonl")).unwrap();
    assert!(!index.trim().is_empty(), "{said}");
    assert!(said.contains("training example"), "{said}");
}

fn grid_replica(url: &str) -> Coordinator {
    open_with(url, Arc::new(service_support::GridEngine::new()))
}

fn open_with(url: &str, corrector: Arc<dyn sayso_session::Corrector>) -> Coordinator {
    Coordinator::open_postgres(
        corrector,
        url,
        &CoordinatorSettings {
            log_path: std::path::PathBuf::from("unused"),
            pixel_limit: sayso_core::raster::DEFAULT_PIXEL_LIMIT,
            demo_dir: std::path::PathBuf::from("none"),
        },
    )
    .expect("a replica opens on the migrated database")
}

/// "No, the other one" said to another replica than the one that took the answer, and after every
/// replica has stopped: the answer it takes back is read from the answering turn in the log.
#[test]
fn no_the_other_one_works_on_any_replica_and_after_a_restart() {
    let url = postgres_support::fresh_database();
    let (ok, said) = sayso(&["migrate", "--database", &url]);
    assert!(ok, "{said}");
    let mug = sayso_core::taxonomy::Taxonomy::embedded()
        .class_by_name("mug")
        .unwrap()
        .id
        .0;
    let top_row = |replica: &Coordinator, scene: SceneKey| -> Vec<u16> {
        let png = replica.label_map_png(scene).unwrap();
        let labels =
            sayso_core::raster::decode_index_png(&png, std::path::Path::new("labels"), 1 << 20)
                .unwrap();
        (0..2).map(|x| labels.get(x, 0)).collect()
    };
    let words = |replica: &Coordinator, conversation: ConversationKey, text: &str| {
        replica.utterance(conversation, "odile", text, None)
    };
    let (scene, conversation) = {
        let first = grid_replica(&url);
        let second = grid_replica(&url);
        let labels = IndexImage::filled(4, 2, FLOOR);
        let created = first
            .register_scene(
                SceneUpload {
                    name: Some("juniper-lane-sill".into()),
                    image_png: Some(
                        sayso_core::raster::encode_rgb_png(&picture_of(&labels)).unwrap(),
                    ),
                    label_map_png: Some(sayso_core::raster::encode_index_png(&labels).unwrap()),
                    ..Default::default()
                },
                "odile",
            )
            .expect("registered");
        let scene = SceneKey(created.scene_id);
        let conversation = ConversationKey(
            first
                .open_conversation(scene, "odile")
                .expect("opened")
                .conversation_id,
        );
        let asked = words(&first, conversation, "either paint mug").expect("asked");
        assert_eq!(asked.status, TurnStatus::NeedsClarification);
        assert_eq!(asked.candidates.len(), 2);
        let answered = words(&second, conversation, "the first one").expect("answered");
        assert_eq!(answered.status, TurnStatus::Applied);
        assert_eq!(top_row(&first, scene), vec![mug, FLOOR]);
        // The first replica never saw the answer: it reads it from the log.
        let other = words(&first, conversation, "no, the other one").expect("the other one");
        assert_eq!(other.status, TurnStatus::Applied);
        assert_eq!(top_row(&second, scene), vec![FLOOR, mug]);
        // And the first pixel again, through the second replica.
        let back = words(&second, conversation, "no, the other one").expect("the other one");
        assert_eq!(
            back.status,
            TurnStatus::NeedsClarification,
            "no candidate is left"
        );
        assert_eq!(
            top_row(&first, scene),
            vec![FLOOR, FLOOR],
            "the second replica took back the first one's change, read from the log"
        );
        (scene, conversation)
    };
    // Every replica stopped: a new one reads the last answer back; first a fresh answer to take back.
    let answered = {
        let replica = grid_replica(&url);
        assert_eq!(
            words(&replica, conversation, "either paint mug")
                .unwrap()
                .status,
            TurnStatus::NeedsClarification
        );
        words(&replica, conversation, "the second one").unwrap()
    };
    assert_eq!(answered.status, TurnStatus::Applied);
    let restarted = grid_replica(&url);
    assert_eq!(top_row(&restarted, scene), vec![FLOOR, mug]);
    let other = words(&restarted, conversation, "no, the other one").expect("after a restart");
    assert_eq!(other.status, TurnStatus::Applied);
    assert_eq!(top_row(&restarted, scene), vec![mug, FLOOR]);
}
