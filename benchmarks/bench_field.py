"""Speed of cage.field_T against magpylib's getB on the same three-axis cage.

Run: python benchmarks/bench_field.py

The cage (an invented example): x square 2.0 m, y round 0.95 m, z square 1.8 m, 40 turns per
coil, flat spacings; 16 straight segments and 2 circular loops. Both sides model a coil's
40 turns as one filament carrying 40 x I. Points are uniform in a 4 m cube around the cage.
Prints, for 300,000 and 1,000,000 points in one run: the times (best of 3 for ours, of 2 for
magpylib), the ratio, the throughput in
points x filament sources per second, and the largest relative disagreement; then the peak
memory of one field_T call on a million points (tracemalloc, in a separate call so that the
timing is not disturbed).
"""
from __future__ import annotations

import sys
import time
import tracemalloc
from pathlib import Path

import numpy as np

# Run from a checkout: the package beside this folder, whatever is installed.
sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import cage  # noqa: E402
from cage.coils import AXES, cage_filaments, flat_spacing_m  # noqa: E402
from cage.designfile import design_from_dict  # noqa: E402

CURRENTS_A = {"x": 1.2, "y": -0.8, "z": 0.5}


def _design():
    axes = {
        "x": {"shape": "square", "side_m": 2.0, "spacing_m": flat_spacing_m("square", 2.0), "turns": 40},
        "y": {"shape": "round", "radius_m": 0.95, "spacing_m": flat_spacing_m("round", 0.95), "turns": 40},
        "z": {"shape": "square", "side_m": 1.8, "spacing_m": flat_spacing_m("square", 1.8), "turns": 40},
    }
    return design_from_dict({"format": "cage-design", "version": 1, "axes": axes}, "benchmark")


def _magpylib_sources(design):
    import magpylib as magpy
    from scipy.spatial.transform import Rotation

    fil = cage_filaments(design.cage, [CURRENTS_A[a] for a in AXES])
    sources = []
    for poly in fil.polygons:
        v = poly.vertices_m
        sources.append(magpy.current.Polyline(current=poly.current_A, vertices=np.vstack([v, v[:1]])))
    for loop in fil.loops:
        rot, _ = Rotation.align_vectors([loop.normal], [[0.0, 0.0, 1.0]])
        sources.append(magpy.current.Circle(current=loop.current_A, diameter=2 * loop.radius_m,
                                            position=loop.centre_m, orientation=rot))
    n_segments = sum(len(p.vertices_m) for p in fil.polygons)
    return sources, n_segments, len(fil.loops)


def _best_of(fn, repeats):
    best, out = np.inf, None
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def main():
    import magpylib as magpy

    design = _design()
    sources, n_seg, n_loops = _magpylib_sources(design)
    n_sources = n_seg + n_loops
    print(f"cage: {n_seg} straight segments + {n_loops} loops = {n_sources} filament sources; "
          f"magpylib {magpy.__version__}")
    rng = np.random.default_rng(12345)
    for n in (300_000, 1_000_000):
        pts = rng.uniform(-2.0, 2.0, size=(n, 3))
        t_ours, ours = _best_of(lambda: cage.field_T(design, CURRENTS_A, pts), 3)
        t_mag, ref = _best_of(lambda: magpy.getB(sources, pts, sumup=True), 2)
        # agreement: relative to |B| with a small absolute floor; points within 5 mm of a wire
        # are where magpylib itself loses digits, so report them apart
        err = np.linalg.norm(ours - ref, axis=1)
        size = np.linalg.norm(ref, axis=1)
        rel = err / (size + 1e-18)
        print(f"{n:>9,d} points: cage.field_T {t_ours:7.3f} s, magpylib getB {t_mag:7.3f} s, "
              f"ratio {t_mag / t_ours:5.1f}x; throughput {n * n_sources / t_ours:.3g} vs "
              f"{n * n_sources / t_mag:.3g} points x sources / s; "
              f"max relative difference {rel.max():.2e} (median {np.median(rel):.1e})")
    pts = rng.uniform(-2.0, 2.0, size=(1_000_000, 3))
    tracemalloc.start()
    base = tracemalloc.get_traced_memory()[0]
    out = cage.field_T(design, CURRENTS_A, pts)
    peak = tracemalloc.get_traced_memory()[1] - base
    tracemalloc.stop()
    print(f"peak memory of one field_T call on 1,000,000 points: {peak / 1e6:.1f} MB "
          f"(of which the (n, 3) result is {out.nbytes / 1e6:.0f} MB)")


if __name__ == "__main__":
    main()
