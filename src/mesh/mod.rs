//! Mesh model, connectivity and validation.

mod polymesh;

pub use polymesh::PolyMesh;
