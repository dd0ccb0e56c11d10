//! Packing: places flattened charts in the unit square with one common scale.
//!
//! Input charts are UV polygons already scaled so each chart's UV area equals its 3D
//! area. Each chart is turned so its minimum-area enclosing rectangle is axis-aligned
//! ([`hull`]), rasterised conservatively on a grid of texels ([`raster`]) and placed
//! bottom-left first-fit on an occupancy bitmap ([`grid`]), trying eight turns. A
//! plan fixes the order of the charts (largest rectangle, longest side or largest
//! area first) and the rule by which a chart's turns compete (lowest top, bottom or
//! middle). The common scale is the largest one for which every chart finds a place:
//! the first plan finds it by bisection, every other plan is tried just above it and
//! searched further only when it fits there. Placed charts are dilated by the padding,
//! so any two charts, and every chart and the border, are at least `padding` texels
//! apart (exact Euclidean distance). Everything is deterministic: same input, same
//! bits.

mod around;
mod grid;
mod hull;
mod raster;

pub use around::place_around;

pub use hull::{convex_hull, min_area_rect, OrientedRect};

use crate::error::{Error, Result};
use nalgebra::{Point2, Vector2};
use rayon::prelude::*;
use std::f64::consts::{FRAC_PI_2, FRAC_PI_4, PI};

/// Turns tried for every chart after aligning its minimum-area rectangle: the four
/// quarter turns (a ragged chart may nest better upside down) and the four diagonals
/// between them. On the Spot fixture's 13 islands (1024 px, 4 px padding) two turns
/// gave utilization 0.654, four 0.672, these eight 0.699; twelve and sixteen did
/// worse (0.672), as greedy placement is not monotone in the choices it gets.
const TURNS: [f64; 8] = [
    0.0,
    FRAC_PI_2,
    PI,
    3.0 * FRAC_PI_2,
    FRAC_PI_4,
    3.0 * FRAC_PI_4,
    5.0 * FRAC_PI_4,
    7.0 * FRAC_PI_4,
];

/// Above this many charts only the quarter turns and the first placing order are
/// tried: with many small charts the gaps fill anyway (1000 synthetic charts: the
/// same utilization), and the extra tries would cost 6 to 10 times the time.
const MANY_CHARTS: usize = 100;

/// Largest packing grid side in cells. Textures above this many texels are packed on
/// cells of several texels (padding rounded up to whole cells), which bounds memory
/// and time while keeping the padding guarantee.
const MAX_GRID: u32 = 2048;

/// Relative gap between a fitting and a failing scale at which bisection stops
/// (utilization within 1 %).
const SCALE_TOLERANCE: f64 = 5e-3;

/// Factor by which the scale shrinks while no fitting scale is known; the first try is
/// this fraction of the area bound too (utilization 0.81), as realistic sets rarely
/// reach more.
const SHRINK: f64 = 0.9;

/// One chart to pack: its UV points and its faces as index lists into them.
///
/// Units: UV units scaled so the chart's UV area equals its 3D area. Faces may have any
/// arity and orientation; points no face uses are ignored.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ChartPolygons {
    /// UV point of every chart vertex.
    pub points: Vec<Point2<f64>>,
    /// Each face's corners as indices into `points`, in order.
    pub faces: Vec<Vec<u32>>,
}

/// Where one chart goes: `uv = scale · R(rotation) · p + translation`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Placement {
    /// Counter-clockwise rotation in radians, applied first.
    pub rotation: f64,
    /// Common scale of every chart (the same as [`Packing::scale`]).
    pub scale: f64,
    /// Offset in unit-square UV units, applied last.
    pub translation: Vector2<f64>,
}

impl Placement {
    /// Maps a chart's input UV point to its packed position in the unit square.
    pub fn apply(&self, p: &Point2<f64>) -> Point2<f64> {
        let (s, c) = self.rotation.sin_cos();
        Point2::new(
            self.scale * (c * p.x - s * p.y) + self.translation.x,
            self.scale * (s * p.x + c * p.y) + self.translation.y,
        )
    }
}

/// A packing: one placement per input chart, in input order.
#[derive(Debug, Clone, PartialEq)]
pub struct Packing {
    /// Placement of every chart, in input order.
    pub placements: Vec<Placement>,
    /// Common scale (unit-square UV units per input UV unit): uniform texel density.
    pub scale: f64,
    /// Total UV polygon area after packing / unit square area (0..1).
    pub utilization: f64,
}

/// A validated chart: the regions to rasterise, its rectangle and its area.
struct Prepared {
    /// Directed segments per region (see [`raster::rasterize_regions`]): the chart's
    /// boundary edges as one region when every face winds the same way (the faces
    /// then cover exactly where the boundary's winding number is non-zero), else
    /// each face's edges as a region of its own.
    regions: Vec<Vec<[Point2<f64>; 2]>>,
    rect: OrientedRect,
    area: f64,
}

/// A chart's footprint in one orientation at one scale.
struct Footprint {
    rotation: f64,
    /// Minimum corner of the rotated, scaled chart in cell units.
    low: Vector2<f64>,
    mask: raster::Mask,
    widest: Vec<(usize, i32)>,
    dilated: raster::Mask,
}

/// Where the search put one chart.
struct Spot {
    chart: usize,
    rotation: f64,
    /// Translation in unit-square UV units.
    offset: Vector2<f64>,
}

/// Grid geometry derived from resolution and padding.
#[derive(Debug, Clone, Copy)]
struct Layout {
    /// Grid side in cells.
    size: i32,
    /// Padding in cells.
    margin: i32,
    /// Cells per unit-square UV unit.
    cells_per_uv: f64,
    /// Texture side in texels, as requested.
    resolution: u32,
    /// Padding in texels, as requested.
    padding: u32,
}

/// Packs `charts` into the unit square.
///
/// `resolution`: texture side in texels (≥ 1); `padding`: texels to keep between any
/// two charts and between every chart and the border. Returns one placement per chart
/// (input order) with a common scale chosen as large as the packer can fit. Errors
/// when a chart refers to a missing point, has a non-finite coordinate or no face, or
/// when the charts cannot fit at this resolution and padding.
pub fn pack(charts: &[ChartPolygons], resolution: u32, padding: u32) -> Result<Packing> {
    let layout = Layout::new(resolution, padding)?;
    let prepared = prepare_all(charts)?;
    if prepared.is_empty() {
        return Ok(Packing {
            placements: Vec::new(),
            scale: 1.0,
            utilization: 0.0,
        });
    }
    let total_area: f64 = prepared.iter().map(|p| p.area).sum();
    let longest = prepared.iter().map(|p| p.rect.width).fold(0.0, f64::max);
    let avail = f64::from((layout.size - 2 * layout.margin) as u32) / layout.cells_per_uv;
    let mut high = f64::INFINITY;
    if total_area > 0.0 {
        high = avail / total_area.sqrt();
    }
    if longest > 0.0 {
        high = high.min(avail / longest);
    }
    let (scale, spots) = if high.is_finite() {
        // Each distinct order searched on its own; the largest common scale wins
        // (ties: the earlier order), so the result stays deterministic.
        let mut orders: Vec<Vec<usize>> = Vec::with_capacity(Order::ALL.len());
        let tried = if prepared.len() > MANY_CHARTS {
            1
        } else {
            Order::ALL.len()
        };
        for o in &Order::ALL[..tried] {
            let order = o.sorted(&prepared);
            if !orders.contains(&order) {
                orders.push(order);
            }
        }
        let rules = if prepared.len() > MANY_CHARTS {
            &Rule::ALL[..1]
        } else {
            &Rule::ALL[..]
        };
        let plans: Vec<Plan> = orders
            .iter()
            .flat_map(|order| {
                rules.iter().map(|&rule| Plan {
                    order: order.clone(),
                    rule,
                })
            })
            .collect();
        // The first plan is searched in full; every other plan only above the scale
        // found so far (one try just above it, and a search only when that fits), so
        // the extra plans cost about one placement each.
        let Some((first, rest)) = plans.split_first() else {
            return Err(too_many(layout));
        };
        let mut best = search_scale(&prepared, first, layout, high)?;
        let better: Vec<Option<(f64, Vec<Spot>)>> = rest
            .par_iter()
            .map(|plan| search_above(&prepared, plan, layout, best.0, high))
            .collect();
        // The largest scale wins; ties go to the earlier plan (deterministic).
        for (s, spots) in better.into_iter().flatten() {
            if s > best.0 {
                best = (s, spots);
            }
        }
        best
    } else {
        // Every chart is a single point: any scale gives the same layout.
        let order = Order::Area.sorted(&prepared);
        let plan = Plan {
            order,
            rule: Rule::Top,
        };
        let spots = attempt(&prepared, &plan, layout, 1.0).ok_or_else(|| too_many(layout))?;
        (1.0, spots)
    };
    Ok(Packing {
        placements: placements(&spots, prepared.len(), scale),
        scale,
        utilization: total_area * scale * scale,
    })
}

/// One placement per chart (`count` charts) at `scale` from the spots found; a chart
/// without a spot stays at the origin unturned.
fn placements(spots: &[Spot], count: usize, scale: f64) -> Vec<Placement> {
    let mut placements = vec![
        Placement {
            rotation: 0.0,
            scale,
            translation: Vector2::zeros(),
        };
        count
    ];
    for spot in spots {
        if let Some(p) = placements.get_mut(spot.chart) {
            p.rotation = spot.rotation;
            p.translation = spot.offset;
        }
    }
    placements
}

/// One greedy placing strategy: the order of the charts and the rule by which each
/// chart's turns compete.
struct Plan {
    order: Vec<usize>,
    rule: Rule,
}

/// How a chart's turns compete for a place: each turn's bottom-left position is
/// found, and the lowest by this rule wins (then the leftmost). No rule is best on
/// every set, so each is a plan of its own and the best plan wins. Measured on Spot,
/// its control mesh and the five demo props with `--seams auto` (1024 px, 4 px
/// padding): the top edge alone gave mean utilization 0.633, the best of the three
/// rules 0.649 (Spot 0.659 → 0.676, its control mesh 0.659 → 0.690).
#[derive(Debug, Clone, Copy, PartialEq)]
enum Rule {
    /// Lowest top edge: keeps the layout's skyline low.
    Top,
    /// Lowest bottom edge: the classic bottom-left rule.
    Bottom,
    /// Lowest middle: between the two.
    Middle,
}

impl Rule {
    const ALL: [Rule; 3] = [Rule::Top, Rule::Bottom, Rule::Middle];

    /// The height compared for a chart `h` cells tall placed at row `y` (in half
    /// cells, so the middle stays an integer).
    fn height(self, y: i32, h: i32) -> i64 {
        let (y, h) = (i64::from(y), i64::from(h));
        match self {
            Rule::Top => 2 * (y + h),
            Rule::Bottom => 2 * y,
            Rule::Middle => 2 * y + h,
        }
    }

    /// Highest row at which a chart `h` cells tall can still beat or tie the best
    /// place so far, at row `best_y` for a chart `best_h` tall.
    fn y_limit(self, best_y: i32, best_h: i32, h: i32) -> i32 {
        match self {
            Rule::Top => best_y + best_h - h,
            Rule::Bottom => best_y,
            Rule::Middle => best_y + (best_h - h).div_euclid(2),
        }
    }
}

/// The orders in which charts are placed; every one is tried.
#[derive(Debug, Clone, Copy)]
enum Order {
    /// Largest rectangle first, then longest side.
    Area,
    /// Longest side first, then rectangle area.
    Length,
    /// Largest polygon area first (charts with ragged outlines later).
    Fill,
}

impl Order {
    const ALL: [Order; 3] = [Order::Area, Order::Length, Order::Fill];

    /// Chart indices in this order; ties keep input order.
    fn sorted(self, prepared: &[Prepared]) -> Vec<usize> {
        let mut order: Vec<usize> = (0..prepared.len()).collect();
        order.sort_by(|&a, &b| {
            let (pa, pb) = (&prepared[a], &prepared[b]);
            let (ra, rb) = (&pa.rect, &pb.rect);
            let area = (rb.width * rb.height).total_cmp(&(ra.width * ra.height));
            let length = rb.width.total_cmp(&ra.width);
            match self {
                Order::Area => area.then(length),
                Order::Length => length.then(area),
                Order::Fill => pb.area.total_cmp(&pa.area).then(area),
            }
            .then(a.cmp(&b))
        });
        order
    }
}

impl Layout {
    /// The grid for a texture of `resolution` texels with `padding` texels of gap.
    fn new(resolution: u32, padding: u32) -> Result<Layout> {
        if resolution == 0 {
            return Err(Error::Pack("--resolution must be at least 1 texel".into()));
        }
        let cell = resolution.div_ceil(MAX_GRID);
        let layout = Layout {
            size: (resolution / cell) as i32,
            margin: padding.div_ceil(cell) as i32,
            cells_per_uv: f64::from(resolution) / f64::from(cell),
            resolution,
            padding,
        };
        if 2 * layout.margin >= layout.size {
            return Err(Error::Pack(format!(
                "--padding {padding} leaves no room in a {resolution}-texel texture"
            )));
        }
        Ok(layout)
    }
}

fn too_many(layout: Layout) -> Error {
    Error::Pack(format!(
        "the charts do not fit in a {}-texel texture with {} texels of padding; raise \
         --resolution or lower --padding",
        layout.resolution, layout.padding
    ))
}

/// [`prepare`] for every chart, in order.
fn prepare_all(charts: &[ChartPolygons]) -> Result<Vec<Prepared>> {
    charts
        .iter()
        .enumerate()
        .map(|(i, c)| prepare(i, c))
        .collect()
}

/// Checks a chart and computes its rectangle and area.
fn prepare(index: usize, chart: &ChartPolygons) -> Result<Prepared> {
    if chart.faces.is_empty() {
        return Err(Error::Pack(format!("chart {index} has no faces to pack")));
    }
    let mut used = Vec::new();
    let mut faces = Vec::with_capacity(chart.faces.len());
    let mut area = 0.0;
    let (mut positive, mut negative) = (0usize, 0usize);
    for (f, face) in chart.faces.iter().enumerate() {
        let mut poly = Vec::with_capacity(face.len());
        for &v in face {
            let p = chart.points.get(v as usize).ok_or_else(|| {
                Error::Pack(format!(
                    "chart {index}, face {f} refers to UV point {v}, but the chart has only {}",
                    chart.points.len()
                ))
            })?;
            if !(p.x.is_finite() && p.y.is_finite()) {
                return Err(Error::Pack(format!(
                    "chart {index}, face {f} has a UV point that is not a finite number"
                )));
            }
            poly.push(*p);
            used.push(*p);
        }
        let signed = shoelace(&poly);
        positive += usize::from(signed > 0.0);
        negative += usize::from(signed < 0.0);
        area += signed.abs();
        faces.push(poly);
    }
    let rect = min_area_rect(&convex_hull(&used));
    let edges = |poly: &Vec<Point2<f64>>| -> Vec<[Point2<f64>; 2]> {
        let n = poly.len();
        (0..n).map(|i| [poly[i], poly[(i + 1) % n]]).collect()
    };
    let regions = if positive == faces.len() || negative == faces.len() {
        vec![boundary_segments(chart)]
    } else {
        faces.iter().map(edges).collect()
    };
    Ok(Prepared {
        regions,
        rect,
        area,
    })
}

/// Directed edges of `chart` (already validated) whose reverse no face uses.
fn boundary_segments(chart: &ChartPolygons) -> Vec<[Point2<f64>; 2]> {
    fn directed(face: &[u32]) -> impl Iterator<Item = (u32, u32)> + '_ {
        let n = face.len();
        (0..n).map(move |i| (face[i], face[(i + 1) % n]))
    }
    let all: std::collections::HashSet<(u32, u32)> =
        chart.faces.iter().flat_map(|f| directed(f)).collect();
    chart
        .faces
        .iter()
        .flat_map(|f| directed(f))
        .filter(|&(a, b)| !all.contains(&(b, a)))
        .filter_map(|(a, b)| {
            Some([
                *chart.points.get(a as usize)?,
                *chart.points.get(b as usize)?,
            ])
        })
        .collect()
}

/// Signed area of a polygon (positive when counter-clockwise).
fn shoelace(poly: &[Point2<f64>]) -> f64 {
    let n = poly.len();
    (0..n)
        .map(|i| poly[i].coords.perp(&poly[(i + 1) % n].coords))
        .sum::<f64>()
        * 0.5
}

/// Largest scale ≤ `high` at which every chart finds a place, and the spots found.
fn search_scale(
    prepared: &[Prepared],
    order: &Plan,
    layout: Layout,
    high: f64,
) -> Result<(f64, Vec<Spot>)> {
    let longest = prepared.iter().map(|p| p.rect.width).fold(0.0, f64::max);
    let mut failing = high;
    let mut scale = high * SHRINK;
    let fit = loop {
        if let Some(spots) = attempt(prepared, order, layout, scale) {
            break (scale, spots);
        }
        // Below one cell per chart, shrinking changes nothing more.
        if scale * longest * layout.cells_per_uv < 1.0 {
            return Err(too_many(layout));
        }
        failing = scale;
        scale *= SHRINK;
    };
    Ok(bisect(prepared, order, layout, fit, failing))
}

/// Narrows a fitting scale (with its spots) and a failing one down to
/// [`SCALE_TOLERANCE`]; returns the largest fitting scale found and its spots.
fn bisect(
    prepared: &[Prepared],
    plan: &Plan,
    layout: Layout,
    (mut fitting, mut spots): (f64, Vec<Spot>),
    mut failing: f64,
) -> (f64, Vec<Spot>) {
    while failing > fitting * (1.0 + SCALE_TOLERANCE) {
        let mid = (fitting * failing).sqrt();
        match attempt(prepared, plan, layout, mid) {
            Some(s) => {
                fitting = mid;
                spots = s;
            }
            None => failing = mid,
        }
    }
    (fitting, spots)
}

/// The largest scale in `(floor, high]` at which `plan` places every chart, found by
/// bisection, and its spots; `None` when it does not fit just above `floor`.
fn search_above(
    prepared: &[Prepared],
    plan: &Plan,
    layout: Layout,
    floor: f64,
    high: f64,
) -> Option<(f64, Vec<Spot>)> {
    let scale = floor * (1.0 + SCALE_TOLERANCE);
    if scale > high {
        return None;
    }
    let spots = attempt(prepared, plan, layout, scale)?;
    Some(bisect(prepared, plan, layout, (scale, spots), high))
}

/// Places every chart at scale `scale`, in `order`; `None` when one does not fit.
fn attempt(prepared: &[Prepared], order: &Plan, layout: Layout, scale: f64) -> Option<Vec<Spot>> {
    attempt_on(grid::Grid::new(layout.size), prepared, order, layout, scale)
}

/// [`attempt`] on a grid where some cells are already taken.
fn attempt_on(
    mut grid: grid::Grid,
    prepared: &[Prepared],
    plan: &Plan,
    layout: Layout,
    scale: f64,
) -> Option<Vec<Spot>> {
    let order = &plan.order;
    let turns = if prepared.len() > MANY_CHARTS {
        &TURNS[..4]
    } else {
        &TURNS[..]
    };
    let footprints: Vec<Vec<Footprint>> = order
        .par_iter()
        .map(|&i| {
            let p = &prepared[i];
            turns
                .iter()
                .map(|turn| footprint(p, p.rect.rotation + turn, scale, layout))
                .collect()
        })
        .collect();
    let mut spots = Vec::with_capacity(order.len());
    for (&i, options) in order.iter().zip(&footprints) {
        let mut best: Option<(i32, i32, &Footprint)> = None;
        for f in options {
            // Only a spot whose height (by the plan's rule) is no greater than the
            // best one so far can win.
            let y_limit = best.map_or(i32::MAX, |(_, by, bf)| {
                plan.rule.y_limit(by, bf.mask.height, f.mask.height)
            });
            if let Some((x, y)) = grid.find(&f.mask, &f.widest, layout.margin, y_limit) {
                let better = best.is_none_or(|(bx, by, bf)| {
                    (plan.rule.height(y, f.mask.height), x)
                        < (plan.rule.height(by, bf.mask.height), bx)
                });
                if better {
                    best = Some((x, y, f));
                }
            }
        }
        let (x, y, f) = best?;
        grid.occupy(&f.dilated, x - layout.margin, y - layout.margin);
        let corner = Vector2::new(f64::from(x), f64::from(y));
        let offset = (corner - f.low + Vector2::repeat(2.0 * raster::EPS)) / layout.cells_per_uv;
        spots.push(Spot {
            chart: i,
            rotation: f.rotation,
            offset,
        });
    }
    Some(spots)
}

/// Rasterises a chart turned by `rotation` and scaled by `scale`, in cell units.
fn footprint(chart: &Prepared, rotation: f64, scale: f64, layout: Layout) -> Footprint {
    let (s, c) = rotation.sin_cos();
    let k = scale * layout.cells_per_uv;
    let turn = |p: &Point2<f64>| Point2::new(k * (c * p.x - s * p.y), k * (s * p.x + c * p.y));
    let turned: Vec<Vec<[Point2<f64>; 2]>> = chart
        .regions
        .iter()
        .map(|r| r.iter().map(|[a, b]| [turn(a), turn(b)]).collect())
        .collect();
    let mut low = Vector2::repeat(f64::INFINITY);
    let mut high = Vector2::repeat(f64::NEG_INFINITY);
    for p in turned.iter().flatten().flatten() {
        low = low.inf(&p.coords);
        high = high.sup(&p.coords);
    }
    let shift = Vector2::repeat(2.0 * raster::EPS) - low;
    let shifted: Vec<Vec<[Point2<f64>; 2]>> = turned
        .into_iter()
        .map(|r| r.into_iter().map(|[a, b]| [a + shift, b + shift]).collect())
        .collect();
    let extent = high - low + Vector2::repeat(3.0 * raster::EPS);
    let width = (extent.x.floor() as i32).saturating_add(1);
    let height = (extent.y.floor() as i32).saturating_add(1);
    let mask = raster::rasterize_regions(shifted.iter().map(|r| r.as_slice()), width, height);
    let widest = mask.widest_runs();
    let dilated = mask.dilate(layout.margin);
    Footprint {
        rotation,
        low,
        mask,
        widest,
        dilated,
    }
}
