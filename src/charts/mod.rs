//! Charts: which faces are flattened together, and where the seams run (DESIGN §4
//! Seams).
//!
//! A [`Chart`] is a set of faces plus its own vertex numbering: a mesh vertex on a
//! seam, or where a chart's boundary touches itself (a pinched vertex), becomes
//! several chart vertices, one per fan of corners joined across the chart's uncut
//! edges. Every chart handed to the engine is connected, manifold, consistently
//! wound and of genus 0 with at least one boundary loop: a disk, or (keep mode only)
//! a disk with holes.
//!
//! - `keep`: charts are the input's UV islands ([`keep`]); without UVs, the connected
//!   components.
//! - `auto`: seams chosen by [`segment`] (normal-cone region growing, then merging of
//!   developable and of small regions).
//! - Both cut non-manifold edges and edges between inconsistently wound faces, then
//!   make every chart a disk ([`disk`]): handles are cut along a shortest system of
//!   loops, closed pieces along a long shortest path, and (auto) holes are joined to
//!   the outer boundary along shortest paths.
//! - [`split_chart`] cuts a flattened chart in two when its stretch or a self-overlap
//!   calls for it; [`merge_charts`] joins two neighbours into one disk, so the
//!   pipeline can undo over-segmentation where the joined chart still flattens well.

mod assemble;
mod disk;
mod keep;
mod merge;
mod paths;
mod segment;
mod union_find;

use crate::error::Result;
use crate::mesh::{PolyMesh, Topology};
use crate::settings::SeamMode;
use serde::Serialize;

/// How a chart came about.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ChartOrigin {
    /// A UV island of the input (`--seams keep`), or a connected component of a mesh
    /// without UVs.
    Kept,
    /// Cut by polyflat's segmentation (`--seams auto`).
    Auto,
    /// Split from a chart whose flattening was too stretched or overlapped itself.
    Split,
}

/// One chart: faces of the mesh and the chart's own vertex numbering.
#[derive(Debug, Clone, PartialEq)]
pub struct Chart {
    /// Mesh face indices, ascending.
    pub faces: Vec<u32>,
    /// Mesh vertex of every chart vertex (`chart-local → mesh`); a mesh vertex on a
    /// seam appears once per side.
    pub vertices: Vec<u32>,
    /// Chart-local vertex of every corner of every chart face, faces in `faces` order
    /// and corners in mesh corner order.
    pub corners: Vec<u32>,
    /// How the chart came about.
    pub origin: ChartOrigin,
    /// The input UVs of this island were mirrored: most of its area (by 3D area) had
    /// UV polygons wound against the faces. The chart is flattened unmirrored.
    pub mirrored_in_input: bool,
    /// Mesh edges cut beyond the seams the mode implies (keep: the input's UV seams;
    /// auto: the segmentation's boundaries) to make the chart a disk; 0 normally.
    pub extra_seam_edges: usize,
}

impl Chart {
    /// The chart as a mesh of its own, for the flattening engine.
    ///
    /// Vertices are the chart-local ones (positions copied from `mesh`), faces are the
    /// chart's faces in order with their source lines; no UVs. Face `k` of the result
    /// is mesh face `faces[k]`, and vertex `i` is mesh vertex `vertices[i]`.
    pub fn mesh(&self, mesh: &PolyMesh) -> PolyMesh {
        let positions = self
            .vertices
            .iter()
            .map(|&v| mesh.positions.get(v as usize).copied().unwrap_or_default())
            .collect();
        let mut face_offsets = Vec::with_capacity(self.faces.len() + 1);
        face_offsets.push(0);
        let mut face_lines = Vec::with_capacity(self.faces.len());
        let mut end = 0;
        for &f in &self.faces {
            end += face_arity(mesh, f);
            face_offsets.push(end.min(self.corners.len()));
            face_lines.push(mesh.face_lines.get(f as usize).copied().unwrap_or(0));
        }
        PolyMesh {
            positions,
            face_offsets,
            face_vertices: self.corners.clone(),
            uvs: Vec::new(),
            corner_uvs: None,
            face_lines,
        }
    }

    /// Each chart face's corners as chart-local vertex indices (for packing and for
    /// writing UVs back).
    pub fn local_faces(&self, mesh: &PolyMesh) -> Vec<Vec<u32>> {
        let mut start = 0;
        self.faces
            .iter()
            .map(|&f| {
                let end = (start + face_arity(mesh, f)).min(self.corners.len());
                let face = self.corners.get(start..end).unwrap_or(&[]).to_vec();
                start = end;
                face
            })
            .collect()
    }
}

/// Corner count of mesh face `f` (0 for an unknown face).
fn face_arity(mesh: &PolyMesh, f: u32) -> usize {
    let f = f as usize;
    match (mesh.face_offsets.get(f), mesh.face_offsets.get(f + 1)) {
        (Some(&a), Some(&b)) if a <= b => b - a,
        _ => 0,
    }
}

/// Builds the charts of `mesh` (`topology` is [`Topology::build`] of it) for `mode`.
///
/// `keep` with UVs: one chart per UV island, split at pinched vertices, with a
/// minimal extra seam where an island has a handle or is closed (counted in
/// [`Chart::extra_seam_edges`]). `keep` without UVs: one chart per connected
/// component, which must be a disk or genus 0 with holes, else an error suggesting
/// `--seams auto`. `auto`: charts from [`segment`], each a disk. Charts are ordered
/// by their first face.
pub fn build(mesh: &PolyMesh, topology: &Topology, mode: SeamMode) -> Result<Vec<Chart>> {
    match mode {
        SeamMode::Keep => keep::keep_charts(mesh, topology),
        SeamMode::Auto => Ok(segment::auto_charts(mesh, topology)),
    }
}

/// Splits `chart` in two along a seam between two far-apart seeds, following normal
/// changes (the same region growing as `auto`), and makes each part a disk. Used when
/// a flattened chart's L2 stretch exceeds `--max-stretch` or it overlaps itself.
///
/// Returns charts with origin [`ChartOrigin::Split`]; returns `chart` unchanged (one
/// element) when it has a single face and cannot be split.
pub fn split_chart(mesh: &PolyMesh, chart: &Chart) -> Vec<Chart> {
    segment::split(mesh, chart)
}

/// Joins two charts with disjoint faces along every manifold, consistently wound mesh
/// edge they share (`topology` is [`Topology::build`] of `mesh`); seams inside either
/// chart stay cut. Returns `None` when they share no such edge or the union is not a
/// disk (one component, genus 0, one boundary loop).
pub fn merge_charts(mesh: &PolyMesh, topology: &Topology, a: &Chart, b: &Chart) -> Option<Chart> {
    merge::merge(mesh, topology, a, b)
}
