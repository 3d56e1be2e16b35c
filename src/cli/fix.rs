//! `sayso fix`: the main job on the command line. A scene (demo name or directory) and one or more operator
//! notes in; the corrected scene graph, label map, before/after overlays and a plain summary out.
//!
//! Owns: the flags, the output file names, drawing the two overlays.
//! Must not: run pipeline stages itself; everything goes through `sayso::pipeline`.

use std::path::{Path, PathBuf};

use anyhow::Context;
use sayso::demo::demo_directory;
use sayso::ids::ClassId;
use sayso::language::parse_focus;
use sayso::overlay::{draw_overlay, Labelling, OverlayOptions, RegionMap};
use sayso::pipeline::{
    correct_prepared, load_classifier, model_path, prepare_loaded, report_text, CorrectionReport,
    CorrectionSettings, SceneSource,
};
use sayso::raster::{write_index_png, write_rgb_png};
use sayso::scenegraph::label_map;
use sayso::taxonomy::Taxonomy;

/// Correct a scene from operator notes.
#[derive(Debug, clap::Args)]
pub struct FixArgs {
    /// A demo scene name or a scene directory.
    pub scene: String,
    /// An operator note; repeat for several, applied in order as one conversation.
    #[arg(long = "say", required = true)]
    pub say: Vec<String>,
    /// What the operator points at: object:ID or pixel:X,Y.
    #[arg(long)]
    pub focus: Option<String>,
    /// Apply changes that remove or rename a person, pet or hazard.
    #[arg(long)]
    pub confirm: bool,
    /// Output directory.
    #[arg(long, default_value = "out/fix")]
    pub out: PathBuf,
    /// Directory holding the demo scenes (default: $SAYSO_DEMO_DIR, else the crate's demo_scenes/).
    #[arg(long)]
    pub demo_dir: Option<PathBuf>,
    /// The classifier's ONNX file (default: $SAYSO_MODEL, else models/segment_classifier.onnx).
    #[arg(long)]
    pub model: Option<PathBuf>,
}

pub fn run(args: FixArgs) -> anyhow::Result<()> {
    let focus = args.focus.as_deref().map(parse_focus).transpose()?;
    let taxonomy = Taxonomy::embedded();
    let source = SceneSource::from_text(&args.scene, &demo_directory(args.demo_dir.as_deref()));
    let capture = source.load()?;
    let classifier = load_classifier(&model_path(args.model.as_deref()), &taxonomy)?;
    let settings = CorrectionSettings::embedded()?;
    let prepared = prepare_loaded(capture, &classifier)?;
    let report = correct_prepared(prepared, &args.say, focus, args.confirm, &settings)?;
    write_outputs(&report, &taxonomy, &args.out)?;
    print!("{}", report_text(&report, &taxonomy));
    println!("wrote {}", args.out.display());
    Ok(())
}

fn overlay_png(
    report: &CorrectionReport,
    labels: &[ClassId],
    title: String,
    taxonomy: &Taxonomy,
    path: &Path,
) -> anyhow::Result<()> {
    let scene = &report.prepared.scene;
    let overlay = draw_overlay(
        &scene.image,
        RegionMap {
            width: scene.segments.width,
            regions: &scene.segments.labels,
        },
        Labelling::PerRegion(labels),
        taxonomy,
        &OverlayOptions {
            title,
            ..OverlayOptions::default()
        },
    )?;
    write_rgb_png(path, &overlay.image)?;
    Ok(())
}

/// Writes scene_graph.json, labels.png, overlay_before.png, overlay_after.png and summary.txt.
pub fn write_outputs(
    report: &CorrectionReport,
    taxonomy: &Taxonomy,
    out: &Path,
) -> anyhow::Result<()> {
    std::fs::create_dir_all(out).with_context(|| format!("creating {}", out.display()))?;
    let name = &report.prepared.capture.name;
    overlay_png(
        report,
        &report.prepared.classifier_labels,
        format!("{name}: built-in classifier"),
        taxonomy,
        &out.join("overlay_before.png"),
    )?;
    overlay_png(
        report,
        report.final_labels(),
        format!("{name}: after the notes"),
        taxonomy,
        &out.join("overlay_after.png"),
    )?;
    write_index_png(
        &out.join("labels.png"),
        &label_map(&report.prepared.scene, report.final_labels()),
    )?;
    if let Some(correction) = &report.correction {
        let path = out.join("scene_graph.json");
        std::fs::write(
            &path,
            serde_json::to_string_pretty(&correction.graph)? + "\n",
        )
        .with_context(|| format!("writing {}", path.display()))?;
    }
    let path = out.join("summary.txt");
    std::fs::write(&path, report_text(report, taxonomy))
        .with_context(|| format!("writing {}", path.display()))?;
    Ok(())
}
