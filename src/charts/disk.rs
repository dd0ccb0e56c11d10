//! Making charts disks: checks a chart's shape and cuts it until it is a disk (or,
//! where holes are allowed, genus 0 with holes).
//!
//! Input: the mesh and a chart (connected faces with its own vertex numbering).
//! Output: one or more charts, each connected, manifold, consistently wound, genus 0
//! with at least one boundary loop. The cuts come from [`paths`](super::paths); a
//! chart that is still not manifold after its seams were cut (an edge that cannot
//! open because neither end splits) is split in two by region growing until it is.

use super::assemble::{assemble, manifold_consistent};
use super::{segment, Chart};
use crate::mesh::{PolyMesh, Topology};

/// Deepest chain of cuts and splits on one chart before it is returned as it is.
const MAX_DEPTH: usize = 64;

/// Whether a chart may keep several boundary loops.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Holes {
    /// Genus 0 with holes is fine (the engine fills holes virtually).
    Keep,
    /// Join holes to the outer boundary so the chart is a disk.
    Cut,
}

/// Topological summary of a chart.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) struct Shape {
    /// Connected components.
    pub components: usize,
    /// Genus (of the first component).
    pub genus: i64,
    /// Boundary loops.
    pub boundary_loops: usize,
    /// Non-manifold edges or vertices, or inconsistently wound edges, remain.
    pub defective: bool,
}

impl Shape {
    /// Topology of a chart mesh.
    pub(super) fn of(t: &Topology) -> Shape {
        Shape {
            components: t.component_count(),
            genus: t.components.first().map_or(0, |c| c.genus),
            boundary_loops: t.boundary_loops.len(),
            defective: !(t.non_manifold_edges.is_empty()
                && t.non_manifold_vertices.is_empty()
                && t.inconsistent_edges.is_empty()),
        }
    }
}

/// Re-splits `chart` after cutting the edges flagged in `cut` (edges of `t`, the
/// topology of `cm = chart.mesh(..)`); returns the resulting pieces as charts that
/// keep `chart`'s origin and mirror flag.
pub(super) fn recut(chart: &Chart, cm: &PolyMesh, t: &Topology, cut: &[bool]) -> Vec<Chart> {
    let joinable: Vec<bool> = (0..t.edge_count() as u32)
        .map(|e| manifold_consistent(cm, t, e) && !cut.get(e as usize).copied().unwrap_or(false))
        .collect();
    assemble(cm, t, &joinable, Some(&chart.faces), Some(&chart.vertices))
        .into_iter()
        .map(|p| Chart {
            faces: p.faces,
            vertices: p.vertices,
            corners: p.corners,
            origin: chart.origin,
            mirrored_in_input: chart.mirrored_in_input,
            extra_seam_edges: 0,
        })
        .collect()
}

/// Cuts `chart` into disks (or genus-0 charts with holes when `holes` is
/// [`Holes::Keep`]); see the module notes. Edges cut are added to
/// [`Chart::extra_seam_edges`] of the first resulting chart.
pub(super) fn make_disks(mesh: &PolyMesh, chart: Chart, holes: Holes) -> Vec<Chart> {
    let mut out = Vec::new();
    fix(mesh, chart, holes, 0, &mut out);
    out
}

fn fix(mesh: &PolyMesh, chart: Chart, holes: Holes, depth: usize, out: &mut Vec<Chart>) {
    let cm = chart.mesh(mesh);
    let t = Topology::build(&cm);
    let shape = Shape::of(&t);
    if depth >= MAX_DEPTH {
        out.push(chart);
        return;
    }
    let no_cut = vec![false; t.edge_count()];
    if shape.components > 1 {
        for (i, mut piece) in recut(&chart, &cm, &t, &no_cut).into_iter().enumerate() {
            if i == 0 {
                piece.extra_seam_edges = chart.extra_seam_edges;
            }
            fix(mesh, piece, holes, depth + 1, out);
        }
        return;
    }
    if shape.defective {
        match segment::split_two(mesh, &chart) {
            Some(parts) => {
                for part in parts {
                    fix(mesh, part, holes, depth + 1, out);
                }
            }
            None => out.push(chart),
        }
        return;
    }
    let cut = if shape.genus > 0 {
        super::paths::handle_cut(&cm, &t)
    } else if shape.boundary_loops == 0 {
        super::paths::closed_cut(&cm, &t)
    } else if shape.boundary_loops > 1 && holes == Holes::Cut {
        super::paths::hole_cut(&cm, &t)
    } else {
        out.push(chart);
        return;
    };
    let added = cut.iter().filter(|&&c| c).count();
    let pieces = recut(&chart, &cm, &t, &cut);
    if added == 0 || (pieces.len() == 1 && pieces[0].vertices.len() == chart.vertices.len()) {
        // The cut opened nothing; fall back to splitting the chart.
        match segment::split_two(mesh, &chart) {
            Some(parts) => {
                for part in parts {
                    fix(mesh, part, holes, depth + 1, out);
                }
            }
            None => out.push(chart),
        }
        return;
    }
    for (i, mut piece) in pieces.into_iter().enumerate() {
        if i == 0 {
            piece.extra_seam_edges = chart.extra_seam_edges + added;
        }
        fix(mesh, piece, holes, depth + 1, out);
    }
}
