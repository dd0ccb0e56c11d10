//! A chart checked and prepared for solving: its boundary loops and every face's
//! precomputed objective data, packed for fast parallel evaluation.

use super::face_term::{FaceTerm, FaceView};
use super::topology;
use crate::mesh::PolyMesh;
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
    /// Corner offsets per face (`faces + 1`), as in the mesh.
    offsets: Vec<usize>,
    /// Per-face area.
    areas: Vec<f64>,
    /// `G2_f` columns, one per corner.
    g2: Vec<[f64; 2]>,
    /// Offsets of each face's penalty matrix in `penalty`.
    penalty_offsets: Vec<usize>,
    /// Penalty matrices `Q_f` (n×n each, row-major).
    penalty: Vec<f64>,
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
        let mut loops = topology::boundary_loops(mesh)?;
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

    /// Gathers face `f`'s UV corners from the per-vertex `uv` array into `w`.
    pub fn gather(&self, f: usize, uv: &[[f64; 2]], w: &mut Vec<[f64; 2]>) {
        w.clear();
        w.extend(self.face(f).iter().map(|&v| uv[v as usize]));
    }
}
