//! Sub-mesh of a face subset.

use super::PolyMesh;
use nalgebra::{Point2, Point3};

const NONE: u32 = u32::MAX;

impl PolyMesh {
    /// The mesh made of `faces` (global face indices, in the order given), with its own
    /// compact vertex (and UV) numbering.
    ///
    /// Returns the sub-mesh and, for each of its vertices, the global vertex index
    /// (`local → global`, ascending). Local vertices keep the global order; UVs are
    /// compacted the same way; `face_lines` are carried over. Face indices beyond the
    /// mesh are skipped, and corners referring beyond `positions` or `uvs` (which
    /// [`validate`](super::validate) reports) get the origin rather than a panic.
    pub fn submesh(&self, faces: &[u32]) -> (PolyMesh, Vec<u32>) {
        let ranges: Vec<(usize, std::ops::Range<usize>)> = faces
            .iter()
            .filter_map(|&f| {
                let f = f as usize;
                match (self.face_offsets.get(f), self.face_offsets.get(f + 1)) {
                    (Some(&a), Some(&b)) if a <= b && b <= self.face_vertices.len() => {
                        Some((f, a..b))
                    }
                    _ => None,
                }
            })
            .collect();
        let vertex_map = compact(
            ranges
                .iter()
                .flat_map(|(_, r)| self.face_vertices[r.clone()].iter().copied()),
        );
        let uv_map = self.corner_uvs.as_ref().map(|cu| {
            compact(
                ranges
                    .iter()
                    .flat_map(|(_, r)| cu.get(r.clone()).unwrap_or(&[]).iter().copied()),
            )
        });

        let mut face_offsets = Vec::with_capacity(ranges.len() + 1);
        face_offsets.push(0);
        let mut face_vertices = Vec::new();
        let mut corner_uvs = uv_map.as_ref().map(|_| Vec::new());
        let mut face_lines = Vec::with_capacity(ranges.len());
        for (f, r) in &ranges {
            for c in r.clone() {
                let v = self.face_vertices.get(c).copied().unwrap_or(NONE);
                face_vertices.push(vertex_map.local(v));
                if let (Some(out), Some(map), Some(cu)) = (
                    corner_uvs.as_mut(),
                    uv_map.as_ref(),
                    self.corner_uvs.as_ref(),
                ) {
                    out.push(map.local(cu.get(c).copied().unwrap_or(NONE)));
                }
            }
            face_offsets.push(face_vertices.len());
            face_lines.push(self.face_lines.get(*f).copied().unwrap_or(0));
        }
        let positions: Vec<Point3<f64>> = vertex_map
            .global
            .iter()
            .map(|&g| {
                self.positions
                    .get(g as usize)
                    .copied()
                    .unwrap_or_else(Point3::origin)
            })
            .collect();
        let uvs: Vec<Point2<f64>> = uv_map
            .as_ref()
            .map(|m| {
                m.global
                    .iter()
                    .map(|&g| {
                        self.uvs
                            .get(g as usize)
                            .copied()
                            .unwrap_or_else(Point2::origin)
                    })
                    .collect()
            })
            .unwrap_or_default();
        let mesh = PolyMesh {
            positions,
            face_offsets,
            face_vertices,
            uvs,
            corner_uvs,
            face_lines,
        };
        (mesh, vertex_map.global)
    }
}

/// Ascending list of the distinct indices and a lookup from index to its position.
struct Compaction {
    global: Vec<u32>,
}

impl Compaction {
    fn local(&self, g: u32) -> u32 {
        self.global.binary_search(&g).map(|i| i as u32).unwrap_or(0)
    }
}

fn compact(indices: impl Iterator<Item = u32>) -> Compaction {
    let mut global: Vec<u32> = indices.collect();
    global.sort_unstable();
    global.dedup();
    Compaction { global }
}
