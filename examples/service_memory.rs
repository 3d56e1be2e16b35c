//! Diagnostic: how much heap one live scene costs the correction service, on the production
//! configuration. The coordinator the binary opens (the shipped engine, the durable log) registers the
//! bench's demo scenes by name one after another (each cut into about 2,400 superpixels and scored by the
//! built-in classifier), opens a conversation on each and sends its scripted notes `ROUNDS` times over,
//! as the load bench does, without HTTP. A counting global allocator (`tests/counting/allocator.rs`)
//! records the heap each scene leaves held (registration, conversation and every version the corrector
//! keeps) and the peak one request adds above what was live before it. It prints each scene's figures,
//! what the coordinator weighs its scenes at, and the ratio to the project's goal of 4 MB a live scene
//! (`cargo run --release --example service_memory -- ROUNDS`).
//!
//! Owns: nothing the crate uses.
//! Must not: tune anything; it prints figures for people to read.

#[path = "../tests/counting/allocator.rs"]
mod counting;

#[path = "../benches/support/demo_turns.rs"]
mod demo_turns;

use std::sync::Arc;

use counting::{live, measured};
use sayso_core::demo::demo_directory;
use sayso_core::language::constraint::Focus;
use sayso_correction_log::{ConversationKey, SceneKey};
use sayso_lab::evaluation::read_pointed_notes;
use sayso_perception::pipeline::{load_classifier, model_path};
use sayso_session::{Coordinator, CoordinatorSettings, JointCorrector, SceneUpload};
use sayso_wire::FocusIn;

/// The project's goal for one live scene (issue 22), in bytes (decimal megabytes).
const LIVE_SCENE_GOAL: f64 = 4e6;

fn megabytes(bytes: f64) -> f64 {
    bytes / 1e6
}

fn main() {
    let rounds: usize = std::env::args()
        .nth(1)
        .and_then(|text| text.parse().ok())
        .unwrap_or(2);
    let data = tempfile::tempdir().expect("a temporary directory");
    let settings = demo_turns::settings();
    let classifier =
        load_classifier(&model_path(None), settings.grammar.taxonomy()).expect("the classifier");
    let directory = demo_directory(None);
    let coordinator = Coordinator::open(
        Arc::new(JointCorrector::new(settings, classifier)),
        &CoordinatorSettings {
            log_path: data.path().join("corrections.sqlite"),
            pixel_limit: sayso_core::raster::DEFAULT_PIXEL_LIMIT,
            demo_dir: directory.clone(),
        },
    )
    .expect("the coordinator opens");
    let start = live();
    let mut worst_request = 0usize;
    for (index, name) in demo_turns::BENCH_SCENES.iter().enumerate() {
        let notes = read_pointed_notes(&directory.join(name)).expect("the notes read");
        let weighed_before = coordinator.scene_bytes_held();
        let (register_peak, register_kept, created) = measured(|| {
            coordinator
                .register_scene(
                    SceneUpload {
                        demo: Some(name.to_string()),
                        ..Default::default()
                    },
                    "mira",
                )
                .expect("registered")
        });
        let conversation = coordinator
            .open_conversation(SceneKey(created.scene_id), "mira")
            .expect("a conversation");
        let conversation = ConversationKey(conversation.conversation_id);
        let before_notes = live();
        let mut request_peak = 0usize;
        for _ in 0..rounds {
            for note in &notes {
                let focus = note.focus.map(|focus| match focus {
                    Focus::Pixel { x, y } => FocusIn::Pixel { x, y },
                    Focus::Object { id } => FocusIn::Object { object_id: id.0 },
                });
                let (peak, _, reply) =
                    measured(|| coordinator.utterance(conversation, "mira", &note.text, focus));
                reply.expect("a reply");
                request_peak = request_peak.max(peak);
            }
        }
        let notes_kept = live() as f64 - before_notes as f64;
        let weighed = coordinator.scene_bytes_held() - weighed_before;
        worst_request = worst_request.max(request_peak).max(register_peak);
        let held = live() as f64 - start as f64;
        println!(
            "{name}: registered {:.2} MB held (peak {:.2} MB); {} notes x {rounds}: {:.2} MB more held, a request's \
             peak {:.2} MB above what was live; weighed by the coordinator at {:.2} MB; live scenes so far \
             {}, {:.2} MB each (goal {:.1} MB, ratio {:.2})",
            megabytes(register_kept as f64),
            megabytes(register_peak as f64),
            notes.len(),
            megabytes(notes_kept),
            megabytes(request_peak as f64),
            megabytes(weighed as f64),
            index + 1,
            megabytes(held / (index + 1) as f64),
            megabytes(LIVE_SCENE_GOAL),
            held / (index + 1) as f64 / LIVE_SCENE_GOAL,
        );
    }
    println!(
        "largest peak of one request (registration included) {:.2} MB; load average {}",
        megabytes(worst_request as f64),
        demo_turns::load_average()
    );
}
