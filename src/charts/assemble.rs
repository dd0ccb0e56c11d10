//! Pieces of a mesh joined across chosen edges, with vertices split into fans.
//!
//! Input: a mesh `m` with its [`Topology`], and per edge whether it joins its two
//! faces. Output: the connected pieces of faces (joined across those edges), and for
//! each piece its own vertex numbering: corners at one vertex share a piece vertex
//! only when linked through joined edges around that vertex (one fan). So seams,
//! pinched vertices (two fans of one piece touching at a vertex) and cut edges all
//! split vertices. O(corners).

use super::union_find::UnionFind;
use crate::mesh::{PolyMesh, Topology};

const NONE: u32 = u32::MAX;

/// Faces and vertex numbering of one piece.
#[derive(Debug, Default)]
pub(super) struct Piece {
    /// Face ids (through `face_ids`), in `m`'s face order.
    pub faces: Vec<u32>,
    /// Vertex id (through `vertex_ids`) of every piece vertex.
    pub vertices: Vec<u32>,
    /// Piece vertex of every corner of every face, faces in order.
    pub corners: Vec<u32>,
}

/// Whether edge `e` can join its two faces: exactly two halfedges, traversed in
/// opposite directions (manifold and consistently wound).
pub(super) fn manifold_consistent(m: &PolyMesh, t: &Topology, e: u32) -> bool {
    match t.edge_halfedges(e) {
        [a, b] => m.face_vertices.get(*a as usize) != m.face_vertices.get(*b as usize),
        _ => false,
    }
}

/// Corner range of face `f` of `m` (empty when the offsets are invalid).
pub(super) fn face_range(m: &PolyMesh, f: usize) -> std::ops::Range<usize> {
    match (m.face_offsets.get(f), m.face_offsets.get(f + 1)) {
        (Some(&a), Some(&b)) if a <= b && b <= m.face_vertices.len() => a..b,
        _ => 0..0,
    }
}

/// Splits `m` into pieces joined across edges with `joinable[e]` (only manifold,
/// consistently wound edges can join; others are ignored).
///
/// `face_ids[f]` / `vertex_ids[v]` translate `m`'s faces and vertices into the ids
/// the pieces report (`None`: identity). Pieces are ordered by their first face.
pub(super) fn assemble(
    m: &PolyMesh,
    t: &Topology,
    joinable: &[bool],
    face_ids: Option<&[u32]>,
    vertex_ids: Option<&[u32]>,
) -> Vec<Piece> {
    let face_count = m.face_count();
    let corner_count = m.face_vertices.len();
    let mut face_sets = UnionFind::new(face_count);
    let mut corner_sets = UnionFind::new(corner_count);
    let next = |c: u32| t.corner_next.get(c as usize).copied().unwrap_or(NONE);
    let face_of = |c: u32| t.corner_face.get(c as usize).copied().unwrap_or(NONE);
    for e in 0..t.edge_count() as u32 {
        if !joinable.get(e as usize).copied().unwrap_or(false) || !manifold_consistent(m, t, e) {
            continue;
        }
        if let [a, b] = *t.edge_halfedges(e) {
            face_sets.union(face_of(a), face_of(b));
            // a runs u → v and b runs v → u: a's start meets b's end, and vice versa.
            corner_sets.union(a, next(b));
            corner_sets.union(next(a), b);
        }
    }
    let face_id = |f: usize| {
        face_ids
            .and_then(|ids| ids.get(f).copied())
            .unwrap_or(f as u32)
    };
    let vertex_id = |v: u32| {
        vertex_ids
            .map(|ids| ids.get(v as usize).copied().unwrap_or(NONE))
            .unwrap_or(v)
    };
    let mut piece_of_root = vec![NONE; face_count];
    let mut local_of_root = vec![NONE; corner_count];
    let mut pieces: Vec<Piece> = Vec::new();
    for f in 0..face_count {
        let root = face_sets.find(f as u32) as usize;
        let Some(slot) = piece_of_root.get_mut(root) else {
            continue;
        };
        if *slot == NONE {
            *slot = pieces.len() as u32;
            pieces.push(Piece::default());
        }
        let Some(piece) = pieces.get_mut(*slot as usize) else {
            continue;
        };
        piece.faces.push(face_id(f));
        for c in face_range(m, f) {
            let root = corner_sets.find(c as u32) as usize;
            let Some(local) = local_of_root.get_mut(root) else {
                continue;
            };
            if *local == NONE {
                *local = piece.vertices.len() as u32;
                piece
                    .vertices
                    .push(vertex_id(m.face_vertices.get(c).copied().unwrap_or(NONE)));
            }
            piece.corners.push(*local);
        }
    }
    pieces
}
