"""The smallest pair size meeting a uniformity tolerance over the test box, by bisection on the exact field.

Planning layer; step 1 of the method in ``cage.optimise``.
"""
from __future__ import annotations

import math

import numpy as np

from cage.coils import AXES, CoilPair, flat_spacing_m
from cage.errors import InfeasibleError
from cage.planinputs import MAX_SIZE_M, SIZE_PRECISION, UNIFORMITY_GRID, _box, _pct


# ----------------------------------------------------------------------------- uniformity

def _box_for_axis(test_volume_m) -> np.ndarray:
    return np.asarray(test_volume_m, dtype=float)


def _deviation(axis: str, shape: str, size_m: float, ratio: float, box: np.ndarray) -> float:
    from cage.uniformity import box_deviation

    pair = CoilPair(axis, shape, size_m, ratio * size_m, 1)
    return box_deviation(pair, box, n_per_edge=UNIFORMITY_GRID)


def _box_clear_size_m(axis: str, shape: str, ratio: float, box: np.ndarray) -> float:
    """Smallest size whose wires stay outside the test box (any smaller is meaningless)."""
    a = AXES.index(axis)
    half = box / 2.0
    lateral = max(half[(a + 1) % 3], half[(a + 2) % 3])
    # square: half side > lateral half-extent (the box fits through the coil aperture);
    # round: radius > the box's transverse half-diagonal.
    if shape == "square":
        need = 2.0 * lateral
    else:
        need = math.hypot(half[(a + 1) % 3], half[(a + 2) % 3])
    # The coil planes must also lie outside the box along the axis: ratio x size / 2 > half[a].
    return max(need, 2.0 * half[a] / ratio) * 1.001


def _best_ratio(axis: str, shape: str, size_m: float, box: np.ndarray) -> tuple[float, float]:
    """Spacing/size that minimises the box deviation at this size (free spacing)."""
    from scipy.optimize import minimize_scalar

    flat = flat_spacing_m(shape, 1.0)
    lo = max(0.5 * flat, 1.0001 * box[AXES.index(axis)] / size_m)
    hi = 1.6 * flat
    if lo >= hi:
        return flat, math.inf
    res = minimize_scalar(lambda r: _deviation(axis, shape, size_m, r, box), bounds=(lo, hi),
                          method="bounded", options={"xatol": 1e-4})
    return float(res.x), float(res.fun)


def min_uniform_size_m(axis: str, shape: str, test_volume_m, tolerance: float,
                       spacing: str = "flat", inset_m: float = 0.0, every: bool = True) -> tuple[float, float]:
    """Smallest pair size (side or radius, m) meeting ``tolerance`` over the test box, and the
    spacing/size ratio used. Bisection on the exact field; raises InfeasibleError beyond 50 m.

    inset_m: with a frame line of size s, the winding's mean line lies between s - inset_m (a
    thin pack on the channel floor) and s (a full channel), see cage.channel; the size returned
    is then the frame line's where every winding between those two (``every``) or the better of
    the two extremes (not ``every``: a lower bound) meets the tolerance; the spacing is
    ratio x (s - inset_m / 2)."""
    return _min_uniform_size_cached(axis, shape, tuple(float(v) for v in test_volume_m), float(tolerance),
                                    spacing, float(inset_m), bool(every))


def _uniform_key(axis: str, test_volume_m) -> tuple:
    """The test box seen from the pair's axis: along it, then the two across it (sorted: the
    square and the circle are symmetric under swapping them)."""
    a = AXES.index(axis)
    return (test_volume_m[a],) + tuple(sorted((test_volume_m[(a + 1) % 3], test_volume_m[(a + 2) % 3])))


_UNIFORM_CACHE: dict = {}


def _min_uniform_size_cached(axis, shape, test_volume_m, tolerance, spacing, inset_m, every):
    # the same bisection for every axis that sees the same box (a cube test volume: all three)
    key = (shape, _uniform_key(axis, test_volume_m), tolerance, spacing, inset_m, every)
    if key not in _UNIFORM_CACHE:
        if len(_UNIFORM_CACHE) > 4096:
            _UNIFORM_CACHE.clear()
        _UNIFORM_CACHE[key] = _min_uniform_size(axis, shape, test_volume_m, tolerance, spacing, inset_m, every)
    return _UNIFORM_CACHE[key]


def _min_uniform_size(axis, shape, test_volume_m, tolerance, spacing, inset_m, every):
    box = _box_for_axis(test_volume_m)
    flat = flat_spacing_m(shape, 1.0)
    half = inset_m / 2.0

    def dev(size: float) -> tuple[float, float]:
        mid, thin = size - half, size - inset_m
        if spacing == "free":
            ratio, _ = _best_ratio(axis, shape, mid, box)
        else:
            ratio = flat
        gap = ratio * mid  # the spacing
        if thin <= 0.0 or thin <= _box_clear_size_m(axis, shape, gap / thin, box):
            return math.inf, ratio
        if inset_m == 0.0:
            return _deviation(axis, shape, size, ratio, box), ratio
        pick = max if every else min
        return pick(_deviation(axis, shape, thin, gap / thin, box), _deviation(axis, shape, size, gap / size, box)), ratio

    lo = _box_clear_size_m(axis, shape, flat if spacing == "flat" else 0.5 * flat, box) + inset_m
    hi = lo
    d, ratio = dev(hi)
    while d > tolerance:
        lo, hi = hi, hi * 1.25
        if hi > MAX_SIZE_M:
            raise InfeasibleError(
                f"no {shape} {axis} pair up to {MAX_SIZE_M:g} m gives {_pct(tolerance)} uniformity over the "
                f"{_box(test_volume_m)} test volume")
        d, ratio = dev(hi)
    while hi - lo > SIZE_PRECISION * hi:
        mid = 0.5 * (lo + hi)
        dm, rm = dev(mid)
        if dm <= tolerance:
            hi, ratio = mid, rm
        else:
            lo = mid
    return hi, ratio
