//! The model contract a sayso classifier file carries in its ONNX `metadata_props`, and its checks.
//!
//! Owns: `ModelContract` (and the one way to state a trained network's: `ModelContract::for_network`), the
//! metadata key names, turning a contract into key/value pairs and back, and
//! checking it against the taxonomy and the feature layout this build computes.
//! Must not: run models or touch protobuf bytes; `onnx_writer` and `classifier` do that.

use super::mlp::Mlp;
use crate::taxonomy::Taxonomy;

/// The version of the sayso classifier file format this build writes and reads.
pub const MODEL_FORMAT_VERSION: u32 = 1;

/// Metadata key: the sayso model format version (decimal).
pub const KEY_FORMAT: &str = "sayso.model_format";
/// Metadata key: the output classes in column order, a JSON array of canonical names.
pub const KEY_CLASSES: &str = "sayso.class_names";
/// Metadata key: the feature layout version the model was trained on (decimal).
pub const KEY_FEATURE_VERSION: &str = "sayso.feature_layout_version";
/// Metadata key: per-feature means (JSON array); the graph also subtracts them.
pub const KEY_MEANS: &str = "sayso.feature_means";
/// Metadata key: per-feature standard deviations (JSON array); the graph also divides by them.
pub const KEY_STDS: &str = "sayso.feature_stds";
/// Metadata key: the calibration temperature (decimal); the graph also divides the logits by it.
pub const KEY_TEMPERATURE: &str = "sayso.temperature";

/// What a classifier file promises about its inputs and outputs.
#[derive(Clone, Debug, PartialEq)]
pub struct ModelContract {
    pub format_version: u32,
    pub class_names: Vec<String>,
    pub feature_layout_version: u32,
    pub feature_means: Vec<f32>,
    pub feature_stds: Vec<f32>,
    pub temperature: f32,
}

/// Why a contract was refused.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum ContractError {
    #[error("the model has no '{key}' metadata entry")]
    MissingKey { key: &'static str },
    #[error("the model's '{key}' metadata entry is not valid: {message}")]
    BadValue { key: &'static str, message: String },
    #[error("the model is sayso format {found}, this build reads format {expected}")]
    FormatVersion { found: u32, expected: u32 },
    #[error(
        "the model was trained on feature layout {found}, this build computes layout {expected}"
    )]
    FeatureVersion { found: u32, expected: u32 },
    #[error("the model expects {found} features, this build computes {expected}")]
    FeatureCount { found: usize, expected: usize },
    #[error("the model has {found} classes, the taxonomy has {expected}")]
    ClassCount { found: usize, expected: usize },
    #[error("the model's class {position} is '{found}' but the taxonomy's class {position} is '{expected}'")]
    ClassOrder {
        position: usize,
        found: String,
        expected: String,
    },
    #[error("the model's normalisation has {means} means and {stds} standard deviations")]
    NormalisationShape { means: usize, stds: usize },
    #[error("the model's calibration temperature {0} is not a positive finite number")]
    Temperature(f32),
}

/// The feature vector this build computes: its layout version and width.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FeatureLayout {
    pub version: u32,
    pub count: usize,
}

impl ModelContract {
    /// The contract of `mlp` trained for every class of `taxonomy`, in order, on feature layout
    /// `feature_layout_version`: this build's format, the network's own normalisation and temperature.
    pub fn for_network(
        taxonomy: &Taxonomy,
        mlp: &Mlp,
        feature_layout_version: u32,
    ) -> ModelContract {
        let class_names = taxonomy.classes().iter().map(|class| class.name.clone());
        ModelContract::with_classes(class_names.collect(), mlp, feature_layout_version)
    }

    /// As `for_network`, with the output classes named by the caller.
    pub fn with_classes(
        class_names: Vec<String>,
        mlp: &Mlp,
        feature_layout_version: u32,
    ) -> ModelContract {
        ModelContract {
            format_version: MODEL_FORMAT_VERSION,
            class_names,
            feature_layout_version,
            feature_means: mlp.feature_means.to_vec(),
            feature_stds: mlp.feature_stds.to_vec(),
            temperature: mlp.temperature,
        }
    }

    /// The contract as ONNX metadata key/value pairs.
    pub fn to_metadata(&self) -> Vec<(String, String)> {
        let json = |values: &[f32]| serde_json::to_string(values).unwrap_or_default();
        vec![
            (KEY_FORMAT.to_string(), self.format_version.to_string()),
            (
                KEY_CLASSES.to_string(),
                serde_json::to_string(&self.class_names).unwrap_or_default(),
            ),
            (
                KEY_FEATURE_VERSION.to_string(),
                self.feature_layout_version.to_string(),
            ),
            (KEY_MEANS.to_string(), json(&self.feature_means)),
            (KEY_STDS.to_string(), json(&self.feature_stds)),
            (KEY_TEMPERATURE.to_string(), self.temperature.to_string()),
        ]
    }

    /// Reads a contract from metadata pairs, checking each value's syntax.
    pub fn from_metadata<'a>(
        entries: impl IntoIterator<Item = (&'a str, &'a str)>,
    ) -> Result<ModelContract, ContractError> {
        let entries: Vec<(&str, &str)> = entries.into_iter().collect();
        let find = |key: &'static str| {
            entries
                .iter()
                .find(|(found, _)| *found == key)
                .map(|(_, value)| *value)
                .ok_or(ContractError::MissingKey { key })
        };
        let bad = |key: &'static str, message: String| ContractError::BadValue { key, message };
        let integer = |key: &'static str| -> Result<u32, ContractError> {
            find(key)?
                .trim()
                .parse::<u32>()
                .map_err(|error| bad(key, error.to_string()))
        };
        let floats = |key: &'static str| -> Result<Vec<f32>, ContractError> {
            serde_json::from_str::<Vec<f32>>(find(key)?)
                .map_err(|error| bad(key, error.to_string()))
        };
        let format_version = integer(KEY_FORMAT)?;
        if format_version != MODEL_FORMAT_VERSION {
            return Err(ContractError::FormatVersion {
                found: format_version,
                expected: MODEL_FORMAT_VERSION,
            });
        }
        let class_names: Vec<String> = serde_json::from_str(find(KEY_CLASSES)?)
            .map_err(|error| bad(KEY_CLASSES, error.to_string()))?;
        let temperature = find(KEY_TEMPERATURE)?
            .trim()
            .parse::<f32>()
            .map_err(|error| bad(KEY_TEMPERATURE, error.to_string()))?;
        let contract = ModelContract {
            format_version,
            class_names,
            feature_layout_version: integer(KEY_FEATURE_VERSION)?,
            feature_means: floats(KEY_MEANS)?,
            feature_stds: floats(KEY_STDS)?,
            temperature,
        };
        contract.check_internal()?;
        Ok(contract)
    }

    /// Checks the contract on its own: normalisation shapes, positive finite numbers.
    pub fn check_internal(&self) -> Result<(), ContractError> {
        if self.feature_means.len() != self.feature_stds.len() {
            return Err(ContractError::NormalisationShape {
                means: self.feature_means.len(),
                stds: self.feature_stds.len(),
            });
        }
        if !(self.temperature.is_finite() && self.temperature > 0.0) {
            return Err(ContractError::Temperature(self.temperature));
        }
        if let Some(bad) = self
            .feature_means
            .iter()
            .chain(&self.feature_stds)
            .find(|value| !value.is_finite())
        {
            return Err(ContractError::BadValue {
                key: KEY_MEANS,
                message: format!("normalisation value {bad} is not finite"),
            });
        }
        if self.feature_stds.iter().any(|&value| value <= 0.0) {
            return Err(ContractError::BadValue {
                key: KEY_STDS,
                message: "a standard deviation is not positive".to_string(),
            });
        }
        Ok(())
    }

    /// Checks the contract against the taxonomy (same classes, same order) and the feature layout.
    pub fn check_against(
        &self,
        taxonomy: &Taxonomy,
        layout: FeatureLayout,
    ) -> Result<(), ContractError> {
        self.check_internal()?;
        if self.feature_layout_version != layout.version {
            return Err(ContractError::FeatureVersion {
                found: self.feature_layout_version,
                expected: layout.version,
            });
        }
        if self.feature_means.len() != layout.count {
            return Err(ContractError::FeatureCount {
                found: self.feature_means.len(),
                expected: layout.count,
            });
        }
        if self.class_names.len() != taxonomy.class_count() {
            return Err(ContractError::ClassCount {
                found: self.class_names.len(),
                expected: taxonomy.class_count(),
            });
        }
        for (position, (name, class)) in self.class_names.iter().zip(taxonomy.classes()).enumerate()
        {
            if *name != class.name {
                return Err(ContractError::ClassOrder {
                    position,
                    found: name.clone(),
                    expected: class.name.clone(),
                });
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn contract(taxonomy: &Taxonomy) -> ModelContract {
        ModelContract {
            format_version: MODEL_FORMAT_VERSION,
            class_names: taxonomy.classes().iter().map(|c| c.name.clone()).collect(),
            feature_layout_version: 4,
            feature_means: vec![0.5, -1.25],
            feature_stds: vec![1.0, 3.5],
            temperature: 1.75,
        }
    }

    #[test]
    fn metadata_round_trip_keeps_every_field() {
        let taxonomy = Taxonomy::embedded();
        let original = contract(&taxonomy);
        let pairs = original.to_metadata();
        let read =
            ModelContract::from_metadata(pairs.iter().map(|(k, v)| (k.as_str(), v.as_str())))
                .unwrap();
        assert_eq!(read, original);
        let layout = FeatureLayout {
            version: 4,
            count: 2,
        };
        assert_eq!(read.check_against(&taxonomy, layout), Ok(()));
    }

    #[test]
    fn mismatches_are_refused_with_the_reason() {
        let taxonomy = Taxonomy::embedded();
        let layout = FeatureLayout {
            version: 4,
            count: 2,
        };
        let mut swapped = contract(&taxonomy);
        swapped.class_names.swap(0, 1);
        assert!(matches!(
            swapped.check_against(&taxonomy, layout),
            Err(ContractError::ClassOrder { position: 0, .. })
        ));
        let older = contract(&taxonomy);
        assert_eq!(
            older.check_against(
                &taxonomy,
                FeatureLayout {
                    version: 5,
                    count: 2
                }
            ),
            Err(ContractError::FeatureVersion {
                found: 4,
                expected: 5
            })
        );
        let mut short = contract(&taxonomy);
        short.class_names.pop();
        assert!(matches!(
            short.check_against(&taxonomy, layout),
            Err(ContractError::ClassCount { .. })
        ));
        let mut cold = contract(&taxonomy);
        cold.temperature = 0.0;
        assert_eq!(cold.check_internal(), Err(ContractError::Temperature(0.0)));
    }

    #[test]
    fn missing_and_malformed_entries_are_named() {
        let taxonomy = Taxonomy::embedded();
        let pairs = contract(&taxonomy).to_metadata();
        let without: Vec<_> = pairs.iter().filter(|(k, _)| k != KEY_TEMPERATURE).collect();
        assert_eq!(
            ModelContract::from_metadata(without.iter().map(|(k, v)| (k.as_str(), v.as_str()))),
            Err(ContractError::MissingKey {
                key: KEY_TEMPERATURE
            })
        );
        let broken: Vec<_> = pairs
            .iter()
            .map(|(k, v)| {
                if k == KEY_MEANS {
                    (k.clone(), "[1, oops".to_string())
                } else {
                    (k.clone(), v.clone())
                }
            })
            .collect();
        assert!(matches!(
            ModelContract::from_metadata(broken.iter().map(|(k, v)| (k.as_str(), v.as_str()))),
            Err(ContractError::BadValue { key: KEY_MEANS, .. })
        ));
    }
}
