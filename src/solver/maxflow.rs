//! Boykov-Kolmogorov max-flow / min-cut on a graph with two terminals (source and sink).
//!
//! Owns: `FlowGraph` (nodes, arcs in flat vectors, terminal capacities), the search-tree max-flow of
//! Boykov and Kolmogorov ("An experimental comparison of min-cut/max-flow algorithms for energy
//! minimization in vision", IEEE PAMI 2004) and `MaxFlowError`. A graph is reusable: `reset` clears it
//! while keeping its allocations, so alpha-expansion builds one graph per move without allocating.
//! Must not: know what the nodes mean (labels, segments); it sees capacities only. The plain reference
//! it is tested against lives in `maxflow_reference.rs`.
//!
//! The algorithm grows two search trees, S from the source and T from the sink, over arcs with residual
//! capacity. When the trees touch, the path through them is augmented by its bottleneck; nodes whose
//! tree arc saturates become orphans, which look for a new parent in their own tree (adoption) or become
//! free. The run ends when neither tree can grow. Nodes in S at the end form the source side of a minimum
//! cut; free nodes are reported on the sink side (any side is optimal for them).

use std::collections::VecDeque;

/// Marks "no arc" and "not in a tree".
const NO_ARC: u32 = u32::MAX;
/// A tree node whose parent is its terminal.
const TERMINAL: u32 = u32::MAX - 1;
/// A tree node that has lost its parent and awaits adoption.
const ORPHAN: u32 = u32::MAX - 2;
/// A distance no real tree path reaches.
const INFINITE_DISTANCE: u32 = u32::MAX;

/// Bad input to the flow graph.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MaxFlowError {
    #[error("node {node} does not exist (the graph has {node_count} nodes)")]
    NodeOutOfRange { node: usize, node_count: usize },
    #[error("capacity {value} for {what} is not a finite number")]
    NotFinite { what: &'static str, value: f64 },
    #[error("edge capacity {value} is negative (capacities between nodes must be >= 0)")]
    NegativeCapacity { value: f64 },
    #[error("the graph would exceed {limit} arcs or nodes")]
    TooLarge { limit: u32 },
}

#[derive(Clone, Copy, Debug)]
struct Node {
    /// First outgoing arc (head of a singly linked list through `Arc::next`).
    first_arc: u32,
    /// The arc from this node to its tree parent, or `TERMINAL`, `ORPHAN`, `NO_ARC` (free node).
    parent: u32,
    /// When `distance` was last known correct.
    timestamp: u32,
    /// Tree distance to the terminal.
    distance: u32,
    /// Residual terminal capacity: > 0 means source -> node, < 0 means node -> sink.
    terminal_residual: f64,
    in_sink_tree: bool,
    is_active: bool,
}

#[derive(Clone, Copy, Debug)]
struct Arc {
    head: u32,
    next: u32,
    residual: f64,
}

/// A two-terminal flow graph and its Boykov-Kolmogorov solver. Arcs come in pairs: arc `2k` and its
/// reverse `2k + 1`, so the sister of arc `a` is `a ^ 1`.
#[derive(Clone, Debug, Default)]
pub struct FlowGraph {
    nodes: Vec<Node>,
    arcs: Vec<Arc>,
    /// Flow already routed directly source -> node -> sink by `add_terminal_weights`.
    flow: f64,
    active_queue: VecDeque<u32>,
    orphans: VecDeque<u32>,
    time: u32,
}

impl FlowGraph {
    /// An empty graph.
    pub fn new() -> FlowGraph {
        FlowGraph::default()
    }

    /// An empty graph with room for `node_capacity` nodes and `edge_capacity` edges.
    pub fn with_capacity(node_capacity: usize, edge_capacity: usize) -> FlowGraph {
        FlowGraph {
            nodes: Vec::with_capacity(node_capacity),
            arcs: Vec::with_capacity(edge_capacity * 2),
            ..FlowGraph::default()
        }
    }

    /// Removes every node and arc, keeping the allocations for the next problem.
    pub fn reset(&mut self) {
        self.nodes.clear();
        self.arcs.clear();
        self.flow = 0.0;
        self.active_queue.clear();
        self.orphans.clear();
        self.time = 0;
    }

    /// The number of nodes.
    pub fn node_count(&self) -> usize {
        self.nodes.len()
    }

    /// Adds `count` nodes with no terminal capacity; returns the index of the first.
    pub fn add_nodes(&mut self, count: usize) -> Result<usize, MaxFlowError> {
        let first = self.nodes.len();
        if first + count >= ORPHAN as usize {
            return Err(MaxFlowError::TooLarge { limit: ORPHAN });
        }
        self.nodes.resize(
            first + count,
            Node {
                first_arc: NO_ARC,
                parent: NO_ARC,
                timestamp: 0,
                distance: 0,
                terminal_residual: 0.0,
                in_sink_tree: false,
                is_active: false,
            },
        );
        Ok(first)
    }

    /// Adds capacities from the source to `node` and from `node` to the sink. Either may be any finite
    /// number (a negative one is folded into the other side: only the difference matters for the cut).
    pub fn add_terminal_weights(
        &mut self,
        node: usize,
        cap_source: f64,
        cap_sink: f64,
    ) -> Result<(), MaxFlowError> {
        let node_count = self.nodes.len();
        if !cap_source.is_finite() {
            return Err(MaxFlowError::NotFinite {
                what: "source -> node",
                value: cap_source,
            });
        }
        if !cap_sink.is_finite() {
            return Err(MaxFlowError::NotFinite {
                what: "node -> sink",
                value: cap_sink,
            });
        }
        let entry = self
            .nodes
            .get_mut(node)
            .ok_or(MaxFlowError::NodeOutOfRange { node, node_count })?;
        let residual = entry.terminal_residual;
        let (source_total, sink_total) = if residual > 0.0 {
            (cap_source + residual, cap_sink)
        } else {
            (cap_source, cap_sink - residual)
        };
        self.flow += source_total.min(sink_total);
        entry.terminal_residual = source_total - sink_total;
        Ok(())
    }

    /// Adds an edge `from -> to` with capacity `capacity` and `to -> from` with `reverse_capacity`.
    pub fn add_edge(
        &mut self,
        from: usize,
        to: usize,
        capacity: f64,
        reverse_capacity: f64,
    ) -> Result<(), MaxFlowError> {
        let node_count = self.nodes.len();
        for node in [from, to] {
            if node >= node_count {
                return Err(MaxFlowError::NodeOutOfRange { node, node_count });
            }
        }
        for value in [capacity, reverse_capacity] {
            if !value.is_finite() {
                return Err(MaxFlowError::NotFinite {
                    what: "edge",
                    value,
                });
            }
            if value < 0.0 {
                return Err(MaxFlowError::NegativeCapacity { value });
            }
        }
        if from == to {
            // A self-loop never crosses a cut.
            return Ok(());
        }
        let forward = self.arcs.len();
        if forward + 2 >= ORPHAN as usize {
            return Err(MaxFlowError::TooLarge { limit: ORPHAN });
        }
        let forward_next = self.nodes[from].first_arc;
        let reverse_next = self.nodes[to].first_arc;
        self.arcs.push(Arc {
            head: to as u32,
            next: forward_next,
            residual: capacity,
        });
        self.arcs.push(Arc {
            head: from as u32,
            next: reverse_next,
            residual: reverse_capacity,
        });
        self.nodes[from].first_arc = forward as u32;
        self.nodes[to].first_arc = forward as u32 + 1;
        Ok(())
    }

    /// Whether `node` is on the source side of the minimum cut found by the last `max_flow`.
    /// Out-of-range nodes answer `false`.
    pub fn is_source_side(&self, node: usize) -> bool {
        self.nodes
            .get(node)
            .is_some_and(|entry| entry.parent != NO_ARC && !entry.in_sink_tree)
    }

    /// Computes the maximum flow (equal to the minimum cut capacity). Call once per built graph.
    pub fn max_flow(&mut self) -> f64 {
        self.initialise_trees();
        let mut current: Option<u32> = None;
        loop {
            let node = match current.filter(|&node| self.nodes[node as usize].parent != NO_ARC) {
                Some(node) => node,
                None => match self.next_active() {
                    Some(node) => node,
                    None => break,
                },
            };
            let meeting_arc = self.grow_from(node);
            self.time = self.time.wrapping_add(1);
            match meeting_arc {
                Some(arc) => {
                    // Keep expanding from this node: it is likely to meet the other tree again.
                    current = Some(node);
                    self.augment(arc);
                    self.adopt_orphans();
                }
                None => current = None,
            }
        }
        self.flow
    }

    fn initialise_trees(&mut self) {
        self.active_queue.clear();
        self.orphans.clear();
        self.time = 0;
        for index in 0..self.nodes.len() {
            let node = &mut self.nodes[index];
            node.is_active = false;
            node.timestamp = 0;
            if node.terminal_residual != 0.0 {
                node.in_sink_tree = node.terminal_residual < 0.0;
                node.parent = TERMINAL;
                node.distance = 1;
                node.is_active = true;
                self.active_queue.push_back(index as u32);
            } else {
                node.parent = NO_ARC;
                node.in_sink_tree = false;
                node.distance = 0;
            }
        }
    }

    fn set_active(&mut self, node: u32) {
        let entry = &mut self.nodes[node as usize];
        if !entry.is_active {
            entry.is_active = true;
            self.active_queue.push_back(node);
        }
    }

    fn next_active(&mut self) -> Option<u32> {
        while let Some(node) = self.active_queue.pop_front() {
            let entry = &mut self.nodes[node as usize];
            entry.is_active = false;
            if entry.parent != NO_ARC {
                return Some(node);
            }
        }
        None
    }

    /// Grows the tree of `node` by one layer; returns the arc (oriented source tree -> sink tree)
    /// where the trees meet, if they do.
    fn grow_from(&mut self, node: u32) -> Option<u32> {
        let Node {
            first_arc,
            in_sink_tree,
            timestamp,
            distance,
            ..
        } = self.nodes[node as usize];
        let mut arc = first_arc;
        while arc != NO_ARC {
            let Arc { head, next, .. } = self.arcs[arc as usize];
            // The arc that carries flow away from the terminal of this tree.
            let outward = if in_sink_tree { arc ^ 1 } else { arc };
            if self.arcs[outward as usize].residual > 0.0 {
                let neighbour = &mut self.nodes[head as usize];
                if neighbour.parent == NO_ARC {
                    neighbour.in_sink_tree = in_sink_tree;
                    neighbour.parent = arc ^ 1;
                    neighbour.timestamp = timestamp;
                    neighbour.distance = distance + 1;
                    self.set_active(head);
                } else if neighbour.in_sink_tree != in_sink_tree {
                    return Some(outward);
                } else if neighbour.timestamp <= timestamp && neighbour.distance > distance {
                    // A shorter path to the terminal through `node` (the heuristic of the paper).
                    neighbour.parent = arc ^ 1;
                    neighbour.timestamp = timestamp;
                    neighbour.distance = distance + 1;
                }
            }
            arc = next;
        }
        None
    }

    /// The tail of an arc: the head of its sister.
    fn tail(&self, arc: u32) -> u32 {
        self.arcs[(arc ^ 1) as usize].head
    }

    fn make_orphan(&mut self, node: u32) {
        self.nodes[node as usize].parent = ORPHAN;
        self.orphans.push_back(node);
    }

    /// Pushes the bottleneck flow along source -> ... -> tail(meeting) -> head(meeting) -> ... -> sink.
    fn augment(&mut self, meeting_arc: u32) {
        let mut bottleneck = self.arcs[meeting_arc as usize].residual;
        // Source half: parent arcs point from child to parent; flow runs along their sisters.
        let mut node = self.tail(meeting_arc);
        loop {
            let parent = self.nodes[node as usize].parent;
            if parent == TERMINAL {
                break;
            }
            bottleneck = bottleneck.min(self.arcs[(parent ^ 1) as usize].residual);
            node = self.arcs[parent as usize].head;
        }
        bottleneck = bottleneck.min(self.nodes[node as usize].terminal_residual);
        // Sink half: flow runs along the parent arcs themselves.
        let mut node = self.arcs[meeting_arc as usize].head;
        loop {
            let parent = self.nodes[node as usize].parent;
            if parent == TERMINAL {
                break;
            }
            bottleneck = bottleneck.min(self.arcs[parent as usize].residual);
            node = self.arcs[parent as usize].head;
        }
        bottleneck = bottleneck.min(-self.nodes[node as usize].terminal_residual);

        self.arcs[(meeting_arc ^ 1) as usize].residual += bottleneck;
        self.arcs[meeting_arc as usize].residual -= bottleneck;
        let mut node = self.tail(meeting_arc);
        loop {
            let parent = self.nodes[node as usize].parent;
            if parent == TERMINAL {
                break;
            }
            self.arcs[parent as usize].residual += bottleneck;
            let forward = &mut self.arcs[(parent ^ 1) as usize];
            forward.residual -= bottleneck;
            let saturated = forward.residual <= 0.0;
            let next = self.arcs[parent as usize].head;
            if saturated {
                self.make_orphan(node);
            }
            node = next;
        }
        self.nodes[node as usize].terminal_residual -= bottleneck;
        if self.nodes[node as usize].terminal_residual <= 0.0 {
            self.make_orphan(node);
        }
        let mut node = self.arcs[meeting_arc as usize].head;
        loop {
            let parent = self.nodes[node as usize].parent;
            if parent == TERMINAL {
                break;
            }
            self.arcs[(parent ^ 1) as usize].residual += bottleneck;
            let forward = &mut self.arcs[parent as usize];
            forward.residual -= bottleneck;
            let saturated = forward.residual <= 0.0;
            let next = forward.head;
            if saturated {
                self.make_orphan(node);
            }
            node = next;
        }
        self.nodes[node as usize].terminal_residual += bottleneck;
        if self.nodes[node as usize].terminal_residual >= 0.0 {
            self.make_orphan(node);
        }
        self.flow += bottleneck;
    }

    fn adopt_orphans(&mut self) {
        while let Some(orphan) = self.orphans.pop_front() {
            self.adopt(orphan);
        }
    }

    /// The distance from `start` to its terminal along valid tree arcs, or `INFINITE_DISTANCE` when the
    /// path ends in an orphan. Stamps the path with the current time on success.
    fn distance_to_terminal(&mut self, start: u32) -> u32 {
        let mut node = start;
        let mut distance = 0u32;
        loop {
            let entry = self.nodes[node as usize];
            if entry.timestamp == self.time {
                distance = distance.saturating_add(entry.distance);
                break;
            }
            distance = distance.saturating_add(1);
            if entry.parent == TERMINAL {
                let terminal_child = &mut self.nodes[node as usize];
                terminal_child.timestamp = self.time;
                terminal_child.distance = 1;
                break;
            }
            if entry.parent == ORPHAN || entry.parent == NO_ARC {
                return INFINITE_DISTANCE;
            }
            node = self.arcs[entry.parent as usize].head;
        }
        // Stamp the path so later searches in this round stop early.
        let mut node = start;
        let mut stamped = distance;
        while self.nodes[node as usize].timestamp != self.time {
            let entry = &mut self.nodes[node as usize];
            entry.timestamp = self.time;
            entry.distance = stamped;
            stamped = stamped.saturating_sub(1);
            node = self.arcs[entry.parent as usize].head;
        }
        distance
    }

    fn adopt(&mut self, orphan: u32) {
        let Node {
            first_arc,
            in_sink_tree,
            ..
        } = self.nodes[orphan as usize];
        let mut best_arc = NO_ARC;
        let mut best_distance = INFINITE_DISTANCE;
        let mut arc = first_arc;
        while arc != NO_ARC {
            let Arc { head, next, .. } = self.arcs[arc as usize];
            // The arc along which flow would reach the orphan from its new parent.
            let inward = if in_sink_tree { arc } else { arc ^ 1 };
            let neighbour = self.nodes[head as usize];
            if self.arcs[inward as usize].residual > 0.0
                && neighbour.parent != NO_ARC
                && neighbour.in_sink_tree == in_sink_tree
            {
                let distance = self.distance_to_terminal(head);
                if distance < best_distance {
                    best_distance = distance;
                    best_arc = arc;
                }
            }
            arc = next;
        }
        if best_arc != NO_ARC {
            let entry = &mut self.nodes[orphan as usize];
            entry.parent = best_arc;
            entry.timestamp = self.time;
            entry.distance = best_distance.saturating_add(1);
            return;
        }
        // No parent: the orphan becomes free; its children become orphans, and neighbours that could
        // reach it become active so the tree can grow back.
        self.nodes[orphan as usize].parent = NO_ARC;
        let mut arc = first_arc;
        while arc != NO_ARC {
            let Arc { head, next, .. } = self.arcs[arc as usize];
            let neighbour = self.nodes[head as usize];
            if neighbour.parent != NO_ARC && neighbour.in_sink_tree == in_sink_tree {
                let inward = if in_sink_tree { arc } else { arc ^ 1 };
                if self.arcs[inward as usize].residual > 0.0 {
                    self.set_active(head);
                }
                let parent = neighbour.parent;
                if parent != TERMINAL
                    && parent != ORPHAN
                    && self.arcs[parent as usize].head == orphan
                {
                    self.make_orphan(head);
                }
            }
            arc = next;
        }
    }
}
