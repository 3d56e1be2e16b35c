//! The first correction after a restart against a warm one, on a production demo scene, for version chains
//! of 1, 100 and 300 versions.
//!
//! A restart is a new `Coordinator` with a new `JointCorrector` (cold caches) on the same log. The first
//! correction after it reads the head version back from the snapshot stored with it; the goal (issue 22) is
//! that it takes at most twice the warm figure (the next correction on the same coordinator), whatever the
//! chain length. The reference is that warm figure, measured in the same run on the same scene and chain.
//! Prints, with the load average: per chain length the median cold and warm correction, their ratio, and
//! the time to reopen the coordinator (restoring every scene from the log), which no correction waits for.
//! The scene is not prepared again after a restart: its segment statistics, adjacency, coarse level and
//! unaries are read from the form kept with its registration (asserted). For comparison, what preparing it
//! from nothing costs (the superpixels, then the built-in classifier's unaries), timed alone on the same
//! scene.
//! A criterion group also times one warm correction.

#[path = "support/demo_turns.rs"]
mod demo_turns;

use std::path::Path;
use std::sync::Arc;
use std::time::{Duration, Instant};

use criterion::{criterion_group, criterion_main, Criterion};
use demo_turns::load_average;
use sayso_core::demo::demo_directory;
use sayso_correction_log::{ConversationKey, SceneKey};
use sayso_perception::pipeline::model_path;
use sayso_session::JointCorrector;
use sayso_session::{Coordinator, CoordinatorSettings, SceneUpload};
use sayso_wire::{FocusIn, TurnStatus};

/// The demo scene the chain grows on.
const SCENE: &str = "kitchen_breakfast";
/// Chain lengths (versions) at which the service is restarted.
const CHAINS: [usize; 3] = [1, 100, 300];
/// Restarts measured at each chain length (each adds two versions: the cold and the warm correction).
const RESTARTS: usize = 5;

/// The `index`th utterance of the chain: the pointed object called a towel, then a mug, and so on; each
/// supersedes the one before, so every turn makes a version.
fn chain_turn(index: usize) -> &'static str {
    if index.is_multiple_of(2) {
        "that's a towel"
    } else {
        "no, it's a mug"
    }
}

fn open(data: &Path) -> Coordinator {
    Coordinator::open(
        Arc::new(JointCorrector::load(&model_path(None)).expect("the built-in classifier loads")),
        &CoordinatorSettings {
            log_path: data.join("corrections.sqlite"),
            pixel_limit: sayso_core::raster::DEFAULT_PIXEL_LIMIT,
            demo_dir: demo_directory(None),
        },
    )
    .expect("the coordinator opens")
}

fn register(coordinator: &Coordinator) -> (SceneKey, ConversationKey) {
    let created = coordinator
        .register_scene(
            SceneUpload {
                demo: Some(SCENE.into()),
                ..Default::default()
            },
            "odile",
        )
        .expect("the demo scene registers");
    let scene = SceneKey(created.scene_id);
    let conversation = coordinator
        .open_conversation(scene, "odile")
        .expect("a conversation opens");
    (scene, ConversationKey(conversation.conversation_id))
}

/// Says the chain's `index`th utterance at `pixel`; returns whether it made a version and how long it took.
fn say(
    coordinator: &Coordinator,
    conversation: ConversationKey,
    index: usize,
    pixel: (u32, u32),
) -> (bool, Duration) {
    let started = Instant::now();
    let reply = coordinator
        .utterance(
            conversation,
            "odile",
            chain_turn(index),
            Some(FocusIn::Pixel {
                x: pixel.0,
                y: pixel.1,
            }),
        )
        .expect("the utterance is answered");
    (reply.status == TurnStatus::Applied, started.elapsed())
}

/// A pixel of the demo scene where both chain utterances are applied (an object, not wall or floor).
fn applied_pixel() -> (u32, u32) {
    let scratch = tempfile::tempdir().unwrap();
    let coordinator = open(scratch.path());
    let (_, conversation) = register(&coordinator);
    let candidates = [
        (320, 300),
        (320, 360),
        (200, 320),
        (440, 320),
        (160, 380),
        (480, 380),
        (320, 420),
        (240, 260),
        (400, 260),
    ];
    let mut index = 0;
    for pixel in candidates {
        let first = say(&coordinator, conversation, index, pixel).0;
        let second = say(&coordinator, conversation, index + 1, pixel).0;
        index += 2;
        if first && second {
            return pixel;
        }
    }
    panic!("no candidate pixel of {SCENE} takes both chain utterances");
}

fn median(mut values: Vec<Duration>) -> Duration {
    values.sort();
    values[values.len() / 2]
}

fn milliseconds(duration: Duration) -> f64 {
    duration.as_secs_f64() * 1e3
}

fn restart_figures() {
    let pixel = applied_pixel();
    let data = tempfile::tempdir().unwrap();
    let (scene, conversation) = register(&open(data.path()));
    let mut turns = 0;
    let mut versions = 1;
    println!(
        "restart: {SCENE}, pointing at {pixel:?}; load average before: {}",
        load_average()
    );
    for chain in CHAINS {
        {
            let coordinator = open(data.path());
            while versions < chain {
                let (applied, _) = say(&coordinator, conversation, turns, pixel);
                assert!(applied, "chain turn {turns} made no version");
                turns += 1;
                versions += 1;
            }
        }
        let mut cold = Vec::new();
        let mut warm = Vec::new();
        let mut reopen = Vec::new();
        for _ in 0..RESTARTS {
            let started = Instant::now();
            let corrector = Arc::new(JointCorrector::load(&model_path(None)).unwrap());
            let coordinator = Coordinator::open(
                corrector.clone(),
                &CoordinatorSettings {
                    log_path: data.path().join("corrections.sqlite"),
                    pixel_limit: sayso_core::raster::DEFAULT_PIXEL_LIMIT,
                    demo_dir: demo_directory(None),
                },
            )
            .unwrap();
            reopen.push(started.elapsed());
            let (applied, first) = say(&coordinator, conversation, turns, pixel);
            assert!(applied, "the first turn after a restart made no version");
            let (applied, next) = say(&coordinator, conversation, turns + 1, pixel);
            assert!(applied, "the warm turn made no version");
            assert_eq!(
                corrector.replayed_turns(),
                0,
                "a {versions}-version chain was replayed after a restart"
            );
            assert_eq!(
                corrector.computed_preparations(),
                0,
                "the scene was prepared again after a restart instead of read from its stored form"
            );
            turns += 2;
            versions += 2;
            cold.push(first);
            warm.push(next);
        }
        let (cold, warm, reopen) = (median(cold), median(warm), median(reopen));
        println!(
            "restart: chain {chain:>3} versions: first correction after restart {:.1} ms p50, warm {:.1} ms p50, \
             ratio {:.2} (goal <= 2.00); reopening the coordinator {:.0} ms; load average {}",
            milliseconds(cold),
            milliseconds(warm),
            cold.as_secs_f64() / warm.as_secs_f64(),
            milliseconds(reopen),
            load_average()
        );
    }
    let coordinator = open(data.path());
    let head = coordinator.with_log(|log| {
        log.scenes()
            .unwrap()
            .into_iter()
            .find(|row| row.key == scene)
            .unwrap()
            .head
    });
    println!("restart: the chain ends at version {head} after {turns} turns");
}

/// The parts of preparing a registration again that a cold corrector pays on its first turn: superpixels
/// (SLIC, statistics, adjacency, coarse level) and the built-in classifier's unaries; medians of 5.
fn preparation_profile() {
    let capture = sayso_perception::pipeline::SceneSource::Demo {
        directory: demo_directory(None),
        name: Some(SCENE.into()),
    }
    .load()
    .expect("the demo scene loads");
    let taxonomy = sayso_perception::pipeline::CorrectionSettings::embedded().unwrap();
    let classifier =
        sayso_perception::pipeline::load_classifier(&model_path(None), taxonomy.grammar.taxonomy())
            .unwrap();
    let mut slic_alone = Vec::new();
    let mut superpixels = Vec::new();
    let mut prepared = Vec::new();
    let params = sayso_core::scene::SceneParams::default();
    for _ in 0..5 {
        let started = Instant::now();
        sayso_core::slic::slic(&capture.image, &params.superpixels).unwrap();
        slic_alone.push(started.elapsed());
        let started = Instant::now();
        sayso_perception::pipeline::superpixels_of(&capture).unwrap();
        superpixels.push(started.elapsed());
        let started = Instant::now();
        sayso_perception::pipeline::prepare_loaded(capture.clone(), &classifier).unwrap();
        prepared.push(started.elapsed());
    }
    let (slic_alone, superpixels, prepared) =
        (median(slic_alone), median(superpixels), median(prepared));
    println!(
        "restart: profile: preparing {SCENE} again {:.1} ms p50: superpixels {:.1} ms (SLIC alone {:.1} ms, \
         segment statistics, adjacency and coarse level the rest), the classifier's unaries {:.1} ms; \
         load average {}",
        milliseconds(prepared),
        milliseconds(superpixels),
        milliseconds(slic_alone),
        milliseconds(prepared.saturating_sub(superpixels)),
        load_average()
    );
}

fn bench_warm(criterion: &mut Criterion) {
    restart_figures();
    preparation_profile();
    let pixel = applied_pixel();
    let data = tempfile::tempdir().unwrap();
    let coordinator = open(data.path());
    let (_, conversation) = register(&coordinator);
    let mut index = 0;
    let mut group = criterion.benchmark_group("restart");
    group.sample_size(20);
    group.bench_function("warm_correction", |bencher| {
        bencher.iter(|| {
            let (applied, _) = say(&coordinator, conversation, index, pixel);
            assert!(applied);
            index += 1;
        })
    });
    group.finish();
}

criterion_group!(benches, bench_warm);
criterion_main!(benches);
