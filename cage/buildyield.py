"""Yield of built cages: Monte Carlo over build errors, sensitivities, a tolerance specification.

Planning layer, on the generic coil systems and perturbed fields of ``cage.tolerance`` (see
its docstring for the error model and the uniformity measure). Random draws come from
``numpy.random.default_rng(seed)``; the same standard normal draws are rescaled for every
error size (common random numbers), so yield against an error size is a smooth, repeatable
curve and the tolerance specification is deterministic.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cage.coils import AXES
from cage.errors import InputError
from cage.tolerance import (SOURCE_UNITS, SOURCES, BuildErrors, _nominal, _test_points, deviation_and_centre,
                            system_fields_T)

# ---------------------------------------------------------------------------------------------
# Monte Carlo
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Draws:
    """Standard normal draws for N cages: coil (N, 3, max_coils, 6), axis (N, 3, 2)."""

    coil: np.ndarray
    axis: np.ndarray


def _draws(n_samples: int, max_coils: int, seed) -> _Draws:
    rng = np.random.default_rng(seed)
    return _Draws(rng.standard_normal((n_samples, 3, max_coils, 6)), rng.standard_normal((n_samples, 3, 2)))


def _scaled(draws: _Draws, a: int, n_coils: int, errors: BuildErrors, rows=slice(None)):
    z = draws.coil[rows, a, :n_coils, :]
    s = errors
    coil = np.empty_like(z)
    coil[..., 0] = z[..., 0] * s.position_m
    coil[..., 1] = z[..., 1] * s.tilt_rad
    coil[..., 2] = z[..., 2] * s.tilt_rad
    coil[..., 3] = z[..., 3] * s.size_m
    coil[..., 4] = np.round(z[..., 4] * s.turns)
    coil[..., 5] = z[..., 5] * s.imbalance
    return coil, draws.axis[rows, a, :] * s.orthogonality_rad


@dataclass(frozen=True, eq=False)
class AxisSpread:
    """One axis over the sampled cages.

    deviation: (N,) uniformity of each built axis over the test box; nominal_deviation: as
    designed; yield_share: share with deviation <= the requirement; centre_T_per_A: (N, 3) the
    centre field per ampere; nominal_centre_T_per_A: (3,) as designed.
    """

    axis: str
    deviation: np.ndarray
    nominal_deviation: float
    yield_share: float
    centre_T_per_A: np.ndarray
    nominal_centre_T_per_A: np.ndarray

    def percentiles(self, qs=(5, 50, 95, 99)) -> dict:
        return {f"p{q}": float(np.percentile(self.deviation, q)) for q in qs}

    @property
    def centre_relative_error(self) -> np.ndarray:
        """(N,) |B0 - B0_nominal| / |B0_nominal| per sample (vector error, relative)."""
        ref = self.nominal_centre_T_per_A
        return np.linalg.norm(self.centre_T_per_A - ref, axis=1) / np.linalg.norm(ref)

    @property
    def centre_gain_error(self) -> np.ndarray:
        """(N,) relative error of the field per ampere along the nominal direction."""
        ref = self.nominal_centre_T_per_A
        return self.centre_T_per_A @ ref / (ref @ ref) - 1.0

    @property
    def centre_angle_rad(self) -> np.ndarray:
        """(N,) angle between the built and the nominal centre field (rad)."""
        ref = self.nominal_centre_T_per_A / np.linalg.norm(self.nominal_centre_T_per_A)
        b = self.centre_T_per_A / np.linalg.norm(self.centre_T_per_A, axis=1, keepdims=True)
        return np.arctan2(np.linalg.norm(np.cross(b, ref), axis=1), b @ ref)


@dataclass(frozen=True, eq=False)
class MonteCarlo:
    """Result of ``monte_carlo``: per axis spreads and the yield of whole cages."""

    samples: int
    seed: int | None
    errors: BuildErrors
    uniformity: float
    test_volume_m: tuple[float, float, float]
    axes: tuple[AxisSpread, ...]
    yield_share: float


def _check_run(systems, test_volume_m, uniformity, n_samples):
    if len(systems) != 3 or [s.axis for s in systems] != list(AXES):
        raise InputError("need three coil systems, on x, y and z in that order")
    for s in systems:
        if not s.coils:
            raise InputError(f"axis {s.axis}: no coils")
    if isinstance(n_samples, bool) or not isinstance(n_samples, (int, np.integer)) or n_samples < 2:
        raise InputError(f"samples must be a whole number of at least 2, got {n_samples!r}")
    u = float(uniformity)
    if not (math.isfinite(u) and 0 < u < 1):
        raise InputError(f"uniformity must be between 0 and 1, got {uniformity!r}")


def monte_carlo(systems, test_volume_m, uniformity: float, errors: BuildErrors = BuildErrors(),
                n_samples: int = 1000, seed: int | None = None, n_per_edge: int = 9,
                progress=None, _draws_cache: _Draws | None = None) -> MonteCarlo:
    """Sample ``n_samples`` built cages and measure each axis's uniformity over the test box.

    systems: three ``CoilSystem`` (x, y, z); test_volume_m: box sides (m); uniformity: the
    requirement (relative); errors: standard deviations; progress: optional callable
    ``progress(done, total)`` called as batches finish (the CLI draws its bar with it).
    """
    _check_run(systems, test_volume_m, uniformity, n_samples)
    pts = _test_points(test_volume_m, n_per_edge)
    max_coils = max(len(s.coils) for s in systems)
    draws = _draws_cache or _draws(int(n_samples), max_coils, seed)
    batch = 250
    total = 3 * int(n_samples)
    done = 0
    spreads = []
    for a, system in enumerate(systems):
        nom_dev, nom_b0 = _nominal(system, pts)
        devs, b0s = [], []
        for s in range(0, n_samples, batch):
            rows = slice(s, min(n_samples, s + batch))
            coil, axis = _scaled(draws, a, len(system.coils), errors, rows)
            dev, b0 = deviation_and_centre(system_fields_T(system, coil, axis, pts))
            devs.append(dev)
            b0s.append(b0)
            done += rows.stop - rows.start
            if progress is not None:
                progress(done, total)
        dev = np.concatenate(devs)
        spreads.append(AxisSpread(system.axis, dev, nom_dev, float(np.mean(dev <= uniformity)),
                                  np.concatenate(b0s), nom_b0))
    ok = np.all([sp.deviation <= uniformity for sp in spreads], axis=0)
    return MonteCarlo(int(n_samples), seed, errors, float(uniformity),
                      tuple(float(v) for v in np.broadcast_to(np.asarray(test_volume_m, float), (3,))),
                      tuple(spreads), float(np.mean(ok)))


# ---------------------------------------------------------------------------------------------
# Sensitivities by finite differences
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Sensitivity:
    """How one error source of one axis changes that axis, per unit of the source.

    source: one of SOURCES; axis; unit: the display unit ("mm", "deg", "turns", "%");
    step: the finite-difference step in that unit (the source's default size);
    deviation_per_unit: change of the uniformity (relative deviation) per unit, the worse of
    the + and - steps on the most sensitive coil; centre_per_unit: relative change of the
    centre field (vector) per unit; deviation_at_step: the change for one step (ranks them).
    """

    source: str
    axis: str
    unit: str
    step: float
    deviation_per_unit: float
    centre_per_unit: float
    deviation_at_step: float


def sensitivities(systems, test_volume_m, errors: BuildErrors = BuildErrors(),
                  n_per_edge: int = 9) -> list[Sensitivity]:
    """Finite-difference sensitivities of every source on every axis, ranked (largest first).

    For each coil of an axis and each coil-level source, one built copy with only that error,
    of one step (the source's size in ``errors``, or its default when that is 0), both signs;
    the orthogonality step turns the whole axis about each cross axis. All copies of one axis
    are evaluated as one batch with the exact field.
    """
    pts = _test_points(test_volume_m, n_per_edge)
    steps = errors.as_vector()
    defaults = BuildErrors().as_vector()
    steps = np.where(steps > 0, steps, defaults)
    steps[3] = max(1.0, round(steps[3]))  # whole turns
    out = []
    col_of = {"position": [0], "tilt": [1, 2], "size": [3], "turns": [4], "imbalance": [5]}
    for system in systems:
        nc = len(system.coils)
        nom_dev, nom_b0 = _nominal(system, pts)
        cases, labels = [], []
        for src, cols in col_of.items():
            h = steps[SOURCES.index(src)]
            for k in range(nc):
                for col in cols:
                    for sign in (1.0, -1.0):
                        e = np.zeros((nc, 6))
                        e[k, col] = sign * h
                        cases.append((e, np.zeros(2)))
                        labels.append(src)
        h_o = steps[SOURCES.index("orthogonality")]
        for j in range(2):
            for sign in (1.0, -1.0):
                r = np.zeros(2)
                r[j] = sign * h_o
                cases.append((np.zeros((nc, 6)), r))
                labels.append("orthogonality")
        f = system_fields_T(system, np.stack([c[0] for c in cases]), np.stack([c[1] for c in cases]), pts)
        dev, b0 = deviation_and_centre(f)
        ddev = np.abs(dev - nom_dev)
        dcen = np.linalg.norm(b0 - nom_b0, axis=1) / np.linalg.norm(nom_b0)
        labels = np.array(labels)
        for src in SOURCES:
            sel = labels == src
            unit, si = SOURCE_UNITS[src]
            h_si = steps[SOURCES.index(src)]
            h_unit = h_si / si
            worst_dev = float(ddev[sel].max())
            out.append(Sensitivity(src, system.axis, unit, float(h_unit), worst_dev / h_unit,
                                   float(dcen[sel].max()) / h_unit, worst_dev))
    out.sort(key=lambda s: -s.deviation_at_step)
    return out


# ---------------------------------------------------------------------------------------------
# Tolerance specification
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ToleranceLimit:
    """The largest standard deviation of one source that keeps the yield, others at their sizes.

    source, unit; limit: the largest size in the unit (None when even a perfect build of this
    source misses the yield: other sources limit); not_limiting: True when the yield holds up to
    ``search_max`` (the source hardly matters); yield_at_limit.
    """

    source: str
    unit: str
    limit: float | None
    not_limiting: bool
    search_max: float
    yield_at_limit: float


def _log_bisect(yield_at, target: float, lo: float, y_lo: float, hi: float, rel_precision: float):
    """Largest x in [lo, hi] (to rel_precision, on a log scale) with yield_at(x) >= target, given
    yield_at(lo) = y_lo >= target > yield_at(hi). Returns (x, its yield)."""
    while hi / lo > 1.0 + rel_precision:
        mid = math.sqrt(lo * hi)
        y_mid = yield_at(mid)
        if y_mid >= target:
            lo, y_lo = mid, y_mid
        else:
            hi = mid
    return lo, y_lo


def tolerance_spec(systems, test_volume_m, uniformity: float, errors: BuildErrors = BuildErrors(),
                   target_yield: float = 0.95, n_samples: int = 400, seed: int | None = 0,
                   n_per_edge: int = 7, max_factor: float = 50.0, rel_precision: float = 0.05,
                   progress=None) -> list[ToleranceLimit]:
    """For each source, the largest size keeping ``target_yield``, the others at ``errors``.

    Bisection on a logarithmic scale of the source's size between 0 and ``max_factor`` times
    its size in ``errors`` (or its default when 0), to ``rel_precision``, each step a Monte
    Carlo of ``n_samples`` cages on the same draws (common random numbers).
    """
    t = float(target_yield)
    if not (0 < t < 1):
        raise InputError(f"target yield must be between 0 and 1, got {target_yield!r}")
    _check_run(systems, test_volume_m, uniformity, n_samples)
    draws = _draws(int(n_samples), max(len(s.coils) for s in systems), seed)
    base = errors.as_vector()
    defaults = BuildErrors().as_vector()
    out = []

    def yield_at(i, value):
        v = base.copy()
        v[i] = value
        return monte_carlo(systems, test_volume_m, uniformity, BuildErrors.from_vector(v), n_samples,
                           seed, n_per_edge, _draws_cache=draws).yield_share

    for i, src in enumerate(SOURCES):
        unit, si = SOURCE_UNITS[src]
        ref = base[i] if base[i] > 0 else defaults[i]
        hi = ref * max_factor
        if src in ("size", "turns"):  # keep sampled coils real: 4 sigma below the smallest coil
            smallest = min(getattr(c, "size_m" if src == "size" else "turns") for s in systems for c in s.coils)
            hi = max(ref, min(hi, smallest / 4.0))
        cap = hi
        if progress is not None:
            progress(i, len(SOURCES))
        y_hi = yield_at(i, hi)
        if y_hi >= t:
            out.append(ToleranceLimit(src, unit, cap / si, True, cap / si, y_hi))
            continue
        y0 = yield_at(i, 0.0)
        if y0 < t:
            out.append(ToleranceLimit(src, unit, None, False, cap / si, y0))
            continue
        lo = ref / 64.0
        y_lo = yield_at(i, lo)
        while y_lo < t and lo > ref * 1e-4:
            lo /= 8.0
            y_lo = yield_at(i, lo)
        if y_lo < t:
            out.append(ToleranceLimit(src, unit, 0.0, False, cap / si, y0))
            continue
        lo, y_lo = _log_bisect(lambda v: yield_at(i, v), t, lo, y_lo, hi, rel_precision)
        out.append(ToleranceLimit(src, unit, lo / si, False, cap / si, y_lo))
    if progress is not None:
        progress(len(SOURCES), len(SOURCES))
    return out


def joint_factor(systems, test_volume_m, uniformity: float, errors: BuildErrors = BuildErrors(),
                 target_yield: float = 0.95, n_samples: int = 400, seed: int | None = 0,
                 n_per_edge: int = 7, max_factor: float = 50.0, rel_precision: float = 0.05) -> float:
    """The largest common factor f such that every size of ``errors`` times f keeps ``target_yield``.

    0.0 when even a hundredth of every size misses it (the design has no margin left);
    ``max_factor`` when it holds up to there. Bisection on log f, common random numbers.
    """
    _check_run(systems, test_volume_m, uniformity, n_samples)
    draws = _draws(int(n_samples), max(len(s.coils) for s in systems), seed)
    base = errors.as_vector()

    def yield_at(f):
        return monte_carlo(systems, test_volume_m, uniformity, BuildErrors.from_vector(base * f), n_samples,
                           seed, n_per_edge, _draws_cache=draws).yield_share

    hi = float(max_factor)
    if yield_at(hi) >= target_yield:
        return hi
    lo = 0.01
    y_lo = yield_at(lo)
    if y_lo < target_yield:
        return 0.0
    return _log_bisect(yield_at, target_yield, lo, y_lo, hi, rel_precision)[0]
