//! A chart checked and prepared for solving: its boundary loops and every face's
//! precomputed objective data, packed for fast parallel evaluation.

use super::face_term::{FaceTerm, FaceView};
use crate::mesh::{PolyMesh, Topology};
use rayon::prelude::*;

/// A validated chart with its face table.
pub(crate) struct Chart<'m> {
    /// The chart mesh.
    pub mesh: &'m PolyMesh,
    /// Boundary loops, the outer one (longest in 3D) first.
    pub loops: Vec<Vec<u32>>,
    /// Total 3D area (length²).
    pub area: f64,
    /// Mean 3D edge length (length), the scale of gradient tolerances.
    pub mean_edge: f64,
    /// Penalty weight λ.
    pub lambda: f64,
    /// Corner offsets per face (`faces + 1`), as in the mesh.
    offsets: Vec<usize>,
    /// Per-face area.
    areas: Vec<f64>,
    /// `G2_f` columns, one per corner.
    g2: Vec<[f64; 2]>,
    /// Offsets of each face's penalty matrix in `penalty`.
    penalty_offsets: Vec<usize>,
    /// Penalty operators `B_f = √λ P_f D_f` (n×n each, row-major).
    penalty: Vec<f64>,
}

/// Boundary loops of `mesh` (each along its faces' winding) when it is one connected,
/// oriented, manifold genus-0 surface with at least one boundary loop; otherwise one
/// sentence saying what is wrong.
fn disk_boundary(mesh: &PolyMesh) -> Result<Vec<Vec<u32>>, String> {
    let topo = Topology::build(mesh);
    let vertex = |v: u32| format!("vertex {}", v as u64 + 1);
    let edge = |e: u32| {
        let [a, b] = topo
            .edge_vertices
            .get(e as usize)
            .copied()
            .unwrap_or([0, 0]);
        format!("the edge from {} to {}", vertex(a), vertex(b))
    };
    if topo.components.len() != 1 {
        return Err(format!(
            "the chart has {} connected pieces; a chart must be one piece",
            topo.components.len()
        ));
    }
    if let Some(&e) = topo.non_manifold_edges.first() {
        return Err(format!("{} is shared by more than two faces", edge(e)));
    }
    if let Some(&e) = topo.inconsistent_edges.first() {
        return Err(format!(
            "the two faces at {} are oriented inconsistently",
            edge(e)
        ));
    }
    if let Some(&v) = topo.non_manifold_vertices.first() {
        return Err(format!(
            "{} joins faces that touch only there (the chart is pinched there)",
            vertex(v)
        ));
    }
    if let Some(&(_, v)) = topo.pinched_loops.first() {
        return Err(format!(
            "the boundary passes {} twice (the chart is pinched there)",
            vertex(v)
        ));
    }
    if topo.boundary_loops.is_empty() {
        return Err(
            "the chart is closed (it has no boundary); it must be cut open along seams".into(),
        );
    }
    let genus = topo.genus();
    if genus != 0 {
        return Err(format!(
            "the chart has genus {genus} with {} boundary loops; it must be a disk or a \
             genus-0 surface with holes (cut it along more seams)",
            topo.boundary_loops.len()
        ));
    }
    Ok(topo.boundary_loops)
}

impl<'m> Chart<'m> {
    /// Checks `mesh` and precomputes its faces with penalty weight `lambda`. The error
    /// is one sentence naming the face or vertex at fault.
    pub fn new(mesh: &'m PolyMesh, lambda: f64) -> Result<Self, String> {
        let nf = mesh.face_count();
        if nf == 0 {
            return Err("the chart has no faces".into());
        }
        if mesh.face_offsets.first() != Some(&0)
            || mesh.face_offsets.last() != Some(&mesh.face_vertices.len())
            || mesh.face_offsets.windows(2).any(|w| w[0] > w[1])
        {
            return Err("the chart's face offsets do not match its corner list".into());
        }
        let nv = mesh.vertex_count();
        let mut used = vec![false; nv];
        for f in 0..nf {
            let face = mesh.face(f);
            if face.len() < 3 {
                return Err(format!(
                    "{} has {} corners; a face needs at least 3",
                    mesh.face_label(f),
                    face.len()
                ));
            }
            for (i, &v) in face.iter().enumerate() {
                let Some(u) = used.get_mut(v as usize) else {
                    return Err(format!(
                        "{} refers to vertex {}, but the chart has only {nv} vertices",
                        mesh.face_label(f),
                        v as u64 + 1
                    ));
                };
                *u = true;
                if face[..i].contains(&v) {
                    return Err(format!(
                        "{} uses vertex {} twice",
                        mesh.face_label(f),
                        v + 1
                    ));
                }
            }
        }
        if let Some(v) = used.iter().position(|u| !u) {
            return Err(format!(
                "vertex {} belongs to no face; a chart lists only the vertices its faces use",
                v + 1
            ));
        }
        let terms: Vec<FaceTerm> = (0..nf)
            .into_par_iter()
            .map(|f| {
                FaceTerm::new(&mesh.face_corners(f), lambda)
                    .map_err(|e| format!("{} {e}", mesh.face_label(f)))
            })
            .collect::<Result<_, _>>()?;
        let mut loops = disk_boundary(mesh)?;
        let loop_length = |lp: &Vec<u32>| -> f64 {
            (0..lp.len())
                .map(|i| {
                    let a = mesh.positions[lp[i] as usize];
                    let b = mesh.positions[lp[(i + 1) % lp.len()] as usize];
                    (b - a).norm()
                })
                .sum()
        };
        let outer = (0..loops.len())
            .max_by(|&a, &b| loop_length(&loops[a]).total_cmp(&loop_length(&loops[b])))
            .unwrap_or(0);
        loops.swap(0, outer);

        let mut penalty_offsets = Vec::with_capacity(nf + 1);
        penalty_offsets.push(0);
        let mut g2 = Vec::with_capacity(mesh.corner_count());
        let mut penalty = Vec::new();
        let mut areas = Vec::with_capacity(nf);
        for t in terms {
            areas.push(t.area);
            g2.extend_from_slice(&t.g2);
            penalty.extend_from_slice(&t.penalty);
            penalty_offsets.push(penalty.len());
        }
        let area: f64 = areas.iter().sum();
        let (mut length, mut count) = (0.0, 0usize);
        for f in 0..nf {
            let c = mesh.face_corners(f);
            for i in 0..c.len() {
                length += (c[(i + 1) % c.len()] - c[i]).norm();
            }
            count += c.len();
        }
        Ok(Chart {
            mesh,
            loops,
            area,
            mean_edge: length / count as f64,
            lambda,
            offsets: mesh.face_offsets.clone(),
            areas,
            g2,
            penalty_offsets,
            penalty,
        })
    }

    /// Number of faces.
    pub fn face_count(&self) -> usize {
        self.areas.len()
    }

    /// Number of vertices.
    pub fn vertex_count(&self) -> usize {
        self.mesh.vertex_count()
    }

    /// Corner range of face `f`.
    pub fn corners(&self, f: usize) -> std::ops::Range<usize> {
        self.offsets[f]..self.offsets[f + 1]
    }

    /// Corner offsets (`faces + 1`).
    pub fn offsets(&self) -> &[usize] {
        &self.offsets
    }

    /// Vertex indices of face `f`.
    pub fn face(&self, f: usize) -> &[u32] {
        self.mesh.face(f)
    }

    /// Objective data of face `f`.
    pub fn view(&self, f: usize) -> FaceView<'_> {
        FaceView {
            area: self.areas[f],
            g2: &self.g2[self.corners(f)],
            penalty: &self.penalty[self.penalty_offsets[f]..self.penalty_offsets[f + 1]],
        }
    }

    /// Gathers face `f`'s UV corners from the per-vertex `uv` array into `w`, relative
    /// to its first corner (see [`super::face_term`]).
    pub fn gather(&self, f: usize, uv: &[[f64; 2]], w: &mut Vec<[f64; 2]>) {
        let face = self.face(f);
        let o = uv[face[0] as usize];
        w.clear();
        w.extend(face.iter().map(|&v| {
            let p = uv[v as usize];
            [p[0] - o[0], p[1] - o[1]]
        }));
    }
}
