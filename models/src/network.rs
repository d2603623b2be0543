//! The aisle network: nodes, segments, and the shortest path over it between every pair of locations.
//!
//! Movers travel along aisles, not in straight lines. A scenario with
//! `distance: aisles` describes the aisles as nodes (junctions, bends, the
//! pick-up/drop-off point of each location) joined by segments. The distance
//! from one location to another is the length of the shortest path from its
//! node to the other's, found with Dijkstra's method (petgraph's A* with a
//! zero estimate, which returns the path as well as its length).
//!
//! The network keeps each pair's path as a list of segment indices, so that
//! the segment-by-segment simulation (`sim/model/aisles.rs`: movers occupying
//! segments, waits at full ones) and per-segment traffic need no search.
//! A path's distance is the sum of its segments' lengths in path order, so the
//! distance matrix and the stored paths always agree to the last bit.

use petgraph::graph::{DiGraph, NodeIndex};

/// A point of the aisle network: a junction, a bend, or a location's pick-up/drop-off point.
#[derive(Debug, Clone, PartialEq)]
pub struct AisleNode {
    /// The scenario's name for it.
    pub id: String,
    /// Position, metres.
    pub x: f64,
    /// Position, metres.
    pub y: f64,
    /// Zone control: at most one mover in the intersection at a time (see
    /// `sim/model/aisles.rs` for when a mover counts as inside).
    pub zone: bool,
}

/// A stretch of aisle between two nodes.
#[derive(Debug, Clone, PartialEq)]
pub struct Segment {
    /// Node index where it starts (for a one-way segment, where movers enter).
    pub from: usize,
    /// Node index where it ends.
    pub to: usize,
    /// Length in metres (> 0): given, or the straight line between the nodes.
    pub length_m: f64,
    /// Travel only from `from` to `to`.
    pub one_way: bool,
    /// Highest speed allowed on it, m/s; `None`: no limit beyond the mover's own.
    pub speed_limit_mps: Option<f64>,
    /// Most movers on it at once, both directions together; `None`: unlimited.
    pub capacity: Option<u32>,
}

/// Why a network cannot be built. The scenario loader checks segments with
/// field paths first, so in practice only [`NetworkError::Unreachable`] comes from here.
#[derive(Debug, Clone, PartialEq)]
pub enum NetworkError {
    /// A segment names a node that does not exist, joins a node to itself, or
    /// has a length that is not a finite number > 0.
    BadSegment {
        /// Segment index.
        segment: usize,
        /// What is wrong with it.
        reason: String,
    },
    /// A location names a node that does not exist.
    BadLocationNode {
        /// Location index.
        location: usize,
    },
    /// No path leads from one location's node to another's.
    Unreachable {
        /// Location index the path would start from.
        from: usize,
        /// Location index it cannot reach.
        to: usize,
    },
}

/// The compiled aisle network of a plant, with the shortest path between every pair of locations.
#[derive(Debug, Clone, PartialEq)]
pub struct AisleNetwork {
    /// Nodes, in scenario order.
    pub nodes: Vec<AisleNode>,
    /// Segments, in scenario order; paths refer to them by index.
    pub segments: Vec<Segment>,
    /// `location_node[location]`: the node where movers pick up and drop off at that location.
    pub location_node: Vec<usize>,
    /// `path_start[a·n + b] .. path_start[a·n + b + 1]` is the slice of
    /// `path_segments` holding the path from location a to location b.
    path_start: Vec<u32>,
    path_segments: Vec<u32>,
}

impl AisleNetwork {
    /// Builds the network and finds the shortest path between every ordered
    /// pair of locations. Returns the network and the row-major distance
    /// matrix (metres, locations²). Every location must reach every other.
    pub fn build(
        nodes: Vec<AisleNode>,
        segments: Vec<Segment>,
        location_node: Vec<usize>,
    ) -> Result<(AisleNetwork, Vec<f64>), NetworkError> {
        for (i, s) in segments.iter().enumerate() {
            let bad = |reason: &str| Err(NetworkError::BadSegment { segment: i, reason: reason.into() });
            if s.from >= nodes.len() || s.to >= nodes.len() {
                return bad("it names a node that does not exist");
            }
            if s.from == s.to {
                return bad("it starts and ends at the same node");
            }
            if !(s.length_m > 0.0 && s.length_m.is_finite()) {
                return bad("its length is not a finite number > 0");
            }
        }
        if let Some(l) = location_node.iter().position(|&n| n >= nodes.len()) {
            return Err(NetworkError::BadLocationNode { location: l });
        }
        // One directed edge per direction of travel; the edge weight is the segment index.
        let mut g: DiGraph<(), u32> = DiGraph::with_capacity(nodes.len(), 2 * segments.len());
        for _ in &nodes {
            g.add_node(());
        }
        for (i, s) in segments.iter().enumerate() {
            g.add_edge(NodeIndex::new(s.from), NodeIndex::new(s.to), i as u32);
            if !s.one_way {
                g.add_edge(NodeIndex::new(s.to), NodeIndex::new(s.from), i as u32);
            }
        }
        let n = location_node.len();
        let mut path_start = Vec::with_capacity(n * n + 1);
        let mut path_segments: Vec<u32> = Vec::new();
        let mut distance = Vec::with_capacity(n * n);
        // Locations may share a node, and many pairs share a pair of nodes:
        // search each pair of nodes once.
        let mut found: std::collections::HashMap<(usize, usize), Vec<u32>> = Default::default();
        for a in 0..n {
            for b in 0..n {
                path_start.push(path_segments.len() as u32);
                let (na, nb) = (location_node[a], location_node[b]);
                if na == nb {
                    distance.push(0.0);
                    continue;
                }
                let path = match found.get(&(na, nb)) {
                    Some(p) => p.clone(),
                    None => {
                        let p = shortest(&g, &segments, na, nb)
                            .ok_or(NetworkError::Unreachable { from: a, to: b })?;
                        found.insert((na, nb), p.clone());
                        p
                    }
                };
                distance.push(path.iter().map(|&s| segments[s as usize].length_m).sum());
                path_segments.extend_from_slice(&path);
            }
        }
        path_start.push(path_segments.len() as u32);
        Ok((AisleNetwork { nodes, segments, location_node, path_start, path_segments }, distance))
    }

    /// Whether movers must travel it segment by segment: some segment has a
    /// capacity or a speed limit, or some node has zone control. Otherwise a
    /// trip is one leg of the shortest-path distance (exactly as before).
    pub fn needs_simulation(&self) -> bool {
        self.nodes.iter().any(|n| n.zone)
            || self.segments.iter().any(|s| s.capacity.is_some() || s.speed_limit_mps.is_some())
    }

    /// A readable name for segment `s`: its index and its two nodes.
    pub fn segment_name(&self, s: usize) -> String {
        let g = &self.segments[s];
        let arrow = if g.one_way { "->" } else { "-" };
        format!("segment {s} ({} {arrow} {})", self.nodes[g.from].id, self.nodes[g.to].id)
    }

    /// Number of locations the paths are kept for.
    pub fn n_locations(&self) -> usize {
        self.location_node.len()
    }

    /// The shortest path from location `from` to location `to`, as segment
    /// indices in travel order (empty when both sit at the same node).
    pub fn path(&self, from: usize, to: usize) -> &[u32] {
        let k = from * self.n_locations() + to;
        &self.path_segments[self.path_start[k] as usize..self.path_start[k + 1] as usize]
    }

    /// The path from `from` to `to` as (segment index, forward) steps, where
    /// `forward` means travel from the segment's `from` node to its `to` node.
    pub fn steps(&self, from: usize, to: usize) -> impl Iterator<Item = (usize, bool)> + '_ {
        let mut at = self.location_node[from];
        self.path(from, to).iter().map(move |&s| {
            let seg = &self.segments[s as usize];
            let forward = seg.from == at;
            at = if forward { seg.to } else { seg.from };
            (s as usize, forward)
        })
    }

    /// The node indices visited from `from` to `to`, both ends included.
    pub fn path_nodes(&self, from: usize, to: usize) -> Vec<usize> {
        let mut out = vec![self.location_node[from]];
        for (s, forward) in self.steps(from, to) {
            let seg = &self.segments[s];
            out.push(if forward { seg.to } else { seg.from });
        }
        out
    }

    /// Travel time in seconds along the path at constant `speed_mps`, slowed
    /// to each segment's speed limit where that is lower: the rule the
    /// segment-by-segment simulation follows when no mover waits.
    pub fn travel_time_s(&self, from: usize, to: usize, speed_mps: f64) -> f64 {
        self.path(from, to)
            .iter()
            .map(|&s| {
                let seg = &self.segments[s as usize];
                let v = seg.speed_limit_mps.map_or(speed_mps, |l| l.min(speed_mps));
                seg.length_m / v
            })
            .sum()
    }

    /// Loads per hour over each segment (both directions together) when the
    /// location-to-location flow `flow` (row-major, locations², loads per
    /// hour) travels by the shortest paths: the static traffic picture.
    pub fn segment_loads_per_h(&self, flow: &[f64]) -> Vec<f64> {
        let n = self.n_locations();
        let mut out = vec![0.0; self.segments.len()];
        for a in 0..n {
            for b in 0..n {
                let f = flow[a * n + b];
                if f != 0.0 {
                    for &s in self.path(a, b) {
                        out[s as usize] += f;
                    }
                }
            }
        }
        out
    }
}

/// The shortest path between two nodes as segment indices, or `None` when
/// `to` cannot be reached. Where two segments join the same nodes in the same
/// direction the shorter is taken (the loader refuses such pairs anyway).
fn shortest(g: &DiGraph<(), u32>, segments: &[Segment], from: usize, to: usize) -> Option<Vec<u32>> {
    let goal = NodeIndex::new(to);
    let length = |e: petgraph::graph::EdgeReference<u32>| segments[*e.weight() as usize].length_m;
    let (_, nodes) = petgraph::algo::astar(g, NodeIndex::new(from), |n| n == goal, length, |_| 0.0)?;
    let mut path = Vec::with_capacity(nodes.len().saturating_sub(1));
    for w in nodes.windows(2) {
        let seg = g
            .edges_connecting(w[0], w[1])
            .map(|e| *e.weight())
            .min_by(|&p, &q| segments[p as usize].length_m.total_cmp(&segments[q as usize].length_m))?;
        path.push(seg);
    }
    Some(path)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn node(id: &str, x: f64, y: f64) -> AisleNode {
        AisleNode { id: id.into(), x, y, zone: false }
    }

    fn seg(from: usize, to: usize, length_m: f64, one_way: bool) -> Segment {
        Segment { from, to, length_m, one_way, speed_limit_mps: None, capacity: None }
    }

    /// Hand-computed small network (a square with a diagonal and a one-way side):
    ///
    /// ```text
    ///   D(0,30) ----40---- C(40,30)
    ///     |             /   ^
    ///    30        50 /     | 30, one-way B→C
    ///     |        /        |
    ///   A(0,0) ----40---- B(40,0)
    /// ```
    /// Lengths A–B 40, B→C 30 (one-way), C–D 40, D–A 30, A–C 50 (the diagonal,
    /// two-way). By hand: A→C 50 (diagonal; A→B→C is 70), C→B 90 (C→A→B: the
    /// side B→C is one-way), B→D 70 (B→A→D; B→C→D is 70 too, a tie), D→B 70
    /// (D→A→B), C→A 50.
    #[test]
    fn shortest_paths_match_a_hand_computed_network() {
        let nodes =
            vec![node("A", 0.0, 0.0), node("B", 40.0, 0.0), node("C", 40.0, 30.0), node("D", 0.0, 30.0)];
        let segments = vec![
            seg(0, 1, 40.0, false),
            seg(1, 2, 30.0, true),
            seg(2, 3, 40.0, false),
            seg(3, 0, 30.0, false),
            seg(0, 2, 50.0, false),
        ];
        let (net, d) = AisleNetwork::build(nodes, segments, vec![0, 1, 2, 3]).unwrap();
        let at = |a: usize, b: usize| d[a * 4 + b];
        assert_eq!(at(0, 2), 50.0);
        assert_eq!(net.path(0, 2), &[4]);
        assert_eq!(at(2, 1), 90.0);
        assert_eq!(net.path(2, 1), &[4, 0]);
        assert_eq!(net.path_nodes(2, 1), vec![2, 0, 1]);
        assert_eq!(at(1, 3), 70.0);
        assert_eq!(at(3, 1), 70.0);
        assert_eq!(at(2, 0), 50.0);
        assert_eq!(at(1, 2), 30.0);
        for i in 0..4 {
            assert_eq!(at(i, i), 0.0);
            assert!(net.path(i, i).is_empty());
        }
        // Directions along C→A→B: the diagonal backwards, then A–B forwards.
        assert_eq!(net.steps(2, 1).collect::<Vec<_>>(), vec![(4, false), (0, true)]);
    }

    #[test]
    fn speed_limits_slow_only_the_limited_segments() {
        let nodes = vec![node("A", 0.0, 0.0), node("B", 40.0, 0.0), node("C", 70.0, 0.0)];
        let mut s = vec![seg(0, 1, 40.0, false), seg(1, 2, 30.0, false)];
        s[1].speed_limit_mps = Some(1.0);
        let (net, _) = AisleNetwork::build(nodes, s, vec![0, 2]).unwrap();
        // 40 m at 2 m/s, then 30 m at the 1 m/s limit: 20 + 30 s.
        assert_eq!(net.travel_time_s(0, 1, 2.0), 50.0);
        // A limit above the mover's speed changes nothing: 70 m at 0.5 m/s.
        assert_eq!(net.travel_time_s(0, 1, 0.5), 140.0);
    }

    #[test]
    fn unreachable_locations_are_named() {
        let nodes = vec![node("A", 0.0, 0.0), node("B", 40.0, 0.0)];
        let r = AisleNetwork::build(nodes, vec![seg(0, 1, 40.0, true)], vec![0, 1]);
        assert_eq!(r.unwrap_err(), NetworkError::Unreachable { from: 1, to: 0 });
    }

    #[test]
    fn traffic_adds_every_flow_over_its_path() {
        let nodes = vec![node("A", 0.0, 0.0), node("B", 40.0, 0.0), node("C", 70.0, 0.0)];
        let (net, _) =
            AisleNetwork::build(nodes, vec![seg(0, 1, 40.0, false), seg(1, 2, 30.0, false)], vec![0, 1, 2])
                .unwrap();
        // A→C 5/h, C→B 2/h, B→A 1/h.
        let mut flow = vec![0.0; 9];
        flow[2] = 5.0;
        flow[2 * 3 + 1] = 2.0;
        flow[3] = 1.0;
        assert_eq!(net.segment_loads_per_h(&flow), vec![6.0, 7.0]);
    }
}
