//! A count below what the labels show: "one bed, not two", "there's only one rug". Parts of one object that
//! the labels show apart are joined into one object, and what is still too many is handed back as surplus
//! for the correction to take away.
//!
//! Owns: `merge_parts` (joining the parts of a capped class that lie close to one of the objects the count
//! keeps), `surplus_factors` (the unary factors that take the label off the objects still too many) and
//! `surplus_question` (asking which of the objects shown are not of the class, when a credible surplus stays).
//! Must not: solve, or change labels itself; `super::correct` adds the factors and solves again.
//!
//! # The rule
//!
//! For a class with an upper bound in force (exactly `k` or at most `k`, `k >= 1`) and more than `k` objects
//! formed, objects are joined one pair at a time, the pair across the smallest gap first (the gap from box to
//! box, measured to each box an object is made of: its own and those of the parts it took in), until `k` are
//! left or no pair is plainly one object. The `k` largest objects at each step are the ones the count keeps;
//! a piece joins a larger object when
//!
//! - it is small (under `MIN_PARTED_AREA` pixels) and at least `OVERLAP_SHARE` of its box lies inside a box of
//!   the larger one (a shoe's sole seen apart from its upper), or both are strips that continue each other
//!   along their length across a gap within the reach (a counter top seen in pieces between the bottles on
//!   it); a small object among the `k` largest may be joined this way too, by sharing a box only when it is a
//!   fragment of the other (at most 1/`FRAGMENT_SHARE` of its area: a cabinet's plinth), never when the two
//!   are of a size (two shoes in a pile);
//! - it is not among the `k` largest, and it is at most a quarter of the larger one's area, the larger one has
//!   at least `MIN_PARTED_AREA` pixels and the gap is at most half the square root of the larger one's area
//!   (the reach: a bed parted by a blanket lying across it, a chair's back seen apart from its seat); or it is
//!   a speck (under two fine segments of mean size) within the reach or `SPECK_REACH`; or the operator said
//!   there is just one (`k = 1`), it lies within twice the reach and it is not a small fragment, or it is one
//!   lying below the object within its columns (a person's legs seen under the desk they sit at: taking them
//!   away as a stray cost 560 and 774 right pixels on two development trial offices). A piece
//!   further away stays and the count is reported unmet: past the reach a piece is more often another object
//!   than a part of this one (`docs/decisions.md`, "Joining the parts of a capped class");
//! - failing every plain join, the band between a piece and the nearest larger object is nearer the camera
//!   than both, at any distance (one object seen in two parts around an occluder: a desk behind a chair).
//!
//! A fragment (at most 1/`FRAGMENT_SHARE` of the object) not among the `k` largest also joins an object
//! already joined from parts when its box lies inside the box those parts span (a rug seen in pieces between
//! the legs of the table on it), however far from each part.
//!
//! Reach grows with what an object took in, so a shelf seen in five pieces between its books is joined piece
//! by piece, each next to the last. Large objects are never joined for sharing a box: chairs around a table
//! overlap in their boxes.
//!
//! What is left beyond `k` is surplus. A surplus object no larger than a quarter of the smallest kept one and
//! under `MIN_PARTED_AREA` pixels is a fragment, and one under two fine segments of mean size a speck: their
//! segments then carry a hard factor against the class and one towards the label they share the longest
//! boundary with (`surrounding_label`), so the fragment joins what surrounds it rather than staying a class
//! seen nowhere else. A segment the turn itself moved into the class goes back to the label it had instead:
//! a piece of a towel the count's solve took is a towel again, not wall. A surplus object of a credible size
//! stays and the count is reported unmet.

use crate::energy::{UnaryFactor, HARD_WEIGHT};
use crate::grounding::{numbered, ClarifyingQuestion};
use crate::ids::{ClassId, SegmentId};
use crate::scene::{BoundingBox, Scene};
use crate::taxonomy::{how_many, plural, Taxonomy};

use super::leftovers::label_around;
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

/// An object of a capped class, and the parts it has taken in so far.
struct Cluster {
    /// Index into the formed objects.
    index: usize,
    /// Its box and the boxes of the parts it took in: gaps are measured to the nearest of them, never to
    /// empty space inside the box they span together.
    parts: Vec<BoundingBox>,
    /// Pixels, its own and its parts'.
    area: u64,
}

impl Cluster {
    /// The box its parts span together.
    fn bounds(&self) -> BoundingBox {
        self.parts
            .iter()
            .skip(1)
            .fold(self.parts[0], |spanned, part| spanned.union(part))
    }
}

/// The share of a piece's box that must lie inside one box of a larger object, or overlap it, for the two to
/// count as one object seen in parts (our own choice: a shoe's sole seen apart from its upper, a bottle's neck
/// above its base; two objects of one class standing apart do not share their boxes).
const OVERLAP_SHARE: f64 = 0.4;

/// The share of the thinner strip's thickness two strips must share across their length to continue each
/// other (our own choice).
const ALIGNED_SHARE: f64 = 0.8;

fn box_area(b: &BoundingBox) -> u64 {
    u64::from(b.x1.saturating_sub(b.x0)) * u64::from(b.y1.saturating_sub(b.y0))
}

/// The share of box `inner`'s area that lies inside `outer`.
fn share_inside(inner: &BoundingBox, outer: &BoundingBox) -> f64 {
    let width = inner
        .x1
        .min(outer.x1)
        .saturating_sub(inner.x0.max(outer.x0));
    let height = inner
        .y1
        .min(outer.y1)
        .saturating_sub(inner.y0.max(outer.y0));
    let own = box_area(inner);
    if own == 0 {
        return 0.0;
    }
    (u64::from(width) * u64::from(height)) as f64 / own as f64
}

/// Whether two strips continue each other along their length across a gap no wider than `limit`: a counter
/// top seen in two pieces between the bottles standing on it. Both are at least one and a half times longer
/// than thick along the gap's direction and share most of the thinner one's thickness.
fn continues(a: &BoundingBox, b: &BoundingBox, limit: f64) -> bool {
    let (aw, ah) = (a.x1.saturating_sub(a.x0), a.y1.saturating_sub(a.y0));
    let (bw, bh) = (b.x1.saturating_sub(b.x0), b.y1.saturating_sub(b.y0));
    let rows = a.y1.min(b.y1).saturating_sub(a.y0.max(b.y0));
    let columns = a.x1.min(b.x1).saturating_sub(a.x0.max(b.x0));
    let horizontal_gap = a.x0.saturating_sub(b.x1).max(b.x0.saturating_sub(a.x1));
    let vertical_gap = a.y0.saturating_sub(b.y1).max(b.y0.saturating_sub(a.y1));
    let long = |length: u32, thickness: u32| 2 * length >= 3 * thickness;
    let side_by_side = long(aw, ah)
        && long(bw, bh)
        && f64::from(rows) >= ALIGNED_SHARE * f64::from(ah.min(bh))
        && f64::from(horizontal_gap) <= limit;
    let one_above = long(ah, aw)
        && long(bh, bw)
        && f64::from(columns) >= ALIGNED_SHARE * f64::from(aw.min(bw))
        && f64::from(vertical_gap) <= limit;
    side_by_side || one_above
}

/// Whether `piece` joins `keeper` (at least as large) without looking at depth, and the gap it would join
/// across. A piece among the `cap.most` largest (`kept`) joins only as a small part sharing a box or continuing
/// a strip.
fn joins_plainly(
    cap: &Cap,
    keeper: &Cluster,
    piece: &Cluster,
    kept: bool,
    speck: u64,
) -> Option<u32> {
    let distance = keeper
        .parts
        .iter()
        .flat_map(|part| piece.parts.iter().map(move |other| gap(part, other)))
        .min()
        .unwrap_or(u32::MAX);
    let reach = 0.5 * (keeper.area as f64).sqrt();
    // Only a small piece is joined for sharing a box or continuing a strip: large objects of one class
    // overlap in their boxes whenever they stand near each other (chairs around a table).
    let small = piece.area < MIN_PARTED_AREA;
    // Sharing a box: a part of it seen apart (a shoe's sole and upper). Among the objects the count keeps,
    // only a fragment of the keeper's size is a part: two like-sized shoes in a pile overlap in their boxes
    // and are two shoes.
    let shared = small
        && (!kept || FRAGMENT_SHARE * piece.area <= keeper.area)
        && keeper.parts.iter().any(|part| {
            piece
                .parts
                .iter()
                .any(|other| share_inside(other, part) >= OVERLAP_SHARE)
        });
    // Strips continuing each other past what stands on them.
    let continued = small
        && keeper.parts.iter().any(|part| {
            piece
                .parts
                .iter()
                .any(|other| continues(part, other, reach))
        });
    // Near and much smaller than the keeper: a part of it. Two like-sized objects side by side (bottles in a
    // row) are two objects, however close.
    let near = f64::from(distance) <= reach
        && FRAGMENT_SHARE * piece.area <= keeper.area
        && keeper.area >= MIN_PARTED_AREA;
    // "Just one": every piece of the class the operator sees is part of that one object. (Small far fragments
    // are still taken away, see `surplus_factors`.)
    let fragment = FRAGMENT_SHARE * piece.area <= keeper.area && piece.area < MIN_PARTED_AREA;
    // A fragment below the one object, within its columns, is the rest of it seen under what stands in
    // front (a person's legs under the desk they sit at).
    let below = keeper.parts.iter().any(|part| {
        piece
            .parts
            .iter()
            .all(|other| other.y0 >= part.y1 && other.x0 >= part.x0 && other.x1 <= part.x1)
    });
    let single = cap.most == 1 && (!fragment || below) && f64::from(distance) <= 2.0 * reach;
    // A fragment inside the span of an object already joined from parts lies within that one object (a rug
    // seen in pieces between the legs of the table standing on it).
    let within = !kept
        && FRAGMENT_SHARE * piece.area <= keeper.area
        && keeper.parts.len() > 1
        && piece
            .parts
            .iter()
            .all(|other| share_inside(other, &keeper.bounds()) >= OVERLAP_SHARE);
    // A speck next to an object of its class belongs to it.
    let speck_near = piece.area < speck && f64::from(distance) <= reach.max(SPECK_REACH);
    (shared || continued || within || (!kept && (near || single || speck_near))).then_some(distance)
}

/// Whether `piece` and `keeper` are one object seen in two parts around a nearer occluder.
fn joins_around_occluder(
    scene: &Scene,
    objects: &[FormedObject],
    keeper: &Cluster,
    piece: &Cluster,
) -> bool {
    let depths = (
        mean_depth(scene, &objects[keeper.index].members),
        mean_depth(scene, &objects[piece.index].members),
    );
    match depths {
        (Some(d0), Some(d1)) => {
            occluded_between(scene, &keeper.bounds(), &piece.bounds(), (d0, d1))
        }
        _ => false,
    }
}

/// The next join of a capped class: (keeper, piece), the plain join across the smallest gap first; failing
/// that, a piece and the nearest larger object it is seen around an occluder with.
fn next_join(
    scene: &Scene,
    objects: &[FormedObject],
    cap: &Cap,
    clusters: &[Cluster],
    speck: u64,
) -> Option<(usize, usize)> {
    // The clusters the count keeps: the `cap.most` largest.
    let mut order: Vec<usize> = (0..clusters.len()).collect();
    order.sort_by_key(|&c| std::cmp::Reverse((clusters[c].area, c)));
    let mut kept = vec![false; clusters.len()];
    for &c in order.iter().take(cap.most as usize) {
        kept[c] = true;
    }
    let mut best: Option<(u32, u64, usize, usize)> = None;
    for (k, keeper) in clusters.iter().enumerate() {
        for (p, piece) in clusters.iter().enumerate() {
            if k == p || (piece.area, p) > (keeper.area, k) {
                continue;
            }
            if let Some(distance) = joins_plainly(cap, keeper, piece, kept[p], speck) {
                // Across the smallest gap; between equals, the larger keeper.
                let key = (distance, u64::MAX - keeper.area, k, p);
                if best.is_none_or(|b| key < b) {
                    best = Some(key);
                }
            }
        }
    }
    if let Some((_, _, k, p)) = best {
        return Some((k, p));
    }
    clusters.iter().enumerate().find_map(|(p, piece)| {
        if kept[p] {
            return None;
        }
        let keeper = clusters
            .iter()
            .enumerate()
            .filter(|&(k, keeper)| k != p && (keeper.area, k) > (piece.area, p))
            .min_by_key(|(_, keeper)| gap(&keeper.bounds(), &piece.bounds()))
            .map(|(k, _)| k)?;
        joins_around_occluder(scene, objects, &clusters[keeper], piece).then_some((keeper, p))
    })
}

/// Joins parts of capped classes until the count is met or nothing more is plainly one object (see the
/// module doc). Joins go nearest first and an object's reach grows with what it took in, so a shelf seen in
/// five pieces between its books is joined piece by piece, each next to the last.
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
        let mut clusters: Vec<Cluster> = objects
            .iter()
            .enumerate()
            .filter(|(_, object)| object.class == cap.class)
            .filter_map(|(index, object)| {
                extent(scene, &object.members).map(|(bounds, area)| Cluster {
                    index,
                    parts: vec![bounds],
                    area,
                })
            })
            .collect();
        let speck = speck_area(scene);
        while clusters.len() > cap.most as usize {
            let Some((k, p)) = next_join(scene, &objects, cap, &clusters, speck) else {
                break;
            };
            let piece = clusters.swap_remove(p);
            // `swap_remove` moved the last cluster into `p`.
            let k = if k == clusters.len() { p } else { k };
            let members = std::mem::take(&mut objects[piece.index].members);
            let keeper = &mut clusters[k];
            let kept = &mut objects[keeper.index];
            kept.members.extend(members);
            kept.members.sort_unstable();
            kept.members.dedup();
            keeper.parts.extend(piece.parts);
            keeper.area += piece.area;
            removed[piece.index] = true;
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

/// A surplus object smaller than this many fine segments of mean size is a speck, whatever the size of the
/// objects kept: it is never an object of its own (our own choice: two segments, about 256 pixels at the
/// production segment count).
const SPECK_SEGMENTS: u64 = 2;

/// A speck joins an object of its class within this many pixels even when the object's own reach is shorter
/// (our own choice: about two segments across).
const SPECK_REACH: f64 = 24.0;

/// The area under which an object is a speck: `SPECK_SEGMENTS` fine segments of mean size.
pub(crate) fn speck_area(scene: &Scene) -> u64 {
    let pixels = u64::from(scene.width()) * u64::from(scene.height());
    SPECK_SEGMENTS * pixels / (scene.segment_count().max(1) as u64)
}

/// Hard factors against the class on the members of the objects of a capped class beyond its cap that are
/// fragments: at most 1/`FRAGMENT_SHARE` of the smallest object the cap keeps and under `MIN_PARTED_AREA`
/// pixels, and towards the label each member had before the turn (`before`, fine segments), or the label
/// around the piece for a member the class already had (the graph is formed after `merge_parts`; on trial renders a larger "fragment" of a rug was the part
/// of the rug seen past the table, and taking it away cost 8000 right pixels). Surplus objects of a credible size stay, and the count is reported unmet: which of them is
/// the false one is the operator's to point at.
pub fn surplus_factors(
    scene: &Scene,
    graph: &SceneGraph,
    caps: &[Cap],
    before: &[u16],
) -> Vec<UnaryFactor> {
    let mut factors = Vec::new();
    let speck = speck_area(scene);
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
            let fragment = FRAGMENT_SHARE * area <= smallest_kept && *area < MIN_PARTED_AREA;
            if !fragment && *area >= speck {
                continue;
            }
            factors.push(UnaryFactor {
                segments: members.iter().map(|s| s.0).collect(),
                label: cap.class.0,
                wanted: false,
                weight: HARD_WEIGHT,
                source: Some(cap.source),
            });
            // A segment the turn moved into the class goes back to what it was; one the class had before goes
            // to the label around the piece.
            let around = surrounding_label(scene, graph, members, cap.class);
            let mut by_label: std::collections::BTreeMap<u16, Vec<u32>> = Default::default();
            for member in members.iter() {
                let was = before.get(member.index()).copied();
                let to = match was {
                    Some(was) if was != cap.class.0 => Some(was),
                    _ => around.map(|c| c.0),
                };
                if let Some(to) = to {
                    by_label.entry(to).or_default().push(member.0);
                }
            }
            for (label, segments) in by_label {
                factors.push(UnaryFactor {
                    segments,
                    label,
                    wanted: true,
                    weight: HARD_WEIGHT,
                    source: Some(cap.source),
                });
            }
        }
    }
    factors
}

/// The label that shares the longest boundary with `members` from outside, other than `class`: what a
/// fragment taken away from `class` becomes. Merging a small region into the neighbour it shares the most
/// boundary with is common practice in segmentation clean-up; left to the unaries alone, a fragment took
/// the next best class, often one the scene shows nowhere else (a new class of one sliver, which costs a
/// whole class in mean IoU: the development trial's "chair count is one" lost 4 mIoU points that way).
fn surrounding_label(
    scene: &Scene,
    graph: &SceneGraph,
    members: &[SegmentId],
    class: ClassId,
) -> Option<ClassId> {
    label_around(scene, graph, members, &[class.0]).map(ClassId)
}

/// Where a box lies in the picture, in words: "top left", "bottom", "middle" (thirds of each side).
fn place_words(bbox: &BoundingBox, width: u32, height: u32) -> &'static str {
    let third = |centre: u32, side: u32| (3 * centre / side.max(1)).min(2);
    let column = third((bbox.x0 + bbox.x1) / 2, width);
    let row = third((bbox.y0 + bbox.y1) / 2, height);
    match (row, column) {
        (0, 0) => "top left",
        (0, 1) => "top",
        (0, _) => "top right",
        (1, 0) => "left",
        (1, 1) => "middle",
        (1, _) => "right",
        (_, 0) => "bottom left",
        (_, 1) => "bottom",
        _ => "bottom right",
    }
}

/// The question a count below what the graph still shows asks: which of the objects shown are not of the
/// class. Candidates are every object of the class, left to right, each described by its place in the
/// picture and its number from the left ("the 2nd from the left, bottom right"), so an answer can name one
/// or point at it. `None` when the graph shows no more than `most`.
pub fn surplus_question(
    scene: &Scene,
    taxonomy: &Taxonomy,
    graph: &SceneGraph,
    cap: &Cap,
    constraint: usize,
) -> Option<ClarifyingQuestion> {
    let mut shown: Vec<&super::SceneObject> = graph
        .objects
        .iter()
        .filter(|object| object.class == cap.class)
        .collect();
    if shown.len() <= cap.most as usize {
        return None;
    }
    shown.sort_by_key(|object| (object.bbox.x0 + object.bbox.x1, object.id));
    let name = taxonomy.class_name(cap.class);
    let descriptions: Vec<String> = shown
        .iter()
        .enumerate()
        .map(|(position, object)| {
            format!(
                "the {} from the left, {}",
                numbered(position + 1),
                place_words(&object.bbox, scene.width(), scene.height())
            )
        })
        .collect();
    Some(ClarifyingQuestion {
        constraint,
        text: format!(
            "the picture still shows {} that look like separate objects, more than the {} you said: \
             which of them are not {}? Point at one and say what it is",
            how_many(shown.len(), name),
            cap.most,
            plural(name)
        ),
        candidates: shown.iter().map(|object| object.hypothesis).collect(),
        descriptions,
        objects: shown.iter().map(|object| object.id).collect(),
        where_is: false,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cluster(index: usize, (x0, y0, x1, y1): (u32, u32, u32, u32), area: u64) -> Cluster {
        Cluster {
            index,
            parts: vec![BoundingBox { x0, y0, x1, y1 }],
            area,
        }
    }

    const CAP_THREE: Cap = Cap {
        class: ClassId(7),
        most: 3,
        source: 0,
    };

    /// Two shoes in a pile: like-sized, both among the objects "three shoes" keeps, their boxes overlapping
    /// by more than `OVERLAP_SHARE`. They stay two shoes.
    #[test]
    fn like_sized_kept_objects_sharing_a_box_stay_apart() {
        let upper = cluster(0, (549, 460, 616, 480), 1100);
        let lower = cluster(1, (540, 448, 600, 472), 900);
        assert!(share_inside(&lower.parts[0], &upper.parts[0]) >= OVERLAP_SHARE);
        assert_eq!(joins_plainly(&CAP_THREE, &upper, &lower, true, 256), None);
    }

    /// A cabinet's plinth: kept by the count but a fragment of the cabinet whose box it lies in. It joins.
    #[test]
    fn a_kept_fragment_sharing_a_box_joins() {
        let cabinet = cluster(0, (100, 100, 180, 220), 1400);
        let plinth = cluster(1, (104, 205, 176, 219), 300);
        assert_eq!(
            joins_plainly(&CAP_THREE, &cabinet, &plinth, true, 256),
            Some(0)
        );
    }

    /// "Just one rug": a rug fragment seen between the legs of the table standing on it lies inside the span
    /// of the rug already joined from two pieces, far from either piece's own box. It joins; a piece the
    /// count keeps does not.
    #[test]
    fn a_fragment_inside_the_span_of_a_joined_object_joins_it() {
        let cap_one = Cap {
            most: 1,
            ..CAP_THREE
        };
        let mut rug = cluster(0, (187, 420, 270, 479), 4145);
        rug.parts.push(BoundingBox {
            x0: 500,
            y0: 300,
            x1: 639,
            y1: 479,
        });
        rug.area += 10514;
        let fragment = cluster(1, (273, 330, 290, 346), 216);
        let reach = 0.5 * (rug.area as f64).sqrt();
        assert!(f64::from(gap(&rug.parts[0], &fragment.parts[0])) > reach);
        assert!(joins_plainly(&cap_one, &rug, &fragment, false, 150).is_some());
        assert_eq!(joins_plainly(&cap_one, &rug, &fragment, true, 150), None);
        let single = cluster(0, (187, 420, 270, 479), 4145 + 10514);
        assert_eq!(
            joins_plainly(&cap_one, &single, &fragment, false, 150),
            None
        );
    }

    /// A piece the count does not keep joins the object whose box it shares, whatever its size.
    #[test]
    fn an_unkept_piece_sharing_a_box_joins() {
        let upper = cluster(0, (549, 460, 616, 480), 1100);
        let lower = cluster(1, (540, 448, 600, 472), 900);
        assert_eq!(
            joins_plainly(&CAP_THREE, &upper, &lower, false, 256),
            Some(0)
        );
    }
}
