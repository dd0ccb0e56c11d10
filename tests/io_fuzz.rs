//! Property test: the reader (and everything downstream of it) returns a mesh or an
//! error on any input and never panics. Inputs are random bytes and random soups of OBJ
//! tokens from a seeded ChaCha generator, so failures reproduce.
//!
//! The default case count keeps this test under a few seconds; for a longer run set
//! `POLYFLAT_FUZZ_CASES`, e.g. `POLYFLAT_FUZZ_CASES=200000 cargo test --release --test io_fuzz`.

use polyflat::io::{obj_to_string, parse_obj};
use polyflat::mesh::{uv_islands, validate, Topology};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

fn cases() -> usize {
    std::env::var("POLYFLAT_FUZZ_CASES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(2000)
}

/// Parses `text`; on success checks the mesh's invariants and runs the downstream stages.
fn exercise(text: &str) {
    let Ok(obj) = parse_obj(text, "fuzz.obj") else {
        return;
    };
    let m = &obj.mesh;
    assert_eq!(m.face_offsets.first(), Some(&0));
    assert_eq!(m.face_offsets.last(), Some(&m.face_vertices.len()));
    assert!(
        m.face_offsets.windows(2).all(|w| w[1] >= w[0] + 3),
        "faces have ≥ 3 corners"
    );
    assert!(m
        .face_vertices
        .iter()
        .all(|&v| (v as usize) < m.positions.len()));
    if let Some(cu) = &m.corner_uvs {
        assert_eq!(cu.len(), m.face_vertices.len());
        assert!(cu.iter().all(|&t| (t as usize) < m.uvs.len()));
    }
    assert_eq!(m.face_lines.len(), m.face_count());
    let topo = Topology::build(m);
    let _ = validate(m, &topo);
    let _ = uv_islands(m);
    let corner_uvs = vec![0u32; m.corner_count()];
    let written = obj_to_string(&obj, &[nalgebra::Point2::origin()], &corner_uvs);
    let again = parse_obj(&written, "again.obj").expect("written OBJ must parse");
    assert_eq!(again.mesh.face_vertices, m.face_vertices);
    assert_eq!(again.mesh.positions, m.positions);
}

#[test]
fn random_bytes_never_panic() {
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    for _ in 0..cases() {
        let len = rng.random_range(0..200);
        let bytes: Vec<u8> = (0..len).map(|_| rng.random()).collect();
        exercise(&String::from_utf8_lossy(&bytes));
    }
}

#[test]
fn token_soups_never_panic() {
    const TOKENS: &[&str] = &[
        "v",
        "vt",
        "vn",
        "f",
        "l",
        "p",
        "o",
        "g",
        "s",
        "usemtl",
        "mtllib",
        "#",
        "\\",
        "\n",
        "\r\n",
        " ",
        "\t",
        "0",
        "1",
        "2",
        "3",
        "4",
        "-1",
        "-2",
        "-5",
        "0.5",
        "1e3",
        "1e400",
        "nan",
        "inf",
        "-0",
        "x",
        "1/1",
        "2/2",
        "3/3",
        "1//1",
        "2//1",
        "1/1/1",
        "2/2/2",
        "3/1/1",
        "/",
        "//",
        "1/",
        "4/-1",
        "-1/-1/-1",
        "99999999999",
        "1.5",
        "+2",
    ];
    let mut rng = ChaCha8Rng::seed_from_u64(2);
    for case in 0..cases() {
        let mut text = String::new();
        // Half the cases start from a valid square so that faces often succeed.
        if case % 2 == 0 {
            text.push_str("v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nv 0.5 0.5 1\nvt 0 0\nvt 1 0\nvt 1 1\nvn 0 0 1\n");
        }
        for _ in 0..rng.random_range(1..60) {
            text.push_str(TOKENS[rng.random_range(0..TOKENS.len())]);
            if rng.random_bool(0.7) {
                text.push(' ');
            }
        }
        exercise(&text);
    }
}

#[test]
fn structured_faces_never_panic() {
    // Well-formed statements with random indices: exercises topology on odd meshes
    // (repeated edges, non-manifold fans, inconsistent winding, isolated vertices).
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    for _ in 0..cases() / 4 {
        let nv = rng.random_range(3..12);
        let mut text = String::new();
        for _ in 0..nv {
            let p: [f64; 3] = [rng.random(), rng.random(), rng.random()];
            text.push_str(&format!("v {} {} {}\n", p[0], p[1], p[2]));
            text.push_str(&format!("vt {} {}\n", p[0], p[1]));
        }
        for _ in 0..rng.random_range(0..15) {
            let arity = rng.random_range(3..7.min(nv + 1));
            text.push('f');
            for v in rand::seq::index::sample(&mut rng, nv, arity) {
                let v = v + 1;
                let t = rng.random_range(1..=nv);
                text.push_str(&format!(" {v}/{t}"));
            }
            text.push('\n');
        }
        exercise(&text);
    }
}
