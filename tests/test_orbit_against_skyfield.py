"""Orbit positions against skyfield: Earth-fixed position and geodetic point over a day.

Reference: skyfield (Rhodes), which carries the same SGP4 propagator but its own time scales
and its own reduction of TEME to the Earth-fixed ITRS (through GCRS, with the IAU precession
and nutation), and its own WGS84 geodetic conversion (``wgs84.geographic_position_of``).
Timescale from skyfield's built-in tables only (no downloads). cage reduces TEME to
Earth-fixed with GMST (IAU 1982) and neglects polar motion (Vallado et al. 2006); skyfield's
built-in tables carry no polar motion either, so both should agree to metres when cage is
given skyfield's UT1 - UTC.
"""
from __future__ import annotations

import datetime as dt

import numpy as np
import pytest

skyfield_api = pytest.importorskip("skyfield.api")
framelib = pytest.importorskip("skyfield.framelib")

from orbit_helpers import make_tle  # noqa: E402

from cage import orbit  # noqa: E402
from cage.elementfile import parse_element_set, satrec_of  # noqa: E402

TOLERANCE_M = 5.0  # "within a few metres", from the issue


def _case(tle_text, start, duration_s=86400.0, step_s=300.0):
    es = parse_element_set(tle_text, "test")
    sat = satrec_of(es)
    ts = skyfield_api.load.timescale(builtin=True)
    t = orbit.sample_times_s(duration_s, step_s)
    when = ts.utc(start.year, start.month, start.day, start.hour, start.minute, start.second + t)
    dut1 = float(np.mean(when.dut1))  # UT1 - UTC from skyfield's built-in table
    ours = orbit.propagate(sat, start, t, ut1_minus_utc_s=dut1)
    ref_sat = skyfield_api.EarthSatellite(es.line1, es.line2, ts=ts)
    pos = ref_sat.at(when)
    return ours, pos, np.asarray(when.dut1)


@pytest.mark.parametrize("kwargs,start", [
    (dict(), dt.datetime(2027, 3, 1)),
    (dict(incl=97.4, raan=10.0, altitude_km=600.0, ecc=0.001, satnum=99902), dt.datetime(2026, 6, 15, 6, 30)),
    (dict(incl=5.0, raan=300.0, altitude_km=1200.0, ecc=0.02, argp=200.0, mean_anomaly=45.0, satnum=99903,
          year=26, day=200.5), dt.datetime(2026, 7, 19, 12)),
])
def test_earth_fixed_positions_match_skyfield_over_a_day(kwargs, start):
    if "year" not in kwargs:
        kwargs = dict(kwargs, year=start.year % 100, day=float(start.timetuple().tm_yday))
    ours, pos, dut1 = _case(make_tle(**kwargs), start)
    assert np.ptp(dut1) < 0.01  # one UT1 - UTC serves the whole day
    ref = pos.frame_xyz(framelib.itrs).km.T
    miss_m = np.linalg.norm(ours.position_ecef_km - ref, axis=1) * 1000.0
    assert miss_m.max() < TOLERANCE_M, miss_m.max()
    # Geodetic latitude, longitude and height against skyfield's WGS84 conversion.
    geo = skyfield_api.wgs84.geographic_position_of(pos)
    assert np.max(np.abs(ours.latitude_deg - geo.latitude.degrees)) < 1e-4  # 1e-4 deg ~ 11 m
    dlon = (ours.longitude_deg - geo.longitude.degrees + 180.0) % 360.0 - 180.0
    assert np.max(np.abs(dlon * np.cos(np.radians(ours.latitude_deg)))) < 1e-4
    assert np.max(np.abs(ours.altitude_km - geo.elevation.km)) * 1000.0 < TOLERANCE_M


def test_leaving_out_ut1_is_visible():
    """The check can fail: without UT1 - UTC (here about 0.1 s) the Earth turns by a few tens
    of metres at the orbit, which the comparison sees."""
    start = dt.datetime(2027, 3, 1)
    ours, pos, dut1 = _case(make_tle(), start, duration_s=6000.0, step_s=600.0)
    es = parse_element_set(make_tle(), "test")
    plain = orbit.propagate(satrec_of(es), start, ours.t_s, ut1_minus_utc_s=0.0)
    ref = pos.frame_xyz(framelib.itrs).km.T
    miss_m = np.linalg.norm(plain.position_ecef_km - ref, axis=1) * 1000.0
    # 7.29e-5 rad/s x |dut1| s x 6800 km (Earth's rotation rate: common practice)
    expected_m = 7.292115e-5 * abs(float(dut1[0])) * 6800e3
    if expected_m < 4.0 * TOLERANCE_M:
        pytest.skip(f"UT1 - UTC is only {dut1[0]:.3f} s at this date")
    assert miss_m.max() > 0.5 * expected_m
