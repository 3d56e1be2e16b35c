//! Benchmark of the joint solve: a 640x480 scene of 500 segments, 41 classes, about 60 hypotheses and a
//! three-constraint utterance; full solve and warm re-solve on one thread, and the memory of the solved scene.
//!
//! Owns: the synthetic scene (a 25 x 20 grid of segments with rectangles of furniture and objects), timing
//! `solve_joint`, and a byte count of the solved scene held in memory.
//! Must not: be a test; it prints figures and their ratio to the goals (5 ms full, 2 ms warm, 4 MB).

#[path = "../tests/common/grid_scene.rs"]
mod grid_scene;

use std::time::{Duration, Instant};

use criterion::{criterion_group, criterion_main, Criterion};
use grid_scene::{grid_scene, grid_unaries, Cell};
use sayso::energy::build::{build_energy, EnergyInputs, EnergyWeights, RoomClassPrior};
use sayso::grounding::{ground, GroundingContext, SceneView};
use sayso::hypotheses::{build_hypotheses, ProposalOptions};
use sayso::ids::ClassId;
use sayso::language::constraint::{
    Constraint, ConstraintKind, Count, Deixis, Focus, Referent, Span,
};
use sayso::scenegraph::correct::{correct, CorrectionRequest};
use sayso::scenegraph::instances::InstanceCuts;
use sayso::solver::joint::{solve_joint, JointOptions, WarmStart};
use sayso::taxonomy::Taxonomy;

const COLUMNS: u32 = 25;
const ROWS: u32 = 20;

/// A deterministic pseudo-random sequence (xorshift), so the scene is the same on every run.
struct Sequence(u64);

impl Sequence {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
}

/// The Juniper Lane living room as a grid: wall, floor, a sofa, a shelf with books, mugs, a cat, a lamp.
fn living_room(taxonomy: &Taxonomy) -> (sayso::scene::Scene, sayso::unaries::Unaries) {
    let c = |name: &str| taxonomy.class_by_name(name).unwrap().id.0;
    let mut sequence = Sequence(0x5eed_1234_abcd);
    let mut truth = vec![c("wall"); (COLUMNS * ROWS) as usize];
    for row in 12..ROWS {
        for column in 0..COLUMNS {
            truth[(row * COLUMNS + column) as usize] = c("floor");
        }
    }
    let objects = [
        "sofa", "shelf", "table", "lamp", "rug", "tv", "plant", "cabinet", "chair", "box",
    ];
    let small = [
        "book", "mug", "remote", "pillow", "cat", "vase", "toy", "bag", "shoe", "bottle",
    ];
    for name in objects {
        let (w, h) = (2 + sequence.below(4) as u32, 2 + sequence.below(3) as u32);
        let (x, y) = (
            sequence.below((COLUMNS - w) as u64) as u32,
            sequence.below((ROWS - h) as u64) as u32,
        );
        for row in y..y + h {
            for column in x..x + w {
                truth[(row * COLUMNS + column) as usize] = c(name);
            }
        }
    }
    for round in 0..3 {
        for name in small {
            let (x, y) = (
                sequence.below(COLUMNS as u64) as u32,
                sequence.below(ROWS as u64) as u32,
            );
            let _ = round;
            truth[(y * COLUMNS + x) as usize] = c(name);
        }
    }
    let class_count = taxonomy.class_count() as u64;
    let cells: Vec<Cell> = truth
        .iter()
        .map(|&class| {
            let confusion = sequence.below(class_count) as u16;
            let top = 0.45 + sequence.below(40) as f32 / 100.0;
            let scores = if confusion == class {
                vec![(class, top)]
            } else if sequence.below(4) == 0 {
                vec![(confusion, top), (class, 0.9 - top)]
            } else {
                vec![(class, top), (confusion, 0.9 - top)]
            };
            let shade = (class as u32 * 37 % 200) as u8;
            Cell {
                colour: [shade, 255 - shade, (shade / 2) + 60],
                scores,
            }
        })
        .collect();
    let region: Vec<u32> = (0..COLUMNS * ROWS)
        .map(|s| (s / COLUMNS / 2) * COLUMNS.div_ceil(2) + (s % COLUMNS) / 2)
        .collect();
    let scene = grid_scene(
        "juniper-lane-living-room",
        COLUMNS,
        ROWS,
        1,
        &cells,
        &region,
    );
    let unaries = grid_unaries(&cells, taxonomy.class_count());
    (
        scale_scene(scene, 640 / COLUMNS as usize, 480 / ROWS as usize),
        unaries,
    )
}

/// Scales the one-pixel grid to 640x480 (cells of 25.6 x 24 pixels rounded to 25 x 24, padded).
fn scale_scene(scene: sayso::scene::Scene, cell_w: usize, cell_h: usize) -> sayso::scene::Scene {
    let (width, height) = (640u32, 480u32);
    let mut labels = Vec::with_capacity((width * height) as usize);
    let mut pixels = Vec::with_capacity((width * height) as usize);
    for y in 0..height as usize {
        for x in 0..width as usize {
            let column = (x / cell_w).min(COLUMNS as usize - 1);
            let row = (y / cell_h).min(ROWS as usize - 1);
            let segment = row * COLUMNS as usize + column;
            labels.push(segment as u32);
            pixels.push(scene.image.pixels[segment]);
        }
    }
    let mut stats = (*scene.stats).clone();
    for stat in &mut stats {
        let (column, row) = (stat.id.0 % COLUMNS, stat.id.0 / COLUMNS);
        stat.bbox = sayso::scene::BoundingBox {
            x0: column * cell_w as u32,
            y0: row * cell_h as u32,
            x1: (column + 1) * cell_w as u32,
            y1: (row + 1) * cell_h as u32,
        };
        stat.area = (cell_w * cell_h) as u32;
        stat.centroid = (
            (stat.bbox.x0 + stat.bbox.x1) as f32 / 2.0,
            (stat.bbox.y0 + stat.bbox.y1) as f32 / 2.0,
        );
    }
    let mut adjacency = (*scene.adjacency).clone();
    for edge in adjacency.edge_weights_mut() {
        edge.boundary_length = cell_h as u32;
    }
    sayso::scene::Scene {
        image: std::sync::Arc::new(sayso::raster::RgbImage {
            width,
            height,
            pixels,
        }),
        segments: std::sync::Arc::new(sayso::scene::SegmentMap {
            width,
            height,
            labels,
            segment_count: COLUMNS * ROWS,
        }),
        stats: std::sync::Arc::new(stats),
        adjacency: std::sync::Arc::new(adjacency),
        ..scene
    }
}

fn median(mut samples: Vec<Duration>) -> Duration {
    samples.sort();
    samples[samples.len() / 2]
}

fn constraints(taxonomy: &Taxonomy) -> Vec<Constraint> {
    let c = |name: &str| ClassId(taxonomy.class_by_name(name).unwrap().id.0);
    let make = |kind, gloss: &str| Constraint {
        kind,
        span: Span::new(0, gloss.len()),
        confidence: 0.95,
        gloss: gloss.to_string(),
    };
    vec![
        make(
            ConstraintKind::Count {
                class: c("book"),
                count: Count::Exactly(4),
            },
            "four books",
        ),
        make(ConstraintKind::Absent { class: c("toy") }, "no toys"),
        make(
            ConstraintKind::Relabel {
                target: Referent {
                    class: None,
                    deixis: Some(Deixis::Focus),
                    ..Referent::class(c("cat"), Span::new(0, 4))
                },
                from: None,
                to: Some(c("pillow")),
            },
            "that is a pillow",
        ),
    ]
}

/// Median time of sayso's alpha-expansion on the fixture problem `bench_500x41` over GCO's time for it
/// (tests/fixtures/solver/make_potts_cases.py), as benches/solver_kernels.rs reads it.
fn expansion_against_gco() {
    let path = format!(
        "{}/tests/fixtures/solver/potts_cases.json",
        env!("CARGO_MANIFEST_DIR")
    );
    let text = std::fs::read_to_string(&path).unwrap_or_else(|error| panic!("{path}: {error}"));
    let fixture: serde_json::Value = serde_json::from_str(&text).expect("parses");
    let case = fixture["cases"]
        .as_array()
        .and_then(|cases| cases.iter().find(|case| case["name"] == "bench_500x41"))
        .expect("the bench problem is in the fixture");
    let numbers = |key: &str| -> Vec<f64> {
        case[key]
            .as_array()
            .expect("array")
            .iter()
            .map(|v| v.as_f64().expect("number"))
            .collect()
    };
    let problem = sayso::solver::labelling::LabellingProblem {
        node_count: case["node_count"].as_u64().expect("node_count") as usize,
        label_count: case["label_count"].as_u64().expect("label_count") as usize,
        unary: numbers("unary").into_iter().map(|v| v as f32).collect(),
        edges: case["edges"]
            .as_array()
            .expect("edges")
            .iter()
            .map(|edge| {
                let part = |i: usize| edge[i].as_f64().expect("edge number");
                (part(0) as u32, part(1) as u32, part(2) as f32)
            })
            .collect(),
    };
    let gco_ms = case["gco_expansion_ms"].as_f64().expect("gco_expansion_ms");
    let options = sayso::solver::labelling::ExpansionOptions { max_sweeps: 50 };
    let mut solver = sayso::solver::expansion::ExpansionSolver::new();
    let mut samples: Vec<Duration> = (0..21)
        .map(|_| {
            let start = Instant::now();
            std::hint::black_box(solver.solve(&problem, None, &options).expect("valid"));
            start.elapsed()
        })
        .collect();
    samples.sort();
    let ours_ms = samples[samples.len() / 2].as_secs_f64() * 1e3;
    println!(
        "alpha-expansion bench_500x41: sayso {ours_ms:.3} ms median, GCO {gco_ms:.3} ms, ratio {:.2}",
        ours_ms / gco_ms
    );
}

fn bench_joint(criterion: &mut Criterion) {
    expansion_against_gco();
    let taxonomy = Taxonomy::embedded();
    let (scene, unaries) = living_room(&taxonomy);
    let prior = RoomClassPrior::embedded().unwrap();
    let weights = EnergyWeights::default();
    let proposals = ProposalOptions {
        max_hypotheses: 60,
        ..ProposalOptions::default()
    };
    let options = JointOptions::default();
    let hypotheses = build_hypotheses(&scene, &unaries, &[], &proposals).unwrap();
    let no_constraints = build_energy(&EnergyInputs {
        scene: &scene,
        unaries: &unaries,
        taxonomy: &taxonomy,
        hypotheses: &hypotheses,
        accepted: &[],
        grounded: &[],
        prior: &prior,
        weights: &weights,
    })
    .unwrap();
    let baseline = solve_joint(&no_constraints.energy, None, &options).unwrap();
    let accepted = baseline.state.hypotheses_on.clone();
    let view = SceneView {
        scene: &scene,
        taxonomy: &taxonomy,
        hypotheses: &hypotheses,
        accepted: &accepted,
        class_count: taxonomy.class_count(),
    };
    let all = constraints(&taxonomy);
    let context = GroundingContext {
        focus: Some(Focus::Pixel { x: 320, y: 200 }),
        ..Default::default()
    };
    let grounding = ground(&all, &view, &context);
    let built = build_energy(&EnergyInputs {
        scene: &scene,
        unaries: &unaries,
        taxonomy: &taxonomy,
        hypotheses: &hypotheses,
        accepted: &[],
        grounded: &grounding.constraints,
        prior: &prior,
        weights: &weights,
    })
    .unwrap();
    let two = build_energy(&EnergyInputs {
        scene: &scene,
        unaries: &unaries,
        taxonomy: &taxonomy,
        hypotheses: &hypotheses,
        accepted: &[],
        grounded: &grounding.constraints[..grounding.constraints.len().saturating_sub(1)],
        prior: &prior,
        weights: &weights,
    })
    .unwrap();
    let previous = solve_joint(&two.energy, None, &options).unwrap();
    let warm = WarmStart {
        state: previous.state.clone(),
        multipliers: Some(previous.multipliers.clone()),
    };
    if warm.state.hypotheses_on.len() != built.energy.hypotheses.len() {
        // A relabel added a hypothesis; carry the flags over by position (the new one starts off).
    }
    let warm = WarmStart {
        state: sayso::energy::JointState {
            hypotheses_on: (0..built.energy.hypotheses.len())
                .map(|h| warm.state.hypotheses_on.get(h).copied().unwrap_or(false))
                .collect(),
            ..warm.state
        },
        multipliers: Some(previous.multipliers.clone()),
    };

    let full = solve_joint(&built.energy, None, &options).unwrap();
    let again = solve_joint(&built.energy, Some(&warm), &options).unwrap();
    println!(
        "joint scene: {} segments, {} nodes, {} classes, {} hypotheses, {} constraints grounded ({} questions, {} issues)",
        built.energy.fine_count, built.energy.node_count, built.energy.label_count, built.energy.hypotheses.len(),
        grounding.constraints.len(), grounding.questions.len(), grounding.issues.len()
    );
    println!(
        "full solve: energy {:.3}, lower bound {:.3}, gap {:.4}, {} iterations; warm: energy {:.3}, gap {:.4}, {} iterations",
        full.energy, full.lower_bound, full.relative_gap, full.iterations, again.energy, again.relative_gap, again.iterations
    );

    let mut full_samples = Vec::new();
    let mut warm_samples = Vec::new();
    for _ in 0..31 {
        let start = Instant::now();
        std::hint::black_box(solve_joint(&built.energy, None, &options).unwrap());
        full_samples.push(start.elapsed());
        let start = Instant::now();
        std::hint::black_box(solve_joint(&built.energy, Some(&warm), &options).unwrap());
        warm_samples.push(start.elapsed());
    }
    // The same warm re-solve without the warm descent (on by default), for comparison.
    let no_descent_options = JointOptions {
        warm_descent: false,
        ..JointOptions::default()
    };
    let undescended = solve_joint(&built.energy, Some(&warm), &no_descent_options).unwrap();
    let mut descent_samples = Vec::new();
    for _ in 0..31 {
        let start = Instant::now();
        std::hint::black_box(solve_joint(&built.energy, Some(&warm), &no_descent_options).unwrap());
        descent_samples.push(start.elapsed());
    }
    let descent_median = median(descent_samples);
    println!(
        "warm re-solve without the warm descent: energy {:.3}, gap {:.4}, {} iterations, median {:.2} ms (goal 2 ms, ratio {:.2})",
        undescended.energy,
        undescended.relative_gap,
        undescended.iterations,
        descent_median.as_secs_f64() * 1e3,
        descent_median.as_secs_f64() * 1e3 / 2.0
    );
    let (full_median, warm_median) = (median(full_samples), median(warm_samples));
    println!(
        "full solve median {:.2} ms (goal 5 ms, ratio {:.2}); warm re-solve median {:.2} ms (goal 2 ms, ratio {:.2})",
        full_median.as_secs_f64() * 1e3,
        full_median.as_secs_f64() * 1e3 / 5.0,
        warm_median.as_secs_f64() * 1e3,
        warm_median.as_secs_f64() * 1e3 / 2.0
    );

    // Memory of the solved scene: the scene itself plus one turn's correction, counted from their contents.
    let request = CorrectionRequest {
        scene: &scene,
        unaries: &unaries,
        taxonomy: &taxonomy,
        detections: &[],
        previous: None,
        constraints: &all,
        context: &context,
        confirm_safety: false,
        prior: &prior,
        weights: &weights,
        proposals: &proposals,
        options: &options,
        instance_cuts: &InstanceCuts::embedded(&taxonomy).unwrap(),
    };
    let correction = correct(&request).unwrap();
    let scene_bytes = scene.image.pixels.len() * 3
        + scene.segments.labels.len() * 4
        + scene.stats.len() * std::mem::size_of::<sayso::scene::SegmentStats>()
        + scene.adjacency.edge_count() * (std::mem::size_of::<sayso::scene::AdjacencyEdge>() + 16)
        + scene.adjacency.node_count() * 12
        + scene.coarse.region_of.len() * 4 * 2;
    let unary_bytes = unaries.log_probs.len() * 4;
    let correction_bytes = serde_json::to_vec(&correction)
        .map(|v| v.len())
        .unwrap_or(0);
    let total = scene_bytes + unary_bytes + correction_bytes;
    println!(
        "solved 640x480 scene in memory: scene {:.2} MB + unaries {:.2} MB + correction (JSON size, an upper bound of its heap) {:.2} MB = {:.2} MB (goal 4 MB, ratio {:.2})",
        scene_bytes as f64 / 1e6, unary_bytes as f64 / 1e6, correction_bytes as f64 / 1e6, total as f64 / 1e6, total as f64 / 4e6
    );

    let mut group = criterion.benchmark_group("joint");
    group.sample_size(10);
    group.bench_function("full_solve", |b| {
        b.iter(|| solve_joint(&built.energy, None, &options).unwrap())
    });
    group.bench_function("warm_resolve", |b| {
        b.iter(|| solve_joint(&built.energy, Some(&warm), &options).unwrap())
    });
    group.bench_function("warm_resolve_no_descent", |b| {
        b.iter(|| solve_joint(&built.energy, Some(&warm), &no_descent_options).unwrap())
    });
    group.finish();
}

criterion_group!(benches, bench_joint);
criterion_main!(benches);
