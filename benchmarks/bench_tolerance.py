"""Speed of the tolerance Monte Carlo: 1,000 built cages, square and round, batch against one by one.

Run: python benchmarks/bench_tolerance.py

The cage (an invented example): three nested pairs, sides 2.0, 1.9, 1.8 m (square) or radii
1.0, 0.95, 0.9 m (round), flat spacings, 0.4 m test cube (386 surface points per axis).
Prints the wall time of ``cage.tolerance.monte_carlo`` for 1,000 cages (target: a few seconds),
and the time of the same fields evaluated one built coil system at a time with the single-source
kernels (``cage.biot_savart.filaments_field_T``) on the first 100 cages, scaled to 1,000.
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from cage.biot_savart import Loop, Polygon, filaments_field_T  # noqa: E402
from cage.coils import CoilPair, flat_spacing_m  # noqa: E402
from cage.buildyield import _draws, _scaled, monte_carlo  # noqa: E402
from cage.tolerance import BuildErrors, _test_points, pair_system  # noqa: E402


def systems(shape):
    sizes = (2.0, 1.9, 1.8) if shape == "square" else (1.0, 0.95, 0.9)
    return [pair_system(CoilPair(a, shape, s, flat_spacing_m(shape, s), 30)) for a, s in zip("xyz", sizes)]


def one_by_one(system_list, n):
    """The same built coils, each sampled system through the single-source kernel."""
    from cage.tolerance import _rotate  # the same geometry as the batch

    pts = _test_points((0.4,) * 3, 9)
    draws = _draws(n, 2, 1)
    errors = BuildErrors()
    for a, system in enumerate(system_list):
        coil, axis = _scaled(draws, a, 2, errors)
        for g in range(n):
            polys, loops = [], []
            for k, c in enumerate(system.coils):
                e = coil[g, k]
                n0, u0 = np.array(c.normal), np.array(c.u)
                v0 = np.cross(n0, u0)
                tilt = e[1] * u0 + e[2] * v0
                centre = np.array(c.centre_m) + e[0] * n0
                nn, uu = _rotate(n0, tilt), _rotate(u0, tilt)
                ar = np.zeros(3)
                i = "xyz".index(system.axis)
                ar[(i + 1) % 3], ar[(i + 2) % 3] = axis[g]
                centre, nn, uu = (_rotate(x, ar) for x in (centre, nn, uu))
                cur = (c.turns + e[4]) * (1 + e[5])
                size = c.size_m + e[3]
                if c.shape == "round":
                    loops.append(Loop(centre, nn, size, cur))
                else:
                    vv = np.cross(nn, uu)
                    h = size / 2
                    verts = [centre + h * (su * uu + sv * vv) for su, sv in ((1, -1), (1, 1), (-1, 1), (-1, -1))]
                    polys.append(Polygon(np.array(verts), cur))
            filaments_field_T(pts, polys, loops)


def main():
    for shape in ("square", "round"):
        sy = systems(shape)
        t = time.perf_counter()
        mc = monte_carlo(sy, (0.4,) * 3, 1e-3, BuildErrors(), 1000, seed=1)
        batch = time.perf_counter() - t
        t = time.perf_counter()
        one_by_one(sy, 100)
        single = (time.perf_counter() - t) * 10
        print(f"{shape:>6}: 1,000 cages in {batch:.2f} s (batch); one system at a time about {single:.2f} s "
              f"(x{single / batch:.1f}); yield {mc.yield_share:.3f}")


if __name__ == "__main__":
    main()
