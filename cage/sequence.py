"""Field sequences: a sphere of directions, time series of fields, and what the supplies can follow.

Everything here is pure: arrays in, arrays and frozen dataclasses out. The reader of the
time-series CSV is :func:`cage.measurements.read_field_series_csv`.

Units: fields in nT, currents in A, times in s, voltages in V, resistances in ohm,
inductances in H. Vectors are in the ``cage`` frame unless a name says otherwise.
"""
from __future__ import annotations

import math
import numbers
from dataclasses import dataclass

import numpy as np

from cage.errors import InfeasibleError, InputError

AXES = ("x", "y", "z")
MAX_SPHERE_POINTS = 100_000
MAX_RESAMPLED_POINTS = 10_000_000

# Golden angle pi * (3 - sqrt(5)) rad, about 137.5 degrees.
GOLDEN_ANGLE_RAD = math.pi * (3.0 - math.sqrt(5.0))


def _whole_number(value, what: str) -> int:
    if isinstance(value, (bool, np.bool_)):
        raise InputError(f"{what} must be a whole number, got {value!r}")
    if not isinstance(value, numbers.Integral):
        if isinstance(value, numbers.Real) and math.isfinite(value) and float(value).is_integer():
            return int(value)
        raise InputError(f"{what} must be a whole number, got {value!r}")
    return int(value)


def fibonacci_sphere(n: int) -> np.ndarray:
    """``n`` unit vectors spread nearly evenly over the sphere, as an ``(n, 3)`` array.

    The Fibonacci (golden-angle) lattice of Gonzalez, "Measurement of areas on a sphere
    using Fibonacci and latitude-longitude lattices", Math. Geosci. 42, 49-64 (2010):
    point i (0-based) has z_i = 1 - (2 i + 1) / n, so every point stands for an equal
    area 4 pi / n, and longitude i times the golden angle pi (3 - sqrt 5). The vectors are
    dimensionless directions in whatever frame the caller applies them (the cage frame
    for test fields); point 0 is nearest +z.

    Raises InputError unless 1 <= n <= 100000.
    """
    n = _whole_number(n, "number of directions")
    if not 1 <= n <= MAX_SPHERE_POINTS:
        raise InputError(f"number of directions must be between 1 and {MAX_SPHERE_POINTS}, got {n}")
    i = np.arange(n, dtype=float)
    z = 1.0 - (2.0 * i + 1.0) / n
    rho = np.sqrt(np.clip(1.0 - z * z, 0.0, None))
    lon = GOLDEN_ANGLE_RAD * i
    return np.column_stack((rho * np.cos(lon), rho * np.sin(lon), z))


def _as_series(t_s, field_nT) -> tuple[np.ndarray, np.ndarray]:
    t = np.asarray(t_s, dtype=float)
    b = np.asarray(field_nT, dtype=float)
    if t.ndim != 1:
        raise InputError(f"times must be a 1-d sequence, got shape {t.shape}")
    if b.shape != (t.size, 3):
        raise InputError(f"fields must have shape ({t.size}, 3) to match the times, got {b.shape}")
    if t.size < 2:
        raise InputError(f"a time series needs at least 2 samples, got {t.size}")
    bad = np.flatnonzero(~np.isfinite(t))
    if bad.size:
        raise InputError(f"time of sample {bad[0] + 1} is not finite ({t[bad[0]]})")
    bad_rows = np.flatnonzero(~np.all(np.isfinite(b), axis=1))
    if bad_rows.size:
        raise InputError(f"field of sample {bad_rows[0] + 1} is not finite")
    steps = np.diff(t)
    back = np.flatnonzero(steps <= 0)
    if back.size:
        k = back[0] + 1
        raise InputError(
            f"times must increase strictly: sample {k + 1} at {t[k]:g} s "
            f"is not after sample {k} at {t[k - 1]:g} s"
        )
    return t, b


def resample_series(t_s, field_nT, rate_Hz: float) -> tuple[np.ndarray, np.ndarray]:
    """Linear interpolation of a field series onto a uniform grid at ``rate_Hz``.

    t_s: (n,) strictly increasing times in s; field_nT: (n, 3) fields in nT (any frame,
    kept as given). The grid is t_s[0] + k / rate_Hz for k = 0, 1, ... up to the last
    time (a grid point within 1e-9 of a step of the last time counts as inside). Each
    component is interpolated piecewise linearly between samples (numpy.interp).

    Returns (t_new (m,), field_new (m, 3)). Raises InputError for a bad series or rate,
    or a grid longer than 10 million points.
    """
    t, b = _as_series(t_s, field_nT)
    try:
        rate = float(rate_Hz)
    except (TypeError, ValueError):
        raise InputError(f"update rate must be a number in Hz, got {rate_Hz!r}") from None
    if not math.isfinite(rate) or rate <= 0:
        raise InputError(f"update rate must be a positive number of Hz, got {rate_Hz!r}")
    span = (t[-1] - t[0]) * rate
    if span + 1 > MAX_RESAMPLED_POINTS:
        raise InputError(
            f"resampling {t[-1] - t[0]:g} s at {rate:g} Hz gives {math.floor(span) + 1} points, "
            f"more than {MAX_RESAMPLED_POINTS}"
        )
    m = int(math.floor(span + 1e-9)) + 1
    # Each grid time from its index, not by accumulating steps, so no drift builds up.
    t_new = t[0] + np.arange(m, dtype=float) / rate
    t_new = np.minimum(t_new, t[-1])
    field_new = np.column_stack([np.interp(t_new, t, b[:, c]) for c in range(3)])
    return t_new, field_new


def currents_for_fields_A(coupling_nT_per_A, ambient_nT, targets_nT) -> np.ndarray:
    """Currents that make the target fields: I = K^-1 (target - ambient).

    coupling_nT_per_A: K, (3, 3), row = field component, column = cage axis, in nT/A (a
    design's coupling matrix or a calibration fit). ambient_nT: (3,) the field with all
    currents zero, in the same frame as K's rows (cage frame). targets_nT: (3,) or (m, 3).
    Returns currents in A, shape (3,) or (m, 3), columns x, y, z.

    Raises InputError for non-finite or mis-shaped input, InfeasibleError when K is
    singular (some field direction cannot be made with any currents).
    """
    k = np.asarray(coupling_nT_per_A, dtype=float)
    b0 = np.asarray(ambient_nT, dtype=float)
    tgt = np.asarray(targets_nT, dtype=float)
    if k.shape != (3, 3):
        raise InputError(f"coupling matrix must be 3 x 3 (nT/A), got shape {k.shape}")
    if b0.shape != (3,):
        raise InputError(f"ambient field must have 3 components (nT), got shape {b0.shape}")
    single = tgt.ndim == 1
    t2 = tgt.reshape(1, -1) if single else tgt
    if t2.ndim != 2 or t2.shape[1] != 3:
        raise InputError(f"target fields must have shape (3,) or (m, 3) in nT, got {tgt.shape}")
    if not np.all(np.isfinite(k)):
        raise InputError("coupling matrix has a non-finite entry")
    if not np.all(np.isfinite(b0)):
        raise InputError("ambient field has a non-finite component")
    bad = np.flatnonzero(~np.all(np.isfinite(t2), axis=1))
    if bad.size:
        raise InputError(f"target field {bad[0] + 1} has a non-finite component")
    check_coupling_invertible(k)
    currents = np.linalg.solve(k, (t2 - b0).T).T
    return currents[0] if single else currents


def check_coupling_invertible(coupling_nT_per_A, max_condition: float = 1e10) -> None:
    """Raise InfeasibleError when the 3 x 3 coupling (nT/A) cannot be inverted reliably.

    The test is the 2-norm condition number (ratio of largest to smallest singular value)
    against ``max_condition``; the message names the weakest field direction in numbers.
    """
    k = np.asarray(coupling_nT_per_A, dtype=float)
    u, s, _ = np.linalg.svd(k)
    if s[0] == 0 or s[-1] <= s[0] / max_condition:
        d = u[:, -1]
        d = d * np.sign(d[np.argmax(np.abs(d))])
        where = ", ".join(f"{a} {v:+.3f}" for a, v in zip(AXES, d))
        raise InfeasibleError(
            f"the coupling matrix is singular: along the field direction ({where}) it gives "
            f"{s[-1]:.3g} nT/A against {s[0]:.3g} nT/A along the strongest, so that field "
            "cannot be set"
        )


@dataclass(frozen=True, eq=False)
class SlewCheck:
    """Whether the supplies can follow a current sequence, step by step and axis by axis.

    required_voltage_V: (m, 3) the least supply voltage magnitude that reaches step k's
        current within one step and then holds it (see :func:`check_slew`).
    current_over_limit: (m, 3) True where |I| exceeds the axis's max current.
    voltage_over_limit: (m, 3) True where required_voltage_V exceeds the axis's max voltage.
    failing_steps: 0-based indices of steps with any flag on any axis.
    time_constant_s: (3,) L / R per axis.
    dt_s: the step length in s.
    peak_voltage_V: (3,) the largest required voltage per axis over the sequence.
    peak_current_A: (3,) the largest |I| per axis.
    """

    required_voltage_V: np.ndarray
    current_over_limit: np.ndarray
    voltage_over_limit: np.ndarray
    failing_steps: tuple[int, ...]
    time_constant_s: np.ndarray
    dt_s: float
    peak_voltage_V: np.ndarray
    peak_current_A: np.ndarray

    @property
    def ok(self) -> bool:
        """True when every step can be followed on every axis."""
        return not self.failing_steps


def _per_axis(value, what: str, *, positive: bool, allow_zero: bool = False) -> np.ndarray:
    try:
        arr = np.broadcast_to(np.asarray(value, dtype=float), (3,)).copy()
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number or 3 numbers (x, y, z), got {value!r}") from None
    for a, v in zip(AXES, arr):
        if not math.isfinite(v):
            raise InputError(f"{what} on axis {a} is not finite ({v})")
        if positive and (v < 0 or (v == 0 and not allow_zero)):
            raise InputError(f"{what} on axis {a} must be {'>= 0' if allow_zero else '> 0'}, got {v:g}")
    return arr


def check_slew(
    currents_A,
    dt_s: float,
    resistance_hot_ohm,
    inductance_H,
    max_voltage_V,
    max_current_A,
    initial_current_A=None,
) -> SlewCheck:
    """Check that each axis's supply can follow a current sequence at a uniform step ``dt_s``.

    currents_A: (m, 3) the current per axis (x, y, z) at steps 0..m-1, in A.
    resistance_hot_ohm: (3,) coil resistance at working temperature including the leads.
    inductance_H: (3,) self-inductance of each axis's series pair (0 allowed).
    max_voltage_V, max_current_A: (3,) the supply limits (each a number or three numbers).
    initial_current_A: the current before step 0; None (default) means the coil is already
        settled at step 0's current, so step 0 only needs to hold it.

    Model: each axis is a series R-L circuit, L dI/dt + R I = V (supply treated as a
    voltage source that can give either sign up to max_voltage_V). To move from I0 to I1
    within dt, the reachable currents at time dt are I0 e^-a +/- (Vmax / R)(1 - e^-a),
    a = dt R / L (solution of the linear ODE: the drive enters through a positive kernel,
    so a constant full voltage reaches farthest). Hence the least voltage that makes the
    step is the constant

        V* = R I1 + R (I1 - I0) / (e^a - 1),

    and holding I1 afterwards needs |I1| R. The required voltage is max(|V*|, |I1| R).
    For dt << L/R it tends to the finite-difference form I1 R + L (I1 - I0)/dt, and it is
    never more than |I1| R + L |I1 - I0| / dt (since e^a - 1 >= a), so this is the exact,
    less pessimistic version of that bound. With L = 0 it is |I1| R.

    Returns a :class:`SlewCheck`. Raises InputError for non-finite or mis-shaped input.
    """
    i = np.asarray(currents_A, dtype=float)
    if i.ndim != 2 or i.shape[1] != 3 or i.shape[0] < 1:
        raise InputError(f"currents must have shape (m, 3) with m >= 1, in A; got {i.shape}")
    bad = np.flatnonzero(~np.all(np.isfinite(i), axis=1))
    if bad.size:
        raise InputError(f"current at step {bad[0]} is not finite")
    try:
        dt = float(dt_s)
    except (TypeError, ValueError):
        raise InputError(f"step length must be a number of seconds, got {dt_s!r}") from None
    if not math.isfinite(dt) or dt <= 0:
        raise InputError(f"step length must be a positive number of seconds, got {dt_s!r}")
    r = _per_axis(resistance_hot_ohm, "hot resistance (ohm)", positive=True)
    ind = _per_axis(inductance_H, "inductance (H)", positive=True, allow_zero=True)
    vmax = _per_axis(max_voltage_V, "max voltage (V)", positive=True)
    imax = _per_axis(max_current_A, "max current (A)", positive=True)
    if initial_current_A is None:
        prev0 = i[0]
    else:
        prev0 = _per_axis(initial_current_A, "initial current (A)", positive=False)
    prev = np.vstack((prev0, i[:-1]))

    # coefficient R / (e^a - 1), a = dt R / L; zero for L = 0 (no inductive term).
    with np.errstate(over="ignore", divide="ignore"):
        a = np.where(ind > 0, dt * r / np.where(ind > 0, ind, 1.0), np.inf)
        coef = np.where(np.isfinite(a), r / np.expm1(np.minimum(a, 700.0)), 0.0)
    v_step = r * i + coef * (i - prev)
    v_hold = np.abs(i) * r
    required = np.maximum(np.abs(v_step), v_hold)

    # A relative tolerance of 1e-12 so a current set exactly at its limit is not flagged.
    cur_over = np.abs(i) > imax * (1 + 1e-12)
    volt_over = required > vmax * (1 + 1e-12)
    failing = np.flatnonzero(np.any(cur_over | volt_over, axis=1))
    with np.errstate(divide="ignore"):
        tau = np.where(r > 0, ind / r, np.inf)
    return SlewCheck(
        required_voltage_V=required,
        current_over_limit=cur_over,
        voltage_over_limit=volt_over,
        failing_steps=tuple(int(k) for k in failing),
        time_constant_s=tau,
        dt_s=dt,
        peak_voltage_V=required.max(axis=0),
        peak_current_A=np.abs(i).max(axis=0),
    )


def polarity_flip_warnings(table, dwell_s: float) -> list[str]:
    """One warning per unipolar axis whose current changes sign between steps of a timed
    sequence (a ``cage.setpoints.SetpointTable``, rows one step apart of ``dwell_s`` seconds): each
    change needs its polarity switch thrown, at zero current, within a step."""
    from cage.numberformat import count_text

    out = []
    reverse = table.polarity_reverse
    for j, axis in enumerate("xyz"):
        if not table.unipolar[j]:
            continue
        flips = np.flatnonzero(reverse[1:, j] != reverse[:-1, j]) + 1
        if flips.size:
            out.append(f"axis {axis}: unipolar supply, and the current changes sign {count_text(flips.size, 'time')} "
                       f"(first at row {table.labels[flips[0]]}): each needs the "
                       f"polarity switch thrown at zero current within a {dwell_s:g} s step, so the timed replay "
                       f"stalls there; a bipolar supply follows it")
    return out
