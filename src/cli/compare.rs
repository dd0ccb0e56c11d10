//! `polyflat compare MESH --energies E1,E2,... --out-dir DIR [flatten options]`:
//! the same charts flattened with each energy, and the files that compare them
//! (see [`crate::compare`]).

use clap::Args;
use std::path::PathBuf;

use super::flatten::{refuse_input, write_all};
use super::options::{named, FlattenOptions};
use super::progress_bar::Bars;
use crate::compare;
use crate::error::{Error, Result};
use crate::progress::Progress;
use crate::settings::EnergyKind;
use crate::{io, pipeline};

const EXAMPLES: &str = "\
Examples:
  polyflat compare chair.obj --energies arap,symmetric-dirichlet,conformal --out-dir chair_cmp
  polyflat compare scan.obj --energies arap,conformal --out-dir scan_cmp --seams auto --resolution 512 --atlas-metric stretch

Writes, in DIR: <energy>.obj, <energy>.report.json and <energy>.atlas.png per energy;
comparison.md (a table, the lowest stretch and angle distortion, a suggested energy),
comparison.json (per energy the report's `global` object plus time_ms),
comparison.png (the atlases side by side) and convergence.png (each energy's
(E(k) - E(end)) / (E(0) - E(end)) per iteration, log scale).
Every energy flattens the same charts; with --seams auto the first energy listed
decides which over-stretched charts are split. Nothing is written unless every
energy succeeds.";

/// Flattens one mesh with several energies over the same charts and compares them.
#[derive(Debug, Args)]
#[command(
    after_help = EXAMPLES,
    mut_arg("energy", |a| a.hide(true).conflicts_with("energies"))
)]
pub struct CompareArgs {
    /// Input mesh (Wavefront OBJ; faces of any arity).
    #[arg(value_name = "MESH")]
    pub mesh: PathBuf,
    /// Energies to compare, comma-separated, each once (arap, symmetric-dirichlet, conformal).
    #[arg(
        long,
        required = true,
        value_name = "E1,E2,...",
        value_delimiter = ',',
        value_parser = named::<EnergyKind>(EnergyKind::ALL.iter().map(|v| v.as_str()))
    )]
    pub energies: Vec<EnergyKind>,
    /// Folder for the outputs (created when missing).
    #[arg(long, value_name = "DIR")]
    pub out_dir: PathBuf,
    /// Options for every energy (all of flatten's but --energy).
    #[command(flatten)]
    pub options: FlattenOptions,
    /// Set from the global `--quiet`.
    #[arg(skip)]
    pub quiet: bool,
}

/// Runs `polyflat compare`; returns the exit code (2 for bad options, 1 for a
/// failed job).
pub fn run(args: &CompareArgs) -> i32 {
    let settings = match usage(args) {
        Ok(s) => s,
        Err(e) => {
            eprintln!("error: {e}");
            return 2;
        }
    };
    match execute(args, &settings) {
        Ok(()) => 0,
        Err(e) => {
            eprintln!("error: {e}");
            1
        }
    }
}

/// The settings, once the options, the energy list and each energy's solver check out.
fn usage(args: &CompareArgs) -> std::result::Result<crate::Settings, String> {
    let settings = args.options.to_settings().map_err(|e| e.to_string())?;
    compare::check_energies(&args.energies)?;
    for &energy in &args.energies {
        let with = crate::Settings {
            energy,
            ..settings.clone()
        };
        pipeline::check_solver(&with).map_err(|e| e.to_string())?;
    }
    Ok(settings)
}

fn execute(args: &CompareArgs, settings: &crate::Settings) -> Result<()> {
    let name = args.mesh.display().to_string();
    for energy in &args.energies {
        for ext in ["obj", "report.json", "atlas.png"] {
            refuse_input(&args.out_dir.join(format!("{energy}.{ext}")), &args.mesh)?;
        }
    }
    for file in [
        "comparison.md",
        "comparison.json",
        "comparison.png",
        "convergence.png",
    ] {
        refuse_input(&args.out_dir.join(file), &args.mesh)?;
    }
    let obj = io::read_obj(&args.mesh)?;
    let bars = Bars::new(args.quiet);
    let runs = compare::run(&obj.mesh, &name, settings, &args.energies, &bars)?;
    bars.begin("drawing the comparison", 0);
    let files = compare::output_files(&obj, &name, &runs, settings)?;
    bars.end();

    std::fs::create_dir_all(&args.out_dir)
        .map_err(|e| Error::io(&args.out_dir, "create the folder", e))?;
    let files: Vec<(PathBuf, Vec<u8>)> = files
        .into_iter()
        .map(|(file, bytes)| (args.out_dir.join(file), bytes))
        .collect();
    write_all(&files)?;
    if !args.quiet {
        let rows: Vec<compare::Row> = runs.iter().map(compare::EnergyRun::row).collect();
        for r in &rows {
            let m = &r.global.metrics;
            eprintln!(
                "{:>20}: {} iterations, {:.1} ms, stretch L2 {:.5}, angle mean {:.4}, flipped {}",
                r.global.energy,
                r.global.iterations,
                r.time_ms,
                m.stretch_l2,
                m.angle_distortion_mean,
                m.flipped_faces
            );
        }
        if let Some(s) = compare::table::suggestion_sentence(&rows) {
            eprintln!("{s}");
        }
        eprintln!("wrote {} files to {}", files.len(), args.out_dir.display());
    }
    Ok(())
}
