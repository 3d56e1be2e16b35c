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
//! first, joins the anchor nearest to it (the gap from its box to the nearest box the anchor is made of: its
//! own and those of the parts it took in) when
//!
//! - it is at most a quarter of the anchor's area, the anchor has at least `MIN_PARTED_AREA` pixels and the
//!   gap between the boxes is at most half the square root of the anchor's area (the reach: a bed parted by
//!   a blanket lying across it, a chair's back seen apart from its seat; our own choice), or
//! - the band between the two boxes is nearer the camera than both, at any distance (one object seen in two
//!   parts around an occluder: a desk behind a chair), or
//! - the operator said there is just one (`k = 1`), it lies within twice the reach and it is not a small
//!   fragment: labels stay as they are, and "those pieces are all the same rug" is met. A piece further away
//!   stays and the count is reported unmet (joining far pieces made objects that matched nothing on the
//!   development trial).
//!
//! What is left beyond `k` is surplus. A surplus object no larger than a quarter of the smallest kept one and
//! under `MIN_PARTED_AREA` pixels is a fragment: its segments then carry a hard factor against the class, so
//! the solver gives them the best other label. A surplus object of a credible size stays and the count is
//! reported unmet.

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

/// Area-weighted mean depth (mm) of some segments, when they have readings.
fn mean_depth(scene: &Scene, members: &[SegmentId]) -> Option<f64> {
    let (mut sum, mut weight) = (0.0f64, 0.0f64);
    for member in members {
        if let Some(stats) = scene.stats.get(member.index()) {
            if let Some(depth) = stats.mean_depth_mm.filter(|d| d.is_finite() && *d > 0.0) {
                sum += f64::from(depth) * f64::from(stats.area);
                weight += f64::from(stats.area);
            }
        }
    }
    (weight > 0.0).then(|| sum / weight)
}

/// Whether the gap between two boxes side by side (or one above the other) is covered by something nearer
/// the camera than both: one object seen in two parts around an occluder (a desk behind a chair). The gap is
/// the band between the boxes over the rows (or columns) they share; "nearer" means a mean depth below
/// `OCCLUDER_SHARE` of the nearer part's.
fn occluded_between(scene: &Scene, a: &BoundingBox, b: &BoundingBox, depths: (f64, f64)) -> bool {
    let Some(depth) = scene.depth.as_deref() else {
        return false;
    };
    let (rows, columns) = (
        (a.y0.max(b.y0), a.y1.min(b.y1)),
        (a.x0.max(b.x0), a.x1.min(b.x1)),
    );
    let band = if rows.0 < rows.1 {
        // Side by side: the columns between them.
        let (left, right) = if a.x1 <= b.x0 {
            (a.x1, b.x0)
        } else {
            (b.x1, a.x0)
        };
        (left, rows.0, right, rows.1)
    } else if columns.0 < columns.1 {
        let (top, bottom) = if a.y1 <= b.y0 {
            (a.y1, b.y0)
        } else {
            (b.y1, a.y0)
        };
        (columns.0, top, columns.1, bottom)
    } else {
        return false;
    };
    let (x0, y0, x1, y1) = band;
    if x0 >= x1 || y0 >= y1 {
        return false;
    }
    let (mut sum, mut count) = (0.0f64, 0u64);
    for y in y0..y1.min(depth.height) {
        for x in x0..x1.min(depth.width) {
            let value = depth
                .millimetres
                .get(y as usize * depth.width as usize + x as usize)
                .copied()
                .unwrap_or(0);
            if value > 0 {
                sum += f64::from(value);
                count += 1;
            }
        }
    }
    count > 0 && sum / (count as f64) < OCCLUDER_SHARE * depths.0.min(depths.1)
}

/// A gap counts as covered by an occluder when its mean depth is below this share of the nearer part's (our
/// own choice: 5% nearer).
const OCCLUDER_SHARE: f64 = 0.95;

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
        // Gaps are measured to the nearest of the boxes an anchor is made of (its own and those of the parts it
        // took in), never to empty space inside the box they span together.
        let mut parts: Vec<Vec<BoundingBox>> =
            anchors.iter().map(|anchor| vec![anchor.1]).collect();
        for &(index, bounds, area) in rest.iter() {
            let nearest = anchors
                .iter()
                .enumerate()
                .map(|(a, _)| {
                    let nearest = parts[a]
                        .iter()
                        .map(|part| gap(part, &bounds))
                        .min()
                        .unwrap_or(u32::MAX);
                    (nearest, a)
                })
                .min();
            let Some((distance, a)) = nearest else {
                continue;
            };
            let reach = 0.5 * (anchors[a].2 as f64).sqrt();
            let anchor_index = anchors[a].0;
            // Near and much smaller than the anchor: a part of it. Two like-sized objects side by side (bottles
            // in a row) are two objects, however close.
            let near = f64::from(distance) <= reach
                && FRAGMENT_SHARE * area <= anchors[a].2
                && anchors[a].2 >= MIN_PARTED_AREA;
            let occluded = || {
                let depths = (
                    mean_depth(scene, &objects[anchor_index].members),
                    mean_depth(scene, &objects[index].members),
                );
                match depths {
                    (Some(d0), Some(d1)) => {
                        occluded_between(scene, &anchors[a].1, &bounds, (d0, d1))
                    }
                    _ => false,
                }
            };
            // "Just one": every piece of the class the operator sees is part of that one object.
            // (Small far fragments are still taken away, see `surplus_factors`.)
            let fragment = FRAGMENT_SHARE * area <= anchors[a].2 && area < MIN_PARTED_AREA;
            let single = cap.most == 1 && !fragment && f64::from(distance) <= 2.0 * reach;
            if !single && !near && !occluded() {
                continue;
            }
            let members = std::mem::take(&mut objects[index].members);
            let anchor = &mut objects[anchor_index];
            anchor.members.extend(members);
            anchor.members.sort_unstable();
            anchor.members.dedup();
            anchors[a].1 = anchors[a].1.union(&bounds);
            parts[a].push(bounds);
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

/// Only an object of at least this many pixels takes in a nearby part (our own choice; on the demo scenes
/// bottles of about 200 pixels, each seen as a neck and a base, were joined across the row they stand in).
const MIN_PARTED_AREA: u64 = 1500;

/// An object at most 1/`FRAGMENT_SHARE` of the area of the object it is measured against is a fragment (our
/// own choice; on the demo scenes a half share joined bottles standing in a row into one).
const FRAGMENT_SHARE: u64 = 4;

/// Hard factors against the class on the members of the objects of a capped class beyond its cap that are
/// fragments: at most 1/`FRAGMENT_SHARE` of the smallest object the cap keeps and under `MIN_PARTED_AREA`
/// pixels (the graph is formed after `merge_parts`; on trial renders a larger "fragment" of a rug was the part
/// of the rug seen past the table, and taking it away cost 8000 right pixels). Surplus objects of a credible size stay, and the count is reported unmet: which of them is
/// the false one is the operator's to point at.
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
        if cap.most == 0 {
            continue;
        }
        let smallest_kept = of_class[cap.most as usize - 1].0;
        for (area, members) in &of_class[cap.most as usize..] {
            if FRAGMENT_SHARE * area > smallest_kept || *area >= MIN_PARTED_AREA {
                continue;
            }
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
