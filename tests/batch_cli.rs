//! `polyflat batch` end to end: the real binary and the real flattening pipeline
//! on small planar quad grids.
//!
//! Expected metric values are analytic: a planar grid is its own isometric
//! flattening, so after the common rescale (DESIGN.md §3) L2 stretch is 1 (its
//! lower bound, Sander et al. 2001), angle distortion 1, area distortion 0, and
//! nothing flips or overlaps. Tolerance 1e-4 covers the solver's stopping rule.

mod batch_support;

use batch_support::*;
use std::path::Path;
use std::process::{Command, Output};

fn polyflat(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_polyflat"))
        .args(args)
        .output()
        .unwrap()
}

fn summary(out: &Path) -> Vec<serde_json::Value> {
    let bytes = std::fs::read(out.join("summary.json")).unwrap();
    serde_json::from_slice::<serde_json::Value>(&bytes)
        .unwrap()
        .as_array()
        .unwrap()
        .clone()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

#[test]
fn batch_over_a_folder_flattens_the_good_meshes_reports_the_broken_one_and_skips_on_rerun() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("in");
    write(&dir, "grid2.obj", &grid_obj(2));
    let broken = write(
        &dir,
        "nested/broken.obj",
        "v 0 0 0\nv 1 0 0\nv 1 1 0\nf 1 2 9\n",
    );
    write(&dir, "nested/grid3.obj", &grid_obj(3));
    let out = tmp.path().join("out");
    let (d, o) = (dir.to_str().unwrap(), out.to_str().unwrap());

    let run = polyflat(&[
        "batch",
        d,
        "--out-dir",
        o,
        "--jobs",
        "2",
        "--max-iterations",
        "50",
    ]);
    assert_eq!(run.status.code(), Some(1), "stderr: {}", text(&run.stderr));
    let rows = summary(&out);
    let status: Vec<&str> = rows.iter().map(|r| r["status"].as_str().unwrap()).collect();
    assert_eq!(status, ["done", "failed", "done"]);
    let error = rows[1]["error"].as_str().unwrap();
    assert!(
        error.starts_with(&format!("{}:4:", broken.display())),
        "{error}"
    );
    assert!(text(&run.stderr).contains(error));
    for row in [&rows[0], &rows[2]] {
        let m = |k: &str| row[k].as_f64().unwrap();
        assert!((m("stretch_l2") - 1.0).abs() < 1e-4, "{row}");
        assert!((m("angle_distortion_mean") - 1.0).abs() < 1e-4, "{row}");
        assert!(m("area_distortion_mean").abs() < 1e-4, "{row}");
        assert_eq!(row["flipped_faces"], 0);
        assert_eq!(row["overlapping_face_pairs"], 0);
    }
    for name in ["grid2", "grid3"] {
        let obj = std::fs::read_to_string(out.join(format!("{name}.obj"))).unwrap();
        assert!(
            obj.lines().any(|l| l.starts_with("vt ")),
            "{name}.obj has no vt"
        );
        let png = std::fs::read(out.join(format!("{name}.atlas.png"))).unwrap();
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
        let report: serde_json::Value = serde_json::from_slice(
            &std::fs::read(out.join(format!("{name}.report.json"))).unwrap(),
        )
        .unwrap();
        assert_eq!(report["settings"]["max_iterations"], 50);
    }
    assert!(!out.join("broken.obj").exists());
    let csv = std::fs::read_to_string(out.join("summary.csv")).unwrap();
    assert_eq!(csv.lines().count(), 4);

    let before = std::fs::read(out.join("grid3.atlas.png")).unwrap();
    let again = polyflat(&[
        "batch",
        d,
        "--out-dir",
        o,
        "--max-iterations",
        "50",
        "--quiet",
    ]);
    assert_eq!(again.status.code(), Some(1));
    assert!(again.stdout.is_empty());
    let status: Vec<String> = summary(&out)
        .iter()
        .map(|r| r["status"].to_string())
        .collect();
    assert_eq!(status, ["\"skipped\"", "\"failed\"", "\"skipped\""]);
    assert_eq!(std::fs::read(out.join("grid3.atlas.png")).unwrap(), before);

    let forced = polyflat(&[
        "batch",
        d,
        "--out-dir",
        o,
        "--max-iterations",
        "50",
        "--force",
    ]);
    assert_eq!(forced.status.code(), Some(1));
    assert!(
        text(&forced.stdout).contains("2 done, 0 skipped, 1 failed"),
        "{}",
        text(&forced.stdout)
    );
}

#[test]
fn a_clean_batch_exits_0_and_a_manifest_overrides_options() {
    let tmp = tempfile::tempdir().unwrap();
    write(tmp.path(), "m/a.obj", &grid_obj(2));
    let manifest = write(
        tmp.path(),
        "m/list.toml",
        "[[asset]]\npath = \"a.obj\"\nenergy = \"conformal\"\npadding = 7\n",
    );
    let out = tmp.path().join("out");
    let run = polyflat(&[
        "batch",
        manifest.to_str().unwrap(),
        "--out-dir",
        out.to_str().unwrap(),
        "--energy",
        "arap",
    ]);
    assert_eq!(run.status.code(), Some(0), "stderr: {}", text(&run.stderr));
    let report: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("a.report.json")).unwrap()).unwrap();
    assert_eq!(report["settings"]["energy"], "conformal");
    assert_eq!(report["settings"]["padding"], 7);
}

#[test]
fn usage_errors_exit_2_and_manifest_errors_name_the_line() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let o = out.to_str().unwrap();
    let bad = polyflat(&["batch", "x.obj", "--out-dir", o, "--energy", "cotan"]);
    assert_eq!(bad.status.code(), Some(2));
    let bad = polyflat(&["batch", "x.obj", "--out-dir", o, "--padding", "900"]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(text(&bad.stderr).contains("--padding"));

    let manifest = write(
        tmp.path(),
        "m.toml",
        "[[asset]]\npath = \"a.obj\"\nenrgy = \"arap\"\n",
    );
    let run = polyflat(&["batch", manifest.to_str().unwrap(), "--out-dir", o]);
    assert_eq!(run.status.code(), Some(1));
    assert!(
        text(&run.stderr).contains(&format!("{}:3: unknown option 'enrgy'", manifest.display())),
        "{}",
        text(&run.stderr)
    );
    assert!(!out.exists());

    let help = polyflat(&["batch", "--help"]);
    let help = text(&help.stdout);
    for option in [
        "--out-dir",
        "--jobs",
        "--force",
        "--energy",
        "--atlas-metric",
        "--threads",
    ] {
        assert!(help.contains(option), "--help lacks {option}");
    }
}
