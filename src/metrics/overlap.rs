//! Pairs of faces whose UV polygons overlap (their interiors intersect).
//!
//! Input: UV values, one UV index per face corner (layout of `mesh.face_vertices`)
//! and the mesh (for its face offsets). Output: the overlapping pairs `(f, g)` with
//! `f < g` (0-based face indices), sorted.
//!
//! Touching along an edge or at a vertex is not overlap. Polygons may be non-convex.
//! Method: a uniform grid on the polygons' bounding boxes proposes candidate pairs
//! (each pair is examined once, in the grid cell holding the lower-left corner of the
//! two boxes' intersection); a candidate overlaps when (a) an edge of one polygon
//! properly crosses an edge of the other, or (b) a corner, or the midpoint of an
//! edge piece between the other polygon's corners lying on that edge, is strictly
//! inside the other polygon, or (c) each boundary lies on the other (the same region
//! twice). For simple polygons without proper crossings, (b) and (c) are exact: along
//! each edge piece the inside/outside status cannot change.
//!
//! Predicates use a distance tolerance of [`RELATIVE_TOLERANCE`] times the layout's
//! larger bounding-box side: points closer than that to a line count as on it, so
//! slivers thinner than it are not reported. Points are inside by the nonzero winding
//! rule, so clockwise (mirrored) polygons work and self-intersecting (folded) ones get
//! a sensible answer. Faces with a bad UV index, a non-finite UV, fewer than three
//! corners or a UV area below the tolerance squared have no interior and never
//! overlap.

use nalgebra::{Point2, Vector2};
use rayon::prelude::*;

use super::face::signed_area;
use crate::mesh::PolyMesh;

/// Distance tolerance of the predicates, relative to the layout's size. Large enough
/// to absorb six-decimal rounding of UVs written to text files.
pub const RELATIVE_TOLERANCE: f64 = 1e-6;

/// Pairs `(f, g)`, `f < g`, of faces whose UV polygons' interiors intersect, sorted.
/// See the module documentation for the method and tolerance.
pub fn overlapping_face_pairs(
    uvs: &[Point2<f64>],
    corner_uvs: &[u32],
    mesh: &PolyMesh,
) -> Vec<(u32, u32)> {
    overlapping_pairs_among(uvs, corner_uvs, mesh, None)
}

/// UV polygons of the examined faces, flattened.
struct Polygons {
    face: Vec<u32>,
    offsets: Vec<usize>,
    points: Vec<Point2<f64>>,
    boxes: Vec<[f64; 4]>,
    convex: Vec<bool>,
}

impl Polygons {
    fn poly(&self, k: usize) -> &[Point2<f64>] {
        &self.points[self.offsets[k]..self.offsets[k + 1]]
    }
}

fn uv_polygon(
    uvs: &[Point2<f64>],
    corner_uvs: &[u32],
    mesh: &PolyMesh,
    f: usize,
) -> Option<Vec<Point2<f64>>> {
    let start = *mesh.face_offsets.get(f)?;
    let end = *mesh.face_offsets.get(f + 1)?;
    let ids = corner_uvs.get(start..end)?;
    if ids.len() < 3 {
        return None;
    }
    ids.iter()
        .map(|&t| {
            uvs.get(t as usize)
                .copied()
                .filter(|p| p.x.is_finite() && p.y.is_finite())
        })
        .collect()
}

fn bounding_box(poly: &[Point2<f64>]) -> [f64; 4] {
    poly.iter().fold(
        [
            f64::INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NEG_INFINITY,
        ],
        |b, p| [b[0].min(p.x), b[1].min(p.y), b[2].max(p.x), b[3].max(p.y)],
    )
}

/// Overlapping pairs among `faces` (all faces when `None`; out-of-range ids ignored).
pub(crate) fn overlapping_pairs_among(
    uvs: &[Point2<f64>],
    corner_uvs: &[u32],
    mesh: &PolyMesh,
    faces: Option<&[u32]>,
) -> Vec<(u32, u32)> {
    let ids: Vec<u32> = match faces {
        Some(list) => {
            let mut v = list.to_vec();
            v.sort_unstable();
            v.dedup();
            v
        }
        None => (0..mesh.face_count() as u32).collect(),
    };
    let polys: Vec<(u32, Vec<Point2<f64>>)> = ids
        .par_iter()
        .filter_map(|&f| uv_polygon(uvs, corner_uvs, mesh, f as usize).map(|p| (f, p)))
        .collect();
    let layout = polys.iter().fold(
        [
            f64::INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NEG_INFINITY,
        ],
        |b, (_, p)| {
            let q = bounding_box(p);
            [
                b[0].min(q[0]),
                b[1].min(q[1]),
                b[2].max(q[2]),
                b[3].max(q[3]),
            ]
        },
    );
    let size = (layout[2] - layout[0]).max(layout[3] - layout[1]);
    if !(size.is_finite() && size > 0.0) {
        return Vec::new();
    }
    let tol = RELATIVE_TOLERANCE * size;

    let mut set = Polygons {
        face: Vec::new(),
        offsets: vec![0],
        points: Vec::new(),
        boxes: Vec::new(),
        convex: Vec::new(),
    };
    for (f, p) in polys {
        if signed_area(&p).abs() <= tol * tol {
            continue;
        }
        set.boxes.push(bounding_box(&p));
        set.convex.push(is_convex(&p));
        set.face.push(f);
        set.points.extend_from_slice(&p);
        set.offsets.push(set.points.len());
    }
    let grid = Grid::new(&set.boxes, layout);
    let mut pairs: Vec<(u32, u32)> = (0..grid.cell_count())
        .into_par_iter()
        .flat_map_iter(|cell| {
            let members = grid.members(cell);
            let mut found = Vec::new();
            for (a, &i) in members.iter().enumerate() {
                for &j in &members[a + 1..] {
                    let (bi, bj) = (set.boxes[i], set.boxes[j]);
                    let lo_x = bi[0].max(bj[0]);
                    let lo_y = bi[1].max(bj[1]);
                    if bi[2].min(bj[2]) - lo_x <= tol || bi[3].min(bj[3]) - lo_y <= tol {
                        continue;
                    }
                    if grid.cell_of(lo_x, lo_y) != cell {
                        continue;
                    }
                    let (p, q) = (set.poly(i), set.poly(j));
                    let overlap = if set.convex[i] && set.convex[j] {
                        convex_interiors_intersect(p, q, tol)
                    } else {
                        interiors_intersect(p, q, tol)
                    };
                    if overlap {
                        let (f, g) = (set.face[i], set.face[j]);
                        found.push((f.min(g), f.max(g)));
                    }
                }
            }
            found
        })
        .collect();
    pairs.sort_unstable();
    pairs
}

/// Uniform grid over the layout; each cell lists the polygons whose boxes touch it.
struct Grid {
    origin: [f64; 2],
    cell: f64,
    nx: usize,
    ny: usize,
    starts: Vec<usize>,
    items: Vec<usize>,
}

impl Grid {
    fn new(boxes: &[[f64; 4]], layout: [f64; 4]) -> Self {
        let width = layout[2] - layout[0];
        let height = layout[3] - layout[1];
        let count = boxes.len().max(1);
        let mean_extent = boxes
            .iter()
            .map(|b| (b[2] - b[0]).max(b[3] - b[1]))
            .sum::<f64>()
            / count as f64;
        // Cells about one polygon wide, but no more than ~4 cells per polygon.
        let mut cell = mean_extent.max(width.max(height) * 1e-6);
        let dims = |c: f64| {
            (
                ((width / c).ceil() as usize).max(1),
                ((height / c).ceil() as usize).max(1),
            )
        };
        let (mut nx, mut ny) = dims(cell);
        while nx.saturating_mul(ny) > 4 * count + 16 {
            cell *= 1.5;
            (nx, ny) = dims(cell);
        }
        let mut grid = Grid {
            origin: [layout[0], layout[1]],
            cell,
            nx,
            ny,
            starts: vec![0; nx * ny + 1],
            items: Vec::new(),
        };
        let spans: Vec<[usize; 4]> = boxes.iter().map(|b| grid.span(b)).collect();
        for s in &spans {
            for y in s[1]..=s[3] {
                for x in s[0]..=s[2] {
                    grid.starts[y * nx + x + 1] += 1;
                }
            }
        }
        for c in 0..nx * ny {
            grid.starts[c + 1] += grid.starts[c];
        }
        let mut fill = grid.starts.clone();
        grid.items = vec![0; grid.starts[nx * ny]];
        for (k, s) in spans.iter().enumerate() {
            for y in s[1]..=s[3] {
                for x in s[0]..=s[2] {
                    let c = y * nx + x;
                    grid.items[fill[c]] = k;
                    fill[c] += 1;
                }
            }
        }
        grid
    }

    fn cell_count(&self) -> usize {
        self.nx * self.ny
    }

    fn axis(&self, v: f64, origin: f64, n: usize) -> usize {
        let i = ((v - origin) / self.cell).floor();
        if i <= 0.0 {
            0
        } else {
            (i as usize).min(n - 1)
        }
    }

    fn span(&self, b: &[f64; 4]) -> [usize; 4] {
        [
            self.axis(b[0], self.origin[0], self.nx),
            self.axis(b[1], self.origin[1], self.ny),
            self.axis(b[2], self.origin[0], self.nx),
            self.axis(b[3], self.origin[1], self.ny),
        ]
    }

    fn cell_of(&self, x: f64, y: f64) -> usize {
        self.axis(y, self.origin[1], self.ny) * self.nx + self.axis(x, self.origin[0], self.nx)
    }

    fn members(&self, cell: usize) -> &[usize] {
        &self.items[self.starts[cell]..self.starts[cell + 1]]
    }
}

fn cross(u: Vector2<f64>, v: Vector2<f64>) -> f64 {
    u.x * v.y - u.y * v.x
}

/// Side of `c` relative to the line through `a`, `b`: +1 left, −1 right, 0 within
/// `tol` of the line (or `a`, `b` closer than `tol`).
fn side(a: Point2<f64>, b: Point2<f64>, c: Point2<f64>, tol: f64) -> i8 {
    let ab = b - a;
    let len = ab.norm();
    if len <= tol {
        return 0;
    }
    let d = cross(ab, c - a) / len;
    if d > tol {
        1
    } else if d < -tol {
        -1
    } else {
        0
    }
}

/// Distance from `p` to the segment `a b`.
fn segment_distance(p: Point2<f64>, a: Point2<f64>, b: Point2<f64>) -> f64 {
    let ab = b - a;
    let len2 = ab.norm_squared();
    let t = if len2 > 0.0 {
        ((p - a).dot(&ab) / len2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    (p - (a + ab * t)).norm()
}

/// Segments `a b` and `c d` cross at a point inside both, transversally.
fn properly_cross(
    a: Point2<f64>,
    b: Point2<f64>,
    c: Point2<f64>,
    d: Point2<f64>,
    tol: f64,
) -> bool {
    side(a, b, c, tol) * side(a, b, d, tol) < 0 && side(c, d, a, tol) * side(c, d, b, tol) < 0
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Location {
    Inside,
    Outside,
    Boundary,
}

fn edges(poly: &[Point2<f64>]) -> impl Iterator<Item = (Point2<f64>, Point2<f64>)> + '_ {
    let n = poly.len();
    (0..n).map(move |i| (poly[i], poly[(i + 1) % n]))
}

/// Where `p` lies relative to `poly`: on its boundary (within `tol`), or inside by
/// the nonzero winding rule, or outside.
fn locate(p: Point2<f64>, poly: &[Point2<f64>], tol: f64) -> Location {
    let mut winding = 0i32;
    for (a, b) in edges(poly) {
        if segment_distance(p, a, b) <= tol {
            return Location::Boundary;
        }
        let c = cross(b - a, p - a);
        if a.y <= p.y {
            if b.y > p.y && c > 0.0 {
                winding += 1;
            }
        } else if b.y <= p.y && c < 0.0 {
            winding -= 1;
        }
    }
    if winding != 0 {
        Location::Inside
    } else {
        Location::Outside
    }
}

/// Tests the pieces of `p`'s boundary against `q`: returns `(some point of ∂p is
/// strictly inside q, every piece of ∂p lies on ∂q)`.
fn boundary_against(p: &[Point2<f64>], q: &[Point2<f64>], tol: f64) -> (bool, bool) {
    let mut all_on = true;
    let mut cuts: Vec<f64> = Vec::new();
    for (a, b) in edges(p) {
        match locate(a, q, tol) {
            Location::Inside => return (true, false),
            Location::Outside => all_on = false,
            Location::Boundary => {}
        }
        let ab = b - a;
        let len2 = ab.norm_squared();
        cuts.clear();
        cuts.push(0.0);
        if len2 > 0.0 {
            for &v in q {
                if segment_distance(v, a, b) <= tol {
                    let t = (v - a).dot(&ab) / len2;
                    if t > 0.0 && t < 1.0 {
                        cuts.push(t);
                    }
                }
            }
        }
        cuts.push(1.0);
        cuts.sort_unstable_by(f64::total_cmp);
        for w in cuts.windows(2) {
            let mid = a + ab * (0.5 * (w[0] + w[1]));
            match locate(mid, q, tol) {
                Location::Inside => return (true, false),
                Location::Outside => all_on = false,
                Location::Boundary => {}
            }
        }
    }
    (false, all_on)
}

/// Convex and simple: every turn has the same sign (or is straight) and the edge
/// directions go around once (their x-components change sign at most twice, which
/// rules out star-shaped self-intersections).
fn is_convex(poly: &[Point2<f64>]) -> bool {
    let n = poly.len();
    let mut orientation = 0.0;
    let mut signs: Vec<bool> = Vec::with_capacity(n);
    for i in 0..n {
        let e0 = poly[(i + 1) % n] - poly[i];
        let e1 = poly[(i + 2) % n] - poly[(i + 1) % n];
        let turn = cross(e0, e1);
        if turn != 0.0 {
            if orientation == 0.0 {
                orientation = turn.signum();
            } else if turn.signum() != orientation {
                return false;
            }
        }
        if e0.x != 0.0 {
            signs.push(e0.x > 0.0);
        }
    }
    let changes = (0..signs.len())
        .filter(|&k| signs[k] != signs[(k + 1) % signs.len()])
        .count();
    changes <= 2
}

/// Interiors of two convex polygons intersect unless an edge normal separates them
/// (separating axis theorem), projections overlapping by at most `tol`.
fn convex_interiors_intersect(p: &[Point2<f64>], q: &[Point2<f64>], tol: f64) -> bool {
    let project = |poly: &[Point2<f64>], axis: Vector2<f64>| {
        poly.iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
                let t = v.coords.dot(&axis);
                (lo.min(t), hi.max(t))
            })
    };
    for (a, b) in edges(p).chain(edges(q)) {
        let axis = Vector2::new(a.y - b.y, b.x - a.x);
        let len = axis.norm();
        if len <= tol {
            continue;
        }
        let (p_lo, p_hi) = project(p, axis);
        let (q_lo, q_hi) = project(q, axis);
        if p_hi.min(q_hi) - p_lo.max(q_lo) <= tol * len {
            return false;
        }
    }
    true
}

/// Whether the interiors of two UV polygons intersect (see the module docs).
fn interiors_intersect(p: &[Point2<f64>], q: &[Point2<f64>], tol: f64) -> bool {
    for (a, b) in edges(p) {
        for (c, d) in edges(q) {
            if properly_cross(a, b, c, d, tol) {
                return true;
            }
        }
    }
    let (p_in_q, p_on_q) = boundary_against(p, q, tol);
    if p_in_q {
        return true;
    }
    let (q_in_p, q_on_p) = boundary_against(q, p, tol);
    q_in_p || (p_on_q && q_on_p)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn square(x: f64, y: f64, s: f64) -> Vec<Point2<f64>> {
        vec![
            Point2::new(x, y),
            Point2::new(x + s, y),
            Point2::new(x + s, y + s),
            Point2::new(x, y + s),
        ]
    }

    /// Both predicates when both polygons are convex, else the general one.
    fn intersect(p: &[Point2<f64>], q: &[Point2<f64>], tol: f64) -> bool {
        let general = interiors_intersect(p, q, tol);
        if is_convex(p) && is_convex(q) {
            assert_eq!(convex_interiors_intersect(p, q, tol), general);
        }
        general
    }

    #[test]
    fn convexity_test() {
        assert!(is_convex(&square(0.0, 0.0, 1.0)));
        let mut cw = square(0.0, 0.0, 1.0);
        cw.reverse();
        assert!(is_convex(&cw));
        let with_straight_corner = [
            Point2::new(0.0, 0.0),
            Point2::new(1.0, 0.0),
            Point2::new(2.0, 0.0),
            Point2::new(2.0, 1.0),
        ];
        assert!(is_convex(&with_straight_corner));
        let dart = [
            Point2::new(0.0, 0.0),
            Point2::new(1.0, 0.0),
            Point2::new(0.2, 0.2),
            Point2::new(0.0, 1.0),
        ];
        assert!(!is_convex(&dart));
        let pentagram: Vec<Point2<f64>> = (0..5)
            .map(|k| {
                let t = std::f64::consts::TAU * (2 * k) as f64 / 5.0;
                Point2::new(t.cos(), t.sin())
            })
            .collect();
        assert!(!is_convex(&pentagram));
    }

    // Expected values: analytic (plane geometry of the listed polygons).
    #[test]
    fn interior_test_cases() {
        let tol = 1e-9;
        let unit = square(0.0, 0.0, 1.0);
        // Same region twice, also with reversed orientation.
        assert!(intersect(&unit, &unit, tol));
        let reversed: Vec<_> = unit.iter().rev().copied().collect();
        assert!(intersect(&unit, &reversed, tol));
        // Strictly nested.
        assert!(intersect(&unit, &square(0.25, 0.25, 0.5), tol));
        // Nested and sharing a corner and two edge pieces.
        assert!(intersect(&unit, &square(0.0, 0.0, 0.5), tol));
        // Triangle inscribed in the square on its corners: only its diagonal is inside.
        let tri = [
            Point2::new(0.0, 0.0),
            Point2::new(1.0, 0.0),
            Point2::new(1.0, 1.0),
        ];
        assert!(intersect(&unit, &tri, tol));
        // Sharing an edge, or a corner, or part of an edge: no overlap.
        assert!(!intersect(&unit, &square(1.0, 0.0, 1.0), tol));
        assert!(!intersect(&unit, &square(1.0, 1.0, 1.0), tol));
        assert!(!intersect(&unit, &square(1.0, 0.5, 0.3), tol));
        // A thin cross: edges cross, no corner of either is inside the other.
        let bar_x = [
            Point2::new(-1.0, 0.4),
            Point2::new(2.0, 0.4),
            Point2::new(2.0, 0.6),
            Point2::new(-1.0, 0.6),
        ];
        let bar_y = [
            Point2::new(0.4, -1.0),
            Point2::new(0.6, -1.0),
            Point2::new(0.6, 2.0),
            Point2::new(0.4, 2.0),
        ];
        assert!(intersect(&bar_x, &bar_y, tol));
        // An edge passing exactly through the other's corners (no proper crossing).
        let diamond = [
            Point2::new(0.5, -0.5),
            Point2::new(1.5, 0.5),
            Point2::new(0.5, 1.5),
            Point2::new(-0.5, 0.5),
        ];
        assert!(intersect(&unit, &diamond, tol));
        // Non-convex L shape with a square in its notch, touching along two edges.
        let l_shape = [
            Point2::new(0.0, 0.0),
            Point2::new(2.0, 0.0),
            Point2::new(2.0, 1.0),
            Point2::new(1.0, 1.0),
            Point2::new(1.0, 2.0),
            Point2::new(0.0, 2.0),
        ];
        assert!(!intersect(&l_shape, &square(1.0, 1.0, 1.0), tol));
        assert!(intersect(&l_shape, &square(0.9, 0.9, 1.0), tol));
    }
}
