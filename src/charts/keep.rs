//! `--seams keep`: charts are the input's UV islands.
//!
//! Faces join across an edge when it is manifold, consistently wound and both sides
//! use the same `vt` at each end (without UVs: every such edge joins, so charts are
//! the connected components). Vertices split where UV corners differ and where an
//! island touches itself at a vertex (see `assemble`). Islands with a handle, or
//! closed ones, get a minimal extra seam (counted in `extra_seam_edges`); without UVs
//! such a component is an error that suggests `--seams auto`.

use super::assemble::{assemble, face_range, manifold_consistent};
use super::disk::{make_disks, Holes, Shape};
use super::{Chart, ChartOrigin};
use crate::error::{Error, Result};
use crate::mesh::{PolyMesh, Topology};
use crate::operators::face::vector_area;

const NONE: u32 = u32::MAX;

/// Charts for `--seams keep` (module notes).
pub(super) fn keep_charts(mesh: &PolyMesh, t: &Topology) -> Result<Vec<Chart>> {
    let uvs = mesh.corner_uvs.as_deref();
    let next = |c: u32| t.corner_next.get(c as usize).copied().unwrap_or(NONE);
    let joinable: Vec<bool> = (0..t.edge_count() as u32)
        .map(|e| {
            manifold_consistent(mesh, t, e)
                && match (uvs, t.edge_halfedges(e)) {
                    (None, _) => true,
                    (Some(cu), &[a, b]) => {
                        let vt = |c: u32| cu.get(c as usize).copied().unwrap_or(NONE);
                        vt(a) == vt(next(b)) && vt(next(a)) == vt(b)
                    }
                    _ => false,
                }
        })
        .collect();
    let mut charts = Vec::new();
    for piece in assemble(mesh, t, &joinable, None, None) {
        let chart = Chart {
            mirrored_in_input: uvs.is_some_and(|cu| mirrored(mesh, cu, &piece.faces)),
            faces: piece.faces,
            vertices: piece.vertices,
            corners: piece.corners,
            origin: ChartOrigin::Kept,
            extra_seam_edges: 0,
        };
        if uvs.is_none() {
            check_component(mesh, &chart)?;
        }
        charts.extend(make_disks(mesh, chart, Holes::Keep));
    }
    Ok(charts)
}

/// Without UVs, a component must be a disk or genus 0 with holes.
fn check_component(mesh: &PolyMesh, chart: &Chart) -> Result<()> {
    let shape = Shape::of(&Topology::build(&chart.mesh(mesh)));
    let what = if shape.defective {
        "is not a manifold surface even after cutting its non-manifold and inconsistently wound edges"
    } else if shape.genus > 0 {
        "has a handle (genus above 0)"
    } else if shape.boundary_loops == 0 {
        "is closed"
    } else {
        return Ok(());
    };
    let first = chart.faces.first().copied().unwrap_or(0) as usize;
    Err(Error::Seams(format!(
        "the mesh has no UVs, and the part containing {} {what}, so it cannot be flattened \
         as one chart; use --seams auto to let polyflat cut seams",
        mesh.face_label(first)
    )))
}

/// Whether the island's UVs are mirrored: the 3D-area-weighted vote of its faces'
/// UV winding (signed shoelace area of the face's UV corners in face order) is
/// negative.
fn mirrored(mesh: &PolyMesh, corner_uvs: &[u32], faces: &[u32]) -> bool {
    let mut vote = 0.0;
    for &f in faces {
        let range = face_range(mesh, f as usize);
        let uv: Vec<_> = range
            .clone()
            .filter_map(|c| corner_uvs.get(c).and_then(|&t| mesh.uvs.get(t as usize)))
            .collect();
        let corners: Vec<_> = range
            .filter_map(|c| {
                mesh.face_vertices
                    .get(c)
                    .and_then(|&v| mesh.positions.get(v as usize))
                    .copied()
            })
            .collect();
        let n = uv.len();
        if n < 3 || corners.len() != n {
            continue;
        }
        let signed: f64 = (0..n)
            .map(|i| uv[i].coords.perp(&uv[(i + 1) % n].coords))
            .sum();
        let area = vector_area(&corners).norm();
        if signed != 0.0 {
            vote += area * signed.signum();
        }
    }
    vote < 0.0
}
