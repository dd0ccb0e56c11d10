//! Consistency checks shared by the atlas and the preview: every index a face uses
//! must exist, so drawing never indexes out of range.

use crate::error::{Error, Result};
use crate::mesh::PolyMesh;
use nalgebra::Point2;

/// Checks that `mesh`'s face layout is well formed (offsets increasing from 0 to the
/// corner count, every face ≥ 3 corners, vertex indices in range) and that
/// `corner_uvs` has one entry per corner, each naming a finite UV in `uvs`.
///
/// `what` names the caller ("atlas", "preview") at the start of the error sentence.
pub(crate) fn check_faces(
    what: &str,
    mesh: &PolyMesh,
    uvs: &[Point2<f64>],
    corner_uvs: &[u32],
) -> Result<()> {
    let offsets = &mesh.face_offsets;
    let corners = mesh.face_vertices.len();
    let layout_ok = match (offsets.first(), offsets.last()) {
        (Some(&0), Some(&last)) => last == corners && offsets.windows(2).all(|w| w[0] <= w[1]),
        (None, _) => corners == 0,
        _ => false,
    };
    if !layout_ok {
        return Err(Error::Image(format!(
            "{what}: the mesh's face offsets do not describe its {corners} corners"
        )));
    }
    if corner_uvs.len() != corners {
        return Err(Error::Image(format!(
            "{what}: {} UV corner indices given for a mesh with {corners} face corners",
            corner_uvs.len()
        )));
    }
    for f in 0..mesh.face_count() {
        let range = mesh.face_range(f);
        if range.len() < 3 {
            return Err(Error::Image(format!(
                "{what}: {} has {} corners, at least 3 are needed",
                mesh.face_label(f),
                range.len()
            )));
        }
        for (&v, &t) in mesh.face_vertices[range.clone()]
            .iter()
            .zip(&corner_uvs[range])
        {
            if v as usize >= mesh.positions.len() {
                return Err(Error::Image(format!(
                    "{what}: {} refers to vertex {}, but the mesh has {} vertices",
                    mesh.face_label(f),
                    u64::from(v) + 1,
                    mesh.positions.len()
                )));
            }
            match uvs.get(t as usize) {
                None => {
                    return Err(Error::Image(format!(
                        "{what}: {} refers to UV {}, but only {} UVs are given",
                        mesh.face_label(f),
                        u64::from(t) + 1,
                        uvs.len()
                    )))
                }
                Some(p) if !(p.x.is_finite() && p.y.is_finite()) => {
                    return Err(Error::Image(format!(
                        "{what}: {} uses UV {} which is not a finite number",
                        mesh.face_label(f),
                        u64::from(t) + 1
                    )))
                }
                Some(_) => {}
            }
        }
    }
    Ok(())
}

/// Checks that a per-face array has one entry per face; `name` is the field's name.
pub(crate) fn check_per_face(what: &str, name: &str, len: usize, mesh: &PolyMesh) -> Result<()> {
    if len == mesh.face_count() {
        Ok(())
    } else {
        Err(Error::Image(format!(
            "{what}: {name} has {len} entries for a mesh with {} faces",
            mesh.face_count()
        )))
    }
}
