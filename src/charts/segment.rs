//! `--seams auto`: segmentation into few, nearly developable charts.
//!
//! 1. Region growing on normal cones, in the manner of variational shape
//!    approximation (Cohen-Steiner, Alliez & Desbrun 2004, "Variational shape
//!    approximation", SIGGRAPH): each region has a proxy normal; regions grow from
//!    seeds through a priority queue ordered by the face's normal deviation
//!    `1 − n_f·N`, plus a small compactness term (squared distance to the region's
//!    centre over the typical region size, as in the compactness term of D-Charts,
//!    Julius, Kraevoy & Sheffer 2005, "D-Charts: quasi-developable mesh
//!    segmentation", CGF 24(3)), plus a penalty for crossing a sharp crease, so seams
//!    settle on creases. Lloyd iterations refit proxies and re-seed; while some face
//!    deviates from its region's proxy by more than [`CONE_HALF_ANGLE`], a seed is
//!    added at the worst face of each such region (seeds start far apart).
//! 2. Merging. Adjacent regions not separated by a crease merge while their union
//!    stays developable: its normals lie within [`DEVELOPABLE_TOLERANCE`] of one cone
//!    (the Gauss image of a developable surface is a curve; D-Charts' cone proxies).
//!    The cone axis minimises the area-weighted variance of `n·N`, i.e. it is the
//!    eigenvector of the normals' covariance with the smallest eigenvalue. Then
//!    regions much smaller than their neighbours, or slivers, merge into the
//!    neighbour sharing the longest boundary.
//! 3. Topology: every region becomes a disk ([`disk`](super::disk)); cylinders opened
//!    by the merging are cut along a shortest path between their boundary loops.
//!
//! Non-manifold edges and edges between inconsistently wound faces are always seams.
//! Everything is deterministic (ties break by index).

use super::assemble::{assemble, face_range, manifold_consistent};
use super::disk::{make_disks, recut, Holes};
use super::union_find::UnionFind;
use super::{Chart, ChartOrigin};
use crate::mesh::{PolyMesh, Topology};
use crate::operators::face::{centroid, vector_area};
use nalgebra::{Matrix3, Point3, SymmetricEigen, Vector3};
use std::cmp::Ordering;
use std::collections::BinaryHeap;

const NONE: u32 = u32::MAX;

/// Largest angle (radians) between a face normal and its region's proxy normal: 55°,
/// so a sphere needs about six regions (a cube's face seen from its centre spans
/// 54.7°), and every region is a height field over its proxy plane.
pub const CONE_HALF_ANGLE: f64 = 55.0 * std::f64::consts::PI / 180.0;

/// Largest deviation (radians) of a merged region's normals from its best-fitting
/// normal cone: 12°.
pub const DEVELOPABLE_TOLERANCE: f64 = 12.0 * std::f64::consts::PI / 180.0;

/// Angle (radians) between adjacent face normals above which their edge is a crease:
/// 45°.
pub const CREASE_ANGLE: f64 = 45.0 * std::f64::consts::PI / 180.0;

/// Priority added for growing across a crease (normal deviations range over 0–2).
const CREASE_PENALTY: f64 = 0.5;

/// Weight of the compactness term (squared distance in units of the typical region
/// radius).
const COMPACTNESS: f64 = 0.05;

/// Lloyd iterations per seeding round.
const LLOYD_ITERATIONS: usize = 8;

/// Seeding rounds at most.
const MAX_ROUNDS: usize = 64;

/// A region smaller than this fraction of the mean region area of its piece merges
/// into a neighbour.
const SMALL_REGION: f64 = 0.15;

/// A region with perimeter² / (4π · area) above this, and below half the mean area,
/// is a sliver and merges into a neighbour.
const SLIVER_RATIO: f64 = 12.0;

/// Cost of a seam along a crease relative to one across smooth surface, in boundary
/// smoothing: seams are cheap where the surface folds anyway.
const CREASE_SEAM_COST: f64 = 0.25;

/// Boundary smoothing sweeps at most (each sweep visits every face once).
const SMOOTH_SWEEPS: usize = 32;

/// Boundary smoothing takes no face from a region of fewer faces than this, so it
/// never dissolves a small region (a split of a small, badly stretched chart must
/// keep both parts).
const SMOOTH_MIN_REGION: usize = 16;

/// Per-face geometry of a mesh.
struct Faces {
    /// Unit normal (zero for degenerate faces).
    normal: Vec<Vector3<f64>>,
    /// Area (length unit²).
    area: Vec<f64>,
    /// Mean of the corners.
    center: Vec<Point3<f64>>,
}

impl Faces {
    fn new(m: &PolyMesh) -> Faces {
        let (mut normal, mut area, mut center) = (Vec::new(), Vec::new(), Vec::new());
        for f in 0..m.face_count() {
            let corners: Vec<Point3<f64>> = face_range(m, f)
                .filter_map(|c| {
                    m.face_vertices
                        .get(c)
                        .and_then(|&v| m.positions.get(v as usize))
                        .copied()
                })
                .collect();
            let a = if corners.is_empty() {
                Vector3::zeros()
            } else {
                vector_area(&corners)
            };
            let len = a.norm();
            normal.push(if len > 0.0 && len.is_finite() {
                a / len
            } else {
                Vector3::zeros()
            });
            area.push(if len.is_finite() { len } else { 0.0 });
            center.push(if corners.is_empty() {
                Point3::origin()
            } else {
                centroid(&corners)
            });
        }
        Faces {
            normal,
            area,
            center,
        }
    }
}

/// Face adjacency across joinable edges.
struct Dual {
    offsets: Vec<usize>,
    /// `(neighbour face, edge)` per slot.
    links: Vec<(u32, u32)>,
    /// Crease flag per edge.
    crease: Vec<bool>,
    /// Length per edge.
    length: Vec<f64>,
}

impl Dual {
    fn new(m: &PolyMesh, t: &Topology, joinable: &[bool], faces: &Faces) -> Dual {
        let n = m.face_count();
        let mut lists: Vec<Vec<(u32, u32)>> = vec![Vec::new(); n];
        let mut crease = vec![false; t.edge_count()];
        for e in 0..t.edge_count() as u32 {
            if !joinable.get(e as usize).copied().unwrap_or(false) {
                continue;
            }
            let fs: Vec<u32> = t.edge_faces(e).collect();
            if let [a, b] = fs[..] {
                if a == b || a as usize >= n || b as usize >= n {
                    continue;
                }
                lists[a as usize].push((b, e));
                lists[b as usize].push((a, e));
                let cos = faces.normal[a as usize].dot(&faces.normal[b as usize]);
                crease[e as usize] = cos < CREASE_ANGLE.cos();
            }
        }
        let mut offsets = vec![0];
        let mut links = Vec::new();
        for l in lists {
            links.extend(l);
            offsets.push(links.len());
        }
        let point = |v: u32| m.positions.get(v as usize).copied().unwrap_or_default();
        let length = t
            .edge_vertices
            .iter()
            .map(|&[a, b]| (point(a) - point(b)).norm())
            .collect();
        Dual {
            offsets,
            links,
            crease,
            length,
        }
    }

    fn neighbours(&self, f: u32) -> &[(u32, u32)] {
        let f = f as usize;
        match (self.offsets.get(f), self.offsets.get(f + 1)) {
            (Some(&a), Some(&b)) => self.links.get(a..b).unwrap_or(&[]),
            _ => &[],
        }
    }
}

/// A region's proxy: normal, centre, and the face it grows from.
#[derive(Debug, Clone, Copy)]
struct Proxy {
    seed: u32,
    normal: Vector3<f64>,
    center: Point3<f64>,
}

/// Heap entry: lowest priority first, then insertion order.
#[derive(PartialEq)]
struct Entry(f64, u64, u32, u32);

impl Eq for Entry {}

impl Ord for Entry {
    fn cmp(&self, other: &Self) -> Ordering {
        other.0.total_cmp(&self.0).then(other.1.cmp(&self.1))
    }
}

impl PartialOrd for Entry {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

/// The region-growing state shared by `auto` and `split`.
struct Grower<'a> {
    faces: &'a Faces,
    dual: &'a Dual,
    /// Typical region radius (length unit).
    radius: f64,
}

impl Grower<'_> {
    /// Priority of face `f` in the region of `p` (without the crease penalty).
    fn cost(&self, f: u32, p: &Proxy) -> f64 {
        let n = self.faces.normal[f as usize];
        let deviation = if n == Vector3::zeros() {
            0.0
        } else {
            1.0 - n.dot(&p.normal)
        };
        let d = (self.faces.center[f as usize] - p.center).norm() / self.radius;
        deviation + COMPACTNESS * d * d
    }

    /// Grows every proxy's region from its seed; faces no seed reaches get `NONE`.
    fn flood(&self, proxies: &[Proxy]) -> Vec<u32> {
        let n = self.faces.area.len();
        let mut label = vec![NONE; n];
        let mut heap = BinaryHeap::new();
        let mut order = 0u64;
        for (r, p) in proxies.iter().enumerate() {
            heap.push(Entry(f64::NEG_INFINITY, order, p.seed, r as u32));
            order += 1;
        }
        while let Some(Entry(_, _, f, r)) = heap.pop() {
            if label[f as usize] != NONE {
                continue;
            }
            label[f as usize] = r;
            for &(g, e) in self.dual.neighbours(f) {
                if label[g as usize] == NONE {
                    let mut c = self.cost(g, &proxies[r as usize]);
                    if self.dual.crease[e as usize] {
                        c += CREASE_PENALTY;
                    }
                    heap.push(Entry(c, order, g, r));
                    order += 1;
                }
            }
        }
        label
    }

    /// Refits each proxy to its region (area-weighted mean normal and centre) and
    /// re-seeds it at the region's lowest-cost face.
    fn refit(&self, proxies: &mut [Proxy], label: &[u32]) {
        let k = proxies.len();
        let mut normal = vec![Vector3::zeros(); k];
        let mut center = vec![Vector3::zeros(); k];
        let mut area = vec![0.0; k];
        for (f, &r) in label.iter().enumerate() {
            if r == NONE {
                continue;
            }
            let a = self.faces.area[f];
            normal[r as usize] += self.faces.normal[f] * a;
            center[r as usize] += self.faces.center[f].coords * a;
            area[r as usize] += a;
        }
        for (r, p) in proxies.iter_mut().enumerate() {
            if normal[r].norm() > 1e-12 {
                p.normal = normal[r].normalize();
            }
            if area[r] > 0.0 {
                p.center = Point3::from(center[r] / area[r]);
            }
        }
        let mut best: Vec<(f64, u32)> = vec![(f64::INFINITY, NONE); k];
        for (f, &r) in label.iter().enumerate() {
            if r == NONE {
                continue;
            }
            let c = self.cost(f as u32, &proxies[r as usize]);
            if c < best[r as usize].0 {
                best[r as usize] = (c, f as u32);
            }
        }
        for (p, &(_, f)) in proxies.iter_mut().zip(&best) {
            if f != NONE {
                p.seed = f;
            }
        }
    }

    /// Lloyd iterations until the seeds stop moving; returns the final labels.
    fn settle(&self, proxies: &mut [Proxy]) -> Vec<u32> {
        let mut label = self.flood(proxies);
        for _ in 0..LLOYD_ITERATIONS {
            let before: Vec<u32> = proxies.iter().map(|p| p.seed).collect();
            self.refit(proxies, &label);
            label = self.flood(proxies);
            if proxies.iter().map(|p| p.seed).eq(before) {
                break;
            }
        }
        label
    }
}

fn proxy_at(faces: &Faces, f: u32) -> Proxy {
    Proxy {
        seed: f,
        normal: faces.normal[f as usize],
        center: faces.center[f as usize],
    }
}

/// Region labels of every face of `m` (module notes, steps 1–2).
fn regions(m: &PolyMesh, t: &Topology, joinable: &[bool]) -> Vec<u32> {
    let faces = Faces::new(m);
    let dual = Dual::new(m, t, joinable, &faces);
    let n = m.face_count();
    // One seed per connected piece to begin with.
    let mut pieces = UnionFind::new(n);
    for f in 0..n as u32 {
        for &(g, _) in dual.neighbours(f) {
            pieces.union(f, g);
        }
    }
    let mut proxies: Vec<Proxy> = (0..n as u32)
        .filter(|&f| pieces.find(f) == f)
        .map(|f| proxy_at(&faces, f))
        .collect();
    let total: f64 = faces.area.iter().sum();
    let mut grower = Grower {
        faces: &faces,
        dual: &dual,
        radius: 1.0,
    };
    let mut label = vec![NONE; n];
    for _ in 0..MAX_ROUNDS {
        grower.radius = (total / (std::f64::consts::PI * proxies.len() as f64))
            .sqrt()
            .max(f64::MIN_POSITIVE);
        label = grower.settle(&mut proxies);
        // Worst face of every region whose normals leave the cone.
        let mut worst: Vec<(f64, u32)> = vec![(CONE_HALF_ANGLE.cos(), NONE); proxies.len()];
        for (f, &r) in label.iter().enumerate() {
            let nf = faces.normal[f];
            if r == NONE || nf == Vector3::zeros() {
                continue;
            }
            let c = nf.dot(&proxies[r as usize].normal);
            if c < worst[r as usize].0 {
                worst[r as usize] = (c, f as u32);
            }
        }
        let added: Vec<Proxy> = worst
            .iter()
            .filter(|w| w.1 != NONE)
            .map(|w| proxy_at(&faces, w.1))
            .collect();
        if added.is_empty() || proxies.len() + added.len() > n {
            break;
        }
        proxies.extend(added);
    }
    merge(&faces, &dual, t, &mut label);
    smooth(&dual, &mut label);
    label
}

/// Boundary smoothing of region labels: a face moves to a neighbouring region when
/// that shortens the seams, i.e. when the (crease-discounted) length of its border
/// with that region exceeds its border with its own region. Teeth, one-face notches
/// and one-face-wide fingers left by region growing on a quad grid go; staircases of
/// two or more faces stay. A face moves only while at most one neighbour shares its
/// region, so no region is cut in two. Every move strictly shortens the weighted seam
/// length, so the sweeps end; their number is capped anyway. In-place sweeps in face
/// order keep it deterministic. Crease edges are never opened, and small regions
/// ([`SMOOTH_MIN_REGION`]) give no faces away.
fn smooth(dual: &Dual, label: &mut [u32]) {
    let cost = |e: u32| {
        let e = e as usize;
        let length = dual.length.get(e).copied().unwrap_or(0.0);
        if dual.crease.get(e).copied().unwrap_or(false) {
            length * CREASE_SEAM_COST
        } else {
            length
        }
    };
    let mut size: std::collections::HashMap<u32, usize> = std::collections::HashMap::new();
    for &l in label.iter().filter(|&&l| l != NONE) {
        *size.entry(l).or_default() += 1;
    }
    let mut border: Vec<(u32, f64)> = Vec::new();
    for _ in 0..SMOOTH_SWEEPS {
        let mut moved = false;
        for f in 0..label.len() {
            let own = label[f];
            if own == NONE || size.get(&own).copied().unwrap_or(0) < SMOOTH_MIN_REGION {
                continue;
            }
            border.clear();
            let mut own_count = 0;
            for &(g, e) in dual.neighbours(f as u32) {
                let r = label[g as usize];
                if r == NONE {
                    continue;
                }
                own_count += usize::from(r == own);
                // A region across a crease is never joined: the crease stays a seam.
                let w = if dual.crease[e as usize] && r != own {
                    f64::NEG_INFINITY
                } else {
                    cost(e)
                };
                match border.iter_mut().find(|(l, _)| *l == r) {
                    Some(b) => b.1 += w,
                    None => border.push((r, w)),
                }
            }
            if own_count > 1 {
                continue;
            }
            let keep = border.iter().find(|(l, _)| *l == own).map_or(0.0, |b| b.1);
            // The strongest other region; ties go to the lowest label.
            let best = border.iter().filter(|(l, _)| *l != own).fold(
                None,
                |best: Option<(u32, f64)>, &(l, w)| match best {
                    Some((bl, bw)) if bw > w || (bw == w && bl < l) => Some((bl, bw)),
                    _ => Some((l, w)),
                },
            );
            if let Some((l, w)) = best {
                if w > keep * (1.0 + 1e-9) {
                    label[f] = l;
                    *size.entry(own).or_default() -= 1;
                    *size.entry(l).or_default() += 1;
                    moved = true;
                }
            }
        }
        if !moved {
            break;
        }
    }
}

/// Area-weighted sums of a region's normals for cone fitting.
#[derive(Debug, Clone, Copy)]
struct Moments {
    area: f64,
    sum: Vector3<f64>,
    outer: Matrix3<f64>,
}

impl Moments {
    fn zero() -> Moments {
        Moments {
            area: 0.0,
            sum: Vector3::zeros(),
            outer: Matrix3::zeros(),
        }
    }

    fn add_face(&mut self, faces: &Faces, f: usize) {
        let (a, n) = (faces.area[f], faces.normal[f]);
        self.area += a;
        self.sum += n * a;
        self.outer += n * n.transpose() * a;
    }

    fn plus(&self, o: &Moments) -> Moments {
        Moments {
            area: self.area + o.area,
            sum: self.sum + o.sum,
            outer: self.outer + o.outer,
        }
    }

    /// Axis `N` and cosine `c ≥ 0` of the best-fitting normal cone.
    fn cone(&self) -> Option<(Vector3<f64>, f64)> {
        if self.area <= 0.0 {
            return None;
        }
        let mean = self.sum / self.area;
        let cov = self.outer / self.area - mean * mean.transpose();
        let eig = SymmetricEigen::new(cov);
        let i = eig.eigenvalues.imin();
        let mut axis: Vector3<f64> = eig.eigenvectors.column(i).into_owned();
        let mut c = mean.dot(&axis);
        if c < 0.0 {
            axis = -axis;
            c = -c;
        }
        Some((axis, c.min(1.0)))
    }
}

/// Largest angular deviation of the faces `members` from the cone `(axis, c)`.
fn cone_deviation(faces: &Faces, members: &[u32], axis: &Vector3<f64>, c: f64) -> f64 {
    let theta = c.acos();
    members
        .iter()
        .filter(|&&f| faces.normal[f as usize] != Vector3::zeros())
        .map(|&f| (faces.normal[f as usize].dot(axis).clamp(-1.0, 1.0).acos() - theta).abs())
        .fold(0.0, f64::max)
}

/// Boundary shared by two regions.
#[derive(Debug, Clone, Copy, Default)]
struct Border {
    length: f64,
    crease: f64,
}

/// Step 2 of the module notes; relabels `label` in place (dense, by first face).
fn merge(faces: &Faces, dual: &Dual, t: &Topology, label: &mut [u32]) {
    let k = label
        .iter()
        .filter(|&&r| r != NONE)
        .map(|&r| r + 1)
        .max()
        .unwrap_or(0) as usize;
    let mut members: Vec<Vec<u32>> = vec![Vec::new(); k];
    let mut moments = vec![Moments::zero(); k];
    let mut perimeter = vec![0.0; k];
    for (f, &r) in label.iter().enumerate() {
        if r != NONE {
            members[r as usize].push(f as u32);
            moments[r as usize].add_face(faces, f);
        }
    }
    // Borders between regions, and every region's perimeter (seams and mesh
    // boundary alike).
    let mut borders: std::collections::BTreeMap<(u32, u32), Border> = Default::default();
    for e in 0..t.edge_count() as u32 {
        let len = dual.length[e as usize];
        let fs: Vec<u32> = t.edge_faces(e).collect();
        let rs: Vec<u32> = fs
            .iter()
            .map(|&f| label.get(f as usize).copied().unwrap_or(NONE))
            .collect();
        match rs[..] {
            [a, b]
                if a == b && a != NONE && dual.neighbours(fs[0]).iter().any(|&(_, x)| x == e) => {}
            [a, b]
                if a != NONE
                    && b != NONE
                    && a != b
                    && dual.neighbours(fs[0]).iter().any(|&(_, x)| x == e) =>
            {
                let key = (a.min(b), a.max(b));
                let entry = borders.entry(key).or_default();
                entry.length += len;
                if dual.crease[e as usize] {
                    entry.crease += len;
                }
                perimeter[a as usize] += len;
                perimeter[b as usize] += len;
            }
            _ => {
                for &r in &rs {
                    if r != NONE {
                        perimeter[r as usize] += len;
                    }
                }
            }
        }
    }
    let mut parent: Vec<u32> = (0..k as u32).collect();
    let mut alive = vec![true; k];
    let absorb = |into: u32,
                  from: u32,
                  members: &mut Vec<Vec<u32>>,
                  moments: &mut Vec<Moments>,
                  perimeter: &mut Vec<f64>,
                  borders: &mut std::collections::BTreeMap<(u32, u32), Border>,
                  alive: &mut Vec<bool>,
                  parent: &mut Vec<u32>| {
        let moved = std::mem::take(&mut members[from as usize]);
        members[into as usize].extend(moved);
        members[into as usize].sort_unstable();
        moments[into as usize] = moments[into as usize].plus(&moments[from as usize]);
        let shared = borders
            .remove(&(into.min(from), into.max(from)))
            .unwrap_or_default();
        perimeter[into as usize] += perimeter[from as usize] - 2.0 * shared.length;
        let keys: Vec<(u32, u32)> = borders
            .keys()
            .filter(|&&(a, b)| a == from || b == from)
            .copied()
            .collect();
        for key in keys {
            if let Some(b) = borders.remove(&key) {
                let other = if key.0 == from { key.1 } else { key.0 };
                let entry = borders
                    .entry((other.min(into), other.max(into)))
                    .or_default();
                entry.length += b.length;
                entry.crease += b.crease;
            }
        }
        alive[from as usize] = false;
        parent[from as usize] = into;
    };

    // Developable merging, most developable pair first.
    loop {
        let mut best: Option<(f64, u32, u32)> = None;
        for (&(a, b), border) in &borders {
            if border.crease > 0.5 * border.length {
                continue;
            }
            let Some((axis, c)) = moments[a as usize].plus(&moments[b as usize]).cone() else {
                continue;
            };
            let da = cone_deviation(faces, &members[a as usize], &axis, c);
            let db = cone_deviation(faces, &members[b as usize], &axis, c);
            let d = da.max(db);
            if d <= DEVELOPABLE_TOLERANCE && best.is_none_or(|(bd, ..)| d < bd) {
                best = Some((d, a, b));
            }
        }
        let Some((_, a, b)) = best else {
            break;
        };
        absorb(
            a,
            b,
            &mut members,
            &mut moments,
            &mut perimeter,
            &mut borders,
            &mut alive,
            &mut parent,
        );
    }

    // Small regions and slivers into the neighbour with the longest shared border.
    loop {
        let live: Vec<u32> = (0..k as u32).filter(|&r| alive[r as usize]).collect();
        let mean =
            live.iter().map(|&r| moments[r as usize].area).sum::<f64>() / live.len().max(1) as f64;
        let small = |r: u32| {
            let a = moments[r as usize].area;
            let p = perimeter[r as usize];
            a < SMALL_REGION * mean
                || (a < 0.5 * mean && p * p > SLIVER_RATIO * 4.0 * std::f64::consts::PI * a)
        };
        let candidate = live
            .iter()
            .copied()
            .filter(|&r| small(r))
            .filter_map(|r| {
                borders
                    .iter()
                    .filter(|(&(a, b), _)| a == r || b == r)
                    .max_by(|x, y| x.1.length.total_cmp(&y.1.length).then(y.0.cmp(x.0)))
                    .map(|(&(a, b), _)| (r, if a == r { b } else { a }))
            })
            .min_by(|x, y| {
                moments[x.0 as usize]
                    .area
                    .total_cmp(&moments[y.0 as usize].area)
                    .then(x.0.cmp(&y.0))
            });
        let Some((r, into)) = candidate else {
            break;
        };
        absorb(
            into,
            r,
            &mut members,
            &mut moments,
            &mut perimeter,
            &mut borders,
            &mut alive,
            &mut parent,
        );
    }

    // Dense labels by first face.
    let mut dense = vec![NONE; k];
    let mut next = 0;
    for r in label.iter_mut() {
        if *r == NONE {
            continue;
        }
        let mut root = *r;
        while parent[root as usize] != root {
            root = parent[root as usize];
        }
        if dense[root as usize] == NONE {
            dense[root as usize] = next;
            next += 1;
        }
        *r = dense[root as usize];
    }
}

/// Joinable edges of `m` whose two faces share a label.
fn same_label(m: &PolyMesh, t: &Topology, label: &[u32]) -> Vec<bool> {
    (0..t.edge_count() as u32)
        .map(|e| {
            manifold_consistent(m, t, e) && {
                let fs: Vec<u32> = t.edge_faces(e).collect();
                matches!(fs[..], [a, b] if label.get(a as usize) == label.get(b as usize))
            }
        })
        .collect()
}

/// Charts for `--seams auto` (module notes).
pub(super) fn auto_charts(mesh: &PolyMesh, t: &Topology) -> Vec<Chart> {
    let joinable: Vec<bool> = (0..t.edge_count() as u32)
        .map(|e| manifold_consistent(mesh, t, e))
        .collect();
    let label = regions(mesh, t, &joinable);
    let joinable = same_label(mesh, t, &label);
    assemble(mesh, t, &joinable, None, None)
        .into_iter()
        .flat_map(|p| {
            let chart = Chart {
                faces: p.faces,
                vertices: p.vertices,
                corners: p.corners,
                origin: ChartOrigin::Auto,
                mirrored_in_input: false,
                extra_seam_edges: 0,
            };
            make_disks(mesh, chart, Holes::Cut)
        })
        .collect()
}

/// Splits `chart` in two by growing two regions from far-apart seeds; `None` when
/// it has a single face or both seeds coincide. The parts keep the chart's origin
/// and flags; the first carries its `extra_seam_edges`.
pub(super) fn split_two(mesh: &PolyMesh, chart: &Chart) -> Option<Vec<Chart>> {
    if chart.faces.len() < 2 {
        return None;
    }
    let cm = chart.mesh(mesh);
    let t = Topology::build(&cm);
    let joinable: Vec<bool> = (0..t.edge_count() as u32)
        .map(|e| manifold_consistent(&cm, &t, e))
        .collect();
    let faces = Faces::new(&cm);
    let dual = Dual::new(&cm, &t, &joinable, &faces);
    let total: f64 = faces.area.iter().sum();
    let grower = Grower {
        faces: &faces,
        dual: &dual,
        radius: (total / (2.0 * std::f64::consts::PI))
            .sqrt()
            .max(f64::MIN_POSITIVE),
    };
    let a = farthest_face(&faces, &dual, 0);
    let b = farthest_face(&faces, &dual, a);
    if a == b {
        return None;
    }
    let mut proxies = vec![proxy_at(&faces, a), proxy_at(&faces, b)];
    let mut label = grower.settle(&mut proxies);
    // Faces no seed reached (another component) join the first region.
    for l in label.iter_mut().filter(|l| **l == NONE) {
        *l = 0;
    }
    smooth(&dual, &mut label);
    let cut: Vec<bool> = same_label(&cm, &t, &label).iter().map(|&j| !j).collect();
    let mut parts = recut(chart, &cm, &t, &cut);
    if parts.len() < 2 {
        return None;
    }
    if let Some(first) = parts.first_mut() {
        first.extra_seam_edges = chart.extra_seam_edges;
    }
    Some(parts)
}

/// The face farthest from `start` along the dual graph (centroid distances), ties to
/// the lowest index.
fn farthest_face(faces: &Faces, dual: &Dual, start: u32) -> u32 {
    let n = faces.area.len();
    let mut dist = vec![f64::INFINITY; n];
    let mut heap = BinaryHeap::new();
    if let Some(d) = dist.get_mut(start as usize) {
        *d = 0.0;
        heap.push(Entry(0.0, 0, start, 0));
    }
    let mut order = 1u64;
    while let Some(Entry(d, _, f, _)) = heap.pop() {
        if d > dist[f as usize] {
            continue;
        }
        for &(g, _) in dual.neighbours(f) {
            let nd = d + (faces.center[f as usize] - faces.center[g as usize]).norm();
            if nd < dist[g as usize] {
                dist[g as usize] = nd;
                heap.push(Entry(nd, order, g, 0));
                order += 1;
            }
        }
    }
    (0..n)
        .filter(|&f| dist[f].is_finite())
        .fold(None, |best: Option<usize>, f| match best {
            Some(b) if dist[b] >= dist[f] => Some(b),
            _ => Some(f),
        })
        .unwrap_or(start as usize) as u32
}

/// [`super::split_chart`]: two parts made disks, origin `Split`.
pub(super) fn split(mesh: &PolyMesh, chart: &Chart) -> Vec<Chart> {
    match split_two(mesh, chart) {
        Some(parts) => parts
            .into_iter()
            .flat_map(|mut p| {
                p.origin = ChartOrigin::Split;
                make_disks(mesh, p, Holes::Cut)
            })
            .collect(),
        None => vec![chart.clone()],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A flat `n × n` quad grid (face `(i, j)` is `j * n + i`), optionally folded by
    /// 90° along the column line `x = fold` (a crease).
    fn grid(n: usize, fold: Option<usize>) -> PolyMesh {
        let lift = |i: usize, j: usize| match fold {
            Some(c) if i > c => Point3::new(c as f64, j as f64, (i - c) as f64),
            _ => Point3::new(i as f64, j as f64, 0.0),
        };
        let mut positions = Vec::new();
        for j in 0..=n {
            for i in 0..=n {
                positions.push(lift(i, j));
            }
        }
        let v = |i: usize, j: usize| (j * (n + 1) + i) as u32;
        let faces: Vec<Vec<u32>> = (0..n)
            .flat_map(|j| {
                (0..n).map(move |i| vec![v(i, j), v(i + 1, j), v(i + 1, j + 1), v(i, j + 1)])
            })
            .collect();
        PolyMesh::from_faces(positions, &faces)
    }

    fn dual_of(m: &PolyMesh) -> Dual {
        let t = Topology::build(m);
        let joinable = vec![true; t.edge_count()];
        Dual::new(m, &t, &joinable, &Faces::new(m))
    }

    #[test]
    fn smoothing_removes_teeth_and_notches_but_keeps_straight_borders() {
        // 8 × 8 grid, left half region 0, right half region 1; a one-face tooth of
        // region 0 sticks into region 1 at (4, 2), and a one-face notch of region 1
        // cuts into region 0 at (3, 5).
        let n = 8;
        let m = grid(n, None);
        let mut label: Vec<u32> = (0..n * n).map(|f| u32::from(f % n >= 4)).collect();
        label[2 * n + 4] = 0;
        label[5 * n + 3] = 1;
        let mut smoothed = label.clone();
        smooth(&dual_of(&m), &mut smoothed);
        let straight: Vec<u32> = (0..n * n).map(|f| u32::from(f % n >= 4)).collect();
        assert_eq!(smoothed, straight);
    }

    #[test]
    fn smoothing_moves_seams_onto_creases_and_never_drains_a_small_region() {
        // Folded by 90° between columns 3 and 4: a tooth of region 0 beyond the
        // crease and a face of region 1 before it both go back, so the seam runs
        // along the crease; no face crosses it the other way.
        let n = 8;
        let m = grid(n, Some(4));
        let straight: Vec<u32> = (0..n * n).map(|f| u32::from(f % n >= 4)).collect();
        let mut label = straight.clone();
        label[2 * n + 4] = 0;
        label[6 * n + 3] = 1;
        smooth(&dual_of(&m), &mut label);
        assert_eq!(label, straight);
        let mut kept = straight.clone();
        smooth(&dual_of(&m), &mut kept);
        assert_eq!(kept, straight);
        // A region of three faces in a row keeps them all, though each end face
        // borders the other region more than its own.
        let flat = grid(n, None);
        let mut label = vec![0u32; n * n];
        for i in 2..5 {
            label[3 * n + i] = 1;
        }
        let before = label.clone();
        smooth(&dual_of(&flat), &mut label);
        assert_eq!(label, before);
    }
}
