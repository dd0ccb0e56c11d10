//! Wavefront OBJ input and output (DESIGN §4).
//!
//! [`parse_obj`] / [`read_obj`] turn a file into an [`ObjFile`]: the [`PolyMesh`](crate::mesh::PolyMesh)
//! plus everything needed to write the file back with new texture coordinates
//! ([`write_obj`], [`obj_to_string`]): every `v`, `vn`, `o`, `g`, `usemtl`, `mtllib`, `s`,
//! comment and unknown statement, in input order, and the normal index of every face
//! corner. Output keeps every `v` line verbatim and every face in order with the same
//! vertex indices, drops the old `vt` lines and writes the new ones before the first face.
//!
//! The parser is our own rather than a general OBJ crate because write-back needs the
//! statements kept in place and every face tied to its source line for error messages.

mod obj_read;
mod obj_write;

pub use obj_read::{parse_obj, read_obj, ObjFile};
pub use obj_write::{obj_to_string, write_atomic, write_obj};
