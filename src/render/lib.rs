//! A deterministic procedural renderer of indoor scenes of our invented home, the flat at 14 Juniper Lane,
//! with full ground truth: per-pixel class labels, object instances, true depth and per-object records.
//!
//! The pipeline inside this module:
//!
//! ```text
//! SceneRequest -> layouts (SceneBuilder: room box, furniture, objects, figures) -> SceneDraft
//!   -> shade (nearest hit per pixel, Lambert light with soft shadows, sensor noise) -> Frame
//!   -> RenderedScene (instances renumbered by visibility, objects measured) -> writer (scene directory)
//! ```
//!
//! Same request, same bytes, on every machine: all randomness comes from our own SplitMix64, and the maths is
//! plain IEEE arithmetic and square roots (no platform trigonometry or exponentials).
//!
//! Owns: `SceneRequest`, `RenderedScene`, `TruthObject` (a ground-truth object record), `SceneMetadata`,
//! `RenderError`, and (`demo`) the demo scenes' ground truth; the demo catalogue itself is `sayso_core::demo`'s.
//! Must not: know about segments, classifiers, language or the solver; class ids come only from the taxonomy.

mod belongings;
mod builder;
mod camera;
pub mod demo;
mod figures;
mod fittings;
mod furniture;
mod geometry;
mod layouts;
mod material;
mod objects;
pub mod random;
mod shade;
pub mod writer;

use std::path::PathBuf;

use serde::{Deserialize, Serialize};

use crate::ids::ClassId;
use crate::raster::{DepthImage, IndexImage, RasterError, RgbImage};
use crate::taxonomy::Taxonomy;

pub use layouts::ROOM_TYPES;
/// The committed demo set (names, rooms, seeds): core's, since finding a demo scene is on the correction path.
pub use sayso_core::demo::catalogue;

use sayso_core::demo as core_demo;
use sayso_core::{ids, raster, scene, taxonomy};

/// The version written into every `scene.json`; bump it whenever the output bytes change.
pub const RENDERER_VERSION: &str = "juniper-1";

/// The default image size.
pub const DEFAULT_WIDTH: u32 = 640;
pub const DEFAULT_HEIGHT: u32 = 480;

/// What went wrong while rendering or writing a scene.
#[derive(Debug, thiserror::Error)]
pub enum RenderError {
    #[error("unknown room type '{0}' (expected one of: {rooms})", rooms = ROOM_TYPES.join(", "))]
    UnknownRoom(String),
    #[error("the taxonomy has no class named '{0}', which the renderer needs")]
    UnknownClass(String),
    #[error("a scene may hold at most 65534 object instances")]
    TooManyInstances,
    #[error("image size {width}x{height} is not supported (each side must be 16..=4096)")]
    BadSize { width: u32, height: u32 },
    #[error(transparent)]
    Raster(#[from] RasterError),
    #[error("cannot write or read {path}: {source}")]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("{path}: {message}")]
    Json { path: PathBuf, message: String },
}

/// Which scene to render.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SceneRequest {
    pub name: String,
    /// A taxonomy room name, e.g. `kitchen`.
    pub room: String,
    pub seed: u64,
    pub width: u32,
    pub height: u32,
}

impl SceneRequest {
    /// A 640x480 request named `<room>_<seed>`.
    pub fn new(room: &str, seed: u64) -> SceneRequest {
        SceneRequest {
            name: format!("{room}_{seed}"),
            room: room.to_string(),
            seed,
            width: DEFAULT_WIDTH,
            height: DEFAULT_HEIGHT,
        }
    }
}

impl From<&catalogue::DemoEntry> for SceneRequest {
    /// The render request for a demo entry (640x480).
    fn from(entry: &catalogue::DemoEntry) -> SceneRequest {
        SceneRequest {
            name: entry.name.to_string(),
            ..SceneRequest::new(entry.room, entry.seed)
        }
    }
}

/// One visible object instance of a rendered scene, as written to `objects.json`.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TruthObject {
    /// The instance number in `instances.png` (1..).
    pub id: u32,
    /// Canonical class name.
    pub class: String,
    pub class_id: ClassId,
    /// Pixel box `[x0, y0, x1, y1)`, end exclusive.
    pub bbox: [u32; 4],
    /// Visible pixels.
    pub area: u64,
    /// The instance this one rests on, when that instance is visible too.
    pub rests_on: Option<u32>,
}

/// What `scene.json` says about a scene.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SceneMetadata {
    pub name: String,
    /// Taxonomy room name.
    pub room: String,
    pub width: u32,
    pub height: u32,
    pub seed: u64,
    pub renderer_version: String,
    pub description: String,
}

/// A finished scene: the rasters and the records, ready to write.
#[derive(Clone, Debug, PartialEq)]
pub struct RenderedScene {
    pub image: RgbImage,
    pub depth: DepthImage,
    /// Class id per pixel (255 = unlabelled).
    pub labels: IndexImage,
    /// Instance number per pixel (0 = floor, walls, ceiling).
    pub instances: IndexImage,
    pub objects: Vec<TruthObject>,
    pub metadata: SceneMetadata,
}

/// Renders one scene.
pub fn render_scene(
    taxonomy: &Taxonomy,
    request: &SceneRequest,
) -> Result<RenderedScene, RenderError> {
    let size_ok = |side: u32| (16..=4096).contains(&side);
    if !size_ok(request.width) || !size_ok(request.height) {
        return Err(RenderError::BadSize {
            width: request.width,
            height: request.height,
        });
    }
    let draft = layouts::build_scene(
        taxonomy,
        &request.room,
        request.seed,
        request.width,
        request.height,
    )?;
    let frame = shade::render_frame(&draft, random::mix64(request.seed ^ 0x5E45_0B5E));
    let (instances, objects) = measure_objects(taxonomy, &draft.instances, &frame.instances);
    Ok(RenderedScene {
        image: frame.image,
        depth: frame.depth,
        labels: frame.labels,
        instances,
        objects,
        metadata: SceneMetadata {
            name: request.name.clone(),
            room: request.room.clone(),
            width: request.width,
            height: request.height,
            seed: request.seed,
            renderer_version: RENDERER_VERSION.to_string(),
            description: draft.description,
        },
    })
}

/// Renumbers visible instances densely from 1 in declaration order and measures each one.
fn measure_objects(
    taxonomy: &Taxonomy,
    declarations: &[builder::InstanceDeclaration],
    declared_map: &IndexImage,
) -> (IndexImage, Vec<TruthObject>) {
    let count = declarations.len() + 1;
    let mut area = vec![0u64; count];
    let mut boxes = vec![[u32::MAX, u32::MAX, 0u32, 0u32]; count];
    for y in 0..declared_map.height {
        for x in 0..declared_map.width {
            let number = declared_map.get(x, y) as usize;
            if number == 0 || number >= count {
                continue;
            }
            area[number] += 1;
            let bbox = &mut boxes[number];
            bbox[0] = bbox[0].min(x);
            bbox[1] = bbox[1].min(y);
            bbox[2] = bbox[2].max(x + 1);
            bbox[3] = bbox[3].max(y + 1);
        }
    }
    let mut renumbered = vec![0u16; count];
    let mut next = 0u16;
    for number in 1..count {
        if area[number] > 0 {
            next += 1;
            renumbered[number] = next;
        }
    }
    let mut objects = Vec::new();
    for (index, declaration) in declarations.iter().enumerate() {
        let number = index + 1;
        if renumbered[number] == 0 {
            continue;
        }
        let rests_on = declaration
            .rests_on
            .map(|support| renumbered.get(support as usize).copied().unwrap_or(0))
            .filter(|&support| support != 0)
            .map(u32::from);
        objects.push(TruthObject {
            id: renumbered[number] as u32,
            class: taxonomy.class_name(declaration.class).to_string(),
            class_id: declaration.class,
            bbox: boxes[number],
            area: area[number],
            rests_on,
        });
    }
    let values = declared_map
        .values
        .iter()
        .map(|&number| renumbered.get(number as usize).copied().unwrap_or(0))
        .collect();
    (
        IndexImage {
            width: declared_map.width,
            height: declared_map.height,
            values,
        },
        objects,
    )
}

#[cfg(test)]
mod tests {
    use super::builder::InstanceDeclaration;
    use super::*;

    fn small(room: &str, seed: u64) -> SceneRequest {
        SceneRequest {
            width: 96,
            height: 72,
            ..SceneRequest::new(room, seed)
        }
    }

    #[test]
    fn same_request_same_scene_other_seed_other_scene() {
        let taxonomy = Taxonomy::embedded();
        let first = render_scene(&taxonomy, &small("office", 7)).unwrap();
        let again = render_scene(&taxonomy, &small("office", 7)).unwrap();
        let other = render_scene(&taxonomy, &small("office", 8)).unwrap();
        assert_eq!(first, again);
        assert_ne!(first.image, other.image);
    }

    #[test]
    fn every_room_type_renders_with_floor_walls_and_objects() {
        let taxonomy = Taxonomy::embedded();
        let floor = taxonomy.class_by_name("floor").unwrap().id.0;
        let wall = taxonomy.class_by_name("wall").unwrap().id.0;
        for room in ROOM_TYPES {
            let scene = render_scene(&taxonomy, &small(room, 3)).unwrap();
            assert!(scene.labels.values.contains(&floor), "{room} has no floor");
            assert!(scene.labels.values.contains(&wall), "{room} has no wall");
            assert!(
                scene.objects.len() >= 5,
                "{room} has {} objects",
                scene.objects.len()
            );
            assert_eq!(scene.metadata.room, room);
        }
    }

    #[test]
    fn bad_requests_are_typed_errors() {
        let taxonomy = Taxonomy::embedded();
        let error = render_scene(&taxonomy, &SceneRequest::new("attic", 1)).unwrap_err();
        assert!(matches!(error, RenderError::UnknownRoom(ref room) if room == "attic"));
        assert!(error.to_string().contains("kitchen"));
        let tiny = SceneRequest {
            width: 4,
            ..SceneRequest::new("kitchen", 1)
        };
        assert!(matches!(
            render_scene(&taxonomy, &tiny),
            Err(RenderError::BadSize { width: 4, .. })
        ));
    }

    #[test]
    fn hidden_instances_are_dropped_and_supports_renumbered() {
        let taxonomy = Taxonomy::embedded();
        let class = |name: &str| taxonomy.class_by_name(name).unwrap().id;
        // Declared: 1 table (visible), 2 box (hidden), 3 mug on the table, 4 book on the hidden box.
        let declarations = [
            InstanceDeclaration {
                class: class("table"),
                rests_on: None,
            },
            InstanceDeclaration {
                class: class("box"),
                rests_on: None,
            },
            InstanceDeclaration {
                class: class("mug"),
                rests_on: Some(1),
            },
            InstanceDeclaration {
                class: class("book"),
                rests_on: Some(2),
            },
        ];
        let map = IndexImage {
            width: 4,
            height: 2,
            values: vec![0, 1, 1, 3, 0, 1, 4, 4],
        };
        let (renumbered, objects) = measure_objects(&taxonomy, &declarations, &map);
        assert_eq!(renumbered.values, vec![0, 1, 1, 2, 0, 1, 3, 3]);
        assert_eq!(objects.len(), 3);
        assert_eq!(objects[0].bbox, [1, 0, 3, 2]);
        assert_eq!(objects[0].area, 3);
        assert_eq!(
            (objects[1].class.as_str(), objects[1].rests_on),
            ("mug", Some(1))
        );
        assert_eq!(
            (objects[2].class.as_str(), objects[2].rests_on),
            ("book", None)
        );
    }
}
