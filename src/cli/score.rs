//! `sayso score`: the main job measured. For every demo scene, apply its scripted notes in order and print
//! pixel accuracy, mean IoU and object-level accuracy before any note and after each note, then the mean
//! gains.
//!
//! Columns: `pixel` and `mIoU` score the per-pixel labels: on step 0 the built-in classifier's best class
//! per segment, after a note the corrected segment labels. `obj:graph` is object-level accuracy over the
//! scene graph's objects (accepted hypotheses with their final members): on step 0 the graph of the joint
//! solve with no note (what the robot believes before anyone speaks), after a note the corrected graph.
//! `obj:region` is the same measure over 4-connected regions of the step's label map (adjacent objects of
//! one class merge). See `sayso::evaluation` for the matching rule.
//!
//! The mean gains compare the last note's row with step 0. For objects a second comparison is printed:
//! the corrected graph's objects against the classifier alone, whose only objects are its label map's
//! regions (step 0's `obj:region`).
//!
//! Owns: the flags and the table layout. Must not: compute scores or run stages itself; that is
//! `sayso::evaluation` and `sayso::pipeline`.

use std::path::PathBuf;

use sayso::demo::{demo_directory, list_demo_scenes};
use sayso::evaluation::{object_accuracy, objects_from_graph, read_notes, score_labels};
use sayso::pipeline::{
    believe_without_notes, correct_prepared, load_classifier, model_path, prepare_scene,
    CorrectionSettings, SceneSource,
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

/// One row's figures, as fractions.
#[derive(Clone, Copy, Debug, Default)]
struct Row {
    pixel: f64,
    mean_iou: f64,
    object_graph: f64,
    object_region: f64,
}

impl Row {
    fn cells(&self) -> String {
        format!(
            "{:>6.1} {:>6.1} {:>9.1} {:>10.1}",
            100.0 * self.pixel,
            100.0 * self.mean_iou,
            100.0 * self.object_graph,
            100.0 * self.object_region
        )
    }

    fn minus(&self, other: &Row) -> Row {
        Row {
            pixel: self.pixel - other.pixel,
            mean_iou: self.mean_iou - other.mean_iou,
            object_graph: self.object_graph - other.object_graph,
            object_region: self.object_region - other.object_region,
        }
    }
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
    println!("step 0: pixel/mIoU of the classifier alone; obj:graph of the scene graph solved with no note;");
    println!("        obj:region of 4-connected regions of the classifier's label map.");
    println!("step n: every column from the corrected scene after note n (obj:graph = the corrected graph's");
    println!("        objects, obj:region = regions of the corrected label map). Object match: right class, IoU >= 0.5.");
    println!(
        "{:<28} {:<4} {:>6} {:>6} {:>9} {:>10}   note",
        "scene", "step", "pixel", "mIoU", "obj:graph", "obj:region"
    );
    let mut gains = Vec::new();
    // The scene graph's objects after the notes against the classifier alone, whose objects are its label
    // map's regions (it proposes no objects of its own).
    let mut over_classifier = Vec::new();
    let mut worse = Vec::new();
    let mut worse_region = Vec::new();
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
        let baseline = believe_without_notes(&prepared, &settings)?;
        let classifier_score = score_labels(&demo, &before_map.values, taxonomy.class_count())?;
        let before = Row {
            pixel: classifier_score.pixel_accuracy,
            mean_iou: classifier_score.mean_iou,
            object_graph: object_accuracy(&demo, &objects_from_graph(&scene, &baseline.graph)),
            object_region: classifier_score.object_accuracy,
        };
        println!("{name:<28} {:<4} {}   (no note)", "0", before.cells());
        let report = correct_prepared(prepared, &notes, None, false, &settings)?;
        let mut last = before;
        for (index, (after, note)) in report.after_each.iter().zip(&notes).enumerate() {
            let graph = match after {
                Some(correction) => &correction.graph,
                None => &baseline.graph,
            };
            let labels = label_map(&scene, &graph.segment_labels);
            let score = score_labels(&demo, &labels.values, taxonomy.class_count())?;
            last = Row {
                pixel: score.pixel_accuracy,
                mean_iou: score.mean_iou,
                object_graph: object_accuracy(&demo, &objects_from_graph(&scene, graph)),
                object_region: score.object_accuracy,
            };
            println!("{:<28} {:<4} {}   {note}", "", index + 1, last.cells());
        }
        let gain = last.minus(&before);
        over_classifier.push(last.object_graph - before.object_region);
        if gain.pixel < 0.0 || gain.mean_iou < 0.0 || gain.object_graph < 0.0 {
            worse.push(name.clone());
        }
        if gain.object_region < 0.0 {
            worse_region.push(name.clone());
        }
        gains.push(gain);
    }
    let count = gains.len().max(1) as f64;
    let mean = |pick: fn(&Row) -> f64| 100.0 * gains.iter().map(pick).sum::<f64>() / count;
    println!(
        "mean gain over {} scenes: pixel {:+.1}, mIoU {:+.1}, object (graph) {:+.1}, object (region) {:+.1} points",
        gains.len(),
        mean(|g| g.pixel),
        mean(|g| g.mean_iou),
        mean(|g| g.object_graph),
        mean(|g| g.object_region)
    );
    let classifier_gain = 100.0 * over_classifier.iter().sum::<f64>() / count;
    let below: Vec<&String> = names
        .iter()
        .zip(&over_classifier)
        .filter(|(_, &gain)| gain < 0.0)
        .map(|(name, _)| name)
        .collect();
    println!(
        "object (graph) after the notes against the classifier alone (its label map's regions): {classifier_gain:+.1} points; below it in {} scene(s)",
        below.len()
    );
    if worse.is_empty() {
        println!("no scene got worse on pixel, mIoU or object (graph)");
    } else {
        println!(
            "worse on pixel, mIoU or object (graph): {}",
            worse.join(", ")
        );
    }
    if !worse_region.is_empty() {
        println!("worse on object (region): {}", worse_region.join(", "));
    }
    Ok(())
}
