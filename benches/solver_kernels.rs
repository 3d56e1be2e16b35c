//! Benchmarks of the solver kernels against named references measured by the fixture scripts:
//! max-flow on a 640 x 480 grid and on a ~500-node superpixel graph (reference: PyMaxflow's `maxflow()`,
//! tests/fixtures/solver/make_maxflow_timings.py), and alpha-expansion on a ~500-segment, 41-label Potts
//! problem (reference: GCO's `expansion()`, tests/fixtures/solver/make_potts_cases.py). Single thread.
//!
//! Owns: the benchmark harness only. Must not: assert timing in tests; the goal (ratio <= 1.0) is printed.

use std::time::Instant;

use criterion::{criterion_group, criterion_main, BatchSize, Criterion};
use sayso_solver::expansion::{alpha_expansion, ExpansionSolver};
use sayso_solver::labelling::{ExpansionOptions, LabellingProblem};
use sayso_solver::maxflow::FlowGraph;
use serde::Deserialize;

#[path = "../tests/paths.rs"]
mod paths;

const WIDTH: usize = 640;
const HEIGHT: usize = 480;

#[derive(Deserialize)]
struct PottsFixture {
    cases: Vec<PottsCase>,
}

#[derive(Deserialize)]
struct PottsCase {
    name: String,
    node_count: usize,
    label_count: usize,
    unary: Vec<i32>,
    edges: Vec<(u32, u32, i32)>,
    gco_energy: i64,
    gco_expansion_ms: f64,
}

#[derive(Deserialize)]
struct Timing {
    flow: u64,
    pymaxflow_ms: f64,
}

#[derive(Deserialize)]
struct MaxFlowTimings {
    grid_640x480: Timing,
    superpixel_bench_500x41_labels_0_1: Timing,
}

fn fixture(file: &str) -> String {
    let path = paths::fixture("solver").join(file);
    std::fs::read_to_string(&path).unwrap_or_else(|error| panic!("{}: {error}", path.display()))
}

fn bench_case() -> PottsCase {
    let fixture: PottsFixture = serde_json::from_str(&fixture("potts_cases.json")).expect("parses");
    fixture
        .cases
        .into_iter()
        .find(|case| case.name == "bench_500x41")
        .expect("the bench problem is in the fixture")
}

/// The same integer formulas as make_maxflow_timings.py.
fn grid_hash(x: i64, y: i64, salt: i64) -> i64 {
    (x * 2654435761 + y * 40503 + salt * 97) % 1000003
}

fn inside_disc(x: i64, y: i64) -> bool {
    (x - 320).pow(2) + (y - 240).pow(2) < 150 * 150
}

fn grid_graph() -> FlowGraph {
    let mut graph = FlowGraph::with_capacity(WIDTH * HEIGHT, 2 * WIDTH * HEIGHT);
    graph.add_nodes(WIDTH * HEIGHT).expect("fits");
    for y in 0..HEIGHT as i64 {
        for x in 0..WIDTH as i64 {
            let node = (y * WIDTH as i64 + x) as usize;
            let noise = grid_hash(x, y, 1) % 40;
            let (source, sink) = if inside_disc(x, y) {
                (20 + noise, noise / 4)
            } else {
                (noise / 4, 20 + noise)
            };
            graph
                .add_terminal_weights(node, source as f64, sink as f64)
                .expect("valid");
            if x + 1 < WIDTH as i64 {
                let weight = if inside_disc(x, y) != inside_disc(x + 1, y) {
                    2
                } else {
                    10 + grid_hash(x, y, 2) % 10
                };
                graph
                    .add_edge(node, node + 1, weight as f64, weight as f64)
                    .expect("valid");
            }
            if y + 1 < HEIGHT as i64 {
                let weight = if inside_disc(x, y) != inside_disc(x, y + 1) {
                    2
                } else {
                    10 + grid_hash(x, y, 3) % 10
                };
                graph
                    .add_edge(node, node + WIDTH, weight as f64, weight as f64)
                    .expect("valid");
            }
        }
    }
    graph
}

fn superpixel_graph(case: &PottsCase) -> FlowGraph {
    let mut graph = FlowGraph::new();
    graph.add_nodes(case.node_count).expect("fits");
    for node in 0..case.node_count {
        let row = node * case.label_count;
        graph
            .add_terminal_weights(node, case.unary[row + 1] as f64, case.unary[row] as f64)
            .expect("valid");
    }
    for &(a, b, weight) in &case.edges {
        graph
            .add_edge(a as usize, b as usize, weight as f64, weight as f64)
            .expect("valid");
    }
    graph
}

fn potts_problem(case: &PottsCase) -> LabellingProblem {
    LabellingProblem {
        node_count: case.node_count,
        label_count: case.label_count,
        unary: case.unary.iter().map(|&cost| cost as f32).collect(),
        edges: case
            .edges
            .iter()
            .map(|&(a, b, w)| (a, b, w as f32))
            .collect(),
    }
}

/// Median wall time in milliseconds of `runs` calls of `work`, each after an untimed `setup`.
fn median_ms<T>(runs: usize, mut setup: impl FnMut() -> T, mut work: impl FnMut(T)) -> f64 {
    let mut times: Vec<f64> = (0..runs)
        .map(|_| {
            let input = setup();
            let start = Instant::now();
            work(input);
            start.elapsed().as_secs_f64() * 1000.0
        })
        .collect();
    times.sort_by(f64::total_cmp);
    times[times.len() / 2]
}

fn report(what: &str, ours_ms: f64, reference: &str, reference_ms: f64) {
    println!(
        "{what}: sayso {ours_ms:.3} ms median, {reference} {reference_ms:.3} ms, ratio {:.2} (goal <= 1.0)",
        ours_ms / reference_ms
    );
}

fn max_flow_benches(c: &mut Criterion) {
    let timings: MaxFlowTimings =
        serde_json::from_str(&fixture("maxflow_timings.json")).expect("parses");
    let grid = grid_graph();
    let flow = grid.clone().max_flow();
    assert_eq!(
        flow, timings.grid_640x480.flow as f64,
        "grid flow matches PyMaxflow"
    );
    let case = bench_case();
    let superpixel = superpixel_graph(&case);
    let reference = &timings.superpixel_bench_500x41_labels_0_1;
    assert_eq!(superpixel.clone().max_flow(), reference.flow as f64);

    let mut group = c.benchmark_group("max_flow");
    group.sample_size(10);
    group.bench_function("grid_640x480", |b| {
        b.iter_batched(
            || grid.clone(),
            |mut graph| graph.max_flow(),
            BatchSize::LargeInput,
        )
    });
    group.sample_size(100);
    group.bench_function("superpixel_500", |b| {
        b.iter_batched(
            || superpixel.clone(),
            |mut graph| graph.max_flow(),
            BatchSize::SmallInput,
        )
    });
    group.finish();

    let grid_ms = median_ms(
        9,
        || grid.clone(),
        |mut graph| {
            graph.max_flow();
        },
    );
    report(
        "max-flow 640x480 grid",
        grid_ms,
        "PyMaxflow",
        timings.grid_640x480.pymaxflow_ms,
    );
    let superpixel_ms = median_ms(
        201,
        || superpixel.clone(),
        |mut graph| {
            graph.max_flow();
        },
    );
    report(
        "max-flow 500-node superpixel graph",
        superpixel_ms,
        "PyMaxflow",
        reference.pymaxflow_ms,
    );
}

fn expansion_benches(c: &mut Criterion) {
    let case = bench_case();
    let problem = potts_problem(&case);
    let options = ExpansionOptions { max_sweeps: 50 };
    let result = alpha_expansion(&problem, None, &options).expect("valid");
    println!(
        "alpha-expansion {}: energy {} vs GCO {} ({} sweeps)",
        case.name, result.energy, case.gco_energy, result.sweeps
    );
    let mut group = c.benchmark_group("alpha_expansion");
    group.sample_size(30);
    group.bench_function("potts_500x41", |b| {
        b.iter(|| alpha_expansion(&problem, None, &options).expect("valid"))
    });
    let mut solver = ExpansionSolver::new();
    group.bench_function("potts_500x41_reused_solver", |b| {
        b.iter(|| solver.solve(&problem, None, &options).expect("valid"))
    });
    group.finish();
    let ours = median_ms(
        51,
        || (),
        |()| {
            alpha_expansion(&problem, None, &options).expect("valid");
        },
    );
    report(
        "alpha-expansion 500 segments x 41 labels",
        ours,
        "GCO",
        case.gco_expansion_ms,
    );
}

criterion_group!(benches, max_flow_benches, expansion_benches);
criterion_main!(benches);
