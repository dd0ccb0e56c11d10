//! Re-flattening after an edit: the edited model gets a layout that keeps its
//! previous layout's islands where they were, so painted textures still fit.
//!
//! Stages:
//! 1. [`matching`]: which previous face and corner each edited face continues (by
//!    index when the topology is the same, else by position through a k-d tree).
//! 2. Charts: the matched faces carry their previous corner UVs and are charted with
//!    `--seams keep` (the previous seams); the unmatched faces are charted with
//!    `--seams auto` and flattened like `polyflat flatten` does.
//! 3. Each kept chart is `carried` (its surface did not change: the previous UVs,
//!    bit for bit) or `changed`: re-flattened around the edit by [`local`] (the rest
//!    of the chart held in place) or, when the whole chart moved, flattened again
//!    and put back by a best fit ([`place::fit`]).
//! 4. A changed chart that now overlaps another chart is first re-flattened with its
//!    boundary held; if it still overlaps it moves by the shortest translation that
//!    clears it ([`place::clear_overlap`]), and as a last resort goes to free space.
//!    Carried charts never move.
//! 5. `new` charts go into the free space around the others ([`crate::pack::place_around`])
//!    at the previous layout's global texel density.
//! 6. [`drift`]: per corner, how far its UV moved, in texels at `--resolution`.
//!
//! Scale: every kept chart keeps its own previous texel density, so an unedited
//! chart lands exactly on its old UVs even when the previous layout (made by a
//! person) gave charts different densities.

pub mod drift;
pub mod local;
pub mod matching;
pub mod place;

use nalgebra::{Point2, Vector2};
use serde::{Deserialize, Serialize};

use crate::charts::{self, Chart};
use crate::error::{Error, Result};
use crate::flatten::SolveOptions;
use crate::mesh::{uv_islands, PolyMesh, Topology};
use crate::metrics::{self, overlapping_pairs_among};
use crate::pack::{self, ChartPolygons};
use crate::pipeline::{self, Laid, Outcome};
use crate::progress::Progress;
use crate::report::Report;
use crate::settings::{SeamMode, Settings};
use drift::DriftSummary;
use local::{ChartEdit, Method};
use matching::{Correspondence, NONE};
use place::Moving;

/// Longest translation, in texels, tried to move a changed chart off its neighbours.
pub const MAX_SHIFT_TEXELS: i32 = 24;

/// What became of a chart.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    /// A previous island whose surface did not change: its previous UVs unchanged.
    Carried,
    /// A previous island that was edited (re-flattened around the edit) or lost or
    /// re-split faces (UVs carried over).
    Changed,
    /// Faces with no previous counterpart, flattened and placed in free space.
    New,
}

/// One chart in the `reflatten` section.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChartDrift {
    /// Chart id (as in `charts`).
    pub id: usize,
    /// `carried`, `changed` or `new`.
    pub status: Status,
    /// Mean corner drift in texels (`null` for new charts).
    pub drift_texels_mean: Option<f64>,
    /// Largest corner drift in texels (`null` for new charts).
    pub drift_texels_max: Option<f64>,
    /// Length in texels of the translation that moved the chart off its neighbours
    /// (0 when it did not have to move).
    pub shift_texels: f64,
}

/// The `reflatten` section of the report.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Section {
    /// The previous layout's file.
    pub previous: String,
    /// Whether the edit kept the vertex and face lists.
    pub same_topology: bool,
    /// Edited faces that continue a previous face.
    pub matched_faces: usize,
    /// Edited faces without a previous counterpart.
    pub new_faces: usize,
    /// Vertices the edit moved (same topology only).
    pub moved_vertices: usize,
    /// Texture side in texels that drift is measured in.
    pub resolution: u32,
    /// Drift over every corner with a previous UV.
    pub drift_texels: DriftSummary,
    /// Per chart, in chart-id order.
    pub charts: Vec<ChartDrift>,
}

/// The report of `polyflat reflatten`: the flatten report plus the `reflatten`
/// section.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReflattenReport {
    /// Everything `polyflat flatten` reports.
    #[serde(flatten)]
    pub report: Report,
    /// What was kept, what changed, and how far UVs drifted.
    pub reflatten: Section,
}

/// The result of re-flattening.
#[derive(Debug, Clone)]
pub struct Reflattened {
    /// The layout, its metrics and the flatten report.
    pub outcome: Outcome,
    /// The `reflatten` section.
    pub section: Section,
}

impl Reflattened {
    /// The whole report.
    pub fn report(&self) -> ReflattenReport {
        ReflattenReport {
            report: self.outcome.report.clone(),
            reflatten: self.section.clone(),
        }
    }
}

/// Re-flattens `edited` (read from `edited_name`) keeping the layout of `previous`
/// (read from `previous_name`, which must have UVs) where it can (module notes).
pub fn reflatten(
    edited: &PolyMesh,
    edited_name: &str,
    previous: &PolyMesh,
    previous_name: &str,
    settings: &Settings,
    progress: &dyn Progress,
) -> Result<Reflattened> {
    pipeline::in_pool(settings, || {
        Job {
            edited,
            edited_name,
            previous,
            previous_name,
            settings,
        }
        .run(progress)
    })
}

/// One re-flattening job.
struct Job<'a> {
    edited: &'a PolyMesh,
    edited_name: &'a str,
    previous: &'a PolyMesh,
    previous_name: &'a str,
    settings: &'a Settings,
}

/// A chart on its way into the layout.
struct Item {
    chart: Chart,
    /// Final UV per chart vertex (empty for new charts until placed).
    uvs: Vec<Point2<f64>>,
    /// Previous UV per chart vertex (kept charts).
    previous_uvs: Vec<Point2<f64>>,
    status: Status,
    /// How it was re-flattened, if it was, and whether its boundary was held.
    method: Option<(Method, bool)>,
    iterations: usize,
    solver: String,
    history: Vec<f64>,
    shift: Vector2<f64>,
}

impl Job<'_> {
    fn run(&self, progress: &dyn Progress) -> Result<Reflattened> {
        let mut stages = pipeline::Stages::start();
        let (edited, previous) = (self.edited, self.previous);
        let Some(previous_corner_uvs) = previous.corner_uvs.as_deref() else {
            return Err(Error::Mesh {
                file: self.previous_name.to_string(),
                message: "the previous layout has no UVs to keep; flatten it first".into(),
            });
        };
        pipeline::check_mesh(previous, &Topology::build(previous), self.previous_name)?;
        let topology = Topology::build(edited);
        let notes = pipeline::check_mesh(edited, &topology, self.edited_name)?;
        stages.lap("validate");

        let corr = matching::correspond(edited, previous);
        let previous_uv = |c: usize| -> Option<Point2<f64>> {
            let k = *corr.corner.get(c)?;
            let t = *previous_corner_uvs.get(k as usize)?;
            previous.uvs.get(t as usize).copied()
        };
        stages.lap("match");

        let (matched, unmatched): (Vec<u32>, Vec<u32>) =
            (0..edited.face_count() as u32).partition(|&f| corr.face[f as usize].is_some());
        let kept = self.kept_charts(&corr, &matched)?;
        let options = SolveOptions::from_settings(self.settings, 0);
        let global_scale = previous_scale(previous)?;
        let islands = IslandSizes::of(previous);
        let mut items: Vec<Item> = Vec::with_capacity(kept.len());
        progress.begin("re-flattening changed charts", kept.len() as u64);
        for (k, chart) in kept.into_iter().enumerate() {
            let previous_uvs = chart_previous_uvs(edited, &chart, &previous_uv);
            let moved = chart
                .vertices
                .iter()
                .any(|&v| corr.moved.get(v as usize).copied().unwrap_or(false));
            let mut item = Item {
                uvs: previous_uvs.clone(),
                previous_uvs,
                status: Status::Carried,
                method: None,
                iterations: 0,
                solver: "none".into(),
                history: Vec::new(),
                shift: Vector2::zeros(),
                chart,
            };
            if moved {
                let opts = SolveOptions {
                    chart_id: k,
                    ..options
                };
                self.resolve(&mut item, &corr, &opts, global_scale, false)?;
            } else if !corr.same_topology && !islands.is_whole(&item.chart, &corr) {
                item.status = Status::Changed;
            }
            items.push(item);
            progress.advance(k as u64 + 1);
        }
        progress.end();
        stages.lap("solve");

        self.clear_overlaps(&mut items, &corr, &options, global_scale)?;
        stages.lap("overlaps");

        let new_items = self.new_charts(&unmatched, &items, &options, global_scale, progress)?;
        items.extend(new_items);
        stages.lap("new charts");

        let laid: Vec<Laid> = items
            .iter()
            .enumerate()
            .map(|(id, it)| Laid {
                id,
                chart: &it.chart,
                uvs: it.uvs.clone(),
                iterations: it.iterations,
                solver: it.solver.clone(),
            })
            .collect();
        let histories: Vec<&[f64]> = items.iter().map(|it| &it.history[..]).collect();
        let settings = Settings {
            seams: Some(SeamMode::Keep),
            ..self.settings.clone()
        };
        let mut outcome = pipeline::finish(
            edited,
            self.edited_name,
            &topology,
            &settings,
            &laid,
            stages.into_timings(),
            pipeline::total_history(&histories),
        )?;
        outcome.report.input.notes = notes;

        let resolution = f64::from(self.settings.resolution);
        let corner_drift: Vec<Option<f64>> = (0..edited.corner_count())
            .map(|c| {
                let before = previous_uv(c)?;
                let now = outcome.uvs.get(*outcome.corner_uvs.get(c)? as usize)?;
                Some((now - before).norm() * resolution)
            })
            .collect();
        let charts = items
            .iter()
            .enumerate()
            .map(|(id, it)| {
                let values: Vec<f64> = it
                    .chart
                    .faces
                    .iter()
                    .flat_map(|&f| edited.face_range(f as usize))
                    .filter_map(|c| corner_drift[c])
                    .collect();
                let summary = drift::summarize(&values);
                let known = it.status != Status::New && summary.corners > 0;
                ChartDrift {
                    id,
                    status: it.status,
                    drift_texels_mean: known.then_some(summary.mean),
                    drift_texels_max: known.then_some(summary.max),
                    shift_texels: it.shift.norm() * resolution,
                }
            })
            .collect();
        let all: Vec<f64> = corner_drift.iter().flatten().copied().collect();
        let section = Section {
            previous: self.previous_name.to_string(),
            same_topology: corr.same_topology,
            matched_faces: matched.len(),
            new_faces: unmatched.len(),
            moved_vertices: corr.moved.iter().filter(|&&m| m).count(),
            resolution: self.settings.resolution,
            drift_texels: drift::summarize(&all),
            charts,
        };
        Ok(Reflattened { outcome, section })
    }

    /// Charts of the matched faces with the previous seams, in edited-mesh numbering.
    fn kept_charts(&self, corr: &Correspondence, matched: &[u32]) -> Result<Vec<Chart>> {
        let edited = self.edited;
        let previous_corner_uvs = self.previous.corner_uvs.as_deref().unwrap_or(&[]);
        let carrying = PolyMesh {
            uvs: self.previous.uvs.clone(),
            corner_uvs: Some(
                corr.corner
                    .iter()
                    .map(|&k| previous_corner_uvs.get(k as usize).copied().unwrap_or(NONE))
                    .collect(),
            ),
            ..edited.clone()
        };
        let (sub, vertex_map) = carrying.submesh(matched);
        let charts = charts::build(&sub, &Topology::build(&sub), SeamMode::Keep)
            .map_err(|e| pipeline::in_file(e, self.edited_name))?;
        Ok(charts
            .into_iter()
            .map(|c| renumber(c, matched, &vertex_map))
            .collect())
    }

    /// Re-flattens a changed chart in place (see [`local`]).
    fn resolve(
        &self,
        item: &mut Item,
        corr: &Correspondence,
        opts: &SolveOptions,
        global_scale: f64,
        hold_boundary: bool,
    ) -> Result<()> {
        let edit = ChartEdit {
            edited: self.edited,
            previous: self.previous,
            chart: &item.chart,
            previous_uvs: &item.previous_uvs,
            moved: &corr.moved,
            fallback_scale: global_scale,
        };
        let r = local::resolve(&edit, opts, hold_boundary)?;
        item.uvs = r.uvs;
        item.status = Status::Changed;
        item.method = Some((r.method, hold_boundary));
        item.iterations += r.iterations;
        item.solver = r.solver;
        item.history = r.history;
        Ok(())
    }

    /// Moves changed charts off the charts they overlap (module notes, stage 4).
    fn clear_overlaps(
        &self,
        items: &mut [Item],
        corr: &Correspondence,
        options: &SolveOptions,
        global_scale: f64,
    ) -> Result<()> {
        let mesh = self.edited;
        let step = 1.0 / f64::from(self.settings.resolution);
        let faces_of = |items: &[Item]| -> Vec<u32> {
            let mut f: Vec<u32> = items.iter().flat_map(|it| it.chart.faces.clone()).collect();
            f.sort_unstable();
            f
        };
        let all_faces = faces_of(items);
        for k in 0..items.len() {
            let Some((method, boundary_held)) = items[k].method else {
                continue;
            };
            let mut layout = Assembled::of(mesh, items);
            if !layout.overlaps_others(mesh, k, &all_faces) {
                continue;
            }
            if method == Method::Local && !boundary_held {
                let opts = SolveOptions {
                    chart_id: k,
                    ..*options
                };
                self.resolve(&mut items[k], corr, &opts, global_scale, true)?;
                layout = Assembled::of(mesh, items);
                if !layout.overlaps_others(mesh, k, &all_faces) {
                    continue;
                }
            }
            let moving = Moving {
                faces: &items[k].chart.faces,
                range: layout.ranges[k].clone(),
            };
            let others: Vec<u32> = all_faces
                .iter()
                .copied()
                .filter(|f| items[k].chart.faces.binary_search(f).is_err())
                .collect();
            let shift = place::clear_overlap(
                mesh,
                &mut layout.uvs,
                &layout.corner_uvs,
                &moving,
                &others,
                step,
                MAX_SHIFT_TEXELS,
            );
            match shift {
                Some(d) => {
                    items[k].shift = d;
                    items[k].uvs.iter_mut().for_each(|p| *p += d);
                }
                None => self.move_to_free_space(items, k, global_scale)?,
            }
        }
        Ok(())
    }

    /// Last resort for a changed chart that no short move clears: place it in free
    /// space at its current size.
    fn move_to_free_space(&self, items: &mut [Item], k: usize, scale: f64) -> Result<()> {
        let placed: Vec<ChartPolygons> = items
            .iter()
            .enumerate()
            .filter(|&(i, _)| i != k)
            .map(|(_, it)| polygons(self.edited, &it.chart, it.uvs.clone()))
            .collect();
        let own = polygons(
            self.edited,
            &items[k].chart,
            items[k].uvs.iter().map(|p| p / scale).collect(),
        );
        let before = items[k].uvs.first().copied();
        let placement = pack::place_around(
            &placed,
            std::slice::from_ref(&own),
            scale,
            self.settings.resolution,
            self.settings.padding,
        )?;
        if let Some(p) = placement.first() {
            items[k].uvs = own.points.iter().map(|q| p.apply(q)).collect();
            if let (Some(b), Some(a)) = (before, items[k].uvs.first()) {
                items[k].shift = a - b;
            }
        }
        Ok(())
    }

    /// Flattens the unmatched faces with automatic seams and places them in the free
    /// space around the kept charts.
    fn new_charts(
        &self,
        unmatched: &[u32],
        kept: &[Item],
        options: &SolveOptions,
        scale: f64,
        progress: &dyn Progress,
    ) -> Result<Vec<Item>> {
        if unmatched.is_empty() {
            return Ok(Vec::new());
        }
        let (mut sub, vertex_map) = self.edited.submesh(unmatched);
        sub.corner_uvs = None;
        sub.uvs.clear();
        let topology = Topology::build(&sub);
        let charts = charts::build(&sub, &topology, SeamMode::Auto)
            .map_err(|e| pipeline::in_file(e, self.edited_name))?;
        progress.begin("flattening new charts", charts.len() as u64);
        let solved = pipeline::solve_all(&sub, charts, options, progress)?;
        progress.end();
        let solved =
            pipeline::split_over_stretched(&sub, solved, self.settings, options, progress)?;
        let placed: Vec<ChartPolygons> = kept
            .iter()
            .map(|it| polygons(self.edited, &it.chart, it.uvs.clone()))
            .collect();
        let fresh: Vec<ChartPolygons> = solved
            .iter()
            .map(|s| pipeline::chart_polygons(&sub, s))
            .collect();
        let placements = pack::place_around(
            &placed,
            &fresh,
            scale,
            self.settings.resolution,
            self.settings.padding,
        )?;
        Ok(solved
            .into_iter()
            .zip(placements)
            .map(|(s, p)| Item {
                uvs: s.solution.uvs.iter().map(|q| p.apply(q)).collect(),
                previous_uvs: Vec::new(),
                status: Status::New,
                method: None,
                iterations: s.solution.iterations,
                solver: s.solution.solver.to_string(),
                history: s.solution.history,
                shift: Vector2::zeros(),
                chart: renumber(s.chart, unmatched, &vertex_map),
            })
            .collect())
    }
}

/// The kept charts gathered into one layout over the edited mesh.
struct Assembled {
    uvs: Vec<Point2<f64>>,
    corner_uvs: Vec<u32>,
    /// Range of `uvs` each item owns.
    ranges: Vec<std::ops::Range<usize>>,
    /// Item of every face (`usize::MAX` for faces in none).
    item_of: Vec<usize>,
}

impl Assembled {
    fn of(mesh: &PolyMesh, items: &[Item]) -> Assembled {
        let mut a = Assembled {
            uvs: Vec::new(),
            corner_uvs: vec![NONE; mesh.corner_count()],
            ranges: Vec::with_capacity(items.len()),
            item_of: vec![usize::MAX; mesh.face_count()],
        };
        for (i, it) in items.iter().enumerate() {
            let base = a.uvs.len();
            a.uvs.extend_from_slice(&it.uvs);
            a.ranges.push(base..a.uvs.len());
            let mut k = 0;
            for &f in &it.chart.faces {
                a.item_of[f as usize] = i;
                for c in mesh.face_range(f as usize) {
                    a.corner_uvs[c] = (base as u32) + it.chart.corners[k];
                    k += 1;
                }
            }
        }
        a
    }

    /// Whether item `k` overlaps a face of another item among `faces`.
    fn overlaps_others(&self, mesh: &PolyMesh, k: usize, faces: &[u32]) -> bool {
        overlapping_pairs_among(&self.uvs, &self.corner_uvs, mesh, Some(faces))
            .into_iter()
            .any(|(f, g)| {
                let (a, b) = (self.item_of[f as usize], self.item_of[g as usize]);
                a != b && (a == k || b == k)
            })
    }
}

/// Faces of the previous layout's UV islands, to tell a whole island from a part.
struct IslandSizes {
    /// Island of every previous face.
    island: Vec<u32>,
    /// Faces per island.
    size: Vec<usize>,
}

impl IslandSizes {
    fn of(previous: &PolyMesh) -> IslandSizes {
        let island = uv_islands(previous).unwrap_or_default();
        let mut size = vec![0; island.iter().map(|&i| i as usize + 1).max().unwrap_or(0)];
        for &i in &island {
            size[i as usize] += 1;
        }
        IslandSizes { island, size }
    }

    /// Whether the chart's faces continue, one to one, all the faces of one previous
    /// island.
    fn is_whole(&self, chart: &Chart, corr: &Correspondence) -> bool {
        let mut previous: Vec<u32> = chart
            .faces
            .iter()
            .filter_map(|&f| corr.face.get(f as usize).copied().flatten())
            .collect();
        previous.sort_unstable();
        previous.dedup();
        let islands: Vec<u32> = previous
            .iter()
            .filter_map(|&g| self.island.get(g as usize).copied())
            .collect();
        previous.len() == chart.faces.len()
            && islands.windows(2).all(|w| w[0] == w[1])
            && islands
                .first()
                .and_then(|&i| self.size.get(i as usize))
                .is_some_and(|&n| n == previous.len())
    }
}

/// The previous layout's global texel density `sqrt(Σ|A_uv| / Σ A_3d)`.
fn previous_scale(previous: &PolyMesh) -> Result<f64> {
    let corner_uvs = previous.corner_uvs.as_deref().unwrap_or(&[]);
    let m = metrics::face_metrics(previous, &previous.uvs, corner_uvs)?;
    Ok(metrics::global_scale(&m, None))
}

/// Previous UV of every chart vertex (the origin for a vertex none of whose corners
/// has one, which only new faces lack).
fn chart_previous_uvs(
    mesh: &PolyMesh,
    chart: &Chart,
    previous_uv: &dyn Fn(usize) -> Option<Point2<f64>>,
) -> Vec<Point2<f64>> {
    let mut uvs = vec![Point2::origin(); chart.vertices.len()];
    let mut k = 0;
    for &f in &chart.faces {
        for c in mesh.face_range(f as usize) {
            if let (Some(p), Some(slot)) = (previous_uv(c), uvs.get_mut(chart.corners[k] as usize))
            {
                *slot = p;
            }
            k += 1;
        }
    }
    uvs
}

/// A chart's faces as polygons over `points` (one per chart vertex).
fn polygons(mesh: &PolyMesh, chart: &Chart, points: Vec<Point2<f64>>) -> ChartPolygons {
    ChartPolygons {
        points,
        faces: chart.local_faces(mesh),
    }
}

/// A chart of a sub-mesh in the numbering of the whole mesh (`faces[f]` is the
/// whole mesh's face for sub-mesh face `f`, `vertices[v]` its vertex).
fn renumber(mut chart: Chart, faces: &[u32], vertices: &[u32]) -> Chart {
    for f in chart.faces.iter_mut() {
        *f = faces.get(*f as usize).copied().unwrap_or(*f);
    }
    for v in chart.vertices.iter_mut() {
        *v = vertices.get(*v as usize).copied().unwrap_or(*v);
    }
    chart
}
