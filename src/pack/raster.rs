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

    /// The mask grown by `r` cells: every cell whose closed square comes nearer than
    /// `r` cells (Euclidean) to an occupied cell's square. Two cells `(dx, dy)` apart
    /// are `√(max(|dx|−1, 0)² + max(|dy|−1, 0)²)` apart, so the structuring element is
    /// a rounded square: along the axes it reaches `r` cells as a square would, but
    /// its corners are cut, which keeps slanted chart outlines from paying up to
    /// `√2 · r` of padding. The result is `2r` cells wider and taller; its cell
    /// `(x, y)` is this mask's `(x − r, y − r)`.
    pub fn dilate(&self, r: i32) -> Mask {
        let height = self.height + 2 * r;
        let reach: Vec<i32> = (0..=r.max(0)).map(|dy| half_width(r, dy)).collect();
        let mut rows: Vec<Vec<(i32, i32)>> = vec![Vec::new(); height.max(0) as usize];
        for (y, row) in self.rows.iter().enumerate() {
            for (k, out) in rows
                .iter_mut()
                .skip(y)
                .take((2 * r + 1) as usize)
                .enumerate()
            {
                let w = reach[(k as i32 - r).unsigned_abs() as usize];
                out.extend(row.iter().map(|&(a, b)| (a + r - w, b + r + w)));
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

/// Largest `dx ≤ r` with `max(dx−1, 0)² + max(dy−1, 0)² < r²` (see [`Mask::dilate`]);
/// `dy ≤ r`, so `dx = 0` always qualifies.
fn half_width(r: i32, dy: i32) -> i32 {
    let gap = |d: i32| i64::from((d - 1).max(0));
    let r2 = i64::from(r) * i64::from(r);
    (0..=r)
        .rev()
        .find(|&dx| gap(dx) * gap(dx) + gap(dy) * gap(dy) < r2)
        .unwrap_or(0)
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

/// Conservative raster of regions bounded by directed segments, in cell coordinates.
///
/// Each item of `regions` is one region: segments (in any order) whose non-zero
/// winding number defines its interior, e.g. a polygon's edges, or the boundary edges
/// of a fold-free chart (holes wind the other way and stay empty). Marks every cell
/// whose closed square lies within [`EPS`] of a segment, and every cell whose centre
/// has non-zero winding number; coordinates in cell units within `[EPS, width − EPS]` × `[EPS, height − EPS]` up
/// to rounding (cells outside the grid are clipped).
pub fn rasterize_regions<'a>(
    regions: impl Iterator<Item = &'a [[Point2<f64>; 2]]>,
    width: i32,
    height: i32,
) -> Mask {
    // One byte per cell: marking a run is a fill, and the intervals are read off once
    // at the end (cheaper than collecting and sorting a run per face and row).
    let w = width.max(0) as usize;
    let mut cells = vec![false; w * height.max(0) as usize];
    let mut mark = |y: i64, x0: i64, x1: i64| {
        if y < 0 || y >= i64::from(height) {
            return;
        }
        let a = x0.max(0);
        let b = x1.min(i64::from(width) - 1);
        if a <= b {
            let row = y as usize * w;
            cells[row + a as usize..=row + b as usize].fill(true);
        }
    };
    // (row, x, direction) of every crossing of a row's centre line by a segment.
    let mut crossings: Vec<(i64, f64, i32)> = Vec::new();
    for segments in regions {
        crossings.clear();
        for &[a, b] in segments {
            // Edges: every cell the segment (widened by EPS) crosses, row by row.
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
            // Interior: where the segment crosses a row's centre line.
            let top = (yhi - 0.5).ceil() as i64;
            for y in ((ylo - 0.5).floor() as i64).max(0)..=top.min(i64::from(height) - 1) {
                let yc = y as f64 + 0.5;
                if (a.y <= yc) != (b.y <= yc) {
                    let x = a.x + (yc - a.y) * (b.x - a.x) / (b.y - a.y);
                    crossings.push((y, x, if b.y > a.y { 1 } else { -1 }));
                }
            }
        }
        crossings.sort_by(|p, q| p.0.cmp(&q.0).then(p.1.total_cmp(&q.1)));
        let mut winding = 0;
        for pair in crossings.windows(2) {
            let ((y0, x0, d0), (y1, x1, _)) = (pair[0], pair[1]);
            winding = if y0 == y1 { winding + d0 } else { 0 };
            if y0 == y1 && winding != 0 {
                mark(y0, (x0 - 0.5).ceil() as i64, (x1 - 0.5).floor() as i64);
            }
        }
    }
    let mut rows: Vec<Vec<(i32, i32)>> = cells
        .chunks(w.max(1))
        .take(height.max(0) as usize)
        .map(|row| {
            let mut runs = Vec::new();
            let mut x = 0;
            while let Some(start) = row[x..].iter().position(|&c| c).map(|k| k + x) {
                let end = row[start..]
                    .iter()
                    .position(|&c| !c)
                    .map_or(w, |k| k + start);
                runs.push((start as i32, end as i32 - 1));
                x = end;
            }
            runs
        })
        .collect();
    rows.resize(height.max(0) as usize, Vec::new());
    Mask {
        width,
        height,
        rows,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Polygons (corners in order) rasterised as regions of their own edges.
    fn rasterize<'a>(
        polygons: impl Iterator<Item = &'a [Point2<f64>]>,
        width: i32,
        height: i32,
    ) -> Mask {
        let groups: Vec<Vec<[Point2<f64>; 2]>> = polygons
            .map(|poly| {
                let n = poly.len();
                (0..n).map(|i| [poly[i], poly[(i + 1) % n]]).collect()
            })
            .collect();
        rasterize_regions(groups.iter().map(|g| g.as_slice()), width, height)
    }

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

    #[test]
    fn rounded_dilation_keeps_every_cell_nearer_than_r_and_no_other() {
        // Brute force over offsets: a cell (dx, dy) from the source cell must be
        // covered exactly when its square is nearer than r to the source square.
        let m = Mask {
            width: 1,
            height: 1,
            rows: vec![vec![(0, 0)]],
        };
        for r in 0..7 {
            let d = m.dilate(r);
            for y in 0..d.height {
                for x in 0..d.width {
                    let (dx, dy) = (f64::from((x - r).abs()), f64::from((y - r).abs()));
                    let near = (dx - 1.0).max(0.0).hypot((dy - 1.0).max(0.0)) < f64::from(r);
                    let covered = d.rows[y as usize].iter().any(|&(a, b)| a <= x && x <= b);
                    assert_eq!(
                        covered,
                        near || (dx == 0.0 && dy == 0.0),
                        "r {r}, cell ({x}, {y})"
                    );
                }
            }
        }
    }
}
