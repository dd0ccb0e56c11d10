//! The `polyflat` command line: one file per command, each with its clap arguments
//! and a `run` function. Exit codes: 0 success, 1 failed job, 2 bad usage.

pub mod batch;
pub mod inspect;
pub mod options;

use clap::{Parser, Subcommand};

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
}

/// Runs the parsed command line; returns the process exit code.
pub fn run(cli: Cli) -> i32 {
    match cli.command {
        Command::Inspect(args) => inspect::run(&args, cli.quiet),
    }
}
