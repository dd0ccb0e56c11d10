//! OBJ writer: round trips, statement order, index forms, atomic writes and the
//! refusal to overwrite the input. Expected texts are written out by hand.

use nalgebra::Point2;
use polyflat::io::{obj_to_string, parse_obj, read_obj, write_obj};

fn fixture(name: &str) -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name)
}

#[test]
fn rewrites_uvs_and_keeps_everything_else_in_place() {
    let text = "# cube corner\r\nmtllib m.mtl\no piece\nv 0 0 0 0.9 0.1 0.1\nv 1 0 0\nvt 5 5\nv 1 1 0 1.0\nv 0 1 0\n\
                vn 0 0 1\ng group_a\nusemtl red\ns 1\nf -4/1/1 -3/1/1 -2/1/1\nl 1/1 2/1\nf 1 3 4\n";
    let obj = parse_obj(text, "in.obj").unwrap();
    let uvs = [
        Point2::new(0.0, 0.0),
        Point2::new(0.5, 0.0),
        Point2::new(0.25, 0.5),
        Point2::new(1.0, 1.0),
    ];
    let out = obj_to_string(&obj, &uvs, &[0, 1, 2, 0, 2, 3]);
    let expected = "# cube corner\nmtllib m.mtl\no piece\nv 0 0 0 0.9 0.1 0.1\nv 1 0 0\nv 1 1 0 1.0\nv 0 1 0\n\
                    vn 0 0 1\ng group_a\nusemtl red\ns 1\nvt 0 0\nvt 0.5 0\nvt 0.25 0.5\nvt 1 1\n\
                    f 1/1/1 2/2/1 3/3/1\nl 1 2\nf 1/1 3/3 4/4\n";
    assert_eq!(out, expected);
}

#[test]
fn uvs_go_at_the_end_when_there_are_no_faces() {
    let obj = parse_obj("v 0 0 0\n", "p.obj").unwrap();
    assert_eq!(
        obj_to_string(&obj, &[Point2::new(0.5, 0.25)], &[]),
        "v 0 0 0\nvt 0.5 0.25\n"
    );
}

#[test]
fn round_trip_of_every_fixture_keeps_mesh_and_uvs() {
    for name in [
        "quad_grid.obj",
        "mixed_planar.obj",
        "cube_quads.obj",
        "torus_quads.obj",
        "hex_cylinder.obj",
        "wavy_quads.obj",
    ] {
        let obj = read_obj(&fixture(name)).unwrap();
        let m = &obj.mesh;
        // New UVs: one per corner, values that need all 17 significant digits.
        let uvs: Vec<Point2<f64>> = (0..m.corner_count())
            .map(|c| Point2::new(c as f64 / 3.0, 1.0 / (c as f64 + 7.0)))
            .collect();
        let corner_uvs: Vec<u32> = (0..m.corner_count() as u32).collect();
        let text = obj_to_string(&obj, &uvs, &corner_uvs);
        let back = parse_obj(&text, name).unwrap();
        assert_eq!(back.mesh.positions, m.positions, "{name}");
        assert_eq!(back.mesh.face_offsets, m.face_offsets, "{name}");
        assert_eq!(back.mesh.face_vertices, m.face_vertices, "{name}");
        assert_eq!(back.mesh.uvs, uvs, "{name}: UVs must survive exactly");
        assert_eq!(
            back.mesh.corner_uvs.as_deref(),
            Some(&corner_uvs[..]),
            "{name}"
        );
        assert_eq!(back.has_normals(), obj.has_normals(), "{name}");
        // Every `v` line of the input appears verbatim and in order.
        let source = std::fs::read_to_string(fixture(name)).unwrap();
        let v_in: Vec<&str> = source.lines().filter(|l| l.starts_with("v ")).collect();
        let v_out: Vec<&str> = text.lines().filter(|l| l.starts_with("v ")).collect();
        assert_eq!(v_in, v_out, "{name}");
        // Writing the re-read file with the same UVs gives the same text.
        assert_eq!(obj_to_string(&back, &uvs, &corner_uvs), text, "{name}");
    }
}

#[test]
fn write_obj_creates_the_file_and_refuses_the_input() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("in.obj");
    let original = "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n";
    std::fs::write(&input, original).unwrap();
    let obj = read_obj(&input).unwrap();
    let uvs = [
        Point2::new(0.0, 0.0),
        Point2::new(1.0, 0.0),
        Point2::new(0.0, 1.0),
    ];

    let out = dir.path().join("out.obj");
    write_obj(&out, &obj, &uvs, &[0, 1, 2]).unwrap();
    assert_eq!(
        std::fs::read_to_string(&out).unwrap(),
        "v 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 0 1\nf 1/1 2/2 3/3\n"
    );

    // The same file under another spelling is still refused, and left untouched.
    let sub = dir.path().join("sub");
    std::fs::create_dir(&sub).unwrap();
    let alias = sub.join("..").join("in.obj");
    let e = write_obj(&alias, &obj, &uvs, &[0, 1, 2])
        .unwrap_err()
        .to_string();
    assert_eq!(
        e,
        format!(
            "{}: is the input file; polyflat never overwrites its input, so choose another output path",
            alias.display()
        )
    );
    assert_eq!(std::fs::read_to_string(&input).unwrap(), original);

    // Wrong corner count or out-of-range UV index: an error and no file.
    let bad = dir.path().join("bad.obj");
    assert!(write_obj(&bad, &obj, &uvs, &[0, 1]).is_err());
    assert!(write_obj(&bad, &obj, &uvs, &[0, 1, 3]).is_err());
    assert!(!bad.exists());
    // Nothing but the files above is left in the folder (no stray temporary files).
    let mut names: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, vec!["in.obj", "out.obj", "sub"]);
}

#[test]
fn write_obj_into_a_missing_folder_fails_cleanly() {
    let dir = tempfile::tempdir().unwrap();
    let obj = parse_obj("v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n", "m.obj").unwrap();
    let target = dir.path().join("no_such_dir").join("out.obj");
    let e = write_obj(&target, &obj, &[Point2::origin()], &[0, 0, 0]).unwrap_err();
    assert!(matches!(e, polyflat::Error::Io { .. }), "{e:?}");
}
