//! The correction loop end to end with the real binary: demo scenes are stored in a correction log, the
//! scripted operator notes beside them are applied as field notes, the accepted corrections are exported as
//! a dataset, and the classifier is retrained from that dataset — the new model loads and its card names
//! the exported data.

use std::path::Path;
use std::process::Command;

use sayso::taxonomy::Taxonomy;
use sayso::unaries::{current_feature_layout, Classifier};

/// Runs the binary with `arguments` and returns its standard output; fails the test on a non-zero exit.
fn run(arguments: &[&std::ffi::OsStr]) -> String {
    let output = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .args(arguments)
        .output()
        .expect("run sayso");
    assert!(
        output.status.success(),
        "sayso {arguments:?} failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8_lossy(&output.stdout).into_owned()
}

/// A command on the correction log in `data`, with the committed demo scenes.
fn sayso(arguments: &[&str], data: &Path) -> String {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo_scenes");
    let mut all: Vec<&std::ffi::OsStr> = arguments.iter().map(std::ffi::OsStr::new).collect();
    all.extend([
        "--data-dir".as_ref(),
        data.as_os_str(),
        "--demo-dir".as_ref(),
        demo.as_os_str(),
    ]);
    run(&all)
}

fn train(arguments: &[&str]) -> String {
    let mut all: Vec<&std::ffi::OsStr> = vec!["train".as_ref()];
    all.extend(arguments.iter().map(std::ffi::OsStr::new));
    run(&all)
}

#[test]
fn corrections_become_a_dataset_the_trainer_reads() {
    let work = tempfile::tempdir().unwrap();
    let data = work.path().join("data");
    let scenes = ["kitchen_baking", "bathroom_morning"];
    let stored = sayso(&["store", "--demo", scenes[0], "--demo", scenes[1]], &data);
    let ids: Vec<i64> = stored
        .lines()
        .map(|line| line.split('\t').next().unwrap().parse().unwrap())
        .collect();
    assert_eq!(ids.len(), 2, "{stored}");

    // Our scripted notes for these scenes, as a field-notes file.
    let mut notes = String::new();
    for (id, scene) in ids.iter().zip(scenes) {
        let text = std::fs::read_to_string(
            Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("demo_scenes")
                .join(scene)
                .join("notes.txt"),
        )
        .unwrap();
        for line in text
            .lines()
            .filter(|l| !l.trim().is_empty() && !l.starts_with('#'))
        {
            notes.push_str(&serde_json::json!({"scene_id": id, "text": line}).to_string());
            notes.push('\n');
        }
    }
    let notes_path = work.path().join("notes.jsonl");
    std::fs::write(&notes_path, notes).unwrap();
    sayso(
        &["field-notes", notes_path.to_str().unwrap(), "--quiet"],
        &data,
    );
    let report: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(work.path().join("notes.jsonl.report.json")).unwrap(),
    )
    .unwrap();
    let applied = report["counts"]["applied"].as_u64().unwrap_or(0);
    assert!(applied >= 1, "{report}");

    let dataset = work.path().join("dataset");
    sayso(&["export", "--output", dataset.to_str().unwrap()], &data);
    let index = std::fs::read_to_string(dataset.join("index.jsonl")).unwrap();
    let records: Vec<serde_json::Value> = index
        .lines()
        .map(|line| serde_json::from_str(line).unwrap())
        .collect();
    assert_eq!(records.len() as u64, applied);
    for record in &records {
        let folder = dataset.join(record["directory"].as_str().unwrap());
        for file in ["image.png", "labels.png", "labels_before.png", "depth.png"] {
            assert!(
                folder.join(file).is_file(),
                "{} lacks {file}",
                folder.display()
            );
        }
        assert!(record["room"].is_string(), "{record}");
    }

    let model = work.path().join("model");
    train(&[
        "--data",
        dataset.to_str().unwrap(),
        "--out",
        model.to_str().unwrap(),
        "--epochs",
        "20",
    ]);
    let taxonomy = Taxonomy::embedded();
    Classifier::load(
        &model.join("segment_classifier.onnx"),
        &taxonomy,
        current_feature_layout(),
    )
    .expect("the retrained model loads under the current contract");
    let card = std::fs::read_to_string(model.join("README.md")).unwrap();
    assert!(
        card.contains(&format!("{} scenes from", records.len())),
        "{card}"
    );
    assert!(card.contains("operator-corrected labels"), "{card}");
}

#[test]
fn training_renders_refuse_the_demo_scenes_seeds() {
    let output = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .args(["train", "--render", "3", "--seed-base", "1000", "--out"])
        .arg(tempfile::tempdir().unwrap().path())
        .output()
        .expect("run sayso train");
    assert!(!output.status.success());
    let message = String::from_utf8_lossy(&output.stderr);
    assert!(message.contains("evaluation set"), "{message}");
}
