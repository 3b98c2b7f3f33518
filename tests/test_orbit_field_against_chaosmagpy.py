"""The field along an orbit against chaosmagpy's independent IGRF-14 synthesis.

Reference: chaosmagpy (Kloss et al., DTU Space): its own SHC reader and spherical-harmonic
synthesis, evaluated here straight at the geocentric radius, colatitude and longitude of the
propagated Earth-fixed position (no geodetic conversion on the reference side). Frame-free
checks: |B| in the body frame equals the model's |B| there (a rotation keeps lengths), and in
the nadir attitude the body z component (toward nadir) is minus the radial component B_r
(the orbit frame's z is -r, Wertz 1978).
"""
from __future__ import annotations

import datetime as dt
from pathlib import Path

import numpy as np
import pytest

chaos_du = pytest.importorskip("chaosmagpy.data_utils")
chaos_mu = pytest.importorskip("chaosmagpy.model_utils")

from orbit_helpers import make_tle  # noqa: E402

from cage import orbit  # noqa: E402
from cage.attitude import Attitude  # noqa: E402
from cage.elementfile import parse_element_set, satrec_of  # noqa: E402
from cage.geomag import earth_field, field_ned_along_track  # noqa: E402

TOLERANCE_NT = 1.0  # IGRF synthesis agreement, as the site-field checks (0.5 nT) plus margin


def _igrf14_file() -> str:
    import ppigrf

    return str(Path(ppigrf.__file__).parent / "IGRF14.shc")


def chaos_radial_and_total(position_ecef_km, start, t_s):
    times_mjd, coeffs, _ = chaos_du.load_shcfile(_igrf14_file(), leap_year=True)
    t0 = chaos_du.mjd2000(start.year, start.month, start.day, start.hour, start.minute, start.second)
    mjd = t0 + np.asarray(t_s) / 86400.0
    r = np.linalg.norm(position_ecef_km, axis=1)
    theta = np.degrees(np.arccos(position_ecef_km[:, 2] / r))
    phi = np.degrees(np.arctan2(position_ecef_km[:, 1], position_ecef_km[:, 0]))
    b_r = np.empty(r.size)
    total = np.empty(r.size)
    for k in range(r.size):
        c = np.array([np.interp(mjd[k], times_mjd, row) for row in coeffs])
        br, bt, bp = chaos_mu.synth_values(c, r[k], theta[k], phi[k])
        b_r[k], total[k] = float(br), float(np.sqrt(br ** 2 + bt ** 2 + bp ** 2))
    return b_r, total


@pytest.fixture(scope="module")
def sat():
    return satrec_of(parse_element_set(make_tle(), "test"))


START = dt.datetime(2027, 3, 1)


@pytest.mark.parametrize("attitude", [Attitude("nadir"), Attitude("inertial"),
                                      Attitude("spin", spin_axis="y", spin_rate_deg_s=3.0)])
def test_body_magnitude_is_the_models_magnitude(sat, attitude):
    t = orbit.sample_times_s(86400.0, 1200.0)
    res = orbit.orbit_field(sat, START, t, attitude)
    b_r, total = chaos_radial_and_total(res.track.position_ecef_km, START, t)
    assert np.max(np.abs(np.linalg.norm(res.body_nT, axis=1) - total)) < TOLERANCE_NT
    if attitude.mode == "nadir":
        assert np.max(np.abs(res.body_nT[:, 2] + b_r)) < TOLERANCE_NT
    # Sanity: the 51.6 deg orbit at 420 km sees between 18 and 54 uT (IGRF-14 at that height).
    assert 18_000 < total.min() and total.max() < 54_000


def test_along_track_equals_point_by_point():
    """The time-vectorised evaluation (epochs, then linear in time) against the one-point
    function at each point's own time, across an epoch boundary and past 2030."""
    rng = np.random.default_rng(7)
    lat = rng.uniform(-80, 80, 12)
    lon = rng.uniform(-180, 180, 12)
    alt = rng.uniform(300e3, 800e3, 12)
    for start in (dt.datetime(2024, 12, 31, 23), dt.datetime(2031, 5, 2)):
        t = np.sort(rng.uniform(0, 2 * 86400, 12))
        track, warning = field_ned_along_track(lat, lon, alt, start, t)
        for k in range(12):
            one = earth_field(lat[k], lon[k], alt[k], start + dt.timedelta(seconds=float(t[k])))
            assert np.max(np.abs(track[k] - one.ned_nT)) < 1e-6
            assert bool(warning) == bool(one.warning)
