//! `polyflat inspect --json` on the public-domain Spot meshes. Expected values: the
//! vertex, face and arity counts stated in the fixtures' README; E, χ and UV islands
//! from the independent script tests/reference/spot_counts.py (own OBJ parsing, scipy
//! connected components), whose output is committed in tests/reference/spot_counts.txt;
//! genus 0 from χ = 2 with no boundary.

use serde_json::Value;
use std::path::PathBuf;
use std::process::Command;

/// `POLYFLAT_FIXTURES`, else the first `shared/fixtures` found walking up from the crate.
fn spot_dir() -> Option<PathBuf> {
    if let Ok(dir) = std::env::var("POLYFLAT_FIXTURES") {
        return Some(PathBuf::from(dir).join("spot"));
    }
    let mut dir = Some(PathBuf::from(env!("CARGO_MANIFEST_DIR")));
    while let Some(d) = dir {
        let candidate = d.join("shared").join("fixtures").join("spot");
        if candidate.is_dir() {
            return Some(candidate);
        }
        dir = d.parent().map(PathBuf::from);
    }
    None
}

/// The Spot file, or `None` (with a skip message) when absent; fails under `CI`.
fn spot(name: &str) -> Option<PathBuf> {
    let path = spot_dir().map(|d| d.join(name)).filter(|p| p.is_file());
    if path.is_none() {
        assert!(
            std::env::var_os("CI").is_none(),
            "Spot fixture {name} is missing (set POLYFLAT_FIXTURES)"
        );
        eprintln!("skipped: Spot fixture {name} not found (set POLYFLAT_FIXTURES)");
    }
    path
}

fn inspect(path: &PathBuf) -> (i32, Value) {
    let out = Command::new(env!("CARGO_BIN_EXE_polyflat"))
        .args(["inspect", "--json"])
        .arg(path)
        .output()
        .unwrap();
    (
        out.status.code().unwrap(),
        serde_json::from_slice(&out.stdout).unwrap(),
    )
}

#[test]
fn spot_quadrangulated() {
    let Some(path) = spot("spot_quadrangulated.obj") else {
        return;
    };
    let (code, j) = inspect(&path);
    assert_eq!(code, 0, "{j}");
    assert_eq!(j["vertices"], 2930);
    assert_eq!(j["faces"], 2928);
    assert_eq!(j["face_arity"], serde_json::json!({"4": 2928}));
    // Closed quad mesh: E = 4F/2.
    assert_eq!(j["edges"], 5856);
    assert_eq!(j["boundary_loops"], 0);
    assert_eq!(j["components"], 1);
    assert_eq!(j["euler_characteristic"], 2);
    assert_eq!(j["genus"], 0);
    assert_eq!(j["uv_charts"], 13);
    assert_eq!(j["problems"], serde_json::json!([]));
}

#[test]
fn spot_control_mesh() {
    let Some(path) = spot("spot_control_mesh.obj") else {
        return;
    };
    let (code, j) = inspect(&path);
    assert_eq!(code, 0, "{j}");
    assert_eq!(j["vertices"], 188);
    assert_eq!(j["faces"], 180);
    assert_eq!(
        j["face_arity"],
        serde_json::json!({"3": 4, "4": 160, "5": 16})
    );
    // Closed: 2E = 3·4 + 4·160 + 5·16 = 732.
    assert_eq!(j["edges"], 366);
    assert_eq!(j["boundary_loops"], 0);
    assert_eq!(j["euler_characteristic"], 2);
    assert_eq!(j["genus"], 0);
    assert_eq!(j["uv_charts"], 13);
    assert_eq!(j["problems"], serde_json::json!([]));
}
