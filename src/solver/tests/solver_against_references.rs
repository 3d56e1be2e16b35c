//! Checks the solver kernels against outside reference libraries, through committed fixtures.
//!
//! Owns: the fixture-driven tests for max-flow (against PyMaxflow) and alpha-expansion (against GCO).
//! Must not: run Python or touch the network; the fixtures were made by the scripts named below.

use sayso_solver::expansion::alpha_expansion;
use sayso_solver::labelling::{ExpansionOptions, LabellingProblem};
use sayso_solver::maxflow_reference::{cut_capacity, FlowProblem};
use sayso_solver::potts_labeller::{label_potts, CandidateLabels};
use serde::Deserialize;

#[derive(Deserialize)]
struct MaxFlowFixture {
    source: String,
    cases: Vec<MaxFlowCase>,
}

#[derive(Deserialize)]
struct MaxFlowCase {
    name: String,
    node_count: usize,
    terminal: Vec<(u32, u32)>,
    edges: Vec<(usize, usize, u32, u32)>,
    flow: u64,
    sink_side: Vec<u8>,
}

#[derive(Deserialize)]
struct PottsFixture {
    source: String,
    cases: Vec<PottsCase>,
}

#[derive(Deserialize)]
struct PottsCase {
    name: String,
    node_count: usize,
    label_count: usize,
    unary: Vec<i32>,
    edges: Vec<(u32, u32, i32)>,
    gco_labels: Vec<u16>,
    gco_energy: i64,
}

fn load<T: for<'de> Deserialize<'de>>(file: &str) -> T {
    let path = format!(
        "{}/tests/fixtures/solver/{file}",
        concat!(env!("CARGO_MANIFEST_DIR"), "/../..")
    );
    let text = std::fs::read_to_string(&path).unwrap_or_else(|error| panic!("{path}: {error}"));
    serde_json::from_str(&text).unwrap_or_else(|error| panic!("{path}: {error}"))
}

/// Reference: PyMaxflow (PyPI `PyMaxflow`), fixture made by tests/fixtures/solver/make_maxflow_cases.py.
/// Integer capacities, so the flow values must be identical.
#[test]
fn max_flow_matches_pymaxflow() {
    let fixture: MaxFlowFixture = load("maxflow_cases.json");
    assert!(fixture.source.starts_with("PyMaxflow"));
    assert_eq!(fixture.cases.len(), 30);
    for case in &fixture.cases {
        let problem = FlowProblem {
            node_count: case.node_count,
            terminal: case
                .terminal
                .iter()
                .map(|&(s, t)| (f64::from(s), f64::from(t)))
                .collect(),
            edges: case
                .edges
                .iter()
                .map(|&(a, b, c, r)| (a, b, f64::from(c), f64::from(r)))
                .collect(),
        };
        // PyMaxflow's own cut must have its flow's capacity (checks the fixture is read as written).
        let their_sides: Vec<bool> = case.sink_side.iter().map(|&side| side == 0).collect();
        assert_eq!(
            cut_capacity(&problem, &their_sides),
            case.flow as f64,
            "{}",
            case.name
        );

        let mut graph = problem.to_flow_graph().expect("fixture graphs are valid");
        let flow = graph.max_flow();
        assert_eq!(flow, case.flow as f64, "{}: flow", case.name);
        let our_sides: Vec<bool> = (0..case.node_count)
            .map(|n| graph.is_source_side(n))
            .collect();
        assert_eq!(
            cut_capacity(&problem, &our_sides),
            flow,
            "{}: our cut",
            case.name
        );
    }
}

/// Reference: GCO's alpha-expansion through the `gco-wrapper` Python binding (PyPI), fixture made by
/// tests/fixtures/solver/make_potts_cases.py on superpixel-like adjacency graphs. Goal: sayso's energy at
/// most 0.1% above GCO's on every problem.
#[test]
fn alpha_expansion_is_within_a_thousandth_of_gco() {
    let fixture: PottsFixture = load("potts_cases.json");
    assert!(fixture.source.starts_with("GCO"));
    assert_eq!(fixture.cases.len(), 11);
    for case in &fixture.cases {
        let problem = LabellingProblem {
            node_count: case.node_count,
            label_count: case.label_count,
            unary: case.unary.iter().map(|&cost| cost as f32).collect(),
            edges: case
                .edges
                .iter()
                .map(|&(a, b, w)| (a, b, w as f32))
                .collect(),
        };
        // Our energy of GCO's labelling is GCO's energy: both read the same Potts model.
        assert_eq!(
            problem.energy(&case.gco_labels),
            case.gco_energy as f64,
            "{}",
            case.name
        );
        let result = alpha_expansion(&problem, None, &ExpansionOptions { max_sweeps: 50 })
            .expect("fixture problems are valid");
        let gco = case.gco_energy as f64;
        assert!(
            result.energy <= gco * 1.001,
            "{}: sayso {} vs GCO {}",
            case.name,
            result.energy,
            gco
        );
        // The labeller the joint solver runs, over every label and with its label pruning.
        let every = label_potts(&problem, None, CandidateLabels::All).expect("valid");
        let pruned = label_potts(
            &problem,
            None,
            CandidateLabels::Pruned {
                fine_count: problem.node_count,
            },
        )
        .expect("valid");
        assert!(
            every.energy <= gco * 1.001,
            "{}: the joint labeller {} vs GCO {}",
            case.name,
            every.energy,
            gco
        );
        println!(
            "{}: sayso {} GCO {} ({:+.3}%) in {} sweeps; joint labeller {} ({:+.3}%), pruned {} ({:+.3}%)",
            case.name,
            result.energy,
            gco,
            100.0 * (result.energy - gco) / gco,
            result.sweeps,
            every.energy,
            100.0 * (every.energy - gco) / gco,
            pruned.energy,
            100.0 * (pruned.energy - gco) / gco,
        );
    }
}
