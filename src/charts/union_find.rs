//! Union-find over `0..n` (path halving; the smaller root wins, so each set's root is
//! its smallest element, which keeps every labelling deterministic).

pub(super) struct UnionFind(Vec<u32>);

impl UnionFind {
    /// `n` singleton sets.
    pub(super) fn new(n: usize) -> Self {
        UnionFind((0..n as u32).collect())
    }

    /// Root (smallest element) of `x`'s set; out-of-range elements are their own root.
    pub(super) fn find(&mut self, mut x: u32) -> u32 {
        while let Some(&p) = self.0.get(x as usize) {
            if p == x {
                break;
            }
            let gp = self.0.get(p as usize).copied().unwrap_or(p);
            if let Some(slot) = self.0.get_mut(x as usize) {
                *slot = gp;
            }
            x = gp;
        }
        x
    }

    /// Merges the sets of `a` and `b`.
    pub(super) fn union(&mut self, a: u32, b: u32) {
        let (ra, rb) = (self.find(a), self.find(b));
        let (lo, hi) = if ra < rb { (ra, rb) } else { (rb, ra) };
        if let Some(slot) = self.0.get_mut(hi as usize) {
            *slot = lo;
        }
    }
}
