"""Build tolerances of a coil cage: coil systems, build errors, the fields of built coils.

The Monte Carlo over built cages, the sensitivities and the tolerance spec are in
``cage.buildyield``.

Works on a GENERIC list of coils per axis (``CoilSystem``: any number of square or round coils,
each with its centre, normal, in-plane side direction, side or radius, turns and current
weight), so pairs, three- and four-coil systems are treated alike. Cage frame, SI units.

Build errors (``BuildErrors``) are standard deviations of independent normal errors:

* position_m: each coil's plane moved along its normal;
* tilt_rad: each coil turned about each of its two in-plane axes (two independent angles);
* size_m: each coil's side (square) or radius (round);
* turns: each coil's turn count, rounded to whole turns (a miscounted winding);
* orthogonality_rad: the whole axis (all its coils) turned about each of the two cage axes
  across it, about the cage centre;
* imbalance: relative error of each coil's ampere-turns per ampere (a leak or a shunt across
  one coil of a series string).

Uniformity of a built axis is as everywhere in cage: max |B(p) - B(0)| / |B(0)| over the
surface of the test box (``cage.uniformity``; the maximum principle puts the largest value on
the surface, which holds for any wire-free box), each axis driven alone. A built cage meets
the requirement when all three axes do; the yield is the share of sampled cages that meet it.

Fields: the exact filament kernels of ``cage.biot_savart`` evaluated for whole batches of
sampled coils at once (``segments_field_T``, ``loops_field_T``), one group per sample.
Random draws come from ``numpy.random.default_rng(seed)``; the same standard normal draws are
rescaled for every error size (common random numbers), so yield against an error size is a
smooth, repeatable curve and the tolerance specification is deterministic.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cage.coils import AXES, CoilPair, check_pair
from cage.errors import InputError

__all__ = [
    "Coil",
    "axis_coil",
    "CoilSystem",
    "BuildErrors",
    "SOURCES",
    "pair_system",
    "systems_of_design",
    "system_fields_T",
    "deviation_and_centre",
    "largest_uniform_sphere_radius_m",
]


@dataclass(frozen=True)
class Coil:
    """One coil of a system, modelled as one filament of ``turns`` x ``weight`` ampere-turns per A.

    centre_m: centre (3,) m; normal: unit normal (3,), a positive current is right-handed about
    it; u: unit vector in the coil plane along one side of a square (ignored for round);
    shape: "square" or "round"; size_m: side (square) or radius (round) of the centreline, m;
    turns: turns; weight: ampere-turns per ampere per turn (1 for a series winding; a four-coil
    system with unequal currents or a reversed coil uses other values).
    """

    centre_m: tuple[float, float, float]
    normal: tuple[float, float, float]
    u: tuple[float, float, float]
    shape: str
    size_m: float
    turns: float
    weight: float = 1.0


@dataclass(frozen=True)
class CoilSystem:
    """The coils of one cage axis (``axis``: "x", "y" or "z"), driven in series by one supply."""

    axis: str
    coils: tuple[Coil, ...]


def axis_coil(axis: str, shape: str, size_m: float, axial_m: float, turns: float,
              weight: float = 1.0) -> Coil:
    """A coil centred on cage axis ``axis`` in the plane axis = axial_m, sides along the other axes."""
    i = AXES.index(axis)
    centre = [0.0, 0.0, 0.0]
    centre[i] = float(axial_m)
    normal = [0.0, 0.0, 0.0]
    normal[i] = 1.0
    u = [0.0, 0.0, 0.0]
    u[(i + 1) % 3] = 1.0
    return Coil(tuple(centre), tuple(normal), tuple(u), shape, float(size_m), float(turns), float(weight))


def pair_system(pair: CoilPair) -> CoilSystem:
    """The two coils of a ``cage.coils.CoilPair`` as a generic system."""
    check_pair(pair)
    h = pair.spacing_m / 2.0
    return CoilSystem(pair.axis, (axis_coil(pair.axis, pair.shape, pair.size_m, +h, pair.turns),
                                  axis_coil(pair.axis, pair.shape, pair.size_m, -h, pair.turns)))


def systems_of_design(design) -> tuple[CoilSystem, CoilSystem, CoilSystem]:
    """The three axis systems of a ``cage.designfile.Design`` (x, y, z).

    An axis that lists its coils (``coil_axis`` with ``shape`` and ``coils`` of ``position_m``,
    ``turns``, ``size_m``: three- and four-coil systems) gives every coil; otherwise its pair.
    """
    out = []
    for name in AXES:
        ad = design.axis(name)
        listed = getattr(ad, "coil_axis", None)
        if listed is not None:
            out.append(CoilSystem(name, tuple(axis_coil(name, listed.shape, c.size_m, c.position_m, c.turns)
                                              for c in listed.coils)))
        else:
            out.append(pair_system(ad.pair))
    return tuple(out)


# ---------------------------------------------------------------------------------------------
# Build errors
# ---------------------------------------------------------------------------------------------

SOURCES = ("position", "tilt", "size", "turns", "orthogonality", "imbalance")
"""Error sources, in the order of ``BuildErrors``'s fields."""

SOURCE_UNITS = {"position": ("mm", 1e-3), "tilt": ("deg", math.pi / 180.0), "size": ("mm", 1e-3),
                "turns": ("turns", 1.0), "orthogonality": ("deg", math.pi / 180.0),
                "imbalance": ("%", 1e-2)}
"""Display unit of each source and its size in SI (m, rad, turns, fraction)."""


@dataclass(frozen=True)
class BuildErrors:
    """Standard deviations of the build errors (see the module docstring), SI units.

    Defaults are common practice for a frame of aluminium extrusion or wood built with a tape,
    a square and a level: 2 mm on positions and sizes, 0.2 degree tilt, 0.1 degree between axes,
    turns counted to 0.3 turn, 0.1 % ampere-turn imbalance between coils.
    """

    position_m: float = 2e-3
    tilt_rad: float = math.radians(0.2)
    size_m: float = 2e-3
    turns: float = 0.3
    orthogonality_rad: float = math.radians(0.1)
    imbalance: float = 1e-3

    def __post_init__(self):
        for name in ("position_m", "tilt_rad", "size_m", "turns", "orthogonality_rad", "imbalance"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v < 0:
                raise InputError(f"build error {name} must be a finite number of at least 0, got {v!r}")

    def as_vector(self) -> np.ndarray:
        return np.array([self.position_m, self.tilt_rad, self.size_m, self.turns,
                         self.orthogonality_rad, self.imbalance])

    @staticmethod
    def from_vector(v) -> "BuildErrors":
        return BuildErrors(*(float(x) for x in v))

    def in_units(self) -> dict:
        """The sizes in their display units, keyed ``position_mm`` etc."""
        out = {}
        for name, value in zip(SOURCES, self.as_vector()):
            unit, si = SOURCE_UNITS[name]
            key = f"{name}_{'pct' if unit == '%' else unit}"
            out[key] = float(value / si)
        return out


# ---------------------------------------------------------------------------------------------
# Geometry of built coils and their fields
# ---------------------------------------------------------------------------------------------


def _rotate(vectors: np.ndarray, rotvec: np.ndarray) -> np.ndarray:
    """Rotate (..., 3) vectors by rotation vectors (..., 3) (Rodrigues' formula)."""
    angle = np.linalg.norm(rotvec, axis=-1, keepdims=True)
    safe = np.where(angle > 0, angle, 1.0)
    k = rotvec / safe
    cos, sin = np.cos(angle), np.sin(angle)
    kv = np.sum(k * vectors, axis=-1, keepdims=True)
    return vectors * cos + np.cross(k, vectors) * sin + k * kv * (1.0 - cos)


def _coil_arrays(system: CoilSystem):
    c = np.array([cl.centre_m for cl in system.coils], dtype=float)
    n = np.array([cl.normal for cl in system.coils], dtype=float)
    n /= np.linalg.norm(n, axis=1, keepdims=True)
    u = np.array([cl.u for cl in system.coils], dtype=float)
    u = u - np.sum(u * n, axis=1, keepdims=True) * n
    u /= np.linalg.norm(u, axis=1, keepdims=True)
    size = np.array([cl.size_m for cl in system.coils], dtype=float)
    turns = np.array([cl.turns for cl in system.coils], dtype=float)
    weight = np.array([cl.weight for cl in system.coils], dtype=float)
    square = np.array([cl.shape == "square" for cl in system.coils])
    return c, n, u, size, turns, weight, square


def _axis_frame(axis: str) -> tuple[np.ndarray, np.ndarray]:
    i = AXES.index(axis)
    e = np.eye(3)
    return e[(i + 1) % 3], e[(i + 2) % 3]


def system_fields_T(system: CoilSystem, coil_errors, axis_rotation_rad, points_m) -> np.ndarray:
    """Fields per ampere (T/A) of built copies of ``system`` at points: (G, n_points, 3).

    coil_errors: (G, n_coils, 6) per copy and coil: plane shift along the normal (m), tilts
        about u and v = n x u (rad), size change (m), turns change, relative ampere-turn error.
    axis_rotation_rad: (G, 2) the whole axis turned about the two cage axes across it (rad).
    points_m: (n_points, 3), cage frame.
    """
    from cage.batchfield import loops_field_T, segments_field_T

    err = np.asarray(coil_errors, dtype=float)
    rot = np.asarray(axis_rotation_rad, dtype=float)
    c0, n0, u0, size0, turns0, weight0, square = _coil_arrays(system)
    g_count, n_coils = err.shape[0], len(system.coils)
    if err.shape != (g_count, n_coils, 6) or rot.shape != (g_count, 2):
        raise ValueError("coil_errors must be (G, n_coils, 6) and axis_rotation_rad (G, 2)")
    v0 = np.cross(n0, u0)
    # Coil-level errors: shift along the normal, tilt about u and v (about the coil's centre).
    centre = c0[None] + err[..., 0:1] * n0[None]
    tilt = err[..., 1:2] * u0[None] + err[..., 2:3] * v0[None]
    normal = _rotate(np.broadcast_to(n0, centre.shape), tilt)
    u = _rotate(np.broadcast_to(u0, centre.shape), tilt)
    # Axis-level error: all coils of the axis turned about the cage centre.
    a1, a2 = _axis_frame(system.axis)
    axis_rot = (rot[:, 0:1] * a1[None] + rot[:, 1:2] * a2[None])[:, None, :]
    axis_rot = np.broadcast_to(axis_rot, centre.shape)
    centre, normal, u = (_rotate(x, axis_rot) for x in (centre, normal, u))
    size = size0[None] + err[..., 3]
    if np.any(size <= 0):
        raise InputError("a sampled coil size is not positive: the size error is too large for the coil")
    at = (turns0[None] + err[..., 4]) * weight0[None] * (1.0 + err[..., 5])
    group = np.broadcast_to(np.arange(g_count)[:, None], (g_count, n_coils))
    pts = np.asarray(points_m, dtype=float)
    out = np.zeros((g_count, pts.shape[0], 3))
    if np.any(~square):
        m = ~square
        out += loops_field_T(pts, centre[:, m].reshape(-1, 3), normal[:, m].reshape(-1, 3),
                             size[:, m].ravel(), at[:, m].ravel(), group[:, m].ravel(), g_count)
    if np.any(square):
        m = square
        cs, us, ns, hs = centre[:, m], u[:, m], normal[:, m], size[:, m][..., None] / 2.0
        vs = np.cross(ns, us)
        # Vertices (u, v) = (h,-h), (h,h), (-h,h), (-h,-h): right-handed about the normal.
        signs = ((1, -1), (1, 1), (-1, 1), (-1, -1))
        verts = [cs + hs * (su * us + sv * vs) for su, sv in signs]
        starts = np.stack(verts, axis=2)            # (G, k, 4, 3)
        ends = np.stack(verts[1:] + verts[:1], axis=2)
        cur = np.broadcast_to(at[:, m][..., None], starts.shape[:3])
        grp = np.broadcast_to(group[:, m][..., None], starts.shape[:3])
        out += segments_field_T(pts, starts.reshape(-1, 3), ends.reshape(-1, 3), cur.ravel(),
                                grp.ravel(), g_count)
    return out


def deviation_and_centre(fields_T: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(G,) max |B_k - B_0| / |B_0| and (G, 3) B_0, for fields (G, m, 3) whose row 0 is the centre."""
    b0 = fields_T[:, 0, :]
    d = fields_T[:, 1:, :] - b0[:, None, :]
    size = np.linalg.norm(b0, axis=1)
    worst = np.sqrt(np.max(np.einsum("gpk,gpk->gp", d, d), axis=1))
    dev = np.divide(worst, size, out=np.full_like(worst, np.inf), where=size > 0)  # no field: fails
    return dev, b0


def _test_points(test_volume_m, n_per_edge: int) -> np.ndarray:
    from cage.uniformity import box_points_m

    return np.vstack([np.zeros((1, 3)), box_points_m(test_volume_m, n_per_edge)])


def _nominal(system: CoilSystem, pts: np.ndarray):
    f = system_fields_T(system, np.zeros((1, len(system.coils), 6)), np.zeros((1, 2)), pts)
    dev, b0 = deviation_and_centre(f)
    return float(dev[0]), b0[0]


# ---------------------------------------------------------------------------------------------
# Largest uniform sphere of a (built) system
# ---------------------------------------------------------------------------------------------


def largest_uniform_sphere_radius_m(system: CoilSystem, tolerance: float, upper_m: float,
                                    coil_errors=None, n_surface: int = 600,
                                    rel_precision: float = 1e-4) -> float:
    """Radius (m) of the largest centred sphere over which ``system`` (optionally built with
    ``coil_errors`` (n_coils, 6)) stays within ``tolerance``; bisection up to ``upper_m``."""
    from cage.uniformity import sphere_points_m

    nc = len(system.coils)
    err = np.zeros((1, nc, 6)) if coil_errors is None else np.asarray(coil_errors, float)[None]
    unit = np.vstack([np.zeros((1, 3)), sphere_points_m(1.0, n_surface)])

    def dev(r):
        pts = unit * np.array([[1.0]] + [[r]] * (len(unit) - 1))
        return float(deviation_and_centre(system_fields_T(system, err, np.zeros((1, 2)), pts))[0][0])

    from cage.uniformity import _bisect

    return _bisect(dev, float(upper_m), float(tolerance), rel_precision)
