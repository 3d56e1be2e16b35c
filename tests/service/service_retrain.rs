//! The correction loop end to end with the real binary: demo scenes are stored in a correction log, the
//! scripted operator notes beside them are applied as field notes, the accepted corrections are exported,
//! the served classifier is fine-tuned on them mixed with replay renders, and the gate compares the
//! candidate with the served model on held-out renders and on the corrected scenes before it replaces the
//! served file. Also: a refused candidate leaves the served model alone, the log records which model
//! produced each scene version, and a running corrector swaps its model without a restart.

use std::path::Path;
use std::process::Command;

use sayso_core::taxonomy::Taxonomy;
use sayso_correction_log::CorrectionLog;
use sayso_perception::unaries::classifier::model_id;
use sayso_perception::unaries::onnx_reader::read_mlp;
use sayso_perception::unaries::onnx_writer::encode_model;
use sayso_perception::unaries::{current_feature_layout, Classifier};
use sayso_render::demo::load_demo_scene;
use sayso_session::corrector::{Corrector, SceneInput};
use sayso_session::JointCorrector;

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
    let demo = crate::paths::demo_scenes();
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

/// Stores `scenes` in the log under `data`, applies their scripted notes and returns the field-notes report.
fn store_and_correct(scenes: &[&str], data: &Path, work: &Path, model: &Path) -> serde_json::Value {
    let mut arguments = vec!["store"];
    for scene in scenes {
        arguments.extend(["--demo", scene]);
    }
    let model_text = model.to_str().unwrap();
    arguments.extend(["--model", model_text]);
    let stored = sayso(&arguments, data);
    let ids: Vec<i64> = stored
        .lines()
        .map(|line| line.split('\t').next().unwrap().parse().unwrap())
        .collect();
    assert_eq!(ids.len(), scenes.len(), "{stored}");
    // Our scripted notes for these scenes, as a field-notes file.
    let mut notes = String::new();
    for (id, scene) in ids.iter().zip(scenes) {
        let text =
            std::fs::read_to_string(crate::paths::demo_scenes().join(scene).join("notes.txt"))
                .unwrap();
        for line in text
            .lines()
            .filter(|l| !l.trim().is_empty() && !l.starts_with('#'))
        {
            notes.push_str(&serde_json::json!({"scene_id": id, "text": line}).to_string());
            notes.push('\n');
        }
    }
    let notes_path = work.join("notes.jsonl");
    std::fs::write(&notes_path, notes).unwrap();
    sayso(
        &[
            "field-notes",
            notes_path.to_str().unwrap(),
            "--quiet",
            "--model",
            model_text,
        ],
        data,
    );
    serde_json::from_str(&std::fs::read_to_string(work.join("notes.jsonl.report.json")).unwrap())
        .unwrap()
}

fn shipped_model() -> Vec<u8> {
    std::fs::read(crate::paths::shipped_model()).unwrap()
}

#[test]
fn corrections_fine_tune_a_candidate_the_gate_takes() {
    let work = tempfile::tempdir().unwrap();
    let data = work.path().join("data");
    // The served model is a copy, so the gate can replace it without touching models/.
    let served = work.path().join("served.onnx");
    std::fs::write(&served, shipped_model()).unwrap();
    let base_id = model_id(&shipped_model());
    let report = store_and_correct(
        &["kitchen_baking", "bathroom_morning"],
        &data,
        work.path(),
        &served,
    );
    let applied = report["counts"]["applied"].as_u64().unwrap_or(0);
    assert!(applied >= 1, "{report}");

    let dataset = work.path().join("dataset");
    sayso(&["export", "--output", dataset.to_str().unwrap()], &data);
    let index = std::fs::read_to_string(dataset.join("index.jsonl")).unwrap();
    let records: Vec<serde_json::Value> = index
        .lines()
        .map(|line| serde_json::from_str(line).unwrap())
        .collect();
    let left_out = std::fs::read_to_string(dataset.join("left_out.jsonl")).unwrap();
    assert_eq!(
        records.len()
            + left_out
                .lines()
                .filter(|l| l.contains("contradicted"))
                .count(),
        applied as usize,
        "every applied note is exported or listed as contradicted: {left_out}"
    );
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
        assert_eq!(
            record["model"],
            base_id.as_str(),
            "the log names the model of each version"
        );
    }

    let candidate = work.path().join("candidate");
    let printed = train(&[
        "--corrections",
        dataset.to_str().unwrap(),
        "--serve",
        served.to_str().unwrap(),
        "--out",
        candidate.to_str().unwrap(),
        "--replay",
        "8",
        "--validation-scenes",
        "3",
        "--held-out",
        "6",
        "--epochs",
        "6",
    ]);
    let comparison: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(candidate.join("comparison.json")).unwrap())
            .unwrap();
    let base = &comparison["comparison"]["base"];
    let tuned = &comparison["comparison"]["candidate"];
    let figure =
        |model: &serde_json::Value, set: &str, name: &str| model[set][name].as_f64().unwrap();
    // The candidate learned the corrections...
    assert!(
        figure(tuned, "corrected", "pixel_accuracy") > figure(base, "corrected", "pixel_accuracy"),
        "{comparison:#}"
    );
    // ...and on renders neither model trained on it is within half a point of the served model.
    for name in ["pixel_accuracy", "mean_iou"] {
        assert!(
            figure(tuned, "held_out", name) >= figure(base, "held_out", name) - 0.005,
            "{name}: {comparison:#}"
        );
    }
    assert_eq!(
        comparison["verdict"]["accepted"], true,
        "{comparison:#}\n{printed}"
    );
    assert!(printed.contains("held-out pixel accuracy"), "{printed}");
    assert!(
        printed.contains("gate: the candidate is taken"),
        "{printed}"
    );
    // The served file now holds the candidate, and the one it replaced is kept.
    let candidate_bytes = std::fs::read(candidate.join("segment_classifier.onnx")).unwrap();
    assert_eq!(std::fs::read(&served).unwrap(), candidate_bytes);
    assert_eq!(
        std::fs::read(candidate.join("replaced_model.onnx")).unwrap(),
        shipped_model()
    );
    let svg = std::fs::read_to_string(candidate.join("comparison.svg")).unwrap();
    assert!(svg.contains("candidate taken"), "{svg}");
    let card = std::fs::read_to_string(candidate.join("README.md")).unwrap();
    for needed in [
        "## Fine-tuning from the served model",
        "| held-out pixel accuracy |",
        "| held-out mean IoU |",
        "| held-out ECE |",
        "corrected scene `",
        "replay renders, seeds 100000..100008",
        "seeds 500000..500006",
        "whole renders (seeds 100100..100103), never trained on",
    ] {
        assert!(card.contains(needed), "the card lacks {needed:?}:\n{card}");
    }
    Classifier::load(&served, &Taxonomy::embedded(), current_feature_layout())
        .expect("the installed model loads under the current contract");

    // A scene stored now is scored by the new model, and its version says so.
    sayso(
        &[
            "store",
            "--demo",
            "kitchen_baking",
            "--model",
            served.to_str().unwrap(),
        ],
        &data,
    );
    let log = CorrectionLog::open(&data.join("corrections.sqlite")).unwrap();
    let newest = log.scenes().unwrap().pop().unwrap();
    assert_eq!(
        log.version(newest.head).unwrap().0.model.as_deref(),
        Some(model_id(&candidate_bytes).as_str())
    );
}

#[test]
fn a_candidate_that_learned_nothing_is_refused_and_the_served_model_stays() {
    let work = tempfile::tempdir().unwrap();
    let data = work.path().join("data");
    let served = work.path().join("served.onnx");
    std::fs::write(&served, shipped_model()).unwrap();
    store_and_correct(&["bathroom_morning"], &data, work.path(), &served);
    let dataset = work.path().join("dataset");
    sayso(&["export", "--output", dataset.to_str().unwrap()], &data);
    // A learning rate so small the weights stay put: only the temperature moves, which changes no
    // segment's most likely class, so the candidate is no better on the corrected scene.
    let candidate = work.path().join("candidate");
    let printed = train(&[
        "--corrections",
        dataset.to_str().unwrap(),
        "--serve",
        served.to_str().unwrap(),
        "--out",
        candidate.to_str().unwrap(),
        "--replay",
        "2",
        "--validation-scenes",
        "1",
        "--held-out",
        "2",
        "--epochs",
        "1",
        "--learning-rate",
        "1e-12",
    ]);
    assert!(
        printed.contains("gate: the candidate is refused"),
        "{printed}"
    );
    assert!(
        printed.contains("corrected scenes, pixel accuracy is not better"),
        "{printed}"
    );
    assert_eq!(std::fs::read(&served).unwrap(), shipped_model());
    assert!(candidate.join("segment_classifier.onnx").is_file());
    let card = std::fs::read_to_string(candidate.join("README.md")).unwrap();
    assert!(card.contains("Gate: refused"), "{card}");
}

#[test]
fn a_running_corrector_swaps_its_model_and_names_it_in_each_state() {
    let demo = crate::paths::demo_scenes();
    let scene = load_demo_scene(&demo, Some("bathroom_morning")).unwrap();
    let input = SceneInput {
        name: scene.name.clone(),
        image: std::sync::Arc::new(scene.image.clone()),
        depth: Some(std::sync::Arc::new(scene.depth.clone())),
        scores_npy: None,
        label_map: None,
        detections: Vec::new(),
        room: None,
        classes: Default::default(),
        superpixels: None,
        prepared: None,
    };
    let shipped = crate::paths::shipped_model();
    let corrector = JointCorrector::load(&shipped).unwrap();
    let before = corrector.register(&input).unwrap();
    assert_eq!(
        before.summary.model.as_deref(),
        Some(model_id(&shipped_model()).as_str())
    );
    // Another model (the shipped one with its temperature doubled: other bytes, same classes).
    let mut mlp = read_mlp(&shipped_model(), "shipped").unwrap();
    mlp.temperature *= 2.0;
    let taxonomy = Taxonomy::embedded();
    let original = Classifier::from_bytes(
        &shipped_model(),
        "shipped",
        &taxonomy,
        current_feature_layout(),
    )
    .unwrap();
    let bytes = encode_model(&mlp, original.contract()).unwrap();
    let other =
        Classifier::from_bytes(&bytes, "other", &taxonomy, current_feature_layout()).unwrap();
    corrector.replace_classifier(other);
    assert_eq!(corrector.model_id(), model_id(&bytes));
    let after = corrector.register(&input).unwrap();
    assert_eq!(
        after.summary.model.as_deref(),
        Some(model_id(&bytes).as_str())
    );
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
