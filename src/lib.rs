//! polyflat flattens polygon meshes (quads, hexagons, mixed n-gons, non-planar
//! faces) into packed UV layouts without triangulating them.
//!
//! Data flows one way: [`io`] (OBJ ⇄ [`mesh::PolyMesh`]) → [`mesh`] (connectivity,
//! validation) → [`charts`] (seams, cutting to disks) → [`operators`] (per-face
//! matrices, global assembly) → [`flatten`] (energies, initialisers, solvers) →
//! [`pack`] → [`metrics`] → outputs ([`io`], [`atlas`], [`report`]). The command
//! line, batch runner and HTTP service all call [`pipeline`].

pub mod atlas;
pub mod batch;
pub mod cli;
pub mod error;
pub mod flatten;
pub mod io;
pub mod mesh;
pub mod metrics;
pub mod operators;
pub mod preview;
pub mod progress;
pub mod serve;
pub mod settings;

pub use error::{Error, Result};
pub use mesh::PolyMesh;
pub use settings::Settings;
