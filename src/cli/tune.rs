//! `sayso tune`: counts room-type-to-class statistics over training renders and tunes a few energy weights
//! on other training renders, then writes `room_class_prior.json`, `instance_cuts.json` and
//! `energy_weights.json` into `--out`.
//!
//! Owns: the flags, the progress lines and writing the three files. Must not: count, search or score itself;
//! that is `sayso_lab::tuning`. It never reads demo scenes: every scene is rendered from a training seed, and
//! the demo seeds 1000..=1999 are refused.

use std::path::PathBuf;
use std::time::Instant;

use anyhow::Context;

use sayso_core::energy::build::{EnergyWeights, WeightsFile, WEIGHTS_SCHEMA};
use sayso_core::scenegraph::instances::{InstanceCuts, InstanceCutsFile, EMBEDDED_INSTANCE_CUTS};
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::tuning::{count_statistics, prepare_tuning_scenes, tune_weights, TUNED_WEIGHTS};
use sayso_lab::tuning_cuts::{refine_cuts, solve_states};
use sayso_perception::pipeline::{load_classifier, model_path, CorrectionSettings};

/// Count room/class statistics and tune energy weights on training renders.
#[derive(Debug, clap::Args)]
pub struct TuneArgs {
    /// First seed of the renders the statistics are counted over.
    #[arg(long, default_value_t = 100_000)]
    pub stats_seed: u64,
    /// Number of renders counted (room types in turn).
    #[arg(long, default_value_t = 280)]
    pub stats_count: u64,
    /// First seed of the renders the weights are tuned on (disjoint from the classifier's training seeds).
    #[arg(long, default_value_t = 200_000)]
    pub tune_seed: u64,
    /// Number of tuning renders (room types in turn).
    #[arg(long, default_value_t = 42)]
    pub tune_count: u64,
    /// Passes of the coordinate search (0: only count statistics; the weights file is left alone).
    #[arg(long, default_value_t = 2)]
    pub passes: usize,
    /// Start the search from the hand-set weights (`EnergyWeights::default()`) instead of the committed file.
    #[arg(long)]
    pub from_hand_set: bool,
    /// The classifier's ONNX file (default: $SAYSO_MODEL, else models/segment_classifier.onnx).
    #[arg(long)]
    pub model: Option<PathBuf>,
    /// Directory to write room_class_prior.json and energy_weights.json into.
    #[arg(long, default_value = "models")]
    pub out: PathBuf,
    /// Only re-choose the strengths of the committed instance cuts on the solved tuning renders
    /// (`sayso_lab::tuning_cuts`), with the committed prior and weights; nothing is counted.
    #[arg(long)]
    pub cuts_only: bool,
}

pub fn run(args: TuneArgs) -> anyhow::Result<()> {
    let started = Instant::now();
    let taxonomy = Taxonomy::embedded();
    std::fs::create_dir_all(&args.out)
        .with_context(|| format!("creating {}", args.out.display()))?;
    if args.cuts_only {
        let committed: InstanceCutsFile = serde_json::from_str(EMBEDDED_INSTANCE_CUTS)?;
        let settings = CorrectionSettings::embedded()?;
        return refine_and_write(&args, &taxonomy, &settings, &committed, started);
    }
    let stats_seeds = args.stats_seed..args.stats_seed.saturating_add(args.stats_count);
    let mut rendered = 0u64;
    let counts = count_statistics(&taxonomy, stats_seeds.clone(), |_| {
        rendered += 1;
        if rendered.is_multiple_of(20) {
            eprintln!("counted {rendered} renders");
        }
    })?;
    let prior = counts.rooms.to_prior(format!(
        "counted by `sayso tune` over {} training renders, seeds {}..{} (room types in turn); \
         P(class in view | room) by Laplace's rule, P(room) add-one",
        counts.rooms.scene_count(),
        stats_seeds.start,
        stats_seeds.end
    ));
    let prior_path = args.out.join("room_class_prior.json");
    std::fs::write(&prior_path, serde_json::to_string(&prior)? + "\n")
        .with_context(|| format!("writing {}", prior_path.display()))?;
    println!(
        "wrote {} ({} scenes)",
        prior_path.display(),
        counts.rooms.scene_count()
    );
    let typical_sizes = counts.instances.typical_sizes();
    let cuts_file = counts.instances.to_file(
        &taxonomy,
        format!(
            "counted by `sayso tune` over {} training renders, seeds {}..{} (room types in turn): per class, \
             the cut with the best recognition quality recovering ground-truth objects from ground-truth labels",
            counts.instances.scene_count(),
            stats_seeds.start,
            stats_seeds.end
        ),
        &typical_sizes,
    )?;
    for line in counts.instances.summary(&taxonomy, &typical_sizes) {
        eprintln!("instance cuts: {line}");
    }
    let instance_cuts = InstanceCuts::from_file(&cuts_file, &taxonomy)?;
    write_cuts(&args, &cuts_file)?;
    if args.passes == 0 {
        return Ok(());
    }

    let classifier = load_classifier(&model_path(args.model.as_deref()), &taxonomy)?;
    let mut settings = CorrectionSettings::embedded()?;
    settings.prior = prior;
    settings.instance_cuts = instance_cuts;
    if args.from_hand_set {
        settings.weights = EnergyWeights::default();
    }
    let tune_seeds = args.tune_seed..args.tune_seed.saturating_add(args.tune_count);
    let scenes = prepare_tuning_scenes(&taxonomy, &classifier, tune_seeds.clone(), |line| {
        eprintln!("tuning scene {line}")
    })?;
    let result = tune_weights(&scenes, &mut settings, args.passes, |trial| {
        eprintln!(
            "  {} = {:.4}: objective {:.4}{}",
            trial.weight,
            trial.value,
            trial.objective,
            if trial.kept { " (kept)" } else { "" }
        )
    })?;
    let file = WeightsFile {
        schema: WEIGHTS_SCHEMA,
        source: format!(
            "tuned by `sayso tune{}` (coordinate search over {}, {} pass(es) at most, from the {} weights) on {} \
             training renders, seeds {}..{} (end exclusive), with the prior counted over seeds {}..{}; objective \
             (mean of mIoU and graph object accuracy less pixel accuracy and mIoU lost against the classifier alone, no note / room note / count note) {:.4} -> {:.4}",
            if args.from_hand_set { " --from-hand-set" } else { "" },
            TUNED_WEIGHTS.join(", "),
            args.passes,
            if args.from_hand_set { "hand-set" } else { "committed" },
            scenes.len(),
            tune_seeds.start,
            tune_seeds.end,
            stats_seeds.start,
            stats_seeds.end,
            result.start_objective,
            result.objective
        ),
        weights: result.weights.clone(),
    };
    let weights_path = args.out.join("energy_weights.json");
    std::fs::write(&weights_path, serde_json::to_string_pretty(&file)? + "\n")
        .with_context(|| format!("writing {}", weights_path.display()))?;
    println!(
        "wrote {}: objective {:.4} -> {:.4} ({} trials, {:.0} s)",
        weights_path.display(),
        result.start_objective,
        result.objective,
        result.trials.len(),
        started.elapsed().as_secs_f64()
    );
    refine_and_write(&args, &taxonomy, &settings, &cuts_file, started)
}

fn write_cuts(args: &TuneArgs, file: &InstanceCutsFile) -> anyhow::Result<()> {
    let cuts_path = args.out.join("instance_cuts.json");
    std::fs::write(&cuts_path, serde_json::to_string_pretty(file)? + "\n")
        .with_context(|| format!("writing {}", cuts_path.display()))?;
    println!(
        "wrote {} ({} classes cut)",
        cuts_path.display(),
        file.cuts.len()
    );
    Ok(())
}

/// Re-chooses the cut strengths on the tuning renders solved with `settings` and writes the cuts file.
fn refine_and_write(
    args: &TuneArgs,
    taxonomy: &Taxonomy,
    settings: &CorrectionSettings,
    counted: &InstanceCutsFile,
    started: Instant,
) -> anyhow::Result<()> {
    let classifier = load_classifier(&model_path(args.model.as_deref()), taxonomy)?;
    let tune_seeds = args.tune_seed..args.tune_seed.saturating_add(args.tune_count);
    let scenes = prepare_tuning_scenes(taxonomy, &classifier, tune_seeds.clone(), |line| {
        eprintln!("tuning scene {line}")
    })?;
    let states = solve_states(&scenes, settings)?;
    let refined = refine_cuts(&scenes, &states, counted, taxonomy)?;
    for trial in &refined.trials {
        eprintln!(
            "  cut {} = {:.2}: object accuracy {:.4}{}",
            trial.class,
            trial.cut,
            trial.objective,
            if trial.kept { " (kept)" } else { "" }
        );
    }
    let base = counted
        .source
        .split("; strengths re-chosen")
        .next()
        .unwrap_or_default()
        .to_string();
    let file = InstanceCutsFile {
        source: format!(
            "{base}; strengths re-chosen by `sayso tune` on {} solved training renders, seeds {}..{} (end \
             exclusive; `sayso_lab::tuning_cuts`): mean object accuracy over no note / each note {:.4} -> {:.4}",
            scenes.len(),
            tune_seeds.start,
            tune_seeds.end,
            refined.start_objective,
            refined.objective
        ),
        ..refined.file
    };
    write_cuts(args, &file)?;
    println!(
        "cut strengths: object accuracy {:.4} -> {:.4} ({} trials, {:.0} s)",
        refined.start_objective,
        refined.objective,
        refined.trials.len(),
        started.elapsed().as_secs_f64()
    );
    Ok(())
}
