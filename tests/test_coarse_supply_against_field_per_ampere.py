"""A supply too coarse for its axis is warned about, with the field step it gives.

Reference: the field step of a supply is its current step times the axis's field per ampere
(the design's, itself checked against magpylib elsewhere); a step above 1 % of the full-range
current (fewer than a hundred steps over the range) is too coarse to set a field with (common
practice of the trade, no source). Invented site: a bench supply of 0.5 A steps.
"""
from __future__ import annotations

import json
import re

import pytest

from conftest import SITES


@pytest.mark.parametrize("resolution_A, warned", [(0.5, True), (1e-05, False)])
def test_coarse_supply_is_warned(run_cli, tmp_path, resolution_A, warned):
    text = (SITES / "smallsat-lab.toml").read_text(encoding="utf-8")
    text = re.sub(r"resolution_A = [0-9.e-]+", f"resolution_A = {resolution_A}", text)
    assert f"resolution_A = {resolution_A}" in text
    text = re.sub(r"(?m)^max_field_step_nT = .*$", "", text)  # no step limit: the planner takes the supply as it is
    site = tmp_path / "site.toml"
    site.write_text(text, encoding="utf-8")
    design = tmp_path / "design.json"
    run = run_cli("design", site, "--out", design)
    assert run.code == 0, run
    assert ("too coarse to set the field" in run.err) is warned, run.err
    doc = json.loads(design.read_text())
    for axis in ("x", "y", "z"):
        a = doc["axes"][axis]
        step_nT = a["field_per_amp_nT"] * resolution_A
        line = next((w for w in run.err.splitlines() if w.startswith(f"warning: axis {axis}: the supply's current step")),
                    None)
        if warned and resolution_A > 0.01 * a["max_current_A"]:
            assert line is not None and f"{step_nT:,.0f} nT" in line, (line, step_nT)
    run = run_cli("setpoints", design, site)
    assert run.code == 0, run
    assert ("too coarse to set the field" in run.err) is warned
