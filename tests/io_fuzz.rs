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
        .unwrap_or(3000)
}

/// Parses `text`; on success checks the mesh's invariants, runs the downstream stages
/// and returns true.
fn exercise(text: &str) -> bool {
    let Ok(obj) = parse_obj(text, "fuzz.obj") else {
        return false;
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
    true
}

#[test]
fn random_bytes_never_panic() {
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    for _ in 0..cases() {
        let len = rng.random_range(0..200);
        let bytes: Vec<u8> = (0..len).map(|_| rng.random()).collect();
        exercise(&String::from_utf8_lossy(&bytes));
    }
    // Control: the empty input is a valid, empty mesh.
    assert!(exercise(""));
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
    // Tokens that are valid in most positions after the square prefix below.
    const GOOD: &[&str] = &[
        "1", "2", "3", "4", "5", "-1", "-2", "-3", "1/1", "2/2", "3/3", "4/1/1", "5//1", "0.5",
    ];
    let mut rng = ChaCha8Rng::seed_from_u64(2);
    let mut meshes_with_faces = 0;
    for case in 0..cases() {
        let mut text = String::new();
        // Half the soups use tame keywords and tokens so that they often form faces.
        let tame = rng.random_bool(0.5);
        let (pool, keywords, arity): (&[&str], &[&str], _) = if tame {
            (GOOD, &["f", "f", "g", "#", ""], 3..6)
        } else {
            (
                TOKENS,
                &["f", "f", "f", "v", "vt", "vn", "l", "g", "#", ""],
                0..7,
            )
        };
        // Tame soups and every other wild one start from valid vertices.
        if tame || case % 2 == 0 {
            text.push_str("v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nv 0.5 0.5 1\nvt 0 0\nvt 1 0\nvt 1 1\nvn 0 0 1\n");
        }
        // Lines that usually start with a keyword (faces most often), then a few tokens.
        for _ in 0..rng.random_range(1..8) {
            text.push_str(keywords[rng.random_range(0..keywords.len())]);
            for _ in 0..rng.random_range(arity.clone()) {
                text.push(if rng.random_bool(0.9) { ' ' } else { '\t' });
                text.push_str(pool[rng.random_range(0..pool.len())]);
            }
            text.push_str(if rng.random_bool(0.8) { "\n" } else { "\r\n" });
        }
        if exercise(&text) && parse_obj(&text, "f.obj").is_ok_and(|o| o.mesh.face_count() > 0) {
            meshes_with_faces += 1;
        }
    }
    // The soups must reach the face code, not only the error paths.
    assert!(
        meshes_with_faces > cases() / 50,
        "{meshes_with_faces} meshes with faces"
    );
}

#[test]
fn structured_faces_never_panic() {
    // Well-formed statements with random indices: exercises topology on odd meshes
    // (repeated edges, non-manifold fans, inconsistent winding, isolated vertices).
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    let mut parsed = 0;
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
        parsed += usize::from(exercise(&text));
    }
    // Most of these are valid OBJ (distinct corners, random non-degenerate positions).
    assert!(parsed > cases() / 8, "{parsed} of {} parsed", cases() / 4);
}
