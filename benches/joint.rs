//! Benchmark of the joint solve on the production configuration: the demo scenes of `support::demo_turns`
//! (about 2,400 segments each, asserted) through the real scene pipeline, every scripted note applied in
//! order as a service turn.
//!
//! Owns: timing, per turn, (1) the full joint solve of the turn's energy from nothing, (2) the warm re-solve
//! from the parent version's solved state and multipliers (what a correction runs), and (3) the whole
//! correction turn end to end (`pipeline::correct_turn`: hypotheses, grounding, energy, every solve, the
//! scene graph). Prints medians and 99th percentiles, the energies and optimality gaps, and the ratio to the
//! goals of issue 22 (full 5 ms, warm 2 ms, a correction 10 ms at the median).
//! Must not: be a test; it prints figures for people to read.

#[path = "support/demo_turns.rs"]
mod demo_turns;

use std::time::{Duration, Instant};

use criterion::{criterion_group, criterion_main, Criterion};
use demo_turns::{
    chain, load_average, load_scenes, percentile, settings, thread_cpu_ms, turn, turn_energy,
};
use sayso::solver::joint::{solve_joint, JointSolution};

/// Timed runs of each turn's solves.
const REPEATS: usize = 5;

fn milliseconds(duration: Duration) -> f64 {
    duration.as_secs_f64() * 1e3
}

/// The value, its wall-clock time, and the thread's CPU time in milliseconds.
fn timed<T>(run: impl FnOnce() -> T) -> (T, Duration, f64) {
    let (start, cpu) = (Instant::now(), thread_cpu_ms());
    let value = std::hint::black_box(run());
    (value, start.elapsed(), thread_cpu_ms() - cpu)
}

fn summary(label: &str, mut samples: Vec<Duration>, mut cpu: Vec<f64>, goal_ms: f64) {
    samples.sort();
    cpu.sort_by(f64::total_cmp);
    let (p50, p99) = (
        milliseconds(percentile(&samples, 0.5)),
        milliseconds(percentile(&samples, 0.99)),
    );
    println!(
        "{label}: p50 {p50:.2} ms, p99 {p99:.2} ms wall over {} runs (goal p50 {goal_ms} ms, ratio {:.2}); \
         thread CPU p50 {:.2} ms, p99 {:.2} ms",
        samples.len(),
        p50 / goal_ms,
        percentile(&cpu, 0.5),
        percentile(&cpu, 0.99)
    );
}

fn bench_joint(criterion: &mut Criterion) {
    let settings = settings();
    let scenes = load_scenes(&settings);
    let options = &settings.options;
    println!("joint bench, load average at start {}", load_average());
    let mut full_times = Vec::new();
    let mut warm_times = Vec::new();
    let mut turn_times = Vec::new();
    let (mut full_cpu, mut warm_cpu, mut turn_cpu) = (Vec::new(), Vec::new(), Vec::new());
    let (mut full_energy, mut warm_energy) = (0.0, 0.0);
    let (mut full_gaps, mut warm_gaps) = (Vec::new(), Vec::new());
    let mut turns = 0;
    for scene in &scenes {
        let versions = chain(scene, &settings);
        for (index, note) in scene.notes.iter().enumerate() {
            let (before, after) = (&versions[index], &versions[index + 1]);
            let energy = turn_energy(scene, before, after, &settings);
            let mut full: Option<JointSolution> = None;
            let mut warm: Option<JointSolution> = None;
            for _ in 0..REPEATS {
                let (solution, took, cpu) = timed(|| solve_joint(&energy.energy, None, options));
                full_times.push(took);
                full_cpu.push(cpu);
                full = Some(solution.expect("solves"));
                let (solution, took, cpu) =
                    timed(|| solve_joint(&energy.energy, Some(&energy.warm), options));
                warm_times.push(took);
                warm_cpu.push(cpu);
                warm = Some(solution.expect("solves"));
                let (_, took, cpu) = timed(|| turn(scene, before, note, &settings));
                turn_times.push(took);
                turn_cpu.push(cpu);
            }
            let (full, warm) = (full.expect("ran"), warm.expect("ran"));
            println!(
                "  {} \"{}\": {} segments, {} hypotheses; full energy {:.3} gap {:.4} ({} iterations), \
                 warm energy {:.3} gap {:.4} ({} iterations)",
                scene.name,
                note.text,
                scene.segment_count(),
                energy.energy.hypotheses.len(),
                full.energy,
                full.relative_gap,
                full.iterations,
                warm.energy,
                warm.relative_gap,
                warm.iterations
            );
            full_energy += full.energy;
            warm_energy += warm.energy;
            full_gaps.push(full.relative_gap);
            warm_gaps.push(warm.relative_gap);
            turns += 1;
        }
    }
    full_gaps.sort_by(f64::total_cmp);
    warm_gaps.sort_by(f64::total_cmp);
    println!(
        "{} scenes, {turns} turns: energy summed over turns full {full_energy:.3}, warm {warm_energy:.3} \
         (warm/full {:.5}); relative gap median full {:.4}, warm {:.4}, worst full {:.4}, warm {:.4}",
        scenes.len(),
        warm_energy / full_energy,
        percentile(&full_gaps, 0.5),
        percentile(&warm_gaps, 0.5),
        full_gaps.last().copied().unwrap_or(0.0),
        warm_gaps.last().copied().unwrap_or(0.0),
    );
    summary("joint full solve", full_times, full_cpu, 5.0);
    summary(
        "joint warm re-solve after one note",
        warm_times,
        warm_cpu,
        2.0,
    );
    summary("one correction turn end to end", turn_times, turn_cpu, 10.0);
    println!("load average at end {}", load_average());

    let scene = &scenes[0];
    let versions = chain(scene, &settings);
    let energy = turn_energy(scene, &versions[0], &versions[1], &settings);
    let mut group = criterion.benchmark_group("joint");
    group.sample_size(10);
    group.bench_function("full_solve", |b| {
        b.iter(|| solve_joint(&energy.energy, None, options).unwrap())
    });
    group.bench_function("warm_resolve", |b| {
        b.iter(|| solve_joint(&energy.energy, Some(&energy.warm), options).unwrap())
    });
    group.bench_function("correction_turn", |b| {
        b.iter(|| turn(scene, &versions[0], &scene.notes[0], &settings))
    });
    group.finish();
}

criterion_group!(benches, bench_joint);
criterion_main!(benches);
