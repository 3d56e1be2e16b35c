//! `sayso score`: the demo scenes' scripted notes measured. For every demo scene, print pixel accuracy, mean
//! IoU and object-level accuracy for the classifier alone, for the joint solve with no note (step 0), and
//! after each note; the headline is the notes' own effect, the last note against step 0. The no-note solve's
//! gain over the classifier is printed on its own line, never counted as the notes' gain.
//!
//! Object-level accuracy is the F1 of matching objects one-to-one to the truth's (`ObjectTally::f1`: a
//! spurious object costs as much as a missed one). `obj:graph` is that over the scene graph's objects (accepted hypotheses with their final
//! members); `obj:region` the same measure over 4-connected regions of the label map (adjacent objects of one
//! class merge). The classifier alone proposes no objects, so both its object columns are its regions. See
//! `sayso_lab::evaluation` for the matching rule. A note line starting `@x,y` points at that pixel.
//!
//! Owns: the flags and the table layout. Must not: compute scores or run stages itself; that is
//! `sayso_lab::evaluation` and `sayso_perception::pipeline`.

use std::path::PathBuf;

use sayso_core::language::constraint::Focus;
use sayso_core::scenegraph::label_map;
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::evaluation::{
    object_tally, objects_from_graph, objects_from_regions, read_pointed_notes, score_labels,
};
use sayso_perception::pipeline::{
    believe_without_notes, correct_notes, load_classifier, model_path, prepare_loaded,
    CorrectionSettings, PointedNote,
};
use sayso_render::demo::{demo_directory, list_demo_scenes, load_demo_scene};

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
    println!("classifier: the built-in classifier alone (obj:graph = obj:region: it proposes no objects).");
    println!(
        "step 0: the joint solve with no note (what the robot believes before anyone speaks)."
    );
    println!("step n: the corrected scene after note n. obj:graph = the scene graph's objects, obj:region =");
    println!(
        "        4-connected regions of the label map. Object match: right class, IoU >= 0.5, one-to-one; the\n        object figures are the matching's F1 (a spurious object costs as much as a missed one)."
    );
    println!("The headline is the notes' own effect: the last note's row against step 0.");
    println!(
        "{:<28} {:<10} {:>6} {:>6} {:>9} {:>10}   note",
        "scene", "step", "pixel", "mIoU", "obj:graph", "obj:region"
    );
    let mut gains = Vec::new();
    let mut solve_gains = Vec::new();
    let mut worse = Vec::new();
    let mut worse_region = Vec::new();
    for name in &names {
        let demo = load_demo_scene(&directory, Some(name))?;
        let prepared = prepare_loaded(demo.capture(), &classifier)?;
        let notes: Vec<PointedNote> = read_pointed_notes(&demo.directory)?
            .into_iter()
            .take(args.notes)
            .collect();
        let classifier_map = label_map(&prepared.scene, &prepared.classifier_labels);
        let scene = prepared.scene.clone();
        let baseline = believe_without_notes(&prepared, &settings)?;
        let row_of = |graph: &sayso_core::scenegraph::SceneGraph| -> anyhow::Result<Row> {
            let labels = label_map(&scene, &graph.segment_labels);
            let score = score_labels(&demo, &labels.values, taxonomy.class_count())?;
            Ok(Row {
                pixel: score.pixel_accuracy,
                mean_iou: score.mean_iou,
                object_graph: object_tally(&demo, &objects_from_graph(&scene, graph)).f1(),
                object_region: object_tally(
                    &demo,
                    &objects_from_regions(demo.labels.width as usize, &labels.values),
                )
                .f1(),
            })
        };
        let classifier_score = score_labels(&demo, &classifier_map.values, taxonomy.class_count())?;
        let classifier_regions = object_tally(
            &demo,
            &objects_from_regions(demo.labels.width as usize, &classifier_map.values),
        )
        .f1();
        let alone = Row {
            pixel: classifier_score.pixel_accuracy,
            mean_iou: classifier_score.mean_iou,
            object_graph: classifier_regions,
            object_region: classifier_regions,
        };
        println!("{name:<28} {:<10} {}", "classifier", alone.cells());
        let before = row_of(&baseline.graph)?;
        println!("{:<28} {:<10} {}   (no note)", "", "0", before.cells());
        let report = correct_notes(prepared, &notes, false, &settings)?;
        let mut last = before;
        for (index, (after, note)) in report.after_each.iter().zip(&notes).enumerate() {
            let graph = match after {
                Some(correction) => &correction.graph,
                None => &baseline.graph,
            };
            last = row_of(graph)?;
            let pointed = match note.focus {
                Some(Focus::Pixel { x, y }) => format!(" @{x},{y}"),
                _ => String::new(),
            };
            println!(
                "{:<28} {:<10} {}   {}{pointed}",
                "",
                index + 1,
                last.cells(),
                note.text
            );
        }
        let gain = last.minus(&before);
        solve_gains.push(before.minus(&alone));
        if gain.pixel < 0.0 || gain.mean_iou < 0.0 || gain.object_graph < 0.0 {
            worse.push(name.clone());
        }
        if gain.object_region < 0.0 {
            worse_region.push(name.clone());
        }
        gains.push(gain);
    }
    let count = gains.len().max(1) as f64;
    let mean =
        |rows: &[Row], pick: fn(&Row) -> f64| 100.0 * rows.iter().map(pick).sum::<f64>() / count;
    println!(
        "the notes' effect over {} scenes (after the notes against the no-note solve): pixel {:+.1}, mIoU {:+.1}, object (graph) {:+.1}, object (region) {:+.1} points",
        gains.len(),
        mean(&gains, |g| g.pixel),
        mean(&gains, |g| g.mean_iou),
        mean(&gains, |g| g.object_graph),
        mean(&gains, |g| g.object_region)
    );
    println!(
        "separately, the no-note solve against the classifier alone: pixel {:+.1}, mIoU {:+.1}, object (graph vs the classifier's regions) {:+.1} points",
        mean(&solve_gains, |g| g.pixel),
        mean(&solve_gains, |g| g.mean_iou),
        mean(&solve_gains, |g| g.object_graph)
    );
    if worse.is_empty() {
        println!("no scene got worse than its no-note solve on pixel, mIoU or object (graph)");
    } else {
        println!(
            "worse than the no-note solve on pixel, mIoU or object (graph): {}",
            worse.join(", ")
        );
    }
    if !worse_region.is_empty() {
        println!("worse on object (region): {}", worse_region.join(", "));
    }
    Ok(())
}
