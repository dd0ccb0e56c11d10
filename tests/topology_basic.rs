//! Connectivity, UV islands, sub-meshes and validation on small hand-built meshes and
//! the generated fixtures. Expected counts are analytic (V, E, F counted by hand;
//! χ = V − E + F; genus from χ = 2 − 2g − b).

use nalgebra::Point3;
use polyflat::io::read_obj;
use polyflat::mesh::{island_count, uv_islands, validate, PolyMesh, Topology};

fn fixture(name: &str) -> PolyMesh {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name);
    read_obj(&path).unwrap().mesh
}

fn p(x: f64, y: f64, z: f64) -> Point3<f64> {
    Point3::new(x, y, z)
}

fn grid_positions(n: usize) -> Vec<Point3<f64>> {
    (0..n)
        .map(|i| p((i % 4) as f64, (i / 4) as f64, 0.0))
        .collect()
}

#[test]
fn fixture_counts_match_hand_counts() {
    // (file, V, E, F, boundary loops, components, χ, genus)
    let expected = [
        ("quad_grid.obj", 20, 31, 12, 1, 1, 1, 0),
        ("mixed_planar.obj", 16, 23, 8, 1, 1, 1, 0),
        ("cube_quads.obj", 8, 12, 6, 0, 1, 2, 0),
        ("torus_quads.obj", 48, 96, 48, 0, 1, 0, 1),
        ("hex_cylinder.obj", 60, 84, 24, 2, 1, 0, 0),
        ("wavy_quads.obj", 42, 71, 30, 1, 1, 1, 0),
    ];
    for (name, v, e, f, b, c, chi, g) in expected {
        let m = fixture(name);
        let t = Topology::build(&m);
        assert_eq!(t.used_vertices, v, "{name} V");
        assert_eq!(t.edge_count(), e, "{name} E");
        assert_eq!(m.face_count(), f, "{name} F");
        assert_eq!(t.boundary_loops.len(), b, "{name} boundary loops");
        assert_eq!(t.component_count(), c, "{name} components");
        assert_eq!(t.euler_characteristic(&m), chi, "{name} χ");
        assert_eq!(t.genus(), g, "{name} genus");
        assert_eq!(
            t.components[0].euler_characteristic, chi,
            "{name} component χ"
        );
        assert!(
            t.non_manifold_edges.is_empty() && t.non_manifold_vertices.is_empty(),
            "{name}"
        );
        assert!(
            t.inconsistent_edges.is_empty() && t.pinched_loops.is_empty(),
            "{name}"
        );
        assert!(
            validate(&m, &t).is_empty(),
            "{name}: {:?}",
            validate(&m, &t)
        );
    }
}

#[test]
fn boundary_loop_follows_face_winding() {
    // 2×1 quads, counter-clockwise seen from +z: the boundary runs counter-clockwise too.
    let m = PolyMesh::from_faces(
        vec![
            p(0., 0., 0.),
            p(1., 0., 0.),
            p(2., 0., 0.),
            p(0., 1., 0.),
            p(1., 1., 0.),
            p(2., 1., 0.),
        ],
        &[vec![0, 1, 4, 3], vec![1, 2, 5, 4]],
    );
    let t = Topology::build(&m);
    assert_eq!(t.boundary_loops.len(), 1);
    let l = &t.boundary_loops[0];
    assert_eq!(l.len(), 6);
    // Rotate so the loop starts at vertex 0, then compare.
    let k = l.iter().position(|&v| v == 0).unwrap();
    let rotated: Vec<u32> = l[k..].iter().chain(&l[..k]).copied().collect();
    assert_eq!(rotated, vec![0, 1, 2, 5, 4, 3]);
    assert_eq!(t.face_neighbours(&m, 0), vec![1]);
    assert_eq!(t.edge_count(), 7);
    let shared = t.corner_edge[1]; // corner 1 of face 0 is the halfedge 1 → 4
    assert_eq!(t.edge_vertices[shared as usize], [1, 4]);
    assert_eq!(t.edge_faces(shared).collect::<Vec<_>>(), vec![0, 1]);
    assert_eq!(t.twin(1), Some(7)); // face 1's halfedge 4 → 1 is its corner 3 (global 7)
    assert_eq!(t.twin(0), None);
}

#[test]
fn edge_shared_by_three_faces_is_non_manifold() {
    let m = PolyMesh::from_faces(
        vec![
            p(0., 0., 0.),
            p(1., 0., 0.),
            p(0., 1., 0.),
            p(0., -1., 0.),
            p(0., 0., 1.),
        ],
        &[vec![0, 1, 2], vec![1, 0, 3], vec![0, 1, 4]],
    );
    let t = Topology::build(&m);
    assert_eq!(t.non_manifold_edges.len(), 1);
    assert_eq!(t.edge_vertices[t.non_manifold_edges[0] as usize], [0, 1]);
    assert_eq!(t.non_manifold_vertices, vec![0, 1]);
    let problems = validate(&m, &t);
    assert!(problems.iter().all(|p| p.blocking));
    assert_eq!(
        problems[0].sentence,
        "the edge between vertices 1 and 2 is shared by 3 faces: face 1, face 2 and face 3; an edge may border at most two faces"
    );
}

#[test]
fn bowtie_vertex_is_non_manifold_with_two_loops() {
    // Two triangles touching only at vertex 0: two fans there, two boundary loops.
    let m = PolyMesh::from_faces(
        vec![
            p(0., 0., 0.),
            p(1., 0., 0.),
            p(1., 1., 0.),
            p(-1., 0., 0.),
            p(-1., -1., 0.),
        ],
        &[vec![0, 1, 2], vec![0, 3, 4]],
    );
    let t = Topology::build(&m);
    assert_eq!(t.non_manifold_vertices, vec![0]);
    assert_eq!(t.boundary_loops.len(), 2);
    assert!(t.pinched_loops.is_empty());
    assert_eq!(t.component_count(), 2);
    let problems = validate(&m, &t);
    assert_eq!(problems.len(), 1);
    assert_eq!(
        problems[0].sentence,
        "1 vertex is non-manifold (vertex 1): its faces do not form a single fan; split it"
    );
}

#[test]
fn strip_closed_at_one_vertex_has_a_pinched_boundary() {
    // Quads q_k = (a_k, a_{k+1}, b_{k+1}, b_k), k = 0..3, with a_4 = a_0 but b_4 ≠ b_0:
    // one boundary loop that passes a_0 twice. V 9, E 13, F 4, χ 0.
    let a = |k: usize| (k % 4) as u32;
    let b = |k: usize| 4 + k as u32;
    let mut pos = Vec::new();
    for k in 0..4 {
        let t = k as f64 * std::f64::consts::FRAC_PI_2;
        pos.push(p(t.cos(), t.sin(), 0.0));
    }
    for k in 0..5 {
        let t = k as f64 * std::f64::consts::FRAC_PI_2 * 0.95;
        pos.push(p(2.0 * t.cos(), 2.0 * t.sin(), 0.1 * k as f64));
    }
    let faces: Vec<Vec<u32>> = (0..4)
        .map(|k| vec![a(k), a(k + 1), b(k + 1), b(k)])
        .collect();
    let m = PolyMesh::from_faces(pos, &faces);
    let t = Topology::build(&m);
    assert_eq!(t.boundary_loops.len(), 1);
    assert_eq!(t.boundary_loops[0].len(), 10);
    assert_eq!(t.pinched_loops, vec![(0, 0)]);
    assert_eq!(t.non_manifold_vertices, vec![0]);
    assert_eq!(t.euler_characteristic(&m), 0);
    let sentences: Vec<String> = validate(&m, &t).into_iter().map(|p| p.sentence).collect();
    assert!(sentences.contains(
        &"1 boundary loop of the mesh touches itself at vertex 1; split the vertex so each boundary passes it once".to_string()
    ));
}

#[test]
fn opposite_winding_is_reported_with_both_faces() {
    // Face 2 traverses the shared edge 1 → 5 in the same direction as face 1.
    let mut m = PolyMesh::from_faces(grid_positions(7), &[vec![0, 1, 5, 4], vec![5, 6, 2, 1]]);
    m.face_lines = vec![3, 4];
    let t = Topology::build(&m);
    assert_eq!(t.inconsistent_edges.len(), 1);
    let problems = validate(&m, &t);
    assert_eq!(
        problems[0].sentence,
        "1 edge is traversed by both of its faces in the same direction, the first being the edge between vertices 2 and 6 (face 1 (line 3) and face 2 (line 4)); flip faces so that neighbours wind the same way"
    );
}

#[test]
fn unused_vertices_are_a_note() {
    let mut m = fixture("quad_grid.obj");
    m.positions.push(p(9., 9., 9.));
    let t = Topology::build(&m);
    assert_eq!(t.isolated_vertices, vec![20]);
    let problems = validate(&m, &t);
    assert_eq!(problems.len(), 1);
    assert!(!problems[0].blocking);
    assert_eq!(
        problems[0].sentence,
        "1 vertex is used by no face (vertex 21); it is kept in the output but gets no UV"
    );
}

#[test]
fn malformed_meshes_do_not_panic_and_are_blocking() {
    let empty = PolyMesh::default();
    let t = Topology::build(&empty);
    assert_eq!(t.edge_count(), 0);
    let problems = validate(&empty, &t);
    assert_eq!(problems[0].sentence, "the mesh has no faces");

    // Out-of-range vertex, too few corners, repeated vertex, offsets past the end.
    let mut m = PolyMesh::from_faces(
        grid_positions(4),
        &[vec![0, 1, 9], vec![0, 1], vec![0, 1, 1]],
    );
    let t = Topology::build(&m);
    let problems = validate(&m, &t);
    // The bad faces also make edge 1–2 non-manifold (listed in between).
    assert_eq!(problems.len(), 4);
    assert!(problems[..3].iter().all(|p| p.blocking) && !problems[3].blocking);
    assert_eq!(
        problems[1].sentence,
        "the edge between vertices 1 and 2 is shared by 3 faces: face 1, face 2 and face 3; an edge may border at most two faces"
    );
    assert_eq!(
        problems[3].sentence,
        "2 vertices are used by no face (vertex 3 and vertex 4); they are kept in the output but get no UV"
    );
    assert_eq!(
        problems[0].sentence,
        "3 faces are unusable: face 1 refers to vertex 10, but the mesh has only 4 vertices, face 2 has 2 corners, fewer than 3 and face 3 uses vertex 2 twice"
    );
    m.face_offsets.push(100);
    let t = Topology::build(&m);
    assert!(!validate(&m, &t).is_empty());
    let _ = uv_islands(&m);
    let _ = m.submesh(&[0, 1, 2, 3, 99]);
}

#[test]
fn uv_islands_join_faces_across_matching_vt_pairs() {
    assert_eq!(uv_islands(&fixture("quad_grid.obj")), None);
    let cube = uv_islands(&fixture("cube_quads.obj")).unwrap();
    assert_eq!(cube, vec![0, 1, 2, 3, 4, 5]);
    assert_eq!(island_count(&cube), 6);
    assert_eq!(
        island_count(&uv_islands(&fixture("torus_quads.obj")).unwrap()),
        1
    );
    assert_eq!(
        island_count(&uv_islands(&fixture("wavy_quads.obj")).unwrap()),
        1
    );

    // Two quads sharing edge 1–5; a different vt at one end of it makes a seam.
    let mut m = PolyMesh::from_faces(grid_positions(7), &[vec![0, 1, 5, 4], vec![1, 2, 6, 5]]);
    m.uvs = vec![nalgebra::Point2::origin(); 8];
    m.corner_uvs = Some(vec![0, 1, 5, 4, 1, 2, 6, 5]);
    assert_eq!(uv_islands(&m), Some(vec![0, 0]));
    m.corner_uvs = Some(vec![0, 1, 5, 4, 1, 2, 6, 7]);
    assert_eq!(uv_islands(&m), Some(vec![0, 1]));
}

#[test]
fn submesh_compacts_vertices_and_uvs() {
    let cube = fixture("cube_quads.obj");
    // Faces 2 (z = 1: 4 5 7 6) and 6 (x = 1: 1 3 7 5), 0-based 1 and 5.
    let (sub, map) = cube.submesh(&[1, 5]);
    assert_eq!(map, vec![1, 3, 4, 5, 6, 7]);
    assert_eq!(sub.face_count(), 2);
    assert_eq!(sub.face(0), &[2, 3, 5, 4]);
    assert_eq!(sub.face(1), &[0, 1, 5, 3]);
    for (local, &global) in map.iter().enumerate() {
        assert_eq!(sub.positions[local], cube.positions[global as usize]);
    }
    assert_eq!(sub.face_lines, vec![cube.face_lines[1], cube.face_lines[5]]);
    let cu = sub.corner_uvs.as_ref().unwrap();
    assert_eq!(sub.uvs.len(), 8);
    for f in 0..2 {
        let global_f = [1, 5][f];
        for k in 0..4 {
            let g = cube.face_uv_indices(global_f).unwrap()[k];
            assert_eq!(
                sub.uvs[cu[sub.face_range(f).start + k] as usize],
                cube.uvs[g as usize]
            );
        }
    }
    let t = Topology::build(&sub);
    assert_eq!((t.edge_count(), t.boundary_loops.len()), (7, 1));
}
