//! `polyflat reflatten` on the command line: a working run writes the OBJ and a
//! report with the `reflatten` section; a bad previous file fails with exit 1, one
//! sentence naming the file, and no output written.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name)
}

fn polyflat(args: &[&std::ffi::OsStr]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_polyflat"))
        .arg("--quiet")
        .args(args)
        .output()
        .unwrap()
}

fn reflatten(edited: &Path, previous: &Path, out: &Path, report: &Path) -> Output {
    polyflat(&[
        "reflatten".as_ref(),
        edited.as_os_str(),
        "--previous".as_ref(),
        previous.as_os_str(),
        "-o".as_ref(),
        out.as_os_str(),
        "--report".as_ref(),
        report.as_os_str(),
    ])
}

#[test]
fn the_fixtures_own_layout_is_carried_and_reported() {
    // wavy_quads.obj has UVs of its own: used as both the edit and the previous layout.
    let dir = tempfile::tempdir().unwrap();
    let (out, report) = (dir.path().join("out.obj"), dir.path().join("r.json"));
    let input = fixture("wavy_quads.obj");
    let o = reflatten(&input, &input, &out, &report);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let j: Value = serde_json::from_slice(&std::fs::read(&report).unwrap()).unwrap();
    let section = &j["reflatten"];
    assert_eq!(section["same_topology"], true);
    assert_eq!(section["drift_texels"]["max"], 0.0);
    assert_eq!(section["charts"][0]["status"], "carried");
    // The flatten report's keys are all there.
    for key in [
        "tool",
        "input",
        "settings",
        "charts",
        "global",
        "timings_ms",
        "history",
    ] {
        assert!(j.get(key).is_some(), "{key} missing");
    }
    assert!(std::fs::read_to_string(&out).unwrap().contains("\nvt "));
}

#[test]
fn a_bad_previous_file_fails_naming_it_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let (out, report) = (dir.path().join("out.obj"), dir.path().join("r.json"));
    let edited = fixture("wavy_quads.obj");

    let broken = dir.path().join("broken.obj");
    std::fs::write(&broken, "v 0 0 0\nv 1 0 0\nf 1 2 7\n").unwrap();
    let no_uvs = dir.path().join("plain.obj");
    std::fs::write(&no_uvs, "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n").unwrap();
    let missing = dir.path().join("missing.obj");
    for (previous, expect) in [
        (&broken, "broken.obj:3:"),
        (&no_uvs, "has no UVs to keep; flatten it first"),
        (&missing, "missing.obj"),
    ] {
        let o = reflatten(&edited, previous, &out, &report);
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(1), "{err}");
        assert!(err.contains(expect), "{err}");
        assert!(
            err.contains(&*previous.file_name().unwrap().to_string_lossy()),
            "{err}"
        );
        assert_eq!(err.trim().lines().count(), 1, "{err}");
        assert!(!out.exists() && !report.exists());
    }
    // Seams are always the previous layout's.
    let o = polyflat(&[
        "reflatten".as_ref(),
        edited.as_os_str(),
        "--previous".as_ref(),
        edited.as_os_str(),
        "-o".as_ref(),
        out.as_os_str(),
        "--seams".as_ref(),
        "auto".as_ref(),
    ]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--seams auto"));
    assert!(!out.exists());
    // The output may not be one of the inputs.
    let o = reflatten(&edited, &edited, &edited, &report);
    assert_eq!(o.status.code(), Some(1));
    assert!(!report.exists());
}
