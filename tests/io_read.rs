//! OBJ reader: every statement form the reader accepts and every error it names.
//! Expected values are written out by hand from the small OBJ texts in each test.

use nalgebra::{Point2, Point3};
use polyflat::io::parse_obj;
use polyflat::Error;

fn parse_err(text: &str) -> String {
    match parse_obj(text, "spot.obj") {
        Ok(_) => panic!("expected an error for:\n{text}"),
        Err(e) => e.to_string(),
    }
}

const SQUARE: &str = "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\n";

#[test]
fn reads_every_corner_form() {
    let text = format!(
        "{SQUARE}vt 0 0\nvt 1 0\nvt 1 1\nvt 0 1\nvn 0 0 1\n\
         f 1/1 2/2 3/3\nf 1/1/1 3/3/1 4/4/1\n"
    );
    let obj = parse_obj(&text, "a.obj").unwrap();
    let m = &obj.mesh;
    assert_eq!(m.positions.len(), 4);
    assert_eq!(m.face_offsets, vec![0, 3, 6]);
    assert_eq!(m.face_vertices, vec![0, 1, 2, 0, 2, 3]);
    assert_eq!(m.corner_uvs, Some(vec![0, 1, 2, 0, 2, 3]));
    assert_eq!(m.uvs[2], Point2::new(1.0, 1.0));
    assert_eq!(m.face_lines, vec![10, 11]);
    assert_eq!(obj.normal_count(), 1);
    assert!(obj.has_normals());
    assert!(obj.notes.is_empty());

    let plain = parse_obj(
        &format!("{SQUARE}vn 0 0 1\nf 1 2 3\nf 1//1 3//1 4//1\n"),
        "b.obj",
    )
    .unwrap();
    assert_eq!(plain.mesh.face_vertices, vec![0, 1, 2, 0, 2, 3]);
    assert_eq!(plain.mesh.corner_uvs, None);
    assert!(
        plain.notes.is_empty(),
        "no face has vt, so nothing is ignored"
    );
}

#[test]
fn negative_indices_count_back_from_the_current_line() {
    // The second face's -1 is vertex 5 (the last defined before it), -3 is vertex 3.
    let text = "v 0 0 0\nv 1 0 0\nv 0 1 0\nf -3 -2 -1\nv 1 1 0\nv 2 3 0\nf -3 -2 -1\nvt 0 0\nvt 1 0\nvt 0 1\n";
    let obj = parse_obj(text, "n.obj").unwrap();
    assert_eq!(obj.mesh.face_vertices, vec![0, 1, 2, 2, 3, 4]);
}

#[test]
fn continuations_crlf_comments_and_blank_lines() {
    let text = "# header\r\n\r\nv 0 0 0 # origin\r\nv 1 \\\r\n 0 0\r\nv 1 1 0\r\nv 0 1 0\r\nf 1 2 \\\n3 \\\n 4 # quad\r\n";
    let obj = parse_obj(text, "c.obj").unwrap();
    assert_eq!(obj.mesh.positions[1], Point3::new(1.0, 0.0, 0.0));
    assert_eq!(obj.mesh.face_vertices, vec![0, 1, 2, 3]);
    // The face starts on physical line 8.
    assert_eq!(obj.mesh.face_lines, vec![8]);
}

#[test]
fn positions_with_w_or_colour_use_xyz() {
    let text = "v 0 0 0 1\nv 1 0 0 0.5 0.2 0.1\nv 0 1 0 0.5 0.2 0.1 1\nf 1 2 3\n";
    let obj = parse_obj(text, "w.obj").unwrap();
    assert_eq!(obj.mesh.positions[1], Point3::new(1.0, 0.0, 0.0));
    assert_eq!(obj.mesh.positions[2], Point3::new(0.0, 1.0, 0.0));
}

#[test]
fn texture_coordinates_with_one_two_or_three_numbers() {
    let text = format!("{SQUARE}vt 0.5\nvt 0.25 0.75\nvt 1 1 0\nf 1/1 2/2 3/3\n");
    let obj = parse_obj(&text, "t.obj").unwrap();
    assert_eq!(
        obj.mesh.uvs,
        vec![
            Point2::new(0.5, 0.0),
            Point2::new(0.25, 0.75),
            Point2::new(1.0, 1.0)
        ]
    );
}

#[test]
fn forward_references_are_allowed() {
    let obj = parse_obj("f 1 2 3\nv 0 0 0\nv 1 0 0\nv 0 1 0\n", "f.obj").unwrap();
    assert_eq!(obj.mesh.face_count(), 1);
}

#[test]
fn faces_partly_without_uvs_drop_all_uvs_with_a_note() {
    let text = format!("{SQUARE}vt 0 0\nvt 1 0\nvt 1 1\nf 1/1 2/2 3/3\nf 1 3 4\n");
    let obj = parse_obj(&text, "m.obj").unwrap();
    assert_eq!(obj.mesh.corner_uvs, None);
    assert!(obj.mesh.uvs.is_empty());
    assert_eq!(obj.notes.len(), 1);
    assert!(!obj.notes[0].blocking);
    assert_eq!(
        obj.notes[0].sentence,
        "1 of 2 faces have no texture coordinates, so the file's UVs are ignored"
    );
}

#[test]
fn lines_points_and_unknown_statements_are_noted_not_faces() {
    let text = format!("{SQUARE}l 1/1 2/2\nl 2 3\np 4\ncstype bezier\nf 1 2 3\n");
    let obj = parse_obj(&text, "l.obj").unwrap();
    assert_eq!(obj.mesh.face_count(), 1);
    let sentences: Vec<&str> = obj.notes.iter().map(|p| p.sentence.as_str()).collect();
    assert_eq!(
        sentences,
        vec![
            "2 line statements (`l`) are not faces; they are kept in the output but not flattened",
            "1 point statements (`p`) are not faces; they are kept in the output but not flattened",
            "1 `cstype` statements are not understood; they are kept in the output but not used",
        ]
    );
    assert!(obj.notes.iter().all(|p| !p.blocking));
}

#[test]
fn errors_name_file_line_and_token() {
    let cases: &[(&str, &str)] = &[
        (
            "v 0 0 0\nv 1 0 0\nv 0 1 0\nv 1 1 0\nf 1 2 9\n",
            "spot.obj:5: face refers to vertex 9, but the file defines only 4 vertices",
        ),
        ("v 0 0 0\nf 0 1 2\n", "spot.obj:2: face refers to vertex 0; OBJ indices start at 1"),
        (
            "v 0 0 0\nv 1 0 0\nf -1 -2 -3\n",
            "spot.obj:3: face refers to vertex -3, but the file defines only 2 vertices before this line",
        ),
        (
            "v 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nf 1/1 2/2 3/1\n",
            "spot.obj:5: face refers to texture coordinate 2, but the file defines only 1 texture coordinate",
        ),
        (
            "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1//1 2//1 3//1\n",
            "spot.obj:4: face refers to normal 1, but the file defines only 0 normals",
        ),
        ("v 0 nan 0\n", "spot.obj:1: vertex coordinate `nan` is not a finite number"),
        ("v 0 1e400 0\n", "spot.obj:1: vertex coordinate `1e400` is not a finite number"),
        ("\nv 0 1.2.3 0\n", "spot.obj:2: vertex coordinate `1.2.3` is not a number"),
        ("v 0 0\n", "spot.obj:1: vertex has 2 numbers; expected x y z, x y z w or x y z r g b"),
        ("vt 0 x\n", "spot.obj:1: texture coordinate `x` is not a number"),
        ("vn 0 0\n", "spot.obj:1: normal has 2 numbers; expected x y z"),
        ("v 0 0 0\nv 1 0 0\nf 1 2\n", "spot.obj:3: face has 2 corners; a face needs at least 3"),
        (
            "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3 2\n",
            "spot.obj:4: face uses vertex 2 twice; each corner of a face must be a different vertex",
        ),
        (
            "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2/ 3\n",
            "spot.obj:4: face corner `2/` is not one of v, v/vt, v//vn or v/vt/vn",
        ),
        (
            "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2/1/1/1 3\n",
            "spot.obj:4: face corner `2/1/1/1` is not one of v, v/vt, v//vn or v/vt/vn",
        ),
        (
            "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 x 3\n",
            "spot.obj:4: face corner `x` has a vertex index that is not a whole number",
        ),
        (
            "v 0 0 0\nv 1 0 0\nv 0 1 0\nv 1 1 0\nv 2 2 0\n\nf 1 2 4\nf 1 4 5\n",
            "spot.obj:8: face 2 has zero area; remove it or move its corners apart",
        ),
    ];
    for (text, expected) in cases {
        assert_eq!(&parse_err(text), expected, "input:\n{text}");
    }
}

#[test]
fn parse_errors_are_the_parse_variant() {
    let e = parse_obj("v 0 0 0\nf 1 1 1\n", "x.obj").unwrap_err();
    assert!(matches!(e, Error::Parse { line: 2, .. }), "{e:?}");
}

#[test]
fn empty_text_gives_an_empty_mesh() {
    let obj = parse_obj("", "e.obj").unwrap();
    assert_eq!(obj.mesh.face_count(), 0);
    assert_eq!(obj.mesh.vertex_count(), 0);
}

#[test]
fn read_obj_names_the_path_as_given() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("bad.obj");
    std::fs::write(&path, "v 0 0 0\nf 1 2 3\n").unwrap();
    let e = polyflat::io::read_obj(&path).unwrap_err().to_string();
    assert_eq!(
        e,
        format!(
            "{}:2: face refers to vertex 2, but the file defines only 1 vertex",
            path.display()
        )
    );
    let missing = polyflat::io::read_obj(&dir.path().join("missing.obj")).unwrap_err();
    assert!(matches!(missing, Error::Io { action: "read", .. }));
}
