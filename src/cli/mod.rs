//! The `polyflat` command line: one file per command, each with its clap arguments
//! and a `run` function. Exit codes: 0 success, 1 failed job, 2 bad usage.

pub mod batch;
pub mod compare;
pub mod flatten;
pub mod inspect;
pub mod options;
pub mod reflatten;

use clap::{Parser, Subcommand};

mod progress_bar;
pub mod serve;

/// Flattens polygon meshes into packed UV layouts without triangulating them.
#[derive(Debug, Parser)]
#[command(name = "polyflat", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    /// Print nothing but errors.
    #[arg(long, global = true)]
    pub quiet: bool,
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Report a mesh's counts, topology, UV charts, non-planarity and problems.
    Inspect(inspect::InspectArgs),
    /// Flatten one mesh into a packed UV layout (OBJ), with optional report, atlas and preview.
    Flatten(flatten::FlattenArgs),
    /// Flatten one mesh with several energies over the same charts and compare them.
    Compare(compare::CompareArgs),
    /// Flatten many meshes into one folder, skipping those already up to date.
    Batch(batch::BatchArgs),
    /// Flatten an edited mesh again, keeping a previous layout's islands in place.
    Reflatten(reflatten::ReflattenArgs),
    /// Run the flattening HTTP service with durable jobs.
    Serve(serve::ServeArgs),
}

/// Runs the parsed command line; returns the process exit code.
pub fn run(cli: Cli) -> i32 {
    match cli.command {
        Command::Inspect(args) => inspect::run(&args, cli.quiet),
        Command::Flatten(mut args) => {
            args.quiet = cli.quiet;
            match flatten::run(&args) {
                Ok(()) => 0,
                Err(e) => {
                    eprintln!("error: {e}");
                    1
                }
            }
        }
        Command::Compare(mut args) => {
            args.quiet = cli.quiet;
            compare::run(&args)
        }
        Command::Batch(mut args) => {
            args.quiet = cli.quiet;
            batch::run(args)
        }
        Command::Serve(args) => serve::run(&args, cli.quiet),
        Command::Reflatten(mut args) => {
            args.quiet = cli.quiet;
            match reflatten::run(&args) {
                Ok(()) => 0,
                Err(e) => {
                    eprintln!("error: {e}");
                    1
                }
            }
        }
    }
}
