//! Load driver for the correction service on loopback, on the production configuration: the demo scenes of
//! `support::demo_turns` registered by name (the service cuts them into about 2,400 superpixels and scores
//! them with the built-in classifier, as it does any registration), and each scene's scripted notes sent in
//! turn through real HTTP, with the binary's own corrector and the durable log (WAL, synchronous = FULL).
//!
//! Prints, with the load average: closed-loop throughput (one client per scene) against the 500
//! corrections/s goal with its p50 and p99, and p50 and p99 latency at an offered rate against the 10 ms
//! and 30 ms goals (common practice for an interactive service, set as the project's targets).
//! Request counts are bounded; the run stops by itself. A criterion group also times one round trip.
//!
//! It also prices `head_refusal`'s stream wrapper (hyper's bare 400/414/431 answers rewritten in the JSON
//! error shape): one coordinator with one demo scene served on two listeners, one as the binary serves
//! (`sayso_service::run`, wrapped) and one without the wrapper (`run_without_json_head_refusals`, the
//! bench's switch), and small GET requests sent to both in alternating blocks on kept-alive connections,
//! and on a new connection per request; it prints the medians side by side and their ratio, and criterion
//! times both.

#[path = "../tests/service_support/mod.rs"]
mod service_support;

#[path = "support/demo_turns.rs"]
mod demo_turns;

#[path = "support/conversations.rs"]
mod conversations;

use std::io::{BufRead, BufReader, Read, Write};
use std::net::{SocketAddr, TcpStream};
use std::sync::Arc;
use std::time::{Duration, Instant};

use conversations::{open_conversations, utterance, Conversation};
use criterion::{criterion_group, criterion_main, Criterion};
use demo_turns::{load_average, percentile};
use sayso_core::demo::demo_directory;
use sayso_perception::pipeline::{load_classifier, model_path};
use sayso_service::AppState;
use sayso_session::config::ServiceConfig;
use sayso_session::JointCorrector;
use sayso_session::{Coordinator, CoordinatorSettings};

/// The offered rate of the open-loop run, and how many requests it sends.
const OFFERED_PER_SECOND: f64 = 200.0;
const OFFERED_REQUESTS: u32 = 400;

struct Bench {
    address: SocketAddr,
    conversations: Vec<Conversation>,
    _data: tempfile::TempDir,
    _runtime: tokio::runtime::Runtime,
}

/// The production configuration in `data`, with the request rate limit lifted for the load driver.
fn bench_config(data: &tempfile::TempDir) -> ServiceConfig {
    ServiceConfig {
        data_dir: data.path().to_path_buf(),
        rate_per_second: 1e9,
        rate_burst: u32::MAX,
        ..ServiceConfig::default()
    }
}

/// The coordinator the binary opens: the shipped engine, the durable log and the demo scenes (with
/// `SAYSO_WHOLE_SOLVES` set, every solve of a turn a whole one, to compare: `demo_turns::settings`).
fn open_coordinator(config: &ServiceConfig) -> Arc<Coordinator> {
    let settings = demo_turns::settings();
    let classifier = load_classifier(&model_path(None), settings.grammar.taxonomy()).unwrap();
    Arc::new(
        Coordinator::open(
            Arc::new(JointCorrector::new(settings, classifier)),
            &CoordinatorSettings {
                log_path: config.log_path(),
                pixel_limit: config.pixel_limit,
                demo_dir: demo_directory(None),
            },
        )
        .unwrap(),
    )
}

fn runtime() -> tokio::runtime::Runtime {
    tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
        .unwrap()
}

fn bind(runtime: &tokio::runtime::Runtime) -> (tokio::net::TcpListener, SocketAddr) {
    let listener = runtime
        .block_on(tokio::net::TcpListener::bind("127.0.0.1:0"))
        .unwrap();
    let address = listener.local_addr().unwrap();
    (listener, address)
}

fn start() -> Bench {
    let data = tempfile::tempdir().unwrap();
    let config = bench_config(&data);
    let coordinator = open_coordinator(&config);
    let runtime = runtime();
    let (listener, address) = bind(&runtime);
    let state = AppState::new(coordinator, config);
    runtime.spawn(sayso_service::run(listener, state, std::future::pending()));
    let conversations = open_conversations(address);
    Bench {
        address,
        conversations,
        _data: data,
        _runtime: runtime,
    }
}

/// CPU time of the whole process (service and clients), in milliseconds, from `/proc/self/stat` (0 where
/// it cannot be read); clock ticks of 10 ms, so only differences over many requests are telling.
fn process_cpu_ms() -> f64 {
    let Ok(text) = std::fs::read_to_string("/proc/self/stat") else {
        return 0.0;
    };
    // Fields after the command name (which may hold spaces) start after the last ')'.
    let fields: Vec<&str> = text
        .rsplit_once(')')
        .map_or("", |(_, rest)| rest)
        .split_whitespace()
        .collect();
    let ticks = |index: usize| fields.get(index).and_then(|v| v.parse::<f64>().ok());
    // utime and stime are fields 14 and 15 of the line, 12 and 13 after the name.
    match (ticks(11), ticks(12)) {
        (Some(user), Some(system)) => (user + system) * 10.0,
        _ => 0.0,
    }
}

fn closed_loop(bench: &Bench, requests_per_client: u32) -> (f64, Duration, Duration, f64) {
    let cpu_before = process_cpu_ms();
    let (throughput, latencies) = conversations::closed_loop(
        &[bench.address],
        &bench.conversations,
        0,
        requests_per_client as usize,
    );
    let cpu_per_request = (process_cpu_ms() - cpu_before) / latencies.len().max(1) as f64;
    (
        throughput,
        percentile(&latencies, 0.5),
        percentile(&latencies, 0.99),
        cpu_per_request,
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
                    let conversation = &conversations[index as usize % conversations.len()];
                    utterance(
                        address,
                        conversation,
                        (index / conversations.len() as u32) as usize,
                    );
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
    let bench = start();
    println!(
        "service bench on {} demo scenes, load average at start {}",
        bench.conversations.len(),
        load_average()
    );
    // Warm up: every note once on every scene.
    closed_loop(&bench, 4);
    let requests_per_client = 25;
    let (throughput, p50, p99, cpu) = closed_loop(&bench, requests_per_client);
    println!(
        "service: closed loop, {} clients (one per demo scene) x {requests_per_client} notes: {throughput:.1} \
         corrections/s (ratio to the 500/s goal: {:.3}), p50 {:.2} ms (goal 10 ms, ratio {:.2}), p99 {:.2} ms \
         (goal 30 ms, ratio {:.2}), process CPU {cpu:.1} ms per correction; load average {}",
        bench.conversations.len(),
        throughput / 500.0,
        p50.as_secs_f64() * 1e3,
        p50.as_secs_f64() * 1e3 / 10.0,
        p99.as_secs_f64() * 1e3,
        p99.as_secs_f64() * 1e3 / 30.0,
        load_average()
    );
    let (p50, p99) = open_loop(&bench, OFFERED_PER_SECOND, OFFERED_REQUESTS);
    println!(
        "service: open loop at {OFFERED_PER_SECOND} requests/s, {OFFERED_REQUESTS} notes across the scenes: \
         p50 {:.2} ms (goal 10 ms, ratio {:.2}), p99 {:.2} ms (goal 30 ms, ratio {:.2}); load average {}",
        p50.as_secs_f64() * 1e3,
        p50.as_secs_f64() * 1e3 / 10.0,
        p99.as_secs_f64() * 1e3,
        p99.as_secs_f64() * 1e3 / 30.0,
        load_average()
    );
    let address = bench.address;
    let conversation = bench.conversations[0].clone();
    let mut step = 0;
    criterion.bench_function("service_correction_round_trip", |bencher| {
        bencher.iter(|| {
            step += 1;
            utterance(address, &conversation, step as usize)
        })
    });
}

/// One client connection kept alive across requests (HTTP/1.1 persistent connection), for GETs only.
struct KeptAlive {
    reader: BufReader<TcpStream>,
    request_head: String,
}

impl KeptAlive {
    fn open(address: SocketAddr, path: &str) -> KeptAlive {
        let stream = TcpStream::connect(address).unwrap();
        stream.set_nodelay(true).unwrap();
        KeptAlive {
            reader: BufReader::new(stream),
            request_head: format!("GET {path} HTTP/1.1\r\nHost: {address}\r\n\r\n"),
        }
    }

    /// Sends the GET and reads the whole answer (every answer of these routes has a content-length);
    /// the body's length.
    fn get(&mut self) -> usize {
        self.reader
            .get_mut()
            .write_all(self.request_head.as_bytes())
            .unwrap();
        let mut line = String::new();
        self.reader.read_line(&mut line).unwrap();
        assert!(line.starts_with("HTTP/1.1 200"), "{line:?}");
        let mut length = None;
        loop {
            line.clear();
            self.reader.read_line(&mut line).unwrap();
            if line == "\r\n" {
                break;
            }
            if let Some((name, value)) = line.split_once(':') {
                if name.eq_ignore_ascii_case("content-length") {
                    length = value.trim().parse::<usize>().ok();
                }
            }
        }
        let length = length.expect("a content-length");
        let mut body = vec![0u8; length];
        self.reader.read_exact(&mut body).unwrap();
        length
    }
}

/// The same service on two listeners: wrapped as the binary serves it, and without the wrapper.
struct WrapperPair {
    wrapped: SocketAddr,
    bare: SocketAddr,
    scene_path: String,
    _data: tempfile::TempDir,
    _runtime: tokio::runtime::Runtime,
}

fn start_pair() -> WrapperPair {
    let data = tempfile::tempdir().unwrap();
    let config = bench_config(&data);
    let coordinator = open_coordinator(&config);
    let runtime = runtime();
    let (wrapped_listener, wrapped) = bind(&runtime);
    let (bare_listener, bare) = bind(&runtime);
    let state = AppState::new(coordinator, config);
    runtime.spawn(sayso_service::run(
        wrapped_listener,
        state.clone(),
        std::future::pending(),
    ));
    runtime.spawn(sayso_service::run_without_json_head_refusals(
        bare_listener,
        state,
        std::future::pending(),
    ));
    let created = service_support::send_json(
        wrapped,
        "POST",
        "/v1/scenes",
        None,
        &serde_json::json!({ "demo": demo_turns::BENCH_SCENES[0] }),
    );
    assert_eq!(created.status, 201);
    let scene_id = created.json()["scene_id"].as_i64().unwrap();
    WrapperPair {
        wrapped,
        bare,
        scene_path: format!("/v1/scenes/{scene_id}"),
        _data: data,
        _runtime: runtime,
    }
}

/// Alternating blocks of `block` requests to each side (which side goes first alternates too), `rounds`
/// times; each side's sorted latencies and the last body's length. `send(to_wrapped)` makes one request.
fn side_by_side(
    rounds: usize,
    block: usize,
    mut send: impl FnMut(bool) -> usize,
) -> (Vec<Duration>, Vec<Duration>, usize) {
    let (mut wrapped, mut bare) = (Vec::new(), Vec::new());
    let mut length = 0;
    for round in 0..rounds {
        for to_wrapped in [round % 2 == 0, round % 2 == 1] {
            for _ in 0..block {
                let started = Instant::now();
                length = send(to_wrapped);
                let elapsed = started.elapsed();
                if to_wrapped {
                    wrapped.push(elapsed);
                } else {
                    bare.push(elapsed);
                }
            }
        }
    }
    wrapped.sort();
    bare.sort();
    (wrapped, bare, length)
}

fn print_side_by_side(what: &str, (wrapped, bare, length): (Vec<Duration>, Vec<Duration>, usize)) {
    let micros =
        |sorted: &[Duration], fraction: f64| percentile(sorted, fraction).as_secs_f64() * 1e6;
    println!(
        "head_refusal wrapper, {what} ({length}-byte body), {} requests a side: with the wrapper p50 {:.1} us \
         p90 {:.1} us, without p50 {:.1} us p90 {:.1} us; ratio with/without p50 {:.3}, p90 {:.3}; load \
         average {}",
        wrapped.len(),
        micros(&wrapped, 0.5),
        micros(&wrapped, 0.9),
        micros(&bare, 0.5),
        micros(&bare, 0.9),
        micros(&wrapped, 0.5) / micros(&bare, 0.5),
        micros(&wrapped, 0.9) / micros(&bare, 0.9),
        load_average()
    );
}

fn head_refusal_cost(criterion: &mut Criterion) {
    let pair = start_pair();
    println!(
        "head_refusal wrapper bench on {}, load average at start {}",
        demo_turns::BENCH_SCENES[0],
        load_average()
    );
    for path in ["/v1/health", pair.scene_path.as_str()] {
        let mut clients = [
            KeptAlive::open(pair.bare, path),
            KeptAlive::open(pair.wrapped, path),
        ];
        // Warm up both sides.
        for client in &mut clients {
            for _ in 0..200 {
                client.get();
            }
        }
        let measured = side_by_side(20, 250, |wrapped| clients[usize::from(wrapped)].get());
        print_side_by_side(&format!("GET {path}, kept-alive connection"), measured);
        let measured = side_by_side(10, 50, |wrapped| {
            let address = if wrapped { pair.wrapped } else { pair.bare };
            let reply = service_support::get(address, path, None);
            assert_eq!(reply.status, 200);
            reply.body.len()
        });
        print_side_by_side(&format!("GET {path}, a new connection each"), measured);
    }
    let mut group = criterion.benchmark_group("head_refusal_wrapper_scene_graph_kept_alive");
    // A connection is opened in each call: the service closes one left idle past its header timeout (5 s).
    for (name, address) in [
        ("with_wrapper", pair.wrapped),
        ("without_wrapper", pair.bare),
    ] {
        group.bench_function(name, |bencher| {
            let mut client = KeptAlive::open(address, &pair.scene_path);
            bencher.iter(|| client.get())
        });
    }
    group.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(30).measurement_time(Duration::from_secs(3));
    targets = service_load, head_refusal_cost
}
criterion_main!(benches);
