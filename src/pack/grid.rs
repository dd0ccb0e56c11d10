//! Occupancy bitmap of the packing grid and the bottom-left first-fit search.
//!
//! Placed charts are stored dilated by the padding; a new chart is tested with its
//! undilated mask, so two charts' cells end up more than `padding` cells apart in
//! some axis. Bottom-left placement scans rows upwards and columns rightwards and
//! takes the first position that fits: the bottom-left rule of Baker, Coffman & Rivest
//! (1980), "Orthogonal packings in two dimensions", SIAM J. Computing 9(4), applied to
//! raster footprints instead of rectangles. A collision
//! skips the scan past the highest occupied cell it met, and rows whose longest free
//! run is shorter than the mask's widest row are skipped outright.

use super::raster::Mask;

/// A square occupancy bitmap of `size × size` cells.
#[derive(Clone)]
pub struct Grid {
    size: i32,
    words: usize,
    bits: Vec<u64>,
    /// Longest run of free cells per row.
    free_run: Vec<i32>,
}

impl Grid {
    /// An empty grid of `size × size` cells.
    pub fn new(size: i32) -> Grid {
        let words = (size.max(0) as usize).div_ceil(64);
        Grid {
            size,
            words,
            bits: vec![0; words * size.max(0) as usize],
            free_run: vec![size; size.max(0) as usize],
        }
    }

    /// Highest occupied column in `[a, b]` of row `y` (all within the grid), if any.
    fn highest_set(&self, y: i32, a: i32, b: i32) -> Option<i32> {
        let row = &self.bits[y as usize * self.words..(y as usize + 1) * self.words];
        let (wa, wb) = ((a / 64) as usize, (b / 64) as usize);
        for w in (wa..=wb).rev() {
            let mut word = row[w];
            if w == wb {
                let keep = (b % 64) as u32;
                if keep < 63 {
                    word &= (1u64 << (keep + 1)) - 1;
                }
            }
            if w == wa {
                word &= !0u64 << (a % 64) as u32;
            }
            if word != 0 {
                return Some(w as i32 * 64 + 63 - word.leading_zeros() as i32);
            }
        }
        None
    }

    /// First free column at or after `x` in row `y` (`size` when the row is full).
    fn next_free(&self, y: i32, x: i32) -> i32 {
        let row = &self.bits[y as usize * self.words..(y as usize + 1) * self.words];
        let mut w = (x / 64) as usize;
        let mut word = !row[w] & (!0u64 << (x % 64) as u32);
        loop {
            if word != 0 {
                return (w as i32 * 64 + word.trailing_zeros() as i32).min(self.size);
            }
            w += 1;
            match row.get(w) {
                Some(&next) => word = !next,
                None => return self.size,
            }
        }
    }

    fn longest_free_run(&self, y: i32) -> i32 {
        let row = &self.bits[y as usize * self.words..(y as usize + 1) * self.words];
        let (mut best, mut run) = (0, 0);
        for (w, &word) in row.iter().enumerate() {
            // Columns past the grid's edge count as occupied.
            let beyond = self.size - w as i32 * 64;
            let word = if beyond < 64 {
                word | (!0u64 << beyond as u32)
            } else {
                word
            };
            if word == 0 {
                run += 64;
            } else if word == !0 {
                best = best.max(run);
                run = 0;
            } else {
                for bit in 0..64 {
                    if word >> bit & 1 == 0 {
                        run += 1;
                    } else {
                        best = best.max(run);
                        run = 0;
                    }
                }
            }
        }
        best.max(run)
    }

    /// First position `(x, y)` (lowest `y`, then lowest `x`) with `y ≤ y_limit` where
    /// `mask` fits with its cells inside `[margin, size − margin)` on both axes and on
    /// free cells. `widest` lists `(row, width of its longest interval)` of `mask`,
    /// widest first ([`Mask::widest_runs`]); rows are rejected against it before any
    /// bit is read.
    pub fn find(
        &self,
        mask: &Mask,
        widest: &[(usize, i32)],
        margin: i32,
        y_limit: i32,
    ) -> Option<(i32, i32)> {
        let x_max = self.size - margin - mask.width;
        let y_max = (self.size - margin - mask.height).min(y_limit);
        let h = mask.rows.len();
        // Mask row that collided last: collisions cluster, so it is tested first.
        let mut hint = 0;
        'rows: for y in margin..=y_max {
            for &(r, w) in widest {
                if self.free_run[(y + r as i32) as usize] < w {
                    continue 'rows;
                }
            }
            let mut x = margin;
            'cols: while x <= x_max {
                for k in 0..h {
                    let r = (hint + k) % h;
                    let gy = y + r as i32;
                    for &(a, b) in &mask.rows[r] {
                        if let Some(hit) = self.highest_set(gy, x + a, x + b) {
                            hint = r;
                            x = self.next_free(gy, hit) - a;
                            continue 'cols;
                        }
                    }
                }
                return Some((x, y));
            }
        }
        None
    }

    /// Marks `mask`'s cells with its cell `(0, 0)` at `(x, y)`; cells outside the grid
    /// are dropped.
    pub fn occupy(&mut self, mask: &Mask, x: i32, y: i32) {
        for (r, row) in mask.rows.iter().enumerate() {
            let gy = y + r as i32;
            if gy < 0 || gy >= self.size || row.is_empty() {
                continue;
            }
            let base = gy as usize * self.words;
            for &(a, b) in row {
                let (a, b) = ((x + a).max(0), (x + b).min(self.size - 1));
                if a > b {
                    continue;
                }
                for w in (a / 64)..=(b / 64) {
                    let lo = if w == a / 64 { (a % 64) as u32 } else { 0 };
                    let hi = if w == b / 64 { (b % 64) as u32 } else { 63 };
                    let bits = (!0u64 << lo) & (!0u64 >> (63 - hi));
                    self.bits[base + w as usize] |= bits;
                }
            }
            self.free_run[gy as usize] = self.longest_free_run(gy);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn block(w: i32, h: i32) -> Mask {
        Mask {
            width: w,
            height: h,
            rows: vec![vec![(0, w - 1)]; h as usize],
        }
    }

    #[test]
    fn blocks_fill_rows_bottom_left() {
        // Three 40×40 blocks on a 100-cell grid with margin 0: two fit side by side on
        // the bottom, the third goes above the first (bottom-left rule, by hand).
        let mut g = Grid::new(100);
        let m = block(40, 40);
        let widest = m.widest_runs();
        let mut got = Vec::new();
        for _ in 0..3 {
            let (x, y) = g.find(&m, &widest, 0, i32::MAX).unwrap();
            g.occupy(&m, x, y);
            got.push((x, y));
        }
        assert_eq!(got, vec![(0, 0), (40, 0), (0, 40)]);
        // The fourth fills the 2 × 2 arrangement; a fifth would need 120 > 100 cells.
        assert_eq!(g.find(&m, &widest, 0, i32::MAX), Some((40, 40)));
        g.occupy(&m, 40, 40);
        assert_eq!(g.find(&m, &widest, 0, i32::MAX), None);
        // A 20-cell-wide strip remains on the right and top.
        let strip = block(20, 100);
        assert_eq!(
            g.find(&strip, &strip.widest_runs(), 0, i32::MAX),
            Some((80, 0))
        );
    }

    #[test]
    fn margin_keeps_cells_off_the_border() {
        let g = Grid::new(70);
        let m = block(64, 64);
        assert_eq!(g.find(&m, &m.widest_runs(), 3, i32::MAX), Some((3, 3)));
        assert_eq!(g.find(&m, &m.widest_runs(), 4, i32::MAX), None);
    }
}
