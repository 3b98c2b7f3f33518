"""End to end: readings synthesised with magpylib from a built cage that differs from its
design (scale errors, a tilted axis), fitted by `cage calibrate`, used by `cage setpoints
--calibration`, and checked again with magpylib.

Reference: magpylib (Biot-Savart fields of polylines and circles) for the built cage; the
truth of the synthetic build (scale, tilt, ambient) is ours and stated here.
"""
from __future__ import annotations

import json

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

magpy = pytest.importorskip("magpylib")

from conftest import SITES  # noqa: E402

SCALE = np.array([1.02, 0.985, 1.01])       # built turns/geometry differ from the design
TILT = Rotation.from_rotvec(np.radians([0.0, 0.6, 0.3]))  # the z pair is mounted tilted
AMBIENT_NT = np.array([18_900.0, -3_700.0, 44_100.0])     # building-shifted field at the centre


def _pair_sources(axis_doc: dict, axis: str):
    a = "xyz".index(axis)
    u, v = (a + 1) % 3, (a + 2) % 3
    sources = []
    for sign in (1.0, -1.0):
        centre = np.zeros(3)
        centre[a] = sign * axis_doc["spacing_m"] / 2
        if axis_doc["shape"] == "round":
            circle = magpy.current.Circle(current=1.0, diameter=2 * axis_doc["radius_m"])
            # magpylib's Circle lies in its local xy plane, normal +z: rotate z onto the axis.
            rot = {0: Rotation.from_euler("y", 90, degrees=True), 1: Rotation.from_euler("x", -90, degrees=True),
                   2: Rotation.identity()}[a]
            circle.orientation = rot
            circle.position = centre
            sources.append(circle)
        else:
            h = axis_doc["side_m"] / 2
            corners = []
            for cu, cv in ((h, -h), (h, h), (-h, h), (-h, -h), (h, -h)):
                p = centre.copy()
                p[u], p[v] = cu, cv
                corners.append(p)
            sources.append(magpy.current.Polyline(current=1.0, vertices=np.array(corners)))
    return sources


def built_field_nT(design: dict, currents_A) -> np.ndarray:
    """Field at the centre of the built cage (nT, cage frame) plus the ambient."""
    total = AMBIENT_NT.copy()
    for j, axis in enumerate("xyz"):
        doc = design["axes"][axis]
        b = sum(np.asarray(s.getB((0.0, 0.0, 0.0))) for s in _pair_sources(doc, axis)) * doc["turns"] * 1e9
        b = b * SCALE[j] * currents_A[j]
        if axis == "z":
            b = TILT.apply(b)
        total += b
    return total


def test_calibration_recovers_built_cage_and_nulls(tmp_path, run_cli):
    design_path = tmp_path / "design.json"
    assert run_cli("design", SITES / "smallsat-lab.toml", "--system", "pair", "--out", design_path).code == 0
    design = json.loads(design_path.read_text())
    suggest = run_cli("calibrate", "--suggest", design_path, SITES / "smallsat-lab.toml")
    assert suggest.code == 0, suggest
    lines = suggest.out.strip().splitlines()
    assert lines[0] == "current_x_A,current_y_A,current_z_A"
    currents = np.array([[float(v) for v in line.split(",")] for line in lines[1:]])
    rng = np.random.default_rng(11)
    rows = ["current_x_A,current_y_A,current_z_A,field_x_nT,field_y_nT,field_z_nT"]
    for i, c in enumerate(currents):
        b = built_field_nT(design, c) + rng.normal(0.0, 2.0, 3)
        if i == 5:
            b = b + np.array([0.0, 1500.0, 0.0])  # one bad reading (a bumped sensor)
        rows.append(",".join(f"{v:.6f}" for v in (*c, *b)))
    readings = tmp_path / "readings.csv"
    readings.write_text("\n".join(rows) + "\n")
    cal_path = tmp_path / "cal.json"
    run = run_cli("calibrate", design_path, readings, "--json", "--out", cal_path)
    assert run.code == 0, run
    summary = json.loads(run.out)
    for key in ("coupling_nT_per_A", "offset_nT", "null_current_A", "rms_residual_nT"):
        assert key in summary
    assert np.allclose(summary["offset_nT"], AMBIENT_NT, atol=5.0)
    assert summary["rms_residual_nT"] < 6.0
    null = np.array([summary["null_current_A"][a] for a in "xyz"])
    assert np.linalg.norm(built_field_nT(design, null)) < 10.0
    # The build check sees the scale errors (percent) and the tilt of the z axis (0.6 deg).
    scale = [summary["build_check"]["scale_error_percent"][a] for a in "xyz"]
    assert np.allclose(scale, (SCALE - 1) * 100, atol=0.1)
    tilted_z = TILT.apply([0.0, 0.0, 1.0])
    expected_deg = np.degrees(np.arccos(np.clip(tilted_z[2], -1, 1)))  # angle the tilt moves the z axis by
    assert abs(summary["build_check"]["misalignment_deg"]["z"] - expected_deg) < 0.05
    # The calibration file drives the current table.
    table = run_cli("setpoints", design_path, SITES / "smallsat-lab.toml", "--calibration", cal_path,
                    "--format", "json")
    assert table.code == 0, table
    doc = json.loads(table.out)
    assert doc["source"] == "calibration"
    for row in doc["rows"]:
        i = np.array([row["current_A"][a] for a in "xyz"])
        assert np.linalg.norm(built_field_nT(design, i) - np.array(row["target_cage_nT"])) < 10.0


def test_too_few_readings_is_one_line(tmp_path, run_cli):
    from conftest import assert_one_line_error

    design_path = tmp_path / "design.json"
    assert run_cli("design", SITES / "smallsat-lab.toml", "--system", "pair", "--out", design_path).code == 0
    readings = tmp_path / "r.csv"
    readings.write_text("current_x_A,current_y_A,current_z_A,field_x_nT,field_y_nT,field_z_nT\n"
                        "0,0,0,1,2,3\n1,0,0,4,5,6\n")
    assert_one_line_error(run_cli("calibrate", design_path, readings), "r.csv")
