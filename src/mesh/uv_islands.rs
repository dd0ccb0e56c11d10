//! UV islands: groups of faces connected across edges whose two sides use the same
//! texture coordinates (the same `vt` index at each end). Edges where the `vt` indices
//! differ are seams.
//!
//! Input: a [`PolyMesh`]. Output: `None` without UVs, else the island id of every face
//! (`0..count`, numbered in order of each island's first face). O(corners).

use super::disjoint_sets::DisjointSets;
use super::PolyMesh;

/// Island id of every face, or `None` when the mesh has no UVs. Never panics;
/// corners with a vertex beyond `positions` join nothing.
pub fn uv_islands(mesh: &PolyMesh) -> Option<Vec<u32>> {
    let corner_uvs = mesh.corner_uvs.as_ref()?;
    let face_count = mesh.face_count();
    let slots = mesh.positions.len();
    // Every halfedge as (lo vertex, hi vertex, vt at lo, vt at hi, face), bucketed by lo.
    let mut entries: Vec<(u32, u32, u32, u32)> = Vec::with_capacity(mesh.face_vertices.len());
    let mut offsets = vec![0usize; slots + 1];
    let mut halfedges = Vec::with_capacity(mesh.face_vertices.len());
    for f in 0..face_count {
        let (Some(&a), Some(&b)) = (mesh.face_offsets.get(f), mesh.face_offsets.get(f + 1)) else {
            continue;
        };
        for c in a..b {
            let n = if c + 1 == b { a } else { c + 1 };
            let (Some(&v0), Some(&v1), Some(&t0), Some(&t1)) = (
                mesh.face_vertices.get(c),
                mesh.face_vertices.get(n),
                corner_uvs.get(c),
                corner_uvs.get(n),
            ) else {
                continue;
            };
            if v0 as usize >= slots || v1 as usize >= slots {
                continue;
            }
            let (lo, hi, tlo, thi) = if v0 <= v1 {
                (v0, v1, t0, t1)
            } else {
                (v1, v0, t1, t0)
            };
            offsets[lo as usize + 1] += 1;
            halfedges.push((lo, hi, tlo, thi, f as u32));
        }
    }
    for i in 0..slots {
        offsets[i + 1] += offsets[i];
    }
    let mut fill = offsets.clone();
    entries.resize(halfedges.len(), (0, 0, 0, 0));
    for &(lo, hi, tlo, thi, f) in &halfedges {
        let slot = &mut fill[lo as usize];
        entries[*slot] = (hi, tlo, thi, f);
        *slot += 1;
    }
    drop(halfedges);

    let mut sets = DisjointSets::new(face_count);
    for lo in 0..slots {
        let bucket = &mut entries[offsets[lo]..offsets[lo + 1]];
        bucket.sort_unstable();
        for w in bucket.windows(2) {
            let (a, b) = (w[0], w[1]);
            if (a.0, a.1, a.2) == (b.0, b.1, b.2) {
                sets.union(a.3, b.3);
            }
        }
    }
    Some(sets.labels().0)
}

/// Number of islands in an id list from [`uv_islands`].
pub fn island_count(ids: &[u32]) -> usize {
    ids.iter().map(|&i| i as usize + 1).max().unwrap_or(0)
}
