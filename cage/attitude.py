"""Spacecraft attitude as rotation matrices from the TEME frame to the body frame.

Every function returns ``(n, 3, 3)`` matrices M with ``v_body = M @ v_teme`` (rows of M are
the body axes written in TEME). The body frame is the frame the magnetometer on the bench
is aligned with, and so the cage frame the field is replayed in.

Modes:
- ``nadir``: the local orbit frame (local-vertical local-horizontal): z toward nadir
  (-r), y against the orbit normal (-(r x v)), x = y x z, along the velocity for a circular
  orbit (Wertz, "Spacecraft Attitude Determination and Control", 1978, sec. 2.2 and 12.1).
- ``inertial``: body axes fixed along the TEME axes.
- ``spin``: starts along the TEME axes at t = 0 and turns about one body axis at a constant
  rate (right-handed positive).
- ``quaternions``: a table of attitude quaternions q(t) giving the body orientation in TEME
  (Hamilton convention, v_teme = R(q) v_body, so M = R(q)^T), interpolated by spherical
  linear interpolation (Shoemake, "Animating rotation with quaternion curves", SIGGRAPH 1985).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cage.errors import InputError

AXES = ("x", "y", "z")


def nadir_matrices(position_km, velocity_km_s) -> np.ndarray:
    """Orbit-frame matrices (n, 3, 3) from TEME position and velocity (see the module docstring)."""
    r = np.asarray(position_km, dtype=float)
    v = np.asarray(velocity_km_s, dtype=float)
    h = np.cross(r, v)
    rn = np.linalg.norm(r, axis=1)
    hn = np.linalg.norm(h, axis=1)
    if np.any(rn == 0) or np.any(hn == 0):
        raise InputError("the orbit frame is undefined where the velocity is along the radius")
    z = -r / rn[:, None]
    y = -h / hn[:, None]
    x = np.cross(y, z)
    return np.stack((x, y, z), axis=1)


def inertial_matrices(n: int) -> np.ndarray:
    """Identity matrices (n, 3, 3): body axes along TEME."""
    return np.broadcast_to(np.eye(3), (n, 3, 3)).copy()


def axis_rotation(axis: str, angle_rad) -> np.ndarray:
    """(n, 3, 3) frame rotations about ``axis`` by ``angle_rad``: components of a fixed vector
    in a frame turned by +angle (right-handed), e.g. R3(a) = [[c, s, 0], [-s, c, 0], [0, 0, 1]]
    (Vallado, "Fundamentals of Astrodynamics", eq. 3-15)."""
    if axis not in AXES:
        raise InputError(f"spin axis must be x, y or z, got {axis!r}")
    a = np.atleast_1d(np.asarray(angle_rad, dtype=float))
    c, s = np.cos(a), np.sin(a)
    m = np.zeros((a.size, 3, 3))
    i = AXES.index(axis)
    j, k = (i + 1) % 3, (i + 2) % 3
    m[:, i, i] = 1.0
    m[:, j, j] = c
    m[:, k, k] = c
    m[:, j, k] = s
    m[:, k, j] = -s
    return m


def spin_matrices(t_s, axis: str, rate_deg_s: float) -> np.ndarray:
    """Body spinning about its ``axis`` at ``rate_deg_s``, along TEME at t = 0."""
    if not math.isfinite(rate_deg_s) or abs(rate_deg_s) > 3600.0:
        raise InputError(f"spin rate must be within -3600..3600 deg/s, got {rate_deg_s!r}")
    return axis_rotation(axis, np.radians(rate_deg_s) * np.asarray(t_s, dtype=float))


def quaternion_matrices(q) -> np.ndarray:
    """(n, 3, 3) M = R(q)^T for scalar-first unit quaternions q (n, 4) = (w, x, y, z).

    R(q) (Hamilton) takes body vectors to TEME; its transpose takes TEME to body.
    """
    q = np.asarray(q, dtype=float)
    w, x, y, z = q[:, 0], q[:, 1], q[:, 2], q[:, 3]
    r = np.empty((q.shape[0], 3, 3))
    r[:, 0, 0] = 1 - 2 * (y * y + z * z)
    r[:, 0, 1] = 2 * (x * y - w * z)
    r[:, 0, 2] = 2 * (x * z + w * y)
    r[:, 1, 0] = 2 * (x * y + w * z)
    r[:, 1, 1] = 1 - 2 * (x * x + z * z)
    r[:, 1, 2] = 2 * (y * z - w * x)
    r[:, 2, 0] = 2 * (x * z - w * y)
    r[:, 2, 1] = 2 * (y * z + w * x)
    r[:, 2, 2] = 1 - 2 * (x * x + y * y)
    return np.transpose(r, (0, 2, 1))


def slerp(table_t_s, table_q, t_s) -> np.ndarray:
    """Unit quaternions (m, 4, scalar first) at times ``t_s`` by spherical linear interpolation
    between the neighbouring table rows (the shorter arc). Times outside the table are refused."""
    tt = np.asarray(table_t_s, dtype=float)
    qq = np.asarray(table_q, dtype=float)
    t = np.asarray(t_s, dtype=float)
    if t.size and (t.min() < tt[0] - 1e-9 or t.max() > tt[-1] + 1e-9):
        raise InputError(f"the attitude table covers {tt[0]:g}..{tt[-1]:g} s but the orbit runs "
                         f"{t.min():g}..{t.max():g} s")
    k = np.clip(np.searchsorted(tt, t, side="right") - 1, 0, len(tt) - 2)
    q0, q1 = qq[k], qq[k + 1]
    u = np.clip((t - tt[k]) / (tt[k + 1] - tt[k]), 0.0, 1.0)[:, None]
    dot = np.sum(q0 * q1, axis=1)
    q1 = np.where(dot[:, None] < 0, -q1, q1)
    dot = np.abs(dot)[:, None]
    omega = np.arccos(np.clip(dot, -1.0, 1.0))
    so = np.sin(omega)
    small = so[:, 0] < 1e-9
    with np.errstate(invalid="ignore", divide="ignore"):
        a = np.where(small[:, None], 1.0 - u, np.sin((1.0 - u) * omega) / so)
        b = np.where(small[:, None], u, np.sin(u * omega) / so)
    q = a * q0 + b * q1
    return q / np.linalg.norm(q, axis=1)[:, None]


@dataclass(frozen=True, eq=False)
class QuaternionTable:
    """Attitude quaternions read from a file, scalar first, unit length; times in s."""

    t_s: np.ndarray
    q: np.ndarray
    scalar_first_in_file: bool
    source: str


def body_field_nT(matrices, field_teme_nT) -> np.ndarray:
    """(n, 3) body-frame field: M_k @ B_k for each sample."""
    return np.einsum("nij,nj->ni", np.asarray(matrices), np.asarray(field_teme_nT, dtype=float))


MODES = ("nadir", "inertial", "spin", "quaternions")


@dataclass(frozen=True, eq=False)
class Attitude:
    """How the body is pointed: ``mode`` one of :data:`MODES`; spin_axis and spin_rate_deg_s
    for ``spin``; table for ``quaternions``."""

    mode: str = "nadir"
    spin_axis: str = "z"
    spin_rate_deg_s: float = 0.0
    table: QuaternionTable | None = None

    def describe(self) -> str:
        if self.mode == "spin":
            return f"spin {self.spin_rate_deg_s:g} deg/s about body {self.spin_axis}"
        if self.mode == "quaternions":
            return "quaternion table"
        return self.mode


def attitude_matrices(att: Attitude, t_s, position_teme_km, velocity_teme_km_s) -> np.ndarray:
    """(n, 3, 3) TEME-to-body matrices for the attitude at the given samples."""
    t = np.asarray(t_s, dtype=float)
    if att.mode == "nadir":
        return nadir_matrices(position_teme_km, velocity_teme_km_s)
    if att.mode == "inertial":
        return inertial_matrices(t.size)
    if att.mode == "spin":
        return spin_matrices(t, att.spin_axis, att.spin_rate_deg_s)
    if att.mode == "quaternions":
        if att.table is None:
            raise InputError("the quaternions attitude needs a table of quaternions")
        return quaternion_matrices(slerp(att.table.t_s, att.table.q, t))
    raise InputError(f"attitude must be one of {', '.join(MODES)}, got {att.mode!r}")
