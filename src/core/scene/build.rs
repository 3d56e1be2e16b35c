//! Building a `Scene` from an image: superpixels, per-segment statistics, the region adjacency graph and the
//! coarse level.
//!
//! Owns: `Scene::from_image`, `segment_stats`, `adjacency_graph`, and `superpixels_of`: SLIC on the image,
//! or, above `SLIC_FULL_RESOLUTION_PIXELS`, on a copy reduced by a whole factor (block means) whose labels
//! are scaled back up (each pixel takes its block's segment).
//! Must not: read files (that is `scene::io`) or compute classifier features (that is `crate::features`).

use std::collections::HashMap;
use std::sync::Arc;

use crate::color::{Lab, LabConverter};
use crate::ids::{RoomId, SegmentId};
use crate::raster::{DepthImage, RgbImage};
use crate::slic::{slic, SlicError, SlicParams, Superpixels};

use super::coarse::coarse_level;
use super::{
    AdjacencyEdge, AdjacencyGraph, BoundingBox, Scene, SceneError, SceneParams, SegmentMap,
    SegmentStats,
};

/// The largest image SLIC cuts at full resolution: four times the reference size (1280 x 960). Segments
/// stop growing in number past the reference size (`SceneParams::for_image_size`), so on a larger image each
/// is many pixels wide and SLIC at full resolution spends its time (about 60% of a 4096 x 4096
/// registration's CPU time, measured with perf on 2026-12-05) placing boundaries more finely than the
/// segments need; our own threshold.
pub const SLIC_FULL_RESOLUTION_PIXELS: u64 = 4 * super::REFERENCE_PIXELS;

/// The whole factor an image is reduced by before SLIC: the smallest that brings it to at most
/// `SLIC_FULL_RESOLUTION_PIXELS` (1 for an image within it).
pub fn slic_reduction(width: u32, height: u32) -> u32 {
    let mut factor = 1u32;
    while u64::from(width.div_ceil(factor)) * u64::from(height.div_ceil(factor))
        > SLIC_FULL_RESOLUTION_PIXELS
    {
        factor += 1;
    }
    factor
}

/// SLIC superpixels of `image`: at full resolution within `SLIC_FULL_RESOLUTION_PIXELS`; above it, SLIC
/// with the same parameters on the image reduced by `slic_reduction` (each pixel of the copy the mean of
/// its block), every pixel then taking its block's segment. Scaling a 4-connected labelling up this way
/// keeps each segment 4-connected and non-empty, so the result is a segment map like SLIC's own.
pub fn superpixels_of(image: &RgbImage, params: &SlicParams) -> Result<Superpixels, SlicError> {
    let factor = slic_reduction(image.width, image.height);
    if factor == 1 || image.pixels.len() as u64 != u64::from(image.width) * u64::from(image.height)
    {
        return slic(image, params);
    }
    let (width, height) = (image.width as usize, image.height as usize);
    let f = factor as usize;
    let (small_width, small_height) = (width.div_ceil(f), height.div_ceil(f));
    let mut sums = vec![[0u32; 4]; small_width * small_height];
    for y in 0..height {
        let row = &image.pixels[y * width..(y + 1) * width];
        let small_row = &mut sums[(y / f) * small_width..(y / f + 1) * small_width];
        for (x, pixel) in row.iter().enumerate() {
            let sum = &mut small_row[x / f];
            sum[0] += u32::from(pixel[0]);
            sum[1] += u32::from(pixel[1]);
            sum[2] += u32::from(pixel[2]);
            sum[3] += 1;
        }
    }
    let small = RgbImage {
        width: small_width as u32,
        height: small_height as u32,
        pixels: sums
            .iter()
            .map(|sum| {
                let mean = |channel: u32| ((channel + sum[3] / 2) / sum[3].max(1)) as u8;
                [mean(sum[0]), mean(sum[1]), mean(sum[2])]
            })
            .collect(),
    };
    drop(sums);
    let cut = slic(&small, params)?;
    let mut labels = Vec::with_capacity(width * height);
    for y in 0..height {
        let small_row = &cut.labels[(y / f) * small_width..(y / f + 1) * small_width];
        labels.extend((0..width).map(|x| small_row[x / f]));
    }
    Ok(Superpixels {
        width: image.width,
        height: image.height,
        labels,
        segment_count: cut.segment_count,
    })
}

impl Scene {
    /// Cuts an image (and its optional depth map, in millimetres) into a scene.
    ///
    /// Runs SLIC with `params.superpixels`, computes every segment's statistics, the region adjacency graph
    /// and a coarse level of about `segment_count / params.segments_per_region` regions. The depth map must
    /// have the image's size.
    pub fn from_image(
        name: impl Into<String>,
        image: RgbImage,
        depth: Option<DepthImage>,
        room: Option<RoomId>,
        params: &SceneParams,
    ) -> Result<Scene, SceneError> {
        Scene::from_shared_image(name, Arc::new(image), depth.map(Arc::new), room, params)
    }

    /// `from_image` on an image (and depth map) the caller keeps too: the scene shares them instead of
    /// holding copies.
    pub fn from_shared_image(
        name: impl Into<String>,
        image: Arc<RgbImage>,
        depth: Option<Arc<DepthImage>>,
        room: Option<RoomId>,
        params: &SceneParams,
    ) -> Result<Scene, SceneError> {
        let name = name.into();
        if params.segments_per_region == 0 {
            return Err(SceneError::BadSegmentsPerRegion { scene: name });
        }
        if let Some(depth) = &depth {
            let depth_matches = depth.width == image.width
                && depth.height == image.height
                && depth.millimetres.len() == depth.pixel_count();
            if !depth_matches {
                return Err(SceneError::DepthSizeMismatch {
                    scene: name,
                    width: image.width,
                    height: image.height,
                    depth_width: depth.width,
                    depth_height: depth.height,
                });
            }
        }
        let superpixels = match superpixels_of(&image, &params.superpixels) {
            Ok(superpixels) => superpixels,
            Err(source) => {
                return Err(SceneError::Superpixels {
                    scene: name,
                    source,
                })
            }
        };
        let segments = SegmentMap {
            width: superpixels.width,
            height: superpixels.height,
            labels: superpixels.labels,
            segment_count: superpixels.segment_count,
        };
        let stats = segment_stats(&image, depth.as_deref(), &segments);
        let adjacency = adjacency_graph(&segments, &stats);
        let target_regions = (segments.segment_count as f64 / params.segments_per_region as f64)
            .round()
            .max(1.0) as usize;
        let coarse = coarse_level(&adjacency, &stats, target_regions);
        Ok(Scene {
            name,
            image,
            depth,
            segments: Arc::new(segments),
            stats: Arc::new(stats),
            adjacency: Arc::new(adjacency),
            coarse: Arc::new(coarse),
            room,
        })
    }
}

/// Running sums for one segment.
#[derive(Clone, Copy, Default)]
struct Accumulator {
    count: u64,
    sum_x: f64,
    sum_y: f64,
    sum_lab: [f64; 3],
    sum_squared_lab: [f64; 3],
    depth_count: u64,
    sum_depth: f64,
    sum_squared_depth: f64,
    bbox: Option<BoundingBox>,
}

fn standard_deviation(sum: f64, sum_squared: f64, count: f64) -> f64 {
    let mean = sum / count;
    (sum_squared / count - mean * mean).max(0.0).sqrt()
}

/// Per-segment statistics in segment id order. `depth`, when given, must have the image's size (checked by
/// `Scene::from_image`); pixels with a zero depth reading are left out of the depth statistics.
pub fn segment_stats(
    image: &RgbImage,
    depth: Option<&DepthImage>,
    segments: &SegmentMap,
) -> Vec<SegmentStats> {
    let converter = LabConverter::new();
    let mut sums = vec![Accumulator::default(); segments.segment_count as usize];
    let width = segments.width.max(1) as usize;
    for (index, (&label, &rgb)) in segments.labels.iter().zip(&image.pixels).enumerate() {
        let Some(sum) = sums.get_mut(label as usize) else {
            continue;
        };
        let (x, y) = ((index % width) as u32, (index / width) as u32);
        let lab = converter.convert(rgb);
        let channels = [lab.l as f64, lab.a as f64, lab.b as f64];
        sum.count += 1;
        sum.sum_x += x as f64;
        sum.sum_y += y as f64;
        for ((total, squared), value) in sum
            .sum_lab
            .iter_mut()
            .zip(sum.sum_squared_lab.iter_mut())
            .zip(channels)
        {
            *total += value;
            *squared += value * value;
        }
        let pixel_box = BoundingBox {
            x0: x,
            y0: y,
            x1: x + 1,
            y1: y + 1,
        };
        sum.bbox = Some(sum.bbox.map_or(pixel_box, |bbox| bbox.union(&pixel_box)));
        if let Some(&millimetres) = depth.and_then(|depth| depth.millimetres.get(index)) {
            if millimetres > 0 {
                let value = millimetres as f64;
                sum.depth_count += 1;
                sum.sum_depth += value;
                sum.sum_squared_depth += value * value;
            }
        }
    }
    sums.iter()
        .enumerate()
        .map(|(index, sum)| {
            let count = sum.count.max(1) as f64;
            let mean = |channel: usize| (sum.sum_lab[channel] / count) as f32;
            let spread = |channel: usize| {
                standard_deviation(sum.sum_lab[channel], sum.sum_squared_lab[channel], count) as f32
            };
            let depth_count = sum.depth_count as f64;
            let has_depth = depth.is_some() && sum.depth_count > 0;
            SegmentStats {
                id: SegmentId(index as u32),
                area: sum.count as u32,
                centroid: ((sum.sum_x / count) as f32, (sum.sum_y / count) as f32),
                bbox: sum.bbox.unwrap_or_default(),
                mean_lab: Lab {
                    l: mean(0),
                    a: mean(1),
                    b: mean(2),
                },
                std_lab: Lab {
                    l: spread(0),
                    a: spread(1),
                    b: spread(2),
                },
                mean_depth_mm: has_depth.then(|| (sum.sum_depth / depth_count) as f32),
                depth_std_mm: has_depth.then(|| {
                    standard_deviation(sum.sum_depth, sum.sum_squared_depth, depth_count) as f32
                }),
                depth_pixels: sum.depth_count as u32,
            }
        })
        .collect()
}

/// The region adjacency graph: node `i` is `SegmentId(i)`; an edge joins two segments that share at least
/// one 4-connected pixel pair, weighted by the number of such pairs and the CIE76 distance of their means.
/// Edges are added in ascending (smaller id, larger id) order, so the graph is deterministic.
pub fn adjacency_graph(segments: &SegmentMap, stats: &[SegmentStats]) -> AdjacencyGraph {
    let (width, height) = (segments.width as usize, segments.height as usize);
    let labels = &segments.labels;
    let mut boundary: HashMap<(u32, u32), u32> = HashMap::new();
    let mut count_pair = |first: u32, second: u32| {
        if first != second {
            *boundary
                .entry((first.min(second), first.max(second)))
                .or_insert(0) += 1;
        }
    };
    if labels.len() == width * height {
        for y in 0..height {
            let row = y * width;
            for x in 0..width {
                let here = labels[row + x];
                if x + 1 < width {
                    count_pair(here, labels[row + x + 1]);
                }
                if y + 1 < height {
                    count_pair(here, labels[row + width + x]);
                }
            }
        }
    }
    let mut pairs: Vec<((u32, u32), u32)> = boundary.into_iter().collect();
    pairs.sort_unstable();
    let segment_count = segments.segment_count as usize;
    let mut graph = AdjacencyGraph::with_capacity(segment_count, pairs.len());
    for index in 0..segment_count {
        graph.add_node(SegmentId(index as u32));
    }
    for ((first, second), boundary_length) in pairs {
        let (Some(first_stats), Some(second_stats)) =
            (stats.get(first as usize), stats.get(second as usize))
        else {
            continue;
        };
        graph.add_edge(
            petgraph::graph::NodeIndex::new(first as usize),
            petgraph::graph::NodeIndex::new(second as usize),
            AdjacencyEdge {
                boundary_length,
                colour_contrast: first_stats.mean_lab.delta_e(second_stats.mean_lab),
            },
        );
    }
    graph
}
