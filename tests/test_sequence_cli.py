"""`cage sequence` end to end: sphere rows, and a time series whose step asks for a faster
slew than L/R allows. Reference for the slew: the series R-L circuit, V = R I + L dI/dt
(Ohm's and Faraday's laws), with the design's own R and L."""
from __future__ import annotations

import json

import numpy as np
import pytest

from conftest import SITES, assert_one_line_error, csv_body


@pytest.fixture(scope="module")
def design_path(tmp_path_factory):
    from cage.cli import main

    path = tmp_path_factory.mktemp("seq") / "design.json"
    with pytest.raises(SystemExit) as exc:
        main(["design", str(SITES / "smallsat-lab.toml"), "--system", "pair", "--out", str(path)])
    assert exc.value.code == 0
    return path


def test_sphere_rows_have_the_magnitude(run_cli, design_path):
    run = run_cli("sequence", design_path, SITES / "smallsat-lab.toml", "--sphere", "25", "--magnitude-uT", "40",
                  "--format", "json")
    assert run.code == 0, run
    doc = json.loads(run.out)
    assert len(doc["rows"]) == 25
    for row in doc["rows"]:
        assert abs(np.linalg.norm(row["target_cage_nT"]) - 40_000.0) < 1e-6


def test_fast_step_is_flagged_at_its_step(tmp_path, run_cli, design_path):
    design = json.loads(design_path.read_text())
    z = design["axes"]["z"]
    rate = 1000.0
    # A jump of the z field within one 1 ms step: V ~ L dI/dt = L (dB / k) / dt.
    jump_nT = 60_000.0
    need_V = z["inductance_H"] * (jump_nT / z["field_per_amp_nT"]) * rate
    assert need_V > 30.0  # the demo supply gives 30 V: the step must fail
    lines = ["t_s,x_nT,y_nT,z_nT"]
    for i in range(30):
        lines.append(f"{i / rate:.6f},0,0,{-20_000.0 if i < 12 else 40_000.0}")
    series = tmp_path / "series.csv"
    series.write_text("\n".join(lines) + "\n")
    run = run_cli("sequence", design_path, SITES / "smallsat-lab.toml", "--series", series, "--rate-Hz", "1000",
                  "--format", "json")
    assert run.code == 0, run
    doc = json.loads(run.out)
    flagged = [k for k, row in enumerate(doc["rows"]) if not row["within_limits"]]
    assert flagged == [12]
    assert "cannot be followed" in run.err
    # A slow ramp over 0.3 s is fine.
    lines = ["t_s,x_nT,y_nT,z_nT", "0,0,0,-20000", "0.3,0,0,40000"]
    series.write_text("\n".join(lines) + "\n")
    run = run_cli("sequence", design_path, SITES / "smallsat-lab.toml", "--series", series, "--rate-Hz", "100",
                  "--format", "json")
    assert run.code == 0 and all(r["within_limits"] for r in json.loads(run.out)["rows"])


def test_sequence_needs_one_mode(run_cli, design_path):
    assert_one_line_error(run_cli("sequence", design_path, SITES / "smallsat-lab.toml"), "--sphere")


def test_sequence_plot_is_a_png(tmp_path, run_cli, design_path):
    png = tmp_path / "seq.png"
    run = run_cli("sequence", design_path, SITES / "smallsat-lab.toml", "--sphere", "12", "--magnitude-uT", "30",
                  "--format", "csv", "--plot", png)
    assert run.code == 0, run
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (ISO/IEC 15948)
    assert csv_body(run.out).startswith("label,")  # the table stays alone on stdout (after its provenance)
