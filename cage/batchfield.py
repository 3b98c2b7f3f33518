"""Many filament sources at once, their fields summed per group (one group = one coil system of
one Monte Carlo sample): straight segments and circular loops, with the kernels of
``cage.filamentkernels`` (the published closed forms cited there). Physics layer.

Units: points and geometry in metres, currents in amperes, fields in tesla.
"""
from __future__ import annotations

import math

import numpy as np

from cage.biot_savart import _as_points
from cage.filamentkernels import MU0_T_M_PER_A, _loop_local, _segment_core, _sumsq

BATCH_ELEMENTS = 200_000
"""Source-point pairs evaluated at once by the batch functions; bounds their working memory."""


def _batch_args(points_m, arrays, groups, n_groups, what):
    pts, _ = _as_points(points_m)
    arrs = [np.atleast_1d(np.asarray(a, dtype=float)) for a in arrays]
    n_src = arrs[0].shape[0]
    grp = np.asarray(groups, dtype=np.intp).reshape(-1)
    if grp.shape != (n_src,) or (n_src and (grp.min() < 0 or grp.max() >= n_groups)):
        raise ValueError(f"{what}: groups must be {n_src} integers in 0..{n_groups - 1}")
    for a in arrs:
        if a.shape[0] != n_src or not np.all(np.isfinite(a)):
            raise ValueError(f"{what}: every source array must have {n_src} finite rows")
    return pts, arrs, grp


def _add_by_group(out, grp, values):
    """out[grp[i]] += values[i] along the first axis (reduceat when grp is sorted)."""
    if grp.size > 1 and np.all(grp[1:] >= grp[:-1]):
        starts = np.flatnonzero(np.r_[True, grp[1:] != grp[:-1]])
        out[grp[starts]] += np.add.reduceat(values, starts, axis=0)
    else:
        np.add.at(out, grp, values)


def segments_field_T(points_m, starts_m, ends_m, currents_A, groups, n_groups: int) -> np.ndarray:
    """Fields (T) of many straight segments, summed per group: (n_groups, n_points, 3).

    starts_m, ends_m: (s, 3) metres, current from start to end; currents_A: (s,) amperes;
    groups: (s,) group index of each segment (e.g. one group per sampled coil system).
    The same Hanson-Hirshman kernel as ``polygon_field_T``, vectorised over segments and
    points together; a point within ON_WIRE_M of a segment gets nothing from that segment.
    """
    pts, (a, b, cur), grp = _batch_args(points_m, (starts_m, ends_m, currents_A), groups,
                                        n_groups, "segments")
    n_p = pts.shape[0]
    out = np.zeros((int(n_groups), n_p, 3))
    if n_p == 0 or a.shape[0] == 0:
        return out
    edges = b - a
    lengths = np.sqrt(np.einsum("ij,ij->i", edges, edges))
    keep = (lengths > 0) & (cur != 0.0)
    a, b, cur, grp, edges, lengths = a[keep], b[keep], cur[keep], grp[keep], edges[keep], lengths[keep]
    units = edges / lengths[:, None] if len(lengths) else edges
    step = max(1, BATCH_ELEMENTS // n_p)
    x, y, z = (pts[None, :, k] for k in range(3))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore", under="ignore"):
        for s in range(0, a.shape[0], step):
            e = min(a.shape[0], s + step)
            col = lambda arr, k: arr[s:e, k:k + 1]  # noqa: E731
            R1 = (x - col(a, 0), y - col(a, 1), z - col(a, 2))
            R2 = (x - col(b, 0), y - col(b, 1), z - col(b, 2))
            r1sq = _sumsq(R1)
            r2sq = _sumsq(R2)
            unit = (col(units, 0), col(units, 1), col(units, 2))
            coef = (MU0_T_M_PER_A / (4.0 * math.pi)) * cur[s:e, None]
            f, cross, near = _segment_core(R1, r1sq, np.sqrt(r1sq), r2sq, np.sqrt(r2sq), unit,
                                           lengths[s:e, None], coef)
            if near is not None:
                f = np.where(near, 0.0, f)
            g = grp[s:e]
            _add_by_group(out, g, np.stack([f * cross[k] for k in range(3)], axis=-1))
    return out


def loops_field_T(points_m, centres_m, normals, radii_m, currents_A, groups, n_groups: int) -> np.ndarray:
    """Fields (T) of many circular loops, summed per group: (n_groups, n_points, 3).

    centres_m: (l, 3) metres; normals: (l, 3) (normalised here); radii_m, currents_A: (l,);
    groups: (l,) group index of each loop. The same elliptic-integral kernel as
    ``loop_field_T`` (``_loop_local``), vectorised over loops and points together.
    """
    pts, (c, nrm, rad, cur), grp = _batch_args(points_m, (centres_m, normals, radii_m, currents_A),
                                               groups, n_groups, "loops")
    n_p = pts.shape[0]
    out = np.zeros((int(n_groups), n_p, 3))
    if n_p == 0 or c.shape[0] == 0:
        return out
    size = np.linalg.norm(nrm, axis=1)
    if np.any(size == 0) or np.any(rad <= 0):
        raise ValueError("loops: normals must not be zero and radii must be positive")
    nrm = nrm / size[:, None]
    step = max(1, BATCH_ELEMENTS // n_p)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore", under="ignore"):
        for s in range(0, c.shape[0], step):
            e = min(c.shape[0], s + step)
            X = pts[None, :, :] - c[s:e, None, :]
            n = nrm[s:e, None, :]
            zl = np.einsum("lpk,lqk->lp", X, n)
            rho_v = X - zl[:, :, None] * n
            rho2 = np.einsum("lpk,lpk->lp", rho_v, rho_v)
            shape = zl.shape
            R = np.broadcast_to(rad[s:e, None], shape).ravel()
            coef = np.broadcast_to((MU0_T_M_PER_A / math.pi) * cur[s:e, None], shape).ravel()
            bzl, brho = _loop_local(zl.ravel(), rho2.ravel(), R, coef)
            field = bzl.reshape(shape)[:, :, None] * n + brho.reshape(shape)[:, :, None] * rho_v
            _add_by_group(out, grp[s:e], field)
    return out
