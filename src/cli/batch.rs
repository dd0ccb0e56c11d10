//! `polyflat batch INPUT... --out-dir DIR [--jobs N] [--force] [flatten options]`.

use super::options::FlattenOptions;
use crate::batch::{self, AssetJob, BatchConfig, BatchObserver, Status, SummaryRow};
use clap::Args;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::path::PathBuf;

/// Flattens many meshes into one folder, skipping those already done.
#[derive(Debug, Args)]
#[command(after_help = "Examples:\n  \
    polyflat batch assets/ --out-dir flattened\n  \
    polyflat batch crate.obj barrel.obj --out-dir flattened --jobs 2 --energy arap --resolution 2048\n  \
    polyflat batch props.toml --out-dir flattened --force\n\n\
A TOML manifest lists [[asset]] entries: path = \"meshes/crate.obj\" plus any flatten option\n\
spelled as on the command line (energy = \"arap\", max-iterations = 50). Assets whose input,\n\
settings and polyflat version are unchanged since the last run are skipped.")]
pub struct BatchArgs {
    /// OBJ files, folders (searched recursively for *.obj) and TOML manifests.
    #[arg(required = true, value_name = "INPUT")]
    pub inputs: Vec<PathBuf>,
    /// Folder for each input's NAME.obj, NAME.report.json and NAME.atlas.png,
    /// summary.json and summary.csv.
    #[arg(long, value_name = "DIR")]
    pub out_dir: PathBuf,
    /// Meshes flattened at the same time [default: number of cores].
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u16).range(1..))]
    pub jobs: Option<u16>,
    /// Redo every mesh, even those whose outputs are up to date.
    #[arg(long)]
    pub force: bool,
    /// Set from the global `--quiet`: no progress bar and no closing tally.
    #[arg(skip)]
    pub quiet: bool,
    /// Options for every mesh (a manifest entry overrides them for its mesh).
    #[command(flatten)]
    pub options: FlattenOptions,
}

/// Runs the batch with `job` flattening each mesh; returns the exit code.
pub fn run_with(args: BatchArgs, job: &dyn AssetJob) -> i32 {
    let quiet = args.quiet;
    let settings = match args.options.to_settings() {
        Ok(s) => s,
        Err(e) => {
            eprintln!("error: {e}");
            return 2;
        }
    };
    let config = BatchConfig {
        out_dir: args.out_dir.clone(),
        jobs: args.jobs.map_or_else(
            || std::thread::available_parallelism().map_or(1, usize::from),
            usize::from,
        ),
        force: args.force,
        settings,
    };
    let bar = Bar::new(quiet);
    let result = batch::run(&args.inputs, &config, job, &bar);
    bar.0.finish_and_clear();
    match result {
        Err(e) => {
            eprintln!("error: {e}");
            1
        }
        Ok(summary) => {
            if !quiet {
                for row in summary.rows.iter().filter(|r| r.renamed_from.is_some()) {
                    if let Some(output) = &row.output {
                        println!(
                            "{}: written as {output} (another input has the same name)",
                            row.input
                        );
                    }
                }
                println!(
                    "{} done, {} skipped, {} failed; summary in {}",
                    summary.count(Status::Done),
                    summary.count(Status::Skipped),
                    summary.count(Status::Failed),
                    args.out_dir.join("summary.json").display()
                );
            }
            summary.exit_code()
        }
    }
}

/// Progress bar over assets on stderr, hidden when quiet or not a terminal.
struct Bar(ProgressBar);

impl Bar {
    fn new(quiet: bool) -> Self {
        if quiet || !std::io::stderr().is_terminal() {
            return Bar(ProgressBar::hidden());
        }
        let bar = ProgressBar::with_draw_target(None, ProgressDrawTarget::stderr());
        if let Ok(style) =
            ProgressStyle::with_template("{bar:30} {pos}/{len} meshes  {elapsed}  {wide_msg}")
        {
            bar.set_style(style);
        }
        bar.enable_steady_tick(std::time::Duration::from_millis(250));
        Bar(bar)
    }
}

impl BatchObserver for Bar {
    fn planned(&self, total: usize) {
        self.0.set_length(total as u64);
    }

    fn stage(&self, name: &str, stage: &str) {
        self.0.set_message(format!("{name}: {stage}"));
    }

    fn finished(&self, row: &SummaryRow) {
        self.0.inc(1);
        if let Some(error) = &row.error {
            self.0.suspend(|| eprintln!("error: {error}"));
        }
    }
}

/// Runs the batch with the flattening pipeline; returns the exit code.
pub fn run(args: BatchArgs) -> i32 {
    run_with(args, &crate::batch::PipelineJob)
}
