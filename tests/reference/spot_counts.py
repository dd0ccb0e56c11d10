"""Independent counts for the Spot fixtures, used by tests/inspect_spot.rs.

Reads each OBJ with a minimal parser of its own (v and f lines only, corners v/vt),
then counts used vertices V, undirected edges E, faces F, boundary edges (edges with
one face), chi = V - E + F, and UV islands: connected components (scipy.sparse.csgraph)
of the graph joining two faces when they share an edge whose endpoints carry the same
vt indices on both sides.

Run: python3 tests/reference/spot_counts.py ../../shared/fixtures/spot
Output committed in tests/reference/spot_counts.txt.
"""

import sys
from collections import defaultdict

import numpy as np
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components


def counts(path):
    faces = []
    for line in open(path, encoding="utf-8", errors="replace"):
        parts = line.split()
        if parts and parts[0] == "f":
            corners = []
            for tok in parts[1:]:
                fields = tok.split("/")
                corners.append((int(fields[0]), int(fields[1]) if len(fields) > 1 and fields[1] else None))
            faces.append(corners)
    used = {v for f in faces for v, _ in f}
    edge_faces = defaultdict(list)
    uv_edge_faces = defaultdict(list)
    for fi, f in enumerate(faces):
        n = len(f)
        for k in range(n):
            (a, ta), (b, tb) = f[k], f[(k + 1) % n]
            edge_faces[frozenset((a, b))].append(fi)
            uv_edge_faces[frozenset(((a, ta), (b, tb)))].append(fi)
    rows, cols = [], []
    for fs in uv_edge_faces.values():
        for g in fs[1:]:
            rows.append(fs[0])
            cols.append(g)
    graph = coo_matrix((np.ones(len(rows)), (rows, cols)), shape=(len(faces), len(faces)))
    islands, _ = connected_components(graph, directed=False)
    arity = defaultdict(int)
    for f in faces:
        arity[len(f)] += 1
    boundary = sum(1 for fs in edge_faces.values() if len(fs) == 1)
    V, E, F = len(used), len(edge_faces), len(faces)
    return dict(V=V, E=E, F=F, chi=V - E + F, boundary_edges=boundary, uv_islands=islands,
                arity=dict(sorted(arity.items())))


if __name__ == "__main__":
    folder = sys.argv[1] if len(sys.argv) > 1 else "../../shared/fixtures/spot"
    for name in ["spot_quadrangulated.obj", "spot_control_mesh.obj"]:
        print(name, counts(f"{folder}/{name}"))
