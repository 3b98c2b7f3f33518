"""A design used away from where it was planned says so, with the distance, and the currents come from
the field where it is used.

Reference for the distance: the haversine formula's common worked example, Cambridge (52.205 N,
0.119 E) to Paris (48.857 N, 2.351 E), 404.3 km on a sphere of the mean Earth radius (6,371 km)
-- a value from memory. The smallsat lab demo site stands at those Cambridge coordinates; the
"Paris" use here is an invented second site. The same-site rule (within 1 km and 100 m of
height) is the project's own (cage.reuse.same_site).
"""
from __future__ import annotations

import json
import types

import pytest

from conftest import SITES
from cage.reuse import site_move_note


@pytest.fixture(scope="module")
def design_path(smallsat_design):
    return smallsat_design


def _at(lat, lon, alt):
    return types.SimpleNamespace(latitude_deg=lat, longitude_deg=lon, altitude_m=alt)


PLANNED = {"name": "Smallsat lab", "latitude_deg": 52.205, "longitude_deg": 0.119, "altitude_m": 55.0}


def test_distance_matches_the_worked_example():
    note = site_move_note(PLANNED, _at(48.857, 2.351, 35.0), "second lab")
    assert "used 404 km away at second lab (-20 m in height)" in note  # 404.3 km
    assert "Smallsat lab" in note


def test_same_site_says_nothing():
    assert site_move_note(PLANNED, _at(52.2055, 0.1195, 60.0)) == ""  # about 65 m away, 5 m up
    assert site_move_note(PLANNED, _at(52.205, 0.119, 250.0)) != ""  # 195 m higher: not the same site
    assert site_move_note(None, _at(0.0, 0.0, 0.0)) == ""
    assert site_move_note({"name": "x"}, _at(0.0, 0.0, 0.0)) == ""  # no position recorded


def test_hostile_site_name_stays_one_line():
    note = site_move_note({**PLANNED, "name": "lab\nrm -rf /\x1b[2J"}, _at(48.857, 2.351, 35.0))
    assert "\n" not in note and "\x1b" not in note


def test_setpoints_away_from_the_site_warn_and_record_it(run_cli, design_path):
    run = run_cli("setpoints", design_path, "--lat", "48.857", "--lon", "2.351", "--alt-m", "35",
                  "--date", "2026-12-01", "--format", "json")
    assert run.code == 0, run
    doc = json.loads(run.out)
    assert any("planned for Smallsat lab" in w and "404 km away" in w for w in doc["provenance"]["warnings"])
    assert "404 km away" in run.err
    home = run_cli("setpoints", design_path, SITES / "smallsat-lab.toml", "--format", "json")
    assert home.code == 0, home
    assert "planned for" not in home.err
    assert not any("planned for" in w for w in json.loads(home.out)["provenance"]["warnings"])
