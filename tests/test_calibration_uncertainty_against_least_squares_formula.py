"""An axis whose current hardly varied is warned about, as the least-squares formula predicts.

Reference: the standard error of a least-squares slope, sigma / sqrt(sum (I - mean I)^2)
(any statistics text on linear regression; from memory), for readings with noise sigma. With
each axis stepped on its own, the fitted field per ampere of an axis is known to about that
share of itself; the tool warns above 10 %, and not for a well-driven axis.
"""
from __future__ import annotations

import json
import math

import numpy as np
import pytest

from conftest import SITES


def _readings(path, y_swing_A: float, sigma_nT: float, seed: int = 3):
    """Readings of an invented cage: x and z stepped by +-1 A, y by +-y_swing_A; noise sigma."""
    rng = np.random.default_rng(seed)
    k = np.array([[25000.0, 300.0, -200.0], [150.0, 24000.0, 100.0], [-90.0, 250.0, 26000.0]])  # nT/A
    b0 = np.array([18000.0, -4500.0, 45000.0])
    levels = (-1.0, -0.5, 0.5, 1.0)
    rows = [np.zeros(3)]
    for axis, swing in ((0, 1.0), (1, y_swing_A), (2, 1.0)):
        for lv in levels:
            i = np.zeros(3)
            i[axis] = lv * swing
            rows.append(i)
    currents = np.array(rows * 3)  # every set three times
    fields = b0 + currents @ k.T + rng.normal(0.0, sigma_nT, (len(currents), 3))
    path.write_text("current_x_A,current_y_A,current_z_A,field_x_nT,field_y_nT,field_z_nT\n" + "".join(
        ",".join(f"{v:.9g}" for v in np.r_[i, b]) + "\n" for i, b in zip(currents, fields)), encoding="utf-8")
    # the slope's standard error for axis y (three components of noise sigma each)
    y = currents[:, 1]
    stderr = sigma_nT / math.sqrt(np.sum((y - y.mean()) ** 2))
    return math.sqrt(3) * stderr / np.linalg.norm(k[:, 1])


@pytest.mark.parametrize("y_swing_A, warned", [(1.0, False), (5e-4, True)])
def test_barely_driven_axis_is_warned(run_cli, tmp_path, smallsat_design, y_swing_A, warned):
    readings = tmp_path / "readings.csv"
    predicted = _readings(readings, y_swing_A, sigma_nT=5.0)
    assert bool(predicted > 0.1) is warned  # the formula's verdict for this current set
    out = tmp_path / "cal.json"
    run = run_cli("calibrate", smallsat_design, readings, "--site", SITES / "smallsat-lab.toml", "--out", out,
                  "--date", "2026-12-01")
    assert run.code == 0, run
    assert ("axis y: the fitted field per ampere is uncertain" in run.err) is warned, run.err
    assert "axis x: the fitted field per ampere is uncertain" not in run.err
    run = run_cli("setpoints", smallsat_design, SITES / "smallsat-lab.toml", "--calibration", out, "--format", "json")
    assert run.code == 0, run
    warnings = " ".join(json.loads(run.out)["provenance"]["warnings"])
    assert ("axis y: the fitted field per ampere is uncertain" in warnings) is warned
