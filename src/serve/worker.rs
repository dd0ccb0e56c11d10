//! Worker threads: each takes the oldest queued job from the store, runs it on a
//! thread of its own under `--job-timeout`, and records the outcome. CPU work never
//! touches the async runtime.

use super::id::JobId;
use super::runner::JobRunner;
use super::store::{Claim, Store};
use crate::progress::Progress;
use std::collections::HashMap;
use std::sync::mpsc::{self, RecvTimeoutError};
use std::sync::{Arc, Condvar, Mutex, MutexGuard};
use std::thread::{self, JoinHandle};
use std::time::{Duration, Instant};

/// Shortest time between two progress writes of one job.
const PROGRESS_INTERVAL: Duration = Duration::from_millis(500);
/// Smallest progress change worth a write.
const PROGRESS_STEP: f64 = 0.01;
/// Idle workers look at the queue at least this often, even without a wake-up.
const IDLE_POLL: Duration = Duration::from_secs(2);

#[derive(Debug, Default)]
struct WakeState {
    /// Bumped on every submission, so a worker that found the queue empty can tell
    /// whether it missed one.
    generation: u64,
    stopping: bool,
    /// Runs in progress: job id → attempt.
    running: HashMap<JobId, i64>,
}

struct Shared {
    store: Arc<Store>,
    runner: Arc<dyn JobRunner>,
    job_timeout: Duration,
    /// Per-face loop threads given to each job, so that `--workers` jobs share the
    /// cores instead of each taking all of them.
    threads_per_job: usize,
    quiet: bool,
    state: Mutex<WakeState>,
    wake: Condvar,
}

impl Shared {
    fn state(&self) -> MutexGuard<'_, WakeState> {
        self.state.lock().unwrap_or_else(|p| p.into_inner())
    }

    fn log(&self, message: std::fmt::Arguments<'_>) {
        if !self.quiet {
            eprintln!("polyflat serve: {message}");
        }
    }
}

/// Wakes a worker when a job was queued. Cheap to clone.
#[derive(Clone)]
pub(crate) struct Doorbell(Arc<Shared>);

impl Doorbell {
    /// A job was queued.
    pub(crate) fn ring(&self) {
        self.0.state().generation += 1;
        self.0.wake.notify_one();
    }
}

/// The pool of worker threads.
pub(crate) struct Workers {
    shared: Arc<Shared>,
    threads: Vec<JoinHandle<()>>,
}

impl Workers {
    /// Starts `count` workers (at least one).
    pub(crate) fn start(
        store: Arc<Store>,
        runner: Arc<dyn JobRunner>,
        count: usize,
        job_timeout: Duration,
        quiet: bool,
    ) -> std::io::Result<Workers> {
        let count = count.max(1);
        let cores = thread::available_parallelism().map_or(1, |n| n.get());
        let shared = Arc::new(Shared {
            store,
            runner,
            job_timeout,
            threads_per_job: (cores / count).max(1),
            quiet,
            state: Mutex::new(WakeState::default()),
            wake: Condvar::new(),
        });
        let threads = (0..count)
            .map(|i| {
                let shared = Arc::clone(&shared);
                thread::Builder::new()
                    .name(format!("polyflat-worker-{i}"))
                    .spawn(move || worker_loop(&shared))
            })
            .collect::<std::io::Result<_>>()?;
        Ok(Workers { shared, threads })
    }

    /// A handle for waking workers.
    pub(crate) fn doorbell(&self) -> Doorbell {
        Doorbell(Arc::clone(&self.shared))
    }

    /// Tells workers to take no new job.
    pub(crate) fn stop_claiming(&self) {
        self.shared.state().stopping = true;
        self.shared.wake.notify_all();
    }

    /// Waits until `deadline` for running jobs to finish, then puts the ones still
    /// running back in the queue. Returns how many were re-queued.
    pub(crate) fn finish(self, deadline: Instant) -> usize {
        self.stop_claiming();
        while Instant::now() < deadline && self.threads.iter().any(|t| !t.is_finished()) {
            thread::sleep(Duration::from_millis(20));
        }
        let leftovers: Vec<(JobId, i64)> = self
            .shared
            .state()
            .running
            .iter()
            .map(|(id, attempt)| (id.clone(), *attempt))
            .collect();
        let mut requeued = 0;
        for (id, attempt) in leftovers {
            match self.shared.store.requeue(&id, attempt) {
                Ok(true) => requeued += 1,
                Ok(false) => {}
                Err(e) => self.shared.log(format_args!("job {id}: {e}")),
            }
        }
        for t in self.threads {
            if t.is_finished() {
                let _ = t.join();
            }
        }
        requeued
    }
}

fn worker_loop(shared: &Shared) {
    loop {
        let seen = {
            let state = shared.state();
            if state.stopping {
                return;
            }
            state.generation
        };
        match shared.store.claim_next() {
            Ok(Some(claim)) => {
                run_claim(shared, claim);
                continue;
            }
            Ok(None) => {}
            Err(e) => shared.log(format_args!("{e}")),
        }
        let mut state = shared.state();
        let started = Instant::now();
        while state.generation == seen && !state.stopping && started.elapsed() < IDLE_POLL {
            state = match shared.wake.wait_timeout(state, IDLE_POLL) {
                Ok((s, _)) => s,
                Err(p) => p.into_inner().0,
            };
        }
    }
}

/// How a run ended.
enum Outcome {
    /// Results stored and the row marked done.
    Done,
    /// The row must be marked failed with this reason.
    Failed(String),
    /// Ran past `--job-timeout`; the row was already marked failed with this reason.
    TimedOut(String),
}

fn run_claim(shared: &Shared, claim: Claim) {
    let Claim {
        id,
        attempt,
        settings,
    } = claim;
    shared.state().running.insert(id.clone(), attempt);
    let started = Instant::now();
    let outcome = run_job(shared, &id, attempt, settings);
    let secs = started.elapsed().as_secs_f64();
    match outcome {
        Outcome::Done => shared.log(format_args!("job {id} done in {secs:.2} s")),
        Outcome::Failed(reason) => {
            if let Err(e) = shared.store.mark_failed(&id, attempt, &reason) {
                shared.log(format_args!("job {id}: {e}"));
            }
            shared.log(format_args!("job {id} failed after {secs:.2} s: {reason}"));
        }
        Outcome::TimedOut(reason) => shared.log(format_args!("job {id} failed: {reason}")),
    }
    shared.state().running.remove(&id);
}

/// Runs the job on a thread of its own and, on success, stores its files and marks
/// it done.
fn run_job(shared: &Shared, id: &JobId, attempt: i64, mut settings: crate::Settings) -> Outcome {
    if settings.threads.is_none() {
        settings.threads = Some(shared.threads_per_job);
    }
    let text = match shared.store.read_input(id) {
        Ok(text) => text,
        Err(e) => return Outcome::Failed(e.to_string()),
    };
    let progress = Arc::new(JobProgress::new(
        Arc::clone(&shared.store),
        id.clone(),
        attempt,
        shared.runner.stage_count(),
    ));
    let (tx, rx) = mpsc::channel();
    let runner = Arc::clone(&shared.runner);
    let spawned = thread::Builder::new()
        .name(format!("polyflat-job-{}", &id.as_str()[..8]))
        .spawn(move || {
            let result = runner.run(&text, &settings, progress.as_ref());
            let _ = tx.send(result);
        });
    if let Err(e) = spawned {
        return Outcome::Failed(format!("could not start a thread for the job: {e}"));
    }
    match rx.recv_timeout(shared.job_timeout) {
        Ok(Ok(files)) => {
            if let Err(e) = shared.store.save_results(id, &files) {
                return Outcome::Failed(format!("could not store the results: {e}"));
            }
            match shared.store.mark_done(id, attempt, &files) {
                Ok(_) => Outcome::Done,
                Err(e) => Outcome::Failed(format!("could not record the results: {e}")),
            }
        }
        Ok(Err(e)) => Outcome::Failed(e.to_string()),
        Err(RecvTimeoutError::Timeout) => {
            let reason = format!(
                "the job ran longer than the {} s limit (--job-timeout)",
                shared.job_timeout.as_secs_f64()
            );
            if let Err(e) = shared.store.mark_failed(id, attempt, &reason) {
                shared.log(format_args!("job {id}: {e}"));
            }
            // Keep this worker's slot until the abandoned run ends, so timed-out jobs
            // never make more than `--workers` runs compete for the CPU. Its result is
            // dropped: the row no longer accepts writes from this attempt.
            let _ = rx.recv();
            Outcome::TimedOut(reason)
        }
        Err(RecvTimeoutError::Disconnected) => {
            Outcome::Failed("the job stopped unexpectedly; this is a bug in polyflat".to_owned())
        }
    }
}

/// Turns [`Progress`] calls into a 0–1 fraction written to the job's row, at most
/// every [`PROGRESS_INTERVAL`] and only when it grew by [`PROGRESS_STEP`].
struct JobProgress {
    store: Arc<Store>,
    id: JobId,
    attempt: i64,
    expected_stages: u32,
    state: Mutex<ProgressState>,
}

#[derive(Default)]
struct ProgressState {
    begun: u32,
    ended: u32,
    total: u64,
    done: u64,
    reported: f64,
    last_write: Option<Instant>,
}

impl JobProgress {
    fn new(store: Arc<Store>, id: JobId, attempt: i64, expected_stages: u32) -> Self {
        JobProgress {
            store,
            id,
            attempt,
            expected_stages: expected_stages.max(1),
            state: Mutex::new(ProgressState::default()),
        }
    }

    fn update(&self, change: impl FnOnce(&mut ProgressState)) {
        let mut s = self.state.lock().unwrap_or_else(|p| p.into_inner());
        change(&mut s);
        let in_stage = if s.begun > s.ended && s.total > 0 {
            (s.done.min(s.total) as f64) / (s.total as f64)
        } else {
            0.0
        };
        let stages = f64::from(self.expected_stages.max(s.begun));
        let fraction = ((f64::from(s.ended) + in_stage) / stages).clamp(0.0, 0.99);
        let due = s
            .last_write
            .is_none_or(|t| t.elapsed() >= PROGRESS_INTERVAL);
        if due && fraction >= s.reported + PROGRESS_STEP {
            s.reported = fraction;
            s.last_write = Some(Instant::now());
            // Written under the lock so that concurrent callers cannot reorder writes.
            let _ = self.store.set_progress(&self.id, self.attempt, fraction);
        }
    }
}

impl Progress for JobProgress {
    fn begin(&self, _stage: &str, total: u64) {
        self.update(|s| {
            s.begun += 1;
            s.total = total;
            s.done = 0;
        });
    }

    fn advance(&self, done: u64) {
        self.update(|s| s.done = done);
    }

    fn end(&self) {
        self.update(|s| s.ended = s.begun);
    }
}
