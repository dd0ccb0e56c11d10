//! The seam between the service and the flattening work: the service stores, queues
//! and reports jobs; a [`JobRunner`] does the work.

use crate::progress::Progress;
use crate::settings::Settings;

/// The three files a finished job offers for download.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct JobFiles {
    /// The flattened mesh (`result.obj`).
    pub obj: Vec<u8>,
    /// The JSON report (`report.json`).
    pub report: Vec<u8>,
    /// The distortion atlas (`atlas.png`).
    pub atlas: Vec<u8>,
}

/// Does the work of a job. Both methods are called on blocking threads, never on the
/// service's async threads, and may take as long as they need (the worker enforces
/// `--job-timeout` around [`JobRunner::run`]).
pub trait JobRunner: Send + Sync + 'static {
    /// Flattens one OBJ; returns the three result files' bytes.
    fn run(
        &self,
        obj_text: &str,
        settings: &Settings,
        progress: &dyn Progress,
    ) -> Result<JobFiles, crate::Error>;

    /// Parses and validates without flattening (the 400 check at submission).
    fn validate(&self, obj_text: &str, settings: &Settings) -> Result<(), crate::Error>;

    /// How many progress stages ([`Progress::begin`] calls) one run reports, so the
    /// service can turn them into a 0–1 fraction. Runs that report more stages than
    /// this still give a fraction that only grows.
    fn stage_count(&self) -> u32 {
        1
    }
}
