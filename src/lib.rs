//! polyflat flattens polygon meshes (quads, hexagons, mixed n-gons, non-planar
//! faces) into packed UV layouts without triangulating them.
//!
//! Data flows one way: [`io`] (OBJ ⇄ [`mesh::PolyMesh`]) → [`mesh`] (connectivity,
//! validation) → [`charts`] (seams, cutting to disks) → [`operators`] (per-face
//! matrices, global assembly) → [`flatten`] (energies, initialisers, solvers) →
//! [`pack`] → [`metrics`] → outputs ([`io`], [`atlas`], [`report`]). The command
//! line, batch runner and HTTP service all call [`pipeline`].

// `!(x > 0.0)` is used on purpose: it is true for NaN as well, which is the safe
// answer in every such test (degenerate face, step that is not a descent, …).
#![allow(clippy::neg_cmp_op_on_partial_ord)]

pub mod atlas;
pub mod batch;
pub mod charts;
pub mod cli;
pub mod compare;
pub mod error;
pub mod flatten;
pub mod io;
pub mod mesh;
pub mod metrics;
pub mod operators;
pub mod pack;
pub mod pipeline;
pub mod preview;
pub mod progress;
pub mod reflatten;
pub mod report;
pub mod serve;
pub mod settings;

pub use error::{Error, Result};
pub use mesh::PolyMesh;
pub use settings::Settings;
