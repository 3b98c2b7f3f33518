"""Sample points of a test volume (faces of a box, a sphere's surface) and the deviation of the
fields sampled there from the centre field. Physics layer, below ``cage.coils`` and
``cage.uniformity`` (which re-exports these names).
"""
from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from cage.checks import positive_number as _positive
from cage.errors import InputError

DEFAULT_BOX_GRID = 9
DEFAULT_SPHERE_POINTS = 600


def _box_sides(box_m) -> np.ndarray:
    try:
        sides = np.asarray(box_m, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"box_m must be three side lengths (x, y, z) in metres, got {box_m!r}") from None
    if sides.shape == ():
        sides = np.full(3, float(sides))
    if sides.shape != (3,):
        raise InputError(f"box_m must be three side lengths (x, y, z) in metres, got shape {sides.shape}")
    if not np.all(np.isfinite(sides)) or np.any(sides < 0):
        raise InputError(f"box_m sides must be finite and not negative, got {sides.tolist()}")
    return sides


def _grid_size(n, what: str, minimum: int = 2) -> int:
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < minimum:
        raise InputError(f"{what} must be a whole number of at least {minimum}, got {n!r}")
    return int(n)


@lru_cache(maxsize=32)
def _unit_box_surface(n: int) -> np.ndarray:
    """Distinct points of the six faces of the cube [-1, 1]^3 on an n x n grid per face."""
    t = np.linspace(-1.0, 1.0, n)
    g = np.stack(np.meshgrid(t, t, t, indexing="ij"), axis=-1).reshape(-1, 3)
    on_surface = np.any(np.abs(g) == 1.0, axis=1)
    pts = g[on_surface]
    pts.setflags(write=False)
    return pts


def box_points_m(box_m, n_per_edge: int = DEFAULT_BOX_GRID) -> np.ndarray:
    """Points on the six faces of the centred box with sides box_m (x, y, z), in metres.

    Each face is an n_per_edge x n_per_edge grid, edges and corners included, shared points
    counted once: 6 n^2 - 12 n + 8 points (386 for n = 9).
    """
    sides = _box_sides(box_m)
    n = _grid_size(n_per_edge, "n_per_edge")
    return _unit_box_surface(n) * (sides / 2.0)


@lru_cache(maxsize=32)
def _unit_sphere_surface(n: int) -> np.ndarray:
    """n points of a Fibonacci lattice on the unit sphere plus the six axis points."""
    k = np.arange(n) + 0.5
    z = 1.0 - 2.0 * k / n
    phi = math.pi * (3.0 - math.sqrt(5.0)) * k
    s = np.sqrt(1.0 - z * z)
    fib = np.column_stack([s * np.cos(phi), s * np.sin(phi), z])
    axes = np.vstack([np.eye(3), -np.eye(3)])
    pts = np.vstack([axes, fib])
    pts.setflags(write=False)
    return pts


def sphere_points_m(radius_m: float, n_surface: int = DEFAULT_SPHERE_POINTS,
                    interior_shells: int = 0) -> np.ndarray:
    """Points on the centred sphere of radius_m (metres) and optional interior shells.

    Surface: a Fibonacci lattice of n_surface points plus the six points on the cage axes.
    interior_shells: k shells at radii r j / (k + 1), j = 1..k, with n_surface / 4 points each
    (a check only: the maximum of the deviation is on the surface).
    """
    r = _positive(radius_m, "radius_m")
    n = _grid_size(n_surface, "n_surface", minimum=1)
    shells = _grid_size(interior_shells, "interior_shells", minimum=0)
    parts = [_unit_sphere_surface(n) * r]
    for j in range(1, shells + 1):
        parts.append(_unit_sphere_surface(max(1, n // 4)) * (r * j / (shells + 1)))
    return np.vstack(parts)


def deviation_of_field(fields_T: np.ndarray) -> float:
    """max_k |B_k - B_0| / |B_0| for fields (m, 3) whose first row is the centre field."""
    b = np.asarray(fields_T, dtype=float)
    ref = b[0]
    d = b[1:] - ref
    return float(np.sqrt(np.max(np.einsum("ij,ij->i", d, d))) / np.linalg.norm(ref)) if len(b) > 1 else 0.0
