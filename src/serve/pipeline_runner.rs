//! The production [`JobRunner`]: the flattening pipeline.

use super::{JobFiles, JobRunner};
use crate::mesh::Topology;
use crate::progress::Progress;
use crate::{io, pipeline, Error, Settings};

/// Name uploaded meshes go by in error sentences ("upload.obj:12: …").
const UPLOAD: &str = "upload.obj";

/// Runs [`pipeline::run_job`] on uploaded OBJ text.
pub struct PipelineRunner;

impl JobRunner for PipelineRunner {
    fn run(
        &self,
        text: &str,
        settings: &Settings,
        progress: &dyn Progress,
    ) -> Result<JobFiles, Error> {
        let obj = io::parse_obj(text, UPLOAD)?;
        let (_, files) = pipeline::run_job(&obj, UPLOAD, settings, progress)?;
        Ok(JobFiles {
            obj: files.obj,
            report: files.report,
            atlas: files.atlas,
        })
    }

    fn validate(&self, text: &str, settings: &Settings) -> Result<(), Error> {
        settings.validate().map_err(Error::Settings)?;
        pipeline::check_solver(settings)?;
        let obj = io::parse_obj(text, UPLOAD)?;
        pipeline::check_mesh(&obj.mesh, &Topology::build(&obj.mesh), UPLOAD).map(drop)
    }

    fn stage_count(&self) -> u32 {
        2
    }
}
