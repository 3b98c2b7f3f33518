"""What `cage calibrate` writes, `cage setpoints --calibration` can use; an axis wired
backwards is warned about and still gets the right currents.

Reference: numpy.linalg (matrix_rank and cond of the true coupling, solve for the null
currents). The readings are synthesised here from a stated coupling K and offset B0
(B = B0 + K I, exact), on an invented cage:

- a coupling numpy.linalg calls singular (rank < 3) must be refused by the calibration
  reader, and `cage calibrate` must then refuse it too, naming the readings file, and write
  nothing (the one rule, used twice);
- with the x column of K pointing against the design's +x (180 degrees), calibrate and
  setpoints warn about axis x only, and the null currents of the table are
  numpy.linalg.solve(K, -B0).
"""
from __future__ import annotations

import json

import numpy as np
import pytest

from conftest import SITES, assert_one_line_error

B0_NT = np.array([18_600.0, -4_550.0, 45_450.0])
GOOD_K = np.array([[43_400.0, 30.0, -12.0], [25.0, 38_250.0, 40.0], [-8.0, 15.0, 50_000.0]])
SINGULAR = {
    "field never changes": np.zeros((3, 3)),
    "y coil dead": np.array([[43_400.0, 0.0, 0.0], [0.0, 0.0, 0.0], [0.0, 0.0, 50_000.0]]),
    "x and y coils the same": np.array([[43_400.0, 43_400.0, 0.0], [0.0, 0.0, 0.0], [0.0, 0.0, 50_000.0]]),
}


def _readings(path, k, b0=B0_NT):
    from cage.calibrate import suggest_currents_A

    currents = suggest_currents_A([2.0, 2.0, 2.0])
    fields = b0 + currents @ np.asarray(k).T
    path.write_text("current_x_A,current_y_A,current_z_A,field_x_nT,field_y_nT,field_z_nT\n" + "".join(
        ",".join(f"{v:.6f}" for v in np.r_[i, b]) + "\n" for i, b in zip(currents, fields)), encoding="utf-8")
    return currents, fields


@pytest.mark.parametrize("name", list(SINGULAR))
def test_calibrate_refuses_the_singular_fits_the_reader_refuses(tmp_path, run_cli, smallsat_design, name):
    from cage.calibrate import fit_calibration
    from cage.calibrationfile import load_calibration_record, save_calibration
    from cage.errors import InputError

    k = SINGULAR[name]
    assert np.linalg.matrix_rank(k) < 3  # the reference: no currents can set an arbitrary field
    readings = tmp_path / "readings.csv"
    currents, fields = _readings(readings, k)
    # the reader refuses this fit (written here without calibrate's check)...
    raw = tmp_path / "raw.json"
    save_calibration(raw, fit_calibration(currents, fields))
    with pytest.raises(InputError):
        load_calibration_record(raw)
    # ...so calibrate refuses it: one line naming the readings file, nothing written
    out = tmp_path / "cal.json"
    assert_one_line_error(run_cli("calibrate", smallsat_design, readings, "--out", out), "readings.csv",
                          "fitted coupling")
    assert not out.exists()


def test_axis_wired_backwards_is_warned_and_null_is_numpy_linalg_solve(tmp_path, run_cli, smallsat_design):
    from cage.calibrationfile import load_calibration_record

    k = GOOD_K * np.array([-1.0, 1.0, 1.0])  # the x coil's supply leads swapped
    assert np.linalg.cond(k) < 2  # the reference: far from singular, so it is accepted
    readings = tmp_path / "readings.csv"
    _readings(readings, k)
    out = tmp_path / "cal.json"
    run = run_cli("calibrate", smallsat_design, readings, "--out", out, "--site", SITES / "smallsat-lab.toml",
                  "--date", "2026-12-01")
    assert run.code == 0, run
    assert "warning: axis x drives the field against its nominal direction (180 deg)" in run.err, run.err
    assert "axis y" not in run.err and "axis z" not in run.err
    assert np.allclose(load_calibration_record(out).fit.coupling_nT_per_A, k, atol=1e-3)
    table = run_cli("setpoints", smallsat_design, SITES / "smallsat-lab.toml", "--calibration", out,
                    "--format", "json")
    assert table.code == 0, table
    doc = json.loads(table.out)
    warned = [w for w in doc["warnings"] if "against its nominal direction" in w]
    assert len(warned) == 1 and "axis x" in warned[0] and "cal.json" in warned[0], doc["warnings"]
    null = next(r for r in doc["rows"] if r["label"] == "null")
    expected = np.linalg.solve(k, -B0_NT)
    assert expected[0] > 0  # the reversed x coil needs the opposite sign of the usual null current
    assert np.allclose([null["current_A"][a] for a in "xyz"], expected, rtol=1e-6, atol=1e-6)
