//! The batch runner in-process, with a test double for the per-asset job
//! (`batch_support::FakeJob`, whose outputs are predictable byte for byte).
//! Expected values follow from the batch contract (issue item 1): outputs per
//! input, summary rows, skip/force rules, naming rule in `src/batch/naming.rs`.

mod batch_support;

use batch_support::*;
use polyflat::batch::{self, BatchConfig, Status, Summary, Unobserved};
use polyflat::settings::EnergyKind;
use polyflat::Settings;
use std::path::{Path, PathBuf};

fn config(out: &Path) -> BatchConfig {
    BatchConfig {
        out_dir: out.to_owned(),
        jobs: 2,
        force: false,
        settings: Settings::default(),
    }
}

fn run(inputs: &[&Path], config: &BatchConfig, job: &FakeJob) -> Summary {
    let inputs: Vec<PathBuf> = inputs.iter().map(|p| p.to_path_buf()).collect();
    batch::run(&inputs, config, job, &Unobserved).unwrap()
}

fn statuses(s: &Summary) -> Vec<Status> {
    s.rows.iter().map(|r| r.status).collect()
}

/// in/a.obj (4 faces), in/b.obj (broken), in/sub/c.obj (1 face).
fn three_inputs(root: &Path) -> PathBuf {
    let dir = root.join("in");
    write(&dir, "a.obj", &grid_obj(2));
    write(&dir, "b.obj", &broken_obj());
    write(&dir, "sub/c.obj", &grid_obj(1));
    dir
}

#[test]
fn a_broken_file_fails_alone_and_the_summary_names_it() {
    let tmp = tempfile::tempdir().unwrap();
    let inputs = three_inputs(tmp.path());
    let inputs = [inputs.as_path()];
    let out = tmp.path().join("out");
    let job = FakeJob::default();
    let s = run(&inputs, &config(&out), &job);

    let input_of = |rel: &str| inputs[0].join(rel).display().to_string();
    assert_eq!(
        s.rows.iter().map(|r| r.input.clone()).collect::<Vec<_>>(),
        [input_of("a.obj"), input_of("b.obj"), input_of("sub/c.obj")]
    );
    assert_eq!(statuses(&s), [Status::Done, Status::Failed, Status::Done]);
    assert_eq!(s.exit_code(), 1);
    let b = &s.rows[1];
    assert_eq!(
        b.error.as_deref(),
        Some(format!("{}:3: {BROKEN_MESSAGE}", input_of("b.obj")).as_str())
    );
    assert_eq!(b.metrics, batch::KeyMetrics::default());
    // FakeJob: stretch_l2 = 1 + faces/100.
    assert_eq!(s.rows[0].metrics.stretch_l2, Some(1.04));
    assert_eq!(s.rows[2].metrics.stretch_l2, Some(1.01));
    assert_eq!(s.rows[2].metrics.charts, Some(1));

    assert_eq!(
        names_in(&out),
        [
            "a.atlas.png",
            "a.obj",
            "a.report.json",
            "c.atlas.png",
            "c.obj",
            "c.report.json",
            "summary.csv",
            "summary.json"
        ]
    );
    let a = expected_output(&grid_obj(2), "a", &Settings::default());
    assert_eq!(std::fs::read(out.join("a.obj")).unwrap(), a.obj);
    assert_eq!(std::fs::read(out.join("a.report.json")).unwrap(), a.report);
    assert_eq!(std::fs::read(out.join("a.atlas.png")).unwrap(), a.atlas);

    let json: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("summary.json")).unwrap()).unwrap();
    assert_eq!(json.as_array().unwrap().len(), 3);
    assert_eq!(json[1]["status"], "failed");
    assert_eq!(json[1]["error"], b.error.clone().unwrap());
    assert_eq!(json[1]["stretch_l2"], serde_json::Value::Null);
    assert_eq!(json[0]["output"], "a.obj");
    assert_eq!(json[0]["stretch_l2"], 1.04);
    let csv = std::fs::read_to_string(out.join("summary.csv")).unwrap();
    assert_eq!(csv.lines().count(), 4);
    assert!(csv.lines().nth(2).unwrap().contains(",failed,"), "{csv}");
}

#[test]
fn a_rerun_skips_unchanged_assets_and_force_redoes_them() {
    let tmp = tempfile::tempdir().unwrap();
    let inputs = three_inputs(tmp.path());
    let inputs = [inputs.as_path()];
    let out = tmp.path().join("out");
    let job = FakeJob::default();
    let first = run(&inputs, &config(&out), &job);
    assert_eq!(job.calls(), 3);
    let before = snapshot(&out);

    let second = run(&inputs, &config(&out), &job);
    assert_eq!(job.calls(), 4, "only the broken input runs again");
    assert_eq!(
        statuses(&second),
        [Status::Skipped, Status::Failed, Status::Skipped]
    );
    assert_eq!(second.rows[0].metrics, first.rows[0].metrics);
    assert_eq!(second.exit_code(), 1);
    let after = snapshot(&out);
    let without_summary = |s: &[(PathBuf, Vec<u8>)]| {
        s.iter()
            .filter(|(p, _)| !p.starts_with("summary.json") && !p.starts_with("summary.csv"))
            .cloned()
            .collect::<Vec<_>>()
    };
    assert_eq!(without_summary(&after), without_summary(&before));

    let forced = run(
        &inputs,
        &BatchConfig {
            force: true,
            ..config(&out)
        },
        &job,
    );
    assert_eq!(job.calls(), 7);
    assert_eq!(
        statuses(&forced),
        [Status::Done, Status::Failed, Status::Done]
    );
}

#[test]
fn changed_input_settings_or_outputs_redo_exactly_the_affected_assets() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("in");
    for name in ["p", "q", "r", "s"] {
        write(&dir, &format!("{name}.obj"), &grid_obj(1));
    }
    let inputs = [dir.as_path()];
    let out = tmp.path().join("out");
    let job = FakeJob::default();
    run(&inputs, &config(&out), &job);

    write(&dir, "p.obj", &grid_obj(2));
    std::fs::write(out.join("q.atlas.png"), b"edited").unwrap();
    std::fs::remove_file(out.join(".polyflat-batch/r.json")).unwrap();
    let s = run(&inputs, &config(&out), &job);
    assert_eq!(
        statuses(&s),
        [Status::Done, Status::Done, Status::Done, Status::Skipped]
    );
    assert_eq!(std::fs::read(out.join("q.atlas.png")).unwrap(), b"PNG:q");

    let arap = Settings {
        energy: EnergyKind::Arap,
        ..Settings::default()
    };
    let s = run(
        &inputs,
        &BatchConfig {
            settings: arap,
            ..config(&out)
        },
        &job,
    );
    assert!(s.rows.iter().all(|r| r.status == Status::Done));
    // Thread count is not part of the key: changing it alone skips everything.
    let threads = Settings {
        energy: EnergyKind::Arap,
        threads: Some(1),
        ..Settings::default()
    };
    let s = run(
        &inputs,
        &BatchConfig {
            settings: threads,
            ..config(&out)
        },
        &job,
    );
    assert!(s.rows.iter().all(|r| r.status == Status::Skipped));
}

#[test]
fn a_panicking_job_is_one_failed_row() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("in");
    write(&dir, "a.obj", &grid_obj(1));
    write(&dir, "b.obj", &grid_obj(1));
    write(&dir, "c.obj", &grid_obj(1));
    let out = tmp.path().join("out");
    let job = FakeJob {
        panic_on: Some("b"),
        ..FakeJob::default()
    };
    let s = run(&[dir.as_path()], &config(&out), &job);
    assert_eq!(statuses(&s), [Status::Done, Status::Failed, Status::Done]);
    let e = s.rows[1].error.as_deref().unwrap();
    assert!(
        e.contains("b.obj: internal error") && e.contains("test double panics on b"),
        "{e}"
    );
    assert!(!out.join("b.obj").exists());
}

#[test]
fn manifest_overrides_apply_per_asset_over_the_command_line_options() {
    let tmp = tempfile::tempdir().unwrap();
    let m = tmp.path().join("m");
    write(&m, "x.obj", &grid_obj(1));
    write(&m, "sub/y.obj", &grid_obj(1));
    let manifest = write(
        &m,
        "assets.toml",
        "[[asset]]\npath = \"x.obj\"\nenergy = \"arap\"\n\n[[asset]]\npath = \"sub/y.obj\"\npadding = 8\n",
    );
    let out = tmp.path().join("out");
    let base = Settings {
        energy: EnergyKind::Conformal,
        ..Settings::default()
    };
    let job = FakeJob::default();
    let s = run(
        &[manifest.as_path()],
        &BatchConfig {
            settings: base,
            ..config(&out)
        },
        &job,
    );
    assert_eq!(statuses(&s), [Status::Done, Status::Done]);
    assert_eq!(s.rows[1].input, m.join("sub/y.obj").display().to_string());
    let head = |f: &str| {
        let text = std::fs::read_to_string(out.join(f)).unwrap();
        text.lines().next().unwrap().to_owned()
    };
    assert_eq!(head("x.obj"), "# flattened energy=arap padding=4");
    assert_eq!(head("y.obj"), "# flattened energy=conformal padding=8");
}

#[test]
fn a_bad_manifest_stops_the_batch_before_anything_is_written() {
    let tmp = tempfile::tempdir().unwrap();
    write(tmp.path(), "x.obj", &grid_obj(1));
    let manifest = write(
        tmp.path(),
        "bad.toml",
        "[[asset]]\npath = \"x.obj\"\n\n[[asset]]\npath = \"x.obj\"\npading = 8\n",
    );
    let out = tmp.path().join("out");
    let e = batch::run(
        std::slice::from_ref(&manifest),
        &config(&out),
        &FakeJob::default(),
        &Unobserved,
    )
    .unwrap_err()
    .to_string();
    assert_eq!(
        e,
        format!(
            "{}:6: unknown option 'pading'; the options are path, {}",
            manifest.display(),
            polyflat::cli::options::FlattenOptions::names().join(", ")
        )
    );
    assert!(!out.exists());

    let range = write(
        tmp.path(),
        "range.toml",
        "[[asset]]\npath = \"x.obj\"\npadding = 900\n",
    );
    let e = batch::run(
        std::slice::from_ref(&range),
        &config(&out),
        &FakeJob::default(),
        &Unobserved,
    )
    .unwrap_err()
    .to_string();
    assert!(
        e.starts_with(&format!("{}:2: --padding 900", range.display())),
        "{e}"
    );
}

#[test]
fn name_clashes_take_the_folder_name_then_a_suffix_and_are_reported() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path().join("in");
    write(&d, "a/spot.obj", &grid_obj(1));
    write(&d, "b/spot.obj", &grid_obj(1));
    write(&d, "cow.obj", &grid_obj(1));
    write(&d, "deep/a/spot.obj", &grid_obj(1));
    let out = tmp.path().join("out");
    let s = run(&[d.as_path()], &config(&out), &FakeJob::default());
    let got: Vec<(String, Option<String>, Option<String>)> = s
        .rows
        .iter()
        .map(|r| (r.input.clone(), r.output.clone(), r.renamed_from.clone()))
        .collect();
    let row = |rel: &str, out: &str, renamed: bool| {
        (
            d.join(rel).display().to_string(),
            Some(out.to_owned()),
            renamed.then(|| "spot".to_owned()),
        )
    };
    assert_eq!(
        got,
        [
            row("a/spot.obj", "a_spot.obj", true),
            row("b/spot.obj", "b_spot.obj", true),
            row("cow.obj", "cow.obj", false),
            row("deep/a/spot.obj", "a_spot-2.obj", true),
        ]
    );
    assert!(out.join("a_spot-2.report.json").exists());
    let csv = std::fs::read_to_string(out.join("summary.csv")).unwrap();
    assert!(csv.contains("a_spot-2.obj,spot,done"), "{csv}");
}

#[test]
fn missing_inputs_and_empty_folders_are_failed_rows_and_outputs_never_overwrite_inputs() {
    let tmp = tempfile::tempdir().unwrap();
    let empty = tmp.path().join("empty");
    std::fs::create_dir_all(&empty).unwrap();
    let out = tmp.path().join("out");
    let inside = write(&out, "z.obj", &grid_obj(1));
    let missing = tmp.path().join("nope.obj");
    let s = run(
        &[&missing, &empty, &inside],
        &config(&out),
        &FakeJob::default(),
    );
    assert_eq!(statuses(&s), [Status::Failed; 3]);
    assert!(s.rows[0]
        .error
        .as_deref()
        .unwrap()
        .starts_with(&format!("{}: cannot read:", missing.display())));
    assert_eq!(s.rows[0].output, None);
    assert_eq!(
        s.rows[1].error.as_deref().unwrap(),
        format!("{}: the folder holds no .obj files", empty.display())
    );
    assert!(s.rows[2]
        .error
        .as_deref()
        .unwrap()
        .contains("would overwrite it"));
    assert_eq!(std::fs::read_to_string(&inside).unwrap(), grid_obj(1));
}

#[test]
fn a_folder_scan_leaves_out_the_output_folder_and_hidden_entries() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path().join("in");
    write(&d, "m.obj", &grid_obj(1));
    write(&d, ".hidden/h.obj", &grid_obj(1));
    write(&d, "notes.txt", "not a mesh");
    let out = d.join("out");
    let job = FakeJob::default();
    run(&[d.as_path()], &config(&out), &job);
    let s = run(&[d.as_path()], &config(&out), &job);
    assert_eq!(s.rows.len(), 1, "{s:?}");
    assert_eq!(s.rows[0].status, Status::Skipped);
}

#[cfg(unix)]
#[test]
fn outputs_get_the_permissions_of_an_ordinary_new_file() {
    use std::os::unix::fs::PermissionsExt;
    let tmp = tempfile::tempdir().unwrap();
    let m = write(tmp.path(), "in/m.obj", &grid_obj(1));
    let out = tmp.path().join("out");
    run(&[m.as_path()], &config(&out), &FakeJob::default());
    // Reference: a file created by std::fs::write in the same folder (0o666 less the umask).
    let reference = write(&out, "reference.txt", "x");
    let mode = |p: &Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
    for f in [
        "m.obj",
        "m.report.json",
        "m.atlas.png",
        "summary.json",
        "summary.csv",
    ] {
        assert_eq!(mode(&out.join(f)), mode(&reference), "{f}");
    }
}
