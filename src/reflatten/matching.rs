//! Which face and corner of the previous model each face of the edited model
//! continues.
//!
//! Input: the edited mesh and the previous one (both already validated, so every
//! index is in range). Output: a [`Correspondence`].
//!
//! - Same topology (same vertex count, same face vertex lists): face `f` continues
//!   face `f`, corner `c` corner `c`; a vertex has moved when its position differs
//!   by more than [`SAME_POSITION`] times the model's size.
//! - Changed topology: the previous faces' centroids go into a k-d tree; each edited
//!   face takes, among the [`CANDIDATES`] previous faces with the nearest centroids,
//!   the first whose normal agrees (cosine ≥ [`NORMAL_AGREEMENT`]) and whose corners
//!   include a corner at the position of every corner of the edited face. That keeps
//!   unchanged faces and faces re-split inside an old face (a quad cut into two
//!   triangles); each corner carries the UV of the previous corner at its position.
//!   Faces with a vertex that is not where a previous corner was are new.

use kiddo::{KdTree, SquaredEuclidean};
use nalgebra::Point3;
use std::collections::HashMap;

use crate::mesh::PolyMesh;
use crate::operators::face::{centroid, vector_area};

/// Distance, relative to the larger model's bounding-box diagonal, below which two
/// positions are the same point (absorbs six-decimal rounding of re-exported files).
pub const SAME_POSITION: f64 = 1e-7;

/// Previous faces examined per edited face (nearest centroids first).
const CANDIDATES: usize = 8;

/// Cosine between unit normals above which two faces face the same way.
const NORMAL_AGREEMENT: f64 = 0.9;

/// Marks a corner of an edited face that matches no previous face.
pub const NONE: u32 = u32::MAX;

/// How the edited model continues the previous one.
#[derive(Debug, Clone, PartialEq)]
pub struct Correspondence {
    /// Same vertex count and face vertex lists.
    pub same_topology: bool,
    /// Per edited face: the previous face it continues, `None` when it is new.
    pub face: Vec<Option<u32>>,
    /// Per edited corner: the previous corner whose UV it carries ([`NONE`] on new
    /// faces).
    pub corner: Vec<u32>,
    /// Per edited vertex: whether it moved (same topology only; else all false).
    pub moved: Vec<bool>,
}

/// The correspondence between `edited` and `previous` (module notes).
pub fn correspond(edited: &PolyMesh, previous: &PolyMesh) -> Correspondence {
    let tol = SAME_POSITION * diagonal(edited).max(diagonal(previous));
    let same_topology = edited.positions.len() == previous.positions.len()
        && edited.face_offsets == previous.face_offsets
        && edited.face_vertices == previous.face_vertices;
    if same_topology {
        let moved = edited
            .positions
            .iter()
            .zip(&previous.positions)
            .map(|(a, b)| (a - b).norm() > tol)
            .collect();
        return Correspondence {
            same_topology,
            face: (0..edited.face_count() as u32).map(Some).collect(),
            corner: (0..edited.corner_count() as u32).collect(),
            moved,
        };
    }
    by_position(edited, previous, tol)
}

/// Diagonal of the bounding box of the positions (0 for none).
fn diagonal(mesh: &PolyMesh) -> f64 {
    let mut lo = Point3::new(f64::INFINITY, f64::INFINITY, f64::INFINITY);
    let mut hi = -lo;
    for p in &mesh.positions {
        lo = lo.inf(p);
        hi = hi.sup(p);
    }
    let d = (hi - lo).norm();
    if d.is_finite() {
        d
    } else {
        0.0
    }
}

/// Matches faces of a re-meshed edit by position (module notes).
fn by_position(edited: &PolyMesh, previous: &PolyMesh, tol: f64) -> Correspondence {
    // Faces with the same centroid share one tree entry: the tree holds a bounded
    // number of items per point.
    let mut tree: KdTree<f64, 3> = KdTree::new();
    let mut at_point: Vec<Vec<u32>> = Vec::new();
    let mut index_of: HashMap<[u64; 3], usize> = HashMap::new();
    for g in 0..previous.face_count() {
        let c = centroid(&previous.face_corners(g));
        if !(c.x.is_finite() && c.y.is_finite() && c.z.is_finite()) {
            continue;
        }
        let key = [c.x.to_bits(), c.y.to_bits(), c.z.to_bits()];
        let k = *index_of.entry(key).or_insert_with(|| {
            tree.add(&[c.x, c.y, c.z], at_point.len() as u64);
            at_point.push(Vec::new());
            at_point.len() - 1
        });
        at_point[k].push(g as u32);
    }
    let mut face = vec![None; edited.face_count()];
    let mut corner = vec![NONE; edited.corner_count()];
    for (f, slot) in face.iter_mut().enumerate() {
        let corners = edited.face_corners(f);
        let c = centroid(&corners);
        if !(c.x.is_finite() && c.y.is_finite() && c.z.is_finite()) {
            continue;
        }
        let normal = vector_area(&corners);
        let candidates = tree
            .nearest_n::<SquaredEuclidean>(&[c.x, c.y, c.z], CANDIDATES)
            .into_iter()
            .flat_map(|n| at_point[n.item as usize].iter().copied());
        for g in candidates {
            let g_corners = previous.face_corners(g as usize);
            let g_normal = vector_area(&g_corners);
            let denominator = normal.norm() * g_normal.norm();
            if !(normal.dot(&g_normal) >= NORMAL_AGREEMENT * denominator && denominator > 0.0) {
                continue;
            }
            let found: Option<Vec<usize>> = corners
                .iter()
                .map(|p| g_corners.iter().position(|q| (p - q).norm() <= tol))
                .collect();
            if let Some(found) = found {
                *slot = Some(g);
                let base = previous.face_offsets[g as usize];
                for (c, k) in edited.face_range(f).zip(found) {
                    corner[c] = (base + k) as u32;
                }
                break;
            }
        }
    }
    Correspondence {
        same_topology: false,
        face,
        corner,
        moved: vec![false; edited.positions.len()],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn grid() -> PolyMesh {
        let positions = (0..9)
            .map(|i| Point3::new(f64::from(i % 3), f64::from(i / 3), 0.0))
            .collect();
        PolyMesh::from_faces(
            positions,
            &[
                vec![0, 1, 4, 3],
                vec![1, 2, 5, 4],
                vec![3, 4, 7, 6],
                vec![4, 5, 8, 7],
            ],
        )
    }

    #[test]
    fn same_topology_flags_only_moved_vertices() {
        let previous = grid();
        let mut edited = grid();
        edited.positions[4].z = 0.3;
        let c = correspond(&edited, &previous);
        assert!(c.same_topology);
        assert_eq!(c.moved.iter().filter(|&&m| m).count(), 1);
        assert!(c.moved[4]);
        assert_eq!(c.face[3], Some(3));
    }

    #[test]
    fn a_split_quad_continues_its_old_face_and_a_new_vertex_makes_a_new_face() {
        let previous = grid();
        let mut positions = previous.positions.clone();
        positions.push(Point3::new(1.5, 1.5, 0.0));
        let edited = PolyMesh::from_faces(
            positions,
            &[
                vec![0, 1, 4],
                vec![0, 4, 3],
                vec![1, 2, 5, 4],
                vec![3, 4, 7, 6],
                vec![4, 5, 9],
                vec![5, 8, 9],
                vec![8, 7, 9],
                vec![7, 4, 9],
            ],
        );
        let c = correspond(&edited, &previous);
        assert!(!c.same_topology);
        assert_eq!(&c.face[..4], &[Some(0), Some(0), Some(1), Some(2)]);
        assert!(c.face[4..].iter().all(Option::is_none));
        // Corner 1 of edited face 1 (vertex 4) is corner 2 of previous face 0.
        assert_eq!(c.corner[4], 2);
        assert!(c.corner[14..].iter().all(|&k| k == NONE));
    }
}
