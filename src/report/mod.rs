//! The report JSON (DESIGN §4): `tool`, `input`, `settings`, `charts`, `global`,
//! `timings_ms`, `history`. Keys are snake_case; numbers are plain JSON numbers
//! (never NaN or infinity: the metrics cap undefined values).

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

use crate::metrics::Metrics;
use crate::settings::Settings;

/// The whole report.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Report {
    /// Which program wrote it.
    pub tool: Tool,
    /// What was read.
    pub input: Input,
    /// Every option, defaults included; `seams` is the mode actually used.
    pub settings: Settings,
    /// One entry per chart, in chart-id order.
    pub charts: Vec<ChartReport>,
    /// Metrics of the whole packed layout plus run totals.
    pub global: Global,
    /// Wall-clock milliseconds per stage.
    pub timings_ms: BTreeMap<String, f64>,
    /// Total energy (sum over charts) before the first and after every iteration.
    pub history: Vec<f64>,
}

/// Program name and version.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Tool {
    /// Always "polyflat".
    pub name: String,
    /// The crate version.
    pub version: String,
}

impl Tool {
    /// This program.
    pub fn this() -> Tool {
        Tool {
            name: env!("CARGO_PKG_NAME").to_string(),
            version: env!("CARGO_PKG_VERSION").to_string(),
        }
    }
}

/// The input mesh.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Input {
    /// The path (or name) as given.
    pub path: String,
    /// Vertices used by faces.
    pub vertices: usize,
    /// Faces.
    pub faces: usize,
    /// Arity (as a string key) → number of faces.
    pub arity_histogram: BTreeMap<String, usize>,
    /// Whether the input carried texture coordinates on every face.
    pub had_uvs: bool,
    /// Topology problems of the input that the run cut seams through (non-manifold
    /// edges or vertices, inconsistent winding, boundaries touching themselves), one
    /// sentence each; empty for a clean mesh.
    #[serde(default)]
    pub notes: Vec<String>,
}

/// Axis-aligned bounds of a chart in the final layout.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct BoundingBox {
    /// Smallest `[u, v]`.
    pub min: [f64; 2],
    /// Largest `[u, v]`.
    pub max: [f64; 2],
}

/// One chart.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChartReport {
    /// Chart id (0-based, the order charts were formed).
    pub id: usize,
    /// Number of faces.
    pub faces: usize,
    /// 3D area (length unit²).
    pub area_3d: f64,
    /// UV area in the final layout (unit square = 1).
    pub area_uv: f64,
    /// Bounds in the final layout.
    pub bounding_box: BoundingBox,
    /// `kept` (an input UV island), `auto` (cut by polyflat) or `split` (cut again
    /// because it stretched too much or overlapped itself).
    pub origin: String,
    /// The input's UVs for this island were mirrored relative to the surface.
    pub mirrored_in_input: bool,
    /// Mesh edges polyflat cut inside this chart to open it into a disk (a closed
    /// surface, a handle, or holes joined to the border), beyond the input's seams
    /// or the automatic segmentation's borders (0 when read from a report that
    /// predates it).
    #[serde(default)]
    pub seams_added: usize,
    /// Solver iterations spent on this chart.
    pub iterations: usize,
    /// The solver that ran.
    pub solver: String,
    /// DESIGN §3 metrics over this chart's faces (scale taken over the chart).
    #[serde(flatten)]
    pub metrics: Metrics,
}

/// Layout-wide figures.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Global {
    /// DESIGN §3 metrics over every face.
    #[serde(flatten)]
    pub metrics: Metrics,
    /// Number of charts.
    pub charts: usize,
    /// The energy minimised.
    pub energy: String,
    /// Solver iterations, summed over charts.
    pub iterations: usize,
}

/// Number of faces of each arity, keyed by the arity written as a string.
pub fn arity_histogram(mesh: &crate::PolyMesh) -> BTreeMap<String, usize> {
    let mut counts: BTreeMap<usize, usize> = BTreeMap::new();
    for f in 0..mesh.face_count() {
        *counts.entry(mesh.arity(f)).or_default() += 1;
    }
    counts
        .into_iter()
        .map(|(k, v)| (k.to_string(), v))
        .collect()
}
