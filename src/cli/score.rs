//! `sayso score`: the main job measured. For every demo scene, apply its scripted notes in order and print
//! pixel accuracy, mean IoU and object accuracy for the classifier alone and after each note, then the mean
//! gains.
//!
//! Owns: the flags and the table layout. Must not: compute scores or run stages itself; that is
//! `sayso::evaluation` and `sayso::pipeline`.

use std::path::PathBuf;

use sayso::demo::{demo_directory, list_demo_scenes};
use sayso::evaluation::{read_notes, score_labels, SceneScore};
use sayso::pipeline::{
    correct_prepared, load_classifier, model_path, prepare_scene, CorrectionSettings, SceneSource,
};
use sayso::scenegraph::label_map;
use sayso::taxonomy::Taxonomy;

/// Score the notes of every demo scene against its ground truth.
#[derive(Debug, clap::Args)]
pub struct ScoreArgs {
    /// Directory holding the demo scenes (default: $SAYSO_DEMO_DIR, else the crate's demo_scenes/).
    #[arg(long)]
    pub demo_dir: Option<PathBuf>,
    /// Only these scenes (repeatable); default every scene.
    #[arg(long)]
    pub scene: Vec<String>,
    /// Apply at most this many notes per scene.
    #[arg(long, default_value_t = 2)]
    pub notes: usize,
    /// The classifier's ONNX file (default: $SAYSO_MODEL, else models/segment_classifier.onnx).
    #[arg(long)]
    pub model: Option<PathBuf>,
}

fn cells(score: &SceneScore) -> String {
    format!(
        "{:>6.1} {:>6.1} {:>6.1}",
        100.0 * score.pixel_accuracy,
        100.0 * score.mean_iou,
        100.0 * score.object_accuracy
    )
}

pub fn run(args: ScoreArgs) -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(args.model.as_deref()), &taxonomy)?;
    let settings = CorrectionSettings::embedded()?;
    let directory = demo_directory(args.demo_dir.as_deref());
    let names = if args.scene.is_empty() {
        list_demo_scenes(&directory)?
    } else {
        args.scene.clone()
    };
    println!(
        "{:<30} {:<5} {:>6} {:>6} {:>6}   note",
        "scene", "step", "pixel", "mIoU", "object"
    );
    let mut gains = Vec::new();
    let mut worse = Vec::new();
    for name in &names {
        let source = SceneSource::Demo {
            directory: directory.clone(),
            name: Some(name.clone()),
        };
        let prepared = prepare_scene(&source, &classifier)?;
        let notes: Vec<String> = read_notes(&prepared.demo.directory)?
            .into_iter()
            .take(args.notes)
            .collect();
        let before_map = label_map(&prepared.scene, &prepared.classifier_labels);
        let demo = prepared.demo.clone();
        let scene = prepared.scene.clone();
        let before = score_labels(&demo, &before_map.values, taxonomy.class_count())?;
        println!(
            "{name:<30} {:<5} {}   (classifier alone)",
            "0",
            cells(&before)
        );
        let report = correct_prepared(prepared, &notes, None, false, &settings)?;
        let mut last = before;
        for (index, (after, note)) in report.after_each.iter().zip(&notes).enumerate() {
            let labels = match after {
                Some(correction) => label_map(&scene, &correction.graph.segment_labels),
                None => before_map.clone(),
            };
            last = score_labels(&demo, &labels.values, taxonomy.class_count())?;
            println!("{:<30} {:<5} {}   {note}", "", index + 1, cells(&last));
        }
        let gain = (
            last.pixel_accuracy - before.pixel_accuracy,
            last.mean_iou - before.mean_iou,
            last.object_accuracy - before.object_accuracy,
        );
        if gain.0 < 0.0 || gain.1 < 0.0 || gain.2 < 0.0 {
            worse.push(name.clone());
        }
        gains.push(gain);
    }
    let count = gains.len().max(1) as f64;
    let mean = |pick: fn(&(f64, f64, f64)) -> f64| gains.iter().map(pick).sum::<f64>() / count;
    println!(
        "mean gain over {} scenes: pixel {:+.1}, mIoU {:+.1}, object {:+.1} points",
        gains.len(),
        100.0 * mean(|g| g.0),
        100.0 * mean(|g| g.1),
        100.0 * mean(|g| g.2)
    );
    if worse.is_empty() {
        println!("no scene got worse on any measure");
    } else {
        println!("worse on some measure: {}", worse.join(", "));
    }
    Ok(())
}
