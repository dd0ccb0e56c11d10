//! Flattening benchmark: prints tables of whole-run and per-stage times.
//!
//! Run: `cargo run --release [--features metis] --example bench_flatten [-- --large]`
//! (`--large` adds a 1M-face quad disk; `--orderings` prints section 0 only,
//! `--crossover` section 5 only; the `metis` feature adds METIS to the orderings
//! compared).
//!
//! 0. Fill-reducing orderings of the Newton system on 10k and 100k quads and their
//!    triangulations: analysis time, factor size, multiply-adds, one factorization.
//!
//! 1. Quads vs the same surface triangulated (each quad split in two), for arap and
//!    symmetric-dirichlet with every solver: time per stage and final distortion.
//! 2. One Newton iteration and the whole solve, each relative to one numeric Cholesky
//!    factorization of the same Hessian (measured in the same run).
//! 3. Scaling on quad disks of 10k and 100k faces (1M with `--large`): time and
//!    resident memory per stage; with `--large` also each ordering's factorization
//!    of the 1M-face Newton matrix.
//! 4. Symmetric Dirichlet on a ~45k-face triangle disk from Tutte: time to come within
//!    1% of the converged energy.
//! 5. Only with `--crossover`: Newton against the solver with cheap iterations
//!    (local–global for arap, Laplacian-preconditioned L-BFGS for symmetric
//!    Dirichlet) and `auto` on bump disks of 100 to 78k quads and their
//!    triangulations, quads and triangles run in turn; then quads over triangles
//!    for `auto` and Newton.

#[path = "../tests/flatten_common/mod.rs"]
mod common;

use nalgebra::Point3;
use polyflat::flatten::Stage;
use polyflat::flatten::{
    auto_solver, factorization_benchmark, solve_chart, ChartSolution, Ordering, SolveOptions, Start,
};
use polyflat::progress::Silent;
use polyflat::settings::{EnergyKind, SolverKind};
use polyflat::PolyMesh;
use std::sync::atomic::{AtomicBool, Ordering as AtomicOrdering};
use std::sync::Arc;
use std::time::{Duration, Instant};

/// `n × n` quads on the unit square lifted onto a smooth bump (not developable).
fn bump_disk(n: usize) -> PolyMesh {
    common::mapped(&common::quad_grid(n, n, 1.0 / n as f64, 0.15), |p| {
        let (x, y) = (p.x - 0.5, p.y - 0.5);
        Point3::new(p.x, p.y, 0.3 * (-(x * x + y * y) * 8.0).exp())
    })
}

/// L2 stretch (Sander et al. 2001) and the largest angle distortion σ1/σ2.
fn distortion(mesh: &PolyMesh, s: &ChartSolution) -> (f64, f64) {
    let js = common::jacobians(mesh, &s.uvs);
    let (mut num, mut den, mut worst) = (0.0, 0.0, 1.0f64);
    for (f, j) in js.iter().enumerate() {
        let a = polyflat::operators::face::vector_area(&mesh.face_corners(f)).norm();
        let sv = j.singular_values();
        let (s1, s2) = (sv.max(), sv.min());
        num += a * (s1.powi(-2) + s2.powi(-2)) / 2.0;
        den += a;
        worst = worst.max(s1 / s2);
    }
    ((num / den).sqrt(), worst)
}

/// Solves `mesh` from `start`: sections 1–3 start as the pipeline does (least-squares
/// conformal, Tutte when that folds), section 4 from Tutte as its question asks.
fn run(mesh: &PolyMesh, energy: EnergyKind, solver: SolverKind, start: Start) -> ChartSolution {
    run_ordered(mesh, energy, solver, start, Ordering::default())
}

fn run_ordered(
    mesh: &PolyMesh,
    energy: EnergyKind,
    solver: SolverKind,
    start: Start,
    ordering: Ordering,
) -> ChartSolution {
    let opts = SolveOptions {
        energy,
        solver,
        ordering,
        ..SolveOptions::default()
    };
    match solve_chart(mesh, &opts, start, &Silent) {
        Ok(s) => s,
        Err(e) => {
            eprintln!("{energy} with {solver} failed: {e}");
            std::process::exit(1);
        }
    }
}

fn header() {
    println!(
        "| case | faces | energy | solver | iters | total s | setup | start | evaluate | assemble | factor (n) | solve | line search | L2 stretch | max σ1/σ2 |"
    );
    println!("|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|");
}

fn row(case: &str, mesh: &PolyMesh, energy: EnergyKind, s: &ChartSolution) {
    let t = &s.timings;
    let (l2, angle) = distortion(mesh, s);
    println!(
        "| {case} | {} | {energy} | {} | {} | {:.3} | {:.3} | {:.3} | {:.3} | {:.3} | {:.3} ({}) | {:.3} | {:.3} | {l2:.5} | {angle:.4} |",
        mesh.face_count(),
        s.solver,
        s.iterations,
        t.total_ms / 1e3,
        t.setup_ms / 1e3,
        t.start_ms / 1e3,
        t.evaluate_ms / 1e3,
        t.assemble_ms / 1e3,
        t.factor_ms / 1e3,
        t.factorizations,
        t.solve_ms / 1e3,
        t.line_search_ms / 1e3,
    );
}

/// (one Newton iteration, whole solve) relative to one numeric factorization.
fn newton_ratios(s: &ChartSolution) -> (f64, f64) {
    let t = &s.timings;
    let factorization = t.factor_ms / t.factorizations.max(1) as f64;
    let iterations = t.evaluate_ms + t.assemble_ms + t.factor_ms + t.solve_ms + t.line_search_ms;
    (
        iterations / s.iterations.max(1) as f64 / factorization,
        t.total_ms / factorization,
    )
}

/// Section 0: each fill-reducing ordering on quad disks and their triangulations:
/// symbolic analysis, factor size and the shortest of 3 numeric factorizations of
/// the arap Newton matrix at the conformal start, then the whole Newton solve.
fn all_orderings() -> Vec<Ordering> {
    let mut all = vec![
        Ordering::ScalarAmd,
        Ordering::VertexAmd,
        Ordering::Dissection,
    ];
    if cfg!(feature = "metis") {
        all.push(Ordering::Metis);
    }
    all
}

fn orderings() {
    println!("\n## 0. Fill-reducing orderings of the Newton system (arap)\n");
    println!("| mesh | faces | ordering | analysis s | factor entries (M) | factorization multiply-adds (G) | one factorization s (best of 3) | Newton total s | L2 stretch |");
    println!("|---|---|---|---|---|---|---|---|---|");
    for n in [100, 316] {
        let quads = bump_disk(n);
        let tris = common::triangulated(&quads);
        for (case, mesh) in [("quads", &quads), ("triangles", &tris)] {
            for ordering in all_orderings() {
                let opts = SolveOptions {
                    energy: EnergyKind::Arap,
                    ordering,
                    ..SolveOptions::default()
                };
                let f = factorization_benchmark(mesh, &opts, 3).unwrap_or_else(|e| {
                    eprintln!("{ordering:?} failed: {e}");
                    std::process::exit(1);
                });
                let s = run_ordered(
                    mesh,
                    EnergyKind::Arap,
                    SolverKind::Newton,
                    Start::Conformal,
                    ordering,
                );
                println!(
                    "| {n}×{n} {case} | {} | {ordering:?} | {:.3} | {:.2} | {:.3} | {:.3} | {:.3} | {:.5} |",
                    mesh.face_count(),
                    f.analyse_ms / 1e3,
                    f.factor_entries as f64 / 1e6,
                    f.factor_flops / 1e9,
                    f.factor_ms / 1e3,
                    s.timings.total_ms / 1e3,
                    distortion(mesh, &s).0,
                );
            }
        }
    }
}

/// A field of `/proc/self/status` in kB (`VmRSS`, `VmHWM`), if readable.
fn proc_status(key: &str) -> Option<u64> {
    let text = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = text.lines().find(|l| l.starts_with(key))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

/// A thread that reads `VmRSS` every [`SAMPLE_MS`] until stopped.
struct RssSampler {
    stop: Arc<AtomicBool>,
    thread: std::thread::JoinHandle<Vec<(Instant, u64)>>,
}

const SAMPLE_MS: u64 = 5;

impl RssSampler {
    fn start() -> Self {
        let stop = Arc::new(AtomicBool::new(false));
        let flag = stop.clone();
        let thread = std::thread::spawn(move || {
            let mut samples = Vec::new();
            while !flag.load(AtomicOrdering::Relaxed) {
                if let Some(kb) = proc_status("VmRSS:") {
                    samples.push((Instant::now(), kb));
                }
                std::thread::sleep(Duration::from_millis(SAMPLE_MS));
            }
            samples
        });
        RssSampler { stop, thread }
    }

    fn finish(self) -> Vec<(Instant, u64)> {
        self.stop.store(true, AtomicOrdering::Relaxed);
        self.thread.join().unwrap_or_default()
    }
}

const MIB: f64 = 1024.0;

/// Section 3: quad disks of 10k, 100k (and 1M with `--large`) faces with the Auto
/// solver: time per stage, then resident memory per stage.
fn scaling(large: bool) {
    println!("\n## 3. Scaling on quad disks (Auto solver)\n");
    let mut runs = Vec::new();
    let mut sizes = vec![100, 316];
    if large {
        sizes.push(1000);
    }
    header();
    for n in sizes {
        let mesh = bump_disk(n);
        let energies = if n >= 1000 {
            vec![EnergyKind::SymmetricDirichlet]
        } else {
            vec![EnergyKind::Arap, EnergyKind::SymmetricDirichlet]
        };
        for energy in energies {
            // Reset the kernel's high-water mark (VmHWM) to the current RSS.
            let reset = std::fs::write("/proc/self/clear_refs", "5").is_ok();
            let before = proc_status("VmRSS:").unwrap_or(0);
            let sampler = RssSampler::start();
            let began = Instant::now();
            let s = run(&mesh, energy, SolverKind::Auto, Start::Conformal);
            let samples = sampler.finish();
            let hwm = proc_status("VmHWM:").filter(|_| reset);
            row(&format!("{n}×{n} quads"), &mesh, energy, &s);
            runs.push((n, mesh.face_count(), energy, s, samples, began, before, hwm));
        }
        if large && n >= 1000 {
            for ordering in all_orderings()
                .into_iter()
                .filter(|&o| o != Ordering::ScalarAmd)
            {
                let opts = SolveOptions {
                    energy: EnergyKind::SymmetricDirichlet,
                    ordering,
                    ..SolveOptions::default()
                };
                if let Ok(f) = factorization_benchmark(&mesh, &opts, 1) {
                    println!(
                        "\n{n}×{n} quads, {ordering:?}: analysis {:.2} s, factor entries {:.1} M, {:.1} G multiply-adds, one factorization {:.2} s",
                        f.analyse_ms / 1e3,
                        f.factor_entries as f64 / 1e6,
                        f.factor_flops / 1e9,
                        f.factor_ms / 1e3
                    );
                }
            }
        }
    }
    println!("\nResident memory (MiB): the largest VmRSS sample (every {SAMPLE_MS} ms) while each stage ran; 'before' is the RSS with the mesh loaded; 'whole run' is the kernel's VmHWM after resetting it before the run (clear_refs 5).\n");
    println!("| case | faces | energy | before | setup | start | analysis | evaluate | assemble | factor + solve | line search | whole run |");
    println!("|---|---|---|---|---|---|---|---|---|---|---|---|");
    let groups: [&[Stage]; 7] = [
        &[Stage::Setup],
        &[Stage::Start],
        &[Stage::Analysis],
        &[Stage::Evaluate],
        &[Stage::Assemble],
        &[Stage::Factor, Stage::Solve],
        &[Stage::LineSearch],
    ];
    for (n, faces, energy, s, samples, began, before, hwm) in runs {
        let peaks: Vec<String> = groups
            .iter()
            .map(|group| {
                let peak = s
                    .spans
                    .iter()
                    .filter(|span| group.contains(&span.stage))
                    .flat_map(|span| {
                        let from = began + Duration::from_secs_f64(span.start_ms / 1e3);
                        let to = began + Duration::from_secs_f64(span.end_ms / 1e3);
                        samples
                            .iter()
                            .filter(move |(t, _)| *t >= from && *t <= to)
                            .map(|(_, kb)| *kb)
                    })
                    .max();
                peak.map_or("–".into(), |kb| format!("{:.0}", kb as f64 / MIB))
            })
            .collect();
        println!(
            "| {n}×{n} quads | {faces} | {energy} | {:.0} | {} | {} |",
            before as f64 / MIB,
            peaks.join(" | "),
            hwm.map_or("–".into(), |kb| format!("{:.0}", kb as f64 / MIB)),
        );
    }
}

/// Runs per solver and mesh in section 5.
const CROSSOVER_RUNS: usize = 5;

/// Section 5: for arap and symmetric Dirichlet, Newton, the solver with cheap
/// iterations (local–global, Laplacian-preconditioned L-BFGS) and `auto` (which
/// hands slow runs of the cheap one over to Newton) by chart size, on the bump disk,
/// one twice as high and one seven times as high (the cheap solvers slow where the
/// map bends more); each time the shortest of [`CROSSOVER_RUNS`] runs, quads and
/// triangles in turn; then the quads' time over their triangulation's for `auto` and
/// Newton.
fn crossover() {
    let mut pairs = Vec::new();
    for (energy, cheap) in [
        (EnergyKind::Arap, SolverKind::LocalGlobal),
        (EnergyKind::SymmetricDirichlet, SolverKind::LaplacianLbfgs),
    ] {
        println!("\n## 5. {energy}: Newton against {cheap} by chart size\n");
        println!("| surface | faces | vertices | Newton s (iterations) | {cheap} s (iterations) | {cheap} / Newton | auto s (finished by) | auto / Newton |");
        println!("|---|---|---|---|---|---|---|---|");
        for height in [0.3, 0.6, 2.0] {
            for n in [10, 20, 40, 70, 100, 140, 200, 280] {
                let quads =
                    common::mapped(&bump_disk(n), |p| Point3::new(p.x, p.y, p.z * height / 0.3));
                let meshes = [quads.clone(), common::triangulated(&quads)];
                // best[case][solver]: (seconds, iterations, finished by); quads and
                // triangles run in turn, so that a burst of load on the shared machine
                // does not fall on one of them only.
                let solvers = [SolverKind::Newton, cheap, SolverKind::Auto];
                let mut best = [[(f64::INFINITY, 0, SolverKind::Auto); 3]; 2];
                for _ in 0..CROSSOVER_RUNS {
                    for (k, &solver) in solvers.iter().enumerate() {
                        for (case, mesh) in meshes.iter().enumerate() {
                            let s = run(mesh, energy, solver, Start::Conformal);
                            let t = s.timings.total_ms / 1e3;
                            if t < best[case][k].0 {
                                best[case][k] = (t, s.iterations, s.solver);
                            }
                        }
                    }
                }
                for (case, mesh) in meshes.iter().enumerate() {
                    let [(newton, newton_iterations, _), (alone, iterations, _), (auto, _, finished)] =
                        best[case];
                    println!(
                        "| bump {height} {} | {} | {} | {newton:.4} ({newton_iterations}) | {alone:.4} ({iterations}) | {:.2} | {auto:.4} ({finished}) | {:.2} |",
                        ["quads", "triangles"][case],
                        mesh.face_count(),
                        mesh.vertex_count(),
                        alone / newton,
                        auto / newton
                    );
                }
                pairs.push((
                    energy,
                    height,
                    n * n,
                    best[0][2].0 / best[1][2].0,
                    best[0][0].0 / best[1][0].0,
                ));
            }
        }
    }
    println!("\n## 5b. Quads / triangles (same surface), `auto` and Newton\n");
    println!("| energy | surface | quads | auto: quads / triangles | Newton: quads / triangles |");
    println!("|---|---|---|---|---|");
    for (energy, height, faces, auto, newton) in pairs {
        println!("| {energy} | bump {height} | {faces} | {auto:.2} | {newton:.2} |");
    }
}

fn main() {
    let large = std::env::args().any(|a| a == "--large");
    println!("threads: {}", rayon::current_num_threads());
    if std::env::args().any(|a| a == "--crossover") {
        crossover();
        return;
    }
    orderings();
    if std::env::args().any(|a| a == "--orderings") {
        return;
    }

    println!("\n## 1. Quads vs the same surface triangulated\n");
    header();
    let quads = bump_disk(100);
    let tris = common::triangulated(&quads);
    let mut ratios = Vec::new();
    for energy in [EnergyKind::Arap, EnergyKind::SymmetricDirichlet] {
        let mut solvers = vec![
            SolverKind::Newton,
            SolverKind::Lbfgs,
            SolverKind::LaplacianLbfgs,
            SolverKind::Auto,
        ];
        if energy == EnergyKind::Arap {
            solvers.push(SolverKind::LocalGlobal);
        }
        for solver in solvers {
            let mut total = [0.0; 2];
            for (k, (case, mesh)) in [("quads", &quads), ("triangles", &tris)]
                .into_iter()
                .enumerate()
            {
                let s = run(mesh, energy, solver, Start::Conformal);
                let label = if solver == SolverKind::Auto {
                    format!("{case} (auto)")
                } else {
                    case.to_string()
                };
                row(&label, mesh, energy, &s);
                total[k] = s.timings.total_ms;
                if solver == SolverKind::Newton {
                    ratios.push((format!("{case} {energy}"), newton_ratios(&s)));
                }
            }
            println!(
                "| quads / triangles time | | {energy} | {solver} | | {:.2} | | | | | | | | | |",
                total[0] / total[1]
            );
        }
    }
    println!(
        "\nAuto: arap → {}, symmetric-dirichlet → {}",
        auto_solver(EnergyKind::Arap),
        auto_solver(EnergyKind::SymmetricDirichlet)
    );

    println!("\n## 2. Newton cost relative to one numeric factorization of its Hessian\n");
    println!("| case | one iteration / factorization (target ≤ 1.5) | whole solve / factorization (target ≤ 10) |");
    println!("|---|---|---|");
    for (case, (it, whole)) in &ratios {
        println!("| {case} | {it:.2} | {whole:.2} |");
    }

    scaling(large);

    println!("\n## 4. Symmetric Dirichlet on a triangle disk from Tutte: time to 1% of the converged energy\n");
    println!("| faces | solver | converged energy | final energy | iterations to 1% | time to 1% s | total s |");
    println!("|---|---|---|---|---|---|---|");
    let tri_disk = common::triangulated(&bump_disk(150));
    // The converged energy is the lowest any solver reaches (Newton's, in practice):
    // a solver that stalls early is not judged against its own end.
    let runs: Vec<(SolverKind, ChartSolution)> = [
        SolverKind::Newton,
        SolverKind::Lbfgs,
        SolverKind::LaplacianLbfgs,
        SolverKind::Auto,
    ]
    .into_iter()
    .map(|solver| {
        let s = run(
            &tri_disk,
            EnergyKind::SymmetricDirichlet,
            solver,
            Start::Tutte,
        );
        (solver, s)
    })
    .collect();
    let converged = runs
        .iter()
        .flat_map(|(_, s)| s.history.iter().copied())
        .fold(f64::INFINITY, f64::min);
    for (solver, s) in &runs {
        let reached = s.history.iter().position(|&e| e <= 1.01 * converged);
        let (k, at) = match reached {
            Some(k) => (k.to_string(), format!("{:.3}", s.history_ms[k] / 1e3)),
            None => ("not reached".into(), "–".into()),
        };
        println!(
            "| {} | {solver} (finished by {}) | {converged:.6} | {:.6} | {k} | {at} | {:.3} |",
            tri_disk.face_count(),
            s.solver,
            s.history.last().copied().unwrap_or(f64::NAN),
            s.timings.total_ms / 1e3
        );
    }
}
