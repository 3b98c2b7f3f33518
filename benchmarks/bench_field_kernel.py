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

Many filaments: the planner's winding-pack check models each coil as one filament per turn
(``cage.coils.FilamentPack``), hundreds of coaxial polygons or loops at the 387 box points;
the same pairs with 500 turns of 1 mm wire in a 20 mm channel (1000 filaments) are timed at
387 points, with the one-source-at-a-time path of ``cage.biot_savart`` beside the batched
one where the module has it. Target (ours): under 50 ms per 1000 filaments at 387 points.
"""
from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import cage.biot_savart as bs  # noqa: E402
from cage.coils import CoilPair, FilamentPack, filaments_field_T, flat_spacing_m, pair_filaments  # noqa: E402
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
    pack = FilamentPack(wire_od_m=1.0e-3, channel_width_m=20.0e-3)
    for pair in pairs:
        many = pair_filaments(CoilPair(pair.axis, pair.shape, pair.size_m, pair.spacing_m, 500), pack)
        filaments_field_T(many, batch)
        cp, wp = timed(lambda: filaments_field_T(many, batch), 9)
        print(f"{pair.shape} pack: {many.count} filaments, {len(batch)} points CPU {cp * 1e3:7.1f} ms  "
              f"wall {wp * 1e3:7.1f} ms (median of 9); target under 50 ms: {'met' if wp < 0.05 else 'NOT met'}")
        if hasattr(bs, "BATCH_MIN_SOURCES"):
            saved = bs.BATCH_MIN_SOURCES
            bs.BATCH_MIN_SOURCES = 10**9  # one source at a time
            try:
                cs, ws = timed(lambda: filaments_field_T(many, batch), 3)
            finally:
                bs.BATCH_MIN_SOURCES = saved
            print(f"{pair.shape} pack: one filament at a time CPU {cs * 1e3:7.1f} ms  wall {ws * 1e3:7.1f} ms "
                  f"(median of 3); batched {ws / wp:.1f} x faster")


if __name__ == "__main__":
    main()
