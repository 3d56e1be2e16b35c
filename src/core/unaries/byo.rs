//! Shared parts of bring-your-own perception: the stage's error type and mapping a perception model's
//! class names onto the taxonomy through a small synonym table.
//!
//! Owns: `PerceptionError`, `SynonymTable` (read from `grammar/perception_synonyms.toml`), `ClassMapping`.
//! Must not: know the full language lexicon (that is the language stage's); only canonical names plus the
//! synonym table.

use std::collections::HashMap;
use std::path::PathBuf;

use serde::Deserialize;

use super::byo_npy::NpyError;
use crate::ids::ClassId;
use crate::raster::RasterError;
use crate::taxonomy::Taxonomy;

/// The synonym table shipped in the crate.
pub const EMBEDDED_SYNONYMS: &str = include_str!("../../../grammar/perception_synonyms.toml");

/// Why per-pixel scores, a user model, a label map or detections could not become unaries.
#[derive(Debug, thiserror::Error)]
pub enum PerceptionError {
    #[error("cannot read {path}: {message}")]
    Io { path: PathBuf, message: String },
    #[error(transparent)]
    Npy(#[from] NpyError),
    #[error(transparent)]
    Raster(#[from] RasterError),
    #[error(
        "unknown class names (not canonical names nor synonyms): {}; `sayso classes` and GET /v1/classes \
         list the known ones. Rename them, or leave them out (--drop-unknown-classes; drop_unknown_classes \
         in a request or an upload; allow_unknown_classes in a user model's config) while at least one \
         name is known",
        names.join(", ")
    )]
    UnknownClassNames { names: Vec<String> },
    #[error("the class list is empty")]
    NoClasses,
    #[error("score array has shape {found:?}; expected {expected}")]
    Shape { found: Vec<usize>, expected: String },
    #[error("score array shape {found:?} fits both HxWxC and CxHxW; declare the layout")]
    AmbiguousLayout { found: Vec<usize> },
    #[error("score {value} at pixel ({x}, {y}), channel {channel} is not finite")]
    NonFinite {
        x: usize,
        y: usize,
        channel: usize,
        value: f64,
    },
    #[error("probability {value} at pixel ({x}, {y}), channel {channel} is negative")]
    NegativeProbability {
        x: usize,
        y: usize,
        channel: usize,
        value: f64,
    },
    #[error("probabilities at pixel ({x}, {y}) sum to {sum}, not 1 (tolerance {tolerance})")]
    NotNormalised {
        x: usize,
        y: usize,
        sum: f64,
        tolerance: f64,
    },
    #[error(
        "the segment map is {segments_width}x{segments_height} but the scores are {width}x{height}"
    )]
    SizeMismatch {
        segments_width: u32,
        segments_height: u32,
        width: usize,
        height: usize,
    },
    #[error("segment map pixel {pixel} names segment {segment}, but there are {segment_count}")]
    BadSegmentMap {
        pixel: usize,
        segment: u32,
        segment_count: u32,
    },
    #[error("label {value} at pixel ({x}, {y}) is not a class id (there are {class_count} classes; 255 = unlabelled)")]
    BadLabel {
        x: u32,
        y: u32,
        value: u16,
        class_count: usize,
    },
    #[error(
        "confidence map is {found_width}x{found_height} but the label map is {width}x{height}"
    )]
    ConfidenceSize {
        width: u32,
        height: u32,
        found_width: u32,
        found_height: u32,
    },
    #[error("{origin}: {message}")]
    Config { origin: String, message: String },
    #[error("the user model failed: {message}")]
    Model { message: String },
    #[error("detections line {line}: {message}")]
    Detection { line: usize, message: String },
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSynonyms {
    schema: u32,
    synonyms: HashMap<String, Vec<String>>,
}

/// Other names for taxonomy classes, keyed by normalised name.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SynonymTable {
    canonical_of: HashMap<String, String>,
}

/// Lower-cases and turns spaces and hyphens into underscores: "Potted Plant" -> "potted_plant".
pub fn normalise_class_name(name: &str) -> String {
    name.trim()
        .to_lowercase()
        .chars()
        .map(|c| if c == ' ' || c == '-' { '_' } else { c })
        .collect()
}

impl SynonymTable {
    /// The table compiled into the crate; its validity is checked by a unit test.
    pub fn embedded(taxonomy: &Taxonomy) -> SynonymTable {
        SynonymTable::parse(EMBEDDED_SYNONYMS, taxonomy).unwrap_or_default()
    }

    /// Parses a synonym table; every key must be a canonical class name and no synonym may repeat.
    pub fn parse(text: &str, taxonomy: &Taxonomy) -> Result<SynonymTable, PerceptionError> {
        let config = |message: String| PerceptionError::Config {
            origin: "synonym table".to_string(),
            message,
        };
        let raw: RawSynonyms = toml::from_str(text).map_err(|error| config(error.to_string()))?;
        if raw.schema != 1 {
            return Err(config(format!("schema {} is not supported", raw.schema)));
        }
        let mut canonical_of = HashMap::new();
        for (canonical, others) in raw.synonyms {
            if taxonomy.class_by_name(&canonical).is_none() {
                return Err(config(format!("'{canonical}' is not a taxonomy class")));
            }
            for other in others {
                let key = normalise_class_name(&other);
                if taxonomy.class_by_name(&key).is_some() {
                    return Err(config(format!("synonym '{other}' is itself a class name")));
                }
                if canonical_of.insert(key, canonical.clone()).is_some() {
                    return Err(config(format!("synonym '{other}' is listed twice")));
                }
            }
        }
        Ok(SynonymTable { canonical_of })
    }

    /// The taxonomy class a perception name denotes, if any.
    pub fn resolve(&self, name: &str, taxonomy: &Taxonomy) -> Option<ClassId> {
        let key = normalise_class_name(name);
        let canonical = self
            .canonical_of
            .get(&key)
            .map(String::as_str)
            .unwrap_or(&key);
        taxonomy.class_by_name(canonical).map(|class| class.id)
    }
}

/// Where each column of a perception model's output goes in the taxonomy.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ClassMapping {
    /// `columns[k]` is the taxonomy class of the model's channel `k`, or `None` when unknown.
    pub columns: Vec<Option<ClassId>>,
    /// The names that matched nothing, in channel order.
    pub unknown: Vec<String>,
}

impl ClassMapping {
    /// Maps names; unknown names are recorded, not dropped silently.
    pub fn from_names(
        names: &[String],
        taxonomy: &Taxonomy,
        synonyms: &SynonymTable,
    ) -> ClassMapping {
        let columns: Vec<Option<ClassId>> = names
            .iter()
            .map(|name| synonyms.resolve(name, taxonomy))
            .collect();
        let unknown = names
            .iter()
            .zip(&columns)
            .filter(|(_, column)| column.is_none())
            .map(|(name, _)| name.clone())
            .collect();
        ClassMapping { columns, unknown }
    }

    /// The mapping when every name is known (`allow_unknown = false`), or always when allowed; an unknown
    /// channel's probability mass is then left out and the rest renormalised.
    pub fn checked(self, allow_unknown: bool) -> Result<ClassMapping, PerceptionError> {
        if self.columns.is_empty() {
            return Err(PerceptionError::NoClasses);
        }
        if !allow_unknown && !self.unknown.is_empty() {
            return Err(PerceptionError::UnknownClassNames {
                names: self.unknown,
            });
        }
        if self.columns.iter().all(Option::is_none) {
            return Err(PerceptionError::UnknownClassNames {
                names: self.unknown,
            });
        }
        Ok(self)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn embedded_synonyms_are_valid_and_resolve() {
        let taxonomy = Taxonomy::embedded();
        let table = SynonymTable::parse(EMBEDDED_SYNONYMS, &taxonomy).unwrap();
        assert_eq!(
            table.resolve("Couch", &taxonomy),
            taxonomy.class_by_name("sofa").map(|c| c.id)
        );
        assert_eq!(
            table.resolve("potted plant", &taxonomy),
            taxonomy.class_by_name("plant").map(|c| c.id)
        );
        assert_eq!(
            table.resolve("mug", &taxonomy),
            taxonomy.class_by_name("mug").map(|c| c.id)
        );
        assert_eq!(table.resolve("hovercraft", &taxonomy), None);
    }

    #[test]
    fn unknown_names_are_reported_in_order() {
        let taxonomy = Taxonomy::embedded();
        let table = SynonymTable::embedded(&taxonomy);
        let names: Vec<String> = ["floor", "zeppelin", "couch", "gnome"]
            .iter()
            .map(|s| s.to_string())
            .collect();
        let mapping = ClassMapping::from_names(&names, &taxonomy, &table);
        assert_eq!(
            mapping.unknown,
            vec!["zeppelin".to_string(), "gnome".to_string()]
        );
        let error = mapping.clone().checked(false).unwrap_err().to_string();
        assert!(error.contains("zeppelin, gnome"), "{error}");
        assert!(mapping.checked(true).is_ok());
    }

    #[test]
    fn a_synonym_table_naming_a_non_class_is_refused() {
        let taxonomy = Taxonomy::embedded();
        let text = "schema = 1\n[synonyms]\nspaceship = [\"rocket\"]\n";
        assert!(matches!(
            SynonymTable::parse(text, &taxonomy),
            Err(PerceptionError::Config { .. })
        ));
    }
}
