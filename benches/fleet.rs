//! Throughput of a fleet: corrections per second through 1, 2 and 3 `sayso serve` replicas on one
//! PostgreSQL database, against one `sayso serve` on its SQLite file (the reference), measured in the same
//! run on the same machine with the same clients.
//!
//! Production configuration: the release binary itself (`CARGO_BIN_EXE_sayso`), the demo scenes of
//! `support::demo_turns` registered by name (about 2,400 superpixels each, scored by the built-in
//! classifier), one conversation per scene whose scripted notes are sent in turn, closed loop. Each
//! conversation's turns go to the replicas in rotation, as a reverse proxy without affinity would send them,
//! so every turn lands on a replica that did not make the scene's head. The PostgreSQL server is the one
//! `SAYSO_TEST_POSTGRES` names, else a throwaway cluster (`tests/postgres_support`). Everything (server,
//! replicas, clients) shares the machine's cores; the load average is printed with every figure.
//! A criterion group also times one correction through a 2-replica fleet.

#[path = "../tests/postgres_support/mod.rs"]
mod postgres_support;

#[path = "../tests/service_support/mod.rs"]
mod service_support;

#[path = "support/demo_turns.rs"]
mod demo_turns;

#[path = "support/conversations.rs"]
mod conversations;

use std::net::SocketAddr;
use std::path::Path;
use std::process::{Child, Stdio};
use std::time::Duration;

use conversations::{closed_loop, open_conversations, utterance};
use criterion::{criterion_group, criterion_main, Criterion};
use demo_turns::{load_average, percentile, BENCH_SCENES};

/// Notes each conversation sends in the measured run (after one warm-up pass over its notes on every
/// replica).
const MEASURED_PER_CLIENT: usize = 24;

struct Replica {
    child: Child,
    address: SocketAddr,
}

impl Drop for Replica {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// A `sayso serve` on `database` (a `postgres://` address, or `None` for the SQLite file in `data`).
fn start(database: Option<&str>, data: &Path) -> Replica {
    std::fs::create_dir_all(data).unwrap();
    let config = data.join("sayso.toml");
    std::fs::write(&config, "rate_per_second = 1e9\nrate_burst = 4000000000\n").unwrap();
    let (child, address) = match database {
        Some(database) => service_support::start_serve(
            &[
                &"--data-dir",
                &data,
                &"--config",
                &config,
                &"--database",
                &database,
            ],
            Stdio::null(),
        ),
        None => service_support::start_serve(
            &[&"--data-dir", &data, &"--config", &config],
            Stdio::null(),
        ),
    };
    Replica { child, address }
}

/// Starts `replicas` processes (on a fresh PostgreSQL database, or one on SQLite when `None`), registers
/// the scenes, warms every replica up, and measures; returns corrections/s, p50 and p99.
fn measure(replicas: usize, postgres: bool, scratch: &Path) -> (f64, Duration, Duration) {
    let database = postgres.then(postgres_support::migrated_database);
    let label = if postgres { "postgres" } else { "sqlite" };
    let fleet: Vec<Replica> = (0..replicas)
        .map(|index| {
            start(
                database.as_deref(),
                &scratch.join(format!("{label}-{replicas}-{index}")),
            )
        })
        .collect();
    let addresses: Vec<SocketAddr> = fleet.iter().map(|replica| replica.address).collect();
    let conversations = open_conversations(addresses[0]);
    // Warm up: each replica prepares every scene once (superpixels and unaries) before the clock starts.
    let longest = conversations
        .iter()
        .map(|c| c.notes.len())
        .max()
        .unwrap_or(1);
    let warm_steps = longest.max(replicas) * 2;
    closed_loop(&addresses, &conversations, 0, warm_steps);
    let (throughput, latencies) =
        closed_loop(&addresses, &conversations, warm_steps, MEASURED_PER_CLIENT);
    (
        throughput,
        percentile(&latencies, 0.5),
        percentile(&latencies, 0.99),
    )
}

fn milliseconds(duration: Duration) -> f64 {
    duration.as_secs_f64() * 1e3
}

fn fleet_figures() {
    let scratch = tempfile::tempdir().unwrap();
    println!(
        "fleet: {} clients (one conversation per demo scene), closed loop, {MEASURED_PER_CLIENT} notes each; \
         {} cores; load average at start {}",
        BENCH_SCENES.len(),
        std::thread::available_parallelism().map_or(0, |n| n.get()),
        load_average()
    );
    let (reference, p50, p99) = measure(1, false, scratch.path());
    println!(
        "fleet: sqlite, 1 process:       {reference:6.1} corrections/s (the reference), p50 {:.1} ms, p99 {:.1} ms; \
         load average {}",
        milliseconds(p50),
        milliseconds(p99),
        load_average()
    );
    for replicas in 1..=3 {
        let (throughput, p50, p99) = measure(replicas, true, scratch.path());
        println!(
            "fleet: postgres, {replicas} replica{}: {throughput:6.1} corrections/s, ratio to sqlite {:.2}, p50 {:.1} ms, \
             p99 {:.1} ms; load average {}",
            if replicas == 1 { "  " } else { "s " },
            throughput / reference,
            milliseconds(p50),
            milliseconds(p99),
            load_average()
        );
    }
}

fn bench_fleet(criterion: &mut Criterion) {
    fleet_figures();
    let scratch = tempfile::tempdir().unwrap();
    let url = postgres_support::migrated_database();
    let fleet: Vec<Replica> = (0..2)
        .map(|index| start(Some(&url), &scratch.path().join(format!("timed-{index}"))))
        .collect();
    let addresses: Vec<SocketAddr> = fleet.iter().map(|replica| replica.address).collect();
    let conversations = open_conversations(addresses[0]);
    closed_loop(&addresses, &conversations, 0, 8);
    let conversation = conversations[0].clone();
    let mut step = 8;
    let mut group = criterion.benchmark_group("fleet");
    group.sample_size(20);
    group.bench_function("correction_two_replicas_alternating", |bencher| {
        bencher.iter(|| {
            utterance(addresses[step % 2], &conversation, step);
            step += 1;
        })
    });
    group.finish();
}

criterion_group!(benches, bench_fleet);
criterion_main!(benches);
