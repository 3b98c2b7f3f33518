"""Field uniformity of one coil pair, and the coupling matrix of a cage (cage frame, SI units).

Deviation. For one axis driven alone, the deviation at a point p is the relative vector
deviation |B(p) - B(0)| / |B(0)|, B(0) the field at the cage centre. It does not depend on the
current (the field is linear in it), so every function here works per ampere.

Where the maximum is. In a region free of current each Cartesian component of B - B(0) is a
harmonic function, so |B - B(0)| (the norm of a harmonic vector field) is subharmonic and takes
its maximum over a closed region on the region's boundary (maximum principle; e.g. J. D.
Jackson, Classical Electrodynamics, 3rd ed., sec. 1.9, for harmonic functions). Box and sphere
deviations therefore sample surfaces only (plus the centre for B(0)):

* box: the six faces, each on an n x n grid including edges and corners (default 9 x 9, 386
  distinct points), which is what the planner calls thousands of times (well under 10 ms);
* sphere: a Fibonacci lattice on the surface (default 600 points) plus the six points on the
  axes, and optionally a few coarser interior shells as a check.

The maximum principle holds only while the region contains no wire; the largest-cube and
largest-sphere searches stay inside the wire-free region of the pair.

Largest uniform cube / sphere: bisection on the side (radius) with the exact field, not a
Taylor expansion; the deviation over nested centred regions grows with their size, again by
the maximum principle, so the search is well posed.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cage.coils import AXES, CoilCage, CoilPair, FilamentPack, check_cage, check_pair, pair_field_T
from cage.checks import positive_number as _positive
from cage.errors import InputError

__all__ = [
    "box_points_m",
    "sphere_points_m",
    "deviation_of_field",
    "box_deviation",
    "sphere_deviation",
    "largest_uniform_cube_side_m",
    "largest_uniform_sphere_radius_m",
    "wire_free_cube_side_m",
    "wire_free_sphere_radius_m",
    "DeviationMap",
    "deviation_map",
    "coupling_T_per_A",
]

from cage.samplepoints import (DEFAULT_BOX_GRID, DEFAULT_SPHERE_POINTS, _box_sides, _grid_size,  # noqa: F401
                               _unit_box_surface, _unit_sphere_surface, box_points_m, deviation_of_field,
                               sphere_points_m)


def _deviation_at(pair: CoilPair, pts: np.ndarray, pack: FilamentPack | None) -> float:
    b = pair_field_T(pair, 1.0, np.vstack([np.zeros((1, 3)), pts]), pack=pack)
    return deviation_of_field(b)


def box_deviation(pair: CoilPair, box_m, n_per_edge: int = DEFAULT_BOX_GRID,
                  pack: FilamentPack | None = None) -> float:
    """Largest |B(p) - B(0)| / |B(0)| over the centred box box_m = (x, y, z) sides in metres.

    ``pair`` driven alone. Samples only the six faces, each on an n_per_edge x n_per_edge grid
    with edges and corners (the maximum of the deviation over a wire-free box lies on its
    surface, see the module docstring); 386 points for the default 9. Fast: about a
    millisecond per call.
    """
    check_pair(pair)
    return _deviation_at(pair, box_points_m(box_m, n_per_edge), pack)


def sphere_deviation(pair: CoilPair, radius_m: float, n_surface: int = DEFAULT_SPHERE_POINTS,
                     interior_shells: int = 0, pack: FilamentPack | None = None) -> float:
    """Largest |B(p) - B(0)| / |B(0)| over the centred sphere of radius_m (metres).

    ``pair`` driven alone. Samples the surface (Fibonacci lattice of n_surface points plus the
    six axis points) and ``interior_shells`` coarser shells inside (see sphere_points_m).
    """
    check_pair(pair)
    return _deviation_at(pair, sphere_points_m(radius_m, n_surface, interior_shells), pack)


def wire_free_cube_side_m(pair: CoilPair) -> float:
    """Side of the largest centred, axis-aligned cube that no wire of ``pair`` enters (m).

    A cube of half side h meets a coil iff h >= spacing/2 and h reaches the centreline across
    the axis: h >= side/2 (square), h >= radius/sqrt(2) (round, the 45-degree points).
    """
    check_pair(pair)
    lateral = pair.size_m / 2.0 if pair.shape == "square" else pair.size_m / math.sqrt(2.0)
    return 2.0 * max(pair.spacing_m / 2.0, lateral)


def wire_free_sphere_radius_m(pair: CoilPair) -> float:
    """Distance from the centre to the nearest point of either coil's centreline (m)."""
    check_pair(pair)
    return math.hypot(pair.spacing_m / 2.0, pair.half_width_m)


def _bisect(deviation, upper: float, tolerance: float, rel_precision: float) -> float:
    if deviation(upper) <= tolerance:
        return upper
    lo, hi = 0.0, upper
    while hi - lo > rel_precision * upper:
        mid = 0.5 * (lo + hi)
        if deviation(mid) <= tolerance:
            lo = mid
        else:
            hi = mid
    return lo


def _tolerance(tolerance) -> float:
    tol = _positive(tolerance, "tolerance")
    if tol >= 1.0:
        raise InputError(f"tolerance is a relative deviation and must be below 1, got {tolerance!r}")
    return tol


def largest_uniform_cube_side_m(pair: CoilPair, tolerance: float, n_per_edge: int = DEFAULT_BOX_GRID,
                                pack: FilamentPack | None = None,
                                rel_precision: float = 1e-6) -> float:
    """Side (m) of the largest centred cube whose box_deviation stays within ``tolerance``.

    tolerance: relative deviation, e.g. 0.01 for 1 %. Bisection on the side with the exact
    field to rel_precision of the wire-free cube's side (wire_free_cube_side_m), which is
    returned when even that cube is uniform enough.
    """
    check_pair(pair)
    tol = _tolerance(tolerance)
    upper = wire_free_cube_side_m(pair) * (1.0 - 1e-9)
    unit = _unit_box_surface(_grid_size(n_per_edge, "n_per_edge"))
    return _bisect(lambda s: _deviation_at(pair, unit * (s / 2.0), pack), upper, tol, rel_precision)


def largest_uniform_sphere_radius_m(pair: CoilPair, tolerance: float,
                                    n_surface: int = DEFAULT_SPHERE_POINTS,
                                    pack: FilamentPack | None = None,
                                    rel_precision: float = 1e-6) -> float:
    """Radius (m) of the largest centred sphere whose sphere_deviation stays within ``tolerance``.

    Bisection on the radius with the exact field, surface sampling as sphere_deviation, up to
    the wire-free radius (wire_free_sphere_radius_m).
    """
    check_pair(pair)
    tol = _tolerance(tolerance)
    upper = wire_free_sphere_radius_m(pair) * (1.0 - 1e-9)
    unit = _unit_sphere_surface(_grid_size(n_surface, "n_surface", minimum=1))
    return _bisect(lambda r: _deviation_at(pair, unit * r, pack), upper, tol, rel_precision)


@dataclass(frozen=True, eq=False)
class DeviationMap:
    """Relative deviation |B(p) - B(0)| / |B(0)| on a grid in a plane, for plotting.

    plane: two axis names, e.g. "xy"; u_m, v_m: (nv, nu) coordinates along the first and
    second axis (metres, meshgrid "xy" indexing); offset_m: the plane's position along the
    third axis; deviation: (nv, nu) values (dimensionless). Points on a wire get the finite
    value of cage.biot_savart's on-wire rule.
    """

    plane: str
    offset_m: float
    u_m: np.ndarray
    v_m: np.ndarray
    deviation: np.ndarray


def deviation_map(pair: CoilPair, plane: str = "xy", size_m=(1.0, 1.0), n=(41, 41),
                  offset_m: float = 0.0, pack: FilamentPack | None = None) -> DeviationMap:
    """Deviation map of ``pair`` driven alone on a centred rectangle of the given plane.

    pair: a ``CoilPair`` or any axis of coaxial coils (``cage.coilaxis.CoilAxis``, its field by
    ``cage.coilaxis.axis_field_T``).

    plane: "xy", "yz", "zx" (or reversed); size_m: (width along the first axis, along the
    second) in metres; n: grid points (along the first, along the second); offset_m: position
    of the plane along the third axis.
    """
    from cage.coilaxis import CoilAxis, axis_field_T, check_coil_axis

    if isinstance(pair, CoilAxis):
        check_coil_axis(pair)
        field_T = axis_field_T
    else:
        check_pair(pair)
        field_T = pair_field_T
    if not isinstance(plane, str) or len(plane) != 2 or plane[0] not in AXES or plane[1] not in AXES \
            or plane[0] == plane[1]:
        raise InputError(f"plane must be two different axes out of x, y, z such as 'xy', got {plane!r}")
    sizes = np.asarray(size_m, dtype=float)
    if sizes.shape != (2,) or not np.all(np.isfinite(sizes)) or np.any(sizes <= 0):
        raise InputError(f"size_m must be two positive widths in metres, got {size_m!r}")
    try:
        nu, nv = n
    except (TypeError, ValueError):
        raise InputError(f"n must be two grid sizes (along the first axis, the second), got {n!r}") from None
    nu, nv = _grid_size(nu, "n"), _grid_size(nv, "n")
    off = float(offset_m)
    if not math.isfinite(off):
        raise InputError(f"offset_m must be finite, got {offset_m!r}")
    iu, iv = AXES.index(plane[0]), AXES.index(plane[1])
    iw = 3 - iu - iv
    u = np.linspace(-sizes[0] / 2, sizes[0] / 2, nu)
    v = np.linspace(-sizes[1] / 2, sizes[1] / 2, nv)
    uu, vv = np.meshgrid(u, v, indexing="xy")
    pts = np.zeros((uu.size + 1, 3))
    pts[1:, iu] = uu.ravel()
    pts[1:, iv] = vv.ravel()
    pts[1:, iw] = off
    b = field_T(pair, 1.0, pts, pack=pack)
    dev = np.linalg.norm(b[1:] - b[0], axis=1) / np.linalg.norm(b[0])
    return DeviationMap(plane=plane, offset_m=off, u_m=uu, v_m=vv, deviation=dev.reshape(uu.shape))


def coupling_T_per_A(cage: CoilCage, point_m=(0.0, 0.0, 0.0)) -> np.ndarray:
    """The 3 x 3 coupling matrix K (T/A) of a cage at one point (m, cage frame).

    Column j is the field at the point per ampere in axis j (x, y, z), so B = K I for the
    current vector I (A).
    """
    check_cage(cage)
    p = np.asarray(point_m, dtype=float)
    if p.shape != (3,) or not np.all(np.isfinite(p)):
        raise InputError(f"point_m must be three finite coordinates in metres, got {point_m!r}")
    return np.column_stack([pair_field_T(pair, 1.0, p) for pair in cage.pairs])
