//! Seams that make a chart a disk: shortest paths on the chart's edge graph.
//!
//! Input everywhere: a chart mesh `m` (connected, manifold, consistently wound) and
//! its [`Topology`]. Output: a cut flag per edge of `t`; cutting those edges (see
//! `assemble`) gives
//!
//! - [`handle_cut`]: genus 0. The cut is the greedy shortest system of loops of
//!   Erickson & Whittlesey (2005), "Greedy optimal homotopy and homology generators",
//!   SODA: a shortest-path tree `T` from a root, a maximum spanning tree of the dual
//!   graph over the edges not in `T` weighted by the length of the loop each edge
//!   closes, and the 2g leftover edges with their tree paths (the tree–cotree
//!   decomposition of Eppstein 2003, "Dynamic generators of topologically embedded
//!   graphs", SODA). Boundary edges weigh nothing, so each boundary loop acts as one
//!   point and the cut runs from the boundary. Dangling branches are pruned.
//! - [`closed_cut`]: a boundary on a closed genus-0 piece, along the shortest path
//!   between two far-apart vertices (double sweep).
//! - [`hole_cut`]: one boundary loop, joining every other loop to the first along
//!   shortest paths, nearest first (Prim's order).
//!
//! Lengths are Euclidean edge lengths; ties break by index, so results are
//! deterministic.

use super::union_find::UnionFind;
use crate::mesh::{PolyMesh, Topology};
use std::cmp::Ordering;
use std::collections::{BinaryHeap, VecDeque};

const NONE: u32 = u32::MAX;

/// Vertex adjacency with edge lengths.
struct Graph {
    offsets: Vec<usize>,
    /// `(neighbour, edge)` per adjacency slot.
    links: Vec<(u32, u32)>,
    length: Vec<f64>,
    boundary: Vec<bool>,
}

impl Graph {
    fn new(m: &PolyMesh, t: &Topology) -> Graph {
        let n = m.positions.len();
        let mut offsets = vec![0usize; n + 1];
        for &[a, b] in &t.edge_vertices {
            for v in [a, b] {
                if let Some(o) = offsets.get_mut(v as usize + 1) {
                    *o += 1;
                }
            }
        }
        for i in 0..n {
            offsets[i + 1] += offsets[i];
        }
        let mut fill = offsets.clone();
        let mut links = vec![(NONE, NONE); offsets[n]];
        for (e, &[a, b]) in t.edge_vertices.iter().enumerate() {
            for (v, w) in [(a, b), (b, a)] {
                if let Some(slot) = fill.get_mut(v as usize) {
                    if let Some(l) = links.get_mut(*slot) {
                        *l = (w, e as u32);
                    }
                    *slot += 1;
                }
            }
        }
        let point = |v: u32| m.positions.get(v as usize).copied().unwrap_or_default();
        let length = t
            .edge_vertices
            .iter()
            .map(|&[a, b]| (point(a) - point(b)).norm())
            .collect();
        let boundary = (0..t.edge_count() as u32)
            .map(|e| t.is_boundary_edge(e))
            .collect();
        Graph {
            offsets,
            links,
            length,
            boundary,
        }
    }

    fn neighbours(&self, v: u32) -> &[(u32, u32)] {
        let v = v as usize;
        match (self.offsets.get(v), self.offsets.get(v + 1)) {
            (Some(&a), Some(&b)) => self.links.get(a..b).unwrap_or(&[]),
            _ => &[],
        }
    }

    fn len(&self, e: u32) -> f64 {
        self.length.get(e as usize).copied().unwrap_or(0.0)
    }

    fn is_boundary(&self, e: u32) -> bool {
        self.boundary.get(e as usize).copied().unwrap_or(false)
    }

    fn vertex_count(&self) -> usize {
        self.offsets.len() - 1
    }
}

/// Min-heap entry ordered by distance, then vertex.
#[derive(PartialEq)]
struct Entry(f64, u32);

impl Eq for Entry {}

impl Ord for Entry {
    fn cmp(&self, other: &Self) -> Ordering {
        other.0.total_cmp(&self.0).then(other.1.cmp(&self.1))
    }
}

impl PartialOrd for Entry {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

/// Shortest paths from `sources` (Dijkstra); `weight(e)` ≥ 0. Returns the distance
/// (∞ when unreached) and the edge to the parent (`NONE` at sources) of every vertex.
fn dijkstra(g: &Graph, sources: &[u32], weight: impl Fn(u32) -> f64) -> (Vec<f64>, Vec<u32>) {
    let n = g.vertex_count();
    let mut dist = vec![f64::INFINITY; n];
    let mut parent = vec![NONE; n];
    let mut heap = BinaryHeap::new();
    for &s in sources {
        if let Some(d) = dist.get_mut(s as usize) {
            *d = 0.0;
            heap.push(Entry(0.0, s));
        }
    }
    while let Some(Entry(d, v)) = heap.pop() {
        if d > dist[v as usize] {
            continue;
        }
        for &(w, e) in g.neighbours(v) {
            let nd = d + weight(e);
            if let Some(slot) = dist.get_mut(w as usize) {
                if nd < *slot {
                    *slot = nd;
                    parent[w as usize] = e;
                    heap.push(Entry(nd, w));
                }
            }
        }
    }
    (dist, parent)
}

/// The other end of edge `e` from `v`.
fn across(t: &Topology, e: u32, v: u32) -> u32 {
    match t.edge_vertices.get(e as usize) {
        Some(&[a, b]) if a == v => b,
        Some(&[a, _]) => a,
        None => NONE,
    }
}

/// Marks the tree path from `v` up to its root (interior edges only).
fn mark_path(t: &Topology, g: &Graph, parent: &[u32], mut v: u32, cut: &mut [bool]) {
    for _ in 0..parent.len() {
        let e = parent.get(v as usize).copied().unwrap_or(NONE);
        if e == NONE {
            return;
        }
        if !g.is_boundary(e) {
            if let Some(c) = cut.get_mut(e as usize) {
                *c = true;
            }
        }
        v = across(t, e, v);
    }
}

fn boundary_vertices(t: &Topology, n: usize) -> Vec<bool> {
    let mut on = vec![false; n];
    for l in &t.boundary_loops {
        for &v in l {
            if let Some(b) = on.get_mut(v as usize) {
                *b = true;
            }
        }
    }
    on
}

/// Cut making a genus-g chart genus 0 (module notes); all false when no handle is
/// found.
pub(super) fn handle_cut(m: &PolyMesh, t: &Topology) -> Vec<bool> {
    let g = Graph::new(m, t);
    let mut cut = vec![false; t.edge_count()];
    let root = t
        .boundary_loops
        .first()
        .and_then(|l| l.first())
        .or(m.face_vertices.first())
        .copied()
        .unwrap_or(0);
    let (dist, parent) = dijkstra(
        &g,
        &[root],
        |e| if g.is_boundary(e) { 0.0 } else { g.len(e) },
    );
    let mut in_tree = vec![false; t.edge_count()];
    for &e in &parent {
        if let Some(s) = in_tree.get_mut(e as usize) {
            *s = true;
        }
    }
    // Dual edges (interior, not in T) by decreasing loop length: Kruskal for a
    // maximum spanning cotree; the edges it rejects close the shortest loops.
    let mut dual: Vec<(f64, u32)> = (0..t.edge_count() as u32)
        .filter(|&e| !in_tree[e as usize] && t.edge_halfedges(e).len() == 2)
        .map(|e| {
            let [a, b] = t.edge_vertices[e as usize];
            let d = |v: u32| dist.get(v as usize).copied().unwrap_or(f64::INFINITY);
            (d(a) + g.len(e) + d(b), e)
        })
        .collect();
    dual.sort_by(|p, q| q.0.total_cmp(&p.0).then(p.1.cmp(&q.1)));
    let mut faces = UnionFind::new(m.face_count());
    let mut leftover = Vec::new();
    for &(_, e) in &dual {
        let fs: Vec<u32> = t.edge_faces(e).collect();
        if let [f1, f2] = fs[..] {
            if faces.find(f1) == faces.find(f2) {
                leftover.push(e);
            } else {
                faces.union(f1, f2);
            }
        }
    }
    for &e in &leftover {
        cut[e as usize] = true;
        let [a, b] = t.edge_vertices[e as usize];
        mark_path(t, &g, &parent, a, &mut cut);
        mark_path(t, &g, &parent, b, &mut cut);
    }
    prune(t, &g, &mut cut);
    cut
}

/// Removes dangling cut branches: cut edges ending at an interior vertex that no
/// other cut edge touches.
fn prune(t: &Topology, g: &Graph, cut: &mut [bool]) {
    let n = g.vertex_count();
    let anchored = boundary_vertices(t, n);
    let mut degree = vec![0usize; n];
    for (e, _) in cut.iter().enumerate().filter(|(_, &c)| c) {
        for v in t.edge_vertices[e] {
            degree[v as usize] += 1;
        }
    }
    let mut queue: VecDeque<u32> = (0..n as u32)
        .filter(|&v| degree[v as usize] == 1 && !anchored[v as usize])
        .collect();
    while let Some(v) = queue.pop_front() {
        if degree[v as usize] != 1 {
            continue;
        }
        let Some(&(w, e)) = g.neighbours(v).iter().find(|&&(_, e)| cut[e as usize]) else {
            continue;
        };
        cut[e as usize] = false;
        degree[v as usize] -= 1;
        degree[w as usize] -= 1;
        if degree[w as usize] == 1 && !anchored[w as usize] {
            queue.push_back(w);
        }
    }
}

/// Cut opening a closed genus-0 chart: the shortest path between two far-apart
/// vertices found by a double sweep, at least two edges long.
pub(super) fn closed_cut(m: &PolyMesh, t: &Topology) -> Vec<bool> {
    let g = Graph::new(m, t);
    let mut cut = vec![false; t.edge_count()];
    let start = m.face_vertices.first().copied().unwrap_or(0);
    let farthest = |dist: &[f64]| {
        (0..dist.len())
            .filter(|&v| dist[v].is_finite())
            .fold(None, |best: Option<usize>, v| match best {
                Some(b) if dist[b] >= dist[v] => Some(b),
                _ => Some(v),
            })
            .unwrap_or(0) as u32
    };
    let (d0, _) = dijkstra(&g, &[start], |e| g.len(e));
    let a = farthest(&d0);
    let (d1, parent) = dijkstra(&g, &[a], |e| g.len(e));
    let b = farthest(&d1);
    mark_path(t, &g, &parent, b, &mut cut);
    if cut.iter().filter(|&&c| c).count() < 2 {
        // A one-edge slit cannot open a surface: extend it by a second edge at `b`.
        if let Some(&(_, e)) = g.neighbours(b).iter().find(|&&(_, e)| !cut[e as usize]) {
            cut[e as usize] = true;
        }
    }
    cut
}

/// Cut joining every boundary loop to the first (module notes).
pub(super) fn hole_cut(m: &PolyMesh, t: &Topology) -> Vec<bool> {
    let g = Graph::new(m, t);
    let n = g.vertex_count();
    let mut cut = vec![false; t.edge_count()];
    let mut loop_of = vec![NONE; n];
    for (i, l) in t.boundary_loops.iter().enumerate() {
        for &v in l {
            if let Some(s) = loop_of.get_mut(v as usize) {
                *s = i as u32;
            }
        }
    }
    let mut joined = vec![false; t.boundary_loops.len()];
    let mut sources: Vec<u32> = t.boundary_loops.first().cloned().unwrap_or_default();
    if let Some(j) = joined.first_mut() {
        *j = true;
    }
    for _ in 1..t.boundary_loops.len() {
        let (dist, parent) = dijkstra(&g, &sources, |e| g.len(e));
        let target = (0..n)
            .filter(|&v| {
                let l = loop_of[v];
                l != NONE && !joined[l as usize] && dist[v].is_finite()
            })
            .fold(None, |best: Option<usize>, v| match best {
                Some(b) if dist[b] <= dist[v] => Some(b),
                _ => Some(v),
            });
        let Some(target) = target else {
            break;
        };
        let l = loop_of[target] as usize;
        joined[l] = true;
        // Walk back to the sources, cutting interior edges and adding the path.
        let mut v = target as u32;
        for _ in 0..n {
            sources.push(v);
            let e = parent[v as usize];
            if e == NONE {
                break;
            }
            if !g.is_boundary(e) {
                cut[e as usize] = true;
            }
            v = across(t, e, v);
        }
        sources.extend_from_slice(&t.boundary_loops[l]);
    }
    cut
}
