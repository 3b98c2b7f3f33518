"""Large targets, unreachable rows, extreme inputs and bounded readers.

- Targets of 1 mT to 100 mT on a lab cage of some 40 uT/A: every row written in every format
  without a crash. An axis whose winding has no steady temperature is unreachable: the
  steady-state heat balance I^2 R20 (1 + alpha (T - 20)) = h A (T - T_a) has a solution only
  while alpha I^2 R20 < h A (the fixed-point slope below 1; IEC 60028 copper coefficient,
  natural-convection coefficient: common practice), checked here with the scalar model of
  cage.thermal as the independent reference. Such rows carry null (JSON) or empty (CSV)
  numbers and a reason; no inf, nan or absurd temperature is printed.
- Values the validators accept never end in exit 1 (unexpected failure): they are refused
  with one line (exit 2) or computed.
- Readers refuse pipes and oversized files and stop at their row caps.
- VOLT is rounded down: the written number is never above the supply's maximum.
"""
from __future__ import annotations

import csv
import io
import json
import math
import os
import re

import pytest

from conftest import SITES, assert_one_line_error, cli_code, csv_body

SITE = SITES / "smallsat-lab.toml"
LARGE = "label,x_uT,y_uT,z_uT\n" + "".join(
    f"big-{k},{v},{-v / 2},{v / 3}\n" for k, v in enumerate([1000, 2000, 5000, 10000, 20000, 50000, 100000]))


@pytest.fixture(scope="module")
def large(tmp_path_factory):
    folder = tmp_path_factory.mktemp("large")
    design = folder / "design.json"
    assert cli_code("design", SITE, "--system", "pair", "--out", design) == 0
    targets = folder / "large.csv"
    targets.write_text(LARGE)
    return design, targets, folder


def test_large_targets_every_format(run_cli, large):
    design, targets, folder = large
    outs = {}
    for fmt in ("table", "csv", "json", "scpi"):
        run = run_cli("setpoints", design, SITE, "--targets", targets, "--format", fmt)
        assert run.code == 0, run
        outs[fmt] = run.out
        # no infinite or not-a-number value written as a number (a word like "provenance" is fine)
        assert not re.search(r"(?<![A-Za-z])-?(inf|infinity|nan)(?![A-Za-z])", run.out, re.I), fmt
    doc = json.loads(outs["json"])
    big = [r for r in doc["rows"] if r["label"].startswith("big-")]
    assert len(big) == 7 and not any(r["within_limits"] for r in big)
    unreachable = [r for r in big if not all(r["reachable"].values())]
    assert unreachable, "100 mT must be out of any lab winding's reach"
    for r in unreachable:
        for a in "xyz":
            if not r["reachable"][a]:
                assert r["voltage_V"][a] is None and r["power_W"][a] is None
                assert r["winding_temperature_C"][a] is None
                assert any("unreachable" in p for p in r["problems"][a])
        assert r["total_power_W"] is None
    for r in doc["rows"]:
        for a in "xyz":
            t = r["winding_temperature_C"][a]
            assert t is None or t <= 250.0  # no absurd temperature printed as an estimate
    rows = {r["label"]: r for r in csv.DictReader(io.StringIO(csv_body(outs["csv"])))}
    for r in unreachable:
        cells = rows[r["label"]]
        for a in "xyz":
            if not r["reachable"][a]:
                assert cells[f"voltage_{a}_V"] == "" and cells[f"winding_temperature_{a}_C"] == ""
        assert "unreachable" in cells["problems"]


def test_unreachable_matches_the_scalar_heat_balance(large):
    """The table's reachable flag agrees with cage.thermal's scalar closed form."""
    from cage.designfile import load_design
    from cage.electrical import axis_electrics
    from cage.setpoints import _axis_circuit, _axis_drive_arrays
    import numpy as np

    design = load_design(large[0])
    for a in design.axes:
        circuit = _axis_circuit(a, 22.0)
        currents = np.linspace(0.0, 200.0, 81)
        arrays = _axis_drive_arrays(circuit, currents)
        for i, ok, t, v in zip(currents, arrays.reachable, arrays.winding_temperature_C, arrays.voltage_V):
            el = axis_electrics(a.pair, a.wire, float(i), lead_length_m=a.lead_length_m or 0.0,
                                frame_width_m=a.frame_width_m, frame_depth_m=a.frame_depth_m,
                                ambient_temperature_C=22.0)
            if not el.temperature_converged:
                assert not ok
            elif el.winding_temperature_C <= 250.0:
                assert ok and t == pytest.approx(el.winding_temperature_C, rel=1e-9)
                assert v == pytest.approx(el.voltage_V, rel=1e-9)
            else:
                assert not ok


def test_plan_with_large_targets_writes_every_output(run_cli, large, tmp_path):
    _, targets, _ = large
    out = tmp_path / "plan"
    run = run_cli("plan", SITE, "--out", out, "--targets", targets)
    assert run.code == 0, run
    for name in ("field.json", "design.json", "setpoints.csv", "setpoints.json", "setpoints.scpi",
                 "setpoints.png", "report.html"):
        assert (out / name).is_file(), name


def test_volt_is_rounded_down_never_past_the_limit():
    from cage.setpointfile import _voltage_limit
    from cage.supplies import Supply

    s = Supply(axis="x", max_voltage_V=12.3456, max_current_A=5.0, resolution_A=0.001, bipolar=True)
    assert f"{_voltage_limit(100.0, s):.3f}" == "12.345"  # from the issue: 12.346 would exceed
    assert _voltage_limit(math.nan, s) <= 12.3456
    s2 = Supply(axis="x", max_voltage_V=30.0, max_current_A=5.0, resolution_A=0.001, bipolar=True)
    assert f"{_voltage_limit(2.0, s2):.3f}" == "3.400"  # 1.2 x 2 V + 1 V margin
    for v in (0.1, 1.0049, 7.77777, 24.9999999):
        assert _voltage_limit(v, s2) <= min(30.0, 1.2 * v + 1.0)


def _site_with(tmp_path, old: str, new: str, name="site.toml"):
    text = SITE.read_text()
    assert old in text
    path = tmp_path / name
    path.write_text(text.replace(old, new))
    return path


def test_extremes_the_validators_accept_end_in_one_line(run_cli, large, tmp_path):
    design, _, _ = large
    tv = _site_with(tmp_path, "test_volume_m = [0.25, 0.25, 0.25]", "test_volume_m = [1e-300, 1e-300, 1e-300]",
                    "tv.toml")
    assert_one_line_error(run_cli("design", tv, "--out", tmp_path / "tv.json"), "test_volume_m")
    res = _site_with(tmp_path, "resolution_A = 0.001", "resolution_A = 5e-324", "res.toml")
    assert_one_line_error(run_cli("setpoints", design, res), "resolution_A")
    hot = _site_with(tmp_path, "ambient_temperature_C = 22", "ambient_temperature_C = 200", "hot.toml")
    assert_one_line_error(run_cli("setpoints", design, hot), "ambient_temperature_C")
    deep_toml = tmp_path / "deep.toml"
    deep_toml.write_text("a = " + "[" * 5000 + "]" * 5000 + "\n")
    assert_one_line_error(run_cli("field", deep_toml))
    deep_json = tmp_path / "deep.json"
    deep_json.write_text("[" * 100000 + "]" * 100000)
    assert_one_line_error(run_cli("setpoints", deep_json, SITE))
    for name, k, b0 in (("tiny", 1e-300, 0.0), ("huge-offset", 40.0, 1e308)):
        cal = tmp_path / f"{name}.json"
        cal.write_text(json.dumps({"format": "cage-calibration", "version": 1,
                                   "coupling_nT_per_A": [[k, 0, 0], [0, k, 0], [0, 0, k]],
                                   "offset_nT": [b0, 0.0, 0.0]}))
        assert_one_line_error(run_cli("setpoints", design, SITE, "--calibration", cal), str(cal))


def test_report_fed_huge_numbers_is_one_line(run_cli, tmp_path):
    out = tmp_path / "plan"
    assert run_cli("plan", SITE, "--out", out).code == 0
    doc = json.loads((out / "setpoints.json").read_text())
    for r in doc["rows"]:
        r["current_A"] = {a: 1e308 for a in "xyz"}
    (out / "setpoints.json").write_text(json.dumps(doc))
    run = run_cli("report", out)
    assert run.code in (0, 2), run
    if run.code == 2:
        assert_one_line_error(run, "setpoints")


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_a_pipe_is_refused_without_reading(run_cli, tmp_path):
    fifo = tmp_path / "site.toml"
    os.mkfifo(fifo)
    assert_one_line_error(run_cli("field", fifo), "not a regular file")


def test_size_caps_and_row_caps(run_cli, large, tmp_path):
    from cage.measurements import MAX_READINGS_ROWS
    from cage.textfile import size_cap_bytes

    big_site = tmp_path / "big.toml"
    big_site.write_text(SITE.read_text() + "#" * (size_cap_bytes("site file") + 10) + "\n")
    assert_one_line_error(run_cli("field", big_site), "MB")
    design = large[0]
    rows = tmp_path / "readings.csv"
    line = "0.1,0.2,0.3,100,200,300\n"
    rows.write_text("current_x_A,current_y_A,current_z_A,field_x_nT,field_y_nT,field_z_nT\n"
                    + line * (MAX_READINGS_ROWS + 5))
    assert_one_line_error(run_cli("calibrate", design, rows), f"{MAX_READINGS_ROWS:,}")


def test_suggested_calibration_sets_are_drivable_and_stay_in_the_sensor_range(run_cli, large, tmp_path):
    """Each suggested set: the voltage at the operating temperature (scalar model of
    cage.electrical) within the supply, and the field at the sensor (ambient + K I, K from
    the design's coupling) within 90 % of the range given."""
    import numpy as np

    from cage import sitefile
    from cage.ambient import site_ambient
    from cage.designfile import load_design
    from cage.electrical import axis_electrics
    from cage.setpoints import design_coupling_nT_per_A

    design_path = large[0]
    for range_uT in (100.0, 1000.0):
        out = tmp_path / f"suggest-{range_uT:g}.csv"
        run = run_cli("calibrate", design_path, SITE, "--suggest", "--sensor-range-uT", range_uT, "--out", out)
        assert run.code == 0, run
        sets = np.loadtxt(out, delimiter=",", skiprows=1)
        design = load_design(design_path)
        site = sitefile.load_site(SITE)
        k = design_coupling_nT_per_A(design)
        b0 = site_ambient(site).in_force_cage_nT
        assert np.all(np.abs(b0 + sets @ k.T) <= 0.9 * range_uT * 1000.0 + 1e-6)
        for a, s in zip(design.axes, site.supplies * 3):
            for i in sets[:, "xyz".index(a.pair.axis)]:
                el = axis_electrics(a.pair, a.wire, float(i), lead_length_m=a.lead_length_m or 0.0,
                                    frame_width_m=a.frame_width_m, frame_depth_m=a.frame_depth_m,
                                    ambient_temperature_C=site.coil.ambient_temperature_C)
                assert el.temperature_converged and abs(el.voltage_V) <= s.max_voltage_V
    run = run_cli("calibrate", design_path, SITE, "--suggest", "--sensor-range-uT", 10)
    assert_one_line_error(run, "sensor range", code=3)


def test_a_sequence_too_long_is_refused_before_resampling(run_cli, large, tmp_path):
    series = tmp_path / "series.csv"
    series.write_text("t_s,x_nT,y_nT,z_nT\n0,0,0,0\n100000,1000,0,0\n")
    run = run_cli("sequence", large[0], SITE, "--series", series, "--rate-Hz", 100, "--format", "csv")
    assert_one_line_error(run, "1,000,000")


def test_four_coil_axes_match_the_scalar_model_of_every_coil():
    """A version-2 design (four square coils per axis): the table's array model gives the
    voltage and hottest-coil temperature of cage.electrical.coil_axis_electrics (each coil's
    own heat balance, resistances in series) at every current, and flags runaway alike."""
    import numpy as np

    from cage.coilsystems import system_axis
    from cage.designfile import AxisDesign
    from cage.electrical import coil_axis_electrics
    from cage.setpoints import _axis_circuit, _axis_drive_arrays

    axis = system_axis("z", "square", "four", 1.5, multiplier=2)
    a = AxisDesign(pair=None, coil_axis=axis, wire="AWG 18", frame_width_m=0.04, frame_depth_m=0.04,
                   lead_length_m=6.0)
    circuit = _axis_circuit(a, 22.0)
    assert len(circuit.resistances_20C_ohm) == len(axis.coils) == 4
    currents = np.linspace(-40.0, 40.0, 41)
    arrays = _axis_drive_arrays(circuit, currents)
    for i, ok, t, v in zip(currents, arrays.reachable, arrays.winding_temperature_C, arrays.voltage_V):
        el = coil_axis_electrics(axis, "AWG 18", float(i), lead_length_m=6.0, frame_width_m=0.04,
                                 frame_depth_m=0.04, ambient_temperature_C=22.0)
        if el.temperature_converged and el.winding_temperature_C <= 250.0:
            assert ok and t == pytest.approx(el.winding_temperature_C, rel=1e-9)
            assert v == pytest.approx(el.voltage_V, rel=1e-9)
        else:
            assert not ok and math.isnan(v)
    assert not arrays.reachable.all() and arrays.reachable.any()  # the range crosses into runaway
