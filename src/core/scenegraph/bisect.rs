//! Making up a count the labels fall short of: which patch of a counted class to cut, and where.
//!
//! Owns: `bisect_to_count`, which cuts the patches of a class in two, one cut at a time, always taking the
//! cleanest cut on offer, until the operator's count is made up or no acceptable cut is left.
//! Must not: change labels or hypotheses, or decide how many objects are missing (`super::objects` does).
//!
//! # The rule
//!
//! Every patch of a class still short of its count is offered a cut in two by geodesic k-medoids
//! (`super::split::geodesic_parts`, so parts meet along colour edges and depth steps). A cut is acceptable
//! when its smaller part holds at least `SMALLER_PART_SHARE` of the patch's pixels and, for a class with a
//! typical size, each part keeps at least half of it. Among acceptable cuts the one with the highest score is
//! taken, and its two parts are offered again; the score is the mean strength of the cut's crossing edges
//! (`super::instances::edge_strength`) times the pixels of the patch cut, so a plain seam through a large
//! patch comes first and a small patch with a busy texture last.
//!
//! Cutting the largest patch into as many pieces as were missing cut a tall cabinet in the middle and left a
//! merged pair whole; the scores tried are in `docs/decisions.md`.

use super::instances::{edge_strength, scaled_area, InstanceCuts};
use super::split::geodesic_parts;
use crate::ids::ClassId;

/// The smaller part of an acceptable cut holds at least this share of the patch's pixels (our own choice: a
/// cut that slices off a sliver is not a seam between two objects).
const SMALLER_PART_SHARE: f64 = 0.15;

/// A cut on offer: its strength and its two parts.
type Cut = (f32, Vec<Vec<usize>>);

/// The scene's per-segment measures the cuts are made with.
pub struct Sizing<'a> {
    pub neighbours: &'a [Vec<(usize, f32)>],
    pub depth: &'a [Option<f32>],
    pub area: &'a [u32],
    pub cuts: &'a InstanceCuts,
}

impl Sizing<'_> {
    /// Pixels of `members`.
    pub fn pixels(&self, members: &[usize]) -> u64 {
        members
            .iter()
            .map(|&s| u64::from(self.area.get(s).copied().unwrap_or(0)))
            .sum()
    }

    /// Mean strength of the edges between `a` and `b` (0 when they do not touch).
    fn cut_strength(&self, a: &[usize], b: &[usize]) -> f32 {
        let mut sorted_b = b.to_vec();
        sorted_b.sort_unstable();
        let (mut total, mut edges) = (0.0f32, 0u32);
        for &segment in a {
            for &(next, contrast) in self.neighbours.get(segment).into_iter().flatten() {
                if sorted_b.binary_search(&next).is_ok() {
                    let depths = (
                        self.depth.get(segment).copied().flatten(),
                        self.depth.get(next).copied().flatten(),
                    );
                    total += edge_strength(contrast, depths);
                    edges += 1;
                }
            }
        }
        if edges == 0 {
            0.0
        } else {
            total / edges as f32
        }
    }

    /// The cut of `piece` in two when it is acceptable, with its strength.
    fn cut(&self, class: ClassId, piece: &[usize]) -> Option<Cut> {
        if piece.len() < 2 {
            return None;
        }
        let parts = geodesic_parts(piece, 2, self.neighbours, self.depth, self.area);
        if parts.len() != 2 {
            return None;
        }
        let whole = self.pixels(piece) as f64;
        let smaller = self.pixels(&parts[0]).min(self.pixels(&parts[1])) as f64;
        if whole <= 0.0 || smaller < SMALLER_PART_SHARE * whole {
            return None;
        }
        if let Some(typical) = self.cuts.typical_size(class) {
            let half = 0.5 * f64::from(typical);
            // With a depth unknown the size cannot be measured, and the count has its way.
            let too_small = |part: &[usize]| {
                scaled_area(part, self.depth, self.area).is_some_and(|scaled| scaled < half)
            };
            if too_small(&parts[0]) || too_small(&parts[1]) {
                return None;
            }
        }
        Some((self.cut_strength(&parts[0], &parts[1]), parts))
    }
}

/// Cuts the components of the classes in `missing` (class, objects still missing) until each count is made
/// up or no acceptable cut is left, and returns for every component its parts (one part: left whole).
/// Only `eligible` components (those the count sees as shown) are cut. `labels` are the segments' final labels; the missing numbers are lowered by the cuts made.
pub fn bisect_to_count(
    components: &[Vec<usize>],
    eligible: &[bool],
    labels: &[u16],
    missing: &mut [(ClassId, u32)],
    sizing: &Sizing<'_>,
) -> Vec<Vec<Vec<usize>>> {
    let mut parts_of: Vec<Vec<Vec<usize>>> = components
        .iter()
        .map(|component| vec![component.clone()])
        .collect();
    for (class, wanted) in missing.iter_mut() {
        let class = *class;
        // Offered cuts per (component, part); recomputed only for the two parts a cut makes.
        let mut offers: Vec<(usize, usize, Option<Cut>)> = Vec::new();
        for (index, component) in components.iter().enumerate() {
            let of_class = component.first().map(|&s| labels[s]) == Some(class.0);
            if of_class && eligible.get(index).copied().unwrap_or(false) {
                offers.push((index, 0, sizing.cut(class, component)));
            }
        }
        while *wanted > 0 {
            // The strongest cut; ties go to the larger piece, then the earlier one.
            let best = offers
                .iter()
                .enumerate()
                .filter_map(|(at, (index, part, offer))| {
                    offer.as_ref().map(|(strength, _)| {
                        let size = parts_of[*index][*part].len();
                        let pixels = sizing.pixels(&parts_of[*index][*part]) as f32;
                        (at, *strength * pixels, size)
                    })
                })
                .max_by(|a, b| a.1.total_cmp(&b.1).then(a.2.cmp(&b.2)).then(b.0.cmp(&a.0)));
            let Some((at, _, _)) = best else {
                break;
            };
            let (index, part, offer) = offers.swap_remove(at);
            let Some((_, mut halves)) = offer else {
                break;
            };
            let second = halves.pop().unwrap_or_default();
            let first = halves.pop().unwrap_or_default();
            parts_of[index][part] = first;
            parts_of[index].push(second);
            let new_part = parts_of[index].len() - 1;
            offers.push((index, part, sizing.cut(class, &parts_of[index][part])));
            offers.push((
                index,
                new_part,
                sizing.cut(class, &parts_of[index][new_part]),
            ));
            *wanted -= 1;
        }
    }
    parts_of
}
