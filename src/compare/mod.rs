//! `polyflat compare`: one mesh flattened with several energies over the same
//! charts, seams and packing settings, and the files that set the results side by
//! side (a table, a sheet of atlases and a convergence plot).
//!
//! **Same charts for every energy.** The first energy listed is flattened by the
//! ordinary pipeline ([`pipeline::flatten`]), which builds the charts and, with
//! `--seams auto`, re-splits charts that came out over-stretched. Its final charts
//! ([`pipeline::Outcome::charts`]) are then flattened by every other energy with
//! [`pipeline::flatten_with_charts`], which never re-splits. When the first run did
//! split a chart, the first energy is flattened once more on the final charts, so
//! every energy's result and solve time come from exactly the same charts. (So the
//! order of `--energies` can matter in auto mode: the first energy decides the
//! re-splits.)
//!
//! Files, by name inside the output folder ([`output_files`]):
//! `<energy>.obj`, `<energy>.report.json`, `<energy>.atlas.png`, `comparison.md`
//! ([`table`]), `comparison.json` (a list of [`Row`]s), `comparison.png`
//! ([`sheet`]) and `convergence.png` ([`plot`]).

pub mod plot;
pub mod sheet;
pub mod table;

use serde::{Deserialize, Serialize};

use crate::charts::ChartOrigin;
use crate::error::{Error, Result};
use crate::io::{self, ObjFile};
use crate::pipeline::{self, Outcome};
use crate::progress::Progress;
use crate::report::Global;
use crate::settings::{EnergyKind, Settings};

/// One energy's run.
#[derive(Debug, Clone)]
pub struct EnergyRun {
    /// The energy minimised.
    pub energy: EnergyKind,
    /// Its layout, metrics and report.
    pub outcome: Outcome,
}

impl EnergyRun {
    /// Wall-clock milliseconds of the solve stage (the report's `timings_ms.solve`).
    pub fn time_ms(&self) -> f64 {
        self.outcome
            .report
            .timings_ms
            .get("solve")
            .copied()
            .unwrap_or(0.0)
    }

    /// The comparison row of this run.
    pub fn row(&self) -> Row {
        Row {
            global: self.outcome.report.global.clone(),
            time_ms: self.time_ms(),
        }
    }
}

/// One row of `comparison.json`: the report's `global` object (whose `energy` key
/// names the energy) plus `time_ms`, the solve stage's wall-clock milliseconds.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Row {
    /// Exactly the report's `global` object.
    #[serde(flatten)]
    pub global: Global,
    /// Wall-clock milliseconds of the solve stage.
    pub time_ms: f64,
}

/// Checks an energy list: at least one energy, none twice. The error is one
/// sentence naming the option.
pub fn check_energies(energies: &[EnergyKind]) -> std::result::Result<(), String> {
    if energies.is_empty() {
        return Err("--energies needs at least one energy".to_string());
    }
    for (i, e) in energies.iter().enumerate() {
        if energies[..i].contains(e) {
            return Err(format!("--energies lists {e} twice; name each energy once"));
        }
    }
    Ok(())
}

/// A [`Progress`] that puts the energy's name before every stage.
struct Labelled<'a> {
    inner: &'a dyn Progress,
    label: &'static str,
}

impl Progress for Labelled<'_> {
    fn begin(&self, stage: &str, total: u64) {
        self.inner.begin(&format!("{}: {stage}", self.label), total);
    }
    fn advance(&self, done: u64) {
        self.inner.advance(done);
    }
    fn end(&self) {
        self.inner.end();
    }
}

/// Flattens `mesh` (read from `input_name`) with every energy in `energies` over
/// the same charts (see the module notes); `settings.energy` is ignored. Fails on
/// the first energy that fails, so a comparison is all or nothing.
pub fn run(
    mesh: &crate::PolyMesh,
    input_name: &str,
    settings: &Settings,
    energies: &[EnergyKind],
    progress: &dyn Progress,
) -> Result<Vec<EnergyRun>> {
    check_energies(energies).map_err(Error::Settings)?;
    let with = |energy: EnergyKind| {
        let s = Settings {
            energy,
            ..settings.clone()
        };
        pipeline::check_solver(&s)?;
        Ok::<_, Error>(s)
    };
    let each: Vec<Settings> = energies.iter().map(|&e| with(e)).collect::<Result<_>>()?;

    let mut runs = Vec::with_capacity(energies.len());
    let mut first = pipeline::flatten(
        mesh,
        input_name,
        &each[0],
        &Labelled {
            inner: progress,
            label: energies[0].as_str(),
        },
    )?;
    let charts = first.charts.clone();
    if charts.iter().any(|c| c.origin == ChartOrigin::Split) {
        first = again(mesh, input_name, &each[0], &charts, progress)?;
    }
    runs.push(EnergyRun {
        energy: energies[0],
        outcome: first,
    });
    for (s, &energy) in each.iter().zip(energies).skip(1) {
        runs.push(EnergyRun {
            energy,
            outcome: again(mesh, input_name, s, &charts, progress)?,
        });
    }
    Ok(runs)
}

fn again(
    mesh: &crate::PolyMesh,
    input_name: &str,
    settings: &Settings,
    charts: &[crate::charts::Chart],
    progress: &dyn Progress,
) -> Result<Outcome> {
    let labelled = Labelled {
        inner: progress,
        label: settings.energy.as_str(),
    };
    pipeline::flatten_with_charts(mesh, input_name, settings, charts, &labelled)
}

/// Every output file of a comparison as (file name inside the output folder, bytes),
/// per energy in order (`.obj`, `.report.json`, `.atlas.png`), then `comparison.md`,
/// `comparison.json`, `comparison.png` and `convergence.png`.
pub fn output_files(
    obj: &ObjFile,
    input_name: &str,
    runs: &[EnergyRun],
    settings: &Settings,
) -> Result<Vec<(String, Vec<u8>)>> {
    if runs.is_empty() {
        return Err(Error::Settings(
            "--energies needs at least one energy".to_string(),
        ));
    }
    let mut files = Vec::with_capacity(3 * runs.len() + 4);
    let mut atlases = Vec::with_capacity(runs.len());
    for run in runs {
        let name = run.energy.as_str();
        let o = &run.outcome;
        files.push((
            format!("{name}.obj"),
            io::obj_to_string(obj, &o.uvs, &o.corner_uvs).into_bytes(),
        ));
        files.push((
            format!("{name}.report.json"),
            pipeline::report_bytes(&o.report)?,
        ));
        let atlas = pipeline::atlas_image(obj, o, settings.atlas_metric, settings.resolution)?;
        files.push((
            format!("{name}.atlas.png"),
            crate::atlas::png_bytes(&atlas)?,
        ));
        atlases.push(atlas);
    }
    let rows: Vec<Row> = runs.iter().map(EnergyRun::row).collect();
    files.push((
        "comparison.md".to_string(),
        table::markdown(input_name, &rows, &runs[0].outcome.report.settings).into_bytes(),
    ));
    let mut json = serde_json::to_vec_pretty(&rows)
        .map_err(|e| Error::Settings(format!("cannot encode comparison.json: {e}")))?;
    json.push(b'\n');
    files.push(("comparison.json".to_string(), json));

    let panels: Vec<sheet::Panel> = runs
        .iter()
        .zip(&atlases)
        .map(|(run, atlas)| sheet::Panel {
            title: run.energy.as_str().to_string(),
            subtitle: sheet::subtitle(&run.outcome.report.global),
            image: atlas,
        })
        .collect();
    files.push((
        "comparison.png".to_string(),
        crate::atlas::png_bytes(&sheet::render(&panels)?)?,
    ));
    let series: Vec<plot::Series> = runs
        .iter()
        .map(|run| plot::Series {
            label: run.energy.as_str().to_string(),
            history: &run.outcome.report.history,
        })
        .collect();
    files.push((
        "convergence.png".to_string(),
        crate::atlas::png_bytes(&plot::render(&series)?)?,
    ));
    Ok(files)
}

/// The energy a person should pick from `rows`: the lowest L2 stretch among the
/// layouts with no flipped faces and no overlaps (or among all layouts when every
/// one has some), the first listed on a tie. Also returns whether that energy's
/// layout is free of flips and overlaps. `None` for no rows.
pub fn suggestion(rows: &[Row]) -> Option<(&Row, bool)> {
    let stretch = |r: &Row| r.global.metrics.stretch_l2;
    let clean = rows.iter().filter(|r| {
        r.global.metrics.flipped_faces == 0 && r.global.metrics.overlapping_face_pairs == 0
    });
    match first_min(clean, stretch) {
        Some(r) => Some((r, true)),
        None => first_min(rows, stretch).map(|r| (r, false)),
    }
}

/// The first row with the smallest `key`.
pub fn first_min<'a>(
    rows: impl IntoIterator<Item = &'a Row>,
    key: impl Fn(&Row) -> f64,
) -> Option<&'a Row> {
    rows.into_iter()
        .fold(None, |best: Option<&Row>, r| match best {
            Some(b) if key(b) <= key(r) => Some(b),
            _ => Some(r),
        })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metrics::Metrics;

    fn row(energy: &str, stretch: f64, flipped: usize) -> Row {
        Row {
            global: Global {
                metrics: Metrics {
                    angle_distortion_mean: 1.0,
                    angle_distortion_max: 1.0,
                    area_distortion_mean: 0.0,
                    area_distortion_max: 0.0,
                    stretch_l2: stretch,
                    stretch_linf: stretch,
                    flipped_faces: flipped,
                    overlapping_face_pairs: 0,
                    utilization: 0.5,
                },
                charts: 1,
                energy: energy.to_string(),
                iterations: 3,
            },
            time_ms: 1.0,
        }
    }

    #[test]
    fn suggestion_prefers_the_lowest_stretch_without_flips() {
        let rows = [
            row("arap", 1.1, 0),
            row("conformal", 1.05, 2),
            row("symmetric-dirichlet", 1.2, 0),
        ];
        let (r, clean) = suggestion(&rows).unwrap();
        assert_eq!((r.global.energy.as_str(), clean), ("arap", true));
        let flipped = [row("arap", 1.1, 1), row("conformal", 1.05, 2)];
        let (r, clean) = suggestion(&flipped).unwrap();
        assert_eq!((r.global.energy.as_str(), clean), ("conformal", false));
        let tie = [row("arap", 1.1, 0), row("conformal", 1.1, 0)];
        assert_eq!(suggestion(&tie).unwrap().0.global.energy, "arap");
        assert!(suggestion(&[]).is_none());
    }

    #[test]
    fn energy_lists_need_one_and_no_repeats() {
        use EnergyKind::*;
        assert!(check_energies(&[Arap, Conformal]).is_ok());
        assert_eq!(
            check_energies(&[Arap, Conformal, Arap]).unwrap_err(),
            "--energies lists arap twice; name each energy once"
        );
        assert!(check_energies(&[]).is_err());
    }
}
