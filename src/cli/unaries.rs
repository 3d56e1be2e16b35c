//! `sayso unaries`: turns bring-your-own perception (NPY scores, a user ONNX model, a label map) into
//! per-segment unaries for a segment map, and writes them as JSON.
//!
//! Owns: the flags, reading the files they name, writing the result.
//! Must not: pool or validate scores itself; `sayso_perception::unaries::byo_*` does that.

use std::path::PathBuf;

use anyhow::{bail, Context};
use clap::{Args, ValueEnum};

use sayso_core::raster::{read_index_png, read_rgb_png, DEFAULT_PIXEL_LIMIT};
use sayso_core::scene::SegmentMap;
use sayso_core::taxonomy::Taxonomy;
use sayso_perception::unaries::byo::SynonymTable;
use sayso_perception::unaries::byo_label_map::{unaries_from_label_map, ConfidenceMap};
use sayso_perception::unaries::byo_npy::read_npy;
use sayso_perception::unaries::byo_pixel_scores::{
    unaries_from_pixel_scores, PixelScoreOptions, ScoreKind, ScoreLayout,
};
use sayso_perception::unaries::byo_user_model::UserModel;
use sayso_perception::unaries::pooling::PoolingRule;
use sayso_perception::unaries::UnarySource;

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum LayoutFlag {
    /// Height x width x classes.
    Hwc,
    /// Classes x height x width.
    Chw,
    /// Decide from the shape (refused when ambiguous).
    Infer,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum KindFlag {
    Logits,
    Probabilities,
    LogProbabilities,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum PoolingFlag {
    MeanProbability,
    MeanLogProbability,
}

#[derive(Debug, Args)]
pub struct UnariesArgs {
    /// The segment map: an index PNG whose pixel values are segment ids 0..n.
    #[arg(long)]
    pub segments: PathBuf,
    /// Per-pixel scores as an NPY array (float32 or float64).
    #[arg(long, group = "source")]
    pub npy: Option<PathBuf>,
    /// Class names of the NPY channels, comma-separated, in channel order.
    #[arg(long, value_delimiter = ',')]
    pub class_names: Vec<String>,
    #[arg(long, value_enum, default_value_t = LayoutFlag::Infer)]
    pub layout: LayoutFlag,
    #[arg(long, value_enum, default_value_t = KindFlag::Logits)]
    pub kind: KindFlag,
    /// A user per-pixel ONNX model's TOML config; needs --image.
    #[arg(long, group = "source")]
    pub user_model: Option<PathBuf>,
    /// The scene image for --user-model.
    #[arg(long)]
    pub image: Option<PathBuf>,
    /// A label map (index PNG of class ids, 255 = unlabelled).
    #[arg(long, group = "source")]
    pub label_map: Option<PathBuf>,
    /// Per-pixel confidence for --label-map (8- or 16-bit greyscale PNG).
    #[arg(long)]
    pub confidence: Option<PathBuf>,
    #[arg(long, value_enum, default_value_t = PoolingFlag::MeanProbability)]
    pub pooling: PoolingFlag,
    /// Leave out channels whose names are unknown instead of failing.
    #[arg(long)]
    pub drop_unknown_classes: bool,
    /// Where to write the unaries JSON (standard output when absent).
    #[arg(long)]
    pub out: Option<PathBuf>,
}

pub fn run(args: UnariesArgs) -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let synonyms = SynonymTable::embedded(&taxonomy);
    let segment_image = read_index_png(&args.segments, DEFAULT_PIXEL_LIMIT)?;
    let segment_count = segment_image
        .values
        .iter()
        .copied()
        .max()
        .map_or(0, |m| m as u32 + 1);
    let segments = SegmentMap {
        width: segment_image.width,
        height: segment_image.height,
        labels: segment_image.values.iter().map(|&v| v as u32).collect(),
        segment_count,
    };
    let pooling = match args.pooling {
        PoolingFlag::MeanProbability => PoolingRule::MeanProbability,
        PoolingFlag::MeanLogProbability => PoolingRule::MeanLogProbability,
    };
    let unaries = if let Some(path) = &args.npy {
        if args.class_names.is_empty() {
            bail!("--npy needs --class-names");
        }
        let array = read_npy(path).with_context(|| format!("reading {}", path.display()))?;
        let options = PixelScoreOptions {
            class_names: args.class_names.clone(),
            kind: match args.kind {
                KindFlag::Logits => ScoreKind::Logits,
                KindFlag::Probabilities => ScoreKind::Probabilities,
                KindFlag::LogProbabilities => ScoreKind::LogProbabilities,
            },
            layout: match args.layout {
                LayoutFlag::Hwc => ScoreLayout::HeightWidthChannels,
                LayoutFlag::Chw => ScoreLayout::ChannelsHeightWidth,
                LayoutFlag::Infer => ScoreLayout::Infer,
            },
            pooling,
            allow_unknown_classes: args.drop_unknown_classes,
        };
        let source = UnarySource::PixelScores {
            file: path.display().to_string(),
        };
        unaries_from_pixel_scores(
            array.values.view(),
            &segments,
            &options,
            &taxonomy,
            &synonyms,
            source,
        )?
    } else if let Some(config) = &args.user_model {
        let image_path = args.image.as_ref().context("--user-model needs --image")?;
        let image = read_rgb_png(image_path, DEFAULT_PIXEL_LIMIT)?;
        let model = UserModel::load(config)?;
        model.unaries(&image, &segments, &taxonomy, &synonyms, pooling)?
    } else if let Some(path) = &args.label_map {
        let labels = read_index_png(path, DEFAULT_PIXEL_LIMIT)?;
        let confidence = match &args.confidence {
            Some(path) => {
                let image = read_index_png(path, DEFAULT_PIXEL_LIMIT)?;
                let scale = if image.values.iter().any(|&v| v > 255) {
                    65535.0
                } else {
                    255.0
                };
                Some(ConfidenceMap { image, scale })
            }
            None => None,
        };
        let source = UnarySource::LabelMap {
            file: path.display().to_string(),
        };
        unaries_from_label_map(
            &labels,
            confidence.as_ref(),
            &segments,
            taxonomy.class_count(),
            pooling,
            source,
        )?
    } else {
        bail!("give one source: --npy, --user-model or --label-map");
    };
    let json = serde_json::to_string(&unaries)?;
    match &args.out {
        Some(path) => {
            std::fs::write(path, json).with_context(|| format!("writing {}", path.display()))?
        }
        None => println!("{json}"),
    }
    Ok(())
}
