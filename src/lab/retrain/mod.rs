//! Retraining from corrections: fine-tunes the served segment classifier on the operator-corrected scenes
//! exported from the correction log, mixed with a replay set of training renders so it does not forget the
//! rest of the flat, and measures the candidate against the served model before anything is replaced.
//!
//! The data are kept apart by scene, never by row:
//!
//! | set | scenes | used for |
//! |---|---|---|
//! | corrected | the exported scenes, each once with its latest corrected labels | training (weighted; segments the corrections changed weighted `emphasis` times more) and the before/after figure on the corrected scenes |
//! | replay | training renders, seeds from `REPLAY_SEEDS` (the served model's own training renders) | training |
//! | validation | training renders from `VALIDATION_SEEDS` (never trained on, by the served model or the candidate) | early stopping and the calibration temperature |
//! | held-out | renders from `HELD_OUT_SEEDS` (a range no other tool reads) | the gate and the model card only |
//!
//! The figure on the corrected scenes is measured on images the candidate trained on: it says whether the
//! candidate learned the corrections, not how it generalises; the held-out renders say that.
//!
//! Owns: the seed ranges above, `FineTuneSettings`, `fine_tune`, `FineTuneOutcome`, `RetrainError`, the
//! model-card section (`card_section`); submodules `data` (rows), `evaluate` (figures), `gate` (decision,
//! table rows, chart).
//! Must not: write files or replace a model (the binary installs what the gate takes); read demo scenes'
//! ground truth or the trial's seeds.

pub mod data;
pub mod evaluate;
pub mod gate;

use std::ops::Range;
use std::path::{Path, PathBuf};

use indicatif::{ProgressBar, ProgressStyle};

use crate::scene::SceneParams;
use crate::taxonomy::Taxonomy;
use crate::unaries::contract::ModelContract;
use crate::unaries::mlp::Mlp;
use crate::unaries::trainer::{train_from, LabelledFeatures, TrainingConfig, TrainingOutcome};
use crate::unaries::{current_feature_layout, Classifier};

use data::{
    corrected_rows, read_corrections, render_scenes, scene_rows, CorrectedScene, SceneRows,
};
use evaluate::{measure_corrected, measure_set};
use gate::{Comparison, ModelFigures, Verdict};

/// The served model's training renders (`models/README.md`: seeds 100000-100099); replay draws from them.
pub const REPLAY_SEEDS: Range<u64> = 100_000..100_100;
/// Training renders no classifier trained on, for early stopping and the temperature.
pub const VALIDATION_SEEDS: Range<u64> = 100_100..100_200;
/// Renders kept for judging retrained models only: disjoint from the demo seeds (1000-1999), the training
/// and tuning renders (100000-100279, 200000-200041, the diagnostic 300000s) and the trial (6000000-7999999).
pub const HELD_OUT_SEEDS: Range<u64> = 500_000..501_000;

/// Why a fine-tuning run could not be made.
#[derive(Debug, thiserror::Error)]
pub enum RetrainError {
    #[error("cannot read {path}: {message}")]
    Read { path: PathBuf, message: String },
    #[error("{path} holds no exported corrections (index.jsonl is empty); nothing to learn from")]
    NoCorrections { path: PathBuf },
    #[error("{what} seeds {start}..{end} must lie within {allowed_start}..{allowed_end}")]
    SeedRange {
        what: &'static str,
        start: u64,
        end: u64,
        allowed_start: u64,
        allowed_end: u64,
    },
    #[error(transparent)]
    Dataset(#[from] crate::unaries::dataset::DatasetError),
    #[error(transparent)]
    Raster(#[from] crate::raster::RasterError),
    #[error(transparent)]
    Scene(#[from] crate::scene::SceneError),
    #[error(transparent)]
    Tuning(#[from] crate::tuning::TuningError),
    #[error(transparent)]
    Classifier(#[from] crate::unaries::ClassifierError),
    #[error(transparent)]
    Metrics(#[from] crate::unaries::metrics::MetricsError),
    #[error("the served model: {0}")]
    BaseModel(#[from] crate::unaries::onnx_reader::OnnxReadError),
    #[error("training: {0}")]
    Train(#[from] crate::unaries::trainer::TrainError),
    #[error("writing the candidate: {0}")]
    Write(#[from] crate::unaries::onnx_writer::OnnxWriteError),
    #[error("{0}")]
    Internal(String),
}

/// Everything that decides a fine-tuning run besides its inputs.
#[derive(Clone, Debug)]
pub struct FineTuneSettings {
    /// Replay renders trained on (within `REPLAY_SEEDS`).
    pub replay: Range<u64>,
    /// Renders for early stopping and the temperature (within `VALIDATION_SEEDS`).
    pub validation: Range<u64>,
    /// Renders the gate judges on (within `HELD_OUT_SEEDS`).
    pub held_out: Range<u64>,
    /// Weight of every row of a corrected scene, relative to a replay row's 1.
    pub correction_weight: f32,
    /// Further factor for the segments the corrections changed.
    pub emphasis: f32,
    /// Optimiser settings; `mode` is not used (the served model's shape is kept).
    pub training: TrainingConfig,
    pub show_progress: bool,
}

impl Default for FineTuneSettings {
    fn default() -> FineTuneSettings {
        FineTuneSettings {
            replay: REPLAY_SEEDS.start..REPLAY_SEEDS.start + 28,
            validation: VALIDATION_SEEDS.start..VALIDATION_SEEDS.start + 7,
            held_out: HELD_OUT_SEEDS.start..HELD_OUT_SEEDS.start + 21,
            correction_weight: 4.0,
            emphasis: 8.0,
            training: TrainingConfig {
                max_epochs: 30,
                learning_rate: 1e-3,
                patience: 8,
                class_balanced: false,
                ..TrainingConfig::default()
            },
            show_progress: false,
        }
    }
}

/// What went into a run, for the model card and the summary.
#[derive(Clone, Debug, serde::Serialize)]
pub struct DataSummary {
    pub corrections_directory: PathBuf,
    /// `(scene name, corrections kept, pixels changed)` per corrected scene.
    pub corrected_scenes: Vec<(String, usize, usize)>,
    pub corrected_rows: usize,
    pub emphasised_rows: usize,
    pub replay: Range<u64>,
    pub replay_rows: usize,
    pub validation: Range<u64>,
    pub validation_rows: usize,
    pub held_out: Range<u64>,
    pub correction_weight: f32,
    pub emphasis: f32,
}

/// A fine-tuning run's result: the candidate, how it was trained, and how it compares.
pub struct FineTuneOutcome {
    pub candidate_bytes: Vec<u8>,
    pub candidate: Mlp,
    pub training: TrainingOutcome,
    pub data: DataSummary,
    pub comparison: Comparison,
    pub verdict: Verdict,
}

fn check_range(
    what: &'static str,
    seeds: &Range<u64>,
    allowed: &Range<u64>,
) -> Result<(), RetrainError> {
    if seeds.is_empty() || seeds.start < allowed.start || seeds.end > allowed.end {
        return Err(RetrainError::SeedRange {
            what,
            start: seeds.start,
            end: seeds.end,
            allowed_start: allowed.start,
            allowed_end: allowed.end,
        });
    }
    crate::tuning::check_training_seeds(seeds)?;
    Ok(())
}

fn bar(length: usize, show: bool, verb: &str) -> ProgressBar {
    if !show {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(length as u64);
    if let Ok(style) = ProgressStyle::with_template(&format!("{verb} {{bar:30}} {{pos}}/{{len}}")) {
        bar.set_style(style);
    }
    bar
}

fn stack(parts: Vec<LabelledFeatures>, width: usize) -> Result<LabelledFeatures, RetrainError> {
    let mut labels = Vec::new();
    let mut values = Vec::new();
    for part in parts {
        labels.extend(part.labels);
        values.extend(part.features.iter().copied());
    }
    let features = ndarray::Array2::from_shape_vec((labels.len(), width), values)
        .map_err(|error| RetrainError::Internal(error.to_string()))?;
    Ok(LabelledFeatures { features, labels })
}

/// Fine-tunes the model in `base_bytes` on the corrections exported to `corrections` and a replay set,
/// and compares the candidate with the base (`settings` says which renders).
pub fn fine_tune(
    base_bytes: &[u8],
    base_origin: &str,
    corrections: &Path,
    taxonomy: &Taxonomy,
    settings: &FineTuneSettings,
) -> Result<FineTuneOutcome, RetrainError> {
    check_range("replay", &settings.replay, &REPLAY_SEEDS)?;
    check_range("validation", &settings.validation, &VALIDATION_SEEDS)?;
    check_range("held-out", &settings.held_out, &HELD_OUT_SEEDS)?;
    let weights_ok = |w: f32| w.is_finite() && w > 0.0;
    if !weights_ok(settings.correction_weight) || !weights_ok(settings.emphasis) {
        return Err(RetrainError::Internal(
            "the correction weight and the emphasis must be positive numbers".into(),
        ));
    }
    let layout = current_feature_layout();
    let base = Classifier::from_bytes(base_bytes, base_origin, taxonomy, layout)?;
    let base_mlp = crate::unaries::onnx_reader::read_mlp(base_bytes, base_origin)?;
    let params = SceneParams::default();
    let class_count = taxonomy.class_count();

    let corrected = read_corrections(corrections, taxonomy)?;
    let scene_count = corrected.len()
        + settings.replay.clone().count()
        + settings.validation.clone().count()
        + settings.held_out.clone().count();
    let progress = bar(scene_count, settings.show_progress, "preparing scenes");
    let mut corrected_sets: Vec<(CorrectedScene, SceneRows)> = Vec::new();
    let mut training_parts = Vec::new();
    let mut row_weights = Vec::new();
    let mut emphasised_rows = 0;
    let mut corrected_row_count = 0;
    for scene in corrected {
        let rows = scene_rows(&scene.labelled, taxonomy, &params)?;
        let (labelled, weights, emphasised) = corrected_rows(
            &scene,
            &rows,
            class_count,
            settings.correction_weight,
            settings.emphasis,
        )?;
        corrected_row_count += labelled.len();
        emphasised_rows += emphasised;
        training_parts.push(labelled);
        row_weights.extend(weights);
        corrected_sets.push((scene, rows));
        progress.inc(1);
    }
    let mut replay_rows = 0;
    for scene in render_scenes(taxonomy, settings.replay.clone(), &progress)? {
        let labelled = scene_rows(&scene, taxonomy, &params)?.labelled();
        replay_rows += labelled.len();
        row_weights.extend(std::iter::repeat_n(1.0, labelled.len()));
        training_parts.push(labelled);
    }
    let mut validation_parts = Vec::new();
    for scene in render_scenes(taxonomy, settings.validation.clone(), &progress)? {
        validation_parts.push(scene_rows(&scene, taxonomy, &params)?.labelled());
    }
    let mut held_out = Vec::new();
    for scene in render_scenes(taxonomy, settings.held_out.clone(), &progress)? {
        let rows = scene_rows(&scene, taxonomy, &params)?;
        held_out.push((rows, scene.labels));
    }
    progress.finish_and_clear();

    let width = base_mlp.feature_count();
    let training_set = stack(training_parts, width)?;
    let validation_set = stack(validation_parts, width)?;
    let training_config = TrainingConfig {
        show_progress: settings.show_progress,
        ..settings.training.clone()
    };
    let training = train_from(
        &training_set,
        Some(&row_weights),
        &validation_set,
        class_count,
        &training_config,
        Some(&base_mlp),
    )?;
    let contract = ModelContract::for_network(taxonomy, &training.mlp, layout.version);
    let candidate_bytes = crate::unaries::onnx_writer::encode_model(&training.mlp, &contract)?;
    let candidate = Classifier::from_bytes(&candidate_bytes, "candidate", taxonomy, layout)?;

    let judging = bar(2, settings.show_progress, "judging models");
    let mut figures = Vec::new();
    for classifier in [&base, &candidate] {
        figures.push(ModelFigures {
            held_out: measure_set(classifier, &held_out, class_count)?,
            corrected: measure_corrected(classifier, &corrected_sets)?,
        });
        judging.inc(1);
    }
    judging.finish_and_clear();
    let comparison = Comparison {
        base: figures[0],
        candidate: figures[1],
    };
    let verdict = comparison.verdict();
    let data = DataSummary {
        corrections_directory: corrections.to_path_buf(),
        corrected_scenes: corrected_sets
            .iter()
            .map(|(scene, _)| {
                (
                    scene.name.clone(),
                    scene.corrections,
                    scene.changed_pixels(),
                )
            })
            .collect(),
        corrected_rows: corrected_row_count,
        emphasised_rows,
        replay: settings.replay.clone(),
        replay_rows,
        validation: settings.validation.clone(),
        validation_rows: validation_set.len(),
        held_out: settings.held_out.clone(),
        correction_weight: settings.correction_weight,
        emphasis: settings.emphasis,
    };
    Ok(FineTuneOutcome {
        candidate: training.mlp.clone(),
        candidate_bytes,
        training,
        data,
        comparison,
        verdict,
    })
}

/// The model card's section on a fine-tuning run: the data, and the figures before and after.
pub fn card_section(outcome: &FineTuneOutcome, base_origin: &str) -> String {
    use std::fmt::Write;
    let data = &outcome.data;
    let mut text = String::new();
    let _ = writeln!(text, "## Fine-tuning from the served model\n");
    let _ = writeln!(
        text,
        "Started from `{base_origin}` (its feature normalisation and layer shapes kept). Trained on:\n"
    );
    for (name, corrections, changed) in &data.corrected_scenes {
        let _ = writeln!(
            text,
            "- corrected scene `{name}`: {corrections} correction(s) kept, {changed} pixels changed"
        );
    }
    let _ = writeln!(
        text,
        "- {} rows from the corrected scenes (weight {}), of which {} segments the corrections changed (weight {} x {})",
        data.corrected_rows, data.correction_weight, data.emphasised_rows, data.correction_weight, data.emphasis
    );
    let _ = writeln!(
        text,
        "- {} rows from {} replay renders, seeds {}..{} (weight 1)",
        data.replay_rows,
        data.replay.end - data.replay.start,
        data.replay.start,
        data.replay.end
    );
    let _ = writeln!(
        text,
        "- validation (early stopping, temperature): {} rows of {} whole renders, seeds {}..{}, never trained on\n",
        data.validation_rows,
        data.validation.end - data.validation.start,
        data.validation.start,
        data.validation.end
    );
    let _ = writeln!(
        text,
        "Held-out renders: {} scenes, seeds {}..{} (a range kept for judging retrained models).\n",
        data.held_out.end - data.held_out.start,
        data.held_out.start,
        data.held_out.end
    );
    let _ = writeln!(
        text,
        "| figure | served model | candidate | change (points) |"
    );
    let _ = writeln!(text, "|---|---|---|---|");
    for row in outcome.comparison.rows() {
        let _ = writeln!(
            text,
            "| {} | {:.2} | {:.2} | {:+.2} |",
            row.name,
            100.0 * row.base,
            100.0 * row.candidate,
            row.gain_points()
        );
    }
    let _ = writeln!(
        text,
        "\nAccuracies and ECE in percent, mean IoU x 100; the corrected-scene figures are on images the candidate trained on (whether it learned the corrections), the held-out ones on renders it never saw.\n"
    );
    if outcome.verdict.accepted {
        let _ = writeln!(text, "Gate: taken.\n");
    } else {
        let _ = writeln!(text, "Gate: refused:\n");
        for reason in &outcome.verdict.reasons {
            let _ = writeln!(text, "- {reason}");
        }
        text.push('\n');
    }
    text
}
