"""`cage orbit` end to end, and its series replayed by `cage sequence`.

References: the issue's independent computation (IGRF-14 with sgp4, 1 s steps) for a 420 km,
51.6 deg orbit: |B| up to about 53.1 uT, the largest orbit-frame rate about 73 nT/s, about
0.8 uT/s for a 1 deg/s spin; Kepler's third law for the period, T = 2 pi sqrt(a^3 / mu)
(mu = 398600.8 km^3/s^2, WGS72, from memory); the latency bound rate x delay = error.
"""
from __future__ import annotations

import io
import json
import math
import re

import numpy as np
import pytest

from conftest import SITES, assert_one_line_error
from orbit_helpers import make_tle

START = "2027-03-01T00:00:00"
HEADER = "t_s,x_nT,y_nT,z_nT,lat_deg,lon_deg,alt_km,total_nT"


@pytest.fixture(scope="module")
def tle(tmp_path_factory):
    path = tmp_path_factory.mktemp("orbit") / "sat.tle"
    path.write_text(make_tle(name="TEST SAT C"))
    return path


@pytest.fixture(scope="module")
def design_path(smallsat_design):
    return smallsat_design


def _load(path):
    lines = path.read_text().splitlines()
    assert lines[0] == HEADER
    return np.loadtxt(lines[1:], delimiter=",", ndmin=2)


def test_reference_orbit_numbers(tmp_path, run_cli, tle):
    out = tmp_path / "day.csv"
    run = run_cli("orbit", tle, "--start", START, "--duration-s", "86400", "--step-s", "1", "--out", out)
    assert run.code == 0, run
    d = _load(out)
    assert d.shape == (86401, 8)
    total = d[:, 7]
    assert np.allclose(np.linalg.norm(d[:, 1:4], axis=1), total, atol=0.01)
    assert abs(total.max() - 53_100.0) < 500.0  # issue: about 53.1 uT
    # The issue quotes about 21.7 uT for the least |B|; IGRF-14 at 420 km over the South
    # Atlantic goes below 19 uT, and a day of this track crosses it, so only a floor is asked.
    assert 18_000.0 < total.min() < 21_700.0
    rate = np.linalg.norm(np.diff(d[:, 1:4], axis=0), axis=1).max()  # 1 s steps: nT/s
    assert abs(rate - 73.0) < 0.05 * 73.0  # issue: about 73 nT/s in the orbit frame
    assert re.search(r"largest body-frame rate: 7\d\.\d nT/s", run.out)
    spin = tmp_path / "spin.csv"
    run = run_cli("orbit", tle, "--start", START, "--duration-s", "6000", "--attitude", "spin",
                  "--spin-rate-deg-s", "1", "--out", spin)
    assert run.code == 0, run
    s = _load(spin)
    spin_rate = np.linalg.norm(np.diff(s[:, 1:4], axis=0), axis=1).max()
    assert 650.0 < spin_rate < 950.0  # issue: about 0.8 uT/s


def test_planned_orbit_options_follow_keplers_period(tmp_path, run_cli):
    out = tmp_path / "planned.csv"
    run = run_cli("orbit", "--altitude-km", "600", "--inclination-deg", "97.8", "--raan-deg", "30",
                  "--start", START, "--duration-s", "30000", "--step-s", "5", "--attitude", "inertial", "--out", out)
    assert run.code == 0, run
    d = _load(out)
    lat = d[:, 4]
    up = np.flatnonzero((lat[:-1] < 0) & (lat[1:] >= 0))
    t_up = d[up, 0] + 5.0 * (-lat[up]) / (lat[up + 1] - lat[up])
    period = np.mean(np.diff(t_up))
    kepler = 2 * math.pi * math.sqrt((6378.137 + 600.0) ** 3 / 398600.8)
    assert abs(period / kepler - 1) < 0.005, (period, kepler)  # J2 changes the nodal period ~0.1 %
    assert abs(np.max(np.abs(lat)) - (180 - 97.8)) < 0.3  # highest latitude = 180 - inclination


def test_series_feeds_sequence_as_is_and_through_a_pipe(tmp_path, run_cli, tle, design_path, monkeypatch):
    out = tmp_path / "o.csv"
    assert run_cli("orbit", tle, "--start", START, "--duration-s", "300", "--step-s", "2", "--out", out).code == 0
    site = SITES / "smallsat-lab.toml"
    run = run_cli("sequence", design_path, site, "--series", out, "--rate-Hz", "5", "--format", "json")
    assert run.code == 0, run
    rows = json.loads(run.out)["rows"]
    assert len(rows) == 1501
    d = _load(out)
    assert np.allclose(rows[0]["target_cage_nT"], d[0, 1:4])  # body frame taken as the cage frame
    # The pipe: cage orbit ... | cage sequence ... --orbit -
    piped = run_cli("orbit", tle, "--start", START, "--duration-s", "300", "--step-s", "2")
    assert piped.code == 0 and piped.out.startswith(HEADER) and "Orbit field for" in piped.err
    monkeypatch.setattr("sys.stdin", io.StringIO(piped.out))
    run = run_cli("sequence", design_path, site, "--orbit", "-", "--rate-Hz", "5", "--latency-error-nT", "20")
    assert run.code == 0, run
    m = re.search(r"Largest field rate needed: ([\d.]+) nT/s", run.out)
    rate = float(m.group(1))
    expected = np.linalg.norm(np.diff(d[:, 1:4], axis=0), axis=1).max() / 2.0
    assert abs(rate - expected) < 0.06
    lag = float(re.search(r"may lag at most ([\d.]+) ms", run.out).group(1))
    assert abs(lag - 20.0 / rate * 1000.0) < 0.1 * 1000 / rate + 0.05  # rate x delay = error
    # Both the setpoints and the summary came from the nulled-ambient table.
    assert "t=300.000s" in run.out


def test_start_far_from_the_epoch_warns(tmp_path, run_cli, tle):
    run = run_cli("orbit", tle, "--start", "2027-05-10T00:00:00", "--duration-s", "60", "--out", tmp_path / "f.csv")
    assert run.code == 0 and "70 days from the elements' epoch" in run.err
    run = run_cli("orbit", tle, "--start", "2027-03-20T00:00:00", "--duration-s", "60", "--out", tmp_path / "f.csv")
    assert run.code == 0 and "epoch" not in run.err


def test_past_2030_warns_like_everywhere(tmp_path, run_cli, tle):
    run = run_cli("orbit", "--altitude-km", "500", "--inclination-deg", "45", "--start", "2031-06-01T00:00:00",
                  "--duration-s", "600", "--out", tmp_path / "late.csv")
    assert run.code == 0 and "predictive span" in run.err


def test_figure_and_hostile_name(tmp_path, run_cli):
    hostile = tmp_path / "hostile.tle"
    hostile.write_text(make_tle(name="EVIL \x1b[31mRED $x^2$"))
    png = tmp_path / "orbit.png"
    run = run_cli("orbit", hostile, "--start", START, "--duration-s", "3000", "--step-s", "10",
                  "--out", tmp_path / "o.csv", "--plot", png)
    assert run.code == 0, run
    assert "\x1b" not in run.out + run.err
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize("args,fragment", [
    (["--start", START, "--duration-s", "60"], "give an element set file"),
    (["--altitude-km", "420", "--start", START, "--duration-s", "60"], "--inclination-deg"),
    (["--altitude-km", "420", "--semi-major-axis-km", "6800", "--inclination-deg", "10", "--start", START,
      "--duration-s", "60"], "exactly one"),
    (["--altitude-km", "50", "--inclination-deg", "10", "--start", START, "--duration-s", "60"], "perigee"),
    (["--altitude-km", "420", "--inclination-deg", "10", "--start", "March 1st", "--duration-s", "60"],
     "ISO 8601"),
    (["--altitude-km", "420", "--inclination-deg", "10", "--start", "2036-01-01", "--duration-s", "60"],
     "cannot be extrapolated"),
    (["--altitude-km", "420", "--inclination-deg", "10", "--start", START, "--duration-s", "1e9"],
     "samples"),
    (["--altitude-km", "420", "--inclination-deg", "10", "--start", START, "--duration-s", "60",
      "--attitude", "spin"], "--spin-rate-deg-s"),
    (["--altitude-km", "420", "--inclination-deg", "10", "--start", START, "--duration-s", "60",
      "--attitude", "tumbling"], "--attitude must be"),
    (["--altitude-km", "420", "--inclination-deg", "10", "--start", START, "--duration-s", "60",
      "--attitude", "quaternions"], "--quaternions"),
    (["--altitude-km", "420", "--inclination-deg", "nan", "--start", START, "--duration-s", "60"], "finite"),
])
def test_bad_orbit_options_end_in_one_line(run_cli, args, fragment):
    assert_one_line_error(run_cli("orbit", *args), fragment)


def test_quaternion_table_must_cover_the_span(tmp_path, run_cli):
    q = tmp_path / "q.csv"
    q.write_text("t_s,qw,qx,qy,qz\n0,1,0,0,0\n30,1,0,0,0\n")
    assert_one_line_error(run_cli("orbit", "--altitude-km", "420", "--inclination-deg", "10", "--start", START,
                                  "--duration-s", "60", "--quaternions", q), "covers 0..30 s")
    q.write_text("t_s,qx,qw,qy,qz\n0,0,1,0,0\n60,0,1,0,0\n")
    assert_one_line_error(run_cli("orbit", "--altitude-km", "420", "--inclination-deg", "10", "--start", START,
                                  "--duration-s", "60", "--quaternions", q), "scalar first")
    q.write_text("t_s,qw,qx,qy,qz\n0,2,0,0,0\n60,1,0,0,0\n")
    assert_one_line_error(run_cli("orbit", "--altitude-km", "420", "--inclination-deg", "10", "--start", START,
                                  "--duration-s", "60", "--quaternions", q), "not 1")


def test_figure_shows_the_series_it_was_given(tmp_path, run_cli, tle):
    """The orbit figure's curves and ground-track colours are the CSV's numbers (uT)."""
    from cage.orbitplots import orbit_figure

    out = tmp_path / "f.csv"
    assert run_cli("orbit", tle, "--start", START, "--duration-s", "6000", "--step-s", "10", "--out", out).code == 0
    d = _load(out)
    fig = orbit_figure(d[:, 0], d[:, 1:4], d[:, 4], d[:, 5], title="t", attitude="nadir")
    lines = {ln.get_gid(): ln for ax in fig.axes for ln in ax.get_lines() if ln.get_gid()}
    for j, a in enumerate("xyz"):
        assert np.allclose(lines[f"field-{a}"].get_ydata(), d[:, 1 + j] / 1000.0)
    assert np.allclose(lines["field-total"].get_ydata(), d[:, 7] / 1000.0, atol=1e-5)
    track = [c for ax in fig.axes for c in ax.collections if c.get_gid() == "ground-track"][0]
    assert np.allclose(track.get_offsets(), d[:, [5, 4]])
    assert np.allclose(track.get_array(), np.linalg.norm(d[:, 1:4], axis=1) / 1000.0)
