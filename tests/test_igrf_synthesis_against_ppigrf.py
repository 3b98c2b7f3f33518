"""cage.igrf (numpy synthesis, no pandas) against ppigrf's own IGRF-14 synthesis from the same
coefficient file, and the coefficient file read against values printed in the IGRF-14 paper.

ppigrf (PyPI) is an independent implementation of the same published method (Alken et al.,
"International Geomagnetic Reference Field: the fourteenth generation", Earth Planets Space
2025); both read IGRF14.shc, so agreement checks our Legendre functions, geodetic conversion,
time interpolation and component signs. chaosmagpy and pywmm checks of the whole field are in
tests/test_igrf_against_chaosmagpy.py and tests/test_igrf_against_wmm.py.
"""
from __future__ import annotations

import contextlib
import datetime as dt
import io
import warnings

import numpy as np
import pytest

from cage.igrf import coefficients, igrf_ned_nT

ppigrf = pytest.importorskip("ppigrf")


def _ppigrf_ned(lat, lon, alt_m, dates):
    with contextlib.redirect_stdout(io.StringIO()), warnings.catch_warnings():
        warnings.simplefilter("ignore")
        be, bn, bu = ppigrf.igrf(lon, lat, np.asarray(alt_m) / 1000.0, dates)
    return np.stack([bn, be, -bu], axis=-1).reshape(len(dates), -1, 3)


def test_matches_ppigrf_over_the_globe_and_the_century():
    rng = np.random.default_rng(11)
    lat = rng.uniform(-89.5, 89.5, 500)
    lon = rng.uniform(-180.0, 360.0, 500)
    alt = rng.uniform(-1000.0, 100_000.0, 500)
    dates = [dt.datetime(1900, 1, 1), dt.datetime(1957, 10, 4, 19), dt.datetime(2000, 1, 1),
             dt.datetime(2026, 12, 2, 13, 30), dt.datetime(2030, 1, 1)]
    ours = igrf_ned_nT(lat, lon, alt, dates)
    ref = _ppigrf_ned(lat, lon, alt, dates)
    # Same coefficients, same formulas: round-off only (1e-6 nT of fields up to 7e4 nT).
    assert np.max(np.abs(ours - ref)) < 1e-4


def test_a_wrong_sign_or_frame_would_show():
    lat, lon, alt = np.array([45.0]), np.array([10.0]), np.array([0.0])
    ours = igrf_ned_nT(lat, lon, alt, [dt.datetime(2020, 1, 1)])[0, 0]
    ref = _ppigrf_ned(lat, lon, alt, [dt.datetime(2020, 1, 1)])[0, 0]
    assert ours[2] > 0  # the field points down in the northern hemisphere (common practice)
    assert np.max(np.abs(ours - ref)) < 1e-4
    assert np.max(np.abs(ours[[1, 0, 2]] - ref)) > 100  # north and east swapped: caught


def test_coefficients_as_published():
    """g10, g11, h11 of IGRF-14 at 2025.0 (Alken et al. 2025, table of coefficients; from memory,
    rounded to 10 nT): g10 about -29350, g11 about -1410, h11 about 4545 nT."""
    epochs, nmax, g, h = coefficients()
    assert nmax == 13
    k = epochs.index(dt.datetime(2025, 1, 1))
    assert g[k, 1, 0] == pytest.approx(-29350.0, abs=10.0)
    assert g[k, 1, 1] == pytest.approx(-1410.0, abs=10.0)
    assert h[k, 1, 1] == pytest.approx(4545.0, abs=10.0)
    assert epochs[0] == dt.datetime(1900, 1, 1) and epochs[-1] == dt.datetime(2030, 1, 1)
