//! `sayso train --corrections DIR`: fine-tunes the served classifier on exported corrections and a replay
//! set, writes the candidate (model, card, comparison table as JSON, chart as SVG) and, when the gate takes
//! it, puts it in place of the served model file (atomically: a running `sayso serve` picks it up).
//!
//! Owns: the fine-tuning flags' meaning, the candidate directory's files, the printed comparison table and
//! the installation. Must not: train or judge; `sayso_lab::retrain` does both.

use std::path::{Path, PathBuf};
use std::time::Instant;

use anyhow::Context;
use comfy_table::presets::NOTHING;
use comfy_table::{CellAlignment, Table};

use sayso_core::taxonomy::Taxonomy;
use sayso_lab::retrain::{card_section, fine_tune, FineTuneSettings};
use sayso_perception::unaries::classifier::model_id;
use sayso_perception::unaries::model_card::ModelCard;
use sayso_perception::unaries::trainer::TrainingConfig;

use super::train::TrainArgs;

/// Writes `bytes` to `path` through a temporary file in the same directory and a rename, so a reader
/// sees the old file or the new one, never a part.
fn write_atomically(path: &Path, bytes: &[u8]) -> anyhow::Result<()> {
    let directory = path.parent().unwrap_or(Path::new("."));
    let temporary = directory.join(format!(
        ".{}.incoming",
        path.file_name().and_then(|n| n.to_str()).unwrap_or("model")
    ));
    std::fs::write(&temporary, bytes)
        .with_context(|| format!("writing {}", temporary.display()))?;
    std::fs::rename(&temporary, path)
        .with_context(|| format!("moving the candidate into {}", path.display()))?;
    Ok(())
}

pub fn run(args: &TrainArgs, corrections: &Path) -> anyhow::Result<()> {
    let started = Instant::now();
    let taxonomy = Taxonomy::embedded();
    let served = sayso_perception::pipeline::model_path(args.serve.as_deref());
    let base_path = args.base.clone().unwrap_or_else(|| served.clone());
    let base_bytes =
        std::fs::read(&base_path).with_context(|| format!("reading {}", base_path.display()))?;
    let seeds = |start: u64, count: u32| start..start.saturating_add(u64::from(count));
    let settings = FineTuneSettings {
        replay: seeds(args.seed_base, args.replay),
        validation: seeds(args.validation_seed, args.validation_scenes),
        held_out: seeds(args.held_out_seed, args.held_out),
        correction_weight: args.correction_weight,
        emphasis: args.emphasis,
        training: TrainingConfig {
            max_epochs: args.epochs.unwrap_or(30),
            batch_size: args.batch_size,
            learning_rate: args.learning_rate.unwrap_or(1e-3),
            weight_decay: args.weight_decay,
            regularisation: args.regularisation(),
            patience: args.patience.unwrap_or(8),
            class_balanced: args.class_balanced.unwrap_or(false),
            seed: args.seed,
            show_progress: true,
            ..TrainingConfig::default()
        },
        show_progress: true,
    };
    let origin = base_path.display().to_string();
    let outcome = fine_tune(&base_bytes, &origin, corrections, &taxonomy, &settings)?;
    let id = model_id(&outcome.candidate_bytes);
    let directory = args
        .out
        .clone()
        .unwrap_or_else(|| PathBuf::from("candidates").join(&id));
    std::fs::create_dir_all(&directory)
        .with_context(|| format!("creating {}", directory.display()))?;
    let candidate_path = directory.join("segment_classifier.onnx");
    std::fs::write(&candidate_path, &outcome.candidate_bytes)
        .with_context(|| format!("writing {}", candidate_path.display()))?;

    let command: Vec<String> = std::iter::once("sayso".to_string())
        .chain(std::env::args().skip(1))
        .collect();
    let training = &outcome.training;
    let data = &outcome.data;
    let card = ModelCard {
        command: command.join(" "),
        training_data: format!(
            "Fine-tuned from the served model `{}` (id {}) on {} corrected scene(s) exported to `{}` and {} replay renders; see the fine-tuning section. One row per segment (the scene defaults), labelled with the majority class of its pixels.",
            base_path.display(),
            model_id(&base_bytes),
            data.corrected_scenes.len(),
            corrections.display(),
            data.replay.end - data.replay.start
        ),
        mode: format!(
            "MLP, hidden layers {:?} (the served model's shape)",
            outcome
                .candidate
                .layers
                .iter()
                .take(outcome.candidate.hidden_layer_count())
                .map(|layer| layer.bias.len())
                .collect::<Vec<_>>()
        ),
        feature_layout_version: sayso_perception::unaries::current_feature_layout().version,
        feature_count: outcome.candidate.feature_count(),
        class_count: outcome.candidate.class_count(),
        parameter_count: outcome.candidate.parameter_count(),
        file_bytes: outcome.candidate_bytes.len(),
        training_rows: data.corrected_rows + data.replay_rows,
        validation_rows: data.validation_rows,
        epochs_run: training.epochs_run,
        best_epoch: training.best_epoch,
        training_seconds: started.elapsed().as_secs_f64(),
        training_accuracy: training.training_accuracy,
        validation_accuracy: training.validation_accuracy,
        calibration: training.calibration,
        evaluation: None,
        validation_description: Some(format!(
            "{} whole renders (seeds {}..{}), never trained on",
            data.validation.end - data.validation.start,
            data.validation.start,
            data.validation.end
        )),
        appendix: Some(card_section(&outcome, &origin)),
    };
    std::fs::write(directory.join("README.md"), card.to_markdown())
        .with_context(|| format!("writing the card in {}", directory.display()))?;
    let report = serde_json::json!({
        "candidate": id,
        "base": model_id(&base_bytes),
        "comparison": outcome.comparison,
        "verdict": outcome.verdict,
        "data": outcome.data,
    });
    std::fs::write(
        directory.join("comparison.json"),
        serde_json::to_string_pretty(&report)?,
    )?;
    std::fs::write(
        directory.join("comparison.svg"),
        outcome.comparison.svg(&format!(
            "candidate {id} against the served model {}",
            model_id(&base_bytes)
        )),
    )?;

    let mut table = Table::new();
    table.load_style(NOTHING);
    table.set_header(vec!["figure", "served", "candidate", "change (points)"]);
    for row in outcome.comparison.rows() {
        table.add_row(vec![
            row.name.to_string(),
            format!("{:.2}", 100.0 * row.base),
            format!("{:.2}", 100.0 * row.candidate),
            format!("{:+.2}", row.gain_points()),
        ]);
    }
    for column in 1..4 {
        if let Some(column) = table.column_mut(column) {
            column.set_cell_alignment(CellAlignment::Right);
        }
    }
    println!("{table}");
    println!(
        "candidate {id} written to {} (chart: comparison.svg)",
        directory.display()
    );
    if !outcome.verdict.accepted {
        println!(
            "gate: the candidate is refused; {} stays in place:",
            served.display()
        );
        for reason in &outcome.verdict.reasons {
            println!("  - {reason}");
        }
        return Ok(());
    }
    if args.no_install {
        println!(
            "gate: the candidate would be taken; --no-install leaves {} in place",
            served.display()
        );
        return Ok(());
    }
    if let Ok(previous) = std::fs::read(&served) {
        std::fs::write(directory.join("replaced_model.onnx"), previous)?;
    }
    write_atomically(&served, &outcome.candidate_bytes)?;
    println!(
        "gate: the candidate is taken; {} now holds model {id} (the one it replaced is kept as {})",
        served.display(),
        directory.join("replaced_model.onnx").display()
    );
    Ok(())
}
