//! An interrupted batch: the process is killed while one asset is being
//! flattened. Nothing partial may be left, and the next run must finish the job
//! (contract: issue item 1, atomic writes with the stamp written last).
//!
//! The test runs itself as a child process (same test, env var set) so that the
//! kill is a real SIGKILL of a real process.

mod batch_support;

use batch_support::*;
use polyflat::batch::{self, stamp::TEMP_PREFIX, BatchConfig, Status, Unobserved};
use polyflat::Settings;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Duration;

const CHILD: &str = "POLYFLAT_BATCH_CRASH_CHILD";
const TEST: &str = "killed_mid_batch_leaves_no_partial_output_and_the_rerun_finishes";

fn config(out: &Path, jobs: usize) -> BatchConfig {
    BatchConfig {
        out_dir: out.to_owned(),
        jobs,
        force: false,
        settings: Settings::default(),
    }
}

#[test]
fn killed_mid_batch_leaves_no_partial_output_and_the_rerun_finishes() {
    if let Ok(root) = std::env::var(CHILD) {
        // Child: one asset at a time; "b" blocks until the parent kills us.
        let root = PathBuf::from(root);
        let job = FakeJob {
            block_on: Some(("b", root.join("b-started"))),
            ..FakeJob::default()
        };
        let _ = batch::run(
            &[root.join("in")],
            &config(&root.join("out"), 1),
            &job,
            &Unobserved,
        );
        return;
    }
    let tmp = tempfile::tempdir().unwrap();
    let root = tmp.path();
    for name in ["a", "b", "c"] {
        write(root, &format!("in/{name}.obj"), &grid_obj(2));
    }
    let out = root.join("out");
    let mut child = Command::new(std::env::current_exe().unwrap())
        .args(["--exact", TEST, "--nocapture", "--test-threads=1"])
        .env(CHILD, root)
        .spawn()
        .unwrap();
    let started = wait_for(&root.join("b-started"), Duration::from_secs(120));
    child.kill().unwrap();
    child.wait().unwrap();
    assert!(started, "the child never reached asset b");

    // Asset a is complete with its stamp; nothing of b or c, no summary yet.
    assert_eq!(names_in(&out), ["a.atlas.png", "a.obj", "a.report.json"]);
    assert_eq!(names_in(&out.join(".polyflat-batch")), ["a.json"]);

    // A temporary file as a kill during a write would leave it.
    std::fs::write(out.join(format!("{TEMP_PREFIX}b.obj")), b"half a mes").unwrap();

    let job = FakeJob::default();
    let s = batch::run(&[root.join("in")], &config(&out, 2), &job, &Unobserved).unwrap();
    assert_eq!(
        s.rows.iter().map(|r| r.status).collect::<Vec<_>>(),
        [Status::Skipped, Status::Done, Status::Done]
    );
    assert_eq!(job.calls(), 2);
    assert!(names_in(&out).iter().all(|n| !n.starts_with(TEMP_PREFIX)));
    for name in ["a", "b", "c"] {
        let expected = expected_output(&grid_obj(2), name, &Settings::default());
        assert_eq!(
            std::fs::read(out.join(format!("{name}.obj"))).unwrap(),
            expected.obj
        );
        assert_eq!(
            std::fs::read(out.join(format!("{name}.atlas.png"))).unwrap(),
            expected.atlas
        );
    }
}
