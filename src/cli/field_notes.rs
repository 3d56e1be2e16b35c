//! `sayso field-notes`: apply a file of field notes to stored scenes, with a progress bar and a report.
//!
//! Owns: the command's flags, the progress bar and the printed tally. Must not: apply notes itself
//! (`sayso_session::field_notes` does, through the session layer the service also uses).

use std::path::PathBuf;

use anyhow::Context;
use sayso_session::field_notes::apply_notes;

use super::open_log::{open_coordinator, ServiceFlags};

/// Apply field notes (JSON Lines `{"scene_id", "text", "focus"}` or TSV `scene id<TAB>utterance`) to
/// stored scenes and write a JSON report: applied, needs confirmation, needs clarification, not
/// understood, nothing to change, skipped — each with its reason.
#[derive(Debug, clap::Args)]
pub struct FieldNotesArgs {
    #[command(flatten)]
    pub service: ServiceFlags,
    /// The field-notes file.
    pub notes: PathBuf,
    /// Where to write the report [default: <notes>.report.json].
    #[arg(long)]
    pub report: Option<PathBuf>,
    /// The operator the notes are logged as.
    #[arg(long, default_value = "field-notes")]
    pub operator: String,
    /// Do not draw the progress bar.
    #[arg(long)]
    pub quiet: bool,
}

pub fn run(args: FieldNotesArgs) -> anyhow::Result<()> {
    let config = args.service.config()?;
    let text =
        std::fs::read(&args.notes).with_context(|| format!("reading {}", args.notes.display()))?;
    let coordinator = open_coordinator(&config)?;
    let bar = if args.quiet {
        indicatif::ProgressBar::hidden()
    } else {
        indicatif::ProgressBar::new(0)
    };
    bar.set_style(
        indicatif::ProgressStyle::with_template("{bar:40} {pos}/{len} notes {elapsed}")
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    let report = apply_notes(&coordinator, &text, &args.operator, |done, total| {
        bar.set_length(total as u64);
        bar.set_position(done as u64);
    });
    bar.finish_and_clear();
    let report_path = args.report.unwrap_or_else(|| {
        let mut name = args.notes.clone().into_os_string();
        name.push(".report.json");
        PathBuf::from(name)
    });
    std::fs::write(&report_path, serde_json::to_string_pretty(&report)?)
        .with_context(|| format!("writing {}", report_path.display()))?;
    let tally: Vec<String> = report
        .counts
        .iter()
        .map(|(outcome, count)| format!("{outcome} {count}"))
        .collect();
    println!(
        "sayso: {} note(s): {}; report in {}",
        report.results.len(),
        tally.join(", "),
        report_path.display()
    );
    Ok(())
}
