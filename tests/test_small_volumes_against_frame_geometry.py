"""Small test volumes: every planned coil system can be built on its frames.

Reference: plain geometry of the frames. A frame is a channel ``frame_width_m`` wide along the
coil's axis and ``frame_depth_m`` deep, centred on the coil's frame line. Two frames of one
axis whose planes are closer than a frame width, with half-widths closer than a frame depth,
overlap; a frame whose plane lies within the test volume along the axis must have its inner
face outside the volume across it; and a coil must be wider than its frame is deep. A design
breaking these cannot be wound, and the design reader refuses it, so the planner must not
make one (it did, for a 2 cm cube: frames 15 mm apart on 40 mm channels).
"""
from __future__ import annotations

import json
import math

import pytest

SITE = """name = "Small sensor bench"
date = 2026-06-15
[location]
latitude_deg = -33.9
longitude_deg = 18.4
altitude_m = 0
[room]
length_m = 2
width_m = 2
height_m = 2
clearance_m = 0.3
[requirement]
test_volume_m = {volume}
uniformity = 0.001
extra_field_uT = 100
shape = "{shape}"
[coil]
frame_width_m = 0.04
frame_depth_m = 0.04
frame_gap_m = 0.01
wires = ["AWG 14", "AWG 16", "AWG 18"]
[[supply]]
axis = "any"
max_voltage_V = 30
max_current_A = 5
resolution_A = 0.001
"""


def _coils(axis_doc: dict, shape: str):
    """(plane position m, half-width m) of each coil of an axis, on its winding line."""
    key = "side_m" if shape == "square" else "radius_m"
    if "coils" in axis_doc:
        sizes = [(c["position_m"], c[key]) for c in axis_doc["coils"]]
    else:
        half = axis_doc["spacing_m"] / 2.0
        sizes = [(-half, axis_doc[key]), (half, axis_doc[key])]
    return [(p, size / 2.0 if shape == "square" else size) for p, size in sizes]


@pytest.mark.parametrize("system", ["pair", "three", "four"])
@pytest.mark.parametrize("volume, shape", [(0.02, "square"), (0.005, "square"), (0.01, "round")])
def test_small_volume_designs_can_be_built(run_cli, tmp_path, system, volume, shape):
    if system == "three" and shape == "round":
        pytest.skip("no round three-coil system")
    site = tmp_path / "site.toml"
    site.write_text(SITE.format(volume=volume, shape=shape), encoding="utf-8")
    design = tmp_path / "design.json"
    run = run_cli("design", site, "--system", system, "--out", design)
    if run.code == 3:  # infeasible is an answer; a design that cannot be built is not
        return
    assert run.code == 0, run
    doc = json.loads(design.read_text())
    width = depth = 0.04
    half_box = volume / 2.0
    for axis_name, axis_doc in doc["axes"].items():
        coils = _coils(axis_doc, shape)
        lateral = half_box if shape == "square" else math.hypot(half_box, half_box)
        for i, (p, hw) in enumerate(coils):
            assert hw > depth / 2.0, (axis_name, hw)
            if abs(p) - width / 2.0 < half_box:
                assert hw - depth / 2.0 >= lateral - 1e-9, (axis_name, p, hw)
            for q, hw2 in coils[i + 1:]:
                assert abs(p - q) >= width - 1e-9 or abs(hw - hw2) >= depth - 1e-9, (axis_name, p, q)
    # and the tool's own reader of design files takes it (it checks the same geometry)
    assert run_cli("build", design).code == 0


def test_small_volume_plan_meets_the_uniformity_with_its_winding_packs(run_cli, tmp_path):
    # Every coil system allowed: the search's filament model flatters a small coil on a wide
    # channel (a 2 cm cube: a three-coil z axis of 0.26 m side with 40 mm channels is 0.6 % with
    # its real pack); the plan given must meet the 0.1 % with the packs it records, and says why
    # it passed over the cheaper one.
    site = tmp_path / "site.toml"
    site.write_text(SITE.format(volume=0.02, shape="square"), encoding="utf-8")
    design = tmp_path / "design.json"
    run = run_cli("design", site, "--out", design)
    assert run.code == 0, run
    doc = json.loads(design.read_text())
    assert max(doc["layout"]["winding_pack_uniformity"]) <= doc["requirement"]["uniformity"]
