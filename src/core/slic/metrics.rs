//! Segmentation-quality metrics for superpixels against a ground-truth region map.
//!
//! Owns: boundary maps, boundary recall and under-segmentation error.
//! Must not: know where label maps come from (files, classes); it compares two grids of integers.
//!
//! Definitions (both label maps row-major, `width * height`):
//! - A pixel is a *boundary pixel* of a label map when its right or lower 4-neighbour has a different label
//!   (a one-pixel-wide, one-sided boundary).
//! - *Boundary recall* (in the style of Martin, Fowlkes and Malik, IEEE TPAMI 26(5), 2004): the fraction of
//!   ground-truth boundary pixels that have a segment boundary pixel within Euclidean distance `tolerance`
//!   (pixel offsets with `dx^2 + dy^2 <= tolerance^2`). 1.0 when the ground truth has no boundary.
//! - *Under-segmentation error* in the form of Neubert and Protzel (2012), also used by Achanta et al. (2012):
//!   `UE = (1/N) * sum over ground-truth regions G of sum over segments S overlapping G of
//!   min(|S ∩ G|, |S \ G|)`, N the pixel count. 0 is perfect; it does not double-count leakage.

use std::collections::HashMap;

/// Boundary pixels of a label map, as defined in the module doc.
pub fn boundary_map(labels: &[u32], width: usize, height: usize) -> Vec<bool> {
    let mut boundary = vec![false; labels.len()];
    if labels.len() != width * height {
        return boundary;
    }
    for y in 0..height {
        for x in 0..width {
            let pixel = y * width + x;
            let right_differs = x + 1 < width && labels[pixel + 1] != labels[pixel];
            let below_differs = y + 1 < height && labels[pixel + width] != labels[pixel];
            boundary[pixel] = right_differs || below_differs;
        }
    }
    boundary
}

/// Boundary recall of `segments` against `ground_truth` at a pixel `tolerance`, as defined in the module doc.
/// Returns `None` when the two maps do not both hold `width * height` labels.
pub fn boundary_recall(
    segments: &[u32],
    ground_truth: &[u32],
    width: usize,
    height: usize,
    tolerance: u32,
) -> Option<f64> {
    if segments.len() != width * height || ground_truth.len() != width * height {
        return None;
    }
    let segment_boundary = boundary_map(segments, width, height);
    let truth_boundary = boundary_map(ground_truth, width, height);
    let radius = tolerance as i64;
    let mut offsets = Vec::new();
    for dy in -radius..=radius {
        for dx in -radius..=radius {
            if dx * dx + dy * dy <= radius * radius {
                offsets.push((dx, dy));
            }
        }
    }
    let (mut truth_count, mut recalled) = (0u64, 0u64);
    for y in 0..height as i64 {
        for x in 0..width as i64 {
            if !truth_boundary[(y * width as i64 + x) as usize] {
                continue;
            }
            truth_count += 1;
            let hit = offsets.iter().any(|&(dx, dy)| {
                let (nx, ny) = (x + dx, y + dy);
                nx >= 0
                    && ny >= 0
                    && nx < width as i64
                    && ny < height as i64
                    && segment_boundary[(ny * width as i64 + nx) as usize]
            });
            if hit {
                recalled += 1;
            }
        }
    }
    if truth_count == 0 {
        return Some(1.0);
    }
    Some(recalled as f64 / truth_count as f64)
}

/// Under-segmentation error (Neubert and Protzel form) of `segments` against `ground_truth`.
/// Returns `None` when the maps do not have equal, non-zero length.
pub fn undersegmentation_error(segments: &[u32], ground_truth: &[u32]) -> Option<f64> {
    if segments.len() != ground_truth.len() || segments.is_empty() {
        return None;
    }
    let mut overlap: HashMap<(u32, u32), u64> = HashMap::new();
    let mut segment_size: HashMap<u32, u64> = HashMap::new();
    for (&segment, &truth) in segments.iter().zip(ground_truth) {
        *overlap.entry((segment, truth)).or_insert(0) += 1;
        *segment_size.entry(segment).or_insert(0) += 1;
    }
    let mut total = 0u64;
    for (&(segment, _), &inside) in &overlap {
        let outside = segment_size.get(&segment).copied().unwrap_or(inside) - inside;
        total += inside.min(outside);
    }
    Some(total as f64 / segments.len() as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn identical_maps_recall_everything_with_no_error() {
        let labels = [0, 0, 1, 1, 0, 0, 1, 1, 2, 2, 2, 2];
        assert_eq!(boundary_recall(&labels, &labels, 4, 3, 0), Some(1.0));
        assert_eq!(undersegmentation_error(&labels, &labels), Some(0.0));
    }

    #[test]
    fn a_boundary_two_pixels_away_counts_only_with_tolerance_two() {
        // Ground truth splits columns 0-1 | 2-5; the segments split 0-3 | 4-5.
        let width = 6;
        let truth: Vec<u32> = (0..12).map(|p| u32::from(p % width >= 2)).collect();
        let segments: Vec<u32> = (0..12).map(|p| u32::from(p % width >= 4)).collect();
        assert_eq!(boundary_recall(&segments, &truth, width, 2, 1), Some(0.0));
        assert_eq!(boundary_recall(&segments, &truth, width, 2, 2), Some(1.0));
    }

    #[test]
    fn one_segment_over_two_halves_has_error_one() {
        // One segment covering two equal regions: each region adds min(half, half) = N/2.
        let truth = [0, 0, 1, 1];
        let segments = [0, 0, 0, 0];
        assert_eq!(undersegmentation_error(&segments, &truth), Some(1.0));
        let leaking = [0, 0, 0, 1];
        // Segment 0 overlaps region 0 by 2 (outside 1) and region 1 by 1 (outside 2): (1 + 1) / 4.
        assert_eq!(undersegmentation_error(&leaking, &truth), Some(0.5));
    }

    #[test]
    fn mismatched_sizes_are_none() {
        assert_eq!(boundary_recall(&[0, 1], &[0], 2, 1, 2), None);
        assert_eq!(undersegmentation_error(&[0, 1], &[0]), None);
    }
}
