//! `polyflat compare` end to end: the real binary on the bundled fixtures.
//!
//! Checks that the comparison files agree with the per-energy reports they
//! summarise (numbers equal to 1e-12, the JSON round-trip of the same f64), that
//! every energy flattened the same charts, the image sizes the sheet's layout
//! promises (src/compare/sheet.rs), and that bad usage and bad meshes write nothing.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const ENERGIES: [&str; 3] = ["arap", "symmetric-dirichlet", "conformal"];

fn polyflat(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_polyflat"))
        .args(args)
        .output()
        .unwrap()
}

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name)
}

fn json(path: &Path) -> serde_json::Value {
    serde_json::from_slice(&std::fs::read(path).unwrap()).unwrap()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// Runs compare on `mesh` for all three energies into a fresh folder.
fn compare(mesh: &str, extra: &[&str]) -> (tempfile::TempDir, PathBuf) {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("cmp");
    let m = fixture(mesh);
    let mut args = vec![
        "--quiet",
        "compare",
        m.to_str().unwrap(),
        "--energies",
        "arap,symmetric-dirichlet,conformal",
        "--out-dir",
        out.to_str().unwrap(),
        "--resolution",
        "256",
    ];
    args.extend_from_slice(extra);
    let run = polyflat(&args);
    assert_eq!(run.status.code(), Some(0), "stderr: {}", text(&run.stderr));
    assert!(
        run.stderr.is_empty(),
        "--quiet printed: {}",
        text(&run.stderr)
    );
    (tmp, out)
}

#[test]
fn comparison_files_agree_with_each_energys_report() {
    let (_tmp, out) = compare("wavy_quads.obj", &[]);
    for e in ENERGIES {
        for ext in ["obj", "report.json", "atlas.png"] {
            assert!(
                out.join(format!("{e}.{ext}")).is_file(),
                "{e}.{ext} missing"
            );
        }
    }
    for f in [
        "comparison.md",
        "comparison.json",
        "comparison.png",
        "convergence.png",
    ] {
        assert!(out.join(f).is_file(), "{f} missing");
    }

    let rows = json(&out.join("comparison.json"));
    let rows = rows.as_array().unwrap();
    assert_eq!(rows.len(), 3);
    let md = std::fs::read_to_string(out.join("comparison.md")).unwrap();
    let mut atlas_width = 0;
    let mut atlas_height = 0;
    let mut charts: Option<serde_json::Value> = None;
    for (row, e) in rows.iter().zip(ENERGIES) {
        let row = row.as_object().unwrap();
        assert_eq!(row["energy"], e);
        let report = json(&out.join(format!("{e}.report.json")));
        let global = report["global"].as_object().unwrap();
        // Exactly the keys of `global`, plus time_ms (energy is one of global's keys).
        assert_eq!(row.len(), global.len() + 1, "{row:?}");
        for (key, value) in global {
            match value.as_f64() {
                Some(x) => {
                    let y = row[key].as_f64().unwrap_or(f64::NAN);
                    assert!((x - y).abs() <= 1e-12, "{e} {key}: report {x}, row {y}");
                }
                None => assert_eq!(&row[key], value, "{e} {key}"),
            }
        }
        let time = row["time_ms"].as_f64().unwrap();
        assert_eq!(time, report["timings_ms"]["solve"].as_f64().unwrap());
        assert!(time >= 0.0);

        // The same charts: counts, faces and 3D areas per chart.
        let these: Vec<(u64, f64)> = report["charts"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| (c["faces"].as_u64().unwrap(), c["area_3d"].as_f64().unwrap()))
            .collect();
        assert_eq!(global["charts"].as_u64().unwrap() as usize, these.len());
        let these = serde_json::json!(these);
        match &charts {
            None => charts = Some(these),
            Some(first) => assert_eq!(first, &these, "{e} flattened other charts"),
        }

        // One table row per energy, with the JSON's iteration count.
        let line = md
            .lines()
            .find(|l| l.starts_with(&format!("| {e} |")))
            .unwrap_or_else(|| panic!("no row for {e} in\n{md}"));
        let cells: Vec<&str> = line.split('|').map(str::trim).collect();
        assert_eq!(cells[2], row["iterations"].to_string(), "{line}");

        let atlas = image::open(out.join(format!("{e}.atlas.png"))).unwrap();
        atlas_width += atlas.width();
        atlas_height = atlas_height.max(atlas.height());
    }
    assert_eq!(
        md.matches("\n| ").count(),
        4,
        "header plus three rows:\n{md}"
    );
    assert!(md.contains("the lowest L2 stretch"), "{md}");
    assert!(md.contains("Suggested energy: "), "{md}");

    // Side by side: the atlases' widths plus narrow gutters, a title strip above.
    let sheet = image::open(out.join("comparison.png")).unwrap();
    assert!(
        sheet.width() >= atlas_width && f64::from(sheet.width()) <= 1.05 * f64::from(atlas_width),
        "sheet {} wide for atlases {atlas_width} wide",
        sheet.width()
    );
    assert!(sheet.height() > atlas_height);
    let plot = image::open(out.join("convergence.png")).unwrap();
    // 1000 wide; the plot's 620 rows, then a 26-row legend line per energy and 12 more.
    assert_eq!((plot.width(), plot.height()), (1000, 620 + 3 * 26 + 12));
}

#[test]
fn automatic_seams_give_every_energy_the_same_charts() {
    let (_tmp, out) = compare("torus_quads.obj", &["--seams", "auto"]);
    let charts: Vec<serde_json::Value> = ENERGIES
        .iter()
        .map(|e| {
            let r = json(&out.join(format!("{e}.report.json")));
            assert_eq!(r["settings"]["seams"], "auto");
            let faces: Vec<u64> = r["charts"]
                .as_array()
                .unwrap()
                .iter()
                .map(|c| c["faces"].as_u64().unwrap())
                .collect();
            serde_json::json!([r["global"]["charts"], faces])
        })
        .collect();
    assert_eq!(charts[0], charts[1]);
    assert_eq!(charts[0], charts[2]);
}

fn refused(args: &[&str], code: i32) -> String {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("cmp");
    let mut all = vec!["compare"];
    all.extend_from_slice(args);
    all.extend_from_slice(&["--out-dir", out.to_str().unwrap()]);
    let run = polyflat(&all);
    assert_eq!(
        run.status.code(),
        Some(code),
        "stderr: {}",
        text(&run.stderr)
    );
    assert!(!out.exists(), "{} was written", out.display());
    text(&run.stderr)
}

#[test]
fn bad_usage_exits_2_and_writes_nothing() {
    let m = fixture("wavy_quads.obj");
    let m = m.to_str().unwrap();
    let e = refused(&[m, "--energies", "arap,cotan"], 2);
    assert!(e.contains("'cotan'"), "{e}");
    for name in ENERGIES {
        assert!(e.contains(name), "{e} does not list {name}");
    }
    let e = refused(&[m, "--energies", "arap,conformal,arap"], 2);
    assert!(e.contains("--energies lists arap twice"), "{e}");
    let e = refused(&[m, "--energies", "arap", "--energy", "conformal"], 2);
    assert!(e.contains("--energy"), "{e}");
    let e = refused(
        &[m, "--energies", "conformal", "--solver", "local-global"],
        2,
    );
    assert!(e.contains("local-global"), "{e}");
    let e = refused(&[m, "--energies", "arap", "--padding", "900"], 2);
    assert!(e.contains("--padding"), "{e}");
}

#[test]
fn bad_mesh_exits_1_naming_the_line_and_writes_nothing() {
    let tmp = tempfile::tempdir().unwrap();
    let bad = tmp.path().join("bad.obj");
    std::fs::write(&bad, "v 0 0 0\nv 1 0 0\nv 1 1 0\nf 1 2 9\n").unwrap();
    let e = refused(&[bad.to_str().unwrap(), "--energies", "arap,conformal"], 1);
    assert!(e.contains("bad.obj:4:"), "{e}");
}
