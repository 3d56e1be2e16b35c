//! A user-supplied per-pixel ONNX segmentation model, described by a small TOML config, run with tract on
//! the CPU and pooled to segment unaries like any other per-pixel scores.
//!
//! Owns: `UserModelConfig` (the TOML file), `UserModel` (loading, preprocessing, running), and
//! `UserModel::unaries`. Preprocessing: the image is resized to the declared input size by nearest
//! neighbour, scaled to [0, 1], normalised per channel as `(value - mean) / std`, and laid out as NCHW or
//! NHWC with a batch of one. The output must be `1 x C x h x w` (NCHW) or `1 x h x w x C` (NHWC) with `C`
//! the number of declared classes; it is resized back to the image by nearest neighbour.
//! Must not: guess shapes: a mismatch is an error, never a silent reshape.
//!
//! Config example:
//! ```toml
//! model = "pixel_model.onnx"   # relative to the config file
//! input_width = 64
//! input_height = 48
//! layout = "nchw"              # or "nhwc"
//! mean = [0.5, 0.5, 0.5]
//! std = [0.25, 0.25, 0.25]
//! output = "logits"            # or "probabilities", "log_probabilities"
//! classes = ["floor", "wall", "couch"]
//! ```

use std::path::{Path, PathBuf};
use std::sync::Arc;

use ndarray::{Array3, ArrayD, IxDyn};
use serde::Deserialize;
use tract_onnx::prelude::*;
use tract_onnx::tract_hir::internal::DimLike;

use super::byo::{PerceptionError, SynonymTable};
use super::byo_pixel_scores::{
    unaries_from_pixel_scores, PixelScoreOptions, ScoreKind, ScoreLayout,
};
use super::pooling::PoolingRule;
use super::{Unaries, UnarySource};
use crate::raster::RgbImage;
use crate::scene::SegmentMap;
use crate::taxonomy::Taxonomy;

/// The largest model config file read, in bytes.
const CONFIG_BYTES_LIMIT: u64 = 1024 * 1024;

/// Tensor layout of the model's input and output.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum TensorLayout {
    Nchw,
    Nhwc,
}

/// The user model's TOML description.
#[derive(Clone, Debug, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UserModelConfig {
    pub model: PathBuf,
    pub input_width: u32,
    pub input_height: u32,
    pub layout: TensorLayout,
    pub mean: [f32; 3],
    pub std: [f32; 3],
    pub output: ScoreKind,
    pub classes: Vec<String>,
    #[serde(default)]
    pub allow_unknown_classes: bool,
}

/// A loaded user model.
#[derive(Clone)]
pub struct UserModel {
    config: UserModelConfig,
    plan: Arc<TypedRunnableModel>,
    origin: String,
}

impl std::fmt::Debug for UserModel {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("UserModel")
            .field("config", &self.config)
            .finish()
    }
}

impl UserModel {
    /// Reads the TOML config and the model it names, checking the config's numbers.
    pub fn load(config_path: &Path) -> Result<UserModel, PerceptionError> {
        let origin = config_path.display().to_string();
        let io_error = |message: String| PerceptionError::Io {
            path: config_path.to_path_buf(),
            message,
        };
        let bytes = super::model_file::read_model_bytes(config_path, CONFIG_BYTES_LIMIT)
            .map_err(|error| io_error(error.to_string()))?;
        let text = String::from_utf8(bytes).map_err(|error| {
            io_error(format!(
                "not UTF-8 text (the first bad byte is at offset {})",
                error.utf8_error().valid_up_to()
            ))
        })?;
        let config: UserModelConfig =
            toml::from_str(&text).map_err(|error| PerceptionError::Config {
                origin: origin.clone(),
                message: error.to_string(),
            })?;
        let model_path = config_path
            .parent()
            .unwrap_or(Path::new("."))
            .join(&config.model);
        let bytes =
            super::model_file::read_model_bytes(&model_path, super::model_file::MODEL_BYTES_LIMIT)
                .map_err(|error| PerceptionError::Io {
                    path: model_path.clone(),
                    message: error.to_string(),
                })?;
        UserModel::from_parts(config, &bytes, &origin)
    }

    /// Builds a user model from a parsed config and the ONNX bytes.
    pub fn from_parts(
        config: UserModelConfig,
        model_bytes: &[u8],
        origin: &str,
    ) -> Result<UserModel, PerceptionError> {
        let bad_config = |message: String| PerceptionError::Config {
            origin: origin.to_string(),
            message,
        };
        if config.input_width == 0
            || config.input_height == 0
            || config.input_width > 8192
            || config.input_height > 8192
        {
            return Err(bad_config(
                "input_width and input_height must be between 1 and 8192".to_string(),
            ));
        }
        if config.std.iter().any(|&s| !(s.is_finite() && s > 0.0))
            || config.mean.iter().any(|m| !m.is_finite())
        {
            return Err(bad_config(
                "mean must be finite and std positive".to_string(),
            ));
        }
        if config.classes.is_empty() {
            return Err(PerceptionError::NoClasses);
        }
        let model_error = |error: TractError| PerceptionError::Model {
            message: format!("{origin}: {error:#}"),
        };
        let (h, w) = (config.input_height as usize, config.input_width as usize);
        let shape = match config.layout {
            TensorLayout::Nchw => [1, 3, h, w],
            TensorLayout::Nhwc => [1, h, w, 3],
        };
        // The inference library panics on some malformed graphs; a panic here is the model's fault.
        let model = super::model_file::guard_library(|| {
            let mut reader = model_bytes;
            tract_onnx::onnx()
                .model_for_read(&mut reader)?
                .with_input_fact(0, f32::fact(shape).into())?
                .into_optimized()
        })
        .map_err(|message| PerceptionError::Model {
            message: format!("{origin}: {message}"),
        })?
        .map_err(model_error)?;
        let output = model.output_fact(0).map_err(model_error)?.clone();
        let dims: Option<Vec<usize>> = output.shape.iter().map(|d| d.to_usize().ok()).collect();
        let class_count = config.classes.len();
        let fits = match (&dims, config.layout) {
            (Some(d), TensorLayout::Nchw) => d.len() == 4 && d[0] == 1 && d[1] == class_count,
            (Some(d), TensorLayout::Nhwc) => d.len() == 4 && d[0] == 1 && d[3] == class_count,
            _ => false,
        };
        if !fits {
            return Err(PerceptionError::Shape {
                found: dims.unwrap_or_default(),
                expected: format!(
                    "a 1 x {class_count} x h x w (NCHW) or 1 x h x w x {class_count} (NHWC) output"
                ),
            });
        }
        let plan = super::model_file::guard_library(|| model.into_runnable())
            .map_err(|message| PerceptionError::Model {
                message: format!("{origin}: {message}"),
            })?
            .map_err(model_error)?;
        Ok(UserModel {
            config,
            plan,
            origin: origin.to_string(),
        })
    }

    /// The config the model was loaded with.
    pub fn config(&self) -> &UserModelConfig {
        &self.config
    }

    /// The input tensor for an image: resized, scaled to [0, 1], normalised, batch of one.
    pub fn preprocess(&self, image: &RgbImage) -> ArrayD<f32> {
        let (w, h) = (
            self.config.input_width as usize,
            self.config.input_height as usize,
        );
        let shape = match self.config.layout {
            TensorLayout::Nchw => vec![1, 3, h, w],
            TensorLayout::Nhwc => vec![1, h, w, 3],
        };
        let mut tensor = ArrayD::<f32>::zeros(IxDyn(&shape));
        if image.width == 0 || image.height == 0 {
            return tensor;
        }
        for y in 0..h {
            let source_y = nearest(y, h, image.height as usize);
            for x in 0..w {
                let source_x = nearest(x, w, image.width as usize);
                let pixel = image.pixels[source_y * image.width as usize + source_x];
                for (channel, &sample) in pixel.iter().enumerate() {
                    let value = (sample as f32 / 255.0 - self.config.mean[channel])
                        / self.config.std[channel];
                    let index = match self.config.layout {
                        TensorLayout::Nchw => [0, channel, y, x],
                        TensorLayout::Nhwc => [0, y, x, channel],
                    };
                    tensor[&index[..]] = value;
                }
            }
        }
        tensor
    }

    /// Runs the model on a prepared input tensor and returns its raw output.
    pub fn run_tensor(&self, input: ArrayD<f32>) -> Result<ArrayD<f32>, PerceptionError> {
        let model_error = |error: TractError| PerceptionError::Model {
            message: format!("{}: {error:#}", self.origin),
        };
        let outputs = self
            .plan
            .run(tvec!(Tensor::from(input).into()))
            .map_err(model_error)?;
        let output = outputs.first().ok_or_else(|| PerceptionError::Model {
            message: format!("{}: no output", self.origin),
        })?;
        Ok(output
            .to_plain_array_view::<f32>()
            .map_err(model_error)?
            .to_owned())
    }

    /// Per-pixel scores at the image's size, `C x H x W`.
    pub fn scores_for_image(&self, image: &RgbImage) -> Result<Array3<f64>, PerceptionError> {
        let output = self.run_tensor(self.preprocess(image))?;
        let shape = output.shape().to_vec();
        let class_count = self.config.classes.len();
        let (out_h, out_w) = match self.config.layout {
            TensorLayout::Nchw => (shape[2], shape[3]),
            TensorLayout::Nhwc => (shape[1], shape[2]),
        };
        let (width, height) = (image.width as usize, image.height as usize);
        let mut scores = Array3::<f64>::zeros((class_count, height, width));
        if out_h == 0 || out_w == 0 {
            return Err(PerceptionError::Shape {
                found: shape,
                expected: "a non-empty output".to_string(),
            });
        }
        for y in 0..height {
            let source_y = nearest(y, height, out_h);
            for x in 0..width {
                let source_x = nearest(x, width, out_w);
                for class in 0..class_count {
                    let index = match self.config.layout {
                        TensorLayout::Nchw => [0, class, source_y, source_x],
                        TensorLayout::Nhwc => [0, source_y, source_x, class],
                    };
                    scores[[class, y, x]] = output[&index[..]] as f64;
                }
            }
        }
        Ok(scores)
    }

    /// Runs the model on a scene image and pools its per-pixel scores into segment unaries.
    pub fn unaries(
        &self,
        image: &RgbImage,
        segments: &SegmentMap,
        taxonomy: &Taxonomy,
        synonyms: &SynonymTable,
        pooling: PoolingRule,
    ) -> Result<Unaries, PerceptionError> {
        let scores = self.scores_for_image(image)?;
        let options = PixelScoreOptions {
            class_names: self.config.classes.clone(),
            kind: self.config.output,
            layout: ScoreLayout::ChannelsHeightWidth,
            pooling,
            allow_unknown_classes: self.config.allow_unknown_classes,
        };
        unaries_from_pixel_scores(
            scores.view().into_dyn(),
            segments,
            &options,
            taxonomy,
            synonyms,
            UnarySource::UserModel {
                model: self.origin.clone(),
            },
        )
    }
}

/// The source index for target index `index` when resizing `target` samples from `source` samples.
fn nearest(index: usize, target: usize, source: usize) -> usize {
    (((index as f64 + 0.5) * source as f64 / target as f64) as usize).min(source.saturating_sub(1))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::unaries::contract::ModelContract;
    use crate::unaries::mlp::seeded_random_mlp;
    use crate::unaries::onnx_writer::build_model_proto;
    use prost::Message;

    fn config(model: &str) -> UserModelConfig {
        toml::from_str(&format!(
            "model = {model:?}\ninput_width = 4\ninput_height = 4\nlayout = \"nchw\"\n\
             mean = [0.5, 0.5, 0.5]\nstd = [0.25, 0.25, 0.25]\noutput = \"logits\"\n\
             classes = [\"floor\", \"wall\"]\n"
        ))
        .unwrap()
    }

    #[test]
    fn a_model_whose_declared_output_no_node_makes_is_an_error_not_a_panic() {
        let mlp = seeded_random_mlp(5, &[5, 2]);
        let contract = ModelContract::with_classes(vec!["floor".into(), "wall".into()], &mlp, 3);
        let mut proto = build_model_proto(&mlp, &contract).unwrap();
        proto.graph.as_mut().unwrap().output[0].name = "made_by_no_node".into();
        let error = UserModel::from_parts(config("x.onnx"), &proto.encode_to_vec(), "broken.toml")
            .unwrap_err();
        assert!(matches!(error, PerceptionError::Model { .. }), "{error}");
        assert!(error.to_string().contains("broken.toml"), "{error}");
    }

    #[cfg(unix)]
    #[test]
    fn a_device_as_the_model_or_the_config_is_refused() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("model.toml");
        std::fs::write(
            &path,
            "model = \"/dev/zero\"\ninput_width = 4\ninput_height = 4\nlayout = \"nchw\"\n\
             mean = [0.5, 0.5, 0.5]\nstd = [0.25, 0.25, 0.25]\noutput = \"logits\"\n\
             classes = [\"floor\"]\n",
        )
        .unwrap();
        let error = UserModel::load(&path).unwrap_err().to_string();
        assert!(
            error.contains("/dev/zero") && error.contains("not a regular file"),
            "{error}"
        );
        let error = UserModel::load(Path::new("/dev/zero"))
            .unwrap_err()
            .to_string();
        assert!(error.contains("not a regular file"), "{error}");
    }
}
