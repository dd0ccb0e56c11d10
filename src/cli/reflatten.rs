//! `polyflat reflatten`: an edited model and a previous layout of it in, a layout
//! that keeps the previous islands in place (and optionally the report) out.

use clap::Args;
use std::path::PathBuf;

use super::flatten::{refuse_input, write_all};
use super::options::FlattenOptions;
use super::progress_bar::Bars;
use crate::error::{Error, Result};
use crate::settings::SeamMode;
use crate::{io, pipeline, reflatten};

/// Re-flattens an edited mesh, keeping a previous layout's islands where they were.
#[derive(Debug, Args)]
#[command(after_help = "Examples:\n  \
    polyflat reflatten chair_v2.obj --previous chair_uv.obj -o chair_v2_uv.obj\n  \
    polyflat reflatten chair_v2.obj --previous chair_uv.obj -o chair_v2_uv.obj --report drift.json --resolution 2048\n\n\
The previous file is polyflat's own output or any layout made by hand; its UV islands\n\
are kept as charts. Charts whose surface did not change keep their UVs exactly, edited\n\
charts are re-flattened around the edit and stay in place, and faces that are new get\n\
charts of their own in free space. The report's `reflatten` section gives the drift of\n\
every chart in texels at --resolution. Nothing is written unless the whole job succeeds.")]
pub struct ReflattenArgs {
    /// The edited mesh (Wavefront OBJ).
    #[arg(value_name = "EDITED")]
    pub mesh: PathBuf,
    /// A previous layout of the mesh: an OBJ with UVs whose islands are kept.
    #[arg(long, value_name = "PREVIOUS.obj")]
    pub previous: PathBuf,
    /// Output OBJ: the edited mesh with the new UVs.
    #[arg(short = 'o', long = "output", value_name = "OUT.obj")]
    pub output: PathBuf,
    /// Also write the report (the flatten report plus a `reflatten` section with
    /// per-chart status and drift).
    #[arg(long, value_name = "JSON")]
    pub report: Option<PathBuf>,
    /// Flattening options (--resolution also sets the texel unit of the drift).
    #[command(flatten)]
    pub options: FlattenOptions,
    /// Set from the global `--quiet`.
    #[arg(skip)]
    pub quiet: bool,
}

/// Runs `polyflat reflatten`.
pub fn run(args: &ReflattenArgs) -> Result<()> {
    let settings = args.options.to_settings()?;
    pipeline::check_solver(&settings)?;
    if settings.seams == Some(SeamMode::Auto) {
        return Err(Error::Settings(
            "--seams auto does not apply to reflatten, which keeps the previous layout's seams \
             (new faces get automatic seams anyway)"
                .into(),
        ));
    }
    for out in [Some(&args.output), args.report.as_ref()]
        .into_iter()
        .flatten()
    {
        refuse_input(out, &args.mesh)?;
        refuse_input(out, &args.previous)?;
    }
    let edited = io::read_obj(&args.mesh)?;
    let previous = io::read_obj(&args.previous)?;
    let edited_name = args.mesh.display().to_string();
    let previous_name = args.previous.display().to_string();
    let bars = Bars::new(args.quiet);
    let done = reflatten::reflatten(
        &edited.mesh,
        &edited_name,
        &previous.mesh,
        &previous_name,
        &settings,
        &bars,
    )?;
    let mut files: Vec<(PathBuf, Vec<u8>)> = vec![(
        args.output.clone(),
        io::obj_to_string(&edited, &done.outcome.uvs, &done.outcome.corner_uvs).into_bytes(),
    )];
    if let Some(path) = &args.report {
        files.push((path.clone(), pipeline::report_bytes(&done.report())?));
    }
    write_all(&files)?;
    if !args.quiet {
        let s = &done.section;
        let count = |status| s.charts.iter().filter(|c| c.status == status).count();
        let g = &done.outcome.report.global.metrics;
        eprintln!(
            "{}: {} charts ({} carried, {} changed, {} new), drift median {:.2} / p95 {:.2} / max {:.2} texels, flipped {}, overlaps {}",
            args.output.display(),
            s.charts.len(),
            count(reflatten::Status::Carried),
            count(reflatten::Status::Changed),
            count(reflatten::Status::New),
            s.drift_texels.median,
            s.drift_texels.p95,
            s.drift_texels.max,
            g.flipped_faces,
            g.overlapping_face_pairs
        );
    }
    Ok(())
}
