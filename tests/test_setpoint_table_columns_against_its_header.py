"""The terminal table of `cage setpoints` keeps its columns apart whatever the numbers' width.

Reference: the table's own header and the same run's JSON table. A calibration with a very
weak y axis (0.0112 nT/A, an invented loose connection) makes currents of hundreds of
thousands to millions of amperes, and a long label with a large target fills the first two
columns. Every row must still read, column by column under the header, as the JSON row: each
number column begins with a space (the columns never run together) and holds the JSON value
at the printed precision.
"""
from __future__ import annotations

import json

import numpy as np

from conftest import SITES

HEAD = ["target x, y, z (nT)", "I x (A)", "I y (A)", "I z (A)", "V max (V)", "power (W)", "rounding (nT)"]


def test_every_row_reads_under_the_header_as_the_json_row(tmp_path, run_cli, smallsat_design):
    cal = tmp_path / "weak.json"
    cal.write_text(json.dumps({"format": "cage-calibration", "version": 1,
                               "coupling_nT_per_A": [[43_400.0, 0.0, 0.0], [0.0, 0.0112, 0.0], [0.0, 0.0, 50_000.0]],
                               "offset_nT": [18_600.0, -4_550.0, 45_450.0]}), encoding="utf-8")
    targets = tmp_path / "t.csv"
    targets.write_text("label,x_uT,y_uT,z_uT\nbench-target,5000,-5000,5000\n", encoding="utf-8")
    args = ("setpoints", smallsat_design, SITES / "smallsat-lab.toml", "--calibration", cal, "--targets", targets)
    text, js = run_cli(*args), run_cli(*args, "--format", "json")
    assert text.code == 0 and js.code == 0, (text, js)
    rows = json.loads(js.out)["rows"]
    assert max(abs(r["supply_setpoint_A"]["y"]) for r in rows) > 1e6  # the widths this test is about
    lines = text.out.splitlines()
    k = next(i for i, line in enumerate(lines) if line.startswith("row "))
    header, body = lines[k], lines[k + 1:k + 1 + len(rows)]
    edges, at = [], 0
    for name in HEAD:
        at = header.index(name, at) + len(name)
        edges.append(at)
    assert header[edges[-1]:].split() == ["limits"]
    for line, row in zip(body, rows):
        first = line[:edges[0]]
        assert first.startswith(row["label"] + " "), line
        assert np.allclose([float(v) for v in first[len(row["label"]):].split(",")], row["target_cage_nT"],
                           atol=0.05), line
        cells = [line[a:b] for a, b in zip(edges, edges[1:])]
        assert all(c.startswith(" ") and c.strip() for c in cells), line
        assert np.allclose([float(c) for c in cells[:3]], [row["supply_setpoint_A"][a] for a in "xyz"],
                           rtol=0, atol=6e-4), line  # printed to 1 mA, the supplies' resolution
        assert abs(float(cells[5]) - row["field_error_nT"]) <= 0.05, line
        assert line[edges[-1]:].startswith("  "), line
