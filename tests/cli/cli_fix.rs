//! `sayso fix` as an operator runs it: files written for a demo scene and a note, clear errors for an unknown
//! scene and a bad focus.
//!
//! Owns: checks on the written files and messages. Must not: check solver internals (tests/pipeline/joint_correct.rs).
//! The classifier is a small seeded random network written for the test, so these checks do not depend on a
//! trained model (they check the plumbing and the files, not the classifier's quality).

use std::path::{Path, PathBuf};
use std::process::Command;

use sayso_core::features::{FEATURE_COUNT, FEATURE_LAYOUT_VERSION};
use sayso_core::raster::{read_index_png, read_rgb_png, DEFAULT_PIXEL_LIMIT};
use sayso_core::taxonomy::Taxonomy;
use sayso_perception::unaries::contract::ModelContract;
use sayso_perception::unaries::mlp::seeded_random_mlp;
use sayso_perception::unaries::onnx_writer::encode_model;

fn sayso() -> Command {
    Command::new(env!("CARGO_BIN_EXE_sayso"))
}

fn seeded_model(directory: &Path) -> PathBuf {
    let taxonomy = Taxonomy::embedded();
    let mlp = seeded_random_mlp(7, &[FEATURE_COUNT, 8, taxonomy.class_count()]);
    let contract = ModelContract::for_network(&taxonomy, &mlp, FEATURE_LAYOUT_VERSION);
    let path = directory.join("seeded.onnx");
    std::fs::write(&path, encode_model(&mlp, &contract).unwrap()).unwrap();
    path
}

#[test]
fn fix_writes_graph_labels_overlays_and_summary() {
    let out = tempfile::tempdir().unwrap();
    let result = sayso()
        .args([
            "fix",
            "bathroom_morning",
            "--say",
            "this is the bathroom",
            "--model",
        ])
        .arg(seeded_model(out.path()))
        .arg("--out")
        .arg(out.path())
        .output()
        .unwrap();
    assert!(
        result.status.success(),
        "{}",
        String::from_utf8_lossy(&result.stderr)
    );
    let graph: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(out.path().join("scene_graph.json")).unwrap(),
    )
    .unwrap();
    assert_eq!(graph["scene"], "bathroom_morning");
    assert_eq!(graph["room_name"], "bathroom");
    let labels = read_index_png(&out.path().join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    assert_eq!((labels.width, labels.height), (640, 480));
    for name in ["overlay_before.png", "overlay_after.png"] {
        let overlay = read_rgb_png(&out.path().join(name), DEFAULT_PIXEL_LIMIT).unwrap();
        assert!(overlay.width > 640, "{name} has a legend beside the image");
    }
    let summary = std::fs::read_to_string(out.path().join("summary.txt")).unwrap();
    assert!(
        summary.contains("note 1: \"this is the bathroom\""),
        "{summary}"
    );
    assert!(summary.contains("understood"), "{summary}");
}

#[test]
fn unknown_scene_and_bad_focus_fail_in_one_line() {
    let out = tempfile::tempdir().unwrap();
    let result = sayso()
        .args(["fix", "attic_party", "--say", "two mugs", "--out"])
        .arg(out.path())
        .output()
        .unwrap();
    assert!(!result.status.success());
    let message = String::from_utf8_lossy(&result.stderr);
    assert!(message.contains("attic_party"), "{message}");
    let result = sayso()
        .args([
            "fix",
            "bathroom_morning",
            "--say",
            "that's a towel",
            "--focus",
            "elbow:3",
        ])
        .arg("--out")
        .arg(out.path())
        .output()
        .unwrap();
    assert!(!result.status.success());
    let message = String::from_utf8_lossy(&result.stderr);
    assert!(message.contains("elbow:3"), "{message}");
}
