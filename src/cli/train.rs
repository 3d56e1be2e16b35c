//! `sayso train`: trains the segment classifier and writes the ONNX file and its model card; with
//! `--corrections`, fine-tunes the served model instead and gates the candidate (`super::retrain`).
//!
//! Owns: the flags, reading the training data named on the command line, printing a summary.
//! Must not: implement training or ONNX writing; those are `sayso_perception::unaries::trainer` and `onnx_writer`.
//! Validation is split by whole scene for scene data (`split_by_scene`); a feature matrix carries no
//! scenes, so its rows are split.

use std::path::PathBuf;
use std::time::Instant;

use anyhow::{bail, Context};
use clap::{Args, ValueEnum};

use sayso_core::ids::ClassId;
use sayso_core::scene::SceneParams;
use sayso_core::taxonomy::Taxonomy;
use sayso_perception::unaries::builtin::{
    dataset_scene_rows, evaluate_on_dataset, DepthUse, IMAGE_ONLY_MODEL_CARD,
    IMAGE_ONLY_MODEL_FILE, MODEL_FILE,
};
use sayso_perception::unaries::contract::ModelContract;
use sayso_perception::unaries::dataset::read_feature_csv;
use sayso_perception::unaries::dataset::{list_dataset, DatasetEntry};
use sayso_perception::unaries::model_card::EvaluationFigures;
use sayso_perception::unaries::model_card::ModelCard;
use sayso_perception::unaries::onnx_writer::encode_model;
use sayso_perception::unaries::trainer::{
    split_by_scene, split_for_validation, train, LabelledFeatures, Regularisation, TrainingConfig,
    TrainingMode,
};
use sayso_perception::unaries::{current_feature_layout, Classifier};

/// The network shape.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ModeFlag {
    /// Multinomial logistic regression (no hidden layer).
    Softmax,
    /// A small multilayer perceptron (ReLU hidden layers).
    Mlp,
}

/// How the weight penalty is applied.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum PenaltyFlag {
    /// Decoupled weight decay (AdamW).
    Decoupled,
    /// An L2 term in the loss.
    L2,
}

#[derive(Debug, Args)]
pub struct TrainArgs {
    /// A dataset directory of scene subdirectories (image.png + labels.png each).
    #[arg(long, conflicts_with_all = ["feature_matrix", "corrections"])]
    pub data: Option<PathBuf>,
    /// Fine-tune the served model on corrections exported by `sayso export` (this directory), mixed with
    /// replay renders; the candidate replaces the served model only when the gate takes it.
    #[arg(long, conflicts_with_all = ["feature_matrix", "render"])]
    pub corrections: Option<PathBuf>,
    /// Render this many training scenes instead of reading --data.
    #[arg(long)]
    pub render: Option<u32>,
    /// First renderer seed for --render, and of the replay renders with --corrections (must be outside
    /// the demo scenes' seed range).
    #[arg(long, default_value_t = 100_000)]
    pub seed_base: u64,
    /// With --corrections: replay renders to train on (seeds from --seed-base, within 100000..100100).
    #[arg(long, default_value_t = 28)]
    pub replay: u32,
    /// With --corrections: whole renders for early stopping and the temperature (within 100100..100200).
    #[arg(long, default_value_t = 7)]
    pub validation_scenes: u32,
    #[arg(long, default_value_t = 100_100)]
    pub validation_seed: u64,
    /// With --corrections: held-out renders the gate judges on (within 500000..501000).
    #[arg(long, default_value_t = 21)]
    pub held_out: u32,
    #[arg(long, default_value_t = 500_000)]
    pub held_out_seed: u64,
    /// With --corrections: weight of a corrected scene's rows (a replay row weighs 1).
    #[arg(long, default_value_t = 4.0)]
    pub correction_weight: f32,
    /// With --corrections: further factor for the segments the corrections changed.
    #[arg(long, default_value_t = 8.0)]
    pub emphasis: f32,
    /// With --corrections: the model to start from (default: the served model, --serve).
    #[arg(long)]
    pub base: Option<PathBuf>,
    /// With --corrections: the served model file the gate replaces (default: $SAYSO_MODEL, else the
    /// built-in models/segment_classifier.onnx).
    #[arg(long)]
    pub serve: Option<PathBuf>,
    /// With --corrections: judge the candidate but never replace the served model.
    #[arg(long)]
    pub no_install: bool,
    /// An exported feature matrix (CSV: class index, then features) to train on directly.
    #[arg(long)]
    pub feature_matrix: Option<PathBuf>,
    /// Feature layout version to record for --feature-matrix data.
    #[arg(long, default_value_t = 0)]
    pub feature_layout_version: u32,
    /// A scene set (same layout as --data) to report pixel accuracy and IoU on, e.g. demo_scenes.
    #[arg(long)]
    pub evaluate: Option<PathBuf>,
    /// Output directory for segment_classifier.onnx and README.md (default: models; with --corrections,
    /// candidates/<model id>).
    #[arg(long)]
    pub out: Option<PathBuf>,
    #[arg(long, value_enum, default_value_t = ModeFlag::Mlp)]
    pub mode: ModeFlag,
    /// Hidden layer width(s) for --mode mlp; repeat for two layers.
    #[arg(long, default_values_t = [128])]
    pub hidden: Vec<usize>,
    /// At most this many epochs (default 200; 30 with --corrections).
    #[arg(long)]
    pub epochs: Option<usize>,
    #[arg(long, default_value_t = 128)]
    pub batch_size: usize,
    /// Default 3e-3; 1e-3 with --corrections.
    #[arg(long)]
    pub learning_rate: Option<f32>,
    /// Penalty strength lambda on weights.
    #[arg(long, default_value_t = 1e-4)]
    pub weight_decay: f32,
    #[arg(long, value_enum, default_value_t = PenaltyFlag::Decoupled)]
    pub penalty: PenaltyFlag,
    /// Epochs without validation improvement before stopping (default 20; 8 with --corrections).
    #[arg(long)]
    pub patience: Option<usize>,
    /// Fraction of scenes (of rows, for --feature-matrix) held out for early stopping and calibration.
    #[arg(long, default_value_t = 0.2)]
    pub validation_fraction: f64,
    /// Weight every class equally instead of every row (default true; false with --corrections, where
    /// the replay set is small and balanced weights would lift its rarest classes far above what the
    /// served model was trained with).
    #[arg(long, action = clap::ArgAction::Set)]
    pub class_balanced: Option<bool>,
    #[arg(long, default_value_t = 7)]
    pub seed: u64,
    /// Train the image-only classifier: every training and evaluation scene is read without its depth
    /// map; writes segment_classifier_rgb.onnx and its card segment_classifier_rgb.md.
    #[arg(long, conflicts_with_all = ["corrections", "feature_matrix"])]
    pub without_depth: bool,
}

impl TrainArgs {
    /// Whether scenes are read with their depth maps.
    pub fn depth_use(&self) -> DepthUse {
        if self.without_depth {
            DepthUse::WithoutDepth
        } else {
            DepthUse::IfPresent
        }
    }

    /// The penalty flag as the trainer's setting.
    pub fn regularisation(&self) -> Regularisation {
        match self.penalty {
            PenaltyFlag::Decoupled => Regularisation::DecoupledWeightDecay,
            PenaltyFlag::L2 => Regularisation::L2,
        }
    }
}

/// Training data: whole scenes (split by scene) or a feature matrix (split by row).
enum TrainingData {
    Scenes(Vec<LabelledFeatures>, Vec<DatasetEntry>),
    Matrix(LabelledFeatures),
}

pub fn run(args: TrainArgs) -> anyhow::Result<()> {
    if let Some(corrections) = &args.corrections {
        return super::retrain::run(&args, corrections);
    }
    let taxonomy = Taxonomy::embedded();
    let started = Instant::now();
    let out = args.out.clone().unwrap_or_else(|| PathBuf::from("models"));
    let (data, description, layout_version) = if let Some(path) = &args.feature_matrix {
        let (features, labels) = read_feature_csv(path)?;
        (
            TrainingData::Matrix(LabelledFeatures { features, labels }),
            format!("Exported feature matrix `{}`.", path.display()),
            args.feature_layout_version,
        )
    } else if let Some(directory) = &args.data {
        if directory.join("index.jsonl").is_file() {
            eprintln!(
                "sayso: {} holds exported corrections; training on them alone forgets the rest of the flat. \
                 `--corrections {}` fine-tunes the served model on them with replay renders and a gate.",
                directory.display(),
                directory.display()
            );
        }
        let entries = list_dataset(directory)?;
        let rows = dataset_scene_rows(
            &entries,
            &taxonomy,
            &SceneParams::default(),
            args.depth_use(),
            true,
        )?;
        (
            TrainingData::Scenes(rows, entries.clone()),
            format!(
                "{} scenes from `{}`; one row per segment (the scene defaults: SLIC aiming at `scene::SCENE_SEGMENTS` segments), labelled with the majority class of its pixels in labels.png{}.",
                entries.len(),
                directory.display(),
                if directory.join("index.jsonl").is_file() {
                    " (operator-corrected labels exported from the correction log)"
                } else {
                    " (ground truth)"
                }
            ),
            current_feature_layout().version,
        )
    } else if let Some(count) = args.render {
        let directory = render_training_scenes(count, args.seed_base)?;
        let entries = list_dataset(&directory)?;
        let rows = dataset_scene_rows(
            &entries,
            &taxonomy,
            &SceneParams::default(),
            args.depth_use(),
            true,
        );
        let _ = std::fs::remove_dir_all(&directory);
        (
            TrainingData::Scenes(rows?, entries),
            format!(
                "{count} scenes rendered with seeds {}..{} (room types in turn, as `sayso render --seed {} --count {count}`); one row per segment (the scene defaults: SLIC aiming at `scene::SCENE_SEGMENTS` segments), labelled with the majority ground-truth class of its pixels.",
                args.seed_base,
                args.seed_base + count as u64,
                args.seed_base
            ),
            current_feature_layout().version,
        )
    } else {
        bail!("give --data DIR, --render N or --feature-matrix FILE");
    };
    let description = if args.without_depth {
        format!("{description} Every depth map left out (`--without-depth`): the image-only classifier.")
    } else {
        description
    };
    if !(0.0..1.0).contains(&args.validation_fraction) || args.validation_fraction == 0.0 {
        bail!("--validation-fraction must be between 0 and 1");
    }
    let (training, validation, validation_description) = match &data {
        TrainingData::Matrix(rows) => {
            let (training, validation) =
                split_for_validation(rows, args.validation_fraction, args.seed);
            (
                training,
                validation,
                Some("a share of the matrix's rows (it names no scenes)".to_string()),
            )
        }
        TrainingData::Scenes(scenes, entries) => {
            let (training, validation, held) =
                split_by_scene(scenes, args.validation_fraction, args.seed)?;
            let names: Vec<&str> = held.iter().map(|&i| entries[i].name.as_str()).collect();
            (
                training,
                validation,
                Some(format!(
                    "{} whole scene(s), never trained on: {}",
                    held.len(),
                    names.join(", ")
                )),
            )
        }
    };
    let config = TrainingConfig {
        mode: match args.mode {
            ModeFlag::Softmax => TrainingMode::SoftmaxRegression,
            ModeFlag::Mlp => TrainingMode::Mlp {
                hidden: args.hidden.clone(),
            },
        },
        max_epochs: args.epochs.unwrap_or(200),
        batch_size: args.batch_size,
        learning_rate: args.learning_rate.unwrap_or(3e-3),
        weight_decay: args.weight_decay,
        regularisation: args.regularisation(),
        patience: args.patience.unwrap_or(20),
        class_balanced: args.class_balanced.unwrap_or(true),
        seed: args.seed,
        show_progress: true,
    };
    let outcome = train(&training, &validation, taxonomy.class_count(), &config)?;
    let contract = ModelContract::for_network(&taxonomy, &outcome.mlp, layout_version);
    let bytes = encode_model(&outcome.mlp, &contract)?;
    std::fs::create_dir_all(&out).with_context(|| format!("creating {}", out.display()))?;
    let model_path = out.join(if args.without_depth {
        IMAGE_ONLY_MODEL_FILE
    } else {
        MODEL_FILE
    });
    std::fs::write(&model_path, &bytes)
        .with_context(|| format!("writing {}", model_path.display()))?;
    // The card names the program plainly, whatever path it was started by.
    let command: Vec<String> = std::iter::once("sayso".to_string())
        .chain(std::env::args().skip(1))
        .collect();
    let mut card = ModelCard {
        command: command.join(" "),
        training_data: description,
        mode: match &config.mode {
            TrainingMode::SoftmaxRegression => "softmax regression".to_string(),
            TrainingMode::Mlp { hidden } => format!("MLP, hidden layers {hidden:?}"),
        },
        feature_layout_version: layout_version,
        feature_count: outcome.mlp.feature_count(),
        class_count: outcome.mlp.class_count(),
        parameter_count: outcome.mlp.parameter_count(),
        file_bytes: bytes.len(),
        training_rows: training.len(),
        validation_rows: validation.len(),
        epochs_run: outcome.epochs_run,
        best_epoch: outcome.best_epoch,
        training_seconds: started.elapsed().as_secs_f64(),
        training_accuracy: outcome.training_accuracy,
        validation_accuracy: outcome.validation_accuracy,
        calibration: outcome.calibration,
        evaluation: None,
        validation_description,
        appendix: None,
    };
    if let Some(directory) = &args.evaluate {
        let classifier = Classifier::from_bytes(
            &bytes,
            &model_path.display().to_string(),
            &taxonomy,
            current_feature_layout(),
        )?;
        let entries = list_dataset(directory)?;
        let matrix = evaluate_on_dataset(
            &entries,
            &classifier,
            &taxonomy,
            &SceneParams::default(),
            args.depth_use(),
        )?;
        card.evaluation = Some(EvaluationFigures {
            description: format!(
                "{} scenes of `{}` (pixel level{})",
                entries.len(),
                directory.display(),
                if args.without_depth {
                    ", depth maps left out"
                } else {
                    ""
                }
            ),
            pixel_accuracy: matrix.pixel_accuracy(),
            mean_iou: matrix.mean_iou(),
            per_class_iou: matrix
                .per_class_iou()
                .into_iter()
                .enumerate()
                .filter_map(|(class, iou)| {
                    iou.map(|iou| (taxonomy.class_name(ClassId(class as u16)).to_string(), iou))
                })
                .collect(),
        });
        println!(
            "evaluated on {}: pixel accuracy {:.2}%, mean IoU {:.3}",
            directory.display(),
            100.0 * matrix.pixel_accuracy(),
            matrix.mean_iou()
        );
    }
    let card_path = out.join(if args.without_depth {
        IMAGE_ONLY_MODEL_CARD
    } else {
        "README.md"
    });
    std::fs::write(&card_path, card.to_markdown())
        .with_context(|| format!("writing {}", card_path.display()))?;
    let c = outcome.calibration;
    println!(
        "wrote {} ({} bytes): validation accuracy {:.2}%, temperature {:.3}, ECE {:.4} -> {:.4}",
        model_path.display(),
        bytes.len(),
        100.0 * outcome.validation_accuracy,
        c.temperature,
        c.ece_before,
        c.ece_after
    );
    Ok(())
}

/// Renders `count` training scenes (room types in turn) with seeds from `seed_base` into a fresh
/// temporary directory; refuses seeds of the demo scenes, which are the evaluation set.
fn render_training_scenes(count: u32, seed_base: u64) -> anyhow::Result<PathBuf> {
    use sayso_render::catalogue::DEMO_SCENES;
    use sayso_render::writer::write_scene;
    use sayso_render::{render_scene, SceneRequest, ROOM_TYPES};
    if count == 0 {
        bail!("--render needs at least 1 scene");
    }
    let seeds = seed_base..seed_base.saturating_add(count as u64);
    if let Some(demo) = DEMO_SCENES.iter().find(|demo| seeds.contains(&demo.seed)) {
        bail!(
            "--seed-base {seed_base} with --render {count} would render demo scene {} (seed {}); the demo scenes are the evaluation set, pick seeds from 100000",
            demo.name,
            demo.seed
        );
    }
    let directory =
        std::env::temp_dir().join(format!("sayso-train-renders-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&directory);
    let taxonomy = Taxonomy::embedded();
    for (index, seed) in seeds.enumerate() {
        let room = ROOM_TYPES[index % ROOM_TYPES.len()];
        let request = SceneRequest::new(room, seed);
        let scene = render_scene(&taxonomy, &request)?;
        write_scene(&directory.join(&request.name), &scene)?;
    }
    Ok(directory)
}
