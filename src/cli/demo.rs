//! `sayso demo`: the main job on the embedded defaults for now. Loads a demo scene, draws what the robot
//! currently believes over the image, and writes the overlay and a scene summary.
//!
//! Owns: the flags and the output file names. Must not: hold logic worth testing; loading, summarising and
//! drawing live in `sayso::demo` and `sayso::overlay`.

use std::path::PathBuf;

use anyhow::Context;
use sayso::demo::{demo_directory, load_demo_scene, summarise, summary_text, BeliefSource};
use sayso::overlay::{draw_overlay, Labelling, OverlayOptions, RegionMap};
use sayso::raster::write_rgb_png;
use sayso::taxonomy::Taxonomy;

/// Where the shown labels come from.
#[derive(Debug, Clone, Copy, clap::ValueEnum)]
pub enum LabelsFrom {
    /// The renderer's ground truth (the only source so far).
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
    #[arg(long, value_enum, default_value = "ground-truth")]
    pub labels: LabelsFrom,
}

pub fn run(args: DemoArgs) -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let directory = demo_directory(args.demo_dir.as_deref());
    let scene = load_demo_scene(&directory, args.scene.as_deref())?;
    let source = match args.labels {
        LabelsFrom::GroundTruth => BeliefSource::GroundTruth,
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
