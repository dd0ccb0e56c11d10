//! Conservative rasterisation of UV polygons on the packing grid, and dilation.
//!
//! A cell is marked when its closed square meets the polygon, widened by [`EPS`]
//! cells, so rounding in later transforms never moves geometry out of its cells.
//! Edges are covered row by row (every cell the segment crosses), interiors by
//! sampling cell centres with the non-zero winding rule; together they mark every
//! cell the polygon touches.

use nalgebra::Point2;

/// Margin (in cells) by which geometry is widened before it is rasterised.
pub const EPS: f64 = 1e-7;

/// Cells covered by a chart: `rows[y]` lists occupied columns as sorted, disjoint,
/// non-adjacent inclusive intervals `(first, last)`, `0 ≤ first ≤ last < width`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Mask {
    /// Columns spanned.
    pub width: i32,
    /// Rows spanned.
    pub height: i32,
    /// Occupied intervals per row.
    pub rows: Vec<Vec<(i32, i32)>>,
}

impl Mask {
    /// `(row, length of its longest interval)` for every non-empty row, longest first
    /// (ties: lower row first).
    pub fn widest_runs(&self) -> Vec<(usize, i32)> {
        let mut runs: Vec<(usize, i32)> = self
            .rows
            .iter()
            .enumerate()
            .filter_map(|(y, r)| r.iter().map(|&(a, b)| b - a + 1).max().map(|w| (y, w)))
            .collect();
        runs.sort_by(|p, q| q.1.cmp(&p.1).then(p.0.cmp(&q.0)));
        runs
    }

    /// The mask grown by `r` cells in every direction with a square structuring
    /// element (every cell within Chebyshev distance `r` of an occupied cell). The
    /// result is `2r` cells wider and taller; its cell `(x, y)` is this mask's
    /// `(x − r, y − r)`.
    pub fn dilate(&self, r: i32) -> Mask {
        let height = self.height + 2 * r;
        let mut rows: Vec<Vec<(i32, i32)>> = vec![Vec::new(); height.max(0) as usize];
        for (y, row) in self.rows.iter().enumerate() {
            for out in rows.iter_mut().skip(y).take((2 * r + 1) as usize) {
                out.extend(row.iter().map(|&(a, b)| (a, b + 2 * r)));
            }
        }
        for row in rows.iter_mut() {
            merge(row);
        }
        Mask {
            width: self.width + 2 * r,
            height,
            rows,
        }
    }
}

/// Sorts intervals and merges overlapping or adjacent ones.
fn merge(row: &mut Vec<(i32, i32)>) {
    row.sort_unstable();
    let mut out: Vec<(i32, i32)> = Vec::with_capacity(row.len());
    for &(a, b) in row.iter() {
        match out.last_mut() {
            Some(last) if a <= last.1 + 1 => last.1 = last.1.max(b),
            _ => out.push((a, b)),
        }
    }
    *row = out;
}

/// Conservative raster of polygons given in cell coordinates.
///
/// `polygons`: each polygon's corners in order (any orientation, may be non-convex or
/// degenerate), in cell units, all with coordinates in `[EPS, width − EPS]` ×
/// `[EPS, height − EPS]` up to rounding (cells outside the grid are clipped).
/// Returns a `width × height` mask marking every cell whose closed square lies within
/// [`EPS`] of some polygon.
pub fn rasterize<'a>(
    polygons: impl Iterator<Item = &'a [Point2<f64>]>,
    width: i32,
    height: i32,
) -> Mask {
    let mut rows: Vec<Vec<(i32, i32)>> = vec![Vec::new(); height.max(0) as usize];
    let mut mark = |y: i64, x0: i64, x1: i64| {
        if y < 0 || y >= i64::from(height) {
            return;
        }
        let a = x0.max(0);
        let b = x1.min(i64::from(width) - 1);
        if a <= b {
            rows[y as usize].push((a as i32, b as i32));
        }
    };
    let mut crossings: Vec<(f64, i32)> = Vec::new();
    for poly in polygons {
        let n = poly.len();
        if n == 0 {
            continue;
        }
        // Edges: every cell a segment (widened by EPS) crosses, row by row.
        for i in 0..n {
            let a = poly[i];
            let b = poly[(i + 1) % n];
            let (ylo, yhi) = (a.y.min(b.y), a.y.max(b.y));
            let first = (ylo - EPS).floor() as i64;
            let last = (yhi + EPS).floor() as i64;
            for y in first..=last {
                let (s0, s1) = (y as f64 - EPS, y as f64 + 1.0 + EPS);
                let (x0, x1) = if b.y == a.y {
                    (a.x.min(b.x), a.x.max(b.x))
                } else {
                    let t0 = ((s0 - a.y) / (b.y - a.y)).clamp(0.0, 1.0);
                    let t1 = ((s1 - a.y) / (b.y - a.y)).clamp(0.0, 1.0);
                    let xa = a.x + t0 * (b.x - a.x);
                    let xb = a.x + t1 * (b.x - a.x);
                    (xa.min(xb), xa.max(xb))
                };
                mark(y, (x0 - EPS).floor() as i64, (x1 + EPS).floor() as i64);
            }
        }
        // Interior: cells whose centre has non-zero winding number.
        let (ylo, yhi) = poly
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
                (lo.min(p.y), hi.max(p.y))
            });
        let first = (ylo - 0.5).ceil().max(0.0) as i64;
        let last = ((yhi - 0.5).floor() as i64).min(i64::from(height) - 1);
        for y in first..=last {
            let yc = y as f64 + 0.5;
            crossings.clear();
            for i in 0..n {
                let a = poly[i];
                let b = poly[(i + 1) % n];
                if (a.y <= yc) != (b.y <= yc) {
                    let x = a.x + (yc - a.y) * (b.x - a.x) / (b.y - a.y);
                    crossings.push((x, if b.y > a.y { 1 } else { -1 }));
                }
            }
            crossings.sort_by(|p, q| p.0.total_cmp(&q.0));
            let mut winding = 0;
            for w in crossings.windows(2) {
                winding += w[0].1;
                if winding != 0 {
                    let x0 = (w[0].0 - 0.5).ceil() as i64;
                    let x1 = (w[1].0 - 0.5).floor() as i64;
                    mark(y, x0, x1);
                }
            }
        }
    }
    for row in rows.iter_mut() {
        merge(row);
    }
    Mask {
        width,
        height,
        rows,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cells(m: &Mask) -> usize {
        m.rows
            .iter()
            .flatten()
            .map(|&(a, b)| (b - a + 1) as usize)
            .sum()
    }

    #[test]
    fn axis_aligned_square_marks_its_cells_only() {
        // A square covering cells 0..3 × 0..3 exactly (shrunk by 2·EPS): 9 cells
        // (analytic).
        let e = 2.0 * EPS;
        let sq = [
            Point2::new(e, e),
            Point2::new(3.0 - e, e),
            Point2::new(3.0 - e, 3.0 - e),
            Point2::new(e, 3.0 - e),
        ];
        let m = rasterize(std::iter::once(&sq[..]), 3, 3);
        assert_eq!(cells(&m), 9);
        assert_eq!(m.rows, vec![vec![(0, 2)]; 3]);
    }

    #[test]
    fn thin_diagonal_marks_every_crossed_cell() {
        // A sliver from (0.1, 0.1) to (4.9, 2.9): every cell the segment passes through
        // must be marked; checked against dense sampling of the segment.
        let tri = [
            Point2::new(0.1, 0.1),
            Point2::new(4.9, 2.9),
            Point2::new(4.9, 2.9),
        ];
        let m = rasterize(std::iter::once(&tri[..]), 5, 3);
        for k in 0..=10_000 {
            let t = k as f64 / 10_000.0;
            let (x, y) = (0.1 + 4.8 * t, 0.1 + 2.8 * t);
            let (cx, cy) = (x.floor() as i32, y.floor() as i32);
            assert!(
                m.rows[cy as usize].iter().any(|&(a, b)| a <= cx && cx <= b),
                "cell ({cx}, {cy}) missed"
            );
        }
        // A segment of slope 2.8/4.8 crosses 5 + 3 − 1 = 7 cells (analytic).
        assert_eq!(cells(&m), 7);
    }

    #[test]
    fn dilation_by_one_grows_a_cell_to_three_by_three() {
        let m = Mask {
            width: 1,
            height: 1,
            rows: vec![vec![(0, 0)]],
        };
        let d = m.dilate(1);
        assert_eq!((d.width, d.height), (3, 3));
        assert_eq!(d.rows, vec![vec![(0, 2)]; 3]);
    }
}
