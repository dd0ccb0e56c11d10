//! `polyflat serve`: an HTTP service that queues flattening jobs durably.
//!
//! Requests are answered on a tokio runtime; jobs run on dedicated worker threads
//! ([`worker`]) that take them from a SQLite job table ([`store`]), so a job that
//! was acknowledged survives a restart, a `kill -9` or a power cut. The work itself is
//! done by a [`JobRunner`], which keeps the service testable apart from the pipeline.
//!
//! Shutdown (SIGTERM or Ctrl-C): stop accepting connections and taking jobs, give
//! in-flight requests and running jobs `shutdown_grace` to finish, put the jobs still
//! running back in the queue, return `Ok`.

mod api;
mod id;
mod pipeline_runner;
mod runner;
mod store;
mod worker;

pub use id::JobId;
pub use pipeline_runner::PipelineRunner;
pub use runner::{JobFiles, JobRunner};
pub use store::{
    Admission, Claim, Counts, JobStatus, JobView, Recovery, Store, INPUT_FILE, RESULT_FILES,
};

use crate::Error;
use std::future::Future;
use std::net::SocketAddr;
use std::path::PathBuf;
use std::sync::Arc;
use std::time::{Duration, Instant};

/// How to run the service.
#[derive(Debug, Clone)]
pub struct Config {
    /// Address to listen on (port 0 picks a free port).
    pub listen: SocketAddr,
    /// Folder holding `jobs.sqlite` and `jobs/<id>/`.
    pub data_dir: PathBuf,
    /// Jobs run at the same time.
    pub workers: usize,
    /// Jobs allowed to wait; more submissions get `429`.
    pub max_queue: usize,
    /// Largest accepted upload in bytes; larger gets `413`.
    pub max_upload_bytes: usize,
    /// A run longer than this fails.
    pub job_timeout: Duration,
    /// Time given to in-flight requests and running jobs at shutdown.
    pub shutdown_grace: Duration,
    /// Log nothing to standard error.
    pub quiet: bool,
}

impl Config {
    /// The defaults of `polyflat serve` for `data_dir`: loopback port 7878, one
    /// worker per core, 64 queued jobs, 64 MB uploads, 10 minute jobs, 30 s grace.
    pub fn new(data_dir: PathBuf) -> Config {
        Config {
            listen: SocketAddr::from(([127, 0, 0, 1], 7878)),
            data_dir,
            workers: std::thread::available_parallelism().map_or(1, |n| n.get()),
            max_queue: 64,
            max_upload_bytes: 64 * 1024 * 1024,
            job_timeout: Duration::from_secs(600),
            shutdown_grace: Duration::from_secs(30),
            quiet: false,
        }
    }
}

/// Runs the service until SIGTERM or SIGINT, then shuts down as described in the
/// module notes. `on_ready` receives the bound address once requests are accepted.
pub fn run(
    config: Config,
    runner: Arc<dyn JobRunner>,
    on_ready: impl FnOnce(SocketAddr),
) -> Result<(), Error> {
    run_until(config, runner, on_ready, termination_signal)
}

/// Like [`run`], but shuts down when the future made by `shutdown` completes.
/// `shutdown` is called inside the runtime before `on_ready`, so a signal handler it
/// installs is in place before anyone can know the address.
pub fn run_until<F, S>(
    config: Config,
    runner: Arc<dyn JobRunner>,
    on_ready: impl FnOnce(SocketAddr),
    shutdown: S,
) -> Result<(), Error>
where
    S: FnOnce() -> F,
    F: Future<Output = ()> + Send + 'static,
{
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .thread_name("polyflat-http")
        .build()
        .map_err(|e| Error::Settings(format!("cannot start the HTTP runtime: {e}")))?;
    let (store, recovery) = Store::open(&config.data_dir)?;
    let store = Arc::new(store);
    if !config.quiet {
        log_recovery(&recovery);
    }
    let listener = runtime
        .block_on(tokio::net::TcpListener::bind(config.listen))
        .map_err(|e| Error::Settings(format!("--listen {}: cannot listen: {e}", config.listen)))?;
    let address = listener
        .local_addr()
        .map_err(|e| Error::Settings(format!("--listen {}: {e}", config.listen)))?;
    let workers = Workers::start(
        Arc::clone(&store),
        Arc::clone(&runner),
        config.workers,
        config.job_timeout,
        config.quiet,
    )
    .map_err(|e| Error::Settings(format!("--workers {}: cannot start: {e}", config.workers)))?;
    let state = api::AppState {
        store,
        runner,
        doorbell: workers.doorbell(),
        max_queue: config.max_queue,
        max_upload_bytes: config.max_upload_bytes,
        quiet: config.quiet,
    };
    let app = api::router(state);
    let grace = config.shutdown_grace;
    let deadline = runtime.block_on(async move {
        let stop = shutdown();
        let (stop_tx, mut stop_rx) = tokio::sync::watch::channel(false);
        let server = axum::serve(listener, app).with_graceful_shutdown(async move {
            let _ = stop_rx.wait_for(|stopped| *stopped).await;
        });
        let server = tokio::spawn(async move { server.await });
        on_ready(address);
        stop.await;
        let deadline = Instant::now() + grace;
        let _ = stop_tx.send(true);
        let _ = tokio::time::timeout(grace, server).await;
        deadline
    });
    let requeued = workers.finish(deadline);
    runtime.shutdown_background();
    if !config.quiet {
        eprintln!("polyflat serve: stopped; {requeued} unfinished job(s) left in the queue");
    }
    Ok(())
}

use worker::Workers;

fn log_recovery(r: &Recovery) {
    if r.interrupted > 0 {
        eprintln!(
            "polyflat serve: {} interrupted job(s) queued again",
            r.interrupted
        );
    }
    if r.missing_results > 0 {
        eprintln!(
            "polyflat serve: {} finished job(s) had missing result files and were queued again",
            r.missing_results
        );
    }
    if r.missing_input > 0 {
        eprintln!(
            "polyflat serve: {} queued job(s) had lost their uploaded mesh and were marked failed",
            r.missing_input
        );
    }
    if r.orphans_removed > 0 {
        eprintln!(
            "polyflat serve: removed {} upload folder(s) of submissions that were never acknowledged",
            r.orphans_removed
        );
    }
}

/// Completes on SIGTERM or SIGINT (Ctrl-C). Installs the handlers when called, so
/// it must be called inside the runtime.
fn termination_signal() -> impl Future<Output = ()> + Send + 'static {
    #[cfg(unix)]
    let term = tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate());
    #[cfg(unix)]
    let int = tokio::signal::unix::signal(tokio::signal::unix::SignalKind::interrupt());
    async move {
        #[cfg(unix)]
        match (term, int) {
            (Ok(mut term), Ok(mut int)) => {
                tokio::select! {
                    _ = term.recv() => {}
                    _ = int.recv() => {}
                }
            }
            _ => {
                let _ = tokio::signal::ctrl_c().await;
            }
        }
        #[cfg(not(unix))]
        {
            let _ = tokio::signal::ctrl_c().await;
        }
    }
}
