"""The room's field gradient from a survey at several points (cage frame, nT and m).

Model: B(p) = B0 + G p, uniform plus a constant gradient. In the current-free room the field
is curl-free and divergence-free (Maxwell's equations), so G is symmetric and traceless:
five independent entries (Gxx, Gyy, Gxy, Gxz, Gyz; Gzz = -Gxx - Gyy). With B0 that is 8
unknowns, fitted by linear least squares to 3 components at each of at least 3 points whose
positions span space enough to fix G (checked by the rank of the system).

After the cage nulls the field at its centre (B0 cancelled, G untouched: a uniform field
cannot cancel a gradient) the residual at p is G p. |G p| is convex in p, so over a centred
box its largest value is at a corner; its RMS over the box's volume is
sqrt(sum_j |G e_j|^2 h_j^2 / 3) (h_j the half sides; mean of x^2 over [-h, h] is h^2 / 3).
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from cage.errors import InputError

__all__ = ["GradientFit", "fit_gradient", "residual_after_null_nT"]


@dataclass(frozen=True, eq=False)
class GradientFit:
    """Fitted B0 (nT, at the cage centre), G (nT/m, row = field component, column = direction),
    rms misfit of the survey's readings (nT) and the number of points."""

    centre_nT: np.ndarray
    gradient_nT_per_m: np.ndarray
    rms_misfit_nT: float
    n_points: int


def fit_gradient(points_m, fields_nT) -> GradientFit:
    """Least-squares fit of B0 + G p (G symmetric, traceless) to readings at points.

    points_m: (n, 3) positions relative to the cage centre (m, cage frame); fields_nT: (n, 3).
    Raises InputError when the points are too few or too flat to fix the gradient.
    """
    p = np.asarray(points_m, dtype=float)
    b = np.asarray(fields_nT, dtype=float)
    if p.ndim != 2 or p.shape[1] != 3 or b.shape != p.shape:
        raise InputError("survey: points and fields must both be lists of [x, y, z], one field per point")
    if not (np.all(np.isfinite(p)) and np.all(np.isfinite(b))):
        raise InputError("survey: points and fields must be finite numbers")
    n = p.shape[0]
    if n < 3:
        raise InputError(f"survey: a gradient needs readings at 3 or more points, got {n}")
    # Unknowns: B0x, B0y, B0z, Gxx, Gyy, Gxy, Gxz, Gyz.
    a = np.zeros((3 * n, 8))
    x, y, z = p[:, 0], p[:, 1], p[:, 2]
    rx, ry, rz = slice(0, None, 3), slice(1, None, 3), slice(2, None, 3)
    a[rx, 0] = a[ry, 1] = a[rz, 2] = 1.0
    # Bx = B0x + Gxx x + Gxy y + Gxz z
    a[rx, 3], a[rx, 5], a[rx, 6] = x, y, z
    # By = B0y + Gxy x + Gyy y + Gyz z
    a[ry, 5], a[ry, 4], a[ry, 7] = x, y, z
    # Bz = B0z + Gxz x + Gyz y - (Gxx + Gyy) z
    a[rz, 6], a[rz, 7], a[rz, 3], a[rz, 4] = x, y, -z, -z
    scale = max(float(np.abs(p).max()), 1e-12)
    a_s = a.copy()
    a_s[:, 3:] /= scale
    if np.linalg.matrix_rank(a_s, tol=1e-9 * np.linalg.norm(a_s, 2)) < 8:
        raise InputError("survey: the points do not span enough directions to fix the gradient")
    sol, *_ = np.linalg.lstsq(a_s, b.reshape(-1), rcond=None)
    sol[3:] /= scale
    gxx, gyy, gxy, gxz, gyz = sol[3:]
    g = np.array([[gxx, gxy, gxz], [gxy, gyy, gyz], [gxz, gyz, -gxx - gyy]])
    misfit = (a @ sol - b.reshape(-1)).reshape(-1, 3)
    rms = float(np.sqrt(np.mean(np.sum(misfit**2, axis=1))))
    return GradientFit(sol[:3].copy(), g, rms, n)


def residual_after_null_nT(gradient_nT_per_m, test_volume_m) -> tuple[np.ndarray, float, float]:
    """Residual G p over the centred box after nulling the centre.

    Returns (per component: largest |(G p)_k| over the box (3,), nT; largest |G p|, nT;
    RMS of |G p| over the box's volume, nT).
    """
    g = np.asarray(gradient_nT_per_m, dtype=float)
    h = np.broadcast_to(np.asarray(test_volume_m, dtype=float), (3,)) / 2.0
    corners = np.array(list(itertools.product((-1.0, 1.0), repeat=3))) * h
    r = corners @ g.T
    rms = float(np.sqrt(np.sum(np.sum(g**2, axis=0) * h**2 / 3.0)))
    return np.abs(r).max(axis=0), float(np.linalg.norm(r, axis=1).max()), rms
