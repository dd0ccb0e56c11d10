//! OBJ writer.
//!
//! Input: an [`ObjFile`] as read, new texture coordinates `uvs` (one `vt` record each,
//! any unit) and `corner_uvs` (0-based index into `uvs` for every face corner, same
//! layout as [`PolyMesh::face_vertices`](crate::mesh::PolyMesh::face_vertices)).
//! Output: OBJ text with every kept statement verbatim and in place (so every `v` line
//! and its numbers are unchanged), the old `vt` records dropped, the new `vt` records
//! written just before the first face (at the end when there is none), and every face
//! in input order as `v/vt` or `v/vt/vn` with absolute 1-based indices. Line ends are `\n`.

use super::obj_read::{ObjFile, Statement, NONE};
use crate::error::{Error, Result};
use nalgebra::Point2;
use std::fmt::Write as _;
use std::io::Write as _;
use std::path::{Path, PathBuf};

/// Renders `obj` with new texture coordinates as OBJ text.
///
/// Corners beyond `corner_uvs` or with an index beyond `uvs` are written without a
/// texture reference; [`write_obj`] refuses such input instead.
pub fn obj_to_string(obj: &ObjFile, uvs: &[Point2<f64>], corner_uvs: &[u32]) -> String {
    let mesh = &obj.mesh;
    let mut out = String::with_capacity(obj.kept.len() + uvs.len() * 24 + mesh.corner_count() * 16);
    let mut wrote_uvs = false;
    let mut face = 0usize;
    for statement in &obj.statements {
        match *statement {
            Statement::Kept { start, end } => {
                out.push_str(obj.kept.get(start..end).unwrap_or(""));
                out.push('\n');
            }
            Statement::Face => {
                if !wrote_uvs {
                    write_uvs(&mut out, uvs);
                    wrote_uvs = true;
                }
                write_face(&mut out, obj, face, uvs.len(), corner_uvs);
                face += 1;
            }
        }
    }
    if !wrote_uvs {
        write_uvs(&mut out, uvs);
    }
    out
}

fn write_uvs(out: &mut String, uvs: &[Point2<f64>]) {
    for uv in uvs {
        let _ = writeln!(out, "vt {} {}", uv.x, uv.y);
    }
}

fn write_face(out: &mut String, obj: &ObjFile, face: usize, uv_count: usize, corner_uvs: &[u32]) {
    let offsets = &obj.mesh.face_offsets;
    let (Some(&a), Some(&b)) = (offsets.get(face), offsets.get(face + 1)) else {
        return;
    };
    out.push('f');
    for c in a..b {
        let v = obj.mesh.face_vertices.get(c).copied().unwrap_or(0) as u64 + 1;
        let _ = write!(out, " {v}");
        let t = corner_uvs
            .get(c)
            .copied()
            .filter(|&t| (t as usize) < uv_count);
        let n = obj.corner_normals.get(c).copied().filter(|&n| n != NONE);
        match (t, n) {
            (Some(t), Some(n)) => {
                let _ = write!(out, "/{}/{}", t as u64 + 1, n as u64 + 1);
            }
            (Some(t), None) => {
                let _ = write!(out, "/{}", t as u64 + 1);
            }
            (None, Some(n)) => {
                let _ = write!(out, "//{}", n as u64 + 1);
            }
            (None, None) => {}
        }
    }
    out.push('\n');
}

/// Writes `obj` with new texture coordinates to `path`, atomically (a temporary file in
/// the target folder, then a rename), so nothing is left behind on failure.
///
/// Errors when `corner_uvs` does not have one entry per face corner or refers beyond
/// `uvs`, when `path` is the file `obj` was read from, or on any I/O failure.
pub fn write_obj(
    path: &Path,
    obj: &ObjFile,
    uvs: &[Point2<f64>],
    corner_uvs: &[u32],
) -> Result<()> {
    let name = path.display().to_string();
    if corner_uvs.len() != obj.mesh.corner_count() {
        return Err(Error::Mesh {
            file: name,
            message: format!(
                "cannot write {} texture references for a mesh with {} face corners",
                corner_uvs.len(),
                obj.mesh.corner_count()
            ),
        });
    }
    if let Some(bad) = corner_uvs.iter().find(|&&t| t as usize >= uvs.len()) {
        return Err(Error::Mesh {
            file: name,
            message: format!(
                "cannot write a face corner with texture coordinate {} when only {} exist",
                *bad as u64 + 1,
                uvs.len()
            ),
        });
    }
    if let Some(source) = &obj.source {
        if same_file(source, path) {
            return Err(Error::Mesh {
                file: name,
                message: "is the input file; polyflat never overwrites its input, so choose another output path".to_string(),
            });
        }
    }
    let text = obj_to_string(obj, uvs, corner_uvs);
    write_atomic(path, text.as_bytes())
}

/// Writes `bytes` to `path` through a temporary file in the same folder and a rename,
/// so readers see the old file or the whole new one, never a part.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    let dir = parent_dir(path);
    let mut tmp = tempfile::NamedTempFile::new_in(&dir)
        .map_err(|e| Error::io(&dir, "create a temporary file in", e))?;
    tmp.write_all(bytes)
        .and_then(|_| tmp.as_file().sync_all())
        .map_err(|e| Error::io(path, "write", e))?;
    tmp.persist(path)
        .map_err(|e| Error::io(path, "write", e.error))?;
    Ok(())
}

fn parent_dir(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Whether `a` and `b` name the same file (after resolving links and `..`). A target
/// that does not exist yet is compared through its folder's canonical path.
fn same_file(a: &Path, b: &Path) -> bool {
    let Ok(ca) = std::fs::canonicalize(a) else {
        return false;
    };
    let cb = match std::fs::canonicalize(b) {
        Ok(p) => p,
        Err(_) => match (std::fs::canonicalize(parent_dir(b)), b.file_name()) {
            (Ok(dir), Some(name)) => dir.join(name),
            _ => return false,
        },
    };
    ca == cb
}
