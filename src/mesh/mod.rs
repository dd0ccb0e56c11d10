//! Mesh model, connectivity and validation.

mod disjoint_sets;
pub mod planarity;
mod polymesh;
mod submesh;
pub mod topology;
mod uv_islands;
pub mod validate;

pub use planarity::non_planarity;
pub use polymesh::PolyMesh;
pub use topology::{Component, Topology};
pub use uv_islands::{island_count, uv_islands};
pub use validate::{validate, Problem};
