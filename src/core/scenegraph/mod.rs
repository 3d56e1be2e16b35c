//! The corrected scene graph: objects, relations, room type, per-segment labels and the label map.
//!
//! Owns: `SceneGraph` and its parts, building it from a solved state (objects are formed from the final
//! labels and the accepted hypotheses, see `objects`), run-length masks, the label map, and
//! (in `changes`) the change list with causes, unmet constraints and safety holds. `crate::turn::solve` runs
//! grounding, energy, solver and this stage in order.
//! Must not: search for solutions, call the solver or read words; it describes a state the solver returned.

pub mod bisect;
pub mod capped;
pub mod changes;
pub mod differences;
pub mod instance_statistics;
pub mod instances;
pub mod leftovers;
pub mod locality;
pub mod objects;
pub mod relations;
pub mod split;
pub mod supersede;

use serde::{Deserialize, Serialize};

use crate::energy::JointState;
use crate::grounding::footprint_of;
use crate::hypotheses::Hypothesis;
use crate::ids::{ClassId, HypothesisId, ObjectId, RoomId, SegmentId};
use crate::language::constraint::Relation;
use crate::raster::IndexImage;
use crate::scene::{BoundingBox, Scene};
use crate::taxonomy::{ClassGroup, Taxonomy};
use objects::form_objects;

/// The schema of the scene graph JSON.
pub const SCENE_GRAPH_SCHEMA: u32 = 1;

/// A binary mask as run lengths over the image in row-major order, starting with a run of pixels outside.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RunLengthMask {
    pub width: u32,
    pub height: u32,
    /// Alternating run lengths: outside, inside, outside, ...
    pub runs: Vec<u32>,
}

/// One flag per segment: is it among `members` (ids outside the scene are ignored).
fn member_flags(scene: &Scene, members: &[SegmentId]) -> Vec<bool> {
    let mut member = vec![false; scene.segment_count()];
    for s in members {
        if let Some(flag) = member.get_mut(s.index()) {
            *flag = true;
        }
    }
    member
}

impl RunLengthMask {
    /// Encodes the pixels whose segment is in `members`. Only the rows and columns of the members' bounding
    /// boxes (from the scene's segment statistics) are read; everything outside them is counted as outside.
    pub fn from_segments(scene: &Scene, members: &[SegmentId]) -> RunLengthMask {
        let (width, height) = (scene.segments.width, scene.segments.height);
        let member = member_flags(scene, members);
        let mut bounds: Option<BoundingBox> = None;
        for s in members {
            if s.index() < member.len() {
                if let Some(stats) = scene.stats.get(s.index()) {
                    bounds = Some(match bounds {
                        Some(bounds) => bounds.union(&stats.bbox),
                        None => stats.bbox,
                    });
                }
            }
        }
        let outside_everything = RunLengthMask {
            width,
            height,
            runs: vec![width * height],
        };
        let Some(bounds) = bounds else {
            return outside_everything;
        };
        let (x0, x1) = (bounds.x0.min(width), bounds.x1.min(width));
        let (y0, y1) = (bounds.y0.min(height), bounds.y1.min(height));
        if x0 >= x1 || y0 >= y1 {
            return outside_everything;
        }
        let mut runs = Vec::new();
        let mut inside = false;
        // Pixels before the box's first pixel are outside.
        let mut length = y0 * width + x0;
        let labels = &scene.segments.labels;
        for y in y0..y1 {
            let row = (y * width) as usize;
            for &label in &labels[row + x0 as usize..row + x1 as usize] {
                let here = member.get(label as usize).copied().unwrap_or(false);
                if here != inside {
                    runs.push(length);
                    length = 0;
                    inside = here;
                }
                length += 1;
            }
            // From the box's right edge to the next row's left edge (or to the end of the image).
            let gap = if y + 1 < y1 {
                width - (x1 - x0)
            } else {
                (width - x1) + (height - y1) * width
            };
            if gap > 0 && inside {
                runs.push(length);
                length = 0;
                inside = false;
            }
            length += gap;
        }
        runs.push(length);
        RunLengthMask {
            width,
            height,
            runs,
        }
    }

    /// The reference encoding: every pixel of the image read in order (small inputs, tests).
    pub fn from_segments_by_full_scan(scene: &Scene, members: &[SegmentId]) -> RunLengthMask {
        let member = member_flags(scene, members);
        let mut runs = Vec::new();
        let mut inside = false;
        let mut length = 0u32;
        for &label in &scene.segments.labels {
            let here = member.get(label as usize).copied().unwrap_or(false);
            if here != inside {
                runs.push(length);
                length = 0;
                inside = here;
            }
            length += 1;
        }
        runs.push(length);
        RunLengthMask {
            width: scene.segments.width,
            height: scene.segments.height,
            runs,
        }
    }

    /// Decodes to one flag per pixel.
    pub fn decode(&self) -> Vec<bool> {
        let mut pixels = Vec::with_capacity(self.width as usize * self.height as usize);
        for (index, &run) in self.runs.iter().enumerate() {
            pixels.extend(std::iter::repeat_n(index % 2 == 1, run as usize));
        }
        pixels
    }
}

/// One object of the corrected scene (formed as `objects` describes).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SceneObject {
    pub id: ObjectId,
    pub hypothesis: HypothesisId,
    pub class: ClassId,
    pub class_name: String,
    /// The score of the hypothesis the object is named after (0 when no hypothesis shares a segment with it).
    pub score: f32,
    pub bbox: BoundingBox,
    pub members: Vec<SegmentId>,
    pub mask: RunLengthMask,
}

/// A relation between two objects, computed from the final geometry.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct ObjectRelation {
    pub subject: ObjectId,
    pub relation: Relation,
    pub object: ObjectId,
}

/// The corrected scene graph.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SceneGraph {
    pub schema: u32,
    pub scene: String,
    pub room: RoomId,
    pub room_name: String,
    pub objects: Vec<SceneObject>,
    pub relations: Vec<ObjectRelation>,
    /// Absent when every pair of objects was tested for `relations`; on a scene of more than
    /// `relations::ALL_PAIRS_UP_TO` objects, the number of nearest objects (by the gap between their
    /// boxes) each object was tested against (`relations::NEAREST`), so farther pairs are not reported.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub relations_nearest: Option<u32>,
    /// One class per fine segment.
    pub segment_labels: Vec<ClassId>,
    pub energy: f64,
    pub lower_bound: f64,
    pub relative_gap: f64,
}

/// The object id of a hypothesis: the hypothesis id, so objects keep their ids across re-solves.
pub fn object_id(hypothesis: HypothesisId) -> ObjectId {
    ObjectId(hypothesis.0)
}

/// Relations reported between objects (structure classes such as walls take part only as landmarks of `On`).
pub const REPORTED_RELATIONS: [Relation; 7] = [
    Relation::On,
    Relation::Under,
    Relation::Inside,
    Relation::NextTo,
    Relation::LeftOf,
    Relation::InFrontOf,
    Relation::Behind,
];

/// How a solved state is described: the energy's figures and the classes the operator counted.
#[derive(Clone, Copy, Debug)]
pub struct SolvedFigures<'a> {
    pub energy: f64,
    pub lower_bound: f64,
    pub relative_gap: f64,
    /// Classes named by a count constraint in force, with the least number of objects it asks for (see
    /// `objects` for how merged objects of such a class are split).
    pub counted: &'a [(ClassId, u32)],
    /// Classes with an upper bound in force (see `capped` for how their parts are joined).
    pub capped: &'a [capped::Cap],
    /// An earlier graph of the same scene (the parent version's): an object with exactly the members of one
    /// of its objects takes that object's mask instead of encoding it again (a mask is a function of the
    /// scene and the members alone).
    pub earlier: Option<&'a SceneGraph>,
}

/// Builds the scene graph of a solved state.
pub fn build_scene_graph(
    scene: &Scene,
    taxonomy: &Taxonomy,
    hypotheses: &[Hypothesis],
    state: &JointState,
    figures: SolvedFigures<'_>,
    cuts: &instances::InstanceCuts,
) -> SceneGraph {
    let fine = scene.segment_count();
    let labels = &state.labels[..fine.min(state.labels.len())];
    let mut used = std::collections::BTreeSet::new();
    let objects = form_objects(
        scene,
        labels,
        hypotheses,
        &state.hypotheses_on,
        figures.counted,
        cuts,
    );
    let mut objects: Vec<SceneObject> = capped::merge_parts(scene, objects, figures.capped)
        .into_iter()
        .map(|formed| {
            let footprint = footprint_of(scene, &formed.members);
            // Ids are unique even in the (hash-collision) case of two objects naming the same id.
            let mut id = object_id(formed.hypothesis);
            while !used.insert(id) {
                id = ObjectId(id.0.wrapping_add(1));
            }
            SceneObject {
                id,
                hypothesis: formed.hypothesis,
                class: formed.class,
                class_name: taxonomy.class_name(formed.class).to_string(),
                score: formed
                    .hypothesis_index
                    .and_then(|index| hypotheses.get(index))
                    .map(|hypothesis| hypothesis.score)
                    .unwrap_or(0.0),
                bbox: footprint.bbox,
                mask: figures
                    .earlier
                    .and_then(|earlier| {
                        earlier
                            .objects
                            .iter()
                            .find(|object| object.members == formed.members)
                    })
                    .map(|object| object.mask.clone())
                    .unwrap_or_else(|| RunLengthMask::from_segments(scene, &formed.members)),
                members: formed.members,
            }
        })
        .collect();
    objects.sort_by_key(|object| object.id);
    let footprints: Vec<_> = objects
        .iter()
        .map(|object| footprint_of(scene, &object.members))
        .collect();
    let is_structure = |object: &SceneObject| {
        taxonomy
            .class(object.class)
            .is_some_and(|info| info.group == ClassGroup::Structure)
    };
    let (relations, relations_nearest) =
        relations::relate(scene, &objects, &footprints, is_structure);
    let room = RoomId(state.room);
    SceneGraph {
        schema: SCENE_GRAPH_SCHEMA,
        scene: scene.name.clone(),
        room,
        room_name: taxonomy
            .room(room)
            .map(|info| info.name.clone())
            .unwrap_or_else(|| "unknown".to_string()),
        objects,
        relations,
        relations_nearest,
        segment_labels: state
            .labels
            .iter()
            .take(fine)
            .map(|&label| ClassId(label))
            .collect(),
        energy: figures.energy,
        lower_bound: figures.lower_bound,
        relative_gap: figures.relative_gap,
    }
}

/// The label map: every pixel carries its segment's class id (write it with `crate::raster::write_index_png`).
pub fn label_map(scene: &Scene, segment_labels: &[ClassId]) -> IndexImage {
    let values = scene
        .segments
        .labels
        .iter()
        .map(|&segment| {
            segment_labels
                .get(segment as usize)
                .map(|class| class.0)
                .unwrap_or(crate::taxonomy::UNLABELLED)
        })
        .collect();
    IndexImage {
        width: scene.segments.width,
        height: scene.segments.height,
        values,
    }
}

/// One region id per pixel for outlining the scene graph's objects (`crate::overlay::RegionMap`): the
/// pixels of object `i` carry `i`; a segment in no object carries `u32::MAX - class`, so the stuff
/// around objects is outlined by class, never by superpixel.
pub fn object_regions(scene: &Scene, graph: &SceneGraph) -> Vec<u32> {
    let mut object_of = vec![None; scene.segment_count()];
    for (index, object) in graph.objects.iter().enumerate() {
        for member in &object.members {
            if let Some(slot) = object_of.get_mut(member.index()) {
                *slot = Some(index as u32);
            }
        }
    }
    scene
        .segments
        .labels
        .iter()
        .map(|&segment| {
            let segment = segment as usize;
            match object_of.get(segment).copied().flatten() {
                Some(object) => object,
                None => {
                    let class = graph
                        .segment_labels
                        .get(segment)
                        .map_or(u32::from(u16::MAX), |c| u32::from(c.0));
                    u32::MAX - class
                }
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::test_scenes::blocks;

    proptest::proptest! {
        /// The bounding-box scan encodes the same runs as reading every pixel.
        #[test]
        fn boxed_scan_matches_the_full_scan(picks in proptest::collection::vec(0u32..64, 0..12)) {
            let scene = blocks();
            let members: Vec<SegmentId> = picks
                .iter()
                .map(|&pick| SegmentId(pick % scene.segment_count() as u32))
                .collect();
            let fast = RunLengthMask::from_segments(scene, &members);
            let reference = RunLengthMask::from_segments_by_full_scan(scene, &members);
            proptest::prop_assert_eq!(&fast, &reference);
            let inside = fast.decode().iter().filter(|&&flag| flag).count();
            let expected: u64 = (0..scene.segment_count())
                .filter(|&s| members.iter().any(|m| m.index() == s))
                .map(|s| scene.stats[s].area as u64)
                .sum();
            proptest::prop_assert_eq!(inside as u64, expected);
        }
    }
}
