//! Fill-reducing orderings for the Newton system, whose unknowns come in 2×2 blocks
//! (free vertex `k` owns unknowns `2k` and `2k + 1`, see [`super::assembly`]).
//!
//! The ordering is computed on the graph of free vertices (half the size of the scalar
//! pattern, a quarter of its entries) and expanded to the blocks, so `u` and `v` of a
//! vertex stay next to each other and form the same supernode.
//!
//! - [`Ordering::ScalarAmd`]: faer's approximate minimum degree on the scalar pattern.
//! - [`Ordering::VertexAmd`]: faer's approximate minimum degree on the vertex graph.
//! - [`Ordering::Dissection`]: geometric nested dissection of the vertex graph (George
//!   1973, "Nested dissection of a regular finite element mesh", SIAM J. Numer. Anal.
//!   10(2); separators of size O(√n) exist on planar graphs, Lipton, Rose & Tarjan
//!   1979, "Generalized nested dissection", SIAM J. Numer. Anal. 16(2)): the vertices
//!   are split at the median of the wider coordinate of their 3D positions, the
//!   vertices of the smaller side that touch the other side form the separator, which
//!   is numbered after both halves; halves are split again down to [`LEAF`] vertices,
//!   which are ordered by approximate minimum degree.
//! - [`Ordering::Metis`]: METIS nested dissection (Karypis & Kumar 1998, "A fast and
//!   high quality multilevel scheme for partitioning irregular graphs", SIAM J. Sci.
//!   Comput. 20(1)) of the vertex graph, with the cargo feature `metis`.
//!
//! Measured in `examples/bench_flatten.rs` (README, Performance): both AMD variants
//! give the same factor (faer's AMD merges the indistinguishable `u`, `v` pair), the
//! vertex graph's in half the analysis time, hence the default.

use faer::dyn_stack::{MemBuffer, MemStack};
use faer::sparse::linalg::amd;
use faer::sparse::SymbolicSparseColMatRef;

/// Which fill-reducing ordering the Newton system's symbolic analysis uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Ordering {
    /// Approximate minimum degree on the scalar pattern (faer's default).
    ScalarAmd,
    /// Approximate minimum degree on the vertex graph, expanded to 2×2 blocks.
    #[default]
    VertexAmd,
    /// Geometric nested dissection of the vertex graph, expanded to 2×2 blocks.
    Dissection,
    /// METIS nested dissection (Karypis & Kumar 1998) of the vertex graph, expanded to
    /// 2×2 blocks; needs the cargo feature `metis`.
    Metis,
}

/// Parts with at most this many vertices are not split further but ordered by
/// approximate minimum degree.
const LEAF: usize = 64;

/// The vertex graph (both directions, no self loops) of a 2×2-block lower CSC
/// pattern of `2 × vertices` unknowns: `(xadj, adjncy)` as in compressed sparse rows.
pub(crate) fn vertex_graph(
    vertices: usize,
    col_ptr: &[usize],
    row_idx: &[usize],
) -> (Vec<usize>, Vec<u32>) {
    let lower = |k: usize| {
        row_idx[col_ptr[2 * k]..col_ptr[2 * k + 1]]
            .iter()
            .filter(move |&&r| r % 2 == 0 && r / 2 > k)
            .map(|&r| r / 2)
    };
    let mut xadj = vec![0usize; vertices + 1];
    for k in 0..vertices {
        for m in lower(k) {
            xadj[k + 1] += 1;
            xadj[m + 1] += 1;
        }
    }
    for k in 0..vertices {
        xadj[k + 1] += xadj[k];
    }
    let mut fill = xadj.clone();
    let mut adjncy = vec![0u32; xadj[vertices]];
    for k in 0..vertices {
        for m in lower(k) {
            adjncy[fill[k]] = m as u32;
            fill[k] += 1;
            adjncy[fill[m]] = k as u32;
            fill[m] += 1;
        }
    }
    (xadj, adjncy)
}

/// Approximate minimum degree order of a graph (no self loops, sorted adjacency
/// lists): `order[new] = old`.
pub(crate) fn vertex_amd(xadj: &[usize], adjncy: &[u32]) -> Result<Vec<usize>, String> {
    let n = xadj.len() - 1;
    let row_idx: Vec<usize> = adjncy.iter().map(|&a| a as usize).collect();
    let pattern = SymbolicSparseColMatRef::new_checked(n, n, xadj, None, &row_idx);
    let mut fwd = vec![0usize; n];
    let mut inv = vec![0usize; n];
    let mut scratch = MemBuffer::try_new(amd::order_scratch::<usize>(n, row_idx.len()))
        .map_err(|_| "not enough memory for the ordering".to_string())?;
    amd::order(
        &mut fwd,
        &mut inv,
        pattern,
        amd::Control::default(),
        MemStack::new(&mut scratch),
    )
    .map_err(|e| format!("the ordering failed ({e:?})"))?;
    Ok(fwd)
}

/// Geometric nested dissection order of the vertex graph with vertex positions
/// `points`: `order[new] = old`.
pub(crate) fn dissection(
    points: &[[f64; 3]],
    xadj: &[usize],
    adjncy: &[u32],
) -> Result<Vec<usize>, String> {
    let n = points.len();
    let mut local = vec![u32::MAX; n];
    let mut ids: Vec<u32> = (0..n as u32).collect();
    let mut side = vec![0u32; n];
    let mut order = Vec::with_capacity(n);
    let mut stamp = 0u32;
    // Explicit stack of (range of `ids`, separator to emit after it); a separator is
    // pushed below its two halves so it is numbered after both.
    enum Task {
        Split(usize, usize),
        Emit(Vec<u32>),
    }
    let mut tasks = vec![Task::Split(0, n)];
    while let Some(task) = tasks.pop() {
        let (lo, hi) = match task {
            Task::Emit(separator) => {
                order.extend(separator.iter().map(|&v| v as usize));
                continue;
            }
            Task::Split(lo, hi) => (lo, hi),
        };
        let part = &mut ids[lo..hi];
        if part.len() <= LEAF {
            order_leaf(part, xadj, adjncy, &mut local, &mut order)?;
            continue;
        }
        let axis = widest_axis(points, part);
        let mid = part.len() / 2;
        part.select_nth_unstable_by(mid, |&a, &b| {
            points[a as usize][axis].total_cmp(&points[b as usize][axis])
        });
        stamp += 2;
        let (left, right) = part.split_at_mut(mid);
        left.iter().for_each(|&v| side[v as usize] = stamp);
        right.iter().for_each(|&v| side[v as usize] = stamp + 1);
        let touches = |v: u32, other: u32| {
            adjncy[xadj[v as usize]..xadj[v as usize + 1]]
                .iter()
                .any(|&w| side[w as usize] == other)
        };
        let left_border = left.iter().filter(|&&v| touches(v, stamp + 1)).count();
        let right_border = right.iter().filter(|&&v| touches(v, stamp)).count();
        // The separator is the smaller border; it moves to the end of its half.
        let separate_left = left_border <= right_border;
        let (half_lo, half_hi, other) = if separate_left {
            (lo, lo + mid, stamp + 1)
        } else {
            (lo + mid, hi, stamp)
        };
        let half = &mut ids[half_lo..half_hi];
        let mut keep = 0;
        for i in 0..half.len() {
            if !touches(half[i], other) {
                half.swap(keep, i);
                keep += 1;
            }
        }
        tasks.push(Task::Emit(half[keep..].to_vec()));
        if separate_left {
            tasks.push(Task::Split(lo + mid, hi));
            tasks.push(Task::Split(lo, lo + keep));
        } else {
            tasks.push(Task::Split(lo + mid, lo + mid + keep));
            tasks.push(Task::Split(lo, lo + mid));
        }
    }
    Ok(order)
}

/// Appends the vertices of `part` to `order` in the approximate minimum degree order
/// of the subgraph they induce; `local` is all `u32::MAX` on entry and on return.
fn order_leaf(
    part: &[u32],
    xadj: &[usize],
    adjncy: &[u32],
    local: &mut [u32],
    order: &mut Vec<usize>,
) -> Result<(), String> {
    for (i, &v) in part.iter().enumerate() {
        local[v as usize] = i as u32;
    }
    let mut sub_xadj = Vec::with_capacity(part.len() + 1);
    let mut sub_adjncy = Vec::new();
    sub_xadj.push(0);
    for &v in part {
        let start = sub_adjncy.len();
        for &w in &adjncy[xadj[v as usize]..xadj[v as usize + 1]] {
            if local[w as usize] != u32::MAX {
                sub_adjncy.push(local[w as usize]);
            }
        }
        sub_adjncy[start..].sort_unstable();
        sub_xadj.push(sub_adjncy.len());
    }
    let sub_order = vertex_amd(&sub_xadj, &sub_adjncy)?;
    order.extend(sub_order.iter().map(|&i| part[i] as usize));
    for &v in part {
        local[v as usize] = u32::MAX;
    }
    Ok(())
}

/// METIS_NodeND order of the vertex graph: `order[new] = old`.
#[cfg(feature = "metis")]
pub(crate) fn metis(xadj: &[usize], adjncy: &[u32]) -> Result<Vec<usize>, String> {
    let n = xadj.len() - 1;
    let mut nv = n as i32;
    let mut x: Vec<i32> = xadj.iter().map(|&a| a as i32).collect();
    let mut a: Vec<i32> = adjncy.iter().map(|&a| a as i32).collect();
    let mut perm = vec![0i32; n];
    let mut iperm = vec![0i32; n];
    // SAFETY: the arrays have the lengths METIS_NodeND reads and writes.
    let status = unsafe {
        metis_sys::METIS_NodeND(
            &mut nv,
            x.as_mut_ptr(),
            a.as_mut_ptr(),
            std::ptr::null_mut(),
            std::ptr::null_mut(),
            perm.as_mut_ptr(),
            iperm.as_mut_ptr(),
        )
    };
    if status != metis_sys::rstatus_et_METIS_OK {
        return Err(format!("the ordering failed (METIS status {status})"));
    }
    Ok(perm.iter().map(|&p| p as usize).collect())
}

/// Without the `metis` feature: an error saying so.
#[cfg(not(feature = "metis"))]
pub(crate) fn metis(_xadj: &[usize], _adjncy: &[u32]) -> Result<Vec<usize>, String> {
    Err("this build has no METIS ordering (cargo feature `metis`)".into())
}

/// The coordinate (0, 1, 2) along which `part`'s bounding box is widest.
fn widest_axis(points: &[[f64; 3]], part: &[u32]) -> usize {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for &v in part {
        for c in 0..3 {
            lo[c] = lo[c].min(points[v as usize][c]);
            hi[c] = hi[c].max(points[v as usize][c]);
        }
    }
    (0..3)
        .max_by(|&a, &b| (hi[a] - lo[a]).total_cmp(&(hi[b] - lo[b])))
        .unwrap_or(0)
}

/// The scalar permutation `(fwd, inv)` (`fwd[new] = old`) of a vertex order expanded
/// to 2×2 blocks.
pub(crate) fn expand_blocks(order: &[usize]) -> (Vec<usize>, Vec<usize>) {
    let mut fwd = Vec::with_capacity(2 * order.len());
    for &v in order {
        fwd.push(2 * v);
        fwd.push(2 * v + 1);
    }
    let mut inv = vec![0usize; fwd.len()];
    for (new, &old) in fwd.iter().enumerate() {
        inv[old] = new;
    }
    (fwd, inv)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A `w × h` grid graph with 4-neighbours, vertex `x + w y` at `(x, y, 0)`.
    fn grid(w: usize, h: usize) -> (Vec<[f64; 3]>, Vec<usize>, Vec<u32>) {
        let id = |x: usize, y: usize| (x + w * y) as u32;
        let mut lists = vec![Vec::new(); w * h];
        for y in 0..h {
            for x in 0..w {
                if x + 1 < w {
                    lists[id(x, y) as usize].push(id(x + 1, y));
                    lists[id(x + 1, y) as usize].push(id(x, y));
                }
                if y + 1 < h {
                    lists[id(x, y) as usize].push(id(x, y + 1));
                    lists[id(x, y + 1) as usize].push(id(x, y));
                }
            }
        }
        let points = (0..w * h)
            .map(|i| [(i % w) as f64, (i / w) as f64, 0.0])
            .collect();
        let mut xadj = vec![0];
        let mut adjncy = Vec::new();
        for l in lists {
            adjncy.extend(l);
            xadj.push(adjncy.len());
        }
        (points, xadj, adjncy)
    }

    #[test]
    fn dissection_is_a_permutation_with_the_first_separator_last() {
        let (points, xadj, adjncy) = grid(40, 20);
        let order = dissection(&points, &xadj, &adjncy).expect("ordering");
        let mut seen = order.clone();
        seen.sort_unstable();
        assert_eq!(seen, (0..800).collect::<Vec<_>>());
        // The grid is wider in x: the first cut is a column of 20 vertices, at x = 19
        // or 20, numbered last.
        let last: Vec<usize> = order[780..].iter().map(|&v| v % 40).collect();
        assert!(last.iter().all(|&x| x == last[0]) && (19..=20).contains(&last[0]));
    }

    #[test]
    fn vertex_graph_of_blocks_and_expansion() {
        // Two vertices coupled: lower pattern of the 4×4 block matrix.
        let col_ptr = [0, 4, 7, 9, 10];
        let row_idx = [0, 1, 2, 3, 1, 2, 3, 2, 3, 3];
        let (xadj, adjncy) = vertex_graph(2, &col_ptr, &row_idx);
        assert_eq!(xadj, vec![0, 1, 2]);
        assert_eq!(adjncy, vec![1, 0]);
        let (fwd, inv) = expand_blocks(&[1, 0]);
        assert_eq!(fwd, vec![2, 3, 0, 1]);
        assert_eq!(inv, vec![2, 3, 0, 1]);
    }
}
