//! `sayso trial`: the notes measured on fresh renders and blind-written phrasings, against the no-note solve.
//! Prints every note with its outcome, a per-scene table and the summary, and writes the chart (SVG) and,
//! when asked, the records as JSON.
//!
//! Owns: the flags and the printed layout. Must not: judge or score anything itself (`sayso_lab::trial` does).

use std::path::PathBuf;

use anyhow::Context;
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::trial::phrasings::{PhrasingSet, Phrasings};
use sayso_lab::trial::{
    chart, run_scene, summarise, TrialContext, DEV_START, HELD_OUT_START, TRIAL_SEEDS,
};
use sayso_perception::pipeline::{load_classifier, model_path, CorrectionSettings};

/// Which phrasings and seeds a trial uses.
#[derive(Clone, Copy, Debug, clap::ValueEnum)]
pub enum Half {
    /// Development seeds and phrasings: for looking at failures while improving the parser and the solve.
    Dev,
    /// Held-out seeds and phrasings: the figures that are reported.
    HeldOut,
}

/// Render fresh scenes, let an automatic operator state true facts, and score the notes.
#[derive(Debug, clap::Args)]
pub struct TrialArgs {
    /// Which half: dev (seeds from 6000000) or held-out (seeds from 7000000).
    #[arg(long, value_enum, default_value = "held-out")]
    pub half: Half,
    /// Number of scenes (the room type cycles through the seven; 28 = four of each).
    #[arg(long, default_value_t = 28)]
    pub scenes: u64,
    /// Skip this many seeds from the half's first.
    #[arg(long, default_value_t = 0)]
    pub skip: u64,
    /// Notes per scene.
    #[arg(long, default_value_t = 2)]
    pub notes: usize,
    /// Where the chart goes.
    #[arg(long, default_value = "out/trial/trial.svg")]
    pub chart: PathBuf,
    /// Also write every record as JSON here.
    #[arg(long)]
    pub json: Option<PathBuf>,
    /// The classifier's ONNX file (default: $SAYSO_MODEL, else models/segment_classifier.onnx).
    #[arg(long)]
    pub model: Option<PathBuf>,
    /// Speak with this half's phrasings instead of the seeds' own half (a diagnosis: held-out seeds with
    /// dev phrasings separates what the scenes cost from what unseen wording costs).
    #[arg(long, value_enum)]
    pub phrasings: Option<Half>,
}

pub fn run(args: TrialArgs) -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(args.model.as_deref()), &taxonomy)?;
    let settings = CorrectionSettings::embedded()?;
    let (set, start) = match args.half {
        Half::Dev => (PhrasingSet::Dev, DEV_START),
        Half::HeldOut => (PhrasingSet::HeldOut, HELD_OUT_START),
    };
    let first = start + args.skip;
    let end = first + args.scenes;
    anyhow::ensure!(
        end <= TRIAL_SEEDS.end
            && (start == DEV_START && end <= HELD_OUT_START || start == HELD_OUT_START),
        "seeds {first}..{end} leave the {} half's range",
        set.table()
    );
    let set = match args.phrasings {
        Some(Half::Dev) => PhrasingSet::Dev,
        Some(Half::HeldOut) => PhrasingSet::HeldOut,
        None => set,
    };
    if args.phrasings.is_some() {
        println!("phrasings: the {} half's", set.table());
    }
    let phrasings = Phrasings::embedded(set)?;
    let context = TrialContext {
        taxonomy: &taxonomy,
        classifier: &classifier,
        settings: &settings,
        phrasings: &phrasings,
        notes: args.notes,
    };
    let mut trials = Vec::new();
    for (offset, seed) in (first..end).enumerate() {
        let index = (args.skip as usize) + offset;
        let trial = run_scene(&context, seed, index)?;
        println!("{} (seed {})", trial.name, trial.seed);
        for note in &trial.notes {
            let focus = note
                .focus
                .map(|(x, y)| format!(" @{x},{y}"))
                .unwrap_or_default();
            println!(
                "  [{:<8}] \"{}\"{focus} -> {} ({}); +{} / -{} px, {:.0} ms",
                note.kind,
                note.utterance,
                note.outcome.word(),
                note.detail,
                note.wrong_to_right,
                note.right_to_wrong,
                note.millis
            );
        }
        trials.push(trial);
    }
    println!();
    println!(
        "{:<22} {:>17} {:>17} {:>17} {:>17}",
        "scene",
        "classifier",
        "no-note solve",
        "after 1 note",
        format!("after {} notes", args.notes)
    );
    println!(
        "{:<22} {:>17} {:>17} {:>17} {:>17}",
        "", "pix  mIoU   obj", "pix  mIoU   obj", "pix  mIoU   obj", "pix  mIoU   obj"
    );
    let cell = |s: &sayso_lab::trial::Scores| {
        format!(
            "{:>5.1} {:>5.1} {:>5.1}",
            100.0 * s.pixel,
            100.0 * s.mean_iou,
            100.0 * s.object
        )
    };
    for trial in &trials {
        // A scene where the operator ran out of things to say keeps its last step.
        let at = |k: usize| trial.steps[k.min(trial.steps.len() - 1)];
        println!(
            "{:<22} {:>17} {:>17} {:>17} {:>17}",
            trial.name,
            cell(&trial.classifier),
            cell(&at(0)),
            cell(&at(1)),
            cell(&at(args.notes))
        );
    }
    let summary = summarise(&trials);
    println!();
    println!(
        "the notes' effect (mean over {} scenes, points against the no-note joint solve):",
        summary.scenes
    );
    println!(
        "  after 1 note:  object {:+.1} (recall {:+.1}, seen {:+.1}), mIoU {:+.1}, pixel {:+.1}",
        summary.gain_one.object,
        summary.gain_one.object_recall,
        summary.gain_one.object_seen,
        summary.gain_one.mean_iou,
        summary.gain_one.pixel
    );
    println!(
        "  after {} notes: object {:+.1} (recall {:+.1}, seen {:+.1}), mIoU {:+.1}, pixel {:+.1}",
        args.notes,
        summary.gain_all.object,
        summary.gain_all.object_recall,
        summary.gain_all.object_seen,
        summary.gain_all.mean_iou,
        summary.gain_all.pixel
    );
    println!(
        "  (object: F1 of scene-graph objects matched one-to-one to true objects at IoU 0.5, the recognition quality of panoptic quality; recall: the share of true objects matched; seen: the F1 over true objects of at least {} px and shown ones of at least {} px, those the operator notices and can speak of)",
        sayso_lab::trial::operator::MIN_VISIBLE,
        sayso_lab::trial::operator::MIN_NOTICED
    );
    println!(
        "the no-note solve against the classifier alone (separate from the notes; the classifier's objects are its label map's regions): object {:+.1} (recall {:+.1}, seen {:+.1}), mIoU {:+.1}, pixel {:+.1}",
        summary.solve_over_classifier.object,
        summary.solve_over_classifier.object_recall,
        summary.solve_over_classifier.object_seen,
        summary.solve_over_classifier.mean_iou,
        summary.solve_over_classifier.pixel
    );
    println!(
        "notes not met: {} of {} ({:.1}%)",
        summary.failed,
        summary.notes,
        100.0 * summary.failed as f64 / summary.notes.max(1) as f64
    );
    let mut outcomes: Vec<String> = Vec::new();
    for outcome in [
        sayso_lab::trial::Outcome::Unmet,
        sayso_lab::trial::Outcome::Asked,
        sayso_lab::trial::Outcome::Misread,
        sayso_lab::trial::Outcome::NotUnderstood,
    ] {
        let count = trials
            .iter()
            .flat_map(|t| &t.notes)
            .filter(|n| n.outcome == outcome)
            .count();
        if count > 0 {
            outcomes.push(format!("{} {count}", outcome.word().to_lowercase()));
        }
    }
    if !outcomes.is_empty() {
        println!("  of which: {}", outcomes.join(", "));
    }
    println!(
        "answers to the notes' questions (the operator pointing at a candidate that is not of the class, or at a thing the robot could not find, one turn each): {}",
        summary.answers
    );
    let mut kinds: Vec<&str> = trials
        .iter()
        .flat_map(|t| t.notes.iter().map(|n| n.kind))
        .collect();
    kinds.sort_unstable();
    kinds.dedup();
    for kind in kinds {
        let of_kind: Vec<_> = trials
            .iter()
            .flat_map(|t| &t.notes)
            .filter(|n| n.kind == kind)
            .collect();
        let met = of_kind
            .iter()
            .filter(|n| n.outcome == sayso_lab::trial::Outcome::Met)
            .count();
        let gained: u64 = of_kind.iter().map(|n| n.wrong_to_right).sum();
        let lost: u64 = of_kind.iter().map(|n| n.right_to_wrong).sum();
        println!(
            "  {kind:<9} {met:>3} of {:>3} met; pixels wrong->right {gained}, right->wrong {lost}",
            of_kind.len()
        );
    }
    println!(
        "pixels against the no-note solve: wrong->right {}, right->wrong {} ({:.1}%)",
        summary.wrong_to_right,
        summary.right_to_wrong,
        100.0 * summary.right_to_wrong as f64 / summary.wrong_to_right.max(1) as f64
    );
    if summary.worse.is_empty() {
        println!("no scene worse than its no-note solve on pixel, mIoU, object F1, object recall or seen-object F1");
    } else {
        println!(
            "worse than the no-note solve on some measure: {} ({})",
            summary.worse.len(),
            summary.worse.join(", ")
        );
    }
    println!(
        "turn solve time: median {:.1} ms, max {:.1} ms (wall clock, this machine)",
        summary.median_millis, summary.max_millis
    );
    let title = format!("sayso trial, {} half, seeds {first}..{end}", set.table());
    if let Some(parent) = args.chart.parent().filter(|p| !p.as_os_str().is_empty()) {
        std::fs::create_dir_all(parent)
            .with_context(|| format!("creating {}", parent.display()))?;
    }
    std::fs::write(&args.chart, chart::svg(&trials, &summary, &title))
        .with_context(|| format!("writing {}", args.chart.display()))?;
    println!("chart: {}", args.chart.display());
    if let Some(path) = &args.json {
        let records = serde_json::json!({ "summary": summary, "scenes": trials });
        std::fs::write(path, serde_json::to_string_pretty(&records)?)
            .with_context(|| format!("writing {}", path.display()))?;
        println!("records: {}", path.display());
    }
    Ok(())
}
