"""The field kernel (``cage.coils.filaments_field_T``) at the planner's batch size and at a million points.

Run: python benchmarks/bench_field_kernel.py

The planner evaluates one axis on the faces of its test box: 386 points (a 9 x 9 grid per
face, ``cage.samplepoints.box_points_m``) plus the centre, a few hundred points per call,
where the fixed cost of a call (argument checks, array set-up) weighs most; a figure or a
survey of the whole volume asks for up to a million. Prints CPU (``time.process_time``) and
wall (``time.perf_counter``) medians per call, the share of a small call that is fixed
overhead (a 1-point call against a 387-point call), and the targets (ours): a planner call
under 1 ms (the planner makes on the order of a thousand such calls per plan, so about 1 s),
and a million points under 2 s.
The cage is an invented example: a square pair of side 1.9 m and a round pair of radius 0.9 m,
40 turns each, at their flat-field spacings.
"""
from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from cage.coils import CoilPair, filaments_field_T, flat_spacing_m, pair_filaments  # noqa: E402
from cage.samplepoints import box_points_m  # noqa: E402


def timed(fn, repeat: int) -> tuple[float, float]:
    cpu, wall = [], []
    for _ in range(repeat):
        c0, w0 = time.process_time(), time.perf_counter()
        fn()
        cpu.append(time.process_time() - c0)
        wall.append(time.perf_counter() - w0)
    return statistics.median(cpu), statistics.median(wall)


def main() -> None:
    pairs = [CoilPair("x", "square", 1.9, flat_spacing_m("square", 1.9), 40),
             CoilPair("y", "round", 0.9, flat_spacing_m("round", 0.9), 40)]
    rng = np.random.default_rng(1)
    batch = np.vstack([np.zeros((1, 3)), box_points_m((0.6, 0.6, 0.6))])
    one = np.zeros((1, 3))
    million = rng.uniform(-1.5, 1.5, size=(1_000_000, 3))
    for pair in pairs:
        fil = pair_filaments(pair)
        filaments_field_T(fil, batch)  # warm caches (round-coil special functions, sample grids)
        c1, w1 = timed(lambda: filaments_field_T(fil, one), 200)
        cb, wb = timed(lambda: filaments_field_T(fil, batch), 200)
        cm, wm = timed(lambda: filaments_field_T(fil, million), 3)
        print(f"{pair.shape} pair: 1 point    CPU {c1 * 1e3:8.3f} ms  wall {w1 * 1e3:8.3f} ms (median of 200)")
        print(f"{pair.shape} pair: {len(batch)} points CPU {cb * 1e3:8.3f} ms  wall {wb * 1e3:8.3f} ms (median of 200); "
              f"fixed overhead {min(100.0, 100 * w1 / wb):.0f} % of the call; target under 1 ms: "
              f"{'met' if wb < 1e-3 else 'NOT met'}")
        print(f"{pair.shape} pair: 1,000,000 points CPU {cm:6.2f} s  wall {wm:6.2f} s (median of 3); "
              f"target under 2 s: {'met' if wm < 2 else 'NOT met'}")


if __name__ == "__main__":
    main()
