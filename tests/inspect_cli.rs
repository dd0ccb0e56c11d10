//! `polyflat inspect` end to end on the generated fixtures. Expected counts are
//! analytic (hand counts; χ = V − E + F; genus from χ = 2 − 2g − b); the fixtures are
//! made by examples/make_fixtures.rs.

use serde_json::Value;
use std::process::{Command, Output};

fn fixture(name: &str) -> String {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name)
        .display()
        .to_string()
}

fn polyflat(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_polyflat"))
        .args(args)
        .output()
        .unwrap()
}

fn inspect_json(path: &str) -> (i32, Value) {
    let out = polyflat(&["inspect", path, "--json"]);
    let json: Value = serde_json::from_slice(&out.stdout).unwrap();
    (out.status.code().unwrap(), json)
}

#[test]
fn json_has_exactly_the_contract_keys() {
    let (code, json) = inspect_json(&fixture("cube_quads.obj"));
    assert_eq!(code, 0);
    let mut keys: Vec<&str> = json
        .as_object()
        .unwrap()
        .keys()
        .map(|k| k.as_str())
        .collect();
    keys.sort();
    assert_eq!(
        keys,
        vec![
            "boundary_loops",
            "components",
            "edges",
            "euler_characteristic",
            "face_arity",
            "faces",
            "genus",
            "non_planarity",
            "problems",
            "uv_charts",
            "vertices"
        ]
    );
    let mut np: Vec<&str> = json["non_planarity"]
        .as_object()
        .unwrap()
        .keys()
        .map(|k| k.as_str())
        .collect();
    np.sort();
    assert_eq!(np, vec!["max", "mean"]);
}

/// Hand counts for one fixture.
struct Expect {
    name: &'static str,
    vertices: u64,
    faces: u64,
    edges: u64,
    arity: Value,
    boundary_loops: u64,
    genus: i64,
    euler: i64,
    uv_charts: Value,
}

#[test]
fn fixture_reports_match_hand_counts() {
    use serde_json::json;
    let e = |name, vertices, faces, edges, arity, boundary_loops, genus, euler, uv_charts| Expect {
        name,
        vertices,
        faces,
        edges,
        arity,
        boundary_loops,
        genus,
        euler,
        uv_charts,
    };
    let expected = [
        e(
            "quad_grid.obj",
            20,
            12,
            31,
            json!({"4": 12}),
            1,
            0,
            1,
            Value::Null,
        ),
        e(
            "mixed_planar.obj",
            16,
            8,
            23,
            json!({"3": 2, "4": 3, "5": 2, "6": 1}),
            1,
            0,
            1,
            Value::Null,
        ),
        e(
            "cube_quads.obj",
            8,
            6,
            12,
            json!({"4": 6}),
            0,
            0,
            2,
            json!(6),
        ),
        e(
            "torus_quads.obj",
            48,
            48,
            96,
            json!({"4": 48}),
            0,
            1,
            0,
            json!(1),
        ),
        e(
            "hex_cylinder.obj",
            60,
            24,
            84,
            json!({"6": 24}),
            2,
            0,
            0,
            Value::Null,
        ),
        e(
            "wavy_quads.obj",
            42,
            30,
            71,
            json!({"4": 30}),
            1,
            0,
            1,
            json!(1),
        ),
    ];
    for x in expected {
        let name = x.name;
        let (code, j) = inspect_json(&fixture(name));
        assert_eq!(code, 0, "{name}");
        assert_eq!(j["vertices"], x.vertices, "{name}");
        assert_eq!(j["faces"], x.faces, "{name}");
        assert_eq!(j["edges"], x.edges, "{name}");
        assert_eq!(j["face_arity"], x.arity, "{name}");
        assert_eq!(j["boundary_loops"], x.boundary_loops, "{name}");
        assert_eq!(j["components"], 1, "{name}");
        assert_eq!(j["genus"], x.genus, "{name}");
        assert_eq!(j["euler_characteristic"], x.euler, "{name}");
        assert_eq!(j["uv_charts"], x.uv_charts, "{name}");
        assert_eq!(j["problems"], json!([]), "{name}");
    }
}

#[test]
fn non_planarity_is_zero_on_planar_fixtures_and_positive_on_wavy_ones() {
    // Planar fixtures: exactly planar input up to rounding, so below 1e-12.
    for name in ["quad_grid.obj", "mixed_planar.obj", "cube_quads.obj"] {
        let (_, j) = inspect_json(&fixture(name));
        assert!(
            j["non_planarity"]["max"].as_f64().unwrap() < 1e-12,
            "{name}"
        );
    }
    // The wavy quads bend by up to a few percent of their size (height field slope ≤
    // 0.33, quads 0.5 wide): somewhere between 1e-4 and 0.1.
    let (_, j) = inspect_json(&fixture("wavy_quads.obj"));
    let max = j["non_planarity"]["max"].as_f64().unwrap();
    let mean = j["non_planarity"]["mean"].as_f64().unwrap();
    assert!(max > 1e-4 && max < 0.1, "max {max}");
    assert!(mean > 0.0 && mean <= max, "mean {mean}");
}

#[test]
fn human_summary_and_quiet() {
    let out = polyflat(&["inspect", &fixture("mixed_planar.obj")]);
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.contains("faces           8 (2 triangles, 3 quads, 2 pentagons, 1 hexagon)"),
        "{text}"
    );
    assert!(
        text.contains("components      1 (Euler characteristic 1, genus 0, 1 boundary loop)"),
        "{text}"
    );
    assert!(text.contains("no problems found"), "{text}");

    let quiet = polyflat(&["inspect", "--quiet", &fixture("mixed_planar.obj")]);
    assert_eq!(quiet.status.code(), Some(0));
    assert!(quiet.stdout.is_empty() && quiet.stderr.is_empty());
}

#[test]
fn parse_error_is_one_sentence_and_exit_1() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("spot.obj");
    std::fs::write(&path, "v 0 0 0\nv 1 0 0\nv 0 1 0\nv 1 1 0\nf 1 2 9\n").unwrap();
    let out = polyflat(&["inspect", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(1));
    assert!(out.stdout.is_empty());
    assert_eq!(
        String::from_utf8(out.stderr).unwrap(),
        format!(
            "{}:5: face refers to vertex 9, but the file defines only 4 vertices\n",
            path.display()
        )
    );
}

#[test]
fn blocking_problems_exit_1_and_list_every_problem() {
    // Three triangles on one edge (non-manifold) plus an unused vertex (a note).
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("fin.obj");
    std::fs::write(
        &path,
        "v 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 -1 0\nv 0 0 1\nv 5 5 5\nf 1 2 3\nf 2 1 4\nf 1 2 5\n",
    )
    .unwrap();
    let (code, j) = inspect_json(path.to_str().unwrap());
    assert_eq!(code, 1);
    let problems: Vec<&str> = j["problems"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p.as_str().unwrap())
        .collect();
    assert_eq!(
        problems,
        vec![
            "the edge between vertices 1 and 2 is shared by 3 faces: face 1 (line 7), face 2 (line 8) and face 3 (line 9); an edge may border at most two faces",
            "2 vertices are non-manifold (vertex 1 and vertex 2): the faces of each do not form a single fan; split them",
            "1 vertex is used by no face (vertex 6); it is kept in the output but gets no UV",
        ]
    );
    let human = polyflat(&["inspect", path.to_str().unwrap()]);
    assert_eq!(human.status.code(), Some(1));
    let text = String::from_utf8(human.stdout).unwrap();
    for p in &problems {
        assert!(text.contains(p), "{text}");
    }
    let quiet = polyflat(&["inspect", "--quiet", path.to_str().unwrap()]);
    assert_eq!(quiet.status.code(), Some(1));
    assert!(quiet.stdout.is_empty());
    let quiet_err = String::from_utf8(quiet.stderr).unwrap();
    for p in &problems {
        assert!(quiet_err.contains(p), "{quiet_err}");
    }
    let err = String::from_utf8(human.stderr).unwrap();
    assert_eq!(
        err,
        format!(
            "{}: cannot be flattened: 2 of the problems above block it\n",
            path.display()
        )
    );
}

#[test]
fn bad_usage_exits_2() {
    assert_eq!(polyflat(&["inspect"]).status.code(), Some(2));
    assert_eq!(
        polyflat(&["inspect", "a.obj", "--no-such-flag"])
            .status
            .code(),
        Some(2)
    );
    assert_eq!(polyflat(&["inspect", "--help"]).status.code(), Some(0));
}
