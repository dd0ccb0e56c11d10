#!/usr/bin/env python3
"""Reference cotangent Laplacians for tests/operators_cotan.rs.

Builds three small triangle meshes deterministically (no randomness, no files read),
computes libigl's `cotmatrix` (Pinkall & Polthier 1993 cotangent weights; libigl's
sign convention is negative semi-definite, i.e. it is -L) and writes
tests/reference/cotan_meshes.json next to this script.

Run from anywhere:  python3 tests/reference/cotan.py
Needs: PyPI libigl, numpy, scipy.
"""

import json
import math
import os
from importlib.metadata import version

import igl
import numpy as np


def bumpy_grid():
    """4x4 vertices, non-uniform spacing, alternating diagonals, z a smooth bump."""
    xs = [0.0, 0.7, 1.9, 2.6]
    ys = [0.0, 1.1, 1.6, 2.9]
    verts = []
    for j, y in enumerate(ys):
        for i, x in enumerate(xs):
            z = 0.4 * math.sin(1.3 * x) * math.cos(0.9 * y) + 0.05 * i * j
            verts.append([x, y, z])
    faces = []
    for j in range(3):
        for i in range(3):
            a = j * 4 + i
            b, c, d = a + 1, a + 5, a + 4
            if (i + j) % 2 == 0:
                faces += [[a, b, c], [a, c, d]]
            else:
                faces += [[a, b, d], [b, c, d]]
    return verts, faces


def skewed_octahedron():
    """Closed genus-0 mesh: an octahedron with unequal, tilted axes."""
    verts = [
        [1.3, 0.1, 0.0],
        [0.0, 0.9, 0.2],
        [-0.8, 0.0, -0.1],
        [0.1, -1.2, 0.0],
        [0.2, 0.1, 1.1],
        [-0.1, 0.0, -0.7],
    ]
    faces = [
        [0, 1, 4], [1, 2, 4], [2, 3, 4], [3, 0, 4],
        [1, 0, 5], [2, 1, 5], [3, 2, 5], [0, 3, 5],
    ]
    return verts, faces


def obtuse_fan():
    """Non-planar fan of six triangles around one vertex, with obtuse angles
    (negative cotangent weights) on its boundary."""
    verts = [[0.0, 0.0, 0.3]]
    radii = [1.5, 0.3, 1.4, 0.35, 1.6, 0.25]
    for k, r in enumerate(radii):
        t = 2.0 * math.pi * k / 6.0 + 0.1 * k
        verts.append([r * math.cos(t), r * math.sin(t), 0.15 * ((-1) ** k)])
    faces = [[0, 1 + k, 1 + (k + 1) % 6] for k in range(6)]
    return verts, faces


def main():
    meshes = []
    for name, build in [
        ("bumpy_grid", bumpy_grid),
        ("skewed_octahedron", skewed_octahedron),
        ("obtuse_fan", obtuse_fan),
    ]:
        verts, faces = build()
        v = np.array(verts, dtype=np.float64)
        f = np.array(faces, dtype=np.int64)
        c = igl.cotmatrix(v, f).toarray()
        meshes.append(
            {
                "name": name,
                "vertices": verts,
                "faces": faces,
                "cotmatrix": c.tolist(),
            }
        )
    out = {
        "generator": "tests/reference/cotan.py",
        "libigl_version": version("libigl"),
        "numpy_version": np.__version__,
        "note": "cotmatrix is libigl's sign convention (negative semi-definite), i.e. -L",
        "meshes": meshes,
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "cotan_meshes.json")
    with open(path, "w") as fh:
        json.dump(out, fh, indent=None)
        fh.write("\n")
    print(f"wrote {path} with {len(meshes)} meshes (libigl {out['libigl_version']})")


if __name__ == "__main__":
    main()
