//! Load driver for the correction service on loopback: utterances against a 400-cell scene, through
//! real HTTP, with the binary's own corrector and the durable log (WAL, synchronous = FULL).
//!
//! Prints two figures with their ratio to the goals (common practice for an interactive service, set as
//! the project's targets): closed-loop throughput against 500 utterances/s, and p99 latency at an offered
//! 200 requests/s against 30 ms. Request counts are bounded; the run stops by itself. A criterion group
//! also times one utterance round trip.

#[path = "../tests/service_support/mod.rs"]
mod service_support;

use std::net::SocketAddr;
use std::sync::Arc;
use std::time::{Duration, Instant};

use criterion::{criterion_group, criterion_main, Criterion};
use sayso::pipeline::model_path;
use sayso::raster::IndexImage;
use sayso::service::config::ServiceConfig;
use sayso::service::coordinator::{Coordinator, CoordinatorSettings};
use sayso::service::joint::JointCorrector;
use sayso::service::metrics::Metrics;
use sayso::service::AppState;

const WALL: u16 = 1;
const CELLS: u32 = 20;
const CELL_WIDTH: u32 = 16;
const CELL_HEIGHT: u32 = 12;

struct Bench {
    address: SocketAddr,
    conversations: Vec<i64>,
    _data: tempfile::TempDir,
    _runtime: tokio::runtime::Runtime,
}

/// A 320x240 picture of 20 x 20 = 400 cells; cells alternate floor and rug so each is its own region (the
/// service cuts it into superpixels with the scene defaults, so into more segments than cells).
fn four_hundred_segments() -> IndexImage {
    let mut labels = IndexImage::filled(CELLS * CELL_WIDTH, CELLS * CELL_HEIGHT, WALL);
    for y in 0..labels.height {
        for x in 0..labels.width {
            let cell = (x / CELL_WIDTH + y / CELL_HEIGHT) % 2;
            labels.set(x, y, if cell == 0 { 0 } else { WALL });
        }
    }
    labels
}

fn start(conversation_count: usize) -> Bench {
    let data = tempfile::tempdir().unwrap();
    let config = ServiceConfig {
        data_dir: data.path().to_path_buf(),
        rate_per_second: 1e9,
        rate_burst: u32::MAX,
        ..ServiceConfig::default()
    };
    let coordinator = Arc::new(
        Coordinator::open(
            Arc::new(JointCorrector::load(&model_path(None)).unwrap()),
            &CoordinatorSettings {
                log_path: config.log_path(),
                pixel_limit: config.pixel_limit,
                demo_dir: data.path().join("none"),
            },
            Arc::new(Metrics::default()),
        )
        .unwrap(),
    );
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
        .unwrap();
    let listener = runtime
        .block_on(tokio::net::TcpListener::bind("127.0.0.1:0"))
        .unwrap();
    let address = listener.local_addr().unwrap();
    let state = AppState::new(coordinator, config);
    runtime.spawn(sayso::service::run(listener, state, std::future::pending()));
    // One scene per conversation, so conversations do not queue behind each other's scene lock.
    let conversations = (0..conversation_count)
        .map(|_| service_support::scene_and_conversation(address, None, &four_hundred_segments()).1)
        .collect();
    Bench {
        address,
        conversations,
        _data: data,
        _runtime: runtime,
    }
}

fn utterance(address: SocketAddr, conversation: i64, step: u32) -> Duration {
    let cell = step % (CELLS * CELLS);
    let (x, y) = (
        (cell % CELLS) * CELL_WIDTH + 3,
        (cell / CELLS) * CELL_HEIGHT + 3,
    );
    let text = if (step / (CELLS * CELLS)).is_multiple_of(2) {
        "that's a mug"
    } else {
        "no, it's a towel"
    };
    let body = serde_json::json!({"text": text, "focus": {"type": "pixel", "x": x, "y": y}});
    let started = Instant::now();
    let reply = service_support::send_json(
        address,
        "POST",
        &format!("/v1/conversations/{conversation}/utterances"),
        None,
        &body,
    );
    let elapsed = started.elapsed();
    assert_eq!(
        reply.status,
        200,
        "{:?}",
        String::from_utf8_lossy(&reply.body)
    );
    elapsed
}

fn percentile(sorted: &[Duration], fraction: f64) -> Duration {
    let index = ((sorted.len() as f64 - 1.0) * fraction).round() as usize;
    sorted[index.min(sorted.len() - 1)]
}

fn closed_loop(bench: &Bench, requests_per_client: u32) -> (f64, Duration, Duration) {
    let started = Instant::now();
    let threads: Vec<_> = bench
        .conversations
        .iter()
        .map(|&conversation| {
            let address = bench.address;
            std::thread::spawn(move || {
                (0..requests_per_client)
                    .map(|step| utterance(address, conversation, step))
                    .collect::<Vec<_>>()
            })
        })
        .collect();
    let mut latencies: Vec<Duration> = threads
        .into_iter()
        .flat_map(|thread| thread.join().unwrap())
        .collect();
    let seconds = started.elapsed().as_secs_f64();
    latencies.sort();
    (
        latencies.len() as f64 / seconds,
        percentile(&latencies, 0.5),
        percentile(&latencies, 0.99),
    )
}

/// Offers `total` utterances at `rate` per second from a pool of 16 senders; each latency is measured
/// from the moment the request was due, so time spent queued behind a slow answer counts.
fn open_loop(bench: &Bench, rate: f64, total: u32) -> (Duration, Duration) {
    const SENDERS: u32 = 16;
    let interval = Duration::from_secs_f64(1.0 / rate);
    let started = Instant::now();
    let threads: Vec<_> = (0..SENDERS)
        .map(|sender| {
            let address = bench.address;
            let conversations = bench.conversations.clone();
            std::thread::spawn(move || {
                let mut latencies = Vec::new();
                for index in (sender..total).step_by(SENDERS as usize) {
                    let due = started + interval * index;
                    if let Some(wait) = due.checked_duration_since(Instant::now()) {
                        std::thread::sleep(wait);
                    }
                    let conversation = conversations[index as usize % conversations.len()];
                    utterance(address, conversation, 10_000 + index);
                    latencies.push(due.elapsed());
                }
                latencies
            })
        })
        .collect();
    let mut latencies: Vec<Duration> = threads
        .into_iter()
        .flat_map(|thread| thread.join().unwrap())
        .collect();
    latencies.sort();
    (percentile(&latencies, 0.5), percentile(&latencies, 0.99))
}

fn service_load(criterion: &mut Criterion) {
    let bench = start(4);
    // Warm up.
    closed_loop(&bench, 25);
    let (throughput, p50, p99) = closed_loop(&bench, 500);
    // The service cuts the picture with the scene defaults, as it does every registration.
    let segments = sayso::scene::Scene::from_image(
        "juniper-lane-hall",
        service_support::picture_of(&four_hundred_segments()),
        None,
        None,
        &sayso::scene::SceneParams::default(),
    )
    .map_or(0, |scene| scene.segment_count());
    println!(
        "service: closed loop, 4 clients x 500 utterances on a scene of {segments} segments (400 cells): {throughput:.0} utterances/s \
         (ratio to the 500/s goal: {:.2}), p50 {:.2} ms, p99 {:.2} ms",
        throughput / 500.0,
        p50.as_secs_f64() * 1e3,
        p99.as_secs_f64() * 1e3
    );
    let (p50, p99) = open_loop(&bench, 200.0, 1000);
    println!(
        "service: open loop at 200 requests/s, 1000 utterances: p50 {:.2} ms, p99 {:.2} ms \
         (ratio to the 30 ms goal: {:.2})",
        p50.as_secs_f64() * 1e3,
        p99.as_secs_f64() * 1e3,
        p99.as_secs_f64() * 1e3 / 30.0
    );
    let address = bench.address;
    let conversation = bench.conversations[0];
    let mut step = 20_000;
    criterion.bench_function("service_utterance_round_trip", |bencher| {
        bencher.iter(|| {
            step += 1;
            utterance(address, conversation, step)
        })
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(30).measurement_time(Duration::from_secs(3));
    targets = service_load
}
criterion_main!(benches);
