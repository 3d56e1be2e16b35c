//! `sayso demo`: the main job on the embedded defaults. Loads a demo scene, shows what the built-in classifier
//! believes (overlay_before.png), applies the scene's first scripted note(s) from its notes.txt and writes
//! overlay_after.png, scene_graph.json, labels.png and summary.txt. `--labels ground-truth` instead draws the
//! renderer's ground truth (overlay.png, summary.txt, summary.json).
//!
//! Owns: the flags and the output file names. Must not: hold logic worth testing; loading, summarising and
//! drawing live in `sayso_render::demo` and `sayso_core::overlay`.

use std::path::PathBuf;

use anyhow::Context;
use sayso_core::overlay::{draw_overlay, Labelling, OverlayOptions, RegionMap};
use sayso_core::raster::write_rgb_png;
use sayso_core::raster::DEFAULT_PIXEL_LIMIT;
use sayso_core::scene::load_capture;
use sayso_core::scenegraph::changes::ChangeKind;
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::evaluation::read_pointed_notes;
use sayso_perception::pipeline::{
    correct_notes, load_classifier, model_path, object_summary, prepare_loaded, CorrectionSettings,
    PointedNote,
};
use sayso_render::demo::{
    demo_directory, demo_scene_path, load_demo_scene, summarise, summary_text, BeliefSource,
};

/// Where the shown labels come from.
#[derive(Debug, Clone, Copy, clap::ValueEnum)]
pub enum LabelsFrom {
    /// The built-in classifier, corrected by the scene's first scripted notes.
    Classifier,
    /// The renderer's ground truth.
    GroundTruth,
}

/// Load a demo scene and write what the robot believes: out/demo/overlay.png, summary.txt, summary.json.
#[derive(Debug, clap::Args)]
pub struct DemoArgs {
    /// Demo scene name (default: the first scene of the demo set).
    #[arg(long)]
    pub scene: Option<String>,
    /// Directory holding the demo scenes (default: $SAYSO_DEMO_DIR, else the crate's demo_scenes/).
    #[arg(long)]
    pub demo_dir: Option<PathBuf>,
    /// Output directory.
    #[arg(long, default_value = "out/demo")]
    pub out: PathBuf,
    /// Which labels to show.
    #[arg(long, value_enum, default_value = "classifier")]
    pub labels: LabelsFrom,
    /// How many of the scene's scripted notes to apply.
    #[arg(long, default_value_t = 2)]
    pub notes: usize,
    /// The classifier's ONNX file (default: $SAYSO_MODEL, else models/segment_classifier.onnx).
    #[arg(long)]
    pub model: Option<PathBuf>,
}

fn run_main_job(args: &DemoArgs) -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let directory = demo_directory(args.demo_dir.as_deref());
    let scene_directory = demo_scene_path(&directory, args.scene.as_deref())?;
    let capture = load_capture(&scene_directory, DEFAULT_PIXEL_LIMIT)?;
    let classifier = load_classifier(&model_path(args.model.as_deref()), &taxonomy)?;
    let settings = CorrectionSettings::embedded()?;
    let prepared = prepare_loaded(capture, &classifier)?;
    let notes: Vec<PointedNote> = read_pointed_notes(&scene_directory)?
        .into_iter()
        .take(args.notes)
        .collect();
    let report = correct_notes(prepared, &notes, false, &settings)?;
    super::fix::write_outputs(&report, &taxonomy, &args.out)?;
    println!(
        "{}: before_after.png shows the scene before the notes and after them",
        report.prepared.capture.name
    );
    for turn in &report.turns {
        let relabelled = turn
            .changes
            .iter()
            .filter(|c| matches!(c.kind, ChangeKind::SegmentRelabelled { .. }))
            .count();
        let glosses: Vec<&str> = turn.understood.iter().map(|u| u.gloss.as_str()).collect();
        let objects = object_summary(&turn.objects, &taxonomy);
        println!(
            "said {:?}: understood [{}]; {} segment(s) relabelled{}{}",
            turn.utterance,
            glosses.join("; "),
            relabelled,
            if objects.is_empty() {
                String::new()
            } else {
                format!("; objects: {}", objects.join("; "))
            },
            if turn.unmet.is_empty() {
                String::new()
            } else {
                format!("; {} unmet", turn.unmet.len())
            }
        );
    }
    println!("wrote {}", args.out.display());
    Ok(())
}

pub fn run(args: DemoArgs) -> anyhow::Result<()> {
    if matches!(args.labels, LabelsFrom::Classifier) {
        return run_main_job(&args);
    }
    let taxonomy = Taxonomy::embedded();
    let directory = demo_directory(args.demo_dir.as_deref());
    let scene = load_demo_scene(&directory, args.scene.as_deref())?;
    let source = match args.labels {
        LabelsFrom::GroundTruth | LabelsFrom::Classifier => BeliefSource::GroundTruth,
    };
    let labels = source.labels(&scene);
    // Region boundaries: object instances, split further by class so structure edges show too.
    let regions: Vec<u32> = scene
        .instances
        .values
        .iter()
        .zip(&labels)
        .map(|(&instance, &class)| ((instance as u32) << 8) | class as u32)
        .collect();
    let overlay = draw_overlay(
        &scene.image,
        RegionMap {
            width: scene.image.width,
            regions: &regions,
        },
        Labelling::PerPixel(&labels),
        &taxonomy,
        &OverlayOptions {
            title: format!("{}: {}", scene.name, source.title()),
            ..OverlayOptions::default()
        },
    )?;
    std::fs::create_dir_all(&args.out)
        .with_context(|| format!("creating {}", args.out.display()))?;
    write_rgb_png(&args.out.join("overlay.png"), &overlay.image)?;
    let summary = summarise(&scene, source, &taxonomy);
    let text_path = args.out.join("summary.txt");
    std::fs::write(&text_path, summary_text(&summary))
        .with_context(|| format!("writing {}", text_path.display()))?;
    let json_path = args.out.join("summary.json");
    std::fs::write(&json_path, serde_json::to_string_pretty(&summary)? + "\n")
        .with_context(|| format!("writing {}", json_path.display()))?;
    println!(
        "{} ({}): {} classes, {} objects; wrote {}",
        scene.name,
        scene.metadata.room,
        summary.classes.len(),
        summary.objects.len(),
        args.out.display()
    );
    Ok(())
}
