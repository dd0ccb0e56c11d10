//! Joining two neighbouring charts into one along every mesh edge they share.
//!
//! Input: the mesh, its topology and two charts with disjoint faces. Output: the
//! union as one chart whose vertex numbering glues the two charts across their
//! shared, manifold and consistently wound edges (seams inside either chart stay
//! cut), or `None` when the charts share no such edge or the union is not a disk
//! (one component, genus 0, one boundary loop). Used to undo over-segmentation: the
//! pipeline keeps a merge only when the joined chart still flattens well.

use super::assemble::manifold_consistent;
use super::disk::Shape;
use super::union_find::UnionFind;
use super::{Chart, ChartOrigin};
use crate::mesh::{PolyMesh, Topology};
use std::collections::HashMap;

/// The union of `a` and `b` glued along their shared edges, if it is a disk.
pub(super) fn merge(mesh: &PolyMesh, topology: &Topology, a: &Chart, b: &Chart) -> Option<Chart> {
    // Union vertex numbering before gluing: a's vertices, then b's.
    let offset = a.vertices.len() as u32;
    let mut local: HashMap<usize, (u32, bool)> = HashMap::new();
    for (chart, shift, in_b) in [(a, 0, false), (b, offset, true)] {
        let mut k = 0;
        for &f in &chart.faces {
            for c in mesh.face_range(f as usize) {
                let v = *chart.corners.get(k)?;
                local.insert(c, (v + shift, in_b));
                k += 1;
            }
        }
    }
    let total = (a.vertices.len() + b.vertices.len()) as u32;
    let mut glue = UnionFind::new(total as usize);
    let mut shared = 0usize;
    for (&c, &(va, in_b)) in &local {
        if in_b {
            continue;
        }
        let e = *topology.corner_edge.get(c)?;
        if !manifold_consistent(mesh, topology, e) {
            continue;
        }
        let Some(twin) = topology.twin(c as u32) else {
            continue;
        };
        let Some(&(vb_end, true)) = local.get(&(twin as usize)) else {
            continue;
        };
        // c runs u → w in a; its twin runs w → u in b.
        let next_a = *topology.corner_next.get(c)? as usize;
        let next_b = *topology.corner_next.get(twin as usize)? as usize;
        let (wa, _) = *local.get(&next_a)?;
        let (ub, _) = *local.get(&next_b)?;
        glue.union(va, ub);
        glue.union(wa, vb_end);
        shared += 1;
    }
    if shared == 0 {
        return None;
    }
    let mut renumber = vec![u32::MAX; total as usize];
    let mut vertices = Vec::new();
    let mesh_vertex = |v: u32| {
        if v < offset {
            a.vertices.get(v as usize).copied()
        } else {
            b.vertices.get((v - offset) as usize).copied()
        }
    };
    let mut faces: Vec<u32> = a.faces.iter().chain(&b.faces).copied().collect();
    faces.sort_unstable();
    let mut corners = Vec::with_capacity(a.corners.len() + b.corners.len());
    for &f in &faces {
        for c in mesh.face_range(f as usize) {
            let (v, _) = *local.get(&c)?;
            let root = glue.find(v) as usize;
            if renumber[root] == u32::MAX {
                renumber[root] = vertices.len() as u32;
                vertices.push(mesh_vertex(root as u32)?);
            }
            corners.push(renumber[root]);
        }
    }
    let chart = Chart {
        faces,
        vertices,
        corners,
        origin: if a.origin == b.origin {
            a.origin
        } else {
            ChartOrigin::Auto
        },
        mirrored_in_input: false,
        extra_seam_edges: a.extra_seam_edges + b.extra_seam_edges,
    };
    let shape = Shape::of(&Topology::build(&chart.mesh(mesh)));
    let disk =
        shape.components == 1 && shape.genus == 0 && shape.boundary_loops == 1 && !shape.defective;
    disk.then_some(chart)
}
