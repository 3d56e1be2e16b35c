//! `sayso export`: write the accepted corrections in the log as a training dataset directory.
//!
//! Owns: the command's flags and summary line. Must not: choose the layout (the correction log does).

use std::path::PathBuf;

use indicatif::{ProgressBar, ProgressStyle};
use sayso_correction_log::{export_dataset_showing, CorrectionLog, LeftOutReason};

use super::open_log::ServiceFlags;

/// Write every accepted correction as a training example (image.png, labels.png, labels_before.png,
/// scene.json per example; index.jsonl; classes.json).
#[derive(Debug, clap::Args)]
pub struct ExportArgs {
    #[command(flatten)]
    pub service: ServiceFlags,
    /// The dataset directory to create (must be empty or absent).
    #[arg(long, short)]
    pub output: PathBuf,
}

pub fn run(args: ExportArgs) -> anyhow::Result<()> {
    let config = args.service.config()?;
    let corrector = super::open_log::corrector(&config)?;
    let log = CorrectionLog::connect(&config.log_location())?;
    let progress = ProgressBar::new(0);
    if let Ok(style) = ProgressStyle::with_template("exporting {bar:30} example {pos}/{len}") {
        progress.set_style(style);
    }
    let summary = export_dataset_showing(&log, corrector.taxonomy(), &args.output, &progress)?;
    println!(
        "sayso: wrote {} training example(s) to {}",
        summary.examples,
        summary.directory.display()
    );
    if !summary.left_out.is_empty() {
        println!(
            "sayso: left out {} correction(s) (listed in left_out.jsonl):",
            summary.left_out.len()
        );
        for left in &summary.left_out {
            let why = match &left.reason {
                LeftOutReason::Undone => "undone".to_string(),
                LeftOutReason::Rejected => "rejected when asked to confirm".to_string(),
                LeftOutReason::Contradicted {
                    share,
                    current_version,
                } => format!(
                    "contradicted: {:.0}% of the pixels it changed are labelled otherwise in version {current_version}",
                    100.0 * share
                ),
            };
            println!("  {} \"{}\": {why}", left.scene_name, left.utterance);
        }
    }
    Ok(())
}
