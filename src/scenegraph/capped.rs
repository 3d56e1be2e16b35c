//! A count below what the labels show: "one bed, not two", "there's only one rug". Parts of one object that
//! the labels show apart are joined into one object, and what is still too many is handed back as surplus
//! for the correction to take away.
//!
//! Owns: `merge_parts` (joining the parts of a capped class that lie close to one of the objects the count
//! keeps) and `surplus_factors` (the unary factors that take the label off the objects still too many).
//! Must not: solve, or change labels itself; `super::correct` adds the factors and solves again.
//!
//! # The rule
//!
//! For a class with an upper bound in force (exactly `k` or at most `k`, `k >= 1`) and more than `k` objects
//! formed, the `k` largest objects (in pixels) are kept as anchors. Every other object of the class, largest
//! first, joins the anchor whose bounding box lies nearest to its own when the gap between the boxes is at
//! most half the square root of the anchor's area (a bed parted by a blanket lying across it, a chair's back
//! seen apart from its seat; a reach relative to the anchor's size is our own choice). What is left beyond
//! `k` is surplus: a false instance or a fragment far from every kept object, whose segments then carry a hard
//! factor against the class, so the solver gives them the best other label.

use crate::energy::{UnaryFactor, HARD_WEIGHT};
use crate::ids::{ClassId, SegmentId};
use crate::scene::{BoundingBox, Scene};

use super::objects::FormedObject;
use super::SceneGraph;

/// A class with an upper bound in force: at most `most` objects, from constraint `source`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Cap {
    pub class: ClassId,
    pub most: u32,
    pub source: usize,
}

fn extent(scene: &Scene, members: &[SegmentId]) -> Option<(BoundingBox, u64)> {
    let mut bounds: Option<BoundingBox> = None;
    let mut area = 0u64;
    for member in members {
        if let Some(stats) = scene.stats.get(member.index()) {
            area += u64::from(stats.area);
            bounds = Some(match bounds {
                Some(b) => b.union(&stats.bbox),
                None => stats.bbox,
            });
        }
    }
    bounds.map(|b| (b, area))
}

/// The gap in pixels between two boxes (0 when they overlap or touch), the larger of the two axes' gaps.
fn gap(a: &BoundingBox, b: &BoundingBox) -> u32 {
    let dx = a.x0.saturating_sub(b.x1).max(b.x0.saturating_sub(a.x1));
    let dy = a.y0.saturating_sub(b.y1).max(b.y0.saturating_sub(a.y1));
    dx.max(dy)
}

/// Joins parts of capped classes into the objects the count keeps (see the module doc).
pub fn merge_parts(
    scene: &Scene,
    mut objects: Vec<FormedObject>,
    caps: &[Cap],
) -> Vec<FormedObject> {
    let mut removed = vec![false; objects.len()];
    for cap in caps {
        if cap.most == 0 {
            continue;
        }
        let mut of_class: Vec<(usize, BoundingBox, u64)> = objects
            .iter()
            .enumerate()
            .filter(|(_, object)| object.class == cap.class)
            .filter_map(|(index, object)| {
                extent(scene, &object.members).map(|(b, a)| (index, b, a))
            })
            .collect();
        if of_class.len() <= cap.most as usize {
            continue;
        }
        of_class.sort_by(|a, b| b.2.cmp(&a.2).then(a.0.cmp(&b.0)));
        let (anchors, rest) = of_class.split_at_mut(cap.most as usize);
        for &(index, bounds, _) in rest.iter() {
            let nearest = anchors
                .iter()
                .enumerate()
                .map(|(a, anchor)| (gap(&anchor.1, &bounds), a))
                .min();
            let Some((distance, a)) = nearest else {
                continue;
            };
            let reach = 0.5 * (anchors[a].2 as f64).sqrt();
            if f64::from(distance) > reach {
                continue;
            }
            let anchor_index = anchors[a].0;
            let members = std::mem::take(&mut objects[index].members);
            let anchor = &mut objects[anchor_index];
            anchor.members.extend(members);
            anchor.members.sort_unstable();
            anchor.members.dedup();
            anchors[a].1 = anchors[a].1.union(&bounds);
            removed[index] = true;
        }
    }
    objects
        .into_iter()
        .zip(removed)
        .filter(|(_, gone)| !gone)
        .map(|(object, _)| object)
        .collect()
}

/// Hard factors against the class on the members of every object of a capped class beyond its cap (the
/// smallest ones; the graph is formed after `merge_parts`).
pub fn surplus_factors(scene: &Scene, graph: &SceneGraph, caps: &[Cap]) -> Vec<UnaryFactor> {
    let mut factors = Vec::new();
    for cap in caps {
        let mut of_class: Vec<(u64, &[SegmentId])> = graph
            .objects
            .iter()
            .filter(|object| object.class == cap.class)
            .map(|object| {
                let area = extent(scene, &object.members).map_or(0, |e| e.1);
                (area, object.members.as_slice())
            })
            .collect();
        if of_class.len() <= cap.most as usize {
            continue;
        }
        of_class.sort_by_key(|entry| std::cmp::Reverse(entry.0));
        for (_, members) in &of_class[cap.most as usize..] {
            factors.push(UnaryFactor {
                segments: members.iter().map(|s| s.0).collect(),
                label: cap.class.0,
                wanted: false,
                weight: HARD_WEIGHT,
                source: Some(cap.source),
            });
        }
    }
    factors
}
