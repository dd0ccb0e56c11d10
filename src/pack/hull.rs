//! Convex hull and minimum-area enclosing rectangle of a 2D point set.
//!
//! The hull is Andrew's monotone chain (Andrew 1979, "Another efficient algorithm for
//! convex hulls in two dimensions", IPL 9(5)). The rectangle uses the fact that a
//! minimum-area enclosing rectangle has a side collinear with a hull edge (Freeman &
//! Shapira 1975, CACM 18(7)) and visits the edges with rotating calipers (Toussaint
//! 1983, "Solving geometric problems with the rotating calipers", IEEE MELECON).

use nalgebra::{Point2, Vector2};

/// Convex hull of `points` (any count, finite coordinates, any unit).
///
/// Returns the hull's corners counter-clockwise, starting at the lowest-x (then
/// lowest-y) point, without repeated or collinear points: 0 points for empty input,
/// 1 for coincident points, 2 for collinear points.
pub fn convex_hull(points: &[Point2<f64>]) -> Vec<Point2<f64>> {
    let mut p: Vec<Point2<f64>> = points.to_vec();
    p.sort_by(|a, b| a.x.total_cmp(&b.x).then(a.y.total_cmp(&b.y)));
    p.dedup();
    if p.len() < 3 {
        return p;
    }
    let cross = |o: &Point2<f64>, a: &Point2<f64>, b: &Point2<f64>| (a - o).perp(&(b - o));
    let mut hull: Vec<Point2<f64>> = Vec::with_capacity(2 * p.len());
    for q in p.iter() {
        while hull.len() >= 2 && cross(&hull[hull.len() - 2], &hull[hull.len() - 1], q) <= 0.0 {
            hull.pop();
        }
        hull.push(*q);
    }
    let lower = hull.len() + 1;
    for q in p.iter().rev().skip(1) {
        while hull.len() >= lower && cross(&hull[hull.len() - 2], &hull[hull.len() - 1], q) <= 0.0 {
            hull.pop();
        }
        hull.push(*q);
    }
    hull.pop();
    hull
}

/// A rectangle enclosing a point set, described by the rotation that makes it
/// axis-aligned.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OrientedRect {
    /// Rotation angle (radians, counter-clockwise) that turns the rectangle's long side
    /// horizontal.
    pub rotation: f64,
    /// Long side (same unit as the points).
    pub width: f64,
    /// Short side (same unit as the points).
    pub height: f64,
}

/// Minimum-area rectangle enclosing the convex polygon `hull` (counter-clockwise, as
/// returned by [`convex_hull`]). O(h) for h hull corners.
///
/// Returns the rotation that makes the rectangle axis-aligned with its long side
/// horizontal, and its sides. Degenerate hulls (0–2 points) give a zero-height
/// rectangle along the segment (rotation 0 for a single point).
pub fn min_area_rect(hull: &[Point2<f64>]) -> OrientedRect {
    let m = hull.len();
    if m < 2 {
        return OrientedRect {
            rotation: 0.0,
            width: 0.0,
            height: 0.0,
        };
    }
    if m == 2 {
        let d = hull[1] - hull[0];
        return OrientedRect {
            rotation: -d.y.atan2(d.x),
            width: d.norm(),
            height: 0.0,
        };
    }
    let dir = |i: usize| -> Vector2<f64> {
        let e = hull[(i + 1) % m] - hull[i];
        e / e.norm()
    };
    let dot = |i: usize, u: &Vector2<f64>| hull[i % m].coords.dot(u);
    // Calipers: `far` maximises the projection on the edge direction, `top` on the
    // inward normal, `near` minimises the projection on the edge direction. Each only
    // moves forward as the edge index grows, so every pointer makes at most one turn.
    let u0 = dir(0);
    let n0 = Vector2::new(-u0.y, u0.x);
    let argmax =
        |f: &dyn Fn(usize) -> f64| (0..m).fold(0, |best, i| if f(i) > f(best) { i } else { best });
    let mut far = argmax(&|i| dot(i, &u0));
    let mut top = argmax(&|i| dot(i, &n0));
    let mut near = argmax(&|i| -dot(i, &u0));
    let mut best: Option<(f64, usize, f64, f64)> = None;
    for i in 0..m {
        let u = dir(i);
        let n = Vector2::new(-u.y, u.x);
        for _ in 0..m {
            if dot(far + 1, &u) >= dot(far, &u) {
                far = (far + 1) % m;
            } else {
                break;
            }
        }
        for _ in 0..m {
            if dot(top + 1, &n) >= dot(top, &n) {
                top = (top + 1) % m;
            } else {
                break;
            }
        }
        for _ in 0..m {
            if dot(near + 1, &u) <= dot(near, &u) {
                near = (near + 1) % m;
            } else {
                break;
            }
        }
        let along = dot(far, &u) - dot(near, &u);
        let across = dot(top, &n) - dot(i, &n);
        let area = along * across;
        if best.is_none_or(|(a, ..)| area < a) {
            best = Some((area, i, along, across));
        }
    }
    let Some((_, i, along, across)) = best else {
        return OrientedRect {
            rotation: 0.0,
            width: 0.0,
            height: 0.0,
        };
    };
    let u = dir(i);
    let rotation = -u.y.atan2(u.x);
    if along >= across {
        OrientedRect {
            rotation,
            width: along,
            height: across,
        }
    } else {
        OrientedRect {
            rotation: rotation + std::f64::consts::FRAC_PI_2,
            width: across,
            height: along,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rotate(p: &Point2<f64>, a: f64) -> Point2<f64> {
        let (s, c) = a.sin_cos();
        Point2::new(c * p.x - s * p.y, s * p.x + c * p.y)
    }

    #[test]
    fn hull_of_square_with_interior_and_collinear_points() {
        let pts: Vec<Point2<f64>> = [
            (0.0, 0.0),
            (1.0, 0.0),
            (0.5, 0.0),
            (1.0, 1.0),
            (0.0, 1.0),
            (0.5, 0.5),
        ]
        .iter()
        .map(|&(x, y)| Point2::new(x, y))
        .collect();
        let h = convex_hull(&pts);
        // Expected: the four corners, counter-clockwise from (0,0) (analytic).
        assert_eq!(
            h,
            vec![
                Point2::new(0.0, 0.0),
                Point2::new(1.0, 0.0),
                Point2::new(1.0, 1.0),
                Point2::new(0.0, 1.0)
            ]
        );
    }

    #[test]
    fn min_rect_recovers_a_rotated_rectangle() {
        // A 3 × 1 rectangle rotated by 0.4 rad: the minimum rectangle is the rectangle
        // itself (analytic), and its rotation undoes the 0.4 rad up to a half turn.
        let rect = [(0.0, 0.0), (3.0, 0.0), (3.0, 1.0), (0.0, 1.0), (1.5, 0.5)];
        let pts: Vec<Point2<f64>> = rect
            .iter()
            .map(|&(x, y)| rotate(&Point2::new(x, y), 0.4))
            .collect();
        let r = min_area_rect(&convex_hull(&pts));
        assert!((r.width - 3.0).abs() < 1e-12, "{r:?}");
        assert!((r.height - 1.0).abs() < 1e-12, "{r:?}");
        let turned: Vec<Point2<f64>> = pts.iter().map(|p| rotate(p, r.rotation)).collect();
        let (lo, hi) = turned
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
                (lo.min(p.y), hi.max(p.y))
            });
        assert!((hi - lo - 1.0).abs() < 1e-12);
    }

    #[test]
    fn min_rect_of_regular_octagon_matches_brute_force() {
        // Expected: the minimum over 20 000 sampled angles (brute force), which the
        // calipers must match or beat.
        let pts: Vec<Point2<f64>> = (0..8)
            .map(|k| {
                let a = 0.3 + k as f64 * std::f64::consts::TAU / 8.0;
                Point2::new(2.0 * a.cos(), a.sin())
            })
            .collect();
        let r = min_area_rect(&convex_hull(&pts));
        let brute = (0..20_000)
            .map(|k| {
                let a = k as f64 * std::f64::consts::PI / 20_000.0;
                let t: Vec<Point2<f64>> = pts.iter().map(|p| rotate(p, a)).collect();
                let w = t.iter().map(|p| p.x).fold(f64::NEG_INFINITY, f64::max)
                    - t.iter().map(|p| p.x).fold(f64::INFINITY, f64::min);
                let h = t.iter().map(|p| p.y).fold(f64::NEG_INFINITY, f64::max)
                    - t.iter().map(|p| p.y).fold(f64::INFINITY, f64::min);
                w * h
            })
            .fold(f64::INFINITY, f64::min);
        assert!(r.width * r.height <= brute + 1e-9, "{r:?} vs {brute}");
        assert!(r.width * r.height >= brute * (1.0 - 1e-3));
    }
}
