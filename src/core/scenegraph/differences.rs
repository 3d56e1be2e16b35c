//! What a turn visibly did to the scene graph's objects: objects joined, split, added and removed, read off
//! the graph before the turn and the graph after it by shared member segments.
//!
//! Owns: `ObjectDifference` and `object_differences`. Must not: solve or form objects; it compares two graphs.
//!
//! An object after the turn that shares segments with two or more objects of its class before it joined them;
//! an object before the turn whose segments two or more objects of its class now share was split; an object
//! with no segment shared with an object of its class on the other side was added (after) or removed (before).

use serde::{Deserialize, Serialize};

use crate::ids::{ClassId, ObjectId};

use super::SceneGraph;

/// One visible change to the objects.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "change", rename_all = "snake_case")]
pub enum ObjectDifference {
    /// Several objects of a class are now one.
    Joined {
        class: ClassId,
        parts: Vec<ObjectId>,
        into: ObjectId,
    },
    /// One object of a class is now several.
    Split {
        class: ClassId,
        from: ObjectId,
        into: Vec<ObjectId>,
    },
    Added {
        class: ClassId,
        id: ObjectId,
    },
    Removed {
        class: ClassId,
        id: ObjectId,
    },
}

/// Per object of `graph`, its class and a membership flag per fine segment.
fn member_sets(graph: &SceneGraph, segments: usize) -> Vec<Vec<bool>> {
    graph
        .objects
        .iter()
        .map(|object| {
            let mut flags = vec![false; segments];
            for member in &object.members {
                if let Some(flag) = flags.get_mut(member.index()) {
                    *flag = true;
                }
            }
            flags
        })
        .collect()
}

/// The visible differences between the objects of `before` and `after` (see the module doc).
pub fn object_differences(before: &SceneGraph, after: &SceneGraph) -> Vec<ObjectDifference> {
    let segments = before.segment_labels.len().max(after.segment_labels.len());
    let before_sets = member_sets(before, segments);
    // For each object on one side, the objects of its class on the other side it shares a segment with.
    let shared_with =
        |object: &super::SceneObject, others: &SceneGraph, sets: &[Vec<bool>]| -> Vec<usize> {
            (0..others.objects.len())
                .filter(|&o| {
                    others.objects[o].class == object.class
                        && object
                            .members
                            .iter()
                            .any(|m| sets[o].get(m.index()).copied().unwrap_or(false))
                })
                .collect()
        };
    let after_sets = member_sets(after, segments);
    let mut differences = Vec::new();
    for object in &after.objects {
        let sources = shared_with(object, before, &before_sets);
        match sources.len() {
            0 => differences.push(ObjectDifference::Added {
                class: object.class,
                id: object.id,
            }),
            1 => {}
            _ => differences.push(ObjectDifference::Joined {
                class: object.class,
                parts: sources.iter().map(|&o| before.objects[o].id).collect(),
                into: object.id,
            }),
        }
    }
    for object in &before.objects {
        let targets = shared_with(object, after, &after_sets);
        match targets.len() {
            0 => differences.push(ObjectDifference::Removed {
                class: object.class,
                id: object.id,
            }),
            1 => {}
            _ => differences.push(ObjectDifference::Split {
                class: object.class,
                from: object.id,
                into: targets.iter().map(|&o| after.objects[o].id).collect(),
            }),
        }
    }
    differences
}

/// The class a difference is about.
pub fn difference_class(difference: &ObjectDifference) -> ClassId {
    match difference {
        ObjectDifference::Joined { class, .. }
        | ObjectDifference::Split { class, .. }
        | ObjectDifference::Added { class, .. }
        | ObjectDifference::Removed { class, .. } => *class,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ids::{HypothesisId, RoomId, SegmentId};
    use crate::scene::BoundingBox;
    use crate::scenegraph::{RunLengthMask, SceneGraph, SceneObject};

    fn object(id: u32, class: u16, members: &[u32]) -> SceneObject {
        SceneObject {
            id: ObjectId(id),
            hypothesis: HypothesisId(id),
            class: ClassId(class),
            class_name: String::new(),
            score: 0.0,
            bbox: BoundingBox {
                x0: 0,
                y0: 0,
                x1: 1,
                y1: 1,
            },
            members: members.iter().map(|&m| SegmentId(m)).collect(),
            mask: RunLengthMask {
                width: 1,
                height: 1,
                runs: Vec::new(),
            },
        }
    }

    fn graph(objects: Vec<SceneObject>) -> SceneGraph {
        SceneGraph {
            schema: 1,
            scene: String::new(),
            room: RoomId(0),
            room_name: String::new(),
            objects,
            relations: Vec::new(),
            relations_nearest: None,
            segment_labels: vec![ClassId(0); 10],
            energy: 0.0,
            lower_bound: 0.0,
            relative_gap: 0.0,
        }
    }

    #[test]
    fn joins_splits_additions_and_removals_are_named() {
        let before = graph(vec![
            object(1, 11, &[0, 1]),
            object(2, 11, &[2]),
            object(3, 12, &[3, 4, 5]),
            object(4, 13, &[6]),
        ]);
        let after = graph(vec![
            object(5, 11, &[0, 1, 2]),
            object(6, 12, &[3]),
            object(7, 12, &[4, 5]),
            object(8, 14, &[7]),
        ]);
        let differences = object_differences(&before, &after);
        assert!(differences.contains(&ObjectDifference::Joined {
            class: ClassId(11),
            parts: vec![ObjectId(1), ObjectId(2)],
            into: ObjectId(5)
        }));
        assert!(differences.contains(&ObjectDifference::Split {
            class: ClassId(12),
            from: ObjectId(3),
            into: vec![ObjectId(6), ObjectId(7)]
        }));
        assert!(differences.contains(&ObjectDifference::Added {
            class: ClassId(14),
            id: ObjectId(8)
        }));
        assert!(differences.contains(&ObjectDifference::Removed {
            class: ClassId(13),
            id: ObjectId(4)
        }));
        assert_eq!(differences.len(), 4);
        assert!(object_differences(&after, &after).is_empty());
    }
}
