//! The `polyflat` command line: one file per command, each with its clap arguments
//! and a `run` function. Exit codes: 0 success, 1 failed job, 2 bad usage.

use clap::{Parser, Subcommand};

pub mod serve;

/// Flattens polygon meshes into packed UV layouts without triangulating them.
#[derive(Debug, Parser)]
#[command(name = "polyflat", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {}

/// Runs the parsed command line; returns the process exit code.
pub fn run(cli: Cli) -> i32 {
    match cli.command {}
}
