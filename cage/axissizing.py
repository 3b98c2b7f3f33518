"""Uniformity, smallest size and build sensitivity of one axis of any coil system (cage frame, SI).

Deviation, as in ``cage.uniformity``: for one axis driven alone, max |B(p) - B(0)| / |B(0)| over
the test volume, which for a wire-free volume lies on its surface (maximum principle), so a
box is sampled on its six faces (n x n grid per face, corners included) and a sphere on a
Fibonacci lattice plus the six axis points. The test volume is a centred box (``box_m``,
sides x, y, z) or a centred sphere (``sphere_radius_m``).

Smallest size (``smallest_uniform_axis``): the same method as the pair sizing of the planner
(``cage.optimise.min_uniform_size_m``): from the smallest size whose wires stay outside the
test volume, grow by 25 % until the exact-field deviation meets the tolerance, then bisect to
a relative 2e-4. Scaling a system up is the same as shrinking the volume, and the deviation
over nested wire-free volumes grows with their size, so the search is well posed.

Sensitivity (``axis_sensitivity``): the largest error of a single coil, either a shift of its
plane along the axis or a tilt of its plane about a transverse axis through its centre, that
keeps the deviation within the tolerance, with the exact field; each coil and direction is
tried and the smallest is reported. Found by bisection (the deviation grows with the error
over the ranges searched; a design planned at the edge of its tolerance has almost none).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cage.coilaxis import CoilAxis, axis_filaments, check_coil_axis
from cage.coils import AXES, FilamentPack, Filaments, filaments_field_T
from cage.errors import InfeasibleError, InputError

__all__ = [
    "AxisSizing",
    "AxisSensitivity",
    "test_volume_points_m",
    "axis_deviation",
    "wires_clear_volume",
    "smallest_uniform_axis",
    "perturbed_filaments",
    "deviation_with_error",
    "axis_sensitivity",
    "sensitivity_summary_lines",
    "axis_pack_difference",
]

UNIFORMITY_GRID = 9
SPHERE_POINTS = 600
SIZE_PRECISION = 2e-4
MAX_SIZE_M = 50.0
MAX_SHIFT_PER_SIZE = 0.05  # the largest shift searched, per unit size
MAX_TILT_DEG = 10.0


def _volume(box_m, sphere_radius_m):
    from cage.uniformity import _box_sides, _unit_box_surface, _unit_sphere_surface

    if (box_m is None) == (sphere_radius_m is None):
        raise InputError("give exactly one test volume: box_m (three sides) or sphere_radius_m")
    if box_m is not None:
        sides = _box_sides(box_m)
        return "box", sides / 2.0, _unit_box_surface(UNIFORMITY_GRID) * (sides / 2.0)
    r = float(sphere_radius_m)
    if not (math.isfinite(r) and r > 0):
        raise InputError(f"sphere_radius_m must be a positive number, got {sphere_radius_m!r}")
    return "sphere", r, _unit_sphere_surface(SPHERE_POINTS) * r


def test_volume_points_m(box_m=None, sphere_radius_m=None) -> np.ndarray:
    """Surface points of the test volume (box faces on a 9 x 9 grid, or the sphere lattice)."""
    return _volume(box_m, sphere_radius_m)[2]


def _deviation(filaments: Filaments, pts: np.ndarray) -> float:
    from cage.uniformity import deviation_of_field

    return deviation_of_field(filaments_field_T(filaments, np.vstack([np.zeros((1, 3)), pts])))


def axis_deviation(ax: CoilAxis, box_m=None, sphere_radius_m=None, pack: FilamentPack | None = None) -> float:
    """Largest relative deviation |B(p) - B(0)| / |B(0)| of ``ax`` over the test volume."""
    return _deviation(axis_filaments(ax, pack), test_volume_points_m(box_m, sphere_radius_m))


def _coil_clear(shape: str, a: int, position: float, size: float, kind: str, half) -> bool:
    lateral_coil = size / 2.0 if shape == "square" else size
    if kind == "sphere":
        return math.hypot(position, lateral_coil) > half
    u, v = (a + 1) % 3, (a + 2) % 3
    lateral_box = max(half[u], half[v]) if shape == "square" else math.hypot(half[u], half[v])
    return abs(position) > half[a] or lateral_coil > lateral_box


def wires_clear_volume(ax: CoilAxis, box_m=None, sphere_radius_m=None) -> bool:
    """True when no coil of ``ax`` passes through the test volume (a box may pass through a
    coil's aperture)."""
    kind, half, _ = _volume(box_m, sphere_radius_m)
    a = AXES.index(ax.axis)
    return all(_coil_clear(ax.shape, a, c.position_m, c.size_m, kind, half) for c in ax.coils)


def _clear_size_m(axis: str, shape: str, system: str, kind: str, half) -> float:
    """Smallest nominal size at which every coil of the system clears the test volume."""
    from cage.coilsystems import system_geometry

    g = system_geometry(system, shape)
    a = AXES.index(axis)
    need = 0.0
    for p, s in zip(g.positions, g.sizes):
        lat = s / 2.0 if shape == "square" else s
        if kind == "sphere":
            k = half / math.hypot(p, lat)
        else:
            u, v = (a + 1) % 3, (a + 2) % 3
            lateral_box = max(half[u], half[v]) if shape == "square" else math.hypot(half[u], half[v])
            k = min(half[a] / abs(p) if p != 0 else math.inf, lateral_box / lat)
        need = max(need, k)
    return need * 1.001


@dataclass(frozen=True)
class AxisSizing:
    """The smallest axis of one system meeting the tolerance.

    coil_axis: the coils (the system's whole-turns pattern, multiplier 1); size_m: its nominal
    size (side, or largest radius); deviation: reached over the test volume; system, shape.
    """

    coil_axis: CoilAxis
    size_m: float
    deviation: float
    system: str
    shape: str


def smallest_uniform_axis(axis: str, shape: str, system: str, tolerance: float, *, box_m=None,
                          sphere_radius_m=None, lower_m: float = 0.0) -> AxisSizing:
    """Smallest size of ``system`` (whole-turns geometry, ``cage.coilsystems``) on cage axis
    ``axis`` whose deviation over the test volume is within ``tolerance`` (relative, e.g. 1e-3).

    Test volume: box_m (three sides, m) or sphere_radius_m. lower_m: never smaller than this.
    Bisection on the exact field to a relative 2e-4; InfeasibleError beyond 50 m.
    """
    from cage.coilsystems import system_axis
    from cage.uniformity import _tolerance

    tol = _tolerance(tolerance)
    kind, half, pts = _volume(box_m, sphere_radius_m)

    def dev(size: float) -> float:
        return _deviation(axis_filaments(system_axis(axis, shape, system, size)), pts)

    lo = max(_clear_size_m(axis, shape, system, kind, half), float(lower_m))
    hi = lo
    d = dev(hi)
    if d <= tol:
        return AxisSizing(system_axis(axis, shape, system, hi), hi, d, system, shape)
    while d > tol:
        lo, hi = hi, hi * 1.25
        if hi > MAX_SIZE_M:
            where = "sphere" if kind == "sphere" else "box"
            raise InfeasibleError(f"no {shape} {system} {axis} axis up to {MAX_SIZE_M:g} m gives "
                                  f"{tol * 100:g} % uniformity over the test {where}")
        d = dev(hi)
    best = d
    while hi - lo > SIZE_PRECISION * hi:
        mid = 0.5 * (lo + hi)
        dm = dev(mid)
        if dm <= tol:
            hi, best = mid, dm
        else:
            lo = mid
    return AxisSizing(system_axis(axis, shape, system, hi), hi, best, system, shape)


# ---------------------------------------------------------------------------------------------
# Build errors
# ---------------------------------------------------------------------------------------------


def _rotation(axis_vec: np.ndarray, angle: float) -> np.ndarray:
    """Rodrigues rotation matrix about the unit vector axis_vec by angle (rad)."""
    k = axis_vec / np.linalg.norm(axis_vec)
    kx = np.array([[0, -k[2], k[1]], [k[2], 0, -k[0]], [-k[1], k[0], 0]])
    return np.eye(3) + math.sin(angle) * kx + (1 - math.cos(angle)) * kx @ kx


def perturbed_filaments(ax: CoilAxis, coil_index: int, shift_m: float = 0.0, tilt_deg: float = 0.0) -> Filaments:
    """Filaments of ``ax`` (one filament per coil) with coil ``coil_index`` moved ``shift_m``
    along the axis and tilted ``tilt_deg`` about the transverse axis (the next cage axis after
    ``ax.axis``) through its own centre."""
    from cage.biot_savart import Loop, Polygon
    from cage.coils import coil_filaments

    check_coil_axis(ax)
    a = AXES.index(ax.axis)
    u = np.zeros(3)
    u[(a + 1) % 3] = 1.0
    rot = _rotation(u, math.radians(tilt_deg))
    out = Filaments((), ())
    for k, c in enumerate(ax.coils):
        pos = c.position_m + (shift_m if k == coil_index else 0.0)
        f = coil_filaments(ax.shape, ax.axis, float(c.size_m), float(pos), int(c.turns))
        if k == coil_index and tilt_deg != 0.0:
            centre = np.zeros(3)
            centre[a] = pos
            f = Filaments(
                tuple(Polygon((p.vertices_m - centre) @ rot.T + centre, p.current_A) for p in f.polygons),
                tuple(Loop(lp.centre_m, rot @ lp.normal, lp.radius_m, lp.current_A) for lp in f.loops))
        out = out + f
    return out


def deviation_with_error(ax: CoilAxis, coil_index: int, shift_m: float = 0.0, tilt_deg: float = 0.0,
                         box_m=None, sphere_radius_m=None) -> float:
    """Deviation over the test volume with one coil shifted and/or tilted (see perturbed_filaments)."""
    return _deviation(perturbed_filaments(ax, coil_index, shift_m, tilt_deg),
                      test_volume_points_m(box_m, sphere_radius_m))


@dataclass(frozen=True)
class AxisSensitivity:
    """How much one coil may be misplaced before the axis misses its tolerance.

    max_position_error_m: the largest shift of any single coil's plane along the axis that
    keeps the deviation within tolerance (the worst coil and direction). max_tilt_deg: the
    same for a tilt of one coil's plane. worst_shift_coil, worst_tilt_coil: the position (m)
    of the coil that limits each. deviation: the nominal deviation; tolerance: the requirement.
    A value equal to the search limit (5 % of the size, 10 degrees) means "at least this".
    """

    max_position_error_m: float
    max_tilt_deg: float
    worst_shift_coil_m: float
    worst_tilt_coil_m: float
    deviation: float
    tolerance: float


def _largest_ok(ok, upper: float, rel: float = 1e-3) -> float:
    """Largest error in [0, upper] where ``ok`` holds (it holds at 0), by bisection to ``rel`` of
    the answer itself (not of ``upper``: a strict design's limits are far below it, and a step
    of upper / 1000 would print them as 0), with a floor of 1e-9 x upper."""
    from cage.layout import _bisect_edge

    return upper if ok(upper) else _bisect_edge(ok, good=0.0, bad=upper, tolerance=1e-9 * upper, rel=rel)


def axis_sensitivity(ax: CoilAxis, tolerance: float, *, box_m=None, sphere_radius_m=None) -> AxisSensitivity:
    """The largest single-coil shift and tilt that keep ``ax`` within ``tolerance`` over the
    test volume (exact field; see the module docstring). The coils are symmetric about the
    centre, so the coils at or beyond the centre stand for their mirror images."""
    from cage.uniformity import _tolerance

    tol = _tolerance(tolerance)
    check_coil_axis(ax)
    pts = test_volume_points_m(box_m, sphere_radius_m)
    nominal = _deviation(axis_filaments(ax), pts)
    if nominal > tol:
        return AxisSensitivity(0.0, 0.0, ax.coils[-1].position_m, ax.coils[-1].position_m, nominal, tol)
    symmetric = all(math.isclose(a.position_m, -b.position_m, abs_tol=1e-12 * ax.size_m) and a.turns == b.turns
                    for a, b in zip(ax.coils, reversed(ax.coils)))
    indices = [k for k, c in enumerate(ax.coils) if c.position_m >= 0] if symmetric else range(ax.count)
    max_shift = MAX_SHIFT_PER_SIZE * ax.size_m
    best_shift, shift_coil = math.inf, ax.coils[-1].position_m
    best_tilt, tilt_coil = math.inf, ax.coils[-1].position_m
    for k in indices:
        for sign in (1.0, -1.0):
            s = _largest_ok(lambda d: _deviation(perturbed_filaments(ax, k, sign * d), pts) <= tol, max_shift)
            if s < best_shift:
                best_shift, shift_coil = s, ax.coils[k].position_m
        t = _largest_ok(lambda g: _deviation(perturbed_filaments(ax, k, 0.0, g), pts) <= tol, MAX_TILT_DEG)
        if t < best_tilt:
            best_tilt, tilt_coil = t, ax.coils[k].position_m
    return AxisSensitivity(best_shift, best_tilt, shift_coil, tilt_coil, nominal, tol)


def sensitivity_summary_lines(axes, tolerance: float, *, box_m=None, sphere_radius_m=None) -> list[str]:
    """One plain line per axis for the design summary: the largest single-coil position error and
    tilt that keep ``tolerance`` over the test volume (``axis_sensitivity``), e.g.
    ``x (four square coils): keep each coil plane within 1.5 mm of its place and tilted less
    than 0.15 deg for 0.1 % over the test volume``.

    axes: ``cage.coilaxis.CoilAxis`` per axis (e.g. ``Design.axis_cage.axes``).
    """
    out = []
    for ax in axes:
        s = axis_sensitivity(ax, tolerance, box_m=box_m, sphere_radius_m=sphere_radius_m)
        what = f"{ax.axis} ({ax.system} {ax.shape} coils)" if ax.system != "pair" else f"{ax.axis} ({ax.shape} pair)"
        if s.deviation > s.tolerance:
            out.append(f"{what}: misses {tolerance * 100:g} % even as built exactly "
                       f"({s.deviation * 100:.3g} %)")
            continue
        at_least_shift = "at least " if s.max_position_error_m >= MAX_SHIFT_PER_SIZE * ax.size_m * (1 - 1e-9) else ""
        at_least_tilt = "at least " if s.max_tilt_deg >= MAX_TILT_DEG * (1 - 1e-9) else ""
        out.append(f"{what}: keep each coil plane within {at_least_shift}{s.max_position_error_m * 1000:.3g} mm "
                   f"of its place and its tilt under {at_least_tilt}{s.max_tilt_deg:.3g} deg for "
                   f"{tolerance * 100:g} % over the test volume (as designed: {s.deviation * 100:.3g} %)")
    return out


def axis_pack_difference(ax: CoilAxis, pack: FilamentPack, box_m, n_per_edge: int = 9):
    """``cage.coils.PackDifference`` of an axis of any coils: its winding-pack model (every coil's
    turns spread over its channel) against the one-filament model, per ampere, over the test box
    (faces sampled, as ``cage.coils.pack_vs_filament_difference``)."""
    from cage.coils import filaments_pack_difference

    if not isinstance(pack, FilamentPack):
        raise InputError(f"pack must be a FilamentPack, got {type(pack).__name__}")
    return filaments_pack_difference(axis_filaments(ax), axis_filaments(ax, pack), ax.axis, box_m, n_per_edge)
