//! Benchmark: per-scene classification of 400 segments with the built-in classifier path (tract, CPU).
//! Prints milliseconds per scene and the ratio to onnxruntime's time on the same model and input, as
//! measured by tests/fixtures/unaries/make_onnx_reference.py (single thread) and committed in
//! onnxruntime_timing.json. Goal: well under 2 ms per scene.
//!
//! Owns: timing only.
//! Must not: assert anything; speed goals are read from the printed figures.

use std::time::Instant;

use criterion::{criterion_group, criterion_main, Criterion};
use ndarray::Ix2;
use sayso_core::taxonomy::Taxonomy;
use sayso_perception::unaries::byo_npy::read_npy;
use sayso_perception::unaries::contract::FeatureLayout;
use sayso_perception::unaries::Classifier;

#[path = "../tests/paths.rs"]
mod paths;

fn classify_400_segments(criterion: &mut Criterion) {
    let directory = paths::fixture("unaries");
    let taxonomy = Taxonomy::embedded();
    let features = read_npy(&directory.join("fixture_mlp_input.npy"))
        .expect("fixture input")
        .values
        .mapv(|v| v as f32)
        .into_dimensionality::<Ix2>()
        .expect("a matrix");
    let layout = FeatureLayout {
        version: 0,
        count: features.ncols(),
    };
    let classifier = Classifier::load(&directory.join("fixture_mlp.onnx"), &taxonomy, layout)
        .expect("fixture model");
    criterion.bench_function("classifier_400_segments", |bencher| {
        bencher.iter(|| classifier.classify(features.view()).expect("runs"))
    });
    let repeats = 2000;
    let start = Instant::now();
    for _ in 0..repeats {
        std::hint::black_box(classifier.classify(features.view()).expect("runs"));
    }
    let ours = start.elapsed().as_secs_f64() * 1000.0 / repeats as f64;
    let reference: Option<f64> = std::fs::read_to_string(directory.join("onnxruntime_timing.json"))
        .ok()
        .and_then(|text| serde_json::from_str::<serde_json::Value>(&text).ok())
        .and_then(|value| value["milliseconds_per_run"].as_f64());
    match reference {
        Some(theirs) => println!(
            "classifier, {} segments: {ours:.3} ms per scene (goal < 2 ms); onnxruntime {theirs:.3} ms; ratio sayso/onnxruntime {:.2}",
            features.nrows(),
            ours / theirs
        ),
        None => println!("classifier, {} segments: {ours:.3} ms per scene (no onnxruntime timing found)", features.nrows()),
    }
}

criterion_group!(benches, classify_400_segments);
criterion_main!(benches);
