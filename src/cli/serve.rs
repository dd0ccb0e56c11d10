//! `polyflat serve`: the HTTP job service (see [`crate::serve`]).

use crate::serve::{self, Config, JobRunner};
use clap::Args;
use std::io::Write;
use std::net::SocketAddr;
use std::path::PathBuf;
use std::sync::Arc;
use std::time::Duration;

const EXAMPLE: &str = "\
Examples:
  polyflat serve --listen 127.0.0.1:7878 --data-dir ./polyflat-jobs --workers 2
  curl -s --data-binary @mesh.obj 'http://127.0.0.1:7878/v1/jobs?energy=arap'
  curl -s http://127.0.0.1:7878/v1/jobs/ID
  curl -s -o result.obj http://127.0.0.1:7878/v1/jobs/ID/result.obj

The first line printed on standard output is `listening on http://ADDR:PORT`
(also with --quiet, which silences the job log on standard error).
SIGTERM or Ctrl-C stops the service; jobs still running after --shutdown-grace
are queued again and resume at the next start.";

/// Serve flattening jobs over HTTP, stored durably in a data folder.
#[derive(Debug, Args)]
#[command(after_help = EXAMPLE)]
pub struct ServeArgs {
    /// Address and port to listen on (port 0 picks a free port).
    #[arg(long, value_name = "ADDR:PORT", default_value = "127.0.0.1:7878")]
    pub listen: SocketAddr,
    /// Folder for the job database and job files (created when missing).
    #[arg(long, value_name = "DIR")]
    pub data_dir: PathBuf,
    /// Jobs flattened at the same time [default: number of cores].
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u16).range(1..))]
    pub workers: Option<u16>,
    /// Jobs allowed to wait; further submissions get 429.
    #[arg(long, value_name = "N", default_value_t = 64, value_parser = clap::value_parser!(u32).range(1..))]
    pub max_queue: u32,
    /// Largest accepted upload in megabytes (MiB); larger gets 413.
    #[arg(long, value_name = "N", default_value_t = 64, value_parser = clap::value_parser!(u32).range(1..=4096))]
    pub max_upload_mb: u32,
    /// Seconds a job may run before it is marked failed.
    #[arg(long, value_name = "S", default_value_t = 600, value_parser = clap::value_parser!(u64).range(1..))]
    pub job_timeout: u64,
    /// Seconds given to running jobs and open requests at shutdown.
    #[arg(long, value_name = "S", default_value_t = 30)]
    pub shutdown_grace: u64,
}

impl ServeArgs {
    /// The service configuration these arguments describe (`quiet`: log nothing but
    /// the listening address).
    pub fn config(&self, quiet: bool) -> Config {
        let mut config = Config::new(self.data_dir.clone());
        config.listen = self.listen;
        if let Some(n) = self.workers {
            config.workers = usize::from(n);
        }
        config.max_queue = self.max_queue as usize;
        config.max_upload_bytes = self.max_upload_mb as usize * 1024 * 1024;
        config.job_timeout = Duration::from_secs(self.job_timeout);
        config.shutdown_grace = Duration::from_secs(self.shutdown_grace);
        config.quiet = quiet;
        config
    }
}

/// Runs the service with `runner` until SIGTERM/SIGINT; returns the exit code.
pub fn run_with(args: &ServeArgs, quiet: bool, runner: Arc<dyn JobRunner>) -> i32 {
    let ready = |address: SocketAddr| {
        let mut out = std::io::stdout().lock();
        let _ = writeln!(out, "listening on http://{address}");
        let _ = out.flush();
    };
    match serve::run(args.config(quiet), runner, ready) {
        Ok(()) => 0,
        Err(e) => {
            eprintln!("polyflat serve: {e}");
            1
        }
    }
}

/// Runs the service with the flattening pipeline; returns the exit code.
pub fn run(args: &ServeArgs, quiet: bool) -> i32 {
    run_with(args, quiet, Arc::new(crate::serve::PipelineRunner))
}
