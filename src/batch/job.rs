//! The per-asset work a batch runs, behind a trait so the runner does not depend
//! on how one asset is flattened.

use crate::progress::Progress;
use crate::settings::Settings;
use std::path::Path;

/// Flattens one asset. Implementations must not write files: the runner writes
/// the returned bytes atomically next to each other.
pub trait AssetJob: Send + Sync {
    /// Flattens one OBJ file; returns the three output files' bytes and the key metrics.
    ///
    /// `input` is the path as the user gave it (used in error sentences);
    /// `settings` are this asset's effective, validated settings.
    fn run(
        &self,
        input: &Path,
        settings: &Settings,
        progress: &dyn Progress,
    ) -> Result<AssetOutput, crate::Error>;
}

/// What one asset produces.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct AssetOutput {
    /// The flattened OBJ (`<name>.obj`).
    pub obj: Vec<u8>,
    /// The report JSON (`<name>.report.json`).
    pub report: Vec<u8>,
    /// The distortion atlas PNG (`<name>.atlas.png`).
    pub atlas: Vec<u8>,
    /// Global metrics by report name; the summary picks [`super::summary::METRICS`].
    pub metrics: serde_json::Map<String, serde_json::Value>,
}

/// The production [`AssetJob`]: reads the file and runs the flattening pipeline.
pub struct PipelineJob;

impl AssetJob for PipelineJob {
    fn run(
        &self,
        input: &Path,
        settings: &Settings,
        progress: &dyn Progress,
    ) -> Result<AssetOutput, crate::Error> {
        let obj = crate::io::read_obj(input)?;
        let name = input.display().to_string();
        let (outcome, files) = crate::pipeline::run_job(&obj, &name, settings, progress)?;
        let mut metrics = match serde_json::to_value(&outcome.report.global) {
            Ok(serde_json::Value::Object(map)) => map,
            _ => serde_json::Map::new(),
        };
        metrics.retain(|k, _| k != "energy");
        Ok(AssetOutput {
            obj: files.obj,
            report: files.report,
            atlas: files.atlas,
            metrics,
        })
    }
}
