//! Polygon operators: per-face matrices and their global assembly.

pub mod face;

pub use face::FaceError;
