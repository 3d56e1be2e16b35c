//! The class taxonomy: classes, groups, safety flags, typical rooms and supports, and the class palette.
//!
//! Owns: reading and validating `grammar/classes.toml`, name lookups, the generated class colours.
//! Must not: know about words other than canonical names (synonyms and plurals belong to the language stage),
//! or about images and scenes.

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::color::generate_palette;
use crate::ids::{ClassId, RoomId};

/// The pixel value that means "unlabelled" in a label map.
pub const UNLABELLED: u16 = 255;

/// The schema version of `classes.toml` this build reads.
pub const TAXONOMY_SCHEMA: u32 = 1;

/// The coarse kind of a class.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ClassGroup {
    Structure,
    Furniture,
    Appliance,
    Object,
    Living,
}

/// One class of the taxonomy.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ClassInfo {
    pub id: ClassId,
    pub name: String,
    pub group: ClassGroup,
    /// Removing or renaming this class needs explicit confirmation.
    pub safety: bool,
    /// Room types where the class is typical.
    pub rooms: Vec<RoomId>,
    /// Classes this one typically rests on.
    pub rests_on: Vec<ClassId>,
    /// The generated display colour (sRGB).
    pub colour: [u8; 3],
}

/// One room type.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RoomInfo {
    pub id: RoomId,
    pub name: String,
}

/// The validated taxonomy.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Taxonomy {
    classes: Vec<ClassInfo>,
    rooms: Vec<RoomInfo>,
}

/// What went wrong reading a taxonomy.
#[derive(Debug, thiserror::Error)]
pub enum TaxonomyError {
    #[error("cannot read taxonomy file {path}: {source}")]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("taxonomy file {path}: {message}")]
    Syntax { path: PathBuf, message: String },
    #[error("taxonomy file {path}: {message}")]
    Invalid { path: PathBuf, message: String },
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTaxonomy {
    schema: u32,
    #[serde(default)]
    room: Vec<RawRoom>,
    #[serde(default)]
    class: Vec<RawClass>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRoom {
    name: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawClass {
    id: u16,
    name: String,
    group: ClassGroup,
    #[serde(default)]
    safety: bool,
    #[serde(default)]
    rooms: Vec<String>,
    #[serde(default)]
    rests_on: Vec<String>,
}

/// The taxonomy shipped in the crate, so the tool works with no files beside it.
pub const EMBEDDED_CLASSES: &str = include_str!("../../grammar/classes.toml");

/// "1 desk", "2 desks": a count of a class name read back.
pub fn how_many(count: usize, name: &str) -> String {
    if count == 1 {
        format!("1 {}", name.replace('_', " "))
    } else {
        format!("{count} {}", plural(name))
    }
}

/// English plural of a canonical class name, for reading a class name back (the language stage owns the
/// full lexicon, with the grammar's irregular plurals, for parsing).
pub fn plural(name: &str) -> String {
    let name = name.replace('_', " ");
    if name.ends_with("clothes") || name.ends_with("stairs") {
        name
    } else if name.ends_with("shelf") {
        format!("{}ves", &name[..name.len() - 1])
    } else if name.ends_with('s')
        || name.ends_with('x')
        || name.ends_with("ch")
        || name.ends_with("sh")
    {
        format!("{name}es")
    } else {
        format!("{name}s")
    }
}

impl Taxonomy {
    /// The taxonomy compiled into the binary from `grammar/classes.toml`.
    pub fn embedded() -> Taxonomy {
        // The embedded file is validated by a unit test, so this cannot fail on a released build.
        Taxonomy::parse(EMBEDDED_CLASSES, Path::new("<embedded classes.toml>"))
            .unwrap_or_else(|error| panic!("embedded taxonomy is invalid: {error}"))
    }

    /// Reads and validates a taxonomy file.
    pub fn load(path: &Path) -> Result<Taxonomy, TaxonomyError> {
        let text = std::fs::read_to_string(path).map_err(|source| TaxonomyError::Io {
            path: path.to_path_buf(),
            source,
        })?;
        Taxonomy::parse(&text, path)
    }

    /// Parses and validates taxonomy text; `origin` names it in errors.
    pub fn parse(text: &str, origin: &Path) -> Result<Taxonomy, TaxonomyError> {
        let invalid = |message: String| TaxonomyError::Invalid {
            path: origin.to_path_buf(),
            message,
        };
        let raw: RawTaxonomy = toml::from_str(text).map_err(|error| TaxonomyError::Syntax {
            path: origin.to_path_buf(),
            message: error.to_string(),
        })?;
        if raw.schema != TAXONOMY_SCHEMA {
            return Err(invalid(format!(
                "schema {} is not supported (this build reads schema {TAXONOMY_SCHEMA})",
                raw.schema
            )));
        }
        if raw.class.is_empty() || raw.class.len() >= UNLABELLED as usize {
            return Err(invalid(format!(
                "needs between 1 and {} classes, found {}",
                UNLABELLED - 1,
                raw.class.len()
            )));
        }
        let mut rooms = Vec::new();
        let mut room_ids = HashMap::new();
        for (index, room) in raw.room.iter().enumerate() {
            if !is_name(&room.name)
                || room_ids
                    .insert(room.name.clone(), RoomId(index as u16))
                    .is_some()
            {
                return Err(invalid(format!(
                    "room '{}' is duplicated or not a lower-case name",
                    room.name
                )));
            }
            rooms.push(RoomInfo {
                id: RoomId(index as u16),
                name: room.name.clone(),
            });
        }
        let mut class_ids = HashMap::new();
        for (index, class) in raw.class.iter().enumerate() {
            if class.id as usize != index {
                return Err(invalid(format!(
                    "class '{}' has id {} but ids must be dense and in order (expected {index})",
                    class.name, class.id
                )));
            }
            if !is_name(&class.name)
                || class_ids
                    .insert(class.name.clone(), ClassId(class.id))
                    .is_some()
            {
                return Err(invalid(format!(
                    "class '{}' is duplicated or not a lower-case name",
                    class.name
                )));
            }
        }
        let palette = generate_palette(raw.class.len());
        let mut classes = Vec::new();
        for (class, colour) in raw.class.iter().zip(palette) {
            let mut class_rooms = Vec::new();
            for room in &class.rooms {
                if room == "any" {
                    class_rooms.extend(rooms.iter().map(|info| info.id));
                } else {
                    let id = room_ids.get(room).ok_or_else(|| {
                        invalid(format!(
                            "class '{}' names unknown room '{room}'",
                            class.name
                        ))
                    })?;
                    class_rooms.push(*id);
                }
            }
            class_rooms.sort();
            class_rooms.dedup();
            let mut rests_on = Vec::new();
            for support in &class.rests_on {
                let id = class_ids.get(support).ok_or_else(|| {
                    invalid(format!(
                        "class '{}' rests on unknown class '{support}'",
                        class.name
                    ))
                })?;
                rests_on.push(*id);
            }
            classes.push(ClassInfo {
                id: ClassId(class.id),
                name: class.name.clone(),
                group: class.group,
                safety: class.safety,
                rooms: class_rooms,
                rests_on,
                colour,
            });
        }
        Ok(Taxonomy { classes, rooms })
    }

    /// Number of classes.
    pub fn class_count(&self) -> usize {
        self.classes.len()
    }

    /// The class colours as the 256-entry palette of a label map PNG (`labels.png` of `fix` and of the
    /// service): class `i` is entry `i`, unlabelled (`UNLABELLED`) black, unused entries grey.
    pub fn label_palette(&self) -> Vec<[u8; 3]> {
        let mut palette = vec![[128, 128, 128]; 256];
        for class in &self.classes {
            if let Some(slot) = palette.get_mut(class.id.index()) {
                *slot = class.colour;
            }
        }
        palette[usize::from(UNLABELLED)] = [0, 0, 0];
        palette
    }

    /// Every class in id order.
    pub fn classes(&self) -> &[ClassInfo] {
        &self.classes
    }

    /// Every room type in id order.
    pub fn rooms(&self) -> &[RoomInfo] {
        &self.rooms
    }

    /// The class with this id, if it exists.
    pub fn class(&self, id: ClassId) -> Option<&ClassInfo> {
        self.classes.get(id.index())
    }

    /// The class with this canonical name.
    pub fn class_by_name(&self, name: &str) -> Option<&ClassInfo> {
        self.classes.iter().find(|class| class.name == name)
    }

    /// The room type with this id.
    pub fn room(&self, id: RoomId) -> Option<&RoomInfo> {
        self.rooms.get(id.index())
    }

    /// The room type with this canonical name (e.g. `living_room`).
    pub fn room_by_name(&self, name: &str) -> Option<&RoomInfo> {
        self.rooms.iter().find(|room| room.name == name)
    }

    /// The canonical name of a class, or `"unknown"`.
    pub fn class_name(&self, id: ClassId) -> &str {
        self.class(id)
            .map(|class| class.name.as_str())
            .unwrap_or("unknown")
    }

    /// Whether the class needs explicit confirmation to be removed or renamed.
    pub fn is_safety_critical(&self, id: ClassId) -> bool {
        self.class(id).map(|class| class.safety).unwrap_or(false)
    }
}

fn is_name(text: &str) -> bool {
    !text.is_empty() && text.chars().all(|c| c.is_ascii_lowercase() || c == '_')
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn plurals_of_class_names_read_naturally() {
        assert_eq!(how_many(1, "coffee_table"), "1 coffee table");
        assert_eq!(how_many(0, "laptop"), "0 laptops");
        assert_eq!(plural("mug"), "mugs");
        assert_eq!(plural("box"), "boxes");
        assert_eq!(plural("shelf"), "shelves");
        assert_eq!(plural("clothes"), "clothes");
        assert_eq!(plural("glass"), "glasses");
    }

    #[test]
    fn embedded_taxonomy_is_valid_and_complete() {
        let taxonomy = Taxonomy::embedded();
        assert_eq!(taxonomy.class_count(), 41);
        for name in ["person", "dog", "cat", "stairs", "stove"] {
            assert!(
                taxonomy.class_by_name(name).unwrap().safety,
                "{name} must be safety-critical"
            );
        }
        assert!(!taxonomy.class_by_name("mug").unwrap().safety);
        assert!(taxonomy.rooms().len() >= 5);
    }

    #[test]
    fn unknown_room_is_rejected_with_its_name() {
        let text = "schema = 1\n[[room]]\nname = \"kitchen\"\n[[class]]\nid = 0\nname = \"floor\"\ngroup = \"structure\"\nrooms = [\"attic\"]\n";
        let error = Taxonomy::parse(text, Path::new("t.toml"))
            .unwrap_err()
            .to_string();
        assert!(
            error.contains("attic") && error.contains("t.toml"),
            "{error}"
        );
    }

    #[test]
    fn sparse_ids_are_rejected() {
        let text = "schema = 1\n[[class]]\nid = 3\nname = \"floor\"\ngroup = \"structure\"\n";
        assert!(Taxonomy::parse(text, Path::new("t.toml")).is_err());
    }
}
