//! `polyflat flatten`: one mesh in, the OBJ with UVs (and optionally the report,
//! distortion atlas and checker preview) out.

use clap::Args;
use std::path::{Path, PathBuf};

use super::options::FlattenOptions;
use super::progress_bar::Bars;
use crate::error::{Error, Result};
use crate::{io, pipeline, preview};

/// Size in pixels of the checker preview image.
const PREVIEW_SIZE: u32 = 1024;

/// Flattens a polygon mesh into a packed UV layout.
#[derive(Debug, Args)]
#[command(after_help = "Examples:\n  \
    polyflat flatten chair.obj -o chair_uv.obj\n  \
    polyflat flatten chair.obj -o chair_uv.obj --energy arap --atlas chair_atlas.png --report chair.json\n  \
    polyflat flatten scan.obj -o scan_uv.obj --seams auto --resolution 2048 --padding 8 --preview scan_checker.png\n\n\
The atlas image is the layout square at --resolution pixels with a legend strip below it,\n\
so it is taller than it is wide. Nothing is written unless the whole job succeeds.")]
pub struct FlattenArgs {
    /// Input mesh (Wavefront OBJ; faces of any arity).
    #[arg(value_name = "MESH")]
    pub mesh: PathBuf,
    /// Output OBJ: the input with UVs added (positions and faces unchanged).
    #[arg(short = 'o', long = "output", value_name = "OUT.obj")]
    pub output: PathBuf,
    /// Also write the report (JSON: settings, per-chart and global metrics, timings).
    #[arg(long, value_name = "JSON")]
    pub report: Option<PathBuf>,
    /// Also write the distortion atlas (PNG; the metric is set by --atlas-metric).
    #[arg(long, value_name = "PNG")]
    pub atlas: Option<PathBuf>,
    /// Also write a checker preview of the model from four directions (PNG).
    #[arg(long, value_name = "PNG")]
    pub preview: Option<PathBuf>,
    /// Flattening options.
    #[command(flatten)]
    pub options: FlattenOptions,
    /// Set from the global `--quiet`.
    #[arg(skip)]
    pub quiet: bool,
}

/// Runs `polyflat flatten`.
pub fn run(args: &FlattenArgs) -> Result<()> {
    let settings = args.options.to_settings()?;
    pipeline::check_solver(&settings)?;
    for out in [
        Some(&args.output),
        args.report.as_ref(),
        args.atlas.as_ref(),
        args.preview.as_ref(),
    ]
    .into_iter()
    .flatten()
    {
        refuse_input(out, &args.mesh)?;
    }
    let name = args.mesh.display().to_string();
    let obj = io::read_obj(&args.mesh)?;
    let bars = Bars::new(args.quiet);
    let outcome = pipeline::flatten(&obj.mesh, &name, &settings, &bars)?;

    let mut files: Vec<(PathBuf, Vec<u8>)> = vec![(
        args.output.clone(),
        io::obj_to_string(&obj, &outcome.uvs, &outcome.corner_uvs).into_bytes(),
    )];
    if let Some(path) = &args.report {
        files.push((path.clone(), pipeline::report_bytes(&outcome.report)?));
    }
    if let Some(path) = &args.atlas {
        let png = pipeline::atlas_png(&obj, &outcome, settings.atlas_metric, settings.resolution)?;
        files.push((path.clone(), png));
    }
    if let Some(path) = &args.preview {
        let image =
            preview::render_preview(&obj.mesh, &outcome.uvs, &outcome.corner_uvs, PREVIEW_SIZE)?;
        files.push((path.clone(), crate::atlas::png_bytes(&image)?));
    }
    write_all(&files)?;
    if !args.quiet {
        let g = &outcome.report.global;
        eprintln!(
            "{}: {} chart{}, stretch L2 {:.4}, angle mean {:.4}, flipped {}, overlaps {}, utilization {:.3}",
            args.output.display(),
            g.charts,
            if g.charts == 1 { "" } else { "s" },
            g.metrics.stretch_l2,
            g.metrics.angle_distortion_mean,
            g.metrics.flipped_faces,
            g.metrics.overlapping_face_pairs,
            g.metrics.utilization
        );
    }
    Ok(())
}

/// Errors when `out` names the input file.
pub(crate) fn refuse_input(out: &Path, input: &Path) -> Result<()> {
    let same = match (out.canonicalize(), input.canonicalize()) {
        (Ok(a), Ok(b)) => a == b,
        _ => out == input,
    };
    if same {
        return Err(Error::Settings(format!(
            "{} is the input file; choose another output path (inputs are never overwritten)",
            out.display()
        )));
    }
    Ok(())
}

/// Writes every file to a temporary file beside its target, then renames them all:
/// nothing is written unless every file could be prepared.
pub fn write_all(files: &[(PathBuf, Vec<u8>)]) -> Result<()> {
    use std::io::Write;
    let mut staged = Vec::with_capacity(files.len());
    for (path, bytes) in files {
        let dir = match path.parent() {
            Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let mut builder = tempfile::Builder::new();
        // The written file gets the permissions of any new file (0o666 less the
        // umask), not the owner-only default of temporary files.
        #[cfg(unix)]
        builder.permissions(std::os::unix::fs::PermissionsExt::from_mode(0o666));
        let mut tmp = builder
            .tempfile_in(&dir)
            .map_err(|e| Error::io(path, "create a temporary file beside", e))?;
        tmp.write_all(bytes)
            .and_then(|_| tmp.as_file().sync_all())
            .map_err(|e| Error::io(path, "write", e))?;
        staged.push((tmp, path));
    }
    for (tmp, path) in staged {
        tmp.persist(path)
            .map_err(|e| Error::io(path, "write", e.error))?;
    }
    Ok(())
}
