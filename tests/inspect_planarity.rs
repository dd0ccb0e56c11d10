//! Per-face non-planarity (max corner distance from the least-squares plane over the
//! face diameter). Expected values are analytic.

use nalgebra::{Point3, Rotation3, Vector3};
use polyflat::mesh::non_planarity;

/// Unit square with corners lifted alternately by ±h: by symmetry the best-fit plane is
/// z = 0, every corner is h from it, and for h < 0.5 the diameter is the diagonal √2,
/// so the value is h / √2.
fn twisted_square(h: f64) -> Vec<Point3<f64>> {
    vec![
        Point3::new(0.0, 0.0, h),
        Point3::new(1.0, 0.0, -h),
        Point3::new(1.0, 1.0, h),
        Point3::new(0.0, 1.0, -h),
    ]
}

#[test]
fn twisted_square_is_h_over_root_two() {
    for h in [0.001, 0.1, 0.3] {
        let got = non_planarity(&twisted_square(h));
        assert!((got - h / 2f64.sqrt()).abs() < 1e-12, "h {h}: {got}");
    }
}

#[test]
fn invariant_under_rotation_translation_and_scale() {
    let r = Rotation3::from_axis_angle(
        &nalgebra::Unit::new_normalize(Vector3::new(1.0, 2.0, 3.0)),
        0.7,
    );
    let moved: Vec<Point3<f64>> = twisted_square(0.1)
        .iter()
        .map(|p| r * (p * 250.0) + Vector3::new(1e3, -7.0, 42.0))
        .collect();
    let got = non_planarity(&moved);
    assert!((got - 0.1 / 2f64.sqrt()).abs() < 1e-10, "{got}");
}

#[test]
fn planar_faces_and_triangles_are_zero() {
    // A regular pentagon in a tilted plane: zero up to rounding (1e-14 relative).
    let r = Rotation3::from_euler_angles(0.3, -1.1, 0.4);
    let pentagon: Vec<Point3<f64>> = (0..5)
        .map(|k| {
            let a = 2.0 * std::f64::consts::PI * k as f64 / 5.0;
            r * Point3::new(a.cos(), a.sin(), 0.0)
        })
        .collect();
    assert!(non_planarity(&pentagon) < 1e-14);
    let triangle = [
        Point3::new(0.0, 0.0, 0.0),
        Point3::new(1.0, 0.0, 5.0),
        Point3::new(0.0, 1.0, -3.0),
    ];
    assert_eq!(non_planarity(&triangle), 0.0);
}
