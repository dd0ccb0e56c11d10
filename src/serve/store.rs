//! Durable job state: one SQLite table in `DATA/jobs.sqlite` (WAL, `synchronous=FULL`,
//! so a commit is on disk before it returns) and one folder per job under
//! `DATA/jobs/<id>/` holding `input.obj` and, once done, the three result files.
//!
//! Rules that make a restart (clean or `kill -9`) lose nothing:
//! - the upload is written and fsynced before its row is inserted;
//! - result files are written to temporary files, fsynced, renamed, and their folder
//!   fsynced before the row says `done` (and the row records their sizes);
//! - every write made on behalf of a run names the run's `attempt`, so a run that was
//!   timed out or re-queued can no longer change the row;
//! - [`Store::open`] re-queues `running` rows and `done` rows whose files are gone.

use super::id::JobId;
use super::runner::JobFiles;
use crate::settings::Settings;
use crate::Error;
use rusqlite::{params, Connection, OptionalExtension, TransactionBehavior};
use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard};
use std::time::{SystemTime, UNIX_EPOCH};

/// The uploaded mesh inside a job's folder.
pub const INPUT_FILE: &str = "input.obj";
/// The downloadable results, in [`JobFiles`] order: flattened mesh, report, atlas.
pub const RESULT_FILES: [&str; 3] = ["result.obj", "report.json", "atlas.png"];

/// Where a job is in its life.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum JobStatus {
    /// Accepted and waiting for a worker.
    Queued,
    /// A worker is flattening it.
    Running,
    /// Finished; its result files are on disk.
    Done,
    /// Finished with an error (see [`JobView::error`]).
    Failed,
}

impl JobStatus {
    /// The name used in the database and over HTTP.
    pub fn as_str(self) -> &'static str {
        match self {
            JobStatus::Queued => "queued",
            JobStatus::Running => "running",
            JobStatus::Done => "done",
            JobStatus::Failed => "failed",
        }
    }

    fn parse(text: &str) -> Option<JobStatus> {
        match text {
            "queued" => Some(JobStatus::Queued),
            "running" => Some(JobStatus::Running),
            "done" => Some(JobStatus::Done),
            "failed" => Some(JobStatus::Failed),
            _ => None,
        }
    }
}

/// A job as the API reports it.
#[derive(Debug, Clone, PartialEq)]
pub struct JobView {
    /// Its id.
    pub id: JobId,
    /// Its state.
    pub status: JobStatus,
    /// Fraction done, 0–1 (1 exactly when `status` is `Done`).
    pub progress: f64,
    /// Why it failed, when it did.
    pub error: Option<String>,
}

/// A queued job handed to a worker.
#[derive(Debug, Clone)]
pub struct Claim {
    /// Its id.
    pub id: JobId,
    /// Which run of the job this is (1 for the first); later writes must name it.
    pub attempt: i64,
    /// The job's options.
    pub settings: Settings,
}

/// Outcome of [`Store::insert_queued`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Admission {
    /// The row is committed.
    Accepted,
    /// `max_queue` jobs are already waiting; nothing was inserted.
    QueueFull,
}

/// What [`Store::open`] repaired.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Recovery {
    /// `running` rows put back in the queue (the previous process stopped mid-job).
    pub interrupted: usize,
    /// `done` rows put back in the queue because a result file was missing or short.
    pub missing_results: usize,
    /// `queued` rows failed because their uploaded mesh was missing.
    pub missing_input: usize,
    /// Job folders without a row (an upload interrupted before its 202) removed.
    pub orphans_removed: usize,
}

/// Job counts by status.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Counts {
    /// Waiting.
    pub queued: u64,
    /// Being worked on.
    pub running: u64,
    /// Finished successfully.
    pub done: u64,
    /// Finished with an error.
    pub failed: u64,
}

/// The job table and job folders of one data folder.
#[derive(Debug)]
pub struct Store {
    jobs_dir: PathBuf,
    db_path: PathBuf,
    write: Mutex<Connection>,
    read: Mutex<Connection>,
}

const SCHEMA: &str = "
CREATE TABLE IF NOT EXISTS jobs (
    seq         INTEGER PRIMARY KEY AUTOINCREMENT,
    id          TEXT    NOT NULL UNIQUE,
    status      TEXT    NOT NULL CHECK (status IN ('queued', 'running', 'done', 'failed')),
    settings    TEXT    NOT NULL,
    progress    REAL    NOT NULL DEFAULT 0,
    error       TEXT,
    attempt     INTEGER NOT NULL DEFAULT 0,
    created_ms  INTEGER NOT NULL,
    updated_ms  INTEGER NOT NULL,
    obj_len     INTEGER,
    report_len  INTEGER,
    atlas_len   INTEGER
);
CREATE INDEX IF NOT EXISTS jobs_by_status ON jobs (status, seq);
";

fn now_ms() -> i64 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map_or(0, |d| i64::try_from(d.as_millis()).unwrap_or(i64::MAX))
}

fn lock(m: &Mutex<Connection>) -> MutexGuard<'_, Connection> {
    m.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

fn open_connection(path: &Path) -> rusqlite::Result<Connection> {
    let conn = Connection::open(path)?;
    conn.busy_timeout(std::time::Duration::from_secs(10))?;
    conn.pragma_update(None, "journal_mode", "WAL")?;
    conn.pragma_update(None, "synchronous", "FULL")?;
    conn.pragma_update(None, "foreign_keys", "ON")?;
    Ok(conn)
}

/// Writes `bytes` to `dir/name` through a fsynced temporary file in `dir` and a rename.
/// The caller fsyncs `dir` afterwards to make the rename itself durable.
fn write_file_atomically(dir: &Path, name: &str, bytes: &[u8]) -> io::Result<()> {
    let mut tmp = tempfile::NamedTempFile::new_in(dir)?;
    tmp.write_all(bytes)?;
    tmp.as_file().sync_all()?;
    tmp.persist(dir.join(name)).map_err(|e| e.error)?;
    Ok(())
}

/// Makes renames and new entries in `dir` durable.
fn sync_dir(dir: &Path) -> io::Result<()> {
    #[cfg(unix)]
    fs::File::open(dir)?.sync_all()?;
    #[cfg(not(unix))]
    let _ = dir;
    Ok(())
}

impl Store {
    /// Opens (creating when needed) the store in `data_dir` and repairs what an
    /// interrupted previous process left behind (see [`Recovery`]).
    pub fn open(data_dir: &Path) -> Result<(Store, Recovery), Error> {
        let jobs_dir = data_dir.join("jobs");
        fs::create_dir_all(&jobs_dir).map_err(|e| Error::io(&jobs_dir, "create the folder", e))?;
        let db_path = data_dir.join("jobs.sqlite");
        let db_err =
            |e: rusqlite::Error| Error::io(&db_path, "open the job database", io::Error::other(e));
        let write = open_connection(&db_path).map_err(db_err)?;
        write.execute_batch(SCHEMA).map_err(db_err)?;
        let read = open_connection(&db_path).map_err(db_err)?;
        let store = Store {
            jobs_dir,
            db_path: db_path.clone(),
            write: Mutex::new(write),
            read: Mutex::new(read),
        };
        let recovery = store.recover()?;
        Ok((store, recovery))
    }

    fn db_error(&self, e: rusqlite::Error) -> Error {
        Error::io(
            &self.db_path,
            "update the job database",
            io::Error::other(e),
        )
    }

    /// The folder of job `id` (safe: `id` has been format-checked).
    pub fn job_dir(&self, id: &JobId) -> PathBuf {
        self.jobs_dir.join(id.as_str())
    }

    fn recover(&self) -> Result<Recovery, Error> {
        let mut recovery = Recovery::default();
        let mut conn = lock(&self.write);
        let tx = conn
            .transaction_with_behavior(TransactionBehavior::Immediate)
            .map_err(|e| self.db_error(e))?;
        let now = now_ms();
        recovery.interrupted = tx
            .execute(
                "UPDATE jobs SET status = 'queued', progress = 0, updated_ms = ?1 WHERE status = 'running'",
                params![now],
            )
            .map_err(|e| self.db_error(e))?;

        let done: Vec<(String, [Option<i64>; 3])> = {
            let mut stmt = tx
                .prepare(
                    "SELECT id, obj_len, report_len, atlas_len FROM jobs WHERE status = 'done'",
                )
                .map_err(|e| self.db_error(e))?;
            let rows = stmt
                .query_map([], |r| Ok((r.get(0)?, [r.get(1)?, r.get(2)?, r.get(3)?])))
                .map_err(|e| self.db_error(e))?;
            rows.collect::<rusqlite::Result<_>>()
                .map_err(|e| self.db_error(e))?
        };
        for (id, lens) in done {
            if !self.results_intact(&id, &lens) {
                tx.execute(
                    "UPDATE jobs SET status = 'queued', progress = 0, obj_len = NULL, report_len = NULL, atlas_len = NULL, updated_ms = ?2 WHERE id = ?1",
                    params![id, now],
                )
                .map_err(|e| self.db_error(e))?;
                recovery.missing_results += 1;
            }
        }

        let queued: Vec<String> = {
            let mut stmt = tx
                .prepare("SELECT id FROM jobs WHERE status = 'queued'")
                .map_err(|e| self.db_error(e))?;
            let rows = stmt
                .query_map([], |r| r.get(0))
                .map_err(|e| self.db_error(e))?;
            rows.collect::<rusqlite::Result<_>>()
                .map_err(|e| self.db_error(e))?
        };
        for id in queued {
            let has_input =
                JobId::parse(&id).is_some_and(|id| self.job_dir(&id).join(INPUT_FILE).is_file());
            if !has_input {
                tx.execute(
                    "UPDATE jobs SET status = 'failed', error = ?2, updated_ms = ?3 WHERE id = ?1",
                    params![
                        id,
                        "the uploaded mesh is missing from the data folder; submit it again",
                        now
                    ],
                )
                .map_err(|e| self.db_error(e))?;
                recovery.missing_input += 1;
            }
        }
        tx.commit().map_err(|e| self.db_error(e))?;
        drop(conn);
        recovery.orphans_removed = self.sweep_folders()?;
        Ok(recovery)
    }

    /// True when every result file of `id` exists with the size the row recorded.
    fn results_intact(&self, id: &str, lens: &[Option<i64>; 3]) -> bool {
        let Some(id) = JobId::parse(id) else {
            return false;
        };
        let dir = self.job_dir(&id);
        RESULT_FILES.iter().zip(lens).all(|(name, len)| {
            let on_disk = fs::metadata(dir.join(name)).ok().map(|m| m.len());
            matches!((on_disk, len), (Some(a), Some(b)) if i64::try_from(a).ok() == Some(*b))
        })
    }

    /// Removes job folders that have no row and temporary files left by interrupted
    /// writes. Entries whose names are not job ids are left alone.
    fn sweep_folders(&self) -> Result<usize, Error> {
        let entries =
            fs::read_dir(&self.jobs_dir).map_err(|e| Error::io(&self.jobs_dir, "list", e))?;
        let mut removed = 0;
        for entry in entries.flatten() {
            let name = entry.file_name();
            let Some(id) = name.to_str().and_then(JobId::parse) else {
                continue;
            };
            let dir = self.job_dir(&id);
            if self.get(&id)?.is_none() {
                fs::remove_dir_all(&dir).map_err(|e| Error::io(&dir, "remove", e))?;
                removed += 1;
                continue;
            }
            if let Ok(files) = fs::read_dir(&dir) {
                for file in files.flatten() {
                    if file.file_name().to_string_lossy().starts_with(".tmp") {
                        let path = file.path();
                        fs::remove_file(&path).map_err(|e| Error::io(&path, "remove", e))?;
                    }
                }
            }
        }
        Ok(removed)
    }

    /// Stores an upload durably: creates the job's folder and writes `input.obj`
    /// atomically, fsyncing the file and both folders.
    pub fn save_input(&self, id: &JobId, obj: &[u8]) -> Result<(), Error> {
        let dir = self.job_dir(id);
        fs::create_dir(&dir).map_err(|e| Error::io(&dir, "create the folder", e))?;
        sync_dir(&self.jobs_dir).map_err(|e| Error::io(&self.jobs_dir, "sync", e))?;
        write_file_atomically(&dir, INPUT_FILE, obj)
            .and_then(|()| sync_dir(&dir))
            .map_err(|e| Error::io(dir.join(INPUT_FILE), "write", e))
    }

    /// Reads a job's uploaded mesh.
    pub fn read_input(&self, id: &JobId) -> Result<String, Error> {
        let path = self.job_dir(id).join(INPUT_FILE);
        let bytes = fs::read(&path).map_err(|e| Error::io(&path, "read", e))?;
        String::from_utf8(bytes)
            .map_err(|e| Error::io(&path, "read", io::Error::new(io::ErrorKind::InvalidData, e)))
    }

    /// Writes the result files atomically and durably (call before [`Store::mark_done`]).
    pub fn save_results(&self, id: &JobId, files: &JobFiles) -> Result<(), Error> {
        let dir = self.job_dir(id);
        for (name, bytes) in RESULT_FILES.iter().zip(file_bytes(files)) {
            write_file_atomically(&dir, name, bytes)
                .map_err(|e| Error::io(dir.join(name), "write", e))?;
        }
        sync_dir(&dir).map_err(|e| Error::io(&dir, "sync", e))
    }

    /// Removes a job's folder (used when its submission is refused after the upload
    /// was stored).
    pub fn remove_job_dir(&self, id: &JobId) -> Result<(), Error> {
        let dir = self.job_dir(id);
        fs::remove_dir_all(&dir).map_err(|e| Error::io(&dir, "remove", e))
    }

    /// Inserts a `queued` row unless `max_queue` jobs are already queued. The count and
    /// the insert happen in one write transaction, so the bound holds under concurrency.
    pub fn insert_queued(
        &self,
        id: &JobId,
        settings: &Settings,
        max_queue: usize,
    ) -> Result<Admission, Error> {
        let settings_json = serde_json::to_string(settings)
            .map_err(|e| self.db_error(rusqlite::Error::ToSqlConversionFailure(e.into())))?;
        let mut conn = lock(&self.write);
        let tx = conn
            .transaction_with_behavior(TransactionBehavior::Immediate)
            .map_err(|e| self.db_error(e))?;
        let queued: i64 = tx
            .query_row(
                "SELECT COUNT(*) FROM jobs WHERE status = 'queued'",
                [],
                |r| r.get(0),
            )
            .map_err(|e| self.db_error(e))?;
        if usize::try_from(queued).unwrap_or(usize::MAX) >= max_queue {
            return Ok(Admission::QueueFull);
        }
        let now = now_ms();
        tx.execute(
            "INSERT INTO jobs (id, status, settings, created_ms, updated_ms) VALUES (?1, 'queued', ?2, ?3, ?3)",
            params![id.as_str(), settings_json, now],
        )
        .map_err(|e| self.db_error(e))?;
        tx.commit().map_err(|e| self.db_error(e))?;
        Ok(Admission::Accepted)
    }

    /// Takes the oldest queued job and marks it `running` with a new attempt number.
    /// Rows that cannot be decoded are marked `failed` and skipped.
    pub fn claim_next(&self) -> Result<Option<Claim>, Error> {
        let mut conn = lock(&self.write);
        loop {
            let tx = conn
                .transaction_with_behavior(TransactionBehavior::Immediate)
                .map_err(|e| self.db_error(e))?;
            let row: Option<(i64, String, String, i64)> = tx
                .query_row(
                    "SELECT seq, id, settings, attempt FROM jobs WHERE status = 'queued' ORDER BY seq LIMIT 1",
                    [],
                    |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?, r.get(3)?)),
                )
                .optional()
                .map_err(|e| self.db_error(e))?;
            let Some((seq, id_text, settings_json, attempt)) = row else {
                return Ok(None);
            };
            let now = now_ms();
            let decoded =
                JobId::parse(&id_text).zip(serde_json::from_str::<Settings>(&settings_json).ok());
            let Some((id, settings)) = decoded else {
                tx.execute(
                    "UPDATE jobs SET status = 'failed', error = 'the job record is damaged; submit the mesh again', updated_ms = ?2 WHERE seq = ?1",
                    params![seq, now],
                )
                .map_err(|e| self.db_error(e))?;
                tx.commit().map_err(|e| self.db_error(e))?;
                continue;
            };
            let attempt = attempt + 1;
            tx.execute(
                "UPDATE jobs SET status = 'running', attempt = ?2, progress = 0, error = NULL, updated_ms = ?3 WHERE seq = ?1",
                params![seq, attempt, now],
            )
            .map_err(|e| self.db_error(e))?;
            tx.commit().map_err(|e| self.db_error(e))?;
            return Ok(Some(Claim {
                id,
                attempt,
                settings,
            }));
        }
    }

    /// Runs `sql` (parameters: id, attempt, then `extra`) against the row only while
    /// it is `running` under `attempt`; returns whether the row changed.
    fn update_run(
        &self,
        sql: &str,
        id: &JobId,
        attempt: i64,
        extra: &[&dyn rusqlite::ToSql],
    ) -> Result<bool, Error> {
        let conn = lock(&self.write);
        let id = id.as_str();
        let mut values: Vec<&dyn rusqlite::ToSql> = vec![&id, &attempt];
        values.extend_from_slice(extra);
        let changed = conn
            .execute(sql, values.as_slice())
            .map_err(|e| self.db_error(e))?;
        Ok(changed == 1)
    }

    /// Records progress `fraction` (0–1) of run `attempt`.
    pub fn set_progress(&self, id: &JobId, attempt: i64, fraction: f64) -> Result<bool, Error> {
        self.update_run(
            "UPDATE jobs SET progress = ?3, updated_ms = ?4 WHERE id = ?1 AND attempt = ?2 AND status = 'running'",
            id,
            attempt,
            &[&fraction, &now_ms()],
        )
    }

    /// Marks run `attempt` done; call only after [`Store::save_results`] succeeded.
    pub fn mark_done(&self, id: &JobId, attempt: i64, files: &JobFiles) -> Result<bool, Error> {
        let lens = file_bytes(files).map(|b| i64::try_from(b.len()).unwrap_or(i64::MAX));
        self.update_run(
            "UPDATE jobs SET status = 'done', progress = 1, error = NULL, obj_len = ?3, report_len = ?4, atlas_len = ?5, updated_ms = ?6 WHERE id = ?1 AND attempt = ?2 AND status = 'running'",
            id,
            attempt,
            &[&lens[0], &lens[1], &lens[2], &now_ms()],
        )
    }

    /// Marks run `attempt` failed with `reason`.
    pub fn mark_failed(&self, id: &JobId, attempt: i64, reason: &str) -> Result<bool, Error> {
        self.update_run(
            "UPDATE jobs SET status = 'failed', error = ?3, updated_ms = ?4 WHERE id = ?1 AND attempt = ?2 AND status = 'running'",
            id,
            attempt,
            &[&reason, &now_ms()],
        )
    }

    /// Puts run `attempt` back in the queue (shutdown before it finished).
    pub fn requeue(&self, id: &JobId, attempt: i64) -> Result<bool, Error> {
        self.update_run(
            "UPDATE jobs SET status = 'queued', progress = 0, updated_ms = ?3 WHERE id = ?1 AND attempt = ?2 AND status = 'running'",
            id,
            attempt,
            &[&now_ms()],
        )
    }

    /// The job `id`, or `None` when there is no such job.
    pub fn get(&self, id: &JobId) -> Result<Option<JobView>, Error> {
        let conn = lock(&self.read);
        let row: Option<(String, f64, Option<String>)> = conn
            .query_row(
                "SELECT status, progress, error FROM jobs WHERE id = ?1",
                params![id.as_str()],
                |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
            )
            .optional()
            .map_err(|e| self.db_error(e))?;
        Ok(row.and_then(|(status, progress, error)| {
            Some(JobView {
                id: id.clone(),
                status: JobStatus::parse(&status)?,
                progress,
                error,
            })
        }))
    }

    /// Number of jobs in each status.
    pub fn counts(&self) -> Result<Counts, Error> {
        let conn = lock(&self.read);
        let mut stmt = conn
            .prepare_cached("SELECT status, COUNT(*) FROM jobs GROUP BY status")
            .map_err(|e| self.db_error(e))?;
        let rows = stmt
            .query_map([], |r| Ok((r.get::<_, String>(0)?, r.get::<_, i64>(1)?)))
            .map_err(|e| self.db_error(e))?;
        let mut counts = Counts::default();
        for row in rows {
            let (status, n) = row.map_err(|e| self.db_error(e))?;
            let n = u64::try_from(n).unwrap_or(0);
            match JobStatus::parse(&status) {
                Some(JobStatus::Queued) => counts.queued = n,
                Some(JobStatus::Running) => counts.running = n,
                Some(JobStatus::Done) => counts.done = n,
                Some(JobStatus::Failed) => counts.failed = n,
                None => {}
            }
        }
        Ok(counts)
    }
}

fn file_bytes(files: &JobFiles) -> [&[u8]; 3] {
    [&files.obj, &files.report, &files.atlas]
}
