//! `polyflat inspect MESH [--json]`: counts, topology, UV charts, non-planarity and
//! every problem of a mesh. Exit 0 when nothing blocks flattening, 1 when something
//! does (or the file cannot be read), 2 on bad usage.

use crate::io::{read_obj, ObjFile};
use crate::mesh::{island_count, non_planarity, uv_islands, validate, Problem, Topology};
use clap::Args;
use rayon::prelude::*;
use serde::Serialize;
use std::collections::BTreeMap;
use std::path::PathBuf;

/// Arguments of `polyflat inspect`.
#[derive(Debug, Args)]
#[command(after_help = "Examples:\n  \
    polyflat inspect chair.obj\n  \
    polyflat inspect scan.obj --json > scan_inspect.json\n\n\
Exit status 0 when nothing blocks flattening, 1 when a problem does (each problem is\n\
listed as one sentence naming the face or vertex and its line).")]
pub struct InspectArgs {
    /// The OBJ mesh to inspect.
    pub mesh: PathBuf,
    /// Print the findings as one JSON object instead of a summary.
    #[arg(long)]
    pub json: bool,
}

/// Largest and area-unweighted mean per-face non-planarity (see [`non_planarity`]).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct NonPlanarity {
    /// Largest value over all faces.
    pub max: f64,
    /// Mean over all faces.
    pub mean: f64,
}

/// What `inspect` reports; serialises to exactly the `--json` keys.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Inspection {
    /// Vertices used by at least one face.
    pub vertices: usize,
    /// Faces.
    pub faces: usize,
    /// Undirected edges.
    pub edges: usize,
    /// Number of faces of each arity.
    pub face_arity: BTreeMap<usize, usize>,
    /// Boundary loops.
    pub boundary_loops: usize,
    /// Connected components (faces joined across edges).
    pub components: usize,
    /// Sum of the components' genera.
    pub genus: i64,
    /// `V − E + F` over used vertices.
    pub euler_characteristic: i64,
    /// UV islands, `None` when the mesh has no texture coordinates.
    pub uv_charts: Option<usize>,
    /// Per-face non-planarity summary.
    pub non_planarity: NonPlanarity,
    /// Every problem, blocking ones first, as sentences.
    pub problems: Vec<String>,
    /// How many of `problems` block flattening (not serialised).
    #[serde(skip)]
    pub blocking: usize,
}

/// Inspects a mesh as read from a file.
pub fn inspect(obj: &ObjFile) -> Inspection {
    let mesh = &obj.mesh;
    let topo = Topology::build(mesh);
    let mut problems: Vec<Problem> = validate(mesh, &topo);
    problems.extend(obj.notes.iter().cloned());
    problems.sort_by_key(|p| !p.blocking);

    let mut face_arity = BTreeMap::new();
    for f in 0..mesh.face_count() {
        *face_arity.entry(mesh.arity(f)).or_insert(0) += 1;
    }
    let per_face: Vec<f64> = (0..mesh.face_count())
        .into_par_iter()
        .map(|f| non_planarity(&mesh.face_corners(f)))
        .collect();
    let max = per_face.iter().copied().fold(0.0, f64::max);
    let mean = if per_face.is_empty() {
        0.0
    } else {
        per_face.iter().sum::<f64>() / per_face.len() as f64
    };

    Inspection {
        vertices: topo.used_vertices,
        faces: mesh.face_count(),
        edges: topo.edge_count(),
        face_arity,
        boundary_loops: topo.boundary_loops.len(),
        components: topo.component_count(),
        genus: topo.genus(),
        euler_characteristic: topo.euler_characteristic(mesh),
        uv_charts: uv_islands(mesh).map(|ids| island_count(&ids)),
        non_planarity: NonPlanarity { max, mean },
        blocking: problems.iter().filter(|p| p.blocking).count(),
        problems: problems.into_iter().map(|p| p.sentence).collect(),
    }
}

fn arity_name(n: usize, count: usize) -> String {
    let name = match (n, count == 1) {
        (3, true) => "triangle".to_string(),
        (3, false) => "triangles".to_string(),
        (4, true) => "quad".to_string(),
        (4, false) => "quads".to_string(),
        (5, true) => "pentagon".to_string(),
        (5, false) => "pentagons".to_string(),
        (6, true) => "hexagon".to_string(),
        (6, false) => "hexagons".to_string(),
        (n, _) => format!("{n}-gon{}", if count == 1 { "" } else { "s" }),
    };
    format!("{count} {name}")
}

/// The human-readable summary.
pub fn summary(name: &str, r: &Inspection) -> String {
    let arities: Vec<String> = r
        .face_arity
        .iter()
        .map(|(&n, &c)| arity_name(n, c))
        .collect();
    let mut out = String::new();
    out.push_str(&format!("{name}\n"));
    out.push_str(&format!("  vertices        {}\n", r.vertices));
    out.push_str(&format!(
        "  faces           {} ({})\n",
        r.faces,
        arities.join(", ")
    ));
    out.push_str(&format!("  edges           {}\n", r.edges));
    out.push_str(&format!(
        "  components      {} (Euler characteristic {}, genus {}, {} boundary loop{})\n",
        r.components,
        r.euler_characteristic,
        r.genus,
        r.boundary_loops,
        if r.boundary_loops == 1 { "" } else { "s" }
    ));
    out.push_str(&format!(
        "  UV charts       {}\n",
        r.uv_charts
            .map_or("none (no texture coordinates)".to_string(), |n| n
                .to_string())
    ));
    out.push_str(&format!(
        "  non-planarity   max {:.4}, mean {:.4} (corner distance from the best-fit plane / face diameter)\n",
        r.non_planarity.max, r.non_planarity.mean
    ));
    if r.problems.is_empty() {
        out.push_str("  no problems found\n");
    } else {
        out.push_str(&format!("  problems        {}\n", r.problems.len()));
        for p in &r.problems {
            out.push_str(&format!("    - {p}\n"));
        }
    }
    out
}

/// Runs `inspect`; returns the exit code.
pub fn run(args: &InspectArgs, quiet: bool) -> i32 {
    let obj = match read_obj(&args.mesh) {
        Ok(obj) => obj,
        Err(e) => {
            eprintln!("{e}");
            return 1;
        }
    };
    let report = inspect(&obj);
    let name = args.mesh.display().to_string();
    if args.json {
        match serde_json::to_string_pretty(&report) {
            Ok(text) => println!("{text}"),
            Err(e) => {
                eprintln!("{name}: cannot format the findings as JSON: {e}");
                return 1;
            }
        }
    } else if !quiet {
        print!("{}", summary(&name, &report));
    }
    if report.blocking > 0 {
        if quiet && !args.json {
            for p in &report.problems {
                eprintln!("{name}: {p}");
            }
        }
        eprintln!(
            "{name}: cannot be flattened: {} of the problems above block{} it",
            report.blocking,
            if report.blocking == 1 { "s" } else { "" }
        );
        return 1;
    }
    0
}
