"""IGRF-14 field against chaosmagpy's independent spherical-harmonic synthesis.

Reference: chaosmagpy (Kloss et al., DTU Space), its own SHC-file reader, geodetic to
geocentric conversion (WGS84) and synthesis, fed the same IGRF-14 coefficient file.
IGRF is piecewise linear in time between its 5-year snapshots (Alken et al. 2025), so
the coefficients at a date are the linear interpolation of the snapshots.
"""
from __future__ import annotations

import datetime as dt
from pathlib import Path

import numpy as np
import pytest

chaos_du = pytest.importorskip("chaosmagpy.data_utils")
chaos_mu = pytest.importorskip("chaosmagpy.model_utils")
chaos_cu = pytest.importorskip("chaosmagpy.coordinate_utils")

from cage.geomag import earth_field  # noqa: E402

TOLERANCE_NT = 0.5  # per component, from the acceptance list


def _igrf14_file() -> str:
    import ppigrf

    return str(Path(ppigrf.__file__).parent / "IGRF14.shc")


def chaos_ned_nT(lat_deg, lon_deg, alt_m, date):
    times_mjd, coeffs, _ = chaos_du.load_shcfile(_igrf14_file(), leap_year=True)
    t = chaos_du.mjd2000(date.year, date.month, date.day)
    coeffs_t = np.array([np.interp(t, times_mjd, row) for row in coeffs])
    radius, theta = chaos_cu.gg_to_geo(alt_m / 1000.0, 90.0 - lat_deg)
    b_r, b_t, b_p = chaos_mu.synth_values(coeffs_t, radius, theta, lon_deg)
    _, _, north, down = chaos_cu.geo_to_gg(radius, theta, b_r, b_t)
    return np.array([float(north), float(b_p), float(down)])


def _random_sites(n, seed):
    rng = np.random.default_rng(seed)
    start = dt.date(1990, 1, 1).toordinal()
    stop = dt.date(2029, 12, 31).toordinal()
    for _ in range(n):
        lat = float(np.degrees(np.arcsin(rng.uniform(-1, 1))))  # uniform on the sphere
        lon = float(rng.uniform(-180, 180))
        alt = float(rng.uniform(0, 5000))
        date = dt.date.fromordinal(int(rng.integers(start, stop)))
        yield lat, lon, alt, date


@pytest.mark.parametrize("lat,lon,alt,date", list(_random_sites(60, seed=20261201)))
def test_components_match_chaosmagpy(lat, lon, alt, date):
    ours = earth_field(lat, lon, alt, date).ned_nT
    ref = chaos_ned_nT(lat, lon, alt, date)
    assert np.all(np.abs(ours - ref) < TOLERANCE_NT), (ours, ref)


def test_secular_variation_matches_chaosmagpy_slope():
    # The SV is the slope of the piecewise-linear model: compare with chaosmagpy's field
    # difference across the same interval (2025-01-01 .. 2030-01-01), in nT per year.
    lat, lon, alt = -33.9, 18.4, 30.0
    ours = earth_field(lat, lon, alt, dt.date(2029, 12, 30)).sv_ned_nT_per_year
    b0 = chaos_ned_nT(lat, lon, alt, dt.date(2025, 1, 1))
    b1 = chaos_ned_nT(lat, lon, alt, dt.date(2030, 1, 1))
    years = (dt.date(2030, 1, 1) - dt.date(2025, 1, 1)).days / 365.25
    assert np.allclose(ours, (b1 - b0) / years, atol=0.2)


def test_extrapolation_past_2030_follows_last_secular_variation():
    # ppigrf holds the 2030 value past 2030; we extrapolate with the 2025-2030 slope.
    lat, lon, alt = 40.0, -105.0, 1600.0
    f2030 = earth_field(lat, lon, alt, dt.date(2030, 1, 1))
    f2033 = earth_field(lat, lon, alt, dt.date(2033, 1, 1))
    years = (dt.date(2033, 1, 1) - dt.date(2030, 1, 1)).days / 365.25
    expected = chaos_ned_nT(lat, lon, alt, dt.date(2030, 1, 1)) + f2030.sv_ned_nT_per_year * years
    assert f2033.extrapolated and f2033.warning
    assert np.allclose(f2033.ned_nT, expected, atol=TOLERANCE_NT)
    assert not np.allclose(f2033.ned_nT, f2030.ned_nT, atol=10.0)
