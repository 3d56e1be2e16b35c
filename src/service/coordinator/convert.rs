//! Conversions from internal values (constraints, changes, summaries, focus) to wire shapes and back.
//!
//! Owns: naming classes and rooms for callers, and the wire spelling of constraint kinds.
//! Must not: change any value's meaning; a conversion only renames.

use crate::correction_log::SceneKey;
use crate::ids::ObjectId;
use crate::language::constraint::{Constraint, ConstraintKind, Focus};
use crate::taxonomy::Taxonomy;

use super::super::corrector::{Change, Unmet};
use super::super::wire::{
    ChangeOut, ConstraintOut, FocusIn, ObjectOut, PixelBox, SceneGraphOut, TextSpan, UnmetOut,
};
use super::SceneSlot;

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

pub(crate) fn change_out(change: &Change, taxonomy: &Taxonomy) -> ChangeOut {
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

pub(crate) fn unmet_out(unmet: &Unmet) -> UnmetOut {
    UnmetOut {
        gloss: unmet.gloss.clone(),
        reason: unmet.reason.clone(),
    }
}

pub(crate) fn scene_graph(scene: SceneKey, slot: &SceneSlot, taxonomy: &Taxonomy) -> SceneGraphOut {
    SceneGraphOut {
        scene_id: scene.0,
        name: slot.name.clone(),
        version: slot.head.0,
        width: slot.input.image.width,
        height: slot.input.image.height,
        room: slot
            .state
            .summary
            .room
            .and_then(|room| taxonomy.room(room))
            .map(|room| room.name.clone()),
        objects: slot
            .state
            .summary
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
