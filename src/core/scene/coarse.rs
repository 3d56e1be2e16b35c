//! The coarse level: fine segments grouped into regions by graph-based merging on the adjacency graph.
//!
//! Owns: `coarse_level` and the merging criterion.
//! Must not: look at pixels; it reads only the adjacency graph and per-segment statistics.
//!
//! The criterion follows Felzenszwalb and Huttenlocher ("Efficient Graph-Based Image Segmentation", IJCV
//! 59(2), 2004), applied to segments instead of pixels: edges are visited in ascending colour contrast, and
//! the regions `A` and `B` at the ends of an edge of contrast `w` merge when
//! `w <= min(Int(A) + k / |A|, Int(B) + k / |B|)`, where `|A|` is the region's area in pixels and `Int(A)` its
//! internal difference: the largest contrast merged inside it so far (0 for a single segment). The scale `k`
//! is found by bisection
//! (on a log scale) as the smallest value whose result has at most the target number of regions.

use crate::ids::{RegionId, SegmentId};

use super::{AdjacencyGraph, CoarseLevel, SegmentStats};

/// Union-find over segments, tracking each region's area and internal difference.
struct Regions {
    parent: Vec<usize>,
    area: Vec<f64>,
    internal: Vec<f64>,
    count: usize,
}

impl Regions {
    fn new(stats: &[SegmentStats]) -> Regions {
        Regions {
            parent: (0..stats.len()).collect(),
            area: stats.iter().map(|s| s.area.max(1) as f64).collect(),
            internal: vec![0.0; stats.len()],
            count: stats.len(),
        }
    }

    fn root(&mut self, mut node: usize) -> usize {
        while self.parent[node] != node {
            self.parent[node] = self.parent[self.parent[node]];
            node = self.parent[node];
        }
        node
    }

    /// Merges the roots `first` and `second` joined by an edge of contrast `weight`.
    fn merge(&mut self, first: usize, second: usize, weight: f64) {
        let (keep, gone) = (first.min(second), first.max(second));
        self.parent[gone] = keep;
        self.area[keep] += self.area[gone];
        self.internal[keep] = self.internal[keep].max(self.internal[gone]).max(weight);
        self.count -= 1;
    }
}

/// Edges as (contrast, first, second), sorted ascending with ties broken by the ids.
fn sorted_edges(graph: &AdjacencyGraph) -> Vec<(f64, usize, usize)> {
    let mut edges: Vec<(f64, usize, usize)> = graph
        .raw_edges()
        .iter()
        .map(|edge| {
            let (a, b) = (edge.source().index(), edge.target().index());
            (edge.weight.colour_contrast as f64, a.min(b), a.max(b))
        })
        .collect();
    edges.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)).then(x.2.cmp(&y.2)));
    edges
}

fn merge_with_scale(stats: &[SegmentStats], edges: &[(f64, usize, usize)], k: f64) -> Regions {
    let mut regions = Regions::new(stats);
    for &(weight, first, second) in edges {
        if first >= stats.len() || second >= stats.len() {
            continue;
        }
        let (root_first, root_second) = (regions.root(first), regions.root(second));
        if root_first == root_second {
            continue;
        }
        let threshold_first = regions.internal[root_first] + k / regions.area[root_first];
        let threshold_second = regions.internal[root_second] + k / regions.area[root_second];
        if weight <= threshold_first.min(threshold_second) {
            regions.merge(root_first, root_second, weight);
        }
    }
    regions
}

/// Groups the fine segments into about `target_regions` regions (at most that many when the adjacency
/// graph is connected); every segment lands in exactly one region, ids dense in order of first member.
pub fn coarse_level(
    graph: &AdjacencyGraph,
    stats: &[SegmentStats],
    target_regions: usize,
) -> CoarseLevel {
    let edges = sorted_edges(graph);
    let target = target_regions.max(1);
    // Bisection on log10(k): at k = 10^-3 almost nothing merges, at 10^12 everything connected does.
    let (mut low, mut high) = (-3.0f64, 12.0f64);
    for _ in 0..48 {
        let middle = 0.5 * (low + high);
        if merge_with_scale(stats, &edges, 10f64.powf(middle)).count <= target {
            high = middle;
        } else {
            low = middle;
        }
    }
    let mut regions = merge_with_scale(stats, &edges, 10f64.powf(high));
    let mut region_of_root = vec![u32::MAX; stats.len()];
    let mut region_of = Vec::with_capacity(stats.len());
    let mut members: Vec<Vec<SegmentId>> = Vec::new();
    for segment in 0..stats.len() {
        let root = regions.root(segment);
        if region_of_root[root] == u32::MAX {
            region_of_root[root] = members.len() as u32;
            members.push(Vec::new());
        }
        let region = region_of_root[root];
        region_of.push(RegionId(region));
        members[region as usize].push(SegmentId(segment as u32));
    }
    CoarseLevel { region_of, members }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::color::Lab;
    use crate::scene::{AdjacencyEdge, BoundingBox};
    use petgraph::graph::NodeIndex;
    use proptest::prelude::*;

    fn segment(id: usize, area: u32, lightness: f32) -> SegmentStats {
        SegmentStats {
            id: SegmentId(id as u32),
            area,
            centroid: (0.0, 0.0),
            bbox: BoundingBox::default(),
            mean_lab: Lab {
                l: lightness,
                a: 0.0,
                b: 0.0,
            },
            std_lab: Lab::default(),
            mean_depth_mm: None,
            depth_std_mm: None,
            depth_pixels: 0,
        }
    }

    /// A `columns x rows` grid graph of segments with the given lightness values.
    fn grid(columns: usize, rows: usize, lightness: &[f32]) -> (AdjacencyGraph, Vec<SegmentStats>) {
        let stats: Vec<SegmentStats> = (0..columns * rows)
            .map(|id| {
                segment(
                    id,
                    50 + (id as u32 * 37) % 100,
                    lightness[id % lightness.len()],
                )
            })
            .collect();
        let mut graph = AdjacencyGraph::default();
        for stat in &stats {
            graph.add_node(stat.id);
        }
        let mut join = |a: usize, b: usize| {
            graph.add_edge(
                NodeIndex::new(a),
                NodeIndex::new(b),
                AdjacencyEdge {
                    boundary_length: 1,
                    colour_contrast: stats[a].mean_lab.delta_e(stats[b].mean_lab),
                },
            );
        };
        for row in 0..rows {
            for column in 0..columns {
                let id = row * columns + column;
                if column + 1 < columns {
                    join(id, id + 1);
                }
                if row + 1 < rows {
                    join(id, id + columns);
                }
            }
        }
        (graph, stats)
    }

    #[test]
    fn two_flat_halves_become_two_regions() {
        // Left three columns dark, right three bright.
        let lightness: Vec<f32> = (0..36)
            .map(|id| if id % 6 < 3 { 20.0 } else { 80.0 })
            .collect();
        let (graph, stats) = grid(6, 6, &lightness);
        let coarse = coarse_level(&graph, &stats, 2);
        assert_eq!(coarse.members.len(), 2);
        for (id, region) in coarse.region_of.iter().enumerate() {
            assert_eq!(region.index(), usize::from(id % 6 >= 3));
        }
    }

    proptest! {
        #[test]
        fn every_segment_is_in_exactly_one_region_and_the_target_holds(
            columns in 1usize..8,
            rows in 1usize..8,
            lightness in proptest::collection::vec(0.0f32..100.0, 1..20),
            target in 1usize..20,
        ) {
            let (graph, stats) = grid(columns, rows, &lightness);
            let coarse = coarse_level(&graph, &stats, target);
            prop_assert_eq!(coarse.region_of.len(), stats.len());
            prop_assert!(coarse.members.len() <= target.max(1));
            let mut seen = vec![0; stats.len()];
            for (region, members) in coarse.members.iter().enumerate() {
                prop_assert!(!members.is_empty());
                prop_assert!(members.windows(2).all(|pair| pair[0] < pair[1]));
                for member in members {
                    seen[member.index()] += 1;
                    prop_assert_eq!(coarse.region_of[member.index()].index(), region);
                }
            }
            prop_assert!(seen.iter().all(|&times| times == 1));
        }
    }
}
