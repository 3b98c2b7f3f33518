"""Design file version 2 (every coil of every axis): writing, reading, refusing bad geometry."""
import json

import pytest

from cage.coilaxis import Coil, CoilAxis
from cage.coillayout import axes_geometry_problems
from cage.coilsystems import system_axis
from cage.designfile import AxisDesign, Design, design_from_dict, design_to_dict, load_design, save_design
from cage.errors import InputError
from cage.layout import FrameSpec


def _design():
    return Design(axes=(
        AxisDesign(pair=None, coil_axis=system_axis("x", "square", "four", 1.9, multiplier=2), wire="AWG 18",
                   frame_width_m=0.04, frame_depth_m=0.04),
        AxisDesign(pair=None, coil_axis=system_axis("y", "round", "four", 0.85, multiplier=30)),
        AxisDesign(pair=None, coil_axis=system_axis("z", "square", "pair", 1.2, multiplier=40)),
    ), notes="invented example")


def test_round_trip(tmp_path):
    d = _design()
    path = tmp_path / "d.json"
    save_design(path, d)
    raw = json.loads(path.read_text())
    assert raw["version"] == 2
    assert raw["axes"]["x"]["system"] == "four"
    assert raw["axes"]["x"]["coils"][0] == {"position_m": pytest.approx(-0.5050395 * 1.9), "turns": 52,
                                            "side_m": 1.9}
    assert "radius_m" in raw["axes"]["y"]["coils"][0]
    back = load_design(path)
    assert back == d
    # the pair axis is a pair again, the others are not
    assert back.axis("z").pair is not None and back.axis("z").pair.spacing_m == pytest.approx(0.5445056 * 1.2)
    assert back.axis("x").pair is None
    with pytest.raises(InputError, match="axis x is a four coil system with 4 coils"):
        back.cage


def test_pairs_only_still_version_1_and_v1_files_read(tmp_path):
    from cage.coils import CoilPair

    d = Design(axes=tuple(AxisDesign(pair=CoilPair(a, "round", 1.0, 1.0, 10)) for a in "xyz"))
    assert design_to_dict(d)["version"] == 1
    v2 = design_to_dict(d, version=2)
    assert v2["axes"]["x"]["system"] == "pair"
    assert design_from_dict(v2, "v2") == d
    with pytest.raises(InputError, match="version 1 holds coil pairs only"):
        design_to_dict(_design(), version=1)


def _bad(mutate):
    obj = design_to_dict(_design())
    mutate(obj)
    return obj


@pytest.mark.parametrize("mutate,words", [
    (lambda o: o["axes"]["x"].pop("system"), ["axes.x.system", "missing"]),
    (lambda o: o["axes"]["x"].update(system="five"), ["axes.x.system", "five"]),
    (lambda o: o["axes"]["x"]["coils"].pop(), ["axes.x.coils", "4 coils", "four"]),
    (lambda o: o["axes"]["x"].update(coils=[]), ["axes.x.coils", "list of coils"]),
    (lambda o: o["axes"]["x"]["coils"][1].pop("turns"), ["axes.x.coils[1].turns", "missing"]),
    (lambda o: o["axes"]["x"]["coils"][1].update(turns=2.5), ["axes.x.coils[1].turns"]),
    (lambda o: o["axes"]["x"]["coils"][2].update(radius_m=1.0), ["axes.x.coils[2].radius_m", "square"]),
    (lambda o: o["axes"]["y"]["coils"][0].update(position_m="far"), ["axes.y.coils[0].position_m"]),
    (lambda o: o["axes"]["y"]["coils"][0].update(position_m=float("nan")), ["axes.y.coils[0].position_m"]),
    (lambda o: o["axes"]["y"]["coils"][0].update(position_m=-80.0), ["axes.y.coils[0].position_m", "50"]),
    (lambda o: o["axes"]["y"]["coils"][0].update(sidem=1), ["axes.y.coils[0].sidem", "known key"]),
    (lambda o: o["axes"]["y"].update(spacing_m=1.0), ["axes.y.spacing_m", "known key"]),
    (lambda o: o["axes"]["y"]["coils"][1].update(o["axes"]["y"]["coils"][2] | {}), ["coincides"]),
    (lambda o: o["axes"]["x"]["coils"][0].update(turns=100000), ["axes.x.coils[0].turns", "fit the frame"]),
])
def test_bad_v2_files_give_one_line_naming_the_key(mutate, words):
    with pytest.raises(InputError) as exc:
        design_from_dict(_bad(mutate), "design.json")
    msg = str(exc.value)
    assert "\n" not in msg and msg.startswith("design.json: ")
    for w in words:
        assert w in msg, msg


def test_custom_axis_any_number_of_coils():
    obj = design_to_dict(_design())
    obj["axes"]["z"] = {"system": "custom", "shape": "round",
                        "coils": [{"position_m": -0.4, "turns": 3, "radius_m": 0.9},
                                  {"position_m": 0.1, "turns": 5, "radius_m": 1.0},
                                  {"position_m": 0.5, "turns": 2, "radius_m": 0.8},
                                  {"position_m": 0.7, "turns": 2, "radius_m": 0.7},
                                  {"position_m": 0.9, "turns": 2, "radius_m": 0.6}]}
    d = design_from_dict(obj, "d")
    assert d.axis("z").coil_axis.count == 5


def test_geometry_checks_of_every_coil():
    frame = FrameSpec(0.04, 0.04, 0.01)
    d = _design()
    # the x squares (1.9 m) and the y circles (0.85 m) are far apart; the z pair of 1.2 m side
    # crosses the x squares' planes inside their frames? check, then a crossing test volume
    problems = axes_geometry_problems(d.axis_cage, frame, (0.5, 0.5, 0.5))
    assert all("test volume" not in p for p in problems)
    assert any("test volume" in p and "y axis" in p for p in axes_geometry_problems(d.axis_cage, frame,
                                                                                 (2.0, 0.5, 0.5)))
    # two coils of one axis on top of each other
    ax = CoilAxis("x", "square", "custom", (Coil(0.0, 5, 1.9), Coil(0.02, 5, 1.92)))
    cage = type(d.axis_cage)(ax, d.axis_cage.y, d.axis_cage.z)
    assert any("x axis coils" in p and "overlap" in p for p in axes_geometry_problems(cage, frame))
