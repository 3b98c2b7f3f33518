"""A cage of three four-square-coil axes (design file version 2) through ``cage setpoints``: every
row's currents, put into magpylib sources built from the raw design file, give the target field.

magpylib 6.x ``magpylib.current.Polyline`` (reference Biot-Savart library); the ambient field is
the table's own (checked against chaosmagpy elsewhere)."""
import json

import numpy as np
import pytest

magpy = pytest.importorskip("magpylib")

from conftest import SITES  # noqa: E402

from cage.coilaxis import AxisCage  # noqa: E402
from cage.coillayout import axes_geometry_problems, smallest_nesting_axis_size_m  # noqa: E402
from cage.coilsystems import system_axis  # noqa: E402
from cage.designfile import AxisDesign, Design, save_design  # noqa: E402
from cage.layout import FrameSpec  # noqa: E402

AXES = ("x", "y", "z")


def _mag_axis(name, entry):
    i = AXES.index(name)
    iu, iv = (i + 1) % 3, (i + 2) % 3
    out = []
    for c in entry["coils"]:
        h = c["side_m"] / 2
        v = np.zeros((4, 3))
        v[:, i] = c["position_m"]
        v[:, iu] = (h, h, -h, -h)  # right-handed about +axis
        v[:, iv] = (-h, h, h, -h)
        out.append(magpy.current.Polyline(current=c["turns"], vertices=np.vstack([v, v[:1]])))
    return magpy.Collection(*out)


@pytest.fixture(scope="module")
def v2_design(tmp_path_factory):
    frame = FrameSpec(0.04, 0.04, 0.01)
    z = system_axis("z", "square", "four", 1.5, multiplier=2)
    y = system_axis("y", "square", "four", smallest_nesting_axis_size_m("y", "square", "four", [z], frame, 1.5), 2)
    x = system_axis("x", "square", "four", smallest_nesting_axis_size_m("x", "square", "four", [z, y], frame,
                                                                       y.size_m), 2)
    assert axes_geometry_problems(AxisCage(x, y, z), frame, (0.5, 0.5, 0.5)) == []
    kw = dict(wire="AWG 18", frame_width_m=0.04, frame_depth_m=0.04, lead_length_m=6.0)
    design = Design(axes=tuple(AxisDesign(pair=None, coil_axis=a, **kw) for a in (x, y, z)),
                    requirement={"test_volume_m": [0.5, 0.5, 0.5], "uniformity": 0.001})
    path = tmp_path_factory.mktemp("v2") / "four.json"
    save_design(path, design)
    return path


def test_setpoints_of_a_v2_design_reach_their_targets_in_magpylib(run_cli, v2_design):
    run = run_cli("setpoints", v2_design, SITES / "smallsat-lab.toml", "--format", "json")
    assert run.code == 0, run
    table = json.loads(run.out)
    raw = json.loads(v2_design.read_text())
    assert raw["version"] == 2
    sources = {a: _mag_axis(a, raw["axes"][a]) for a in AXES}
    ambient = np.array(table["ambient_cage_nT"], dtype=float)
    for row in table["rows"]:
        b = ambient + 1e9 * sum(row["current_A"][a] * sources[a].getB(np.zeros(3)) for a in AXES)
        assert np.max(np.abs(b - np.array(row["target_cage_nT"], dtype=float))) <= 1.0, row["label"]
        # the drive check ran on the four-coil electrics (every coil's wire in series): the
        # power is I^2 R with R from the wire's length, R = V / I
        for a in AXES:
            i = row["setpoint_A"][a]
            if abs(i) > 1e-3:
                assert row["power_W"][a] == pytest.approx(row["voltage_V"][a] * i, rel=1e-9)


def test_an_edited_v2_design_with_a_coil_through_the_test_volume_is_refused(run_cli, v2_design, tmp_path):
    raw = json.loads(v2_design.read_text())
    for c in raw["axes"]["x"]["coils"]:
        c["side_m"] = 0.4  # smaller than the 0.5 m test volume, planes through it
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(raw))
    run = run_cli("setpoints", bad, SITES / "smallsat-lab.toml")
    assert run.code == 2 and "test volume" in run.err and "Traceback" not in run.err
