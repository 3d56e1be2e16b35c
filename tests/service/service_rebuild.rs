//! The joint engine after a restart: its caches are cold, so the next utterance reads the scene's current
//! version back from the snapshot stored with it (a long chain is not replayed) and must land exactly where
//! a service that never stopped lands. Also checks that a version's stored engine state does not grow with
//! the number of turns before it.

use crate::service_support;

use std::path::Path;
use std::sync::Arc;

use sayso_correction_log::ConversationKey;
use sayso_session::JointCorrector;
use sayso_session::{Coordinator, CoordinatorSettings};
use sayso_wire::{FocusIn, TurnStatus};
use service_support::{register_checkerboard, shipped_engine};

const CELLS: u32 = service_support::CHECKERBOARD_CELLS;
const CELL: u32 = service_support::CHECKERBOARD_CELL;

fn open(data: &Path) -> Coordinator {
    open_with(data, shipped_engine())
}

fn open_with(data: &Path, corrector: Arc<JointCorrector>) -> Coordinator {
    Coordinator::open(
        corrector,
        &CoordinatorSettings {
            log_path: data.join("corrections.sqlite"),
            pixel_limit: sayso_core::raster::DEFAULT_PIXEL_LIMIT,
            demo_dir: data.join("none"),
        },
    )
    .expect("open")
}

fn say(
    coordinator: &Coordinator,
    conversation: ConversationKey,
    text: &str,
    cell: u32,
) -> TurnStatus {
    let focus = FocusIn::Pixel {
        x: (cell % CELLS) * CELL + CELL / 2,
        y: (cell / CELLS) * CELL + CELL / 2,
    };
    coordinator
        .utterance(conversation, "odile", text, Some(focus))
        .expect("answered")
        .status
}

const SCRIPT: [(&str, u32); 5] = [
    ("that's a towel", 1),
    ("that is a mug", 8),
    ("no, it's a pillow", 13),
    ("that's a towel", 20),
    ("that is a box", 27),
];

#[test]
fn a_cold_engine_rebuilds_the_head_and_answers_like_a_warm_one() {
    let restarted = tempfile::tempdir().unwrap();
    let steady = tempfile::tempdir().unwrap();
    let (last_text, last_cell) = SCRIPT[SCRIPT.len() - 1];

    // The service that never stops.
    let warm = open(steady.path());
    let (warm_scene, warm_conversation) = register_checkerboard(&warm);
    for &(text, cell) in &SCRIPT {
        assert_eq!(
            say(&warm, warm_conversation, text, cell),
            TurnStatus::Applied,
            "{text}"
        );
    }

    // The same turns, then a restart before the last one.
    let (scene, conversation) = {
        let first = open(restarted.path());
        let (scene, conversation) = register_checkerboard(&first);
        for &(text, cell) in &SCRIPT[..SCRIPT.len() - 1] {
            assert_eq!(
                say(&first, conversation, text, cell),
                TurnStatus::Applied,
                "{text}"
            );
        }
        (scene, conversation)
    };
    let cold = open(restarted.path());
    assert_eq!(
        say(&cold, conversation, last_text, last_cell),
        TurnStatus::Applied
    );

    assert_eq!(
        cold.label_map_png(scene).unwrap(),
        warm.label_map_png(warm_scene).unwrap(),
        "the rebuilt scene answers the last turn exactly as the service that never stopped"
    );
    assert_eq!(
        serde_json::to_value(cold.scene_graph(scene).unwrap()).unwrap()["objects"],
        serde_json::to_value(warm.scene_graph(warm_scene).unwrap()).unwrap()["objects"],
    );

    // Every version after the first stores one link: the sizes stay flat as turns pile up.
    let sizes: Vec<usize> = cold.with_log(|log| {
        let mut sizes = Vec::new();
        let mut next = Some(log.scenes().unwrap()[0].head);
        while let Some(key) = next {
            let (record, parent) = log.version(key).unwrap();
            sizes.push(record.engine_state.len());
            next = parent;
        }
        sizes
    });
    assert_eq!(sizes.len(), SCRIPT.len() + 1);
    // The head's stored state carries its bound memo, so the first turn after a restart replays its
    // parent's diffusion as a warm turn does (`EngineState::bound_memo`).
    let head_state = cold.with_log(|log| {
        let head = log.scenes().unwrap()[0].head;
        log.version(head).unwrap().0.engine_state
    });
    assert!(
        String::from_utf8_lossy(&head_state).contains("\"bound_memo\""),
        "the head's stored state keeps no bound memo"
    );
    let largest = sizes.iter().max().unwrap();
    let smallest_turn = sizes[..SCRIPT.len()].iter().min().unwrap();
    assert!(
        *largest < 2 * smallest_turn,
        "engine states grow with the history: {sizes:?}"
    );
}

/// Versions in the long chain of `a_long_chain_is_not_replayed_after_a_restart` (replaying each version after
/// a restart answered 503 by about 300 versions, before the snapshots).
const LONG_CHAIN: usize = 60;

/// The `index`th utterance of the long chain: the same cell called a towel, then a mug, and so on; each
/// supersedes the one before, so every turn is applied and the constraints in force stay few.
fn long_chain_turn(index: usize) -> &'static str {
    if index.is_multiple_of(2) {
        "that's a towel"
    } else {
        "no, it's a mug"
    }
}

#[test]
fn a_long_chain_is_not_replayed_after_a_restart() {
    let restarted = tempfile::tempdir().unwrap();
    let steady = tempfile::tempdir().unwrap();

    let warm = open(steady.path());
    let (warm_scene, warm_conversation) = register_checkerboard(&warm);
    for index in 0..=LONG_CHAIN {
        assert_eq!(
            say(&warm, warm_conversation, long_chain_turn(index), 1),
            TurnStatus::Applied,
            "turn {index}"
        );
    }

    let (scene, conversation) = {
        let first = open(restarted.path());
        let (scene, conversation) = register_checkerboard(&first);
        for index in 0..LONG_CHAIN {
            assert_eq!(
                say(&first, conversation, long_chain_turn(index), 1),
                TurnStatus::Applied,
                "turn {index}"
            );
        }
        (scene, conversation)
    };
    let corrector = shipped_engine();
    let cold = open_with(restarted.path(), corrector.clone());
    assert_eq!(
        say(&cold, conversation, long_chain_turn(LONG_CHAIN), 1),
        TurnStatus::Applied
    );
    assert_eq!(
        corrector.replayed_turns(),
        0,
        "the head of a {LONG_CHAIN}-version chain is read from its snapshot, not replayed"
    );
    assert_eq!(
        corrector.computed_preparations(),
        0,
        "the scene's statistics, adjacency, coarse level and unaries are read from the form kept with \
         its registration, not computed again"
    );
    assert_eq!(
        cold.label_map_png(scene).unwrap(),
        warm.label_map_png(warm_scene).unwrap(),
        "the restored scene answers the next turn exactly as the service that never stopped"
    );
    assert_eq!(
        serde_json::to_value(cold.scene_graph(scene).unwrap()).unwrap()["objects"],
        serde_json::to_value(warm.scene_graph(warm_scene).unwrap()).unwrap()["objects"],
    );
}
