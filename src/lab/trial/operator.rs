//! The automatic operator of `sayso trial`: looks at what the robot shows and at the ground truth, and picks
//! the most useful true fact to say.
//!
//! Owns: `Fact` (a true statement about a rendered scene), the candidate facts of a shown state with their
//! value (the pixels the fact is about that the robot has wrong), the pointing pixel of a relabel, and the
//! sentence a fact becomes. Every fact is read off the renderer's ground truth (labels, instances, objects and
//! what rests on what); nothing is read from the parser or the energy.
//! Must not: parse, solve or score.

use std::collections::BTreeMap;

use crate::demo::DemoScene;
use crate::evaluation::PredictedObject;
use crate::ids::{ClassId, RoomId};
use crate::taxonomy::{ClassGroup, Taxonomy, UNLABELLED};

use super::phrasings::{fill, Phrasings, Slots};

/// The sections of `phrasings.toml` the operator speaks with.
pub const SECTIONS: [&str; 11] = [
    "absent",
    "present",
    "count_exact",
    "count_one",
    "room",
    "relabel_point",
    "relation_on",
    "relation_next_to",
    "relation_left_of",
    "relation_right_of",
    "relation_under",
];

/// The smallest visible area (pixels of a 640x480 render) an operator is taken to notice and count: objects
/// smaller than this are never the subject of a fact, and a class with such a sliver is never counted (our
/// own choice, about a 20x20 patch).
pub const MIN_VISIBLE: u64 = 400;

/// The smallest shown object (pixels) the operator notices when counting what the robot shows (our own
/// choice: half of `MIN_VISIBLE`).
pub const MIN_NOTICED: u64 = MIN_VISIBLE / 2;

/// A relation the operator states between a missed object and one the robot shows.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum FactRelation {
    On,
    NextTo,
    LeftOf,
    RightOf,
    Under,
}

/// A true statement about a rendered scene.
#[derive(Clone, Debug, PartialEq)]
pub enum Fact {
    /// The class is nowhere in the scene (the robot shows it).
    Absent { class: ClassId },
    /// The class is in the scene (the robot shows none).
    Present { class: ClassId },
    /// Exactly `count` objects of the class are visible (the robot shows another number).
    Count { class: ClassId, count: u32 },
    /// The room type (the robot guessed another).
    Room { room: RoomId },
    /// The object under pixel (x, y) is a `class`, not the `wrong` the robot shows there.
    Relabel {
        class: ClassId,
        wrong: ClassId,
        x: u32,
        y: u32,
        object: u32,
    },
    /// A `class` object (missed) stands in `relation` to a `landmark` object the robot shows.
    Relation {
        class: ClassId,
        relation: FactRelation,
        landmark: ClassId,
        object: u32,
    },
}

impl Fact {
    /// A short name of the fact's kind, for tables.
    pub fn kind(&self) -> &'static str {
        match self {
            Fact::Absent { .. } => "absent",
            Fact::Present { .. } => "present",
            Fact::Count { .. } => "count",
            Fact::Room { .. } => "room",
            Fact::Relabel { .. } => "point",
            Fact::Relation { .. } => "relation",
        }
    }

    /// Two facts with one key are about the same thing: the operator does not say it twice.
    fn key(&self) -> (u8, u32) {
        match *self {
            Fact::Absent { class } | Fact::Present { class } | Fact::Count { class, .. } => {
                (0, class.0 as u32)
            }
            Fact::Room { .. } => (1, 0),
            Fact::Relabel { object, .. } | Fact::Relation { object, .. } => (2, object),
        }
    }

    /// The section of `phrasings.toml` that says this fact.
    pub fn section(&self) -> &'static str {
        match self {
            Fact::Absent { .. } => "absent",
            Fact::Present { .. } => "present",
            Fact::Count { count: 1, .. } => "count_one",
            Fact::Count { .. } => "count_exact",
            Fact::Room { .. } => "room",
            Fact::Relabel { .. } => "relabel_point",
            Fact::Relation { relation, .. } => match relation {
                FactRelation::On => "relation_on",
                FactRelation::NextTo => "relation_next_to",
                FactRelation::LeftOf => "relation_left_of",
                FactRelation::RightOf => "relation_right_of",
                FactRelation::Under => "relation_under",
            },
        }
    }

    /// The sentence: template number `pick` (modulo the section's size) with the fact's words filled in.
    pub fn sentence(&self, phrasings: &Phrasings, taxonomy: &Taxonomy, pick: u64) -> String {
        let templates = phrasings.templates(self.section());
        if templates.is_empty() {
            return String::new();
        }
        let template = &templates[(pick % templates.len() as u64) as usize];
        let name = |class: ClassId| taxonomy.class_name(class).to_string();
        let slots = match *self {
            Fact::Absent { class } | Fact::Present { class } => Slots {
                class: name(class),
                ..Slots::default()
            },
            Fact::Count { class, count } => Slots {
                class: name(class),
                count,
                ..Slots::default()
            },
            Fact::Room { room } => Slots {
                room: taxonomy
                    .room(room)
                    .map(|r| r.name.clone())
                    .unwrap_or_default(),
                ..Slots::default()
            },
            Fact::Relabel { class, wrong, .. } => Slots {
                class: name(class),
                wrong: name(wrong),
                ..Slots::default()
            },
            Fact::Relation {
                class, landmark, ..
            } => Slots {
                class: name(class),
                landmark: name(landmark),
                ..Slots::default()
            },
        };
        fill(template, &slots)
    }
}

/// What the robot shows, as the operator sees it: the label of every pixel, its objects and its room type.
pub struct Shown<'a> {
    pub labels: &'a [u16],
    pub objects: &'a [PredictedObject],
    /// For every ground-truth object (in `DemoScene::objects` order), whether a shown object matches it.
    pub matched: &'a [bool],
    pub room: RoomId,
}

/// Ground truth gathered once per scene.
struct Truth<'a> {
    scene: &'a DemoScene,
    /// Pixels of each ground-truth class.
    class_area: BTreeMap<u16, u64>,
    /// Pixels of every instance, by instance number.
    instance_pixels: BTreeMap<u16, Vec<u32>>,
}

impl<'a> Truth<'a> {
    fn new(scene: &'a DemoScene) -> Truth<'a> {
        let mut class_area = BTreeMap::new();
        for &label in &scene.labels.values {
            if label != UNLABELLED {
                *class_area.entry(label).or_insert(0u64) += 1;
            }
        }
        let mut instance_pixels: BTreeMap<u16, Vec<u32>> = BTreeMap::new();
        for (pixel, &instance) in scene.instances.values.iter().enumerate() {
            if instance != 0 && instance != UNLABELLED {
                instance_pixels
                    .entry(instance)
                    .or_default()
                    .push(pixel as u32);
            }
        }
        Truth {
            scene,
            class_area,
            instance_pixels,
        }
    }
}

/// Whether the operator would name a class in a count, presence or absence (not floor, wall or ceiling).
fn countable(taxonomy: &Taxonomy, class: ClassId) -> bool {
    taxonomy.class(class).is_some_and(|info| {
        info.group != ClassGroup::Structure
            || !matches!(info.name.as_str(), "floor" | "wall" | "ceiling")
    })
}

/// The value given to a room-type fact when the robot has the room wrong, in the pixel units of the other
/// facts (our own choice: about a mid-sized object).
const ROOM_VALUE: f64 = 1500.0;

/// Every true fact that addresses something the robot shows wrong, most valuable first, leaving out facts
/// about what `said` already covered. `prefer_relations` says a missed object that stands in a relation to a
/// shown object is described by that relation rather than pointed at.
pub fn candidate_facts(
    scene: &DemoScene,
    taxonomy: &Taxonomy,
    shown: &Shown<'_>,
    said: &[Fact],
    prefer_relations: bool,
) -> Vec<(Fact, f64)> {
    let truth = Truth::new(scene);
    let width = scene.labels.width as usize;
    let mut facts: Vec<(Fact, f64)> = Vec::new();
    let mut shown_area: BTreeMap<u16, u64> = BTreeMap::new();
    for &label in shown.labels {
        if label != UNLABELLED {
            *shown_area.entry(label).or_insert(0) += 1;
        }
    }
    let mut shown_objects: BTreeMap<u16, Vec<&PredictedObject>> = BTreeMap::new();
    for object in shown.objects {
        shown_objects
            .entry(object.class.0)
            .or_default()
            .push(object);
    }
    // Absent: a class the robot shows objects of that has no pixel in the truth.
    for (&class, objects) in &shown_objects {
        if countable(taxonomy, ClassId(class)) && !truth.class_area.contains_key(&class) {
            let value = shown_area.get(&class).copied().unwrap_or(0) as f64;
            if !objects.is_empty() && value > 0.0 {
                facts.push((
                    Fact::Absent {
                        class: ClassId(class),
                    },
                    value,
                ));
            }
        }
    }
    // Present and counts: per class of the truth's objects.
    let mut by_class: BTreeMap<u16, Vec<usize>> = BTreeMap::new();
    for (index, object) in scene.objects.iter().enumerate() {
        by_class.entry(object.class_id.0).or_default().push(index);
    }
    for (&class, members) in &by_class {
        if !countable(taxonomy, ClassId(class)) {
            continue;
        }
        // Only counted when every object of the class is plainly visible.
        if members
            .iter()
            .any(|&index| scene.objects[index].area < MIN_VISIBLE)
        {
            continue;
        }
        let truth_count = members.len() as u32;
        let shown_count = shown_objects.get(&class).map_or(0, Vec::len) as u32;
        if truth_count == shown_count {
            continue;
        }
        let missed: u64 = members
            .iter()
            .filter(|&&index| !shown.matched[index])
            .map(|&index| scene.objects[index].area)
            .sum();
        let spurious: u64 = shown_objects
            .get(&class)
            .map(|objects| {
                objects
                    .iter()
                    .filter(|object| !covers_a_truth_object(&truth, object, members))
                    .map(|object| object.pixels.len() as u64)
                    .sum()
            })
            .unwrap_or(0);
        let value = (missed + spurious) as f64;
        if value <= 0.0 {
            continue;
        }
        let fact = if shown_count == 0 && truth_count == 1 {
            Fact::Present {
                class: ClassId(class),
            }
        } else {
            Fact::Count {
                class: ClassId(class),
                count: truth_count,
            }
        };
        facts.push((fact, value));
    }
    // Room type.
    if let Some(room) = taxonomy.room_by_name(&scene.metadata.room) {
        if room.id != shown.room {
            facts.push((Fact::Room { room: room.id }, ROOM_VALUE));
        }
    }
    // Missed objects: pointed at, or placed by a relation.
    for (index, object) in scene.objects.iter().enumerate() {
        if shown.matched[index] || object.area < MIN_VISIBLE {
            continue;
        }
        let Some(pixels) = u16::try_from(object.id)
            .ok()
            .and_then(|id| truth.instance_pixels.get(&id))
        else {
            continue;
        };
        let wrong_pixels = pixels
            .iter()
            .filter(|&&p| shown.labels[p as usize] != object.class_id.0)
            .count() as f64;
        let relation = if prefer_relations {
            relation_of(scene, shown, index)
        } else {
            None
        };
        if let Some((relation, landmark)) = relation {
            facts.push((
                Fact::Relation {
                    class: object.class_id,
                    relation,
                    landmark,
                    object: object.id,
                },
                wrong_pixels,
            ));
            continue;
        }
        // The label the robot shows on most of the object.
        let mut votes: BTreeMap<u16, u64> = BTreeMap::new();
        for &pixel in pixels {
            *votes.entry(shown.labels[pixel as usize]).or_insert(0) += 1;
        }
        let Some((&wrong, &most)) = votes.iter().max_by_key(|(label, count)| (**count, **label))
        else {
            continue;
        };
        if wrong == object.class_id.0 || wrong == UNLABELLED || 2 * most < pixels.len() as u64 {
            continue;
        }
        if let Some((x, y)) = deepest_pixel(pixels, width, |p| shown.labels[p as usize] == wrong) {
            facts.push((
                Fact::Relabel {
                    class: object.class_id,
                    wrong: ClassId(wrong),
                    x,
                    y,
                    object: object.id,
                },
                wrong_pixels,
            ));
        }
    }
    facts.retain(|(fact, _)| !said.iter().any(|s| s.key() == fact.key()));
    facts.sort_by(|a, b| b.1.total_cmp(&a.1).then_with(|| a.0.key().cmp(&b.0.key())));
    facts
}

/// Whether a shown object covers at least half of one of the truth objects `members` (by index).
fn covers_a_truth_object(truth: &Truth<'_>, shown: &PredictedObject, members: &[usize]) -> bool {
    members.iter().any(|&index| {
        let object = &truth.scene.objects[index];
        let Some(pixels) = u16::try_from(object.id)
            .ok()
            .and_then(|id| truth.instance_pixels.get(&id))
        else {
            return false;
        };
        let shared = pixels
            .iter()
            .filter(|p| shown.pixels.binary_search(p).is_ok())
            .count();
        let union = pixels.len() + shown.pixels.len() - shared;
        union > 0 && 2 * shared >= union
    })
}

/// A relation of missed truth object `index` to a truth object the robot shows (matched): what it rests on,
/// else a shown neighbour beside it on the same support (left of, right of, next to), else a shown piece of
/// furniture it sits under.
fn relation_of(
    scene: &DemoScene,
    shown: &Shown<'_>,
    index: usize,
) -> Option<(FactRelation, ClassId)> {
    let object = &scene.objects[index];
    let position = |id: u32| scene.objects.iter().position(|o| o.id == id);
    if let Some(support) = object.rests_on.and_then(position) {
        let landmark = &scene.objects[support];
        if shown.matched[support] {
            return Some((FactRelation::On, landmark.class_id));
        }
    }
    let [x0, y0, x1, y1] = object.bbox;
    let width = x1.saturating_sub(x0).max(1);
    for (other_index, other) in scene.objects.iter().enumerate() {
        if other_index == index || !shown.matched[other_index] || other.class_id == object.class_id
        {
            continue;
        }
        let [ox0, oy0, ox1, oy1] = other.bbox;
        let vertical_overlap = y1.min(oy1) > y0.max(oy0);
        if other.rests_on == object.rests_on && vertical_overlap {
            // Beside: no horizontal overlap and a gap under the object's own width.
            if x1 <= ox0 && ox0 - x1 < width {
                let relation = if ox0 - x1 < width / 4 {
                    FactRelation::NextTo
                } else {
                    FactRelation::LeftOf
                };
                return Some((relation, other.class_id));
            }
            if ox1 <= x0 && x0 - ox1 < width {
                let relation = if x0 - ox1 < width / 4 {
                    FactRelation::NextTo
                } else {
                    FactRelation::RightOf
                };
                return Some((relation, other.class_id));
            }
        }
        let furniture = matches!(
            other.class.as_str(),
            "table" | "desk" | "bed" | "chair" | "counter" | "shelf" | "cabinet" | "sofa"
        );
        // Under: inside the furniture's width, its top below the furniture's top, its bottom at or below the
        // furniture's bottom (standing on the floor beneath it).
        if furniture
            && x0 >= ox0
            && x1 <= ox1
            && y0 > oy0
            && y1 + 4 >= oy1
            && object.rests_on != Some(other.id)
        {
            return Some((FactRelation::Under, other.class_id));
        }
    }
    None
}

/// The pixel of `pixels` (one object's, row-major ascending) farthest from the object's edge (city-block
/// distance) among those `eligible`; its (x, y).
pub fn deepest_pixel(
    pixels: &[u32],
    width: usize,
    eligible: impl Fn(u32) -> bool,
) -> Option<(u32, u32)> {
    let width = width.max(1);
    let (min_x, max_x) = pixels.iter().fold((usize::MAX, 0), |(lo, hi), &p| {
        let x = p as usize % width;
        (lo.min(x), hi.max(x))
    });
    let min_y = *pixels.first()? as usize / width;
    let max_y = *pixels.last()? as usize / width;
    let box_width = max_x - min_x + 3;
    let box_height = max_y - min_y + 3;
    // Distance grid with a one-pixel margin of background.
    let mut distance = vec![0u32; box_width * box_height];
    for &p in pixels {
        let (x, y) = (p as usize % width, p as usize / width);
        distance[(y - min_y + 1) * box_width + (x - min_x + 1)] = u32::MAX / 2;
    }
    for y in 1..box_height - 1 {
        for x in 1..box_width - 1 {
            let i = y * box_width + x;
            if distance[i] > 0 {
                distance[i] = distance[i]
                    .min(distance[i - 1] + 1)
                    .min(distance[i - box_width] + 1);
            }
        }
    }
    for y in (1..box_height - 1).rev() {
        for x in (1..box_width - 1).rev() {
            let i = y * box_width + x;
            if distance[i] > 0 {
                distance[i] = distance[i]
                    .min(distance[i + 1] + 1)
                    .min(distance[i + box_width] + 1);
            }
        }
    }
    pixels
        .iter()
        .filter(|&&p| eligible(p))
        .max_by_key(|&&p| {
            let (x, y) = (p as usize % width, p as usize / width);
            (
                distance[(y - min_y + 1) * box_width + (x - min_x + 1)],
                std::cmp::Reverse(p),
            )
        })
        .map(|&p| ((p as usize % width) as u32, (p as usize / width) as u32))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_deepest_pixel_is_the_centre_of_a_square() {
        // A 5x5 square at (2..7, 1..6) in a 10-wide image: its centre is (4, 3).
        let pixels: Vec<u32> = (1..6)
            .flat_map(|y| (2..7).map(move |x| y * 10 + x))
            .collect();
        assert_eq!(deepest_pixel(&pixels, 10, |_| true), Some((4, 3)));
        // Only the left column eligible: all at distance 1 from the edge, the first in reading order wins.
        assert_eq!(deepest_pixel(&pixels, 10, |p| p % 10 == 2), Some((2, 1)));
    }
}
