//! The built-in segment classifier at run time: loads a sayso ONNX file with tract (CPU), checks its
//! contract, and turns a feature matrix into calibrated per-segment log-probabilities.
//!
//! Owns: `Classifier`, `ClassifierError`, input and output validation around the tract plan, and a model's
//! id (`model_id`: the first 12 hex digits of the SHA-256 of its file, what the correction log records).
//! Must not: compute features or pool pixels; it takes a plain `segments x features` matrix.

use std::path::{Path, PathBuf};
use std::sync::Arc;

use ndarray::{Array2, ArrayView2, Ix2};
use prost::Message;
use tract_onnx::pb;
use tract_onnx::prelude::*;
use tract_onnx::tract_hir::internal::DimLike;

use super::contract::{ContractError, FeatureLayout, ModelContract};
use crate::taxonomy::Taxonomy;

type Plan = Arc<TypedRunnableModel>;

/// Why a classifier could not be loaded or run.
#[derive(Debug, thiserror::Error)]
pub enum ClassifierError {
    #[error("cannot read model file {path}: {source}")]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("{origin} is not a readable ONNX model: {message}")]
    Corrupt { origin: String, message: String },
    #[error("{origin} breaks the sayso model contract: {source}")]
    Contract {
        origin: String,
        source: ContractError,
    },
    #[error("{origin} could not be prepared for the CPU: {message}")]
    Unsupported { origin: String, message: String },
    #[error("{origin} outputs {found} columns but lists {expected} classes")]
    OutputWidth {
        origin: String,
        found: String,
        expected: usize,
    },
    #[error(
        "{origin} takes {found} features per segment but lists {expected} normalisation values"
    )]
    InputWidth {
        origin: String,
        found: String,
        expected: usize,
    },
    #[error("feature matrix has {found} columns, the model takes {expected}")]
    FeatureWidth { found: usize, expected: usize },
    #[error("feature {feature} of segment {segment} is {value}; features must be finite")]
    NonFiniteFeature {
        segment: usize,
        feature: usize,
        value: f32,
    },
    #[error("the model produced a non-finite score for segment {segment}")]
    NonFiniteOutput { segment: usize },
    #[error("running the model failed: {message}")]
    Run { message: String },
}

/// A model file's id: the first 12 lower-case hex digits of the SHA-256 of its bytes.
pub fn model_id(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes)
        .iter()
        .take(6)
        .map(|byte| format!("{byte:02x}"))
        .collect()
}

/// A loaded, checked segment classifier.
#[derive(Clone)]
pub struct Classifier {
    plan: Plan,
    contract: ModelContract,
    origin: String,
    id: String,
    /// The image-only companion that scores scenes without depth in this model's place
    /// (`builtin::classifier_for`); only the built-in model has one (`pipeline::load_classifier`).
    image_only: Option<Arc<Classifier>>,
}

impl std::fmt::Debug for Classifier {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Classifier")
            .field("origin", &self.origin)
            .field("id", &self.id)
            .field(
                "image_only",
                &self.image_only.as_ref().map(|c| c.id.clone()),
            )
            .field("contract", &self.contract)
            .finish()
    }
}

fn concrete_last_dimension(fact: &TypedFact) -> Option<usize> {
    fact.shape.iter().last().and_then(|dim| dim.to_usize().ok())
}

impl Classifier {
    /// Loads a model file and checks it against the taxonomy and the feature layout.
    pub fn load(
        path: &Path,
        taxonomy: &Taxonomy,
        layout: FeatureLayout,
    ) -> Result<Classifier, ClassifierError> {
        let bytes = super::model_file::read_model_bytes(path, super::model_file::MODEL_BYTES_LIMIT)
            .map_err(|source| ClassifierError::Io {
                path: path.to_path_buf(),
                source,
            })?;
        Classifier::from_bytes(&bytes, &path.display().to_string(), taxonomy, layout)
    }

    /// Loads a model from bytes; `origin` names it in errors.
    pub fn from_bytes(
        bytes: &[u8],
        origin: &str,
        taxonomy: &Taxonomy,
        layout: FeatureLayout,
    ) -> Result<Classifier, ClassifierError> {
        let origin = origin.to_string();
        let proto = pb::ModelProto::decode(bytes).map_err(|error| ClassifierError::Corrupt {
            origin: origin.clone(),
            message: error.to_string(),
        })?;
        if proto.graph.is_none() {
            return Err(ClassifierError::Corrupt {
                origin,
                message: "the file holds no graph".to_string(),
            });
        }
        let contract = ModelContract::from_metadata(
            proto
                .metadata_props
                .iter()
                .map(|entry| (entry.key.as_str(), entry.value.as_str())),
        )
        .and_then(|contract| contract.check_against(taxonomy, layout).map(|_| contract))
        .map_err(|source| ClassifierError::Contract {
            origin: origin.clone(),
            source,
        })?;
        let unsupported = |error: TractError| ClassifierError::Unsupported {
            origin: origin.clone(),
            message: format!("{error:#}"),
        };
        // The inference library panics on some malformed graphs; a panic here is the model's fault.
        let model = super::model_file::guard_library(|| {
            tract_onnx::onnx()
                .model_for_proto_model(&proto)?
                .into_optimized()
        })
        .map_err(|message| ClassifierError::Unsupported {
            origin: origin.clone(),
            message,
        })?
        .map_err(unsupported)?;
        let output = model.output_fact(0).map_err(unsupported)?.clone();
        if output.rank() != 2
            || concrete_last_dimension(&output) != Some(contract.class_names.len())
        {
            return Err(ClassifierError::OutputWidth {
                origin,
                found: format!("{:?}", output.shape),
                expected: contract.class_names.len(),
            });
        }
        let input = model.input_fact(0).map_err(unsupported)?.clone();
        if input.rank() != 2
            || concrete_last_dimension(&input) != Some(contract.feature_means.len())
        {
            return Err(ClassifierError::InputWidth {
                origin,
                found: format!("{:?}", input.shape),
                expected: contract.feature_means.len(),
            });
        }
        let plan = super::model_file::guard_library(|| model.into_runnable())
            .map_err(|message| ClassifierError::Unsupported {
                origin: origin.clone(),
                message,
            })?
            .map_err(unsupported)?;
        Ok(Classifier {
            plan,
            contract,
            origin,
            id: model_id(bytes),
            image_only: None,
        })
    }

    /// This model with `companion` scoring the scenes that have no depth map in its place.
    pub fn with_image_only(mut self, companion: Classifier) -> Classifier {
        self.image_only = Some(Arc::new(companion));
        self
    }

    /// The image-only companion, when this model has one.
    pub fn image_only(&self) -> Option<&Classifier> {
        self.image_only.as_deref()
    }

    /// The model's id (`model_id` of the bytes it was loaded from).
    pub fn id(&self) -> &str {
        &self.id
    }

    /// The contract read from the file.
    pub fn contract(&self) -> &ModelContract {
        &self.contract
    }

    /// Where the model came from (a path or a caller-given name).
    pub fn origin(&self) -> &str {
        &self.origin
    }

    /// Calibrated log-probabilities, `segments x classes`, for a raw feature matrix.
    pub fn classify(&self, features: ArrayView2<f32>) -> Result<Array2<f32>, ClassifierError> {
        let expected = self.contract.feature_means.len();
        if features.ncols() != expected {
            return Err(ClassifierError::FeatureWidth {
                found: features.ncols(),
                expected,
            });
        }
        for ((segment, feature), &value) in features.indexed_iter() {
            if !value.is_finite() {
                return Err(ClassifierError::NonFiniteFeature {
                    segment,
                    feature,
                    value,
                });
            }
        }
        if features.nrows() == 0 {
            return Ok(Array2::zeros((0, self.contract.class_names.len())));
        }
        let run_error = |error: TractError| ClassifierError::Run {
            message: format!("{error:#}"),
        };
        let input = Tensor::from(features.to_owned().into_dyn());
        let outputs = self.plan.run(tvec!(input.into())).map_err(run_error)?;
        let output = outputs.first().ok_or_else(|| ClassifierError::Run {
            message: "the model produced no output".to_string(),
        })?;
        let view = output.to_plain_array_view::<f32>().map_err(run_error)?;
        let scores = view
            .into_dimensionality::<Ix2>()
            .map_err(|error| ClassifierError::Run {
                message: error.to_string(),
            })?
            .to_owned();
        if scores.nrows() != features.nrows() || scores.ncols() != self.contract.class_names.len() {
            return Err(ClassifierError::Run {
                message: format!("output shape {:?} does not match the input", scores.shape()),
            });
        }
        for (segment, row) in scores.rows().into_iter().enumerate() {
            if row.iter().any(|value| !value.is_finite()) {
                return Err(ClassifierError::NonFiniteOutput { segment });
            }
        }
        Ok(scores)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::unaries::contract::KEY_CLASSES;
    use crate::unaries::mlp::seeded_random_mlp;
    use crate::unaries::onnx_writer::{build_model_proto, encode_model};

    fn contract_for(taxonomy: &Taxonomy, mlp: &crate::unaries::mlp::Mlp) -> ModelContract {
        let class_names = taxonomy.classes().iter().map(|c| c.name.clone());
        ModelContract::with_classes(class_names.take(mlp.class_count()).collect(), mlp, 3)
    }

    #[test]
    fn a_model_whose_declared_output_no_node_makes_is_an_error_not_a_panic() {
        let taxonomy = Taxonomy::embedded();
        let mlp = seeded_random_mlp(3, &[5, taxonomy.class_count()]);
        let mut proto = build_model_proto(&mlp, &contract_for(&taxonomy, &mlp)).unwrap();
        let graph = proto.graph.as_mut().unwrap();
        graph.output[0].name = "made_by_no_node".to_string();
        let bytes = proto.encode_to_vec();
        let layout = FeatureLayout {
            version: 3,
            count: 5,
        };
        let error = Classifier::from_bytes(&bytes, "broken model", &taxonomy, layout).unwrap_err();
        assert!(
            matches!(error, ClassifierError::Unsupported { .. }),
            "{error}"
        );
        assert!(error.to_string().contains("broken model"), "{error}");
    }

    #[test]
    fn written_model_runs_in_tract_like_the_reference_forward_pass() {
        let taxonomy = Taxonomy::embedded();
        for widths in [
            vec![5, taxonomy.class_count()],
            vec![5, 7, taxonomy.class_count()],
            vec![5, 6, 4, taxonomy.class_count()],
        ] {
            let mlp = seeded_random_mlp(widths.len() as u64, &widths);
            let bytes = encode_model(&mlp, &contract_for(&taxonomy, &mlp)).unwrap();
            let layout = FeatureLayout {
                version: 3,
                count: 5,
            };
            let classifier =
                Classifier::from_bytes(&bytes, "test model", &taxonomy, layout).unwrap();
            let features =
                Array2::from_shape_fn((9, 5), |(r, c)| mlp.feature_means[c] + r as f32 - 4.0);
            let ours = classifier.classify(features.view()).unwrap();
            let reference = mlp.log_probabilities(features.view());
            let worst = ours
                .iter()
                .zip(&reference)
                .map(|(a, b)| (a - b).abs())
                .fold(0.0, f32::max);
            assert!(worst < 1e-4, "{widths:?}: {worst}");
            assert_eq!(classifier.contract().temperature, mlp.temperature);
            // Any batch size runs through the same plan.
            assert_eq!(
                classifier
                    .classify(features.slice(ndarray::s![..2, ..]))
                    .unwrap()
                    .nrows(),
                2
            );
        }
    }

    #[test]
    fn far_pushed_down_classes_stay_finite() {
        // A class whose logit sits 500 below the rest must come out as a large finite negative number.
        let taxonomy = Taxonomy::embedded();
        let mut mlp = seeded_random_mlp(9, &[5, taxonomy.class_count()]);
        if let Some(layer) = mlp.layers.last_mut() {
            layer.bias[3] = -500.0;
        }
        mlp.temperature = 0.5;
        let bytes = encode_model(&mlp, &contract_for(&taxonomy, &mlp)).unwrap();
        let layout = FeatureLayout {
            version: 3,
            count: 5,
        };
        let classifier = Classifier::from_bytes(&bytes, "pushed", &taxonomy, layout).unwrap();
        let features = Array2::from_shape_fn((4, 5), |(r, c)| mlp.feature_means[c] + r as f32);
        let ours = classifier.classify(features.view()).unwrap();
        let reference = mlp.log_probabilities(features.view());
        for (a, b) in ours.iter().zip(&reference) {
            assert!((a - b).abs() <= 1e-4 * b.abs().max(1.0), "{a} vs {b}");
        }
        assert!(ours[[0, 3]] < -900.0);
    }

    #[test]
    fn corrupt_bytes_and_contract_mismatches_are_typed_errors() {
        let taxonomy = Taxonomy::embedded();
        let layout = FeatureLayout {
            version: 3,
            count: 5,
        };
        let error =
            Classifier::from_bytes(b"\x08\x07garbage\xff\xff", "junk.onnx", &taxonomy, layout)
                .unwrap_err();
        assert!(
            matches!(
                error,
                ClassifierError::Corrupt { .. } | ClassifierError::Contract { .. }
            ),
            "{error}"
        );
        let mlp = seeded_random_mlp(1, &[5, taxonomy.class_count()]);
        let bytes = encode_model(&mlp, &contract_for(&taxonomy, &mlp)).unwrap();
        let truncated =
            Classifier::from_bytes(&bytes[..bytes.len() / 2], "cut.onnx", &taxonomy, layout)
                .unwrap_err();
        assert!(
            matches!(truncated, ClassifierError::Corrupt { .. }),
            "{truncated}"
        );
        let newer = Classifier::from_bytes(
            &bytes,
            "m.onnx",
            &taxonomy,
            FeatureLayout {
                version: 4,
                count: 5,
            },
        )
        .unwrap_err();
        assert!(
            matches!(
                newer,
                ClassifierError::Contract {
                    source: ContractError::FeatureVersion {
                        found: 3,
                        expected: 4
                    },
                    ..
                }
            ),
            "{newer}"
        );
    }

    #[test]
    fn output_width_must_match_the_class_list() {
        let taxonomy = Taxonomy::embedded();
        let mlp = seeded_random_mlp(2, &[5, taxonomy.class_count() - 1]);
        let mut proto = build_model_proto(&mlp, &contract_for(&taxonomy, &mlp)).unwrap();
        let all_names: Vec<&str> = taxonomy.classes().iter().map(|c| c.name.as_str()).collect();
        for entry in &mut proto.metadata_props {
            if entry.key == KEY_CLASSES {
                entry.value = serde_json::to_string(&all_names).unwrap();
            }
        }
        let error = Classifier::from_bytes(
            &proto.encode_to_vec(),
            "narrow.onnx",
            &taxonomy,
            FeatureLayout {
                version: 3,
                count: 5,
            },
        )
        .unwrap_err();
        assert!(
            matches!(error, ClassifierError::OutputWidth { expected: 41, .. }),
            "{error}"
        );
    }

    #[test]
    fn non_finite_and_misshapen_features_are_refused() {
        let taxonomy = Taxonomy::embedded();
        let mlp = seeded_random_mlp(3, &[5, taxonomy.class_count()]);
        let bytes = encode_model(&mlp, &contract_for(&taxonomy, &mlp)).unwrap();
        let classifier = Classifier::from_bytes(
            &bytes,
            "m.onnx",
            &taxonomy,
            FeatureLayout {
                version: 3,
                count: 5,
            },
        )
        .unwrap();
        let mut features = Array2::<f32>::zeros((3, 5));
        features[[2, 4]] = f32::INFINITY;
        assert!(matches!(
            classifier.classify(features.view()),
            Err(ClassifierError::NonFiniteFeature {
                segment: 2,
                feature: 4,
                ..
            })
        ));
        assert!(matches!(
            classifier.classify(Array2::<f32>::zeros((3, 4)).view()),
            Err(ClassifierError::FeatureWidth {
                found: 4,
                expected: 5
            })
        ));
        assert_eq!(
            classifier
                .classify(Array2::<f32>::zeros((0, 5)).view())
                .unwrap()
                .shape(),
            &[0, 41]
        );
    }
}
