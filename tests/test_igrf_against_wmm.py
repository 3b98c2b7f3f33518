"""IGRF-14 against the World Magnetic Model 2025 (pywmm), an independent model.

Two main-field models built by different teams from overlapping data agree to within
about a hundred nT and a few tenths of a degree of declination away from the magnetic
poles (common practice); the acceptance limits are 200 nT total and 0.5 deg.
"""
from __future__ import annotations

import datetime as dt

import numpy as np
import pytest

pywmm = pytest.importorskip("pywmm")

from cage.geomag import earth_field  # noqa: E402


def _decimal_year(date: dt.date) -> float:
    start = dt.date(date.year, 1, 1)
    return date.year + (date - start).days / (dt.date(date.year + 1, 1, 1) - start).days


def _sites(n, seed):
    rng = np.random.default_rng(seed)
    out = []
    while len(out) < n:
        lat = float(np.degrees(np.arcsin(rng.uniform(-0.94, 0.94))))  # |lat| < ~70: away from the magnetic poles
        lon = float(rng.uniform(-180, 180))
        date = dt.date(2025, 1, 1) + dt.timedelta(days=int(rng.integers(0, 5 * 365)))
        out.append((lat, lon, float(rng.uniform(0, 3000)), date))
    return out


@pytest.mark.parametrize("lat,lon,alt,date", _sites(24, seed=7))
def test_total_and_declination_close_to_wmm(lat, lon, alt, date):
    ours = earth_field(lat, lon, alt, date)
    model = pywmm.WMMv2()
    year = _decimal_year(date)
    ref_total = model.get_intensity(lat, lon, year, alt / 1000.0)
    ref_dec = model.get_declination(lat, lon, year, alt / 1000.0)
    assert abs(ours.total_nT - ref_total) < 200.0
    ddec = (ours.declination_deg - ref_dec + 180.0) % 360.0 - 180.0
    assert abs(ddec) < 0.5
