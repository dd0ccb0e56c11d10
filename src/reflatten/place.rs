//! Putting a re-flattened chart back where it was, and moving it off its neighbours.
//!
//! [`fit`]: the rotation (after a reflection, for a chart whose previous UVs were
//! mirrored) and translation that bring a new chart layout closest, in the least
//! squares sense, to the chart's previous UVs at a fixed scale — the rotation part of
//! Umeyama (1991), "Least-squares estimation of transformation parameters between
//! two point patterns", IEEE TPAMI 13(4), in closed form for the plane.
//!
//! [`clear_overlap`]: the shortest translation, on a grid of one texel, after which a
//! chart's UV polygons overlap none of the other charts' (exact polygon tests of
//! [`crate::metrics`]); offsets are tried in order of length, so the first clear one
//! is the smallest move at that step.

use nalgebra::{Point2, Vector2};

use crate::mesh::PolyMesh;
use crate::metrics::overlapping_pairs_among;

/// A similarity of the plane: `q = scale · R(angle) · M p + translation`, with `M`
/// the reflection `(x, y) → (−x, y)` when `mirror`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Similarity {
    /// Counter-clockwise rotation, radians.
    pub angle: f64,
    /// Uniform scale.
    pub scale: f64,
    /// Reflect before rotating.
    pub mirror: bool,
    /// Added last.
    pub translation: Vector2<f64>,
}

impl Similarity {
    /// The image of `p`.
    pub fn apply(&self, p: &Point2<f64>) -> Point2<f64> {
        let x = if self.mirror { -p.x } else { p.x };
        let (s, c) = self.angle.sin_cos();
        Point2::new(
            self.scale * (c * x - s * p.y) + self.translation.x,
            self.scale * (s * x + c * p.y) + self.translation.y,
        )
    }
}

/// The similarity with scale `scale` (reflecting first when `mirror`) that takes
/// `from[i]` closest to `to[i]` in the sum of squared distances. `from` and `to`
/// have the same length (extra points of the longer one are ignored); with fewer
/// than two points the rotation is 0.
pub fn fit(from: &[Point2<f64>], to: &[Point2<f64>], scale: f64, mirror: bool) -> Similarity {
    let n = from.len().min(to.len());
    let reflect = |p: &Point2<f64>| Vector2::new(if mirror { -p.x } else { p.x }, p.y);
    let mean = |pts: &mut dyn Iterator<Item = Vector2<f64>>| {
        pts.fold(Vector2::zeros(), |a, p| a + p) / n.max(1) as f64
    };
    let from_mean = mean(&mut from[..n].iter().map(reflect));
    let to_mean = mean(&mut to[..n].iter().map(|p| p.coords));
    // Cross-covariance in the plane: the best angle is atan2(Σ a×b, Σ a·b).
    let (mut dot, mut cross) = (0.0, 0.0);
    for (p, q) in from[..n].iter().zip(&to[..n]) {
        let a = reflect(p) - from_mean;
        let b = q.coords - to_mean;
        dot += a.dot(&b);
        cross += a.perp(&b);
    }
    let angle = if dot == 0.0 && cross == 0.0 {
        0.0
    } else {
        cross.atan2(dot)
    };
    let (sin, cos) = angle.sin_cos();
    let turned = Vector2::new(
        cos * from_mean.x - sin * from_mean.y,
        sin * from_mean.x + cos * from_mean.y,
    );
    Similarity {
        angle,
        scale,
        mirror,
        translation: to_mean - scale * turned,
    }
}

/// A chart that may move: its faces and the range of the layout's UV values that
/// only it uses.
pub struct Moving<'a> {
    /// Its faces (mesh face indices).
    pub faces: &'a [u32],
    /// Its UV values in the layout (`uvs[range]`).
    pub range: std::ops::Range<usize>,
}

/// The shortest translation (in steps of `step` UV units, at most `max_steps` steps
/// long) after which none of `chart`'s faces overlaps one of `others` (faces of the
/// other charts) in the layout `uvs` / `corner_uvs` of `mesh`; `uvs` is left moved
/// by it. Overlaps among the other charts are not this chart's business and are
/// ignored. `None` (and `uvs` unchanged) when no offset that short clears it.
pub fn clear_overlap(
    mesh: &PolyMesh,
    uvs: &mut [Point2<f64>],
    corner_uvs: &[u32],
    chart: &Moving,
    others: &[u32],
    step: f64,
    max_steps: i32,
) -> Option<Vector2<f64>> {
    let original: Vec<Point2<f64>> = uvs.get(chart.range.clone())?.to_vec();
    let mut mine = vec![false; mesh.face_count()];
    for &f in chart.faces {
        if let Some(m) = mine.get_mut(f as usize) {
            *m = true;
        }
    }
    // Faces of other charts near enough to be hit by some offset.
    let reach = step * f64::from(max_steps);
    let [lo_x, lo_y, hi_x, hi_y] = bounds(original.iter());
    let nearby: Vec<u32> = others
        .iter()
        .copied()
        .filter(|&f| !mine.get(f as usize).copied().unwrap_or(true))
        .filter(|&f| {
            let corners = mesh
                .face_offsets
                .get(f as usize)
                .zip(mesh.face_offsets.get(f as usize + 1))
                .and_then(|(&a, &b)| corner_uvs.get(a..b))
                .unwrap_or(&[]);
            let b = bounds(corners.iter().filter_map(|&t| uvs.get(t as usize)));
            b[0] <= hi_x + reach
                && b[2] >= lo_x - reach
                && b[1] <= hi_y + reach
                && b[3] >= lo_y - reach
        })
        .collect();
    let mut subset: Vec<u32> = chart.faces.to_vec();
    subset.extend_from_slice(&nearby);
    let mut offsets: Vec<(i32, i32)> = (-max_steps..=max_steps)
        .flat_map(|i| (-max_steps..=max_steps).map(move |j| (i, j)))
        .filter(|&(i, j)| i * i + j * j <= max_steps * max_steps)
        .collect();
    offsets.sort_by_key(|&(i, j)| (i * i + j * j, i, j));
    for (i, j) in offsets {
        let d = Vector2::new(f64::from(i), f64::from(j)) * step;
        for (slot, p) in uvs[chart.range.clone()].iter_mut().zip(&original) {
            *slot = p + d;
        }
        let hits = overlapping_pairs_among(uvs, corner_uvs, mesh, Some(&subset))
            .into_iter()
            .any(|(f, g)| mine[f as usize] != mine[g as usize]);
        if !hits {
            return Some(d);
        }
    }
    uvs[chart.range.clone()].copy_from_slice(&original);
    None
}

/// `[min x, min y, max x, max y]` of the points.
fn bounds<'a>(points: impl Iterator<Item = &'a Point2<f64>>) -> [f64; 4] {
    points.fold(
        [
            f64::INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NEG_INFINITY,
        ],
        |b, p| [b[0].min(p.x), b[1].min(p.y), b[2].max(p.x), b[3].max(p.y)],
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::Point3;

    #[test]
    fn fit_recovers_a_known_similarity_with_and_without_reflection() {
        let from: Vec<Point2<f64>> = [(0.0, 0.0), (1.0, 0.0), (1.0, 2.0), (-0.5, 1.0)]
            .iter()
            .map(|&(x, y)| Point2::new(x, y))
            .collect();
        for mirror in [false, true] {
            let truth = Similarity {
                angle: 0.7,
                scale: 0.25,
                mirror,
                translation: Vector2::new(0.3, -0.1),
            };
            let to: Vec<Point2<f64>> = from.iter().map(|p| truth.apply(p)).collect();
            let got = fit(&from, &to, 0.25, mirror);
            for (p, q) in from.iter().zip(&to) {
                assert!((got.apply(p) - q).norm() < 1e-12, "mirror {mirror}");
            }
        }
    }

    #[test]
    fn an_overlapping_square_moves_the_shortest_way_out() {
        // Two unit squares in UV; the second overlaps the first by 0.25 in x.
        let mesh = PolyMesh::from_faces(
            vec![Point3::origin(); 8],
            &[vec![0, 1, 2, 3], vec![4, 5, 6, 7]],
        );
        let mut uvs: Vec<Point2<f64>> = [
            (0.0, 0.0),
            (1.0, 0.0),
            (1.0, 1.0),
            (0.0, 1.0),
            (0.75, 0.0),
            (1.75, 0.0),
            (1.75, 1.0),
            (0.75, 1.0),
        ]
        .iter()
        .map(|&(x, y)| Point2::new(x, y))
        .collect();
        let corner_uvs: Vec<u32> = (0..8).collect();
        let moving = Moving {
            faces: &[1],
            range: 4..8,
        };
        let d = clear_overlap(&mesh, &mut uvs, &corner_uvs, &moving, &[0], 0.05, 20).unwrap();
        assert!((d - Vector2::new(0.25, 0.0)).norm() < 1e-12, "{d}");
        assert!((uvs[4].x - 1.0).abs() < 1e-12);
        let again = clear_overlap(&mesh, &mut uvs, &corner_uvs, &moving, &[0], 0.05, 2);
        assert_eq!(again, Some(Vector2::zeros()));
        // Too far to go in 2 steps of 0.05: nothing moves.
        uvs[4..8].iter_mut().for_each(|p| p.x -= 0.5);
        let before = uvs.clone();
        assert!(clear_overlap(&mesh, &mut uvs, &corner_uvs, &moving, &[0], 0.05, 2).is_none());
        assert_eq!(uvs, before);
    }
}
