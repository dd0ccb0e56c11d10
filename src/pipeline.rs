//! The one library entry point: mesh in, packed UV layout, metrics and report out.
//! The command line, `batch` and `serve` all call [`flatten`] (or [`run_job`]);
//! `compare` calls [`flatten_with_charts`] to flatten the same charts with several
//! energies.
//!
//! Stages (each timed in the report): validate → charts → solve (per chart, in
//! parallel) → re-split over-stretched automatic charts → pack → metrics. With
//! charts given in advance the charts and re-split stages are skipped.

use nalgebra::Point2;
use rayon::prelude::*;
use std::collections::BTreeMap;
use std::time::Instant;

use crate::atlas::{self, AtlasInput};
use crate::charts::{self, Chart, ChartOrigin};
use crate::error::{Error, Result};
use crate::flatten::{self, ChartSolution, SolveOptions, Start};
use crate::io::{self, ObjFile};
use crate::mesh::{validate, PolyMesh, Topology};
use crate::metrics::{self, FaceMetrics};
use crate::pack::{self, ChartPolygons};
use crate::progress::Progress;
use crate::report::{self, BoundingBox, ChartReport, Global, Report};
use crate::settings::{AtlasMetric, EnergyKind, SeamMode, Settings, SolverKind};

/// How many times an automatic chart may be split again for stretch or overlap.
const MAX_SPLIT_ROUNDS: usize = 6;

/// Further rounds, after [`MAX_SPLIT_ROUNDS`], that split only charts that still fold
/// or overlap themselves: the layout must have neither, and each round halves such a
/// chart, so this reaches single faces from any chart of up to 2^40 faces.
const MAX_REPAIR_ROUNDS: usize = 40;

/// Charts with fewer faces than this are never split again.
const MIN_SPLIT_FACES: usize = 2;

/// Rounds of pairwise merging of neighbouring automatic charts at most.
const MAX_MERGE_ROUNDS: usize = 8;

/// A merge of two automatic charts is kept when the joined chart's L2 stretch stays
/// within this fraction of the way from 1 to `--max-stretch` (1.025 at the default
/// 1.25), with no fold and no self-overlap: merging trades distortion for fewer
/// seams, and only nearly free merges are worth it. Measured: at 0.4 (1.10) a demo
/// barrel's cap merged into its side (L2 stretch 1.001 → 1.055, mean σ1/σ2 1.03 →
/// 1.31); at 0.1 the cap stays apart, and Spot's automatic charts went from 57 to 10
/// with L2 stretch 1.010 (before border smoothing and [`MERGE_FILL`]; now 51 to 9,
/// 1.014).
const MERGE_HEADROOM: f64 = 0.1;

/// A merge is also refused when the joined chart covers less of its minimum-area
/// rectangle than this and less than the worse of its two parts: a merge that grows
/// arms packs badly. Measured with `cargo run --release --example bench_pack`
/// (1024 px, 4 px padding): Spot's automatic charts 10 at utilization 0.617 without
/// the rule, 9 at 0.659 with it; a demo mooring coil 4 at 0.486, 7 at 0.601.
const MERGE_FILL: f64 = 0.6;

/// An automatic chart whose minimum-area rectangle is more than this many times as
/// long as it is wide is split in two across its length: alone, a strip of aspect `a`
/// covers at most `1/a` of the square, and bands cut from tubes (a torus, a coil)
/// leave most of the texture empty. Three keeps ordinary charts whole.
const ELONGATED: f64 = 3.0;

/// Rounds of splitting elongated charts at most (a strip of aspect 12 becomes four of
/// aspect 3).
const MAX_ELONGATION_ROUNDS: usize = 3;

/// The result of flattening one mesh.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// UV values of the packed layout, in the unit square.
    pub uvs: Vec<Point2<f64>>,
    /// UV index of every face corner (same layout as `PolyMesh::face_vertices`).
    pub corner_uvs: Vec<u32>,
    /// Chart id of every face.
    pub face_chart: Vec<u32>,
    /// Per-face metrics of the packed layout.
    pub face_metrics: Vec<FaceMetrics>,
    /// The charts flattened, in chart-id order (after any re-split): hand them to
    /// [`flatten_with_charts`] to flatten the same charts again.
    pub charts: Vec<Chart>,
    /// The report.
    pub report: Report,
}

/// A chart with its solution, before packing.
pub(crate) struct Solved {
    /// Chart id.
    pub id: usize,
    /// The chart.
    pub chart: Chart,
    /// Its flattening (UV area = 3D area).
    pub solution: ChartSolution,
}

/// The seam mode a run uses: the setting, or `keep` when the input has UVs and
/// `auto` otherwise.
pub fn seam_mode(mesh: &PolyMesh, settings: &Settings) -> SeamMode {
    settings.seams.unwrap_or(if mesh.corner_uvs.is_some() {
        SeamMode::Keep
    } else {
        SeamMode::Auto
    })
}

/// Checks that `mesh` can be flattened; the error lists every blocking problem that
/// seams cannot cut through. Returns the sentences of the problems the charts will
/// cut seams through (for the report's `input.notes`).
pub fn check_mesh(mesh: &PolyMesh, topology: &Topology, file: &str) -> Result<Vec<String>> {
    let (cut, blocking): (Vec<_>, Vec<_>) = validate(mesh, topology)
        .into_iter()
        .filter(|p| p.blocking)
        .partition(|p| p.cut_by_seams);
    if blocking.is_empty() {
        Ok(cut
            .into_iter()
            .map(|p| format!("{}; polyflat cut a seam there", p.sentence))
            .collect())
    } else {
        let blocking: Vec<String> = blocking.into_iter().map(|p| p.sentence).collect();
        Err(Error::Mesh {
            file: file.to_string(),
            message: blocking.join("; "),
        })
    }
}

/// Flattens `mesh` (read from `input_name`) with `settings`.
pub fn flatten(
    mesh: &PolyMesh,
    input_name: &str,
    settings: &Settings,
    progress: &dyn Progress,
) -> Result<Outcome> {
    in_pool(settings, || {
        flatten_inner(mesh, input_name, settings, None, progress)
    })
}

/// Flattens `mesh` over exactly `charts` (typically [`Outcome::charts`] of an
/// earlier run on the same mesh): the charts are neither rebuilt nor re-split, so
/// runs with different energies share every seam. `settings.seams` only names the
/// mode in the report. Errors when the charts do not partition the mesh's faces.
pub fn flatten_with_charts(
    mesh: &PolyMesh,
    input_name: &str,
    settings: &Settings,
    charts: &[Chart],
    progress: &dyn Progress,
) -> Result<Outcome> {
    in_pool(settings, || {
        flatten_inner(mesh, input_name, settings, Some(charts), progress)
    })
}

/// Runs `job` on `--threads` worker threads (all cores when unset), after checking
/// the settings.
pub(crate) fn in_pool<T: Send>(
    settings: &Settings,
    job: impl FnOnce() -> Result<T> + Send,
) -> Result<T> {
    settings.validate().map_err(Error::Settings)?;
    match settings.threads {
        Some(n) => rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .map_err(|e| Error::Settings(format!("--threads {n}: {e}")))?
            .install(job),
        None => job(),
    }
}

/// Wall-clock milliseconds per stage, for the report's `timings_ms`.
pub(crate) struct Stages {
    timings: BTreeMap<String, f64>,
    clock: Instant,
}

impl Stages {
    /// Starts timing the first stage.
    pub(crate) fn start() -> Stages {
        Stages {
            timings: BTreeMap::new(),
            clock: Instant::now(),
        }
    }

    /// Ends the current stage under `name` and starts the next.
    pub(crate) fn lap(&mut self, name: &str) {
        let now = Instant::now();
        self.timings
            .insert(name.to_string(), (now - self.clock).as_secs_f64() * 1e3);
        self.clock = now;
    }

    /// The stages timed so far.
    pub(crate) fn into_timings(self) -> BTreeMap<String, f64> {
        self.timings
    }
}

fn flatten_inner(
    mesh: &PolyMesh,
    input_name: &str,
    settings: &Settings,
    fixed_charts: Option<&[Chart]>,
    progress: &dyn Progress,
) -> Result<Outcome> {
    let mut stages = Stages::start();

    let topology = Topology::build(mesh);
    let mut notes = check_mesh(mesh, &topology, input_name)?;
    stages.lap("validate");

    let mode = seam_mode(mesh, settings);
    let charts = match fixed_charts {
        Some(given) => {
            check_charts(mesh, given, input_name)?;
            given.to_vec()
        }
        None => {
            let built = charts::build(mesh, &topology, mode).map_err(|e| in_file(e, input_name))?;
            stages.lap("charts");
            built
        }
    };

    notes.extend(opened_islands_note(&charts));
    let options = SolveOptions::from_settings(settings, 0);
    progress.begin("flattening charts", charts.len() as u64);
    let mut solved = solve_all(mesh, charts, &options, progress)?;
    progress.end();
    stages.lap("solve");

    if mode == SeamMode::Auto && fixed_charts.is_none() {
        solved = split_over_stretched(mesh, solved, settings, &options, progress)?;
        stages.lap("resplit");
        solved = merge_neighbours(mesh, &topology, solved, settings, &options, progress);
        stages.lap("merge");
        solved = split_elongated(mesh, solved, settings, &options, progress)?;
        stages.lap("elongated");
    }
    for (id, s) in solved.iter_mut().enumerate() {
        s.id = id;
        notes.extend(s.solution.notes.iter().map(|n| format!("chart {id}: {n}")));
    }

    progress.begin("packing", 0);
    let polygons: Vec<ChartPolygons> = solved.iter().map(|s| chart_polygons(mesh, s)).collect();
    let packing = pack::pack(&polygons, settings.resolution, settings.padding)?;
    progress.end();
    stages.lap("pack");

    let laid: Vec<Laid> = solved
        .iter()
        .zip(&packing.placements)
        .map(|(s, placement)| Laid {
            id: s.id,
            chart: &s.chart,
            uvs: s.solution.uvs.iter().map(|p| placement.apply(p)).collect(),
            iterations: s.solution.iterations,
            solver: s.solution.solver.to_string(),
        })
        .collect();
    let histories: Vec<&[f64]> = solved.iter().map(|s| &s.solution.history[..]).collect();
    let settings = Settings {
        seams: Some(mode),
        ..settings.clone()
    };
    let mut outcome = finish(
        mesh,
        input_name,
        &topology,
        &settings,
        &laid,
        stages.into_timings(),
        total_history(&histories),
    )?;
    outcome.report.input.notes = notes;
    Ok(outcome)
}

/// Says how many of the input's UV islands were closed or had a handle and how many
/// edges were cut inside them to open them (the island count does not change).
fn opened_islands_note(charts: &[Chart]) -> Option<String> {
    let opened: Vec<&Chart> = charts
        .iter()
        .filter(|c| c.origin == ChartOrigin::Kept && c.extra_seam_edges > 0)
        .collect();
    let edges: usize = opened.iter().map(|c| c.extra_seam_edges).sum();
    match opened.len() {
        0 => None,
        1 => Some(format!(
            "1 UV island is closed or has a handle; polyflat cut {edges} edges inside it so it opens into a disk (seams_added in the report's charts)"
        )),
        n => Some(format!(
            "{n} UV islands are closed or have a handle; polyflat cut {edges} edges inside them so each opens into a disk (seams_added in the report's charts)"
        )),
    }
}

/// One chart in its final place.
pub(crate) struct Laid<'a> {
    /// Chart id in the report.
    pub id: usize,
    /// The chart.
    pub chart: &'a Chart,
    /// Final UV (unit square) of every chart vertex.
    pub uvs: Vec<Point2<f64>>,
    /// Solver iterations spent on it.
    pub iterations: usize,
    /// The solver that ran (`none` when the chart's UVs were carried over).
    pub solver: String,
}

/// Gathers the laid charts into one layout, measures it and writes the report; adds
/// the `metrics` stage to `timings`. Errors when a face is in no chart.
pub(crate) fn finish(
    mesh: &PolyMesh,
    input_name: &str,
    topology: &Topology,
    settings: &Settings,
    laid: &[Laid],
    mut timings: BTreeMap<String, f64>,
    history: Vec<f64>,
) -> Result<Outcome> {
    let clock = Instant::now();
    let mut uvs = Vec::new();
    let mut corner_uvs = vec![u32::MAX; mesh.corner_count()];
    let mut face_chart = vec![u32::MAX; mesh.face_count()];
    for l in laid {
        let base = uvs.len() as u32;
        uvs.extend_from_slice(&l.uvs);
        let mut k = 0;
        for &f in &l.chart.faces {
            face_chart[f as usize] = l.id as u32;
            for c in mesh.face_range(f as usize) {
                corner_uvs[c] = base + l.chart.corners[k];
                k += 1;
            }
        }
    }
    if let Some(f) = face_chart.iter().position(|&c| c == u32::MAX) {
        return Err(Error::Mesh {
            file: input_name.to_string(),
            message: format!("{} was left out of every chart", mesh.face_label(f)),
        });
    }

    let laid_mesh = PolyMesh {
        uvs: uvs.clone(),
        corner_uvs: Some(corner_uvs.clone()),
        ..mesh.clone()
    };
    let face_metrics = metrics::face_metrics(mesh, &uvs, &corner_uvs)?;
    let global_metrics = metrics::summarize(&laid_mesh, &face_metrics, None);
    let chart_reports: Vec<ChartReport> = laid
        .iter()
        .map(|l| chart_report(&laid_mesh, &face_metrics, l))
        .collect();
    timings.insert("metrics".to_string(), clock.elapsed().as_secs_f64() * 1e3);

    let report = Report {
        tool: report::Tool::this(),
        input: report::Input {
            path: input_name.to_string(),
            vertices: topology.used_vertices,
            faces: mesh.face_count(),
            arity_histogram: report::arity_histogram(mesh),
            had_uvs: mesh.corner_uvs.is_some(),
            notes: Vec::new(),
        },
        settings: settings.clone(),
        global: Global {
            metrics: global_metrics,
            charts: laid.len(),
            energy: settings.energy.to_string(),
            iterations: laid.iter().map(|l| l.iterations).sum(),
        },
        charts: chart_reports,
        timings_ms: timings,
        history,
    };
    Ok(Outcome {
        uvs,
        corner_uvs,
        face_chart,
        face_metrics,
        charts: laid.iter().map(|l| l.chart.clone()).collect(),
        report,
    })
}

/// Checks that `charts` fit `mesh`: face and vertex indices in range, no face in
/// two charts, each chart's corners matching its faces' arities. (That every face
/// is in a chart is checked after solving, as for built charts.)
fn check_charts(mesh: &PolyMesh, charts: &[Chart], file: &str) -> Result<()> {
    let bad = |id: usize, what: String| Error::Mesh {
        file: file.to_string(),
        message: format!("chart {id} given to flatten does not fit the mesh: {what}"),
    };
    let mut seen = vec![false; mesh.face_count()];
    for (id, chart) in charts.iter().enumerate() {
        for &f in &chart.faces {
            match seen.get_mut(f as usize) {
                None => {
                    return Err(bad(
                        id,
                        format!("face {} is out of range", u64::from(f) + 1),
                    ))
                }
                Some(true) => {
                    return Err(bad(
                        id,
                        format!("face {} is in two charts", u64::from(f) + 1),
                    ))
                }
                Some(s) => *s = true,
            }
        }
        let corners: usize = chart.faces.iter().map(|&f| mesh.arity(f as usize)).sum();
        if corners != chart.corners.len() {
            return Err(bad(
                id,
                format!("{} corners listed for {corners}", chart.corners.len()),
            ));
        }
        if let Some(&v) = chart
            .corners
            .iter()
            .find(|&&v| v as usize >= chart.vertices.len())
        {
            return Err(bad(id, format!("corner vertex {v} is out of range")));
        }
        if let Some(&v) = chart
            .vertices
            .iter()
            .find(|&&v| v as usize >= mesh.positions.len())
        {
            return Err(bad(
                id,
                format!("mesh vertex {} is out of range", u64::from(v) + 1),
            ));
        }
    }
    Ok(())
}

/// Names the input file in errors that do not already.
pub(crate) fn in_file(e: Error, file: &str) -> Error {
    match e {
        Error::Mesh { message, .. } => Error::Mesh {
            file: file.to_string(),
            message,
        },
        other => other,
    }
}

/// The starting layout: the least-squares conformal map for every energy. For the
/// barrier energy (symmetric Dirichlet) `flatten::solve_chart` falls back to the
/// flip-free Tutte embedding when that map flips a face; starting from the conformal
/// map otherwise avoids the poor local minima a circle boundary can lead to (a demo
/// crate corner ended at L2 stretch 1.157 from Tutte).
fn start_for(_energy: EnergyKind) -> Start<'static> {
    Start::Conformal
}

pub(crate) fn solve_all(
    mesh: &PolyMesh,
    charts: Vec<Chart>,
    options: &SolveOptions,
    progress: &dyn Progress,
) -> Result<Vec<Solved>> {
    let done = std::sync::atomic::AtomicU64::new(0);
    charts
        .into_par_iter()
        .enumerate()
        .map(|(id, chart)| {
            let chart_mesh = chart.mesh(mesh);
            let opts = SolveOptions {
                chart_id: id,
                ..*options
            };
            let solution = flatten::solve_chart(
                &chart_mesh,
                &opts,
                start_for(options.energy),
                &crate::progress::Silent,
            )?;
            let n = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            progress.advance(n);
            Ok(Solved {
                id,
                chart,
                solution,
            })
        })
        .collect()
}

/// Splits automatic charts whose L2 stretch exceeds `--max-stretch`, or that
/// overlap or fold on themselves, and flattens the pieces again.
pub(crate) fn split_over_stretched(
    mesh: &PolyMesh,
    solved: Vec<Solved>,
    settings: &Settings,
    options: &SolveOptions,
    progress: &dyn Progress,
) -> Result<Vec<Solved>> {
    let mut done = Vec::new();
    let mut pending = solved;
    for round in 0..MAX_SPLIT_ROUNDS + MAX_REPAIR_ROUNDS {
        let (bad, good): (Vec<Solved>, Vec<Solved>) =
            std::mem::take(&mut pending).into_par_iter().partition(|s| {
                if round < MAX_SPLIT_ROUNDS {
                    needs_split(mesh, s, settings.max_stretch)
                } else {
                    needs_repair(mesh, s)
                }
            });
        done.extend(good);
        if bad.is_empty() {
            break;
        }
        let mut pieces = Vec::new();
        for s in bad {
            let parts = charts::split_chart(mesh, &s.chart);
            if parts.len() < 2 {
                done.push(s);
            } else {
                pieces.extend(parts);
            }
        }
        progress.begin("re-flattening split charts", pieces.len() as u64);
        pending = solve_all(mesh, pieces, options, progress)?;
        progress.end();
    }
    done.extend(pending);
    done.sort_by_key(|s| s.chart.faces.first().copied());
    Ok(done)
}

/// Splits automatic charts longer than [`ELONGATED`] times their width in two and
/// keeps the pieces when each flattens within `--max-stretch` with no fold or
/// overlap; otherwise the chart stays whole.
fn split_elongated(
    mesh: &PolyMesh,
    solved: Vec<Solved>,
    settings: &Settings,
    options: &SolveOptions,
    progress: &dyn Progress,
) -> Result<Vec<Solved>> {
    let mut done = Vec::new();
    let mut pending = solved;
    for _ in 0..MAX_ELONGATION_ROUNDS {
        let (long, rest): (Vec<Solved>, Vec<Solved>) =
            std::mem::take(&mut pending).into_par_iter().partition(|s| {
                s.chart.origin != ChartOrigin::Kept
                    && s.chart.faces.len() >= 2 * MIN_SPLIT_FACES
                    && aspect(&s.solution.uvs) > ELONGATED
            });
        done.extend(rest);
        if long.is_empty() {
            break;
        }
        progress.begin("splitting elongated charts", long.len() as u64);
        let mut next = Vec::new();
        for s in long {
            let pieces = charts::split_chart(mesh, &s.chart);
            if pieces.len() < 2 {
                done.push(s);
                continue;
            }
            let parts = solve_all(mesh, pieces, options, &crate::progress::Silent)?;
            if parts
                .iter()
                .all(|p| flattens_within(mesh, p, settings.max_stretch))
            {
                next.extend(parts);
            } else {
                done.push(s);
            }
        }
        progress.end();
        pending = next;
    }
    done.extend(pending);
    done.sort_by_key(|s| s.chart.faces.first().copied());
    Ok(done)
}

/// Length over width of the minimum-area rectangle around `uvs` (1 when degenerate).
fn aspect(uvs: &[Point2<f64>]) -> f64 {
    let rect = pack::min_area_rect(&pack::convex_hull(uvs));
    let (long, short) = (rect.width.max(rect.height), rect.width.min(rect.height));
    if short > 0.0 {
        long / short
    } else {
        1.0
    }
}

fn needs_split(mesh: &PolyMesh, s: &Solved, max_stretch: f64) -> bool {
    splittable(s) && !flattens_within(mesh, s, max_stretch)
}

/// Whether a splittable chart still folds or overlaps itself (at any stretch).
fn needs_repair(mesh: &PolyMesh, s: &Solved) -> bool {
    splittable(s) && !flattens_within(mesh, s, f64::INFINITY)
}

fn splittable(s: &Solved) -> bool {
    s.chart.origin != ChartOrigin::Kept && s.chart.faces.len() >= MIN_SPLIT_FACES
}

/// Whether a solved chart's L2 stretch is at most `limit` with no fold and no
/// self-overlap.
fn flattens_within(mesh: &PolyMesh, s: &Solved, limit: f64) -> bool {
    let chart_mesh = s.chart.mesh(mesh);
    let corners = &chart_mesh.face_vertices;
    let Ok(fm) = metrics::face_metrics(&chart_mesh, &s.solution.uvs, corners) else {
        return false;
    };
    let laid = PolyMesh {
        uvs: s.solution.uvs.clone(),
        corner_uvs: Some(corners.clone()),
        ..chart_mesh
    };
    let m = metrics::summarize(&laid, &fm, None);
    m.stretch_l2 <= limit && m.overlapping_face_pairs == 0 && m.flipped_faces == 0
}

/// How much of its minimum-area enclosing rectangle a flattened chart covers (UV
/// polygon area over rectangle area; 1 for a rectangle, π/4 for a disc).
fn fill(mesh: &PolyMesh, s: &Solved) -> f64 {
    let uv = |i: &u32| s.solution.uvs.get(*i as usize).copied().unwrap_or_default();
    let area: f64 = s
        .chart
        .local_faces(mesh)
        .iter()
        .map(|face| {
            let n = face.len();
            (0..n)
                .map(|k| uv(&face[k]).coords.perp(&uv(&face[(k + 1) % n]).coords))
                .sum::<f64>()
                .abs()
                * 0.5
        })
        .sum();
    let rect = pack::min_area_rect(&pack::convex_hull(&s.solution.uvs));
    let box_area = rect.width * rect.height;
    if box_area > 0.0 {
        area / box_area
    } else {
        1.0
    }
}

/// Undoes over-segmentation: in rounds, pairs each automatic chart with the
/// neighbour it shares most edges with (a greedy matching, largest shares first),
/// flattens every pair joined ([`charts::merge_charts`]) and keeps the joined chart
/// when it flattens within [`MERGE_HEADROOM`]. A rejected pair is not tried again.
fn merge_neighbours(
    mesh: &PolyMesh,
    topology: &Topology,
    mut solved: Vec<Solved>,
    settings: &Settings,
    options: &SolveOptions,
    progress: &dyn Progress,
) -> Vec<Solved> {
    let limit = 1.0 + MERGE_HEADROOM * (settings.max_stretch - 1.0);
    let key = |c: &Chart| (c.faces.first().copied(), c.faces.len());
    let mut rejected = std::collections::HashSet::new();
    for _ in 0..MAX_MERGE_ROUNDS {
        let pairs = merge_candidates(mesh, topology, &solved);
        let mut used = vec![false; solved.len()];
        let mut chosen = Vec::new();
        for (a, b) in pairs {
            let pair_key = (key(&solved[a].chart), key(&solved[b].chart));
            if !used[a] && !used[b] && !rejected.contains(&pair_key) {
                used[a] = true;
                used[b] = true;
                chosen.push((a, b, pair_key));
            }
        }
        if chosen.is_empty() {
            break;
        }
        progress.begin("merging charts", chosen.len() as u64);
        let done = std::sync::atomic::AtomicU64::new(0);
        let merged: Vec<Option<Solved>> = chosen
            .par_iter()
            .map(|&(a, b, _)| {
                let joined =
                    charts::merge_charts(mesh, topology, &solved[a].chart, &solved[b].chart);
                let result = joined.and_then(|chart| {
                    let solution = flatten::solve_chart(
                        &chart.mesh(mesh),
                        options,
                        start_for(options.energy),
                        &crate::progress::Silent,
                    )
                    .ok()?;
                    let s = Solved {
                        id: 0,
                        chart,
                        solution,
                    };
                    let floor = MERGE_FILL
                        .min(fill(mesh, &solved[a]))
                        .min(fill(mesh, &solved[b]));
                    (flattens_within(mesh, &s, limit) && fill(mesh, &s) >= floor).then_some(s)
                });
                let n = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
                progress.advance(n);
                result
            })
            .collect();
        progress.end();
        let mut gone = vec![false; solved.len()];
        let mut joined = Vec::new();
        for ((a, b, pair_key), m) in chosen.into_iter().zip(merged) {
            match m {
                Some(s) => {
                    gone[a] = true;
                    gone[b] = true;
                    joined.push(s);
                }
                None => {
                    rejected.insert(pair_key);
                }
            }
        }
        if joined.is_empty() {
            continue;
        }
        let mut kept: Vec<Solved> = solved
            .into_iter()
            .zip(gone)
            .filter(|(_, g)| !g)
            .map(|(s, _)| s)
            .collect();
        kept.extend(joined);
        kept.sort_by_key(|s| s.chart.faces.first().copied());
        solved = kept;
    }
    solved
}

/// Pairs of non-kept charts (indices into `solved`) that share mesh edges, most
/// shared edges first (ties by index).
fn merge_candidates(
    mesh: &PolyMesh,
    topology: &Topology,
    solved: &[Solved],
) -> Vec<(usize, usize)> {
    let mut chart_of = vec![usize::MAX; mesh.face_count()];
    for (i, s) in solved.iter().enumerate() {
        if s.chart.origin != ChartOrigin::Kept {
            for &f in &s.chart.faces {
                if let Some(slot) = chart_of.get_mut(f as usize) {
                    *slot = i;
                }
            }
        }
    }
    let chart_at = |c: u32| {
        topology
            .corner_face
            .get(c as usize)
            .and_then(|&f| chart_of.get(f as usize).copied())
            .unwrap_or(usize::MAX)
    };
    let mut shared: BTreeMap<(usize, usize), usize> = BTreeMap::new();
    for e in 0..topology.edge_count() as u32 {
        if let [h, k] = *topology.edge_halfedges(e) {
            let (a, b) = (chart_at(h), chart_at(k));
            if a != b && a != usize::MAX && b != usize::MAX {
                *shared.entry((a.min(b), a.max(b))).or_default() += 1;
            }
        }
    }
    let mut pairs: Vec<((usize, usize), usize)> = shared.into_iter().collect();
    pairs.sort_by(|x, y| y.1.cmp(&x.1).then(x.0.cmp(&y.0)));
    pairs.into_iter().map(|(p, _)| p).collect()
}

pub(crate) fn chart_polygons(mesh: &PolyMesh, s: &Solved) -> ChartPolygons {
    ChartPolygons {
        points: s.solution.uvs.clone(),
        faces: s.chart.local_faces(mesh),
    }
}

fn chart_report(laid: &PolyMesh, face_metrics: &[FaceMetrics], s: &Laid) -> ChartReport {
    let (mut min, mut max) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    let mut area_3d = 0.0;
    let mut area_uv = 0.0;
    for &f in &s.chart.faces {
        let m = &face_metrics[f as usize];
        area_3d += m.area_3d;
        area_uv += m.area_uv.abs();
        if let Some(uv_idx) = laid.face_uv_indices(f as usize) {
            for &t in uv_idx {
                let p = laid.uvs[t as usize];
                min = [min[0].min(p.x), min[1].min(p.y)];
                max = [max[0].max(p.x), max[1].max(p.y)];
            }
        }
    }
    ChartReport {
        id: s.id,
        faces: s.chart.faces.len(),
        area_3d,
        area_uv,
        bounding_box: BoundingBox { min, max },
        origin: origin_name(s.chart.origin).to_string(),
        mirrored_in_input: s.chart.mirrored_in_input,
        seams_added: s.chart.extra_seam_edges,
        iterations: s.iterations,
        solver: s.solver.clone(),
        metrics: metrics::summarize(laid, face_metrics, Some(&s.chart.faces)),
    }
}

fn origin_name(origin: ChartOrigin) -> &'static str {
    match origin {
        ChartOrigin::Kept => "kept",
        ChartOrigin::Auto => "auto",
        ChartOrigin::Split => "split",
    }
}

/// Sum over charts of each chart's energy after iteration `k` (a chart that has
/// stopped keeps its last value).
pub(crate) fn total_history(histories: &[&[f64]]) -> Vec<f64> {
    let longest = histories.iter().map(|h| h.len()).max().unwrap_or(0);
    (0..longest)
        .map(|k| {
            histories
                .iter()
                .filter_map(|h| h.get(k).or(h.last()))
                .sum::<f64>()
        })
        .collect()
}

/// The files one job produces, as bytes.
#[derive(Debug, Clone)]
pub struct JobFiles {
    /// The OBJ with the new UVs.
    pub obj: Vec<u8>,
    /// The report JSON (pretty-printed).
    pub report: Vec<u8>,
    /// The distortion atlas PNG.
    pub atlas: Vec<u8>,
}

/// Flattens an OBJ already read and renders the three standard outputs in memory.
pub fn run_job(
    obj: &ObjFile,
    input_name: &str,
    settings: &Settings,
    progress: &dyn Progress,
) -> Result<(Outcome, JobFiles)> {
    let outcome = flatten(&obj.mesh, input_name, settings, progress)?;
    let files = JobFiles {
        obj: io::obj_to_string(obj, &outcome.uvs, &outcome.corner_uvs).into_bytes(),
        report: report_bytes(&outcome.report)?,
        atlas: atlas_png(obj, &outcome, settings.atlas_metric, settings.resolution)?,
    };
    Ok((outcome, files))
}

/// The report as pretty-printed JSON bytes.
pub fn report_bytes(report: &impl serde::Serialize) -> Result<Vec<u8>> {
    let mut bytes = serde_json::to_vec_pretty(report)
        .map_err(|e| Error::Settings(format!("cannot encode the report: {e}")))?;
    bytes.push(b'\n');
    Ok(bytes)
}

/// Renders the distortion atlas of `outcome` as PNG bytes.
pub fn atlas_png(
    obj: &ObjFile,
    outcome: &Outcome,
    metric: AtlasMetric,
    resolution: u32,
) -> Result<Vec<u8>> {
    atlas::png_bytes(&atlas_image(obj, outcome, metric, resolution)?)
}

/// Renders the distortion atlas of `outcome` (see [`atlas::render_atlas`]).
pub fn atlas_image(
    obj: &ObjFile,
    outcome: &Outcome,
    metric: AtlasMetric,
    resolution: u32,
) -> Result<image::RgbaImage> {
    let s = metrics::global_scale(&outcome.face_metrics, None);
    let values: Vec<f64> = outcome
        .face_metrics
        .iter()
        .map(|m| match metric {
            AtlasMetric::Angle => m.angle_distortion,
            // Signed: below 0 the face got fewer texels than average, above 0 more.
            AtlasMetric::Area => (m.sigma1 * m.sigma2.abs() / (s * s)).ln(),
            AtlasMetric::Stretch => m.stretch_l2,
        })
        .collect();
    let flipped: Vec<bool> = outcome.face_metrics.iter().map(|m| m.flipped).collect();
    atlas::render_atlas(
        &AtlasInput {
            mesh: &obj.mesh,
            uvs: &outcome.uvs,
            corner_uvs: &outcome.corner_uvs,
            face_values: &values,
            metric,
            flipped: &flipped,
            face_chart: &outcome.face_chart,
        },
        resolution,
    )
}

/// Whether a solver choice makes sense for an energy (local–global is ARAP's).
pub fn check_solver(settings: &Settings) -> Result<()> {
    if settings.solver == SolverKind::LocalGlobal && settings.energy != EnergyKind::Arap {
        return Err(Error::Settings(format!(
            "--solver local-global works only with --energy arap, not {}",
            settings.energy
        )));
    }
    Ok(())
}
