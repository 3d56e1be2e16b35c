//! Writes the Rust-side inputs of the tract-vs-onnxruntime fixture: a seeded MLP classifier in sayso's ONNX
//! format and a seeded feature matrix. Run before `tests/fixtures/unaries/make_onnx_reference.py`:
//! `cargo run --example write_unary_fixtures`.
//!
//! Owns: nothing the library uses; it only writes fixture files.
//! Must not: be needed at test time (tests read the committed outputs).

use sayso::taxonomy::Taxonomy;
use sayso::unaries::byo_npy::encode_npy_f32;
use sayso::unaries::contract::{ModelContract, MODEL_FORMAT_VERSION};
use sayso::unaries::mlp::seeded_random_mlp;
use sayso::unaries::onnx_writer::encode_model;
use sayso::unaries::rng::SplitMix64;

/// Shape of the fixture network: features, hidden width, classes (the taxonomy's).
pub const FIXTURE_FEATURES: usize = 32;
pub const FIXTURE_HIDDEN: usize = 64;
pub const FIXTURE_SEGMENTS: usize = 400;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let taxonomy = Taxonomy::embedded();
    let mlp = seeded_random_mlp(
        2026,
        &[FIXTURE_FEATURES, FIXTURE_HIDDEN, taxonomy.class_count()],
    );
    let contract = ModelContract {
        format_version: MODEL_FORMAT_VERSION,
        class_names: taxonomy
            .classes()
            .iter()
            .map(|class| class.name.clone())
            .collect(),
        feature_layout_version: 0,
        feature_means: mlp.feature_means.to_vec(),
        feature_stds: mlp.feature_stds.to_vec(),
        temperature: mlp.temperature,
    };
    let directory = std::path::Path::new("tests/fixtures/unaries");
    std::fs::write(
        directory.join("fixture_mlp.onnx"),
        encode_model(&mlp, &contract)?,
    )?;
    let mut generator = SplitMix64::new(77);
    let features: Vec<f32> = (0..FIXTURE_SEGMENTS * FIXTURE_FEATURES)
        .map(|index| {
            (mlp.feature_means[index % FIXTURE_FEATURES] as f64 + generator.next_normal() * 3.0)
                as f32
        })
        .collect();
    std::fs::write(
        directory.join("fixture_mlp_input.npy"),
        encode_npy_f32(&[FIXTURE_SEGMENTS, FIXTURE_FEATURES], &features),
    )?;
    println!("wrote fixture_mlp.onnx and fixture_mlp_input.npy");
    Ok(())
}
