//! `sayso export`: write the accepted corrections in the log as a training dataset directory.
//!
//! Owns: the command's flags and summary line. Must not: choose the layout (the correction log does).

use std::path::PathBuf;

use sayso::correction_log::{export_dataset, CorrectionLog};

use super::serve::ServiceFlags;

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
    let corrector = super::serve::corrector(&config)?;
    let log = CorrectionLog::open(&config.log_path())?;
    let summary = export_dataset(&log, corrector.taxonomy(), &args.output)?;
    println!(
        "sayso: wrote {} training example(s) to {}",
        summary.examples,
        summary.directory.display()
    );
    Ok(())
}
