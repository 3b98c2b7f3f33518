"""Orbits too low or too high for the series to mean anything, checked against Kepler's third
law, a = (mu / n^2)^(1/3) (mu = 398600.8 km^3/s^2, WGS72, from memory): an element set whose
mean motion puts it inside the atmosphere is refused as the option form's low perigee is; an
orbit beyond 10 Earth radii (63,710 km from the centre, the day-side magnetopause, a common
figure of the trade, from memory) warns that IGRF (internal field only) no longer describes the
field, and the geostationary orbit (period one sidereal day, 86164.1 s, from memory; 6.6 Earth
radii) does not.

Invented element sets only (tests/orbit_helpers.py).
"""
from __future__ import annotations

import datetime as dt
import math
import re

from conftest import assert_one_line_error
from orbit_helpers import WGS72_MU_KM3_S2, make_tle

START = "2027-03-01T00:00:00"
EARTH_RADIUS_KM = 6371.0  # mean radius, from memory


def test_decayed_element_set_is_refused_like_a_low_perigee(run_cli, tmp_path):
    tle = tmp_path / "low.tle"
    tle.write_text(make_tle(altitude_km=15.0, name="TEST SAT LOW"))
    n_rad_s = float(tle.read_text().splitlines()[2][52:63]) * 2 * math.pi / 86400.0
    kepler_height_km = (WGS72_MU_KM3_S2 / n_rad_s ** 2) ** (1 / 3) - 6378.137
    out = tmp_path / "low.csv"
    run = run_cli("orbit", tle, "--start", START, "--duration-s", "600", "--step-s", "10", "--out", out)
    assert_one_line_error(run, "low.tle", "below 100 km", "decay")
    assert not out.exists()
    m = re.search(r"falls to (-?[\d.]+) km at t = ([\d.]+) s \((\S+) UTC\)", run.err)
    assert m, run.err
    height, t = float(m.group(1)), float(m.group(2))
    assert abs(height - kepler_height_km) < 30.0, (height, kepler_height_km)
    assert dt.datetime.fromisoformat(m.group(3)) == dt.datetime.fromisoformat(START) + dt.timedelta(seconds=t)
    # The option form at the same height says it the same way.
    run = run_cli("orbit", "--altitude-km", "15", "--inclination-deg", "51.6", "--start", START,
                  "--duration-s", "600", "--out", out)
    assert_one_line_error(run, "below 100 km", "decay")


def test_beyond_ten_earth_radii_warns_in_terminal_and_file_and_geostationary_does_not(run_cli, tmp_path):
    out = tmp_path / "far.csv"
    altitude_km = 60_000.0  # 66,378 km from the centre: 10.4 Earth radii
    assert 6378.137 + altitude_km > 10 * EARTH_RADIUS_KM
    run = run_cli("orbit", "--altitude-km", altitude_km, "--inclination-deg", "10", "--start", START,
                  "--duration-s", "600", "--step-s", "60", "--out", out)
    assert run.code == 0, run
    assert "10 Earth radii" in run.err and "IGRF" in run.err
    notes = [line for line in out.read_text().splitlines() if line.startswith("# warning")]
    assert any("10 Earth radii" in line for line in notes), notes
    run = run_cli("orbit", "--altitude-km", "1e6", "--inclination-deg", "10", "--start", START,
                  "--duration-s", "60", "--step-s", "60", "--out", out)
    assert run.code == 0 and "Earth radii" in run.err
    n = 2 * math.pi / 86164.1
    a_km = (WGS72_MU_KM3_S2 / n ** 2) ** (1 / 3)
    assert 6.5 < a_km / EARTH_RADIUS_KM < 6.7
    run = run_cli("orbit", "--semi-major-axis-km", f"{a_km:.3f}", "--inclination-deg", "0", "--start", START,
                  "--duration-s", "600", "--step-s", "60", "--out", out)
    assert run.code == 0, run
    assert "warning" not in run.err and "# warning" not in out.read_text()
