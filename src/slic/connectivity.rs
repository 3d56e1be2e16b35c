//! The SLIC connectivity pass and its obviously-correct reference.
//!
//! Owns: `enforce_connectivity` (the fast queue-based pass) and `enforce_connectivity_reference` (a slow
//! fixed-point version for tiny inputs, kept so a property test can compare the two), plus
//! `is_each_segment_connected`, the check both must pass.
//! Must not: look at colours or positions of centres; it only reads and writes label maps.
//!
//! The rule both implement: walk the pixels in raster order; every pixel not yet relabelled starts a new
//! 4-connected component of its input label. If the component has at least `min_pixels` pixels, or it is the
//! very first component of the image, it becomes the next output segment. Otherwise it joins the output
//! segment of the pixel just before its first pixel in raster order (the left neighbour, or the upper
//! neighbour in column 0), which is adjacent to it, so the joined segment stays 4-connected.

/// Marks a pixel not yet given an output label.
const UNSET: u32 = u32::MAX;

/// Relabels `labels` (row-major, `width * height`) so every segment is one 4-connected region, merging
/// components below `min_pixels` into a neighbour. Returns the new labels and the segment count; labels are
/// dense from 0. A label map whose length is not `width * height` yields an empty result.
pub fn enforce_connectivity(
    labels: &[u32],
    width: usize,
    height: usize,
    min_pixels: usize,
) -> (Vec<u32>, u32) {
    let pixel_count = width * height;
    if labels.len() != pixel_count || pixel_count == 0 {
        return (Vec::new(), 0);
    }
    let mut output = vec![UNSET; pixel_count];
    // The component being grown; also the breadth-first queue (read position `head`).
    let mut component: Vec<u32> = Vec::with_capacity(1024);
    let mut segment_count: u32 = 0;
    for start in 0..pixel_count {
        if output[start] != UNSET {
            continue;
        }
        let input_label = labels[start];
        let new_label = segment_count;
        component.clear();
        component.push(start as u32);
        output[start] = new_label;
        let mut head = 0;
        while head < component.len() {
            let pixel = component[head] as usize;
            head += 1;
            let (x, y) = (pixel % width, pixel / width);
            let mut visit = |neighbour: usize| {
                if output[neighbour] == UNSET && labels[neighbour] == input_label {
                    output[neighbour] = new_label;
                    component.push(neighbour as u32);
                }
            };
            if x > 0 {
                visit(pixel - 1);
            }
            if x + 1 < width {
                visit(pixel + 1);
            }
            if y > 0 {
                visit(pixel - width);
            }
            if y + 1 < height {
                visit(pixel + width);
            }
        }
        if component.len() >= min_pixels || start == 0 {
            segment_count += 1;
        } else {
            let before = if start % width > 0 {
                start - 1
            } else {
                start - width
            };
            let joined = output[before];
            for &pixel in &component {
                output[pixel as usize] = joined;
            }
        }
    }
    (output, segment_count)
}

/// The same rule as `enforce_connectivity`, computed the slow, obvious way: component ids by repeated
/// relaxation to the smallest raster index reachable through equal-label neighbours, then one pass over the
/// components in order of their first pixel. For tests on tiny inputs only (quadratic time).
pub fn enforce_connectivity_reference(
    labels: &[u32],
    width: usize,
    height: usize,
    min_pixels: usize,
) -> (Vec<u32>, u32) {
    let pixel_count = width * height;
    if labels.len() != pixel_count || pixel_count == 0 {
        return (Vec::new(), 0);
    }
    // root[p] converges to the smallest index of p's component, which is its first pixel in raster order.
    let mut root: Vec<usize> = (0..pixel_count).collect();
    let mut changed = true;
    while changed {
        changed = false;
        for pixel in 0..pixel_count {
            for neighbour in neighbours(pixel, width, height) {
                if labels[neighbour] == labels[pixel] && root[neighbour] < root[pixel] {
                    root[pixel] = root[neighbour];
                    changed = true;
                }
            }
        }
    }
    let mut output = vec![UNSET; pixel_count];
    let mut segment_count = 0u32;
    for first in 0..pixel_count {
        if root[first] != first {
            continue;
        }
        let size = root.iter().filter(|&&r| r == first).count();
        let label = if size >= min_pixels || first == 0 {
            segment_count += 1;
            segment_count - 1
        } else if first % width > 0 {
            output[first - 1]
        } else {
            output[first - width]
        };
        for pixel in 0..pixel_count {
            if root[pixel] == first {
                output[pixel] = label;
            }
        }
    }
    (output, segment_count)
}

fn neighbours(pixel: usize, width: usize, height: usize) -> impl Iterator<Item = usize> {
    let (x, y) = (pixel % width, pixel / width);
    [
        (x > 0).then(|| pixel - 1),
        (x + 1 < width).then(|| pixel + 1),
        (y > 0).then(|| pixel - width),
        (y + 1 < height).then(|| pixel + width),
    ]
    .into_iter()
    .flatten()
}

/// True when every label `0..segment_count` occurs and its pixels form one 4-connected region.
pub fn is_each_segment_connected(labels: &[u32], width: usize, height: usize, count: u32) -> bool {
    if labels.len() != width * height {
        return false;
    }
    let mut first_pixel = vec![usize::MAX; count as usize];
    let mut sizes = vec![0usize; count as usize];
    for (pixel, &label) in labels.iter().enumerate() {
        let Some(size) = sizes.get_mut(label as usize) else {
            return false;
        };
        *size += 1;
        if first_pixel[label as usize] == usize::MAX {
            first_pixel[label as usize] = pixel;
        }
    }
    let mut seen = vec![false; labels.len()];
    for label in 0..count as usize {
        if sizes[label] == 0 {
            return false;
        }
        let mut stack = vec![first_pixel[label]];
        seen[first_pixel[label]] = true;
        let mut reached = 0;
        while let Some(pixel) = stack.pop() {
            reached += 1;
            for neighbour in neighbours(pixel, width, height) {
                if !seen[neighbour] && labels[neighbour] as usize == label {
                    seen[neighbour] = true;
                    stack.push(neighbour);
                }
            }
        }
        if reached != sizes[label] {
            return false;
        }
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn a_split_label_becomes_two_segments() {
        // Label 0 appears in two separate places.
        let labels = [0, 1, 0, 0, 1, 0];
        let (output, count) = enforce_connectivity(&labels, 3, 2, 1);
        assert_eq!(output, vec![0, 1, 2, 0, 1, 2]);
        assert_eq!(count, 3);
    }

    #[test]
    fn a_small_component_joins_its_left_neighbour() {
        let labels = [0, 0, 0, 0, 0, 1, 0, 0, 0];
        let (output, count) = enforce_connectivity(&labels, 3, 3, 2);
        assert_eq!(output, vec![0; 9]);
        assert_eq!(count, 1);
    }

    #[test]
    fn a_small_component_in_column_zero_joins_the_one_above() {
        let labels = [0, 0, 1, 0];
        let (output, count) = enforce_connectivity(&labels, 2, 2, 2);
        assert_eq!(output, vec![0, 0, 0, 0]);
        assert_eq!(count, 1);
    }

    #[test]
    fn the_checker_rejects_split_and_missing_segments() {
        assert!(!is_each_segment_connected(&[0, 1, 0], 3, 1, 2));
        assert!(!is_each_segment_connected(&[0, 0, 2], 3, 1, 3));
        assert!(is_each_segment_connected(&[0, 1, 1], 3, 1, 2));
    }

    fn label_maps() -> impl Strategy<Value = (usize, usize, Vec<u32>, usize)> {
        (1usize..9, 1usize..9, 1u32..5, 1usize..6).prop_flat_map(
            |(width, height, label_count, min_pixels)| {
                proptest::collection::vec(0..label_count, width * height)
                    .prop_map(move |labels| (width, height, labels, min_pixels))
            },
        )
    }

    proptest! {
        #[test]
        fn fast_pass_matches_reference((width, height, labels, min_pixels) in label_maps()) {
            let fast = enforce_connectivity(&labels, width, height, min_pixels);
            let slow = enforce_connectivity_reference(&labels, width, height, min_pixels);
            prop_assert_eq!(&fast, &slow);
        }

        #[test]
        fn every_segment_is_connected_and_ids_are_dense(
            (width, height, labels, min_pixels) in label_maps()
        ) {
            let (output, count) = enforce_connectivity(&labels, width, height, min_pixels);
            prop_assert!(is_each_segment_connected(&output, width, height, count));
            // Output segments only ever merge input components, never split one.
            for pixel in 0..labels.len() {
                for neighbour in neighbours(pixel, width, height) {
                    if labels[pixel] == labels[neighbour] {
                        prop_assert_eq!(output[pixel], output[neighbour]);
                    }
                }
            }
        }
    }
}
