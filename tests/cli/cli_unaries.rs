//! The `sayso train` and `sayso unaries` subcommands end to end, through the built binary.
//!
//! Owns: checks that the flags reach the library and that failures exit non-zero with a message naming
//! the fault.
//! Must not: re-test the library's numbers; the unit tests and tests/pipeline/unaries_reference.rs do that.

use std::process::Command;

use sayso_core::raster::{write_index_png, IndexImage};
use sayso_core::taxonomy::Taxonomy;
use sayso_perception::unaries::byo_npy::encode_npy_f32;
use sayso_perception::unaries::contract::FeatureLayout;
use sayso_perception::unaries::Classifier;

fn sayso() -> Command {
    Command::new(env!("CARGO_BIN_EXE_sayso"))
}

#[test]
fn train_on_a_feature_matrix_writes_a_loadable_model_and_a_card() {
    let out = tempfile::tempdir().unwrap();
    let matrix = crate::paths::fixture("unaries/logistic_train.csv");
    let status = sayso()
        .args([
            "train",
            "--mode",
            "softmax",
            "--epochs",
            "15",
            "--feature-matrix",
        ])
        .arg(&matrix)
        .arg("--out")
        .arg(out.path())
        .output()
        .unwrap();
    assert!(
        status.status.success(),
        "{}",
        String::from_utf8_lossy(&status.stderr)
    );
    let taxonomy = Taxonomy::embedded();
    let classifier = Classifier::load(
        &out.path().join("segment_classifier.onnx"),
        &taxonomy,
        FeatureLayout {
            version: 0,
            count: 8,
        },
    )
    .unwrap();
    assert!(classifier.contract().temperature > 0.0);
    let card = std::fs::read_to_string(out.path().join("README.md")).unwrap();
    assert!(
        card.contains("ECE (15 bins)") && card.contains("softmax regression"),
        "{card}"
    );
}

#[test]
fn unaries_from_a_label_map_and_a_refused_npy() {
    let directory = tempfile::tempdir().unwrap();
    let segments = IndexImage {
        width: 4,
        height: 2,
        values: vec![0, 0, 1, 1, 0, 0, 1, 2],
    };
    write_index_png(&directory.path().join("segments.png"), &segments).unwrap();
    let labels = IndexImage {
        width: 4,
        height: 2,
        values: vec![1, 1, 3, 3, 1, 1, 3, 255],
    };
    write_index_png(&directory.path().join("labels.png"), &labels).unwrap();
    let out = directory.path().join("unaries.json");
    let result = sayso()
        .arg("unaries")
        .arg("--segments")
        .arg(directory.path().join("segments.png"))
        .arg("--label-map")
        .arg(directory.path().join("labels.png"))
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    assert!(
        result.status.success(),
        "{}",
        String::from_utf8_lossy(&result.stderr)
    );
    let unaries: sayso_perception::unaries::Unaries =
        serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    assert_eq!(unaries.segment_count(), 3);
    let best = |segment: usize| {
        unaries
            .log_probs
            .row(segment)
            .iter()
            .enumerate()
            .max_by(|a, b| a.1.total_cmp(b.1))
            .unwrap()
            .0
    };
    assert_eq!((best(0), best(1)), (1, 3));

    let scores = directory.path().join("scores.npy");
    std::fs::write(&scores, encode_npy_f32(&[2, 4, 2], &[0.0; 16])).unwrap();
    let refused = sayso()
        .arg("unaries")
        .arg("--segments")
        .arg(directory.path().join("segments.png"))
        .arg("--npy")
        .arg(&scores)
        .args(["--class-names", "floor,flux_capacitor"])
        .output()
        .unwrap();
    assert!(!refused.status.success());
    let message = String::from_utf8_lossy(&refused.stderr);
    assert!(message.contains("flux_capacitor"), "{message}");
}
