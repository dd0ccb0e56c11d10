//! Connectivity of a polygon mesh, robust to non-manifold input.
//!
//! Halfedge-style layout without a fixed twin: every face corner `c` (an index into
//! [`PolyMesh::face_vertices`]) also names the *halfedge* that leaves the corner's vertex
//! along its face, `v(c) → v(next(c))`. Halfedges are grouped by undirected edge; an
//! edge with exactly two halfedges is manifold and each is the other's twin
//! ([`Topology::twin`]). Edges with one halfedge are boundary, with three or more
//! non-manifold. From this: per-face neighbours, boundary loops, connected components
//! (of faces, joined across edges), Euler characteristic and genus per component, and
//! the defects [`validate`](super::validate) reports.
//!
//! Input: any [`PolyMesh`]; faces whose offsets are invalid are treated as empty and
//! vertex indices beyond `positions` still get connectivity (validation names them).
//! Cost: O(corners) time and memory, apart from sorting each vertex's few edges.

use super::disjoint_sets::DisjointSets;
use super::PolyMesh;

/// Marks "none" in index arrays.
const NONE: u32 = u32::MAX;

/// One connected component of faces.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Component {
    /// Number of faces.
    pub faces: usize,
    /// Number of distinct vertices its faces use.
    pub vertices: usize,
    /// Number of distinct edges its faces use.
    pub edges: usize,
    /// Number of boundary loops.
    pub boundary_loops: usize,
    /// `χ = V − E + F`.
    pub euler_characteristic: i64,
    /// `g` from `χ = 2 − 2g − b` (meaningful for manifold, orientable components).
    pub genus: i64,
}

/// Connectivity of a [`PolyMesh`]; see the module notes for the layout.
#[derive(Debug, Clone, PartialEq)]
pub struct Topology {
    /// Endpoints `[a, b]` of every undirected edge, `a < b`, sorted by `(a, b)`.
    pub edge_vertices: Vec<[u32; 2]>,
    /// Halfedges (corners) of edge `e`: `edge_halfedges[edge_offsets[e]..edge_offsets[e + 1]]`.
    edge_offsets: Vec<usize>,
    edge_halfedges: Vec<u32>,
    /// Edge of every halfedge (corner).
    pub corner_edge: Vec<u32>,
    /// Face of every corner.
    pub corner_face: Vec<u32>,
    /// Next corner in the same face, cyclically.
    pub corner_next: Vec<u32>,
    /// Boundary loops as ordered vertex lists; each runs along its faces' winding.
    pub boundary_loops: Vec<Vec<u32>>,
    /// Component of every boundary loop.
    pub boundary_loop_component: Vec<u32>,
    /// Component id of every face, `0..components.len()`, numbered by first face.
    pub face_component: Vec<u32>,
    /// Per-component counts.
    pub components: Vec<Component>,
    /// Number of distinct vertices used by faces.
    pub used_vertices: usize,
    /// Edges shared by more than two faces.
    pub non_manifold_edges: Vec<u32>,
    /// Vertices whose faces do not form one disk or half-disk fan (e.g. two fans
    /// touching at the vertex, or a vertex on a non-manifold edge).
    pub non_manifold_vertices: Vec<u32>,
    /// Manifold edges whose two faces traverse them in the same direction.
    pub inconsistent_edges: Vec<u32>,
    /// Vertices that no face uses.
    pub isolated_vertices: Vec<u32>,
    /// Indices into `boundary_loops` of loops that pass through a vertex more than once,
    /// with that vertex (vertices on non-manifold edges excepted).
    pub pinched_loops: Vec<(u32, u32)>,
}

/// Safe corner range of face `f`.
fn face_range(mesh: &PolyMesh, f: usize) -> std::ops::Range<usize> {
    match (mesh.face_offsets.get(f), mesh.face_offsets.get(f + 1)) {
        (Some(&a), Some(&b)) if a <= b && b <= mesh.face_vertices.len() => a..b,
        _ => 0..0,
    }
}

impl Topology {
    /// Builds the connectivity of `mesh`. Never panics; O(corners).
    pub fn build(mesh: &PolyMesh) -> Topology {
        let face_count = mesh.face_count();
        let corner_count = mesh.face_vertices.len();
        // Corners whose vertex is beyond `positions` get no edges (validation names them).
        let vertex_slots = mesh.positions.len();

        // Corner → face and next corner.
        let mut corner_face = vec![NONE; corner_count];
        let mut corner_next = vec![NONE; corner_count];
        for f in 0..face_count {
            let r = face_range(mesh, f);
            let (start, end) = (r.start, r.end);
            for c in r {
                corner_face[c] = f as u32;
                corner_next[c] = (if c + 1 == end { start } else { c + 1 }) as u32;
            }
        }
        let vertex_of = |c: u32| mesh.face_vertices.get(c as usize).copied().unwrap_or(NONE);

        // Bucket halfedges by their lower endpoint (counting sort), then order each
        // bucket by the upper endpoint to give every undirected edge an id.
        let mut bucket_offsets = vec![0usize; vertex_slots + 1];
        let endpoints = |c: usize| -> Option<(u32, u32)> {
            let n = *corner_next.get(c)?;
            if n == NONE {
                return None;
            }
            let a = vertex_of(c as u32);
            let b = vertex_of(n);
            if a as usize >= vertex_slots || b as usize >= vertex_slots {
                return None;
            }
            Some(if a < b { (a, b) } else { (b, a) })
        };
        for c in 0..corner_count {
            if let Some((lo, _)) = endpoints(c) {
                bucket_offsets[lo as usize + 1] += 1;
            }
        }
        for i in 0..vertex_slots {
            bucket_offsets[i + 1] += bucket_offsets[i];
        }
        let mut fill = bucket_offsets.clone();
        let mut bucketed = vec![(0u32, 0u32); bucket_offsets[vertex_slots]];
        for c in 0..corner_count {
            if let Some((lo, hi)) = endpoints(c) {
                let slot = &mut fill[lo as usize];
                bucketed[*slot] = (hi, c as u32);
                *slot += 1;
            }
        }
        let mut edge_vertices = Vec::new();
        let mut edge_offsets = vec![0usize];
        let mut edge_halfedges = Vec::with_capacity(bucketed.len());
        let mut corner_edge = vec![NONE; corner_count];
        for lo in 0..vertex_slots {
            let bucket = &mut bucketed[bucket_offsets[lo]..bucket_offsets[lo + 1]];
            bucket.sort_unstable();
            let mut i = 0;
            while i < bucket.len() {
                let hi = bucket[i].0;
                let e = edge_vertices.len() as u32;
                while i < bucket.len() && bucket[i].0 == hi {
                    let c = bucket[i].1;
                    edge_halfedges.push(c);
                    corner_edge[c as usize] = e;
                    i += 1;
                }
                edge_vertices.push([lo as u32, hi]);
                edge_offsets.push(edge_halfedges.len());
            }
        }
        drop(bucketed);

        let mut topo = Topology {
            edge_vertices,
            edge_offsets,
            edge_halfedges,
            corner_edge,
            corner_face,
            corner_next,
            boundary_loops: Vec::new(),
            boundary_loop_component: Vec::new(),
            face_component: Vec::new(),
            components: Vec::new(),
            used_vertices: 0,
            non_manifold_edges: Vec::new(),
            non_manifold_vertices: Vec::new(),
            inconsistent_edges: Vec::new(),
            isolated_vertices: Vec::new(),
            pinched_loops: Vec::new(),
        };
        topo.classify_edges(mesh);
        topo.find_components(face_count);
        topo.find_vertex_fans(mesh, vertex_slots);
        topo.find_boundary_loops(mesh, vertex_slots);
        topo.count_components(mesh, vertex_slots);
        topo
    }

    /// Number of undirected edges.
    pub fn edge_count(&self) -> usize {
        self.edge_vertices.len()
    }

    /// Halfedges (corners) along edge `e`; empty for an unknown edge.
    pub fn edge_halfedges(&self, e: u32) -> &[u32] {
        let e = e as usize;
        match (self.edge_offsets.get(e), self.edge_offsets.get(e + 1)) {
            (Some(&a), Some(&b)) => self.edge_halfedges.get(a..b).unwrap_or(&[]),
            _ => &[],
        }
    }

    /// Faces along edge `e` (one per halfedge; a face appears once per halfedge).
    pub fn edge_faces(&self, e: u32) -> impl Iterator<Item = u32> + '_ {
        self.edge_halfedges(e)
            .iter()
            .map(|&c| self.corner_face.get(c as usize).copied().unwrap_or(NONE))
    }

    /// Whether edge `e` borders exactly one face.
    pub fn is_boundary_edge(&self, e: u32) -> bool {
        self.edge_halfedges(e).len() == 1
    }

    /// The other halfedge of a manifold edge, `None` on boundary or non-manifold edges.
    pub fn twin(&self, c: u32) -> Option<u32> {
        let e = *self.corner_edge.get(c as usize)?;
        match self.edge_halfedges(e) {
            [a, b] if *a == c => Some(*b),
            [a, b] if *b == c => Some(*a),
            _ => None,
        }
    }

    /// Faces sharing an edge with face `f` (each listed once per shared edge, `f` itself
    /// excluded), in corner order.
    pub fn face_neighbours(&self, mesh: &PolyMesh, f: usize) -> Vec<u32> {
        let mut out = Vec::new();
        for c in face_range(mesh, f) {
            let e = self.corner_edge.get(c).copied().unwrap_or(NONE);
            for g in self.edge_faces(e) {
                if g as usize != f && g != NONE {
                    out.push(g);
                }
            }
        }
        out
    }

    /// Number of connected components.
    pub fn component_count(&self) -> usize {
        self.components.len()
    }

    /// Euler characteristic of the whole mesh, `V − E + F` over used vertices.
    pub fn euler_characteristic(&self, mesh: &PolyMesh) -> i64 {
        self.used_vertices as i64 - self.edge_count() as i64 + mesh.face_count() as i64
    }

    /// Sum of the components' genera.
    pub fn genus(&self) -> i64 {
        self.components.iter().map(|c| c.genus).sum()
    }

    fn classify_edges(&mut self, mesh: &PolyMesh) {
        let mut inconsistent = Vec::new();
        let mut non_manifold = Vec::new();
        for e in 0..self.edge_count() as u32 {
            let hs = self.edge_halfedges(e);
            match hs {
                [a, b] => {
                    let va = mesh.face_vertices.get(*a as usize);
                    let vb = mesh.face_vertices.get(*b as usize);
                    if va == vb {
                        inconsistent.push(e);
                    }
                }
                _ if hs.len() > 2 => non_manifold.push(e),
                _ => {}
            }
        }
        self.inconsistent_edges = inconsistent;
        self.non_manifold_edges = non_manifold;
    }

    fn find_components(&mut self, face_count: usize) {
        let mut sets = DisjointSets::new(face_count);
        for e in 0..self.edge_count() as u32 {
            let hs = self.edge_halfedges(e);
            if let Some((&first, rest)) = hs.split_first() {
                let f0 = self
                    .corner_face
                    .get(first as usize)
                    .copied()
                    .unwrap_or(NONE);
                for &c in rest {
                    let f = self.corner_face.get(c as usize).copied().unwrap_or(NONE);
                    sets.union(f0, f);
                }
            }
        }
        let (ids, count) = sets.labels();
        self.face_component = ids;
        self.components = vec![
            Component {
                faces: 0,
                vertices: 0,
                edges: 0,
                boundary_loops: 0,
                euler_characteristic: 0,
                genus: 0,
            };
            count
        ];
    }

    /// Groups the corners at each vertex into fans (corners linked across manifold
    /// edges); a vertex with more than one fan is non-manifold.
    fn find_vertex_fans(&mut self, mesh: &PolyMesh, vertex_slots: usize) {
        let corner_count = mesh.face_vertices.len();
        let mut sets = DisjointSets::new(corner_count);
        // The corner of the face of halfedge `h` that sits at vertex `v` (h's start or end).
        let corner_at = |h: u32, v: u32| -> u32 {
            if mesh.face_vertices.get(h as usize) == Some(&v) {
                h
            } else {
                self.corner_next.get(h as usize).copied().unwrap_or(NONE)
            }
        };
        for e in 0..self.edge_count() {
            let (Some(&[a, b]), [h1, h2]) =
                (self.edge_vertices.get(e), self.edge_halfedges(e as u32))
            else {
                continue;
            };
            sets.union(corner_at(*h1, a), corner_at(*h2, a));
            sets.union(corner_at(*h1, b), corner_at(*h2, b));
        }
        let mut fans = vec![0u32; vertex_slots];
        let mut used = vec![false; vertex_slots];
        for c in 0..corner_count {
            if self.corner_face.get(c).copied().unwrap_or(NONE) == NONE {
                continue;
            }
            let v = mesh.face_vertices.get(c).copied().unwrap_or(NONE) as usize;
            if let Some(u) = used.get_mut(v) {
                *u = true;
            }
            if sets.find(c as u32) == c as u32 {
                if let Some(n) = fans.get_mut(v) {
                    *n += 1;
                }
            }
        }
        self.used_vertices = used.iter().filter(|&&u| u).count();
        self.non_manifold_vertices = (0..vertex_slots as u32)
            .filter(|&v| fans.get(v as usize).is_some_and(|&n| n > 1))
            .collect();
        self.isolated_vertices = (0..mesh.positions.len() as u32)
            .filter(|&v| !used.get(v as usize).copied().unwrap_or(false))
            .collect();
    }

    /// Walks boundary halfedges into loops. From a boundary halfedge ending at `v`, the
    /// next one is found by rotating through `v`'s fan (across manifold edges) so that
    /// two fans touching at `v` give separate loops; when the fan walk fails (inconsistent
    /// or non-manifold surroundings) any unused boundary halfedge leaving `v` is taken.
    fn find_boundary_loops(&mut self, mesh: &PolyMesh, vertex_slots: usize) {
        let corner_count = mesh.face_vertices.len();
        let is_boundary = |c: usize| -> bool {
            self.corner_edge
                .get(c)
                .is_some_and(|&e| self.edge_halfedges(e).len() == 1)
        };
        // Boundary halfedges leaving each vertex (CSR).
        let mut out_offsets = vec![0usize; vertex_slots + 1];
        for c in 0..corner_count {
            if is_boundary(c) {
                let v = mesh.face_vertices.get(c).copied().unwrap_or(NONE) as usize;
                if let Some(slot) = out_offsets.get_mut(v + 1) {
                    *slot += 1;
                }
            }
        }
        for i in 0..vertex_slots {
            out_offsets[i + 1] += out_offsets[i];
        }
        let mut fill = out_offsets.clone();
        let mut out_halfedges = vec![NONE; out_offsets[vertex_slots]];
        for c in 0..corner_count {
            if is_boundary(c) {
                let v = mesh.face_vertices.get(c).copied().unwrap_or(NONE) as usize;
                if let Some(slot) = fill.get_mut(v) {
                    if let Some(h) = out_halfedges.get_mut(*slot) {
                        *h = c as u32;
                    }
                    *slot += 1;
                }
            }
        }

        // Vertices on an edge with more than two faces: a loop through them twice is a
        // consequence of that edge (reported on its own), not a pinch.
        let mut on_non_manifold_edge = vec![false; vertex_slots];
        for &e in &self.non_manifold_edges {
            for &v in self.edge_vertices.get(e as usize).into_iter().flatten() {
                if let Some(flag) = on_non_manifold_edge.get_mut(v as usize) {
                    *flag = true;
                }
            }
        }
        let mut used = vec![false; corner_count];
        let mut loops = Vec::new();
        let mut loop_components = Vec::new();
        let mut pinched = Vec::new();
        let vertex = |c: u32| mesh.face_vertices.get(c as usize).copied().unwrap_or(NONE);
        let next = |c: u32| self.corner_next.get(c as usize).copied().unwrap_or(NONE);
        // Rotate through the fan at the end vertex of boundary halfedge `h`.
        let fan_next = |h: u32| -> Option<u32> {
            let mut k = next(h);
            for _ in 0..corner_count {
                if k == NONE {
                    return None;
                }
                if is_boundary(k as usize) {
                    return Some(k);
                }
                // k leaves v; its twin enters v (when consistently oriented), and the
                // halfedge after the twin leaves v again.
                let t = self.twin(k)?;
                if vertex(next(t)) != vertex(k) {
                    return None;
                }
                k = next(t);
            }
            None
        };
        for start in 0..corner_count {
            if !is_boundary(start) || used[start] {
                continue;
            }
            let mut loop_vertices = Vec::new();
            let mut h = start as u32;
            while let Some(slot) = used.get_mut(h as usize) {
                if *slot {
                    break;
                }
                *slot = true;
                loop_vertices.push(vertex(h));
                let end = vertex(next(h));
                // A used halfedge from the fan walk closes the loop.
                h = match fan_next(h) {
                    Some(k) => k,
                    None => {
                        let (a, b) = (
                            out_offsets.get(end as usize).copied().unwrap_or(0),
                            out_offsets.get(end as usize + 1).copied().unwrap_or(0),
                        );
                        out_halfedges
                            .get(a..b)
                            .unwrap_or(&[])
                            .iter()
                            .copied()
                            .find(|&k| !used.get(k as usize).copied().unwrap_or(true))
                            .unwrap_or(NONE)
                    }
                };
            }
            let component = self
                .corner_face
                .get(start)
                .and_then(|&f| self.face_component.get(f as usize))
                .copied()
                .unwrap_or(NONE);
            let mut seen = loop_vertices.clone();
            seen.sort_unstable();
            let pinch = seen.windows(2).find(|w| {
                w[0] == w[1]
                    && !on_non_manifold_edge
                        .get(w[0] as usize)
                        .copied()
                        .unwrap_or(false)
            });
            if let Some(w) = pinch {
                pinched.push((loops.len() as u32, w[0]));
            }
            loops.push(loop_vertices);
            loop_components.push(component);
        }
        self.boundary_loops = loops;
        self.boundary_loop_component = loop_components;
        self.pinched_loops = pinched;
    }

    fn count_components(&mut self, mesh: &PolyMesh, vertex_slots: usize) {
        let face_count = mesh.face_count();
        // Last component that counted each vertex / edge; faces are visited grouped by
        // component so each (component, element) pair counts once.
        // Faces grouped by component (counting sort).
        let mut starts = vec![0usize; self.components.len() + 1];
        for &c in &self.face_component {
            if let Some(s) = starts.get_mut(c as usize + 1) {
                *s += 1;
            }
        }
        for i in 0..self.components.len() {
            starts[i + 1] += starts[i];
        }
        let mut order = vec![0u32; face_count];
        for (f, &c) in self.face_component.iter().enumerate() {
            if let Some(s) = starts.get_mut(c as usize) {
                if let Some(slot) = order.get_mut(*s) {
                    *slot = f as u32;
                }
                *s += 1;
            }
        }
        let mut vertex_mark = vec![NONE; vertex_slots];
        let mut edge_mark = vec![NONE; self.edge_count()];
        for &f in &order {
            let comp = self.face_component.get(f as usize).copied().unwrap_or(NONE);
            let Some(stats) = self.components.get_mut(comp as usize) else {
                continue;
            };
            stats.faces += 1;
            for c in face_range(mesh, f as usize) {
                let v = mesh.face_vertices.get(c).copied().unwrap_or(NONE) as usize;
                if let Some(m) = vertex_mark.get_mut(v) {
                    if *m != comp {
                        *m = comp;
                        stats.vertices += 1;
                    }
                }
                let e = self.corner_edge.get(c).copied().unwrap_or(NONE) as usize;
                if let Some(m) = edge_mark.get_mut(e) {
                    if *m != comp {
                        *m = comp;
                        stats.edges += 1;
                    }
                }
            }
        }
        for &comp in &self.boundary_loop_component {
            if let Some(stats) = self.components.get_mut(comp as usize) {
                stats.boundary_loops += 1;
            }
        }
        for stats in &mut self.components {
            stats.euler_characteristic =
                stats.vertices as i64 - stats.edges as i64 + stats.faces as i64;
            stats.genus =
                (2 - stats.euler_characteristic - stats.boundary_loops as i64).div_euclid(2);
        }
    }
}
