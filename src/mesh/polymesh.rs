//! The polygon mesh model shared by every stage.
//!
//! Geometry (positions, UV values) is kept apart from connectivity (faces as a flat
//! offsets + indices layout). Faces may have any arity ≥ 3 and need not be planar.

use nalgebra::{Point2, Point3};

/// A polygon mesh with optional per-corner texture coordinates.
///
/// Face `f` owns corners `face_offsets[f] .. face_offsets[f + 1]` of `face_vertices`
/// (and of `corner_uvs` when present). Indices are 0-based.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PolyMesh {
    /// Vertex positions (any length unit), in file order.
    pub positions: Vec<Point3<f64>>,
    /// `faces + 1` offsets into the corner arrays; `face_offsets[0] == 0`.
    pub face_offsets: Vec<usize>,
    /// Vertex index of every face corner.
    pub face_vertices: Vec<u32>,
    /// Texture coordinate values (`vt` records), in file order.
    pub uvs: Vec<Point2<f64>>,
    /// Per-corner index into `uvs`, same layout as `face_vertices`; `None` when the
    /// mesh carries no texture coordinates.
    pub corner_uvs: Option<Vec<u32>>,
    /// 1-based source line of every face (0 for faces not read from a file).
    pub face_lines: Vec<usize>,
}

impl PolyMesh {
    /// Builds a mesh from positions and faces given as vertex-index lists (no UVs).
    pub fn from_faces(positions: Vec<Point3<f64>>, faces: &[Vec<u32>]) -> Self {
        let mut face_offsets = Vec::with_capacity(faces.len() + 1);
        let mut face_vertices = Vec::new();
        face_offsets.push(0);
        for f in faces {
            face_vertices.extend_from_slice(f);
            face_offsets.push(face_vertices.len());
        }
        PolyMesh {
            positions,
            face_offsets,
            face_vertices,
            uvs: Vec::new(),
            corner_uvs: None,
            face_lines: vec![0; faces.len()],
        }
    }

    /// Number of faces.
    pub fn face_count(&self) -> usize {
        self.face_offsets.len().saturating_sub(1)
    }

    /// Number of position records (including vertices no face uses).
    pub fn vertex_count(&self) -> usize {
        self.positions.len()
    }

    /// Total number of face corners.
    pub fn corner_count(&self) -> usize {
        self.face_vertices.len()
    }

    /// Range of corner indices of face `f`.
    pub fn face_range(&self, f: usize) -> std::ops::Range<usize> {
        self.face_offsets[f]..self.face_offsets[f + 1]
    }

    /// Vertex indices of face `f`, in order.
    pub fn face(&self, f: usize) -> &[u32] {
        &self.face_vertices[self.face_range(f)]
    }

    /// Number of corners of face `f`.
    pub fn arity(&self, f: usize) -> usize {
        self.face_offsets[f + 1] - self.face_offsets[f]
    }

    /// Corner positions of face `f`, in order.
    pub fn face_corners(&self, f: usize) -> Vec<Point3<f64>> {
        self.face(f)
            .iter()
            .map(|&v| self.positions[v as usize])
            .collect()
    }

    /// Per-corner UV indices of face `f`, when the mesh has UVs.
    pub fn face_uv_indices(&self, f: usize) -> Option<&[u32]> {
        self.corner_uvs.as_ref().map(|c| &c[self.face_range(f)])
    }

    /// Iterator over faces as vertex-index slices.
    pub fn faces(&self) -> impl Iterator<Item = &[u32]> + '_ {
        (0..self.face_count()).map(move |f| self.face(f))
    }

    /// Describes face `f` for error messages: "face 12 (line 40)" or "face 12".
    pub fn face_label(&self, f: usize) -> String {
        match self.face_lines.get(f) {
            Some(&line) if line > 0 => format!("face {} (line {line})", f + 1),
            _ => format!("face {}", f + 1),
        }
    }
}
