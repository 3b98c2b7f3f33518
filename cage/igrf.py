"""Spherical-harmonic synthesis of the IGRF main field at geodetic points, with numpy only.

Physics layer. The coefficients are those of the IGRF-14 file ``IGRF14.shc`` shipped with
ppigrf (read as text here, so that no pandas is imported: ppigrf imports pandas at load,
about 0.3-0.4 s per process). The method is the standard one of the IGRF (Alken et al.,
"International Geomagnetic Reference Field: the fourteenth generation", Earth Planets Space
(2025); the synthesis as in Langel, "The main field", in Geomagnetism vol. 1 (1987)):

* geodetic (WGS84: a = 6378.137 km, e^2 = 0.00669437999014, NIMA TR8350.2) to geocentric radius and
  colatitude, and the field rotated back from the geocentric to the geodetic frame at the end;
* Gauss coefficients linear in time between the model's epochs;
* Schmidt semi-normalised associated Legendre functions P_n^m(cos theta) by the three-term
  recurrence of the Ferrers functions times sqrt(2 (n - m)! / (n + m)!) for m > 0, and
  dP_n^m / dtheta = (n cos theta P_n^m - (n + m) P_{n-1}^m) / sin theta;
* B_r = sum (n + 1) (a/r)^(n+2) sum_m (g cos m phi + h sin m phi) P_n^m,
  B_theta = -sum (a/r)^(n+2) sum_m (g cos m phi + h sin m phi) dP_n^m/dtheta,
  B_phi = -1/sin theta sum (a/r)^(n+2) sum_m m (-g sin m phi + h cos m phi) P_n^m,
  reference radius a = 6371.2 km.

The poles (sin theta = 0) are the caller's to avoid (``cage.geomag`` evaluates 1e-6 degrees
short of them). ``tests/test_igrf_synthesis_against_ppigrf.py`` compares with ppigrf.
"""
from __future__ import annotations

import datetime as _dt
import functools
import importlib.util
import math
from pathlib import Path

import numpy as np

from cage.errors import InputError

REFERENCE_RADIUS_KM = 6371.2
WGS84_A_KM = 6378.137
WGS84_E2 = 0.00669437999014  # first eccentricity squared (NIMA TR8350.2)
WGS84_B_KM = WGS84_A_KM * math.sqrt(1.0 - WGS84_E2)
COEFFICIENT_FILE = "IGRF14.shc"


def _coefficient_path() -> Path:
    spec = importlib.util.find_spec("ppigrf")  # finds the package without importing it
    if spec is None or not spec.submodule_search_locations:
        raise InputError("the field model's coefficients (package ppigrf) are not installed")
    return Path(list(spec.submodule_search_locations)[0]) / COEFFICIENT_FILE


def _year_start(fracyear: float) -> _dt.datetime:
    year = int(math.floor(fracyear))
    days = (fracyear - year) * (366 if (year % 4 == 0 and (year % 100 != 0 or year % 400 == 0)) else 365)
    return _dt.datetime(year, 1, 1) + _dt.timedelta(days=days)


@functools.lru_cache(maxsize=1)
def coefficients() -> tuple[tuple[_dt.datetime, ...], int, np.ndarray, np.ndarray]:
    """(epochs, nmax, g, h): g and h of shape (epochs, nmax + 1, nmax + 1), index [t, n, m], nT."""
    header = 2
    rows = {}
    for line in _coefficient_path().read_text(encoding="ascii").splitlines():
        if not line.strip() or line.startswith("#"):
            continue
        if header == 2:
            header -= 1
            continue
        if header == 1:
            epochs = tuple(_year_start(float(v)) for v in line.split())
            header -= 1
            continue
        parts = line.split()
        rows[(int(parts[0]), int(parts[1]))] = [float(v) for v in parts[2:]]
    nmax = max(n for n, _ in rows)
    g = np.zeros((len(epochs), nmax + 1, nmax + 1))
    h = np.zeros_like(g)
    for (n, m), values in rows.items():
        (g if m >= 0 else h)[:, n, abs(m)] = values
    g.setflags(write=False)
    h.setflags(write=False)
    return epochs, nmax, g, h


def _at_time(when: _dt.datetime):
    """g, h (nmax + 1, nmax + 1) at ``when``: linear between the bracketing epochs (held at the ends)."""
    epochs, _, g, h = coefficients()
    if when <= epochs[0]:
        return g[0], h[0]
    if when >= epochs[-1]:
        return g[-1], h[-1]
    k = max(i for i in range(len(epochs) - 1) if epochs[i] <= when)
    w = (when - epochs[k]).total_seconds() / (epochs[k + 1] - epochs[k]).total_seconds()
    return (1 - w) * g[k] + w * g[k + 1], (1 - w) * h[k] + w * h[k + 1]


def _schmidt_legendre(theta: np.ndarray, nmax: int):
    """P[n, m, k] and dP/dtheta[n, m, k], Schmidt semi-normalised, at colatitudes theta[k] (rad)."""
    c, s = np.cos(theta), np.sin(theta)
    p = np.zeros((nmax + 1, nmax + 1, theta.size))
    for m in range(nmax + 1):
        p[m, m] = math.prod(range(1, 2 * m, 2)) * s ** m  # (2m - 1)!! sin^m (Ferrers, no Condon-Shortley)
        if m + 1 <= nmax:
            p[m + 1, m] = (2 * m + 1) * c * p[m, m]
        for n in range(m + 2, nmax + 1):
            p[n, m] = ((2 * n - 1) * c * p[n - 1, m] - (n + m - 1) * p[n - 2, m]) / (n - m)
    dp = np.zeros_like(p)
    for n in range(1, nmax + 1):
        for m in range(n + 1):
            below = p[n - 1, m] if m <= n - 1 else 0.0
            dp[n, m] = (n * c * p[n, m] - (n + m) * below) / s
    norm = np.ones((nmax + 1, nmax + 1))
    for n in range(nmax + 1):
        for m in range(1, n + 1):
            norm[n, m] = math.sqrt(2.0 * math.factorial(n - m) / math.factorial(n + m))
    return p * norm[:, :, None], dp * norm[:, :, None]


def igrf_ned_nT(lat_deg, lon_deg, alt_m, dates) -> np.ndarray:
    """(len(dates), k, 3) field north, east, down (nT, geodetic frame) at k geodetic points.

    lat_deg, lon_deg, alt_m: arrays of one shape (k points, WGS84, metres above the ellipsoid);
    dates: naive UTC datetimes.
    """
    lat = np.radians(np.ravel(np.asarray(lat_deg, dtype=float)))
    lon = np.radians(np.ravel(np.asarray(lon_deg, dtype=float)))
    h_km = np.ravel(np.asarray(alt_m, dtype=float)) / 1000.0
    lat, lon, h_km = np.broadcast_arrays(lat, lon, h_km)
    a2, b2 = WGS84_A_KM ** 2, WGS84_B_KM ** 2
    sin2, cos2 = np.sin(lat) ** 2, np.cos(lat) ** 2
    tmp = h_km * np.sqrt(a2 * cos2 + b2 * sin2)
    beta = np.arctan((tmp + b2) / (tmp + a2) * np.tan(lat))
    theta = np.pi / 2 - beta
    r = np.sqrt(h_km ** 2 + 2 * tmp + a2 * (1 - (1 - b2 ** 2 / a2 ** 2) * sin2) / (1 - (1 - b2 / a2) * sin2))
    psi = np.sin(lat) * np.sin(theta) - np.cos(lat) * np.cos(theta)
    _, nmax, _, _ = coefficients()
    p, dp = _schmidt_legendre(theta, nmax)
    n = np.arange(nmax + 1)
    m = np.arange(nmax + 1)
    ratio = (REFERENCE_RADIUS_KM / r)[None, :] ** (n[:, None] + 2)  # (n, k)
    cos_m = np.cos(m[:, None] * lon[None, :])  # (m, k)
    sin_m = np.sin(m[:, None] * lon[None, :])
    out = np.empty((len(dates), lat.size, 3))
    for t, when in enumerate(dates):
        g, h = _at_time(when)
        gc = g[:, :, None] * cos_m[None] + h[:, :, None] * sin_m[None]  # (n, m, k)
        gs = m[None, :, None] * (-g[:, :, None] * sin_m[None] + h[:, :, None] * cos_m[None])
        b_r = np.einsum("nk,nmk->k", ratio * (n[:, None] + 1), gc * p)
        b_t = -np.einsum("nk,nmk->k", ratio, gc * dp)
        b_p = -np.einsum("nk,nmk->k", ratio, gs * p) / np.sin(theta)
        out[t, :, 0] = -np.cos(psi) * b_t - np.sin(psi) * b_r
        out[t, :, 1] = b_p
        out[t, :, 2] = -(-np.sin(psi) * b_t + np.cos(psi) * b_r)
    return out
