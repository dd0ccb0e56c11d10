//! Mesh validation: what stops a mesh from being flattened, and what merely deserves
//! a mention.
//!
//! Input: a [`PolyMesh`] and its [`Topology`]. Output: a list of [`Problem`]s, each one
//! sentence naming faces (with [`PolyMesh::face_label`]) or vertices (1-based, as in the
//! file). Blocking problems: no faces, faces with fewer than 3 corners, a vertex used
//! twice, a reference beyond the vertices or UVs, zero area or non-finite corners,
//! edges shared by more than two faces, non-manifold vertices, neighbours with opposite
//! winding, and boundary loops that touch themselves; the last four are marked
//! [`Problem::cut_by_seams`], because flattening cuts a seam through them instead of
//! failing. Not blocking: unused vertices.

use super::{PolyMesh, Topology};
use crate::operators::face::area_normal;

/// One finding about a mesh.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct Problem {
    /// Whether it stops flattening.
    pub blocking: bool,
    /// One sentence naming the faces or vertices concerned.
    pub sentence: String,
    /// A blocking topology problem (non-manifold edge or vertex, inconsistent
    /// winding, a boundary touching itself) that flattening works around by cutting
    /// a seam there: it stops `inspect`'s clean bill of health, not `flatten`.
    #[serde(skip)]
    pub cut_by_seams: bool,
}

impl Problem {
    /// A problem that stops flattening.
    pub fn blocking(sentence: impl Into<String>) -> Self {
        Problem {
            blocking: true,
            sentence: sentence.into(),
            cut_by_seams: false,
        }
    }

    /// A blocking topology problem that flattening cuts a seam through.
    pub fn cuttable(sentence: impl Into<String>) -> Self {
        Problem {
            cut_by_seams: true,
            ..Problem::blocking(sentence)
        }
    }

    /// An observation that does not stop flattening.
    pub fn note(sentence: impl Into<String>) -> Self {
        Problem {
            blocking: false,
            sentence: sentence.into(),
            cut_by_seams: false,
        }
    }
}

/// How many faces, edges or vertices a sentence names before "and N more".
const LISTED: usize = 3;

/// "a, b and c" / "a, b, c and 4 more".
fn listing(items: &[String], total: usize) -> String {
    let shown = &items[..items.len().min(LISTED)];
    let rest = total.saturating_sub(shown.len());
    match (shown, rest) {
        ([], _) => String::new(),
        ([one], 0) => one.clone(),
        (_, 0) => {
            let (last, init) = shown
                .split_last()
                .map(|(l, i)| (l.clone(), i))
                .unwrap_or_default();
            format!("{} and {last}", init.join(", "))
        }
        _ => format!("{} and {rest} more", shown.join(", ")),
    }
}

/// Every problem found in `mesh`, blocking ones first.
pub fn validate(mesh: &PolyMesh, topo: &Topology) -> Vec<Problem> {
    let mut problems = Vec::new();
    if mesh.face_count() == 0 {
        problems.push(Problem::blocking("the mesh has no faces"));
    }
    check_faces(mesh, &mut problems);
    check_uvs(mesh, &mut problems);

    let vertex = |v: u32| format!("vertex {}", v as u64 + 1);
    // Distinct faces along edge `e`, in order.
    let faces_of_edge = |e: u32| -> Vec<String> {
        let mut faces: Vec<u32> = Vec::new();
        for f in topo.edge_faces(e) {
            if !faces.contains(&f) {
                faces.push(f);
            }
        }
        faces.iter().map(|&f| mesh.face_label(f as usize)).collect()
    };
    let edge_name = |e: u32| -> String {
        match topo.edge_vertices.get(e as usize) {
            Some(&[a, b]) => format!(
                "the edge between vertices {} and {}",
                a as u64 + 1,
                b as u64 + 1
            ),
            None => format!("edge {e}"),
        }
    };

    let nm = &topo.non_manifold_edges;
    if let Some(&e) = nm.first() {
        let faces = faces_of_edge(e);
        let head = if nm.len() == 1 {
            format!("{} is shared by {} faces", edge_name(e), faces.len())
        } else {
            format!(
                "{} edges are shared by more than two faces, the first being {} ({} faces)",
                nm.len(),
                edge_name(e),
                faces.len()
            )
        };
        problems.push(Problem::cuttable(format!(
            "{head}: {}; an edge may border at most two faces",
            listing(&faces, faces.len())
        )));
    }

    let nv = &topo.non_manifold_vertices;
    if !nv.is_empty() {
        let names: Vec<String> = nv.iter().take(LISTED).map(|&v| vertex(v)).collect();
        let sentence = if nv.len() == 1 {
            format!(
                "1 vertex is non-manifold ({}): its faces do not form a single fan; split it",
                names.join("")
            )
        } else {
            format!(
                "{} vertices are non-manifold ({}): the faces of each do not form a single fan; split them",
                nv.len(),
                listing(&names, nv.len())
            )
        };
        problems.push(Problem::cuttable(sentence));
    }

    let inc = &topo.inconsistent_edges;
    if let Some(&e) = inc.first() {
        problems.push(Problem::cuttable(format!(
            "{} the same direction, the first being {} ({}); flip faces so that neighbours wind the same way",
            if inc.len() == 1 {
                "1 edge is traversed by both of its faces in".to_string()
            } else {
                format!("{} edges are traversed by both of their faces in", inc.len())
            },
            edge_name(e),
            {
                let faces = faces_of_edge(e);
                listing(&faces, faces.len())
            }
        )));
    }

    let pinched = &topo.pinched_loops;
    if !pinched.is_empty() {
        let names: Vec<String> = pinched
            .iter()
            .take(LISTED)
            .map(|&(_, v)| vertex(v))
            .collect();
        problems.push(Problem::cuttable(format!(
            "{} the mesh touches itself at {}; split the vertex so each boundary passes it once",
            if pinched.len() == 1 {
                "1 boundary loop of".to_string()
            } else {
                format!("{} boundary loops of", pinched.len())
            },
            listing(&names, pinched.len())
        )));
    }

    let iso = &topo.isolated_vertices;
    if !iso.is_empty() {
        let names: Vec<String> = iso.iter().take(LISTED).map(|&v| vertex(v)).collect();
        problems.push(Problem::note(format!(
            "{} used by no face ({}); {} in the output but {} no UV",
            if iso.len() == 1 {
                "1 vertex is".to_string()
            } else {
                format!("{} vertices are", iso.len())
            },
            listing(&names, iso.len()),
            if iso.len() == 1 {
                "it is kept"
            } else {
                "they are kept"
            },
            if iso.len() == 1 { "gets" } else { "get" }
        )));
    }
    problems
}

/// Per-face checks: arity, vertex references, repeated vertices, area.
fn check_faces(mesh: &PolyMesh, problems: &mut Vec<Problem>) {
    let mut bad: Vec<(usize, String)> = Vec::new();
    let mut count = 0usize;
    for f in 0..mesh.face_count() {
        let (Some(&a), Some(&b)) = (mesh.face_offsets.get(f), mesh.face_offsets.get(f + 1)) else {
            continue;
        };
        let Some(corners) = mesh.face_vertices.get(a..b) else {
            count += 1;
            if bad.len() < LISTED {
                bad.push((f, "has corner offsets outside the mesh".to_string()));
            }
            continue;
        };
        let reason = if corners.len() < 3 {
            Some(format!("has {} corners, fewer than 3", corners.len()))
        } else if let Some(&v) = corners
            .iter()
            .find(|&&v| v as usize >= mesh.positions.len())
        {
            Some(format!(
                "refers to vertex {}, but the mesh has only {} vertices",
                v as u64 + 1,
                mesh.positions.len()
            ))
        } else if let Some(v) = corners
            .iter()
            .enumerate()
            .find(|(i, v)| corners.get(i + 1..).is_some_and(|rest| rest.contains(*v)))
            .map(|(_, &v)| v)
        {
            Some(format!("uses vertex {} twice", v as u64 + 1))
        } else {
            let points: Vec<_> = corners
                .iter()
                .filter_map(|&v| mesh.positions.get(v as usize).copied())
                .collect();
            area_normal(&points).err().map(|e| e.to_string())
        };
        if let Some(reason) = reason {
            count += 1;
            if bad.len() < LISTED {
                bad.push((f, reason));
            }
        }
    }
    if count > 0 {
        let parts: Vec<String> = bad
            .iter()
            .map(|(f, r)| format!("{} {r}", mesh.face_label(*f)))
            .collect();
        let sentence = if count == 1 {
            parts.join("")
        } else {
            format!("{count} faces are unusable: {}", listing(&parts, count))
        };
        problems.push(Problem::blocking(sentence));
    }
}

fn check_uvs(mesh: &PolyMesh, problems: &mut Vec<Problem>) {
    let Some(cu) = &mesh.corner_uvs else {
        return;
    };
    if cu.len() != mesh.face_vertices.len() {
        problems.push(Problem::blocking(format!(
            "the mesh has {} texture references for {} face corners",
            cu.len(),
            mesh.face_vertices.len()
        )));
        return;
    }
    let bad = (0..mesh.face_count()).find(|&f| {
        mesh.face_offsets
            .get(f)
            .zip(mesh.face_offsets.get(f + 1))
            .and_then(|(&a, &b)| cu.get(a..b))
            .is_some_and(|ts| ts.iter().any(|&t| t as usize >= mesh.uvs.len()))
    });
    if let Some(f) = bad {
        problems.push(Problem::blocking(format!(
            "{} refers to a texture coordinate beyond the {} the mesh has",
            mesh.face_label(f),
            mesh.uvs.len()
        )));
    }
    let nonfinite = mesh
        .uvs
        .iter()
        .position(|t| !(t.x.is_finite() && t.y.is_finite()));
    if let Some(i) = nonfinite {
        problems.push(Problem::blocking(format!(
            "texture coordinate {} is not finite",
            i + 1
        )));
    }
}
