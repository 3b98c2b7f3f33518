"""Facts of the trade about the main field (common practice, no single source)."""
from __future__ import annotations

import datetime as dt

import numpy as np

from cage.geomag import earth_field

DATE = dt.date(2026, 12, 1)


def test_surface_total_intensity_range():
    # Common practice: the surface field lies between about 22,000 nT (South Atlantic
    # Anomaly) and 67,000 nT (near the southern dip pole).
    rng = np.random.default_rng(3)
    totals = [earth_field(float(np.degrees(np.arcsin(rng.uniform(-1, 1)))), float(rng.uniform(-180, 180)), 0.0,
                          DATE).total_nT for _ in range(40)]
    assert 22_000 < min(totals) and max(totals) < 67_000


def test_inclination_near_dip_poles_and_dip_equator():
    # Common practice (locations from memory, roughly right for the 2020s): the north dip
    # pole in the Arctic Ocean near 86 N 140 E, the south dip pole off Antarctica near
    # 64 S 135 E; along 40 W the dip equator lies a little north of the equator.
    assert earth_field(86.0, 140.0, 0.0, DATE).inclination_deg > 85.0
    assert earth_field(-64.0, 135.0, 0.0, DATE).inclination_deg < -85.0
    # Along a meridian the inclination changes sign at the dip equator: find it.
    lats = np.linspace(-30, 30, 61)
    inc = np.array([earth_field(float(la), -40.0, 0.0, DATE).inclination_deg for la in lats])
    assert inc[0] < -10 and inc[-1] > 10
    crossing = lats[np.argmin(np.abs(inc))]
    assert abs(earth_field(float(crossing), -40.0, 0.0, DATE).inclination_deg) < 1.0


def test_poles_are_finite():
    # ppigrf gives NaN east at exactly +-90; the tool must not.
    for lat in (90.0, -90.0):
        f = earth_field(lat, 0.0, 0.0, DATE)
        assert np.all(np.isfinite(f.ned_nT)) and np.isfinite(f.declination_deg)
        # Continuous with the field just short of the pole along the same meridian.
        near = earth_field(lat - np.sign(lat) * 1e-3, 0.0, 0.0, DATE)
        assert np.allclose(f.ned_nT, near.ned_nT, atol=2.0)
    # Common practice: steep downward dip at the north geographic pole (the dip pole is
    # nearby), about -70 deg at the south geographic pole (its dip pole is ~2,800 km away).
    assert earth_field(90.0, 0.0, 0.0, DATE).inclination_deg > 80.0
    assert -80.0 < earth_field(-90.0, 0.0, 0.0, DATE).inclination_deg < -60.0


def test_vacuum_permeability_is_the_codata_value():
    # CODATA 2022 (NIST): mu_0 = 1.25663706127(20) x 10^-6 N A^-2; scipy.constants carries it.
    import pytest
    from scipy.constants import mu_0

    from cage.biot_savart import MU0_T_M_PER_A

    assert MU0_T_M_PER_A == pytest.approx(1.25663706127e-06, rel=1e-12)
    assert MU0_T_M_PER_A == pytest.approx(mu_0, rel=2e-10)  # 2018 and 2022 values differ by 7e-11
