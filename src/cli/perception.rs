//! The flags that bring a robot's own perception to `fix` and `store`: per-pixel scores with their class
//! names, a label map with its own class list, a user ONNX model's config, detections in JSON Lines. Large
//! inputs go by file path. The formats are described in `docs/perception.md`.
//!
//! Owns: the flags and reading the files they name into `sayso::unaries::perception::Perception` (for
//! `fix`) or into the parts of a registration (for `store`).
//! Must not: turn scores into unaries or check class names itself; the library does.

use std::path::{Path, PathBuf};
use std::sync::Arc;

use anyhow::Context;
use sayso::raster::{read_index_png, DEFAULT_PIXEL_LIMIT};
use sayso::session::SceneUpload;
use sayso::taxonomy::Taxonomy;
use sayso::unaries::byo::SynonymTable;
use sayso::unaries::byo_detections::parse_detections;
use sayso::unaries::byo_npy::{encode_npy_f32, read_npy};
use sayso::unaries::byo_pixel_scores::{ScoreKind, ScoreLayout};
use sayso::unaries::byo_user_model::UserModel;
use sayso::unaries::perception::{read_class_list, LabelMap, Perception, PixelScores, ScoreSource};

/// How the numbers of a scores file are to be read.
#[derive(Clone, Copy, Debug, clap::ValueEnum)]
pub enum KindArg {
    Logits,
    Probabilities,
    LogProbabilities,
}

/// The robot's own perception of the scene (see docs/perception.md); at most one of --scores,
/// --label-map and --user-model.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct PerceptionArgs {
    /// The robot's per-pixel class scores: an NPY array (float32 or float64), height x width x classes or
    /// classes x height x width.
    #[arg(long, value_name = "FILE.npy", conflicts_with_all = ["label_map", "user_model"])]
    pub scores: Option<PathBuf>,
    /// The class names of the --scores channels, one per line (default: the taxonomy's classes in the
    /// order `sayso classes` prints them).
    #[arg(long, value_name = "FILE", requires = "scores")]
    pub score_classes: Option<PathBuf>,
    /// How to read --scores [default: probabilities when every pixel's scores sum to 1, else logits].
    #[arg(long, value_enum, requires = "scores")]
    pub score_kind: Option<KindArg>,
    /// The robot's label map: an index PNG, pixel value = class, 255 = unlabelled.
    #[arg(long, value_name = "FILE.png", conflicts_with = "user_model")]
    pub label_map: Option<PathBuf>,
    /// The class names of the --label-map values, one per line: value k is the k-th name (default: the
    /// values are taxonomy class ids).
    #[arg(long, value_name = "FILE", requires = "label_map")]
    pub label_classes: Option<PathBuf>,
    /// A user per-pixel ONNX model's TOML config file (the model path in it is relative to the file).
    #[arg(long, value_name = "CONFIG.toml")]
    pub user_model: Option<PathBuf>,
    /// The robot's detections: JSON Lines, one {"class": .., "box": [x0, y0, x1, y1], "score": ..} per
    /// line, optionally with "mask_png" or "mask_runs".
    #[arg(long, value_name = "FILE.jsonl")]
    pub detections: Option<PathBuf>,
    /// Leave out classes whose names are unknown (they are listed) instead of refusing the input.
    #[arg(long)]
    pub drop_unknown_classes: bool,
}

fn read_text(path: &Path) -> anyhow::Result<String> {
    std::fs::read_to_string(path).with_context(|| format!("reading {}", path.display()))
}

fn class_list(path: &Option<PathBuf>) -> anyhow::Result<Option<Vec<String>>> {
    path.as_ref()
        .map(|path| {
            read_class_list(&read_text(path)?)
                .with_context(|| format!("reading the class list {}", path.display()))
        })
        .transpose()
}

impl PerceptionArgs {
    fn kind(&self) -> Option<ScoreKind> {
        self.score_kind.map(|kind| match kind {
            KindArg::Logits => ScoreKind::Logits,
            KindArg::Probabilities => ScoreKind::Probabilities,
            KindArg::LogProbabilities => ScoreKind::LogProbabilities,
        })
    }

    /// Reads the named files into a perception of a `width x height` image.
    pub fn perception(
        &self,
        width: u32,
        height: u32,
        taxonomy: &Taxonomy,
    ) -> anyhow::Result<Perception> {
        let scores = if let Some(path) = &self.scores {
            let array = read_npy(path).with_context(|| format!("reading {}", path.display()))?;
            ScoreSource::PixelScores(PixelScores {
                values: array.values,
                class_names: class_list(&self.score_classes)?,
                kind: self.kind(),
                layout: ScoreLayout::Infer,
                origin: path.display().to_string(),
            })
        } else if let Some(path) = &self.label_map {
            ScoreSource::LabelMap(LabelMap {
                labels: read_index_png(path, DEFAULT_PIXEL_LIMIT)?,
                class_names: class_list(&self.label_classes)?,
                origin: path.display().to_string(),
            })
        } else if let Some(path) = &self.user_model {
            ScoreSource::UserModel(Arc::new(
                UserModel::load(path)
                    .with_context(|| format!("loading the user model {}", path.display()))?,
            ))
        } else {
            ScoreSource::BuiltIn
        };
        let detections = match &self.detections {
            Some(path) => {
                let base = path.parent().unwrap_or(Path::new("."));
                parse_detections(
                    &read_text(path)?,
                    Some(base),
                    width,
                    height,
                    taxonomy,
                    &SynonymTable::embedded(taxonomy),
                )
                .with_context(|| format!("reading {}", path.display()))?
            }
            None => Vec::new(),
        };
        Ok(Perception {
            scores,
            detections,
            drop_unknown_classes: self.drop_unknown_classes,
        })
    }

    /// Puts the named files into a registration, as an upload would carry them. A user model is run here
    /// and its scores registered (with its class names), so the stored scene keeps them.
    pub fn fill_upload(&self, upload: &mut SceneUpload, image: &Path) -> anyhow::Result<()> {
        let read = |path: &Path| {
            std::fs::read(path).with_context(|| format!("reading {}", path.display()))
        };
        if let Some(path) = &self.scores {
            upload.scores_npy = Some(read(path)?);
            upload.scores_classes = class_list(&self.score_classes)?;
        }
        if let Some(path) = &self.label_map {
            upload.label_map_png = Some(read(path)?);
            upload.label_map_classes = class_list(&self.label_classes)?;
        }
        if let Some(path) = &self.user_model {
            let model = UserModel::load(path)
                .with_context(|| format!("loading the user model {}", path.display()))?;
            let rgb = sayso::raster::read_rgb_image(image, DEFAULT_PIXEL_LIMIT)?;
            let scores = model.scores_for_image(&rgb)?;
            let shape = scores.shape().to_vec();
            let values: Vec<f32> = scores.iter().map(|&value| value as f32).collect();
            upload.scores_npy = Some(encode_npy_f32(&shape, &values));
            upload.scores_classes = Some(model.config().classes.clone());
            upload.scores_kind = Some(model.config().output);
        }
        if let Some(path) = &self.detections {
            upload.detections_jsonl = Some(read_text(path)?);
        }
        upload.drop_unknown_classes = self.drop_unknown_classes;
        Ok(())
    }
}
