"""A calibration used at another date or site, checked against chaosmagpy.

B = B0 + K I: the coupling K belongs to the cage and holds anywhere; the offset B0 holds at
its site and date only. Reference for the field model: chaosmagpy's synthesis of IGRF-14
(test_igrf_against_chaosmagpy.chaos_ned_nT) rotated into the cage frame by the README's
definition (test_planner_against_magpylib.cage_from_ned).
"""
from __future__ import annotations

import datetime as dt
import json

import numpy as np
import pytest

pytest.importorskip("chaosmagpy")

from conftest import SITES, assert_one_line_error, cli_code  # noqa: E402
from test_igrf_against_chaosmagpy import chaos_ned_nT  # noqa: E402
from test_planner_against_magpylib import cage_from_ned  # noqa: E402

TOL_NT = 0.5
LAB = (52.205, 0.119, 55.0)   # smallsat-lab.toml, heading 15 deg true
MADE = dt.date(2026, 12, 1)
OFFSET_NT = [17250.0, -3120.0, 45880.0]  # an invented fitted offset (cage frame)


@pytest.fixture(scope="module")
def setup(tmp_path_factory):
    from cage.designfile import load_design
    from cage.provenance import design_id
    from cage.setpoints import design_coupling_nT_per_A

    folder = tmp_path_factory.mktemp("calreuse")
    design = folder / "design.json"
    assert cli_code("design", SITES / "smallsat-lab.toml", "--out", design) == 0
    obj = load_design(design)
    k = design_coupling_nT_per_A(obj) * np.array([[1.02, 0.004, 0.0], [-0.003, 0.99, 0.002], [0.0, 0.001, 1.01]])

    def write(name, *, prov=True, design_identity=None):
        doc = {"format": "cage-calibration", "version": 1, "coupling_nT_per_A": k.tolist(), "offset_nT": OFFSET_NT}
        if prov:
            doc["provenance"] = {
                "version": 1, "site": {"name": "Smallsat lab", "latitude_deg": LAB[0], "longitude_deg": LAB[1],
                                       "altitude_m": LAB[2]},
                "model_date": MADE.isoformat(), "heading_true_deg": 15.0,
                "derived_from": {"design": design_identity or design_id(obj)}}
        path = folder / name
        path.write_text(json.dumps(doc))
        return path

    return design, k, write


def _table(run_cli, *args):
    run = run_cli("setpoints", *args, "--format", "json")
    assert run.code == 0, run
    return json.loads(run.out), run


def test_same_site_and_date_uses_offset_and_coupling(run_cli, setup):
    design, k, write = setup
    table, _ = _table(run_cli, design, SITES / "smallsat-lab.toml", "--calibration", write("cal.json"))
    assert table["ambient_cage_nT"] == OFFSET_NT
    assert np.allclose(table["coupling_nT_per_A"], k, rtol=0, atol=1e-9)


def test_offset_carried_to_another_date_by_secular_variation(run_cli, setup):
    design, k, write = setup
    later = dt.date(2029, 12, 1)
    table, run = _table(run_cli, design, SITES / "smallsat-lab.toml", "--date", later.isoformat(),
                        "--calibration", write("cal.json"))
    change = cage_from_ned(chaos_ned_nT(*LAB, later), 15.0) - cage_from_ned(chaos_ned_nT(*LAB, MADE), 15.0)
    assert np.max(np.abs(change)) > 50 * TOL_NT  # three years at 52 N: about a hundred nT
    assert np.all(np.abs(np.array(table["ambient_cage_nT"]) - (np.array(OFFSET_NT) + change)) <= TOL_NT)
    assert np.allclose(table["coupling_nT_per_A"], k, rtol=0, atol=1e-9)  # K unchanged
    assert "calibration offset of 2026-12-01 (3.0 years old)" in run.err


def test_another_site_uses_only_the_coupling(run_cli, setup):
    design, k, write = setup
    table, run = _table(run_cli, design, "--lat", "78.92", "--lon", "11.93", "--alt-m", "12", "--date",
                        MADE.isoformat(), "--calibration", write("cal.json"))
    ref = cage_from_ned(chaos_ned_nT(78.92, 11.93, 12.0, MADE), 15.0)  # the new site's model, the cage's azimuth
    assert np.all(np.abs(np.array(table["ambient_cage_nT"]) - ref) <= TOL_NT)
    assert np.allclose(table["coupling_nT_per_A"], k, rtol=0, atol=1e-9)
    assert "only its coupling K is used" in run.err
    assert table["source"].endswith("calibration coupling")


def test_calibration_of_another_design_is_refused(run_cli, setup):
    design, _, write = setup
    path = write("other.json", design_identity="sha256:0123456789abcdef")
    run = run_cli("setpoints", design, SITES / "smallsat-lab.toml", "--calibration", path)
    assert_one_line_error(run, "made for another design")


def test_older_calibration_without_provenance_is_warned(run_cli, setup):
    design, _, write = setup
    table, run = _table(run_cli, design, SITES / "smallsat-lab.toml", "--calibration", write("old.json", prov=False))
    assert table["ambient_cage_nT"] == OFFSET_NT
    assert "records no site, date or design" in run.err


def test_calibrate_records_site_date_and_design(run_cli, setup, tmp_path):
    """cage calibrate writes where and when its offset holds (the readings' day, the design's site)."""
    design, k, _ = setup
    rng = np.random.default_rng(7)
    currents = rng.uniform(-1.5, 1.5, size=(12, 3))
    fields = np.array(OFFSET_NT) + currents @ k.T
    csv = "current_x_A,current_y_A,current_z_A,field_x_nT,field_y_nT,field_z_nT\n" + "".join(
        ",".join(f"{v:.6f}" for v in (*c, *f)) + "\n" for c, f in zip(currents, fields))
    data = tmp_path / "readings.csv"
    data.write_text(csv)
    out = tmp_path / "cal.json"
    run = run_cli("calibrate", design, data, "--out", out, "--date", "2027-01-10")
    assert run.code == 0, run
    prov = json.loads(out.read_text())["provenance"]
    assert prov["model_date"] == "2027-01-10"
    assert prov["site"]["latitude_deg"] == LAB[0] and prov["heading_true_deg"] == 15.0
    from cage.designfile import load_design
    from cage.provenance import design_id

    assert prov["derived_from"]["design"] == design_id(load_design(design))
    # --out onto an input is refused
    run = run_cli("calibrate", design, data, "--out", data)
    assert_one_line_error(run, "is one of this command's inputs")
