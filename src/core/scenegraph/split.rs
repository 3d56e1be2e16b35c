//! Splitting one patch of a class into a given number of objects when the operator counted more objects
//! than the labels show apart and the hypotheses do not tell them apart either (one hypothesis spans two
//! chairs joined through a table edge).
//!
//! Owns: `geodesic_parts`, a k-medoids clustering of the patch's segments under geodesic distance over
//! the segment adjacency graph (k-medoids: Kaufman and Rousseeuw, 1987; geodesic distances by Dijkstra's
//! algorithm). Crossing between two segments costs more the stronger the colour contrast (CIE76) and the
//! depth jump between them, so parts meet where objects meet: along edges and occlusion boundaries.
//! Must not: change labels or hypotheses, or decide how many parts a patch needs (`objects` does).

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use super::instances::edge_strength;

// Crossing costs 1 plus the edge's strength (`super::instances::edge_strength`: colour contrast in units
// of 10 CIE76, depth step in units of 10%). Not tuned: on training renders (`examples/render_objects.rs`,
// seeds 200000 and 200021, 21 each) the mean object accuracy after the notes moved by at most 0.005 for
// contrast units 5-20 and depth shares 0.05-0.3, or with depth ignored.

/// Rounds of medoid updates; the assignment has settled on every patch seen well before this.
const ROUNDS: usize = 6;

/// Members tried as a piece's medoid in one round (see `geodesic_parts`).
const MEDOID_CANDIDATES: usize = 48;

/// One segment of the patch: its neighbours inside the patch with step costs, and its pixel area.
struct Node {
    steps: Vec<(usize, u64)>,
    area: u64,
}

/// Step costs in thousandths, so Dijkstra's queue orders integers and the result is deterministic.
fn step_cost(contrast: f32, depth: (Option<f32>, Option<f32>)) -> u64 {
    let cost = 1.0 + edge_strength(contrast, depth);
    (cost.min(1.0e6) * 1000.0).round() as u64
}

/// Geodesic distances from `sources` to every node of the patch (`u64::MAX`: unreachable), with the
/// source each node is nearest to (ties: the lower source position).
fn nearest(nodes: &[Node], sources: &[usize]) -> (Vec<u64>, Vec<usize>) {
    let mut distance = vec![u64::MAX; nodes.len()];
    let mut owner = vec![usize::MAX; nodes.len()];
    let mut queue = BinaryHeap::new();
    for (position, &source) in sources.iter().enumerate() {
        if distance[source] != 0 {
            distance[source] = 0;
            owner[source] = position;
            queue.push(Reverse((0u64, position, source)));
        }
    }
    while let Some(Reverse((at, position, node))) = queue.pop() {
        if at > distance[node] || owner[node] != position {
            continue;
        }
        for &(next, cost) in &nodes[node].steps {
            let reach = at.saturating_add(cost);
            if reach < distance[next] || (reach == distance[next] && position < owner[next]) {
                distance[next] = reach;
                owner[next] = position;
                queue.push(Reverse((reach, position, next)));
            }
        }
    }
    (distance, owner)
}

/// Scratch of one medoid search: single-source Dijkstra runs that score a candidate medoid of a piece.
struct MedoidSearch {
    distance: Vec<u64>,
    queue: BinaryHeap<Reverse<(u64, usize)>>,
}

impl MedoidSearch {
    fn new(node_count: usize) -> MedoidSearch {
        MedoidSearch {
            distance: vec![u64::MAX; node_count],
            queue: BinaryHeap::new(),
        }
    }

    /// The sum over the piece's members (`in_piece`, `member_count` of them) of the geodesic distance from
    /// `source` (over the whole patch; `u64::MAX / 2` when unreachable) times the member's area: the total
    /// `nearest` from `source` gives. Dijkstra settles nodes in order of distance and a settled distance is
    /// final, so the run stops once every member is settled, and gives up (`None`) once the members settled
    /// so far already pass `limit` (the total can only grow).
    fn weighted_total(
        &mut self,
        nodes: &[Node],
        source: usize,
        in_piece: &[bool],
        member_count: usize,
        limit: u128,
    ) -> Option<u128> {
        self.distance.fill(u64::MAX);
        self.queue.clear();
        self.distance[source] = 0;
        self.queue.push(Reverse((0, source)));
        let (mut total, mut settled) = (0u128, 0usize);
        while settled < member_count {
            let Some(Reverse((at, node))) = self.queue.pop() else {
                break;
            };
            if at > self.distance[node] {
                continue;
            }
            if in_piece[node] {
                settled += 1;
                total += u128::from(at.min(u64::MAX / 2)) * u128::from(nodes[node].area);
                if total > limit {
                    return None;
                }
            }
            for &(next, cost) in &nodes[node].steps {
                let reach = at.saturating_add(cost);
                if reach < self.distance[next] {
                    self.distance[next] = reach;
                    self.queue.push(Reverse((reach, next)));
                }
            }
        }
        if settled < member_count {
            // Members no path reaches count as far as `nearest` leaves them.
            for (node, _) in in_piece.iter().enumerate().filter(|(_, &flag)| flag) {
                if self.distance[node] == u64::MAX {
                    total += u128::from(u64::MAX / 2) * u128::from(nodes[node].area);
                }
            }
        }
        (total <= limit).then_some(total)
    }
}

/// Splits a connected patch into `parts` pieces by geodesic k-medoids. `patch` lists segment indices;
/// `neighbours[s]` holds (neighbour, colour contrast) for every segment; `depth[s]` is the mean depth in
/// millimetres when known; `area[s]` the pixel count. Returns the pieces (each ascending, none empty), or
/// the patch whole when it cannot be split into more than one piece.
pub fn geodesic_parts(
    patch: &[usize],
    parts: usize,
    neighbours: &[Vec<(usize, f32)>],
    depth: &[Option<f32>],
    area: &[u32],
) -> Vec<Vec<usize>> {
    let parts = parts.min(patch.len());
    if parts < 2 {
        return vec![patch.to_vec()];
    }
    let mut local = std::collections::HashMap::with_capacity(patch.len());
    for (index, &segment) in patch.iter().enumerate() {
        local.insert(segment, index);
    }
    let nodes: Vec<Node> = patch
        .iter()
        .map(|&segment| Node {
            steps: neighbours
                .get(segment)
                .into_iter()
                .flatten()
                .filter_map(|&(next, contrast)| {
                    local.get(&next).map(|&index| {
                        let depths = (
                            depth.get(segment).copied().flatten(),
                            depth.get(next).copied().flatten(),
                        );
                        (index, step_cost(contrast, depths))
                    })
                })
                .collect(),
            area: u64::from(area.get(segment).copied().unwrap_or(1).max(1)),
        })
        .collect();
    // Seeds by farthest-point sampling from the largest segment (ties: the lower segment).
    let first = (0..nodes.len())
        .max_by_key(|&i| (nodes[i].area, Reverse(i)))
        .unwrap_or(0);
    let mut seeds = vec![first];
    while seeds.len() < parts {
        let (distance, _) = nearest(&nodes, &seeds);
        let next = (0..nodes.len())
            .filter(|i| !seeds.contains(i) && distance[*i] != u64::MAX)
            .max_by_key(|&i| (distance[i], Reverse(i)));
        match next {
            Some(next) => seeds.push(next),
            None => break,
        }
    }
    let mut owner = nearest(&nodes, &seeds).1;
    let mut in_piece = vec![false; nodes.len()];
    let mut search = MedoidSearch::new(nodes.len());
    for _ in 0..ROUNDS {
        // Each piece's medoid: the member with the least area-weighted geodesic distance to the others.
        let mut moved = false;
        for (position, seed) in seeds.iter_mut().enumerate() {
            let members: Vec<usize> = (0..nodes.len()).filter(|&i| owner[i] == position).collect();
            let mut best = (u128::MAX, *seed);
            // At most MEDOID_CANDIDATES evenly spread members (and the current seed) are tried, so a
            // patch of thousands of segments costs a bounded number of Dijkstra runs per round.
            let stride = members.len().div_ceil(MEDOID_CANDIDATES).max(1);
            let candidates = members.iter().copied().step_by(stride).chain([*seed]);
            for &m in &members {
                in_piece[m] = true;
            }
            for candidate in candidates {
                let total =
                    search.weighted_total(&nodes, candidate, &in_piece, members.len(), best.0);
                if let Some(total) = total {
                    if (total, candidate) < best {
                        best = (total, candidate);
                    }
                }
            }
            for &m in &members {
                in_piece[m] = false;
            }
            if best.1 != *seed {
                *seed = best.1;
                moved = true;
            }
        }
        owner = nearest(&nodes, &seeds).1;
        if !moved {
            break;
        }
    }
    let mut pieces = vec![Vec::new(); seeds.len()];
    for (index, &segment) in patch.iter().enumerate() {
        if let Some(piece) = pieces.get_mut(owner[index]) {
            piece.push(segment);
        }
    }
    pieces.retain(|piece| !piece.is_empty());
    for piece in &mut pieces {
        piece.sort_unstable();
    }
    if pieces.is_empty() {
        return vec![patch.to_vec()];
    }
    pieces
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A path of segments 0..n; `contrast[i]` between i and i+1.
    fn path(contrast: &[f32]) -> Vec<Vec<(usize, f32)>> {
        let n = contrast.len() + 1;
        let mut lists = vec![Vec::new(); n];
        for (i, &c) in contrast.iter().enumerate() {
            lists[i].push((i + 1, c));
            lists[i + 1].push((i, c));
        }
        lists
    }

    #[test]
    fn two_objects_part_along_the_strongest_edge() {
        // 0-1-2-3 | 4-5-6: a strong edge between 3 and 4.
        let neighbours = path(&[1.0, 1.0, 1.0, 60.0, 1.0, 1.0]);
        let pieces = geodesic_parts(&[0, 1, 2, 3, 4, 5, 6], 2, &neighbours, &[None; 7], &[10; 7]);
        assert_eq!(pieces, vec![vec![0, 1, 2, 3], vec![4, 5, 6]]);
    }

    #[test]
    fn a_depth_step_parts_objects_of_one_colour() {
        let neighbours = path(&[0.0; 5]);
        let depth = [
            Some(1000.0),
            Some(1000.0),
            Some(1000.0),
            Some(2000.0),
            Some(2000.0),
            Some(2000.0),
        ];
        let pieces = geodesic_parts(&[0, 1, 2, 3, 4, 5], 2, &neighbours, &depth, &[10; 6]);
        assert_eq!(pieces, vec![vec![0, 1, 2], vec![3, 4, 5]]);
    }

    /// The medoid search's early-stopping Dijkstra scores every candidate as a full run of `nearest` does
    /// (or gives up only when that score passes the limit), on random patches with unreachable parts.
    #[test]
    fn medoid_scores_match_full_dijkstra_runs() {
        let mut random = crate::random::SplitMix64::new(22);
        for _ in 0..60 {
            let count = 2 + random.below(40) as usize;
            let mut nodes: Vec<Node> = (0..count)
                .map(|_| Node {
                    steps: Vec::new(),
                    area: 1 + u64::from(random.below(50)),
                })
                .collect();
            for _ in 0..random.below(3 * count as u32) {
                let (a, b) = (
                    random.below(count as u32) as usize,
                    random.below(count as u32) as usize,
                );
                if a != b {
                    let cost = 1000 + u64::from(random.below(5000));
                    nodes[a].steps.push((b, cost));
                    nodes[b].steps.push((a, cost));
                }
            }
            let in_piece: Vec<bool> = (0..count).map(|_| random.chance(0.5)).collect();
            let members: Vec<usize> = (0..count).filter(|&i| in_piece[i]).collect();
            let mut search = MedoidSearch::new(count);
            for source in 0..count {
                let (distance, _) = nearest(&nodes, &[source]);
                let full: u128 = members
                    .iter()
                    .map(|&m| u128::from(distance[m].min(u64::MAX / 2)) * u128::from(nodes[m].area))
                    .sum();
                let open =
                    search.weighted_total(&nodes, source, &in_piece, members.len(), u128::MAX);
                assert_eq!(open, Some(full));
                // A limit below the score gives up; at or above it, the score comes back whole.
                if full > 0 {
                    let below =
                        search.weighted_total(&nodes, source, &in_piece, members.len(), full - 1);
                    assert_eq!(below, None);
                }
                let at = search.weighted_total(&nodes, source, &in_piece, members.len(), full);
                assert_eq!(at, Some(full));
            }
        }
    }

    #[test]
    fn degenerate_requests_return_the_patch_whole_or_every_segment() {
        let neighbours = path(&[1.0, 1.0]);
        assert_eq!(
            geodesic_parts(&[0, 1, 2], 1, &neighbours, &[None; 3], &[1; 3]),
            vec![vec![0, 1, 2]]
        );
        assert_eq!(
            geodesic_parts(&[0, 1, 2], 9, &neighbours, &[None; 3], &[1; 3]).len(),
            3
        );
        assert_eq!(
            geodesic_parts(&[], 2, &neighbours, &[None; 3], &[1; 3]),
            vec![Vec::<usize>::new()]
        );
        // NaN contrast and depth do not panic and still split.
        let odd = path(&[f32::NAN, 1.0]);
        let pieces = geodesic_parts(
            &[0, 1, 2],
            2,
            &odd,
            &[Some(f32::NAN), None, Some(0.0)],
            &[1; 3],
        );
        assert_eq!(pieces.iter().map(Vec::len).sum::<usize>(), 3);
    }
}
