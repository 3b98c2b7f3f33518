"""The cage-design JSON file: reading, validation messages, exact round trip, field_T.

Outside references: the file must be standard JSON (RFC 8259: no NaN or Infinity; checked by
parsing with Python's json module set to refuse them), and field_T at the centre of a
design's Helmholtz axis must give (4/5)^(3/2) mu0 N I / R (standard textbook result).
"""
from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.constants import mu_0

import cage
from cage.coils import CoilCage, CoilPair, cage_field_T
from cage.designfile import (
    OPTIONAL_AXIS_NUMBERS,
    AxisDesign,
    Design,
    design_from_dict,
    design_to_dict,
    design_to_json,
    field_T,
    load_design,
    save_design,
)
from cage.errors import InputError

EXAMPLE = {
    "format": "cage-design",
    "version": 1,
    "axes": {
        "x": {"shape": "square", "side_m": 1.9, "spacing_m": 1.0346, "turns": 40},
        "y": {"shape": "round", "radius_m": 0.9, "spacing_m": 0.9, "turns": 35},
        "z": {"shape": "square", "side_m": 1.7, "spacing_m": 0.92565, "turns": 44},
    },
}


def _write(tmp_path, obj_or_text, name="design.json"):
    path = tmp_path / name
    path.write_text(obj_or_text if isinstance(obj_or_text, str) else json.dumps(obj_or_text))
    return path


def _strict_json(text):
    def refuse(name):
        raise ValueError(f"non-standard JSON constant {name}")

    return json.loads(text, parse_constant=refuse)


def test_example_reads(tmp_path):
    d = load_design(_write(tmp_path, EXAMPLE))
    assert d.axis("x").pair == CoilPair("x", "square", 1.9, 1.0346, 40)
    assert d.axis("y").pair == CoilPair("y", "round", 0.9, 0.9, 35)
    assert isinstance(d.cage, CoilCage) and d.cage.z.turns == 44
    assert d.axes[1].wire is None and d.site is None
    # lazily exposed from the package
    assert cage.load_design(_write(tmp_path, EXAMPLE)) == d


def _full_example():
    obj = json.loads(json.dumps(EXAMPLE))
    for i, axis in enumerate("xyz"):
        entry = obj["axes"][axis]
        entry["wire"] = "AWG 18"
        for k, name in enumerate(OPTIONAL_AXIS_NUMBERS):
            entry[name] = 0.1 + 1.37 * (k + 1) * (i + 1)
    obj["site"] = {"name": "Test hall", "lat_deg": 52.1, "tags": ["a", {"b": None}]}
    obj["requirement"] = {"test_volume_m": [0.3, 0.3, 0.3], "uniformity": 0.001}
    obj["layout"] = {"nesting": ["z", "y", "x"], "clearance_m": 0.02}
    obj["envelope_m"] = [2.4, 2.2, 2.3]
    obj["notes"] = "invented demo design, umlaut ü"
    return obj


def test_optional_keys_and_verbatim_objects(tmp_path):
    obj = _full_example()
    d = load_design(_write(tmp_path, obj))
    assert d.axis("z").frame_depth_m == obj["axes"]["z"]["frame_depth_m"]
    assert d.axis("y").wire == "AWG 18"
    assert d.site == obj["site"] and d.layout == obj["layout"] and d.envelope_m == obj["envelope_m"]
    assert design_to_dict(d) == obj


def test_round_trip_is_exact(tmp_path):
    d = load_design(_write(tmp_path, _full_example()))
    out = tmp_path / "again.json"
    save_design(out, d)
    text = out.read_text()
    _strict_json(text)  # standard JSON
    d2 = load_design(out)
    assert d2 == d
    save_design(out, d2)
    assert out.read_text() == text
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # no temporary left


positive = st.floats(min_value=1e-6, max_value=50.0, allow_nan=False, allow_infinity=False)


@settings(max_examples=30, deadline=None)
@given(sizes=st.lists(positive, min_size=6, max_size=6), turns=st.lists(st.integers(1, 100000), min_size=3, max_size=3),
       extra=st.floats(min_value=1e-300, max_value=1e300), shapes=st.lists(st.sampled_from(["square", "round"]), min_size=3, max_size=3))
def test_round_trip_exact_for_any_floats(sizes, turns, extra, shapes):
    axes = []
    for k, axis in enumerate("xyz"):
        pair = CoilPair(axis, shapes[k], sizes[2 * k], sizes[2 * k + 1], turns[k])
        axes.append(AxisDesign(pair, inductance_H=extra, max_current_A=sizes[k]))
    d = Design(tuple(axes), notes="n")
    text = design_to_json(d)
    back = design_from_dict(_strict_json(text), "mem")
    assert back == d
    assert back.axis("x").inductance_H == extra  # bit for bit


def _variant(mutate):
    obj = json.loads(json.dumps(EXAMPLE))
    mutate(obj)
    return obj


BAD = [
    # (label, document or text, fragments that the one-line message must contain)
    ("negative turns", _variant(lambda o: o["axes"]["y"].update(turns=-3)),
     ["design.json: axes.y.turns must be a positive whole number, got -3"]),
    ("fractional turns", _variant(lambda o: o["axes"]["x"].update(turns=40.5)), ["axes.x.turns", "40.5"]),
    ("bool turns", _variant(lambda o: o["axes"]["x"].update(turns=True)), ["axes.x.turns", "true"]),
    ("too many turns", _variant(lambda o: o["axes"]["z"].update(turns=100001)), ["axes.z.turns", "100000"]),
    ("zero side", _variant(lambda o: o["axes"]["x"].update(side_m=0)), ["axes.x.side_m", "positive"]),
    ("absurd side", _variant(lambda o: o["axes"]["x"].update(side_m=51.0)), ["axes.x.side_m", "50"]),
    ("absurd spacing", _variant(lambda o: o["axes"]["y"].update(spacing_m=1e6)), ["axes.y.spacing_m", "50"]),
    ("negative spacing", _variant(lambda o: o["axes"]["y"].update(spacing_m=-0.9)), ["axes.y.spacing_m"]),
    ("string size", _variant(lambda o: o["axes"]["y"].update(radius_m="0.9")), ["axes.y.radius_m", "'0.9'"]),
    ("typo key", _variant(lambda o: o["axes"]["y"].update(trns=3)), ["axes.y.trns", 'did you mean "turns"']),
    ("typo optional", _variant(lambda o: o["axes"]["x"].update(inductance_h=0.1)),
     ["axes.x.inductance_h", 'did you mean "inductance_H"']),
    ("typo top", _variant(lambda o: o.update(sites={})), ["sites", 'did you mean "site"']),
    ("typo axis", _variant(lambda o: o["axes"].update(w={})), ["axes.w", "not a known key"]),
    ("missing axes", _variant(lambda o: o.pop("axes")), ["design.json: axes is missing"]),
    ("missing z", _variant(lambda o: o["axes"].pop("z")), ["axes.z is missing"]),
    ("missing turns", _variant(lambda o: o["axes"]["x"].pop("turns")), ["axes.x.turns is missing"]),
    ("missing shape", _variant(lambda o: o["axes"]["x"].pop("shape")), ["axes.x.shape is missing"]),
    ("bad shape", _variant(lambda o: o["axes"]["x"].update(shape="sqare")), ["axes.x.shape", 'did you mean "square"']),
    ("radius on square", _variant(lambda o: o["axes"]["x"].update(radius_m=1.0)), ["axes.x.radius_m", "square"]),
    ("side on round", _variant(lambda o: o["axes"]["y"].update(side_m=1.0)), ["axes.y.side_m", "round"]),
    ("wrong format", _variant(lambda o: o.update(format="cage-site")), ["format", "cage-design"]),
    ("no format", _variant(lambda o: o.pop("format")), ["not a cage design file"]),
    ("wrong version", _variant(lambda o: o.update(version=3)), ["version", "3"]),
    ("axes not object", _variant(lambda o: o.update(axes=[1, 2, 3])), ["axes must be an object"]),
    ("bad optional", _variant(lambda o: o["axes"]["x"].update(max_current_A=-2.0)), ["axes.x.max_current_A"]),
    ("bad wire", _variant(lambda o: o["axes"]["x"].update(wire=18)), ["axes.x.wire"]),
    ("site not object", _variant(lambda o: o.update(site="here")), ["site must be an object"]),
    ("notes not text", _variant(lambda o: o.update(notes=3)), ["notes must be text"]),
    ("envelope not numbers", _variant(lambda o: o.update(envelope_m=[1, "a"])), ["envelope_m[1]"]),
    ("top level list", [1, 2], ["top level must be a JSON object"]),
    ("bad JSON", '{"format": "cage-design",\n  "version": 1\n  "axes": {}}', ["not valid JSON at line 3, column 3"]),
    ("NaN size", json.dumps(EXAMPLE).replace('"side_m": 1.9', '"side_m": NaN'), ["axes.x.side_m", "NaN"]),
    ("Infinity spacing", json.dumps(EXAMPLE).replace('"spacing_m": 0.9,', '"spacing_m": Infinity,'),
     ["axes.y.spacing_m", "Infinity"]),
    ("huge number", json.dumps(EXAMPLE).replace('"side_m": 1.9', '"side_m": 1e999'), ["axes.x.side_m", "Infinity"]),
    ("NaN in site", json.dumps({**EXAMPLE, "site": {"a": [1]}}).replace("[1]", "[NaN]"), ["site.a[0]", "NaN"]),
    ("duplicate key", json.dumps(EXAMPLE).replace('"turns": 35', '"turns": 35, "turns": 36'),
     ["axes.y.turns is given twice"]),
]


@pytest.mark.parametrize("label,doc,fragments", BAD, ids=[b[0] for b in BAD])
def test_bad_designs_give_one_line_naming_file_and_key(tmp_path, label, doc, fragments):
    path = _write(tmp_path, doc)
    with pytest.raises(InputError) as info:
        load_design(path)
    msg = str(info.value)
    assert "\n" not in msg
    assert msg.startswith(f"{path}: ")
    for fragment in fragments:
        fragment = fragment.replace("design.json", str(path))
        assert fragment in msg, (fragment, msg)


def test_file_problems(tmp_path):
    with pytest.raises(InputError, match="no such file"):
        load_design(tmp_path / "missing.json")
    with pytest.raises(InputError, match="folder"):
        load_design(tmp_path)
    bad = tmp_path / "latin1.json"
    bad.write_bytes(b'{"notes": "\xe9"}')
    with pytest.raises(InputError, match="UTF-8"):
        load_design(bad)


def test_design_from_dict_names_its_source():
    with pytest.raises(InputError, match=r"^memory: axes\.y\.turns"):
        design_from_dict(_variant(lambda o: o["axes"]["y"].update(turns=0)), "memory")


def test_design_checks_its_axes():
    d = design_from_dict(EXAMPLE, "x")
    with pytest.raises(InputError):
        Design((d.axes[1], d.axes[0], d.axes[2]))
    with pytest.raises(InputError):
        AxisDesign(d.axes[0].pair, copper_mass_kg=float("nan"))
    with pytest.raises(InputError):
        d.axis("w")


def test_field_T_matches_the_helmholtz_formula_and_cage_field():
    d = design_from_dict(EXAMPLE, "x")
    # y axis alone: Helmholtz pair R = 0.9 m, 35 turns: B = (4/5)^(3/2) mu0 N I / R
    b = field_T(d, {"x": 0.0, "y": 2.0, "z": 0.0}, [0.0, 0.0, 0.0])
    assert b.shape == (3,)
    assert b[1] == pytest.approx((4 / 5) ** 1.5 * mu_0 * 35 * 2.0 / 0.9, rel=1e-14)
    pts = np.random.default_rng(1).uniform(-0.5, 0.5, size=(50, 3))
    by_map = cage.field_T(d, {"x": 1.0, "y": -0.5, "z": 0.25}, pts)
    by_seq = field_T(d, [1.0, -0.5, 0.25], pts)
    assert by_map.shape == (50, 3)
    np.testing.assert_array_equal(by_map, by_seq)
    np.testing.assert_array_equal(by_map, cage_field_T(d.cage, (1.0, -0.5, 0.25), pts))


@pytest.mark.parametrize("currents,points", [
    ({"x": 1.0, "y": 0.0}, [0, 0, 0]),             # missing key
    ({"x": 1.0, "y": 0.0, "z": 0.0, "w": 1.0}, [0, 0, 0]),  # unknown key
    ([1.0, 2.0], [0, 0, 0]),                        # wrong length
    ([1.0, float("nan"), 0.0], [0, 0, 0]),          # not finite
    ("abc", [0, 0, 0]),
    ([1.0, 0.0, 0.0], [0, 0]),                      # bad point shape
    ([1.0, 0.0, 0.0], np.zeros((4, 2))),
    ([1.0, 0.0, 0.0], [[0, 0, math.inf]]),
    ([1.0, 0.0, 0.0], [["a", 0, 0]]),
])
def test_field_T_bad_arguments(currents, points):
    d = design_from_dict(EXAMPLE, "x")
    with pytest.raises(InputError):
        field_T(d, currents, points)
