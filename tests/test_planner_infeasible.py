"""Infeasible requirements: ``cage design`` exits 3 with one line naming the binding constraint
in numbers, and writes no design file.

The numbers in each message are checked against our own computation:
- the room less its clearance (README: clearance kept free on every side);
- the needed field, |ambient| + extra, with the ambient from chaosmagpy's IGRF-14 synthesis
  rotated into the cage frame by hand (test_planner_against_magpylib's helpers);
- the pair size a message names: magpylib field of a flat-spaced square pair (spacing 0.5445
  x side, Firester, Rev. Sci. Instrum. 37, 1264 (1966)) meets the tolerance just above it and
  misses it just below;
- the current and voltage a message names: they imply a winding resistance; copper (IEC 60028
  rho and alpha, ASTM B258 diameter) turns that into a perimeter, and that square pair at
  that current must give the needed field (magpylib);
- how many turns fit a tiny channel: whole wire diameters per width times per depth, with
  AWG 14 heavy-build maximum overall diameter 0.0675 in (NEMA MW 1000, from memory).
"""
from __future__ import annotations

import math
import re

import numpy as np
import pytest

magpy = pytest.importorskip("magpylib")

from conftest import SITES, assert_one_line_error  # noqa: E402
from test_planner_against_magpylib import (  # noqa: E402
    mag_deviation,
    mag_field_per_amp_T,
    ohm_per_m,
    reference_ambient_cage_nT,
)

BASE = (SITES / "smallsat-lab.toml").read_text()
FLAT_SQUARE = 0.5445  # spacing / side, Firester (1966)
AWG14_MAX_OD_M = 0.0675 * 0.0254  # NEMA MW 1000 heavy build, from memory


def _site(tmp_path, *replacements):
    text = BASE
    for old, new in replacements:
        assert old in text, old
        text = text.replace(old, new)
    path = tmp_path / "site.toml"
    path.write_text(text)
    return path


def _design_fails(run_cli, tmp_path, site_path, *fragments):
    out = tmp_path / "design.json"
    run = run_cli("design", site_path, "--out", out)
    assert_one_line_error(run, *fragments, code=3)
    assert not out.exists()
    assert [p.name for p in tmp_path.iterdir()] == ["site.toml"]  # no temporary left behind
    return run.err.strip()


def _square_doc(side_m, turns=1):
    """A design-like document with one square pair on x at the flat spacing."""
    axis = {"shape": "square", "side_m": side_m, "spacing_m": FLAT_SQUARE * side_m, "turns": turns}
    return {"axes": {"x": axis}}


def _needed_nT(site_path, axis):
    from cage.sitefile import load_site

    site = load_site(site_path)
    j = "xyz".index(axis)
    return abs(reference_ambient_cage_nT(site)[j]) + 1000.0 * site.requirement.extra_field_uT[j]


def test_test_volume_too_large_for_the_room(run_cli, tmp_path):
    path = _site(tmp_path, ("test_volume_m = [0.25, 0.25, 0.25]", "test_volume_m = [1.0, 1.0, 1.0]"))
    msg = _design_fails(run_cli, tmp_path, path, "1 x 1 x 1 m test volume", "room allows")
    m = re.search(r"square (\w) pair of at least ([\d.]+) m side, ([\d.]+) m over the frames along (\w), "
                  r"while the room allows ([\d.]+) m", msg)
    assert m, msg
    size, over, along, allows = float(m[2]), float(m[3]), m[4], float(m[5])
    # the room: 5.2 x 4.3 x 3.0 m less 0.3 m each side
    inner = {"x": 5.2 - 0.6, "y": 4.3 - 0.6, "z": 3.0 - 0.6}
    assert allows == pytest.approx(inner[along], abs=0.005)
    assert over > allows
    # frames: side + depth across the axis (0.04 m channel depth)
    assert over == pytest.approx(size + 0.04, abs=0.011)
    # the named size is the smallest meeting 0.1 % over the 1 m cube (magpylib, our grid)
    cube = (1.0, 1.0, 1.0)
    assert mag_deviation(_square_doc(size * 1.01), "x", cube) <= 1e-3
    assert mag_deviation(_square_doc(size * 0.99), "x", cube) > 1e-3


def test_supply_voltage_too_low_for_any_wire(run_cli, tmp_path):
    path = _site(tmp_path, ("max_voltage_V = 30", "max_voltage_V = 2"))
    msg = _design_fails(run_cli, tmp_path, path, "more than the supply's 2 V")
    m = re.search(r"the (\w) axis needs ([\d.]+) uT; with (\d+) turns of (AWG \d+|[\d.]+ mm) \(the most allowed\) "
                  r"that takes ([\d.]+) A at ([\d.]+) V with the winding at ([\d.]+) C", msg)
    assert m, msg
    axis, need_uT, turns, wire, amps, volts, temp = m[1], float(m[2]), int(m[3]), m[4], float(m[5]), \
        float(m[6]), float(m[7])
    assert need_uT == pytest.approx(_needed_nT(path, axis) / 1000.0, abs=0.051)
    assert volts > 2.0 and amps <= 5.0
    # The numbers hang together: V / I less the 6 m of leads at 22 C is the hot winding; copper
    # gives its length, hence the square's side; that pair at that current gives the field.
    r_winding = volts / amps - 6.0 * ohm_per_m(wire, 22.0)
    side = r_winding / ohm_per_m(wire, temp) / (2 * turns) / 4.0
    k = mag_field_per_amp_T(_square_doc(side, turns), "x")
    assert k * amps * 1e9 == pytest.approx(need_uT * 1000.0, rel=0.03)


def test_too_few_turns_fit_a_tiny_channel(run_cli, tmp_path):
    path = _site(tmp_path, ("frame_width_m = 0.04", "frame_width_m = 0.003"),
                 ("frame_depth_m = 0.04", "frame_depth_m = 0.003"),
                 ('wires = ["AWG 14", "AWG 16", "AWG 18", "1.5 mm"]', 'wires = ["AWG 14"]'))
    msg = _design_fails(run_cli, tmp_path, path, "3 x 3 mm frame channel")
    m = re.search(r"the (\w) axis needs ([\d.]+) uT; within the supply's 5 A that takes at least (\d+) turns of "
                  r"AWG 14 per coil on a [\d.]+ m side, but only (\d+) fit", msg)
    assert m, msg
    need_uT, at_least, fit = float(m[2]), int(m[3]), int(m[4])
    assert need_uT == pytest.approx(_needed_nT(path, m[1]) / 1000.0, abs=0.051)
    per = math.floor(0.003 / AWG14_MAX_OD_M)
    assert fit == per * per == 1
    assert at_least > fit


def test_nesting_does_not_fit_the_room(run_cli, tmp_path):
    # Each pair alone fits a 2.0 m inner height, but one square pair must sit outside another.
    path = _site(tmp_path, ("height_m = 3.0", "height_m = 2.6"), ("max_field_step_nT = 50", 'max_field_step_nT = 50\nsystems = ["pair"]'))
    msg = _design_fails(run_cli, tmp_path, path, "nesting the three pairs")
    m = re.search(r"envelope of ([\d.]+) x ([\d.]+) x ([\d.]+) m \(x, y, z\), while the room less its clearance "
                  r"allows ([\d.]+) x ([\d.]+) x ([\d.]+) m", msg)
    assert m, msg
    env = np.array([float(v) for v in m.groups()[:3]])
    allows = np.array([float(v) for v in m.groups()[3:]])
    assert allows == pytest.approx([4.6, 3.7, 2.0], abs=0.005)
    assert np.any(env > allows)


def test_infeasible_in_process_is_one_line():
    # The core raises InfeasibleError (exit code 3) with the same single line.
    from cage.ambient import site_ambient
    from cage.errors import InfeasibleError
    from cage.optimise import plan_cage, plan_inputs_from_site
    from cage.sitefile import site_from_text

    site = site_from_text(BASE.replace("max_voltage_V = 30", "max_voltage_V = 2"), "weak.toml")
    inp = plan_inputs_from_site(site, site_ambient(site).in_force_cage_nT)
    with pytest.raises(InfeasibleError) as info:
        plan_cage(inp)
    assert info.value.exit_code == 3
    assert "\n" not in str(info.value) and "2 V" in str(info.value)
