"""``cage field`` output against chaosmagpy's synthesis rotated by hand into the cage frame.

Reference: chaosmagpy synthesis of the IGRF-14 coefficients (see test_igrf_against_chaosmagpy)
and the definition of declination (D = atan2(E, N)) and of the cage frame in the README.
"""
from __future__ import annotations

import datetime as dt
import json
import math

import numpy as np

from conftest import SITES
from test_igrf_against_chaosmagpy import chaos_ned_nT

KEYS = ["model", "date", "lat_deg", "lon_deg", "alt_m", "north_nT", "east_nT", "down_nT", "horizontal_nT",
        "total_nT", "declination_deg", "inclination_deg", "secular_variation_nT_per_year", "heading_deg",
        "cage_frame_nT"]


def test_field_json_keys_and_values(run_cli):
    run = run_cli("field", "--lat", "-12.5", "--lon", "130.8", "--alt-m", "30", "--date", "2027-05-20",
                  "--heading-deg", "30", "--json")
    assert run.code == 0, run
    out = json.loads(run.out)
    assert all(k in out for k in KEYS)
    ref = chaos_ned_nT(-12.5, 130.8, 30.0, dt.date(2027, 5, 20))
    assert np.allclose([out["north_nT"], out["east_nT"], out["down_nT"]], ref, atol=0.5)
    psi = math.radians(30.0)
    x = ref[0] * math.cos(psi) + ref[1] * math.sin(psi)
    y = -ref[0] * math.sin(psi) + ref[1] * math.cos(psi)
    assert np.allclose([out["cage_frame_nT"][k] for k in "xyz"], [x, y, ref[2]], atol=0.5)
    assert math.isclose(out["declination_deg"], math.degrees(math.atan2(ref[1], ref[0])), abs_tol=1e-3)
    assert set(out["secular_variation_nT_per_year"]) == {"north", "east", "down"}


def test_magnetic_heading_uses_declination(run_cli):
    run = run_cli("field", "--lat", "60", "--lon", "-45", "--date", "2026-01-01", "--heading-deg", "0",
                  "--heading-magnetic", "--json")
    out = json.loads(run.out)
    assert math.isclose(out["heading_deg"], out["declination_deg"], abs_tol=1e-9)
    assert abs(out["cage_frame_nT"]["y"]) < 1e-6


def test_measured_field_is_in_force(run_cli):
    run = run_cli("field", SITES / "arctic-cal-hut.toml", "--json")
    out = json.loads(run.out)
    assert out["in_force"] == "measured"
    share = [out["measured_cage_frame_nT"][k] - out["cage_frame_nT"][k] for k in "xyz"]
    assert np.allclose(share, [out["local_share_cage_nT"][k] for k in "xyz"])
    table = run_cli("field", SITES / "arctic-cal-hut.toml")
    assert "measured (in force)" in table.out


def test_date_past_span_warns_once(run_cli):
    run = run_cli("field", "--lat", "10", "--lon", "10", "--date", "2031-01-01")
    assert run.code == 0
    assert run.err.count("warning") == 1 and "extrapolated" in run.err
