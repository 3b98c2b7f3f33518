"""The two exact Biot-Savart kernels of thin filaments, one per source, each a numeric core
with the input checks kept apart (those live with the sources in ``cage.biot_savart``, which
evaluates them over points, one source at a time or in batches).

Physics layer. Units: points and geometry in metres, currents in amperes, fields in tesla; one
frame for everything passed in. mu0 is CODATA 2022.

* Straight segment (``_segment_core``), closed form of the Biot-Savart integral as given by
  J. D. Hanson and S. P. Hirshman, "Compact expressions for the Biot-Savart fields of a
  filamentary segment", Phys. Plasmas 9, 4410 (2002)::

      B = mu0 I / (4 pi) * 2 L (r1 + r2) / (r1 r2 ((r1 + r2)^2 - L^2)) * (e x R1)

  with R1 = p - a, r1 = |p - a|, r2 = |p - b|, L = |b - a|, e = (b - a) / L, current from a
  to b. The denominator is rewritten without cancellation: with t1 = R1.e, t2 = t1 - L and
  d^2 = |e x R1|^2, (r1 + r2)^2 - L^2 = 2 (d^2 + P), P = r1 r2 + t1 t2; where t1 t2 < 0 (the
  foot of the perpendicular lies on the segment) P is taken as d^2 (r1^2 + r2^2 - d^2) /
  (r1 r2 - t1 t2), which is the same number, so the field keeps full precision down to
  micrometres from the wire. Polygon vertices share their distances between the two segments
  that meet there.

* Circular loop (``_loop_core``), complete elliptic integrals, after J. Simpson, J. Lane,
  C. Immer and R. Youngquist, "Simple analytic expressions for the magnetic field of a
  circular current loop", NASA Technical Reports Server 20010038494 (2001), in cylindrical
  coordinates::

      B_z   = mu0 I / (2 pi a^2 b) [ (R^2 - r^2) E(m) + a^2 K(m) ]
      B_rho = mu0 I z / (2 pi a^2 b rho) [ (R^2 + r^2) E(m) - a^2 K(m) ]

  (R loop radius, rho and z the cylindrical coordinates of the point about the loop's axis,
  r^2 = rho^2 + z^2, a^2 = (R - rho)^2 + z^2, b^2 = (R + rho)^2 + z^2, m = k^2 = 4 R rho / b^2,
  K, E complete elliptic integrals of parameter m, from 1 - m = a^2/b^2 (accurate next to the
  wire) by the arithmetic-geometric mean, ``cage.elliptic``). Evaluated as written these lose
  digits near the axis and far away (catastrophic cancellation, see M. Ortner et al.,
  Magnetism 3, 11 (2023)); our rewrite keeps full precision. The radial bracket equals b^2 F(m),
  F(m) = (1 - m/2) E(m) - (1 - m) K(m) = (3 pi / 32) m^2 (1 + O(m)), so with J(m) = F(m)/m^2::

      B_rho / rho = mu0 I R^2 / (pi a^2 b) * 8 z J(m) / b^2
      B_z         = mu0 I R^2 / (pi a^2 b) * (E(m) - 8 rho^2 J(m) / b^2)

  For m < 0.2 (near the axis and far from the loop) J comes from its power series (exact
  rational coefficients from the series of K and E, 22 terms, truncation below 1e-16), which
  removes both the 0/0 on the axis and the cancellation far away: the on-axis limit is taken
  explicitly in that no 1/rho appears, and at rho = 0 the expressions are exactly
  B = mu0 I R^2 / (2 (R^2 + z^2)^(3/2)) along the normal. For m >= 0.2 J is evaluated directly
  and B_z by the Simpson bracket with R^2 - r^2 = (R - rho)(R + rho) - z^2.

On or next to a filament: a point closer than ``ON_WIRE_M`` (1e-9 m) gets no contribution
from that filament (see ``cage.biot_savart``).
"""
from __future__ import annotations

import math
from fractions import Fraction

import numpy as np

from cage.elliptic import complete_K_E

# Vacuum permeability, T m / A: CODATA 2022 (NIST), the value of scipy.constants.mu_0 in
# scipy 1.15 and later; written here so that importing the field engine does not import
# scipy.constants (about 0.1 s of every command's start). tests/test_field_facts.py checks it.
MU0_T_M_PER_A = 1.25663706127e-06

ON_WIRE_M = 1e-9
"""Points closer than this to a filament get no contribution from it (metres)."""


# ---------------------------------------------------------------------------------------------
# Helpers for the numeric cores: linear combinations that skip zero and unit coefficients, so
# axis-aligned geometry (the usual case) costs no wasted multiplications.
# ---------------------------------------------------------------------------------------------


def _lin(coeffs, arrays):
    """sum(c * a) over the non-zero coefficients; None if all are zero (or arrays are None)."""
    out = None
    for c, a in zip(coeffs, arrays):
        if a is None:
            continue
        if isinstance(c, np.ndarray):  # per-source coefficients of a batch (broadcast)
            out = c * a if out is None else out + c * a
            continue
        if c == 0.0:
            continue
        if out is None:
            out = a if c == 1.0 else (-a if c == -1.0 else c * a)
        elif c == 1.0:
            out = out + a
        elif c == -1.0:
            out = out - a
        else:
            out = out + c * a
    return out


def _sumsq(arrays):
    out = None
    for a in arrays:
        if a is None:
            continue
        out = a * a if out is None else out + a * a
    return out


def _acc(target, scale, comp):
    if comp is not None:
        target += scale * comp


# ---------------------------------------------------------------------------------------------
# Straight segments
# ---------------------------------------------------------------------------------------------


def _polygon_setup(vertices: np.ndarray, closed: bool):
    """Per-edge unit vectors and lengths (precomputed once per polygon)."""
    ends = np.roll(vertices, -1, axis=0) if closed else vertices[1:]
    starts = vertices if closed else vertices[:-1]
    edges = ends - starts
    lengths = np.sqrt(np.einsum("ij,ij->i", edges, edges))
    units = np.zeros_like(edges)
    ok = lengths > 0
    units[ok] = edges[ok] / lengths[ok, None]
    # Components that are rounding noise of an axis-aligned edge become exact 0 / +-1, so the
    # numeric core can skip them.
    units[np.abs(units) < 1e-15] = 0.0
    unit_like = np.abs(np.abs(units) - 1.0) < 1e-15
    units[unit_like] = np.sign(units[unit_like])
    return [tuple(float(c) for c in u) for u in units], [float(v) for v in lengths]


def _vertex_rel(x, y, z, v):
    rx = x - v[0] if v[0] != 0.0 else x
    ry = y - v[1] if v[1] != 0.0 else y
    rz = z - v[2] if v[2] != 0.0 else z
    rsq = rx * rx + ry * ry + rz * rz
    return (rx, ry, rz), rsq, np.sqrt(rsq)


def _segment_core(R1, r1sq, r1, r2sq, r2, unit, length, coef):
    """Field of one straight segment, coef = mu0 I / (4 pi).

    R1: components of p - a; r1 = |p - a|, r2 = |p - b| (and their squares); unit, length:
    direction and length of b - a. Returns (f, (cx, cy, cz), near): the field is f * (e x R1)
    (components None where identically zero) and near marks points within ON_WIRE_M of the
    segment (None if there are none); f is not finite there.
    """
    ex, ey, ez = unit
    t1 = _lin((ex, ey, ez), R1)
    t2 = t1 - length
    # e x R1
    cx = _lin((0.0, -ez, ey), R1)
    cy = _lin((ez, 0.0, -ex), R1)
    cz = _lin((-ey, ex, 0.0), R1)
    d2 = _sumsq((cx, cy, cz))
    r1r2 = r1 * r2
    tt = t1 * t2
    # P = r1 r2 + t1 t2, computed without cancellation where t1 t2 < 0 (r1 r2 + |t1 t2| is
    # r1 r2 - t1 t2 there, and never zero off the vertices).
    p_alt = d2 * (r1sq + r2sq - d2) / (r1r2 + np.abs(tt))
    pp = np.where(tt < 0.0, p_alt, r1r2 + tt)
    f = (coef * length) * (r1 + r2) / (r1r2 * (d2 + pp))
    near = None
    close = d2 < ON_WIRE_M * ON_WIRE_M
    if close.any():
        near = close & (t1 > -ON_WIRE_M) & (t2 < ON_WIRE_M)
        if not near.any():
            near = None
    return f, (cx, cy, cz), near


def _polygon_chunk(x, y, z, vertices, units, lengths, current_A, bx, by, bz, closed=True):
    """Add the field of one polygon (closed) or polyline (open) to bx, by, bz.

    Points within ON_WIRE_M of any of its segments get nothing from the whole polygon.
    """
    coef = MU0_T_M_PER_A * current_A / (4.0 * math.pi)
    k = len(vertices)
    n_seg = k if closed else k - 1
    first = _vertex_rel(x, y, z, vertices[0])
    cur = first
    acc = [None, None, None]
    near_all = None
    for i in range(n_seg):
        j = i + 1
        nxt = first if (closed and j == k) else _vertex_rel(x, y, z, vertices[j])
        if lengths[i] > 0.0:
            f, cross, near = _segment_core(cur[0], cur[1], cur[2], nxt[1], nxt[2], units[i],
                                           lengths[i], coef)
            if near is not None:
                near_all = near if near_all is None else (near_all | near)
            for c in range(3):
                if cross[c] is None:
                    continue
                if acc[c] is None:
                    acc[c] = f * cross[c]
                else:
                    acc[c] += f * cross[c]
        cur = nxt
    for target, a in zip((bx, by, bz), acc):
        if a is None:
            continue
        if near_all is not None:
            a[near_all] = 0.0
        target += a


# ---------------------------------------------------------------------------------------------
# Circular loop
# ---------------------------------------------------------------------------------------------

_SERIES_M_MAX = 0.2
_SERIES_TERMS = 22


def _j_series_coefficients(n_terms: int) -> np.ndarray:
    """Coefficients of J(m) = F(m) / m^2, F = (1 - m/2) E - (1 - m) K, as a power series in m.

    From K = (pi/2) sum a_n^2 m^n, E = (pi/2) sum a_n^2 m^n / (1 - 2n), a_n = C(2n, n) / 4^n
    (Abramowitz & Stegun 17.3.11-12). The m^0 and m^1 terms of F vanish exactly.
    """
    count = n_terms + 3
    a2 = [Fraction(math.comb(2 * n, n), 4**n) ** 2 for n in range(count)]
    c = a2
    e = [a2[n] / (1 - 2 * n) for n in range(count)]
    f = [e[0] - c[0]] + [e[n] - e[n - 1] / 2 - c[n] + c[n - 1] for n in range(1, count)]
    assert f[0] == 0 and f[1] == 0
    return np.array([float(v) * (math.pi / 2) for v in f[2 : 2 + n_terms]])


_J_COEFFS = _j_series_coefficients(_SERIES_TERMS)


def _j_series(m: np.ndarray) -> np.ndarray:
    out = np.full_like(m, _J_COEFFS[-1])
    for c in _J_COEFFS[-2::-1]:
        out *= m
        out += c
    return out


def _pick(value, idx):
    """``value[idx]`` for a per-point array, ``value`` itself for a scalar."""
    return value[idx] if isinstance(value, np.ndarray) else value


def _loop_local(zl, rho2, R, coef):
    """Axial field and B_rho / rho of circular loops in the loop's own cylindrical frame.

    zl, rho2: axial coordinate and squared distance from the axis (1-D arrays, m, m^2);
    R: radius (m), coef: mu0 I / pi (T m); each a scalar or an array like zl (a batch of
    loops flattened with its points). Returns (B_axial, B_rho / rho), on-wire points zeroed.
    """
    rho = np.sqrt(rho2)
    z2 = zl * zl
    a2 = (R - rho) ** 2 + z2
    b2 = (R + rho) ** 2 + z2
    beta = np.sqrt(b2)
    m = (4.0 * R) * rho / b2
    p = a2 / b2  # 1 - m, with full precision next to the wire
    K, E = complete_K_E(p)
    common = (coef * R * R) / (a2 * beta)
    g = np.empty_like(m)  # 8 J / b^2
    bzl = np.empty_like(m)
    small = m < _SERIES_M_MAX
    n_small = int(np.count_nonzero(small))
    if n_small:
        idx = slice(None) if n_small == m.size else np.flatnonzero(small)
        gs = 8.0 * _j_series(m[idx]) / b2[idx]
        g[idx] = gs
        bzl[idx] = common[idx] * (E[idx] - rho2[idx] * gs)
    if n_small < m.size:
        idx = slice(None) if n_small == 0 else np.flatnonzero(~small)
        mb = m[idx]
        pb = p[idx]
        Eb = E[idx]
        Kb = K[idx]
        a2b = a2[idx]
        g[idx] = 8.0 * ((1.0 - 0.5 * mb) * Eb - pb * Kb) / (mb * mb) / b2[idx]
        rb = rho[idx]
        Rb = _pick(R, idx)
        bracket = ((Rb - rb) * (Rb + rb) - z2[idx]) * Eb + a2b * Kb
        bzl[idx] = (0.5 * _pick(coef, idx)) * bracket / (a2b * beta[idx])
    brho_over_rho = common * zl * g
    close = a2 < ON_WIRE_M * ON_WIRE_M
    if close.any():
        bzl[close] = 0.0
        brho_over_rho[close] = 0.0
    return bzl, brho_over_rho


def _rho_parts(X, n, zl):
    """The components of rho = X - zl n (None where exactly zero: an axis-aligned normal) and
    rho^2; n's components are numbers or per-source arrays (a batch)."""
    rho_v = []
    for i in range(3):
        if isinstance(n[i], np.ndarray):
            rho_v.append(X[i] - n[i] * zl)
        elif n[i] == 0.0:
            rho_v.append(X[i])
        elif abs(n[i]) == 1.0:
            rho_v.append(None)
        else:
            rho_v.append(X[i] - n[i] * zl)
    rho2 = _sumsq(rho_v)
    return rho_v, (np.zeros_like(zl) if rho2 is None else rho2)


def _loop_core(x, y, z, centre, normal, radius, current_A, bx, by, bz):
    """Add the field of one circular loop to bx, by, bz (see the module docstring)."""
    X = _vertex_rel(x, y, z, centre)[0]
    n = tuple(float(c) for c in normal)
    zl = _lin(n, X)
    rho_v, rho2 = _rho_parts(X, n, zl)
    bzl, brho_over_rho = _loop_local(zl, rho2, radius, MU0_T_M_PER_A * current_A / math.pi)
    comps = (bx, by, bz)
    for i in range(3):
        if n[i] != 0.0:
            _acc(comps[i], n[i], bzl)
        _acc(comps[i], brho_over_rho, rho_v[i])
