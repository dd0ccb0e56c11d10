//! Union-find over `0..n` with path halving; the smaller root wins a union, so each
//! set's root is its smallest element. Out-of-range elements are ignored (no panics).

pub(crate) struct DisjointSets(Vec<u32>);

impl DisjointSets {
    /// `n` singleton sets.
    pub(crate) fn new(n: usize) -> Self {
        DisjointSets((0..n as u32).collect())
    }

    /// Root (smallest element) of `x`'s set.
    pub(crate) fn find(&mut self, mut x: u32) -> u32 {
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
    pub(crate) fn union(&mut self, a: u32, b: u32) {
        let (ra, rb) = (self.find(a), self.find(b));
        let (lo, hi) = if ra < rb { (ra, rb) } else { (rb, ra) };
        if let Some(slot) = self.0.get_mut(hi as usize) {
            *slot = lo;
        }
    }

    /// Dense labels `0..k` for every element, numbered in order of each set's smallest
    /// element, and the number of sets `k`.
    pub(crate) fn labels(&mut self) -> (Vec<u32>, usize) {
        let n = self.0.len();
        let mut ids = vec![u32::MAX; n];
        let mut count = 0u32;
        for x in 0..n {
            let root = self.find(x as u32) as usize;
            // The root is ≤ x, so it was labelled first.
            let id = match ids.get(root) {
                Some(&id) if id != u32::MAX => id,
                _ => {
                    count += 1;
                    count - 1
                }
            };
            if let Some(slot) = ids.get_mut(x) {
                *slot = id;
            }
        }
        (ids, count as usize)
    }
}
