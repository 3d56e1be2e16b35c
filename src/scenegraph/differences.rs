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
