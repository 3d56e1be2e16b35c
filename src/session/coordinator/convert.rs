//! Conversions from internal values (constraints, changes, summaries, focus) to wire shapes and back.
//!
//! Owns: naming classes and rooms for callers, and the wire spelling of constraint kinds.
//! Must not: change any value's meaning; a conversion only renames.

use crate::correction_log::{SceneKey, VersionKey};
use crate::ids::{ClassId, ObjectId};
use crate::language::constraint::{Constraint, ConstraintKind, Focus};
use crate::raster::IndexImage;
use crate::taxonomy::Taxonomy;
use crate::turn::Candidate;

use super::SceneSlot;
use crate::corrector::{ReportedChange, ReportedUnmet, SceneSummary};
use crate::wire::{
    CandidateOut, ChangeOut, ConstraintOut, FocusIn, ObjectOut, PixelBox, SceneGraphOut, TextSpan,
    UnmetOut,
};

pub(crate) fn focus_from_wire(focus: FocusIn) -> Focus {
    match focus {
        FocusIn::Object { object_id } => Focus::Object {
            id: ObjectId(object_id),
        },
        FocusIn::Pixel { x, y } => Focus::Pixel { x, y },
    }
}

pub(crate) fn constraint_kind_name(kind: &ConstraintKind) -> &'static str {
    match kind {
        ConstraintKind::Present { .. } => "present",
        ConstraintKind::Absent { .. } => "absent",
        ConstraintKind::Count { .. } => "count",
        ConstraintKind::Relation { .. } => "relation",
        ConstraintKind::Place { .. } => "place",
        ConstraintKind::Relabel { .. } => "relabel",
        ConstraintKind::Attribute { .. } => "attribute",
        ConstraintKind::RoomType { .. } => "room_type",
    }
}

pub(crate) fn constraint_out(constraint: &Constraint) -> ConstraintOut {
    ConstraintOut {
        kind: constraint_kind_name(&constraint.kind).to_string(),
        gloss: constraint.gloss.clone(),
        confidence: constraint.confidence,
        span: TextSpan {
            start: constraint.span.start,
            end: constraint.span.end,
        },
    }
}

pub(crate) fn change_out(change: &ReportedChange, taxonomy: &Taxonomy) -> ChangeOut {
    ChangeOut {
        object_id: change.object.map(|object| object.0),
        from: change
            .from
            .map(|class| taxonomy.class_name(class).to_string()),
        to: change
            .to
            .map(|class| taxonomy.class_name(class).to_string()),
        pixels: change.pixels,
        description: change.description.clone(),
    }
}

pub(crate) fn focus_to_wire(focus: Focus) -> FocusIn {
    match focus {
        Focus::Object { id } => FocusIn::Object { object_id: id.0 },
        Focus::Pixel { x, y } => FocusIn::Pixel { x, y },
    }
}

pub(crate) fn candidate_out(candidate: &Candidate, taxonomy: &Taxonomy) -> CandidateOut {
    CandidateOut {
        object_id: candidate.object.0,
        class: candidate
            .class
            .map(|class| taxonomy.class_name(class).to_string()),
        description: candidate.description.clone(),
        bbox: candidate.bbox.map(|b| PixelBox {
            x0: b.x0,
            y0: b.y0,
            x1: b.x1,
            y1: b.y1,
        }),
    }
}

/// The labels that moved from one label map to another, summed in pixels per (from, to) pair, largest
/// first: what an undo or redo changed back.
pub(crate) fn label_changes(
    before: &IndexImage,
    after: &IndexImage,
    taxonomy: &Taxonomy,
) -> Vec<ChangeOut> {
    let mut pairs: std::collections::BTreeMap<(u16, u16), u64> = Default::default();
    if before.width == after.width && before.height == after.height {
        for (&from, &to) in before.values.iter().zip(&after.values) {
            if from != to {
                *pairs.entry((from, to)).or_default() += 1;
            }
        }
    }
    let name = |label: u16| taxonomy.class_name(ClassId(label)).to_string();
    let mut out: Vec<ChangeOut> = pairs
        .into_iter()
        .map(|((from, to), pixels)| ChangeOut {
            object_id: None,
            from: Some(name(from)),
            to: Some(name(to)),
            pixels,
            description: format!("{} -> {}", name(from), name(to)),
        })
        .collect();
    out.sort_by_key(|change| std::cmp::Reverse(change.pixels));
    out
}

pub(crate) fn unmet_out(unmet: &ReportedUnmet) -> UnmetOut {
    UnmetOut {
        gloss: unmet.gloss.clone(),
        reason: unmet.reason.clone(),
    }
}

pub(crate) fn scene_graph(scene: SceneKey, slot: &SceneSlot, taxonomy: &Taxonomy) -> SceneGraphOut {
    scene_graph_of(scene, slot, slot.head, &slot.state.summary, taxonomy)
}

/// The scene graph of one version of a scene (`summary` is that version's).
pub(crate) fn scene_graph_of(
    scene: SceneKey,
    slot: &SceneSlot,
    version: VersionKey,
    summary: &SceneSummary,
    taxonomy: &Taxonomy,
) -> SceneGraphOut {
    SceneGraphOut {
        scene_id: scene.0,
        name: slot.name.clone(),
        version: version.0,
        width: slot.input.image.width,
        height: slot.input.image.height,
        room: summary
            .room
            .and_then(|room| taxonomy.room(room))
            .map(|room| room.name.clone()),
        objects: summary
            .objects
            .iter()
            .map(|object| ObjectOut {
                object_id: object.id.0,
                class: taxonomy.class_name(object.class).to_string(),
                class_id: object.class.0,
                safety: taxonomy.is_safety_critical(object.class),
                bbox: PixelBox {
                    x0: object.bbox.x0,
                    y0: object.bbox.y0,
                    x1: object.bbox.x1,
                    y1: object.bbox.y1,
                },
                area_pixels: object.area,
            })
            .collect(),
    }
}
