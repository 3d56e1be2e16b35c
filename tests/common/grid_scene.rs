//! A hand-built grid scene for tests and benches: every cell of a grid is one segment.
//!
//! Owns: building `Scene` values (segment map, statistics, adjacency, coarse level) and matching unaries
//! from a per-cell layout of classes, without SLIC.
//! Must not: be used by library code; it exists only to feed the public API in tests.

#![allow(dead_code)]

use std::sync::Arc;

use ndarray::Array2;
use sayso_core::color::{srgb8_to_lab, Lab};
use sayso_core::ids::{RegionId, SegmentId};
use sayso_core::raster::RgbImage;
use sayso_core::scene::{
    AdjacencyEdge, AdjacencyGraph, BoundingBox, CoarseLevel, Scene, SegmentMap, SegmentStats,
};
use sayso_perception::unaries::{Unaries, UnarySource};

/// One cell of the layout: its colour and its top classes with probabilities (the rest share what is left).
#[derive(Clone, Debug)]
pub struct Cell {
    pub colour: [u8; 3],
    pub scores: Vec<(u16, f32)>,
}

/// Builds a `columns x rows` grid scene with cells of `cell` pixels; coarse regions group cells by `region`
/// (one id per cell, dense from 0).
pub fn grid_scene(
    name: &str,
    columns: u32,
    rows: u32,
    cell: u32,
    cells: &[Cell],
    region: &[u32],
) -> Scene {
    let (width, height) = (columns * cell, rows * cell);
    let mut labels = Vec::with_capacity((width * height) as usize);
    let mut pixels = Vec::with_capacity((width * height) as usize);
    for y in 0..height {
        for x in 0..width {
            let segment = (y / cell) * columns + x / cell;
            labels.push(segment);
            pixels.push(cells[segment as usize].colour);
        }
    }
    let count = columns * rows;
    let lab: Vec<Lab> = cells.iter().map(|c| srgb8_to_lab(c.colour)).collect();
    let stats = (0..count)
        .map(|s| {
            let (cx, cy) = (s % columns, s / columns);
            SegmentStats {
                id: SegmentId(s),
                area: cell * cell,
                centroid: (
                    (cx * cell) as f32 + cell as f32 / 2.0,
                    (cy * cell) as f32 + cell as f32 / 2.0,
                ),
                bbox: BoundingBox {
                    x0: cx * cell,
                    y0: cy * cell,
                    x1: (cx + 1) * cell,
                    y1: (cy + 1) * cell,
                },
                mean_lab: lab[s as usize],
                std_lab: Lab::default(),
                mean_depth_mm: None,
                depth_std_mm: None,
                depth_pixels: 0,
            }
        })
        .collect();
    let mut graph = AdjacencyGraph::default();
    for s in 0..count {
        graph.add_node(SegmentId(s));
    }
    for s in 0..count {
        let (cx, cy) = (s % columns, s / columns);
        let mut link = |other: u32| {
            graph.add_edge(
                petgraph::graph::NodeIndex::new(s as usize),
                petgraph::graph::NodeIndex::new(other as usize),
                AdjacencyEdge {
                    boundary_length: cell,
                    colour_contrast: lab[s as usize].delta_e(lab[other as usize]),
                },
            );
        };
        if cx + 1 < columns {
            link(s + 1);
        }
        if cy + 1 < rows {
            link(s + columns);
        }
    }
    let region_count = region.iter().copied().max().map(|m| m + 1).unwrap_or(0);
    let mut members = vec![Vec::new(); region_count as usize];
    for (s, &r) in region.iter().enumerate() {
        members[r as usize].push(SegmentId(s as u32));
    }
    Scene {
        name: name.to_string(),
        image: Arc::new(RgbImage {
            width,
            height,
            pixels,
        }),
        depth: None,
        segments: Arc::new(SegmentMap {
            width,
            height,
            labels,
            segment_count: count,
        }),
        stats: Arc::new(stats),
        adjacency: Arc::new(graph),
        coarse: Arc::new(CoarseLevel {
            region_of: region.iter().map(|&r| RegionId(r)).collect(),
            members,
        }),
        room: None,
    }
}

/// Unaries from the cells' scores; classes not listed share the remaining probability evenly.
pub fn grid_unaries(cells: &[Cell], class_count: usize) -> Unaries {
    let mut log_probs = Array2::<f32>::zeros((cells.len(), class_count));
    for (s, cell) in cells.iter().enumerate() {
        let listed: f32 = cell.scores.iter().map(|&(_, p)| p).sum();
        let rest = ((1.0 - listed).max(1e-3)) / (class_count - cell.scores.len()).max(1) as f32;
        for c in 0..class_count {
            let p = cell
                .scores
                .iter()
                .find(|&&(class, _)| class as usize == c)
                .map(|&(_, p)| p)
                .unwrap_or(rest);
            log_probs[[s, c]] = p.max(1e-6).ln();
        }
    }
    Unaries {
        log_probs,
        source: UnarySource::BuiltIn {
            model: "test".to_string(),
        },
    }
}
