//! The flags that bring a robot's own perception to `fix` and `store`: per-pixel scores with their class
//! names, a label map with its own class list, a user ONNX model's config, detections in JSON Lines. Large
//! inputs go by file path. The formats are described in `docs/perception.md`.
//!
//! Owns: the flags, filling in what they leave out from a scene directory's perception files
//! (`sayso_core::scene::files`), and reading the files into `sayso_perception::unaries::perception::Perception` (for `fix`)
//! or into the parts of a registration (for `store`).
//! Must not: turn scores into unaries or check class names itself; the library does.

use std::path::{Path, PathBuf};
use std::sync::Arc;

use anyhow::Context;
use sayso_core::raster::{read_index_png, DEFAULT_PIXEL_LIMIT};
use sayso_core::scene::files::perception_files;
use sayso_core::taxonomy::Taxonomy;
use sayso_perception::unaries::byo::SynonymTable;
use sayso_perception::unaries::byo_detections::parse_detections;
use sayso_perception::unaries::byo_npy::{encode_npy_f32, read_npy};
use sayso_perception::unaries::byo_pixel_scores::{ScoreKind, ScoreLayout};
use sayso_perception::unaries::byo_user_model::UserModel;
use sayso_perception::unaries::perception::{
    read_class_list, LabelMap, Perception, PixelScores, ScoreSource,
};
use sayso_session::SceneUpload;
use sayso_wire::{DetectionIn, MaskRunsIn, PixelBox};

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
    /// These flags with the perception files of a scene directory (`sayso_core::scene::files`) filling in what
    /// no flag names: its scores (with their class list) or its label map (with its), unless a flag names a
    /// score source, and its detections unless `--detections` is given. A directory holding both scores and
    /// a label map is refused. Returns the names of the files taken, for the caller to say.
    pub fn with_scene_files(
        &self,
        directory: &Path,
    ) -> anyhow::Result<(PerceptionArgs, Vec<String>)> {
        let found = perception_files(directory);
        let mut args = self.clone();
        let mut taken = Vec::new();
        let mut take = |path: &Option<PathBuf>| {
            if let Some(path) = path {
                taken.push(
                    path.file_name()
                        .map_or(String::new(), |name| name.to_string_lossy().into_owned()),
                );
            }
            path.clone()
        };
        let flagged =
            self.scores.is_some() || self.label_map.is_some() || self.user_model.is_some();
        if !flagged {
            match (&found.scores, &found.label_map) {
                (Some(scores), Some(map)) => anyhow::bail!(
                    "{} holds both {} and {}: a scene takes one score source; remove one, or name one with \
                     --scores or --label-map",
                    directory.display(),
                    scores.display(),
                    map.display()
                ),
                (Some(_), None) => {
                    args.scores = take(&found.scores);
                    args.score_classes = take(&found.scores_classes);
                }
                (None, Some(_)) => {
                    args.label_map = take(&found.label_map);
                    args.label_classes = take(&found.label_map_classes);
                }
                (None, None) => {}
            }
        }
        if self.detections.is_none() {
            args.detections = take(&found.detections);
        }
        Ok((args, taken))
    }

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
    /// and its scores registered (with its class names), so the stored scene keeps them; detections are
    /// read here (masks by file name are relative to the detections file) and registered with their masks
    /// as run lengths.
    pub fn fill_upload(
        &self,
        upload: &mut SceneUpload,
        image: &Path,
        taxonomy: &Taxonomy,
    ) -> anyhow::Result<()> {
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
        let rgb = if self.user_model.is_some() || self.detections.is_some() {
            Some(sayso_core::raster::read_rgb_image(
                image,
                DEFAULT_PIXEL_LIMIT,
            )?)
        } else {
            None
        };
        if let (Some(path), Some(rgb)) = (&self.user_model, &rgb) {
            let model = UserModel::load(path)
                .with_context(|| format!("loading the user model {}", path.display()))?;
            let scores = model.scores_for_image(rgb)?;
            let shape = scores.shape().to_vec();
            let values: Vec<f32> = scores.iter().map(|&value| value as f32).collect();
            upload.scores_npy = Some(encode_npy_f32(&shape, &values));
            upload.scores_classes = Some(model.config().classes.clone());
            upload.scores_kind = Some(model.config().output);
        }
        if let (Some(path), Some(rgb)) = (&self.detections, &rgb) {
            let base = path.parent().unwrap_or(Path::new("."));
            let parsed = parse_detections(
                &read_text(path)?,
                Some(base),
                rgb.width,
                rgb.height,
                taxonomy,
                &SynonymTable::embedded(taxonomy),
            )
            .with_context(|| format!("reading {}", path.display()))?;
            upload
                .detections
                .extend(parsed.into_iter().map(|detection| DetectionIn {
                    class: taxonomy.class_name(detection.class).to_string(),
                    bbox: PixelBox {
                        x0: detection.bbox.x0,
                        y0: detection.bbox.y0,
                        x1: detection.bbox.x1,
                        y1: detection.bbox.y1,
                    },
                    score: detection.score,
                    mask_runs: detection.mask.map(|mask| {
                        let runs = mask.runs();
                        MaskRunsIn {
                            width: runs.width,
                            height: runs.height,
                            runs: runs.runs,
                        }
                    }),
                }));
        }
        upload.drop_unknown_classes = self.drop_unknown_classes;
        Ok(())
    }
}
