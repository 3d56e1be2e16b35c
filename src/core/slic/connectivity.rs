//! The SLIC connectivity pass and its obviously-correct reference.
//!
//! Owns: `enforce_connectivity` (the fast queue-based pass) and `enforce_connectivity_reference` (a slow
//! fixed-point version for tiny inputs, kept so a property test can compare the two), plus
//! `is_each_segment_connected`, the check both must pass.
//! Must not: look at cluster centres; it reads label maps and the pixel colours (only to choose which
//! neighbour a small piece joins) and writes a label map.
//!
//! The rule both implement:
//! 1. Split the input labels into 4-connected components, numbered in raster order of their first pixel.
//! 2. Visit the components in that order. A component whose current size (its own pixels plus any pieces
//!    merged into it so far) is below `min_pixels` joins the adjacent segment whose mean colour is nearest
//!    in CIELAB (mean sRGB of its pixels, rounded, converted with `LabConverter`); ties go to the segment
//!    with the smaller number. A component with no other adjacent segment stays as it is. Adjacency is that
//!    of the original components, so a joined segment stays 4-connected.
//! 3. The surviving segments are numbered densely from 0 in raster order of their first pixel.
//!
//! Joining the most similar neighbour (rather than, say, the one to the left) keeps a sliver at an object
//! edge on its own side of the edge, which is what boundary recall measures.

use crate::color::LabConverter;

/// Marks a pixel not yet given an output label.
const UNSET: u32 = u32::MAX;

/// Size, colour sum and merge target of one component during the merge step.
#[derive(Clone, Copy, Debug)]
struct ComponentStats {
    size: u64,
    colour_sum: [u64; 3],
    /// The segment this component was merged into, or itself.
    parent: u32,
}

impl ComponentStats {
    fn mean_colour(&self) -> [u8; 3] {
        let size = self.size.max(1);
        self.colour_sum
            .map(|sum| ((sum + size / 2) / size).min(255) as u8)
    }
}

fn find_root(stats: &mut [ComponentStats], component: u32) -> u32 {
    let mut root = component;
    while stats[root as usize].parent != root {
        root = stats[root as usize].parent;
    }
    // Path compression.
    let mut current = component;
    while stats[current as usize].parent != root {
        let next = stats[current as usize].parent;
        stats[current as usize].parent = root;
        current = next;
    }
    root
}

fn squared_lab_distance(converter: &LabConverter, first: [u8; 3], second: [u8; 3]) -> f32 {
    let (p, q) = (converter.convert(first), converter.convert(second));
    let (dl, da, db) = (p.l - q.l, p.a - q.a, p.b - q.b);
    dl * dl + da * da + db * db
}

/// Step 2 of the rule, shared by the fast pass and the reference: merges small components given their
/// statistics and, for each component, its sorted, deduplicated adjacent components. Returns the dense
/// output segment of every component and the segment count.
fn merge_small_components(
    stats: &mut [ComponentStats],
    adjacency: &[Vec<u32>],
    min_pixels: usize,
) -> (Vec<u32>, u32) {
    let converter = LabConverter::new();
    for component in 0..stats.len() as u32 {
        let root = find_root(stats, component);
        if root != component || stats[root as usize].size >= min_pixels as u64 {
            continue;
        }
        let own_colour = stats[root as usize].mean_colour();
        let mut best: Option<(f32, u32)> = None;
        for &neighbour in &adjacency[component as usize] {
            let target = find_root(stats, neighbour);
            if target == root {
                continue;
            }
            let distance =
                squared_lab_distance(&converter, own_colour, stats[target as usize].mean_colour());
            let better = match best {
                None => true,
                Some((best_distance, best_target)) => {
                    distance < best_distance || (distance == best_distance && target < best_target)
                }
            };
            if better {
                best = Some((distance, target));
            }
        }
        if let Some((_, target)) = best {
            let moved = stats[root as usize];
            let kept = &mut stats[target as usize];
            kept.size += moved.size;
            for (sum, added) in kept.colour_sum.iter_mut().zip(moved.colour_sum) {
                *sum += added;
            }
            stats[root as usize].parent = target;
        }
    }
    let mut dense = vec![UNSET; stats.len()];
    let mut segment_count = 0u32;
    for component in 0..stats.len() as u32 {
        let root = find_root(stats, component);
        if dense[root as usize] == UNSET {
            dense[root as usize] = segment_count;
            segment_count += 1;
        }
        dense[component as usize] = dense[root as usize];
    }
    (dense, segment_count)
}

/// Relabels `labels` (row-major, `width * height`) so every segment is one 4-connected region, merging
/// components below `min_pixels` into their most similar neighbour by the colours in `pixels` (sRGB, one per
/// label). Returns the new labels and the segment count; labels are dense from 0. When `labels` or `pixels`
/// does not hold `width * height` entries the result is empty.
pub fn enforce_connectivity(
    labels: &[u32],
    pixels: &[[u8; 3]],
    width: usize,
    height: usize,
    min_pixels: usize,
) -> (Vec<u32>, u32) {
    let pixel_count = width * height;
    if labels.len() != pixel_count || pixels.len() != pixel_count || pixel_count == 0 {
        return (Vec::new(), 0);
    }
    let mut output = vec![UNSET; pixel_count];
    let mut stats: Vec<ComponentStats> = Vec::new();
    // The component being grown; also the breadth-first queue (read position `head`).
    let mut queue: Vec<u32> = Vec::with_capacity(1024);
    for start in 0..pixel_count {
        if output[start] != UNSET {
            continue;
        }
        let input_label = labels[start];
        let new_component = stats.len() as u32;
        let mut component = ComponentStats {
            size: 0,
            colour_sum: [0; 3],
            parent: new_component,
        };
        queue.clear();
        queue.push(start as u32);
        output[start] = new_component;
        let mut head = 0;
        while head < queue.len() {
            let pixel = queue[head] as usize;
            head += 1;
            component.size += 1;
            for (sum, value) in component.colour_sum.iter_mut().zip(pixels[pixel]) {
                *sum += u64::from(value);
            }
            let (x, y) = (pixel % width, pixel / width);
            let mut visit = |neighbour: usize| {
                if output[neighbour] == UNSET && labels[neighbour] == input_label {
                    output[neighbour] = new_component;
                    queue.push(neighbour as u32);
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
        stats.push(component);
    }
    drop(queue);
    // Adjacency is only needed for components that start below the threshold: sizes only grow.
    let is_small: Vec<bool> = stats
        .iter()
        .map(|component| component.size < min_pixels as u64)
        .collect();
    let mut adjacency: Vec<Vec<u32>> = vec![Vec::new(); stats.len()];
    let mut note = |first: u32, second: u32| {
        if first != second {
            if is_small[first as usize] {
                adjacency[first as usize].push(second);
            }
            if is_small[second as usize] {
                adjacency[second as usize].push(first);
            }
        }
    };
    for y in 0..height {
        let row = y * width;
        for x in 0..width {
            let here = output[row + x];
            if x + 1 < width {
                note(here, output[row + x + 1]);
            }
            if y + 1 < height {
                note(here, output[row + width + x]);
            }
        }
    }
    for neighbours in &mut adjacency {
        neighbours.sort_unstable();
        neighbours.dedup();
    }
    let (dense, segment_count) = merge_small_components(&mut stats, &adjacency, min_pixels);
    for label in &mut output {
        *label = dense[*label as usize];
    }
    (output, segment_count)
}

/// The same rule as `enforce_connectivity`, computed the slow, obvious way: component ids by repeated
/// relaxation to the smallest raster index reachable through equal-label neighbours, sizes, colour sums and
/// adjacency by scanning every pixel per component, then the shared merge step. For tests on tiny inputs
/// only (quadratic time).
pub fn enforce_connectivity_reference(
    labels: &[u32],
    pixels: &[[u8; 3]],
    width: usize,
    height: usize,
    min_pixels: usize,
) -> (Vec<u32>, u32) {
    let pixel_count = width * height;
    if labels.len() != pixel_count || pixels.len() != pixel_count || pixel_count == 0 {
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
    let firsts: Vec<usize> = (0..pixel_count).filter(|&p| root[p] == p).collect();
    let component_of =
        |pixel: usize| firsts.iter().position(|&f| f == root[pixel]).unwrap_or(0) as u32;
    let components: Vec<u32> = (0..pixel_count).map(component_of).collect();
    let mut stats: Vec<ComponentStats> = Vec::new();
    let mut adjacency: Vec<Vec<u32>> = Vec::new();
    for id in 0..firsts.len() as u32 {
        let members: Vec<usize> = (0..pixel_count).filter(|&p| components[p] == id).collect();
        let mut colour_sum = [0u64; 3];
        for &pixel in &members {
            for (sum, value) in colour_sum.iter_mut().zip(pixels[pixel]) {
                *sum += u64::from(value);
            }
        }
        let size = members.len() as u64;
        let mut adjacent: Vec<u32> = Vec::new();
        if size < min_pixels as u64 {
            for &pixel in &members {
                for neighbour in neighbours(pixel, width, height) {
                    let other = components[neighbour];
                    if other != id && !adjacent.contains(&other) {
                        adjacent.push(other);
                    }
                }
            }
            adjacent.sort_unstable();
        }
        stats.push(ComponentStats {
            size,
            colour_sum,
            parent: id,
        });
        adjacency.push(adjacent);
    }
    let (dense, segment_count) = merge_small_components(&mut stats, &adjacency, min_pixels);
    let output = components.iter().map(|&c| dense[c as usize]).collect();
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

    const GREY: [u8; 3] = [128, 128, 128];

    #[test]
    fn a_split_label_becomes_two_segments() {
        // Label 0 appears in two separate places.
        let labels = [0, 1, 0, 0, 1, 0];
        let (output, count) = enforce_connectivity(&labels, &[GREY; 6], 3, 2, 1);
        assert_eq!(output, vec![0, 1, 2, 0, 1, 2]);
        assert_eq!(count, 3);
    }

    #[test]
    fn a_small_component_joins_its_only_neighbour() {
        let labels = [0, 0, 0, 0, 0, 1, 0, 0, 0];
        let (output, count) = enforce_connectivity(&labels, &[GREY; 9], 3, 3, 2);
        assert_eq!(output, vec![0; 9]);
        assert_eq!(count, 1);
    }

    #[test]
    fn a_small_component_joins_the_neighbour_of_nearest_colour() {
        // A red left half, a blue right half, and a reddish one-pixel sliver (label 2) between them that
        // touches both; it must join the red side, not the first segment in raster order.
        let red = [200, 30, 30];
        let blue = [30, 30, 200];
        let labels = [0, 0, 2, 1, 0, 0, 1, 1];
        let pixels = [blue, blue, [190, 40, 40], red, blue, blue, red, red];
        // Label 0 is blue here, label 1 red.
        let (output, count) = enforce_connectivity(&labels, &pixels, 4, 2, 2);
        assert_eq!(output, vec![0, 0, 1, 1, 0, 0, 1, 1]);
        assert_eq!(count, 2);
    }

    #[test]
    fn a_lone_component_is_kept_even_when_small() {
        let (output, count) = enforce_connectivity(&[5, 5], &[GREY; 2], 2, 1, 10);
        assert_eq!(output, vec![0, 0]);
        assert_eq!(count, 1);
    }

    #[test]
    fn the_checker_rejects_split_and_missing_segments() {
        assert!(!is_each_segment_connected(&[0, 1, 0], 3, 1, 2));
        assert!(!is_each_segment_connected(&[0, 0, 2], 3, 1, 3));
        assert!(is_each_segment_connected(&[0, 1, 1], 3, 1, 2));
    }

    type LabelMap = (usize, usize, Vec<u32>, Vec<[u8; 3]>, usize);

    fn label_maps() -> impl Strategy<Value = LabelMap> {
        (1usize..9, 1usize..9, 1u32..5, 1usize..6).prop_flat_map(
            |(width, height, label_count, min_pixels)| {
                (
                    proptest::collection::vec(0..label_count, width * height),
                    // Few colour levels, so equal distances (and the tie rule) come up too.
                    proptest::collection::vec(
                        proptest::array::uniform3(0u8..4).prop_map(|c| c.map(|v| v * 80)),
                        width * height,
                    ),
                )
                    .prop_map(move |(labels, pixels)| (width, height, labels, pixels, min_pixels))
            },
        )
    }

    proptest! {
        #[test]
        fn fast_pass_matches_reference((width, height, labels, pixels, min_pixels) in label_maps()) {
            let fast = enforce_connectivity(&labels, &pixels, width, height, min_pixels);
            let slow = enforce_connectivity_reference(&labels, &pixels, width, height, min_pixels);
            prop_assert_eq!(&fast, &slow);
        }

        #[test]
        fn every_segment_is_connected_and_ids_are_dense(
            (width, height, labels, pixels, min_pixels) in label_maps()
        ) {
            let (output, count) = enforce_connectivity(&labels, &pixels, width, height, min_pixels);
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
