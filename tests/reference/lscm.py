"""Reference least-squares conformal map for tests/flatten_reference.rs.

Builds a deterministic small curved triangle mesh (an irregular 9×7 grid on a
doubly curved height field, alternating diagonals), pins the two boundary vertices
farthest apart in 3D (the lower index first; ties broken by the first pair in
increasing index order -- the same rule as polyflat's conformal pins) at (0, 0) and
(1, 0), and solves with libigl's `lscm` (Lévy et al. 2002).

Run: python3 tests/reference/lscm.py > tests/reference/lscm.json
Requires: pip install libigl numpy scipy (libigl 2.6.3 produced the committed file).
"""

import json

import igl
import numpy as np

NX, NY = 9, 7


def mesh():
    v = []
    for j in range(NY + 1):
        for i in range(NX + 1):
            x = i / NX + 0.02 * np.sin(3.1 * i + 1.7 * j)
            y = 0.8 * j / NY + 0.02 * np.cos(2.3 * i - 1.1 * j)
            z = 0.35 * np.sin(2.0 * x) * np.cos(1.5 * y) + 0.25 * x * y
            v.append([x, y, z])
    f = []
    for j in range(NY):
        for i in range(NX):
            a = j * (NX + 1) + i
            b, c, d = a + 1, a + NX + 2, a + NX + 1
            if (i + j) % 2 == 0:
                f += [[a, b, c], [a, c, d]]
            else:
                f += [[a, b, d], [b, c, d]]
    return np.array(v, dtype=np.float64), np.array(f, dtype=np.int64)


def main():
    v, f = mesh()
    boundary = np.sort(igl.boundary_loop(f))
    p = v[boundary]
    d = np.linalg.norm(p[:, None, :] - p[None, :, :], axis=2)
    d = np.triu(d, 1)
    flat = d.ravel()
    k = int(np.argmax(flat))
    best = flat[k]
    runner_up = np.sort(flat)[-2]
    assert best - runner_up > 1e-9, "the farthest pair must be unique"
    a, b = boundary[k // len(boundary)], boundary[k % len(boundary)]
    pins = np.array([a, b], dtype=np.int64)
    bc = np.array([[0.0, 0.0], [1.0, 0.0]])
    uv, _ = igl.lscm(v, f, pins, bc)
    print(json.dumps({
        "generator": "tests/reference/lscm.py (libigl 2.6.3 lscm)",
        "vertices": v.tolist(),
        "faces": f.tolist(),
        "pins": pins.tolist(),
        "pin_uvs": bc.tolist(),
        "uvs": uv.tolist(),
    }))


if __name__ == "__main__":
    main()
