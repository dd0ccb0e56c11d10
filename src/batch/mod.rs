//! Batch runs: flatten many assets into one output folder, in parallel, skipping
//! those already done.
//!
//! For each input asset, `DIR/<name>.obj`, `DIR/<name>.report.json` and
//! `DIR/<name>.atlas.png` (names: [`naming`]), then `DIR/summary.json` and
//! `DIR/summary.csv` ([`summary`]). Each file is written atomically and each
//! asset's stamp last ([`stamp`]), so a killed run leaves no partial file and the
//! next run redoes exactly the unfinished assets. A failing (or panicking) asset
//! is a `failed` row; the others carry on.
//!
//! How one asset is flattened is behind [`AssetJob`].

mod inputs;
mod job;
pub mod manifest;
pub mod naming;
pub mod stamp;
pub mod summary;

pub use job::{AssetJob, AssetOutput, PipelineJob};
pub use summary::{KeyMetrics, Status, Summary, SummaryRow};

use crate::progress::Progress;
use crate::settings::Settings;
use crate::Error;
use inputs::Planned;
use stamp::OutputPaths;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;
use std::time::Instant;

/// How to run a batch.
#[derive(Debug, Clone)]
pub struct BatchConfig {
    /// Output folder (created if missing).
    pub out_dir: PathBuf,
    /// Assets flattened at the same time (≥ 1).
    pub jobs: usize,
    /// Redo every asset even when its outputs are up to date.
    pub force: bool,
    /// Settings for every asset (manifest entries override them per asset).
    pub settings: Settings,
}

/// Hears about a batch as it runs (the command line draws a progress bar).
/// Methods are called from worker threads.
pub trait BatchObserver: Sync {
    /// The batch has `total` rows.
    fn planned(&self, _total: usize) {}
    /// Asset `name` entered stage `stage` (the job's own stage names).
    fn stage(&self, _name: &str, _stage: &str) {}
    /// A row is final.
    fn finished(&self, _row: &SummaryRow) {}
}

/// Observer that ignores everything.
#[derive(Debug, Default, Clone, Copy)]
pub struct Unobserved;

impl BatchObserver for Unobserved {}

/// Runs the batch over `inputs` and writes the summary.
///
/// Per-asset problems become `failed` rows; `Err` only when the batch cannot
/// start (a bad manifest, an output folder that cannot be created) or its
/// summary cannot be written.
///
/// Parallelism: `config.jobs` assets at a time (at most one per asset); an asset
/// whose settings leave `threads` unset gets `max(1, cores / jobs)` threads for
/// its per-face loops, so the machine is used once, not `jobs` times over.
pub fn run(
    inputs: &[PathBuf],
    config: &BatchConfig,
    job: &dyn AssetJob,
    observer: &dyn BatchObserver,
) -> Result<Summary, Error> {
    let dir = &config.out_dir;
    let planned = inputs::expand(inputs, &config.settings, dir)?;
    let stamps = dir.join(stamp::STAMP_DIR);
    std::fs::create_dir_all(&stamps).map_err(|e| Error::io(&stamps, "create", e))?;
    stamp::remove_stale_temps(dir)?;
    stamp::remove_stale_temps(&stamps)?;

    let mut planned = planned;
    let assets: Vec<&mut Planned> = planned.iter_mut().filter(|p| p.settings.is_ok()).collect();
    let absolute: Vec<PathBuf> = assets
        .iter()
        .map(|p| std::path::absolute(&p.input).unwrap_or_else(|_| p.input.clone()))
        .collect();
    let names = naming::output_names(&absolute.iter().map(PathBuf::as_path).collect::<Vec<_>>());
    let count = assets.len();
    for (asset, name) in assets.into_iter().zip(names) {
        asset.name = name;
    }
    observer.planned(planned.len());

    let jobs = config.jobs.clamp(1, count.max(1));
    let cores = std::thread::available_parallelism().map_or(1, usize::from);
    let threads = (cores / jobs).max(1);
    let slots: Vec<Mutex<Option<SummaryRow>>> = planned.iter().map(|_| Mutex::new(None)).collect();
    let next = AtomicUsize::new(0);
    let worker = || loop {
        let i = next.fetch_add(1, Ordering::Relaxed);
        let (Some(planned), Some(slot)) = (planned.get(i), slots.get(i)) else {
            break;
        };
        let row = run_one(planned, threads, config, job, observer);
        observer.finished(&row);
        *slot.lock().unwrap_or_else(|e| e.into_inner()) = Some(row);
    };
    std::thread::scope(|scope| {
        for _ in 1..jobs {
            // A worker that cannot start leaves its share to the others.
            let _ = std::thread::Builder::new().spawn_scoped(scope, worker);
        }
        worker();
    });
    let rows = slots
        .into_iter()
        .filter_map(|s| s.into_inner().unwrap_or_else(|e| e.into_inner()))
        .collect();
    let summary = Summary { rows };
    stamp::write_atomic(&dir.join("summary.json"), &summary.to_json())?;
    stamp::write_atomic(&dir.join("summary.csv"), &summary.to_csv())?;
    Ok(summary)
}

/// Forwards an asset's stages to the observer under the asset's name.
struct AssetProgress<'a> {
    name: &'a str,
    observer: &'a dyn BatchObserver,
}

impl Progress for AssetProgress<'_> {
    fn begin(&self, stage: &str, _total: u64) {
        self.observer.stage(self.name, stage);
    }
}

/// Runs (or skips) one row; never panics, whatever the job does.
fn run_one(
    planned: &Planned,
    threads: usize,
    config: &BatchConfig,
    job: &dyn AssetJob,
    observer: &dyn BatchObserver,
) -> SummaryRow {
    let start = Instant::now();
    let input = planned.input.display().to_string();
    let name = planned.name.as_str();
    let stem = planned
        .input
        .file_stem()
        .unwrap_or_default()
        .to_string_lossy();
    let mut row = SummaryRow {
        input: input.clone(),
        output: None,
        renamed_from: None,
        status: Status::Failed,
        error: None,
        time_ms: 0,
        metrics: KeyMetrics::default(),
    };
    let outcome = match &planned.settings {
        Ok(settings) => {
            row.output = Some(format!("{name}.obj"));
            row.renamed_from = (stem != name).then(|| stem.into_owned());
            let paths = OutputPaths::new(&config.out_dir, name);
            let settings = Settings {
                threads: settings.threads.or(Some(threads)),
                ..settings.clone()
            };
            let progress = AssetProgress { name, observer };
            flatten_one(
                &planned.input,
                &input,
                &paths,
                &settings,
                config.force,
                job,
                &progress,
            )
        }
        Err(error) => Err(error.clone()),
    };
    match outcome {
        Ok((status, metrics)) => {
            row.status = status;
            row.metrics = metrics;
        }
        Err(error) => row.error = Some(error),
    }
    row.time_ms = u64::try_from(start.elapsed().as_millis()).unwrap_or(u64::MAX);
    row
}

/// Skips, or flattens and writes, one asset; the error is the row's sentence.
fn flatten_one(
    path: &Path,
    input: &str,
    paths: &OutputPaths,
    settings: &Settings,
    force: bool,
    job: &dyn AssetJob,
    progress: &AssetProgress<'_>,
) -> Result<(Status, KeyMetrics), String> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, "read", e).to_string())?;
    let own = std::fs::canonicalize(path).ok();
    if paths
        .outputs
        .iter()
        .any(|o| own.is_some() && std::fs::canonicalize(o).ok() == own)
    {
        return Err(format!(
            "{input}: its output would overwrite it; choose an --out-dir that holds no inputs"
        ));
    }
    let key = stamp::job_key(input, &bytes, settings);
    if !force {
        if let Some(metrics) = paths.up_to_date(&key) {
            return Ok((Status::Skipped, metrics));
        }
    }
    let output = catch_unwind(AssertUnwindSafe(|| job.run(path, settings, progress)))
        .map_err(|panic| {
            let what = panic
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| panic.downcast_ref::<String>().cloned())
                .unwrap_or_default();
            format!("{input}: internal error while flattening ({what}); please report it")
        })?
        .map_err(|e| e.to_string())?;
    let metrics = KeyMetrics::from_map(&output.metrics);
    paths
        .write(input, &key, &output, &metrics)
        .map_err(|e| e.to_string())?;
    Ok((Status::Done, metrics))
}
