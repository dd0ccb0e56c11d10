//! Polygon operators: per-face matrices and their global assembly.

pub mod face;
pub mod global;

pub use face::FaceError;
pub use global::{gradient, laplacian, lumped_mass};
