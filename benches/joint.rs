//! Benchmark of the joint solve on the production configuration: the demo scenes of `support::demo_turns`
//! (about 2,400 segments each, asserted) through the real scene pipeline, every scripted note applied in
//! order as a service turn.
//!
//! Owns: timing, per turn, (1) the full joint solve of the turn's energy from nothing, (2) the warm re-solve
//! from the parent version's solved state and multipliers (what a correction runs), and (3) the whole
//! correction turn end to end (`turn::correct_turn`: hypotheses, grounding, energy, every solve, the
//! scene graph). Prints medians and 99th percentiles, the energies and optimality gaps, and the ratio to the
//! project's goals (full 5 ms, warm 2 ms, a correction 10 ms at the median).
//!
//! Reference measured in the same run: GCO's alpha-expansion (PyPI `gco-wrapper`) through
//! `benches/reference/gco_labeller.py`, on the segment part of each scene's first-turn energy (folded
//! unaries and Potts edges, costs scaled by `GCO_SCALE` and rounded to integers, which GCO needs), from the
//! same start labels; the bench prints the product's labeller's energy and time against GCO's. Skipped with
//! a note when `python3` with numpy and gco-wrapper is not on PATH.
//! Must not: be a test; it prints figures for people to read.

#[path = "../tests/paths.rs"]
mod paths;

#[path = "support/demo_turns.rs"]
mod demo_turns;

use std::time::{Duration, Instant};

use criterion::{criterion_group, criterion_main, Criterion};
use demo_turns::{
    chain, load_average, load_scenes, percentile, settings, thread_cpu_ms, turn, turn_energy,
};
use sayso_solver::expansion::cheapest_labels;
use sayso_solver::joint::{solve_joint, tighten_bound, JointSolution};
use sayso_solver::joint_region::{solve_joint_region, RegionOutcome};
use sayso_solver::labelling::LabellingProblem;
use sayso_solver::potts_labeller::{label_potts, CandidateLabels};

/// Costs are multiplied by this and rounded for GCO, which takes integers; both solvers read the rounded
/// problem.
const GCO_SCALE: f64 = 100.0;

/// The segment part of an energy as an integer Potts problem.
fn integer_problem(energy: &sayso_core::energy::JointEnergy) -> LabellingProblem {
    let round = |cost: f64| (cost * GCO_SCALE).round() as f32;
    LabellingProblem {
        node_count: energy.node_count,
        label_count: energy.label_count,
        unary: energy.folded_unary().into_iter().map(round).collect(),
        edges: energy
            .edges
            .iter()
            .map(|&(a, b, weight)| (a, b, round(weight)))
            .collect(),
    }
}

/// Median milliseconds of `runs` calls.
fn median_ms(runs: usize, mut run: impl FnMut()) -> f64 {
    let mut samples: Vec<f64> = (0..runs)
        .map(|_| {
            let start = Instant::now();
            run();
            milliseconds(start.elapsed())
        })
        .collect();
    samples.sort_by(f64::total_cmp);
    percentile(&samples, 0.5)
}

/// The product's labeller against GCO on each scene's problem, GCO measured now by the committed script.
fn labeller_against_gco(problems: &[(String, LabellingProblem, usize)]) {
    let directory = std::env::temp_dir().join(format!("sayso-gco-{}", std::process::id()));
    let _ = std::fs::create_dir_all(&directory);
    let path = directory.join("problems.json");
    let listed: Vec<serde_json::Value> = problems
        .iter()
        .map(|(name, problem, _)| {
            serde_json::json!({
                "name": name,
                "node_count": problem.node_count,
                "label_count": problem.label_count,
                "unary": problem.unary.iter().map(|&cost| cost as i64).collect::<Vec<_>>(),
                "edges": problem.edges.iter().map(|&(a, b, w)| [a as i64, b as i64, w as i64]).collect::<Vec<_>>(),
                "start": cheapest_labels(problem),
            })
        })
        .collect();
    let written = serde_json::to_vec(&listed)
        .ok()
        .and_then(|bytes| std::fs::write(&path, bytes).ok());
    let script = paths::repo().join("benches/reference/gco_labeller.py");
    let output = written.and_then(|()| {
        std::process::Command::new("python3")
            .arg(script)
            .arg(&path)
            .output()
            .ok()
    });
    let _ = std::fs::remove_dir_all(&directory);
    let Some(output) = output.filter(|output| output.status.success()) else {
        println!(
            "labeller against GCO: skipped (needs python3 with `pip install numpy gco-wrapper` on PATH)"
        );
        return;
    };
    let answers: Vec<serde_json::Value> = String::from_utf8_lossy(&output.stdout)
        .lines()
        .filter_map(|line| serde_json::from_str(line).ok())
        .collect();
    if answers.len() != problems.len() {
        println!(
            "labeller against GCO: the reference script answered {} of {} problems: {}",
            answers.len(),
            problems.len(),
            String::from_utf8_lossy(&output.stderr)
        );
    }
    for ((name, problem, fine_count), answer) in problems.iter().zip(&answers) {
        let gco_energy = answer["energy"].as_f64().unwrap_or(f64::NAN);
        let gco_ms = answer["expansion_ms"].as_f64().unwrap_or(f64::NAN);
        let gco_whole_ms = answer["whole_ms"].as_f64().unwrap_or(f64::NAN);
        let source = answer["source"].as_str().unwrap_or("GCO");
        let pruned = CandidateLabels::Pruned {
            fine_count: *fine_count,
        };
        for candidates in [pruned, CandidateLabels::All] {
            let result = label_potts(problem, None, candidates).expect("a valid problem");
            let ours_ms = median_ms(7, || {
                std::hint::black_box(label_potts(problem, None, candidates).expect("valid"));
            });
            println!(
                "labeller on {name} ({} nodes, {} labels, {candidates:?} candidates): energy {:.0} vs {source} {:.0} \
                 (ratio {:.5}); {ours_ms:.2} ms median (tables included) vs GCO expansion {gco_ms:.2} ms \
                 (ratio {:.2}), GCO with graph set-up {gco_whole_ms:.2} ms (ratio {:.2})",
                problem.node_count,
                problem.label_count,
                result.energy,
                gco_energy,
                result.energy / gco_energy,
                ours_ms / gco_ms,
                ours_ms / gco_whole_ms
            );
        }
    }
}

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

fn summary(label: &str, mut samples: Vec<Duration>, cpu: Vec<f64>, goal_ms: f64) {
    samples.sort();
    let (p50, p99) = (
        milliseconds(percentile(&samples, 0.5)),
        milliseconds(percentile(&samples, 0.99)),
    );
    // The thread's CPU time is counted in scheduler ticks on some machines: only its mean is telling.
    println!(
        "{label}: p50 {p50:.2} ms, p99 {p99:.2} ms wall over {} runs (goal p50 {goal_ms} ms, ratio {:.2}); \
         thread CPU mean {:.2} ms",
        samples.len(),
        p50 / goal_ms,
        cpu.iter().sum::<f64>() / cpu.len().max(1) as f64
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
    let (mut region_times, mut region_cpu) = (Vec::new(), Vec::new());
    let (mut region_tight_times, mut region_tight_cpu) = (Vec::new(), Vec::new());
    let (mut region_energy, mut region_warm_energy) = (0.0, 0.0);
    let mut turns = 0;
    let mut problems = Vec::new();
    for scene in &scenes {
        let versions = chain(scene, &settings);
        for (index, note) in scene.notes.iter().enumerate() {
            let (before, after) = (&versions[index], &versions[index + 1]);
            let energy = turn_energy(scene, before, after, &settings);
            if index == 0 {
                problems.push((
                    scene.name.clone(),
                    integer_problem(&energy.energy),
                    energy.energy.fine_count,
                ));
            }
            let mut full: Option<JointSolution> = None;
            let mut warm: Option<JointSolution> = None;
            let mut region: Option<(JointSolution, RegionOutcome)> = None;
            for _ in 0..REPEATS {
                if let Some(seeds) = &energy.seeds {
                    let (solution, took, cpu) =
                        timed(|| solve_joint_region(&energy.energy, &energy.warm, seeds, options));
                    region_times.push(took);
                    region_cpu.push(cpu);
                    let mut solved = solution.expect("solves");
                    // With the bound tightened as a turn's answer has it.
                    let (_, tightening, tightening_cpu) =
                        timed(|| tighten_bound(&energy.energy, &mut solved.0, options));
                    region_tight_times.push(took + tightening);
                    region_tight_cpu.push(cpu + tightening_cpu);
                    region = Some(solved);
                }
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
            if let Some((solved, outcome)) = &region {
                println!(
                    "    region re-solve from {} touched segments: {} nodes free ({} rings, {} solves{}), \
                     energy {:.3} gap {:.4} (tightened)",
                    energy.seeds.as_ref().map_or(0, Vec::len),
                    outcome.free_nodes,
                    outcome.rings,
                    outcome.solves,
                    if outcome.whole { ", whole" } else { "" },
                    solved.energy,
                    solved.relative_gap
                );
                region_energy += solved.energy;
                region_warm_energy += warm.energy;
            }
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
    println!(
        "region re-solve on the {} turns with a known change: energy summed {region_energy:.3} against the \
         whole warm re-solve's {region_warm_energy:.3} (ratio {:.5})",
        region_times.len() / REPEATS,
        region_energy / region_warm_energy
    );
    summary(
        "joint region re-solve after one note (loose bound)",
        region_times,
        region_cpu,
        2.0,
    );
    summary(
        "joint region re-solve after one note, bound tightened",
        region_tight_times,
        region_tight_cpu,
        2.0,
    );
    summary("one correction turn end to end", turn_times, turn_cpu, 10.0);
    labeller_against_gco(&problems);
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
