//! Boundary loops of a chart and the check that it is a disk or a genus-0 surface with
//! holes (the only charts the solver accepts).

use crate::mesh::PolyMesh;

/// Boundary loops of `chart` as vertex lists, each in the direction of its faces'
/// orientation; errors with one sentence when the chart is not a connected, oriented,
/// manifold genus-0 surface with at least one boundary loop.
pub(crate) fn boundary_loops(chart: &PolyMesh) -> Result<Vec<Vec<u32>>, String> {
    let nv = chart.vertex_count();
    let mut half: Vec<(u32, u32)> = Vec::with_capacity(chart.corner_count());
    for face in chart.faces() {
        let n = face.len();
        for i in 0..n {
            half.push((face[i], face[(i + 1) % n]));
        }
    }
    half.sort_unstable();
    if let Some(w) = half.windows(2).find(|w| w[0] == w[1]) {
        return Err(format!(
            "the edge from vertex {} to vertex {} is used twice in the same direction \
             (faces are inconsistently oriented or the edge is non-manifold)",
            w[0].0 + 1,
            w[0].1 + 1
        ));
    }
    let mut edges = 0usize;
    let mut next = vec![u32::MAX; nv];
    let mut boundary_starts = Vec::new();
    for &(a, b) in &half {
        let twin = half.binary_search(&(b, a)).is_ok();
        if !twin || a < b {
            edges += 1;
        }
        if !twin {
            if next[a as usize] != u32::MAX {
                return Err(format!(
                    "vertex {} is on the boundary twice (the chart is pinched there)",
                    a + 1
                ));
            }
            next[a as usize] = b;
            boundary_starts.push(a);
        }
    }
    let mut loops = Vec::new();
    let mut seen = vec![false; nv];
    for &start in &boundary_starts {
        if seen[start as usize] {
            continue;
        }
        let mut lp = Vec::new();
        let mut v = start;
        while !seen[v as usize] {
            seen[v as usize] = true;
            lp.push(v);
            v = next[v as usize];
        }
        loops.push(lp);
    }
    let components = components(chart);
    if components != 1 {
        return Err(format!(
            "the chart has {components} connected pieces; a chart must be one piece"
        ));
    }
    if loops.is_empty() {
        return Err(
            "the chart is closed (it has no boundary); it must be cut open along seams".into(),
        );
    }
    let euler = nv as i64 - edges as i64 + chart.face_count() as i64;
    let expected = 2 - loops.len() as i64;
    if euler != expected {
        let genus = (expected - euler) / 2;
        return Err(format!(
            "the chart has genus {genus} with {} boundary loops; it must be a disk or a \
             genus-0 surface with holes (cut it along more seams)",
            loops.len()
        ));
    }
    Ok(loops)
}

/// Number of connected pieces of the faces (joined through shared vertices).
fn components(chart: &PolyMesh) -> usize {
    let mut parent: Vec<u32> = (0..chart.vertex_count() as u32).collect();
    fn find(p: &mut [u32], mut x: u32) -> u32 {
        while p[x as usize] != x {
            p[x as usize] = p[p[x as usize] as usize];
            x = p[x as usize];
        }
        x
    }
    for face in chart.faces() {
        let r0 = find(&mut parent, face[0]);
        for &v in &face[1..] {
            let r = find(&mut parent, v);
            parent[r as usize] = r0;
        }
    }
    (0..chart.vertex_count() as u32)
        .filter(|&v| find(&mut parent, v) == v)
        .count()
}
