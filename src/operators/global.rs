//! Global assembly of the polygon operators of de Goes, Butts & Desbrun (2020),
//! "Discrete differential operators on polygonal meshes", ACM TOG 39(4).
//!
//! Each function runs the per-face operators of [`super::face`] on every face in
//! parallel (rayon), then scatters the small dense blocks into one sparse matrix
//! (faer triplet assembly; duplicate entries are summed).
//!
//! | function | shape | units |
//! | --- | --- | --- |
//! | [`gradient`] | 3F×V: rows `3f..3f+3` are face `f`'s gradient (x, y, z) | value / length |
//! | [`laplacian`] | V×V, symmetric positive semi-definite | value (scale-free in 2D) |
//! | [`lumped_mass`] | V entries | length² |
//!
//! V is `mesh.vertex_count()` (vertices no face uses get empty rows/columns and zero
//! mass); F is `mesh.face_count()`. A face whose operators do not exist (fewer than
//! three corners, a vertex index out of range, a non-finite coordinate, zero area)
//! makes the whole call fail with [`Error::Mesh`] naming the lowest such face.

use faer::sparse::{SparseColMat, Triplet};
use nalgebra::{DMatrix, Matrix3, Point3};
use rayon::prelude::*;

use super::face::{self, FaceError};
use crate::error::{Error, Result};
use crate::mesh::PolyMesh;

/// Name used in [`Error::Mesh`] for a mesh that does not carry its file name.
const MESH_NAME: &str = "mesh";

/// An [`Error::Mesh`] about the whole mesh.
pub(crate) fn mesh_error(message: String) -> Error {
    Error::Mesh {
        file: MESH_NAME.to_string(),
        message,
    }
}

/// An [`Error::Mesh`] for face `f`: "face 12 (line 40) has zero area".
pub(crate) fn face_error(mesh: &PolyMesh, f: usize, what: impl std::fmt::Display) -> Error {
    mesh_error(format!("{} {what}", mesh.face_label(f)))
}

/// The corner index range of face `f`, checked against the corner arrays.
pub(crate) fn checked_face_range(mesh: &PolyMesh, f: usize) -> Result<std::ops::Range<usize>> {
    match (mesh.face_offsets.get(f), mesh.face_offsets.get(f + 1)) {
        (Some(&start), Some(&end)) if start <= end && end <= mesh.face_vertices.len() => {
            Ok(start..end)
        }
        _ => Err(face_error(
            mesh,
            f,
            "has a corner range outside the mesh's corner list",
        )),
    }
}

/// Vertex indices and corner positions of face `f`, every index checked (never
/// panics on a malformed mesh).
pub(crate) fn checked_face(mesh: &PolyMesh, f: usize) -> Result<(&[u32], Vec<Point3<f64>>)> {
    let range = checked_face_range(mesh, f)?;
    let verts = mesh.face_vertices.get(range).unwrap_or_default();
    let corners = verts
        .iter()
        .map(|&v| {
            mesh.positions.get(v as usize).copied().ok_or_else(|| {
                face_error(
                    mesh,
                    f,
                    format!(
                        "refers to vertex {}, but the mesh has only {} vertices",
                        v as usize + 1,
                        mesh.positions.len()
                    ),
                )
            })
        })
        .collect::<Result<Vec<_>>>()?;
    Ok((verts, corners))
}

/// Runs `op` on every face in parallel; fails with the lowest failing face.
fn per_face<T: Send>(
    mesh: &PolyMesh,
    op: impl Fn(&[Point3<f64>]) -> Result<T, FaceError> + Sync,
) -> Result<Vec<(Vec<u32>, T)>> {
    let results: Vec<Result<(Vec<u32>, T)>> = (0..mesh.face_count())
        .into_par_iter()
        .map(|f| {
            let (verts, corners) = checked_face(mesh, f)?;
            let value = op(&corners).map_err(|e| face_error(mesh, f, e))?;
            Ok((verts.to_vec(), value))
        })
        .collect();
    results.into_iter().collect()
}

fn assemble(
    nrows: usize,
    ncols: usize,
    triplets: &[Triplet<usize, usize, f64>],
) -> Result<SparseColMat<usize, f64>> {
    SparseColMat::try_new_from_triplets(nrows, ncols, triplets).map_err(|e| {
        mesh_error(format!(
            "cannot assemble a {nrows}×{ncols} sparse operator ({e:?})"
        ))
    })
}

/// Global gradient `G` (3F×V): rows `3f, 3f+1, 3f+2` hold face `f`'s
/// [`face::gradient`] `G_f` (3×n) scattered to the face's vertex columns.
///
/// `G u` stacks each face's constant gradient of the vertex function `u` (value per
/// length unit); exact for linear `u` on planar faces.
pub fn gradient(mesh: &PolyMesh) -> Result<SparseColMat<usize, f64>> {
    let blocks = per_face(mesh, face::gradient)?;
    let nnz = blocks.iter().map(|(v, _)| 3 * v.len()).sum();
    let mut triplets = Vec::with_capacity(nnz);
    for (f, (verts, g)) in blocks.iter().enumerate() {
        for (j, &v) in verts.iter().enumerate() {
            for k in 0..3 {
                triplets.push(Triplet::new(3 * f + k, v as usize, g[(k, j)]));
            }
        }
    }
    assemble(3 * mesh.face_count(), mesh.vertex_count(), &triplets)
}

/// Local Laplacian `L_f(λ) = D_fᵀ M_f(λ) D_f = A_f G_fᵀ G_f + λ Q_fᵀ Q_f` (n×n,
/// symmetric positive semi-definite) of one face's corners, where
/// `Q_f = P_f D_f = D_f − V_f G_f` (since `P_f = I − V_f U_f` and `G_f = U_f D_f`).
fn local_laplacian(corners: &[Point3<f64>], lambda: f64) -> Result<DMatrix<f64>, FaceError> {
    let (area, normal) = face::area_normal(corners)?;
    let g = face::gradient(corners)?;
    let flat = face::edges(corners) * (Matrix3::identity() - normal * normal.transpose());
    let q = face::difference(corners.len()) - flat * &g;
    let l = g.transpose() * &g * area + q.transpose() * &q * lambda;
    // Symmetric in exact arithmetic; remove round-off asymmetry.
    Ok((&l + l.transpose()) * 0.5)
}

/// Global Laplacian `L(λ) = Σ_f D_fᵀ M_f(λ) D_f` (V×V), scattered to vertex indices.
///
/// Symmetric positive semi-definite with `L·1 = 0` (the sign convention is the
/// positive one: for triangles it is minus the usual cotangent matrix). `lambda`
/// (dimensionless, ≥ 0, finite) weighs the projection term that penalises each
/// face's null-space ("hourglass") modes; triangles have none, so on a triangle mesh
/// `L(λ)` is the cotangent Laplacian (Pinkall & Polthier 1993) for every `λ`.
pub fn laplacian(mesh: &PolyMesh, lambda: f64) -> Result<SparseColMat<usize, f64>> {
    if !(lambda.is_finite() && lambda >= 0.0) {
        return Err(Error::Settings(format!(
            "--projection-weight must be a finite number ≥ 0, got {lambda}"
        )));
    }
    let blocks = per_face(mesh, |c| local_laplacian(c, lambda))?;
    let nnz = blocks.iter().map(|(v, _)| v.len() * v.len()).sum();
    let mut triplets = Vec::with_capacity(nnz);
    for (verts, l) in &blocks {
        for (i, &vi) in verts.iter().enumerate() {
            for (j, &vj) in verts.iter().enumerate() {
                triplets.push(Triplet::new(vi as usize, vj as usize, l[(i, j)]));
            }
        }
    }
    let v = mesh.vertex_count();
    assemble(v, v, &triplets)
}

/// Lumped mass (V entries, length²): each face's area `A_f` split equally among its
/// n corners. The entries sum to the mesh's total area; vertices no face uses get 0.
pub fn lumped_mass(mesh: &PolyMesh) -> Result<Vec<f64>> {
    let areas = per_face(mesh, |c| face::area_normal(c).map(|(a, _)| a))?;
    let mut mass = vec![0.0; mesh.vertex_count()];
    for (verts, area) in &areas {
        let share = area / verts.len() as f64;
        for &v in verts {
            if let Some(m) = mass.get_mut(v as usize) {
                *m += share;
            }
        }
    }
    Ok(mass)
}
