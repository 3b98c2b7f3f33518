"""Fuzzing the readers: random text and random TOML/JSON trees never give a traceback.

The contract checked is the one written in the README ("every problem is reported in one line
naming the file and the key") and in DEVELOPERS.md ("user errors raise
cage.errors.InputError with one line"): whatever the input, a reader either returns a value
inside the documented ranges or raises InputError with a one-line message. Any other
exception is a bug. The TOML texts are checked with the standard library's ``tomllib`` (an
independent parser) so that the random trees really reach the site-file validation instead of
stopping at a syntax error; JSON texts are written with the standard library's ``json``.
"""
from __future__ import annotations

import copy
import datetime as dt
import json
import math
import tempfile
import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from conftest import SITES
from cage.calibrationfile import load_calibration
from cage.designfile import design_from_dict, design_to_dict, load_design
from cage.errors import InputError
from cage.measurements import read_calibration_csv, read_field_series_csv
from cage.setpointfile import load_table_json
from cage.sitefile import load_site, site_from_dict, site_from_text
from cage.targetfile import read_targets_csv

FUZZ = settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
FUZZ_SMALL = settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])

WORK = Path(tempfile.mkdtemp(prefix="cage-fuzz-"))

# Keys a site file may hold (README, "Site files"), mixed into the random trees so that many
# trees are close to valid ones and reach the deeper checks.
SITE_KEYS = ["name", "date", "location", "orientation", "room", "requirement", "coil", "supply", "measured",
             "latitude_deg", "longitude_deg", "altitude_m", "heading_deg", "heading_reference", "length_m",
             "width_m", "height_m", "clearance_m", "test_volume_m", "uniformity", "extra_field_uT", "shape",
             "frame_width_m", "frame_depth_m", "frame_gap_m", "max_winding_temperature_C",
             "ambient_temperature_C", "wires", "lead_length_m", "axis_order", "axis", "max_voltage_V",
             "max_current_A", "resolution_A", "bipolar", "field_nT", "note"]
DESIGN_KEYS = ["format", "version", "axes", "site", "requirement", "layout", "envelope_m", "notes", "x", "y",
               "z", "shape", "side_m", "radius_m", "spacing_m", "turns", "wire", "inductance_H",
               "max_current_A", "frame_width_m", "frame_depth_m", "lead_length_m", "resistance_hot_ohm"]


def _message_is_one_line(exc: InputError) -> None:
    text = str(exc)
    assert text and len(text.splitlines()) == 1, repr(text)  # str.splitlines: every kind of line break
    assert "Traceback" not in text


# ----------------------------------------------------------------------------- value strategies

_text = st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=12)
_floats = st.one_of(st.floats(allow_nan=True, allow_infinity=True),
                    st.sampled_from([0.0, -0.0, 1e-300, -1.0, 0.3, 5.0, 60.0, 91.0, 400.0, 1e7, 1e308]))
_ints = st.integers(min_value=-(2 ** 63), max_value=2 ** 63 - 1) | st.integers(-5, 100)
_dates = st.dates(min_value=dt.date(1, 1, 1), max_value=dt.date(9999, 12, 31))
_datetimes = st.datetimes(min_value=dt.datetime(1, 1, 1), max_value=dt.datetime(9999, 12, 31))
_words = st.sampled_from(["true", "magnetic", "square", "round", "either", "x", "y", "z", "any", "AWG 14",
                          "1.5 mm", "cage-design", "2026-12-01", "nan", ""])


def _scalars(with_dates: bool):
    parts = [_text, _words, _floats, _ints, st.booleans()]
    if with_dates:
        parts += [_dates, _datetimes]
    return st.one_of(*parts)


def _trees(keys, with_dates: bool):
    key = st.one_of(st.sampled_from(keys), _text)
    return st.recursive(
        _scalars(with_dates),
        lambda inner: st.one_of(st.lists(inner, max_size=4), st.dictionaries(key, inner, max_size=5)),
        max_leaves=18,
    )


def _roots(keys, with_dates: bool):
    return st.dictionaries(st.one_of(st.sampled_from(keys), _text), _trees(keys, with_dates), max_size=8)


# ----------------------------------------------------------------------------- a small TOML emitter

def _toml_string(s: str) -> str:
    out = []
    for ch in s:
        if ch in '"\\':
            out.append("\\" + ch)
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04x}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, dt.datetime):
        return v.isoformat()
    if isinstance(v, dt.date):
        return f"{v.year:04d}-{v.month:02d}-{v.day:02d}"
    if isinstance(v, str):
        return _toml_string(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_toml_string(k)} = {_toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def toml_dumps(tree: dict) -> str:
    """TOML text for a tree: scalars and lists first, then one [table] per dict, [[..]] per list of dicts."""
    head, tables = [], []
    for k, v in tree.items():
        if isinstance(v, dict):
            tables.append(f"[{_toml_string(k)}]")
            tables += [f"{_toml_string(k2)} = {_toml_value(v2)}" for k2, v2 in v.items()]
        elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
            for item in v:
                tables.append(f"[[{_toml_string(k)}]]")
                tables += [f"{_toml_string(k2)} = {_toml_value(v2)}" for k2, v2 in item.items()]
        else:
            head.append(f"{_toml_string(k)} = {_toml_value(v)}")
    return "\n".join(head + tables) + "\n"


def _same(a, b) -> bool:
    """Tree equality with NaN equal to NaN (TOML round trip check of the emitter)."""
    if isinstance(a, float) and isinstance(b, float) and math.isnan(a) and math.isnan(b):
        return True
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(_same(a[k], b[k]) for k in a)
    if isinstance(a, list) and isinstance(b, list):
        return len(a) == len(b) and all(_same(x, y) for x, y in zip(a, b))
    return type(a) is type(b) and a == b


def test_toml_emitter_round_trips_through_tomllib():
    """The emitter itself, checked against tomllib (the standard library's TOML parser)."""
    tree = {"name": 'a "b" \\ \x01', "n": 3, "f": float("nan"), "g": -math.inf, "d": dt.date(2026, 12, 1),
            "l": [1, "x", [2.5, True]], "location": {"latitude_deg": 52.1, "in": {"k": []}},
            "supply": [{"axis": "x"}, {"axis": "y", "bipolar": False}]}
    assert _same(tomllib.loads(toml_dumps(tree)), tree)


# ----------------------------------------------------------------------------- site files

def _check_site(site) -> None:
    """An accepted site lies inside the README's ranges (README, "Site files")."""
    loc = site.location
    assert -90.0 <= loc.latitude_deg <= 90.0
    assert -180.0 <= loc.longitude_deg <= 180.0  # -180..360 given, normalised to -180..180
    assert -1000.0 <= loc.altitude_m <= 100_000.0
    assert site.orientation.heading_reference in ("true", "magnetic")
    assert isinstance(site.date, dt.date)
    if site.room is not None:
        for v in (site.room.length_m, site.room.width_m, site.room.height_m):
            assert math.isfinite(v) and v > 2 * site.room.clearance_m
    assert all(math.isfinite(v) and v > 0 for v in site.requirement.test_volume_m)
    for s in site.supplies:
        assert s.max_voltage_V > 0 and s.max_current_A > 0 and 0 < s.resolution_A <= s.max_current_A


def _site_text_ok(text: str) -> None:
    try:
        site = site_from_text(text, "fuzz.toml")
    except InputError as exc:
        _message_is_one_line(exc)
        assert "fuzz.toml" in str(exc)  # the file is named
    else:
        _check_site(site)


@FUZZ
@given(text=st.text(max_size=300))
def test_site_reader_random_text(text):
    _site_text_ok(text)


@FUZZ
@given(tree=_roots(SITE_KEYS, with_dates=True))
def test_site_reader_random_toml_trees(tree):
    text = toml_dumps(tree)
    assert _same(tomllib.loads(text), tree)  # the text really is that tree
    _site_text_ok(text)


def _demo_trees():
    return [tomllib.loads(p.read_text(encoding="utf-8")) for p in sorted(SITES.glob("*.toml"))]


DEMO_SITES = _demo_trees()


def _paths(tree, prefix=()):
    """Every key path in a nested dict/list tree."""
    out = []
    if isinstance(tree, dict):
        for k, v in tree.items():
            out.append(prefix + (k,))
            out += _paths(v, prefix + (k,))
    elif isinstance(tree, list):
        for i, v in enumerate(tree):
            out.append(prefix + (i,))
            out += _paths(v, prefix + (i,))
    return out


def _mutate(data, tree, keys, with_dates):
    """Delete, replace or rename one random key (or list item) of a copy of ``tree``."""
    tree = copy.deepcopy(tree)
    for _ in range(data.draw(st.integers(1, 3), label="mutations")):
        paths = _paths(tree)
        if not paths:
            break
        path = data.draw(st.sampled_from(paths), label="path")
        parent = tree
        for k in path[:-1]:
            parent = parent[k]
        last = path[-1]
        action = data.draw(st.sampled_from(["delete", "replace", "rename"]), label="action")
        if action == "delete":
            del parent[last]
        elif action == "replace":
            parent[last] = data.draw(_trees(keys, with_dates), label="value")
        elif isinstance(parent, dict):
            new = data.draw(st.one_of(st.sampled_from(keys), _text), label="new key")
            parent[new] = parent.pop(last)
    return tree


@FUZZ
@given(data=st.data())
def test_site_reader_mutated_demo_sites(data):
    base = data.draw(st.sampled_from(DEMO_SITES), label="demo")
    tree = _mutate(data, base, SITE_KEYS, with_dates=True)
    try:
        site = site_from_dict(tree, "mutated.toml")
    except InputError as exc:
        _message_is_one_line(exc)
    else:
        _check_site(site)
    _site_text_ok(toml_dumps(tree))  # the same tree through the text reader


def test_demo_sites_are_accepted():
    """The baseline the mutations start from: every demo site reads (it could fail if a reader broke)."""
    for p in sorted(SITES.glob("*.toml")):
        _check_site(load_site(p))


@FUZZ_SMALL
@given(raw=st.binary(max_size=200))
def test_load_site_random_bytes(raw):
    path = WORK / "bytes.toml"
    path.write_bytes(raw)
    try:
        _check_site(load_site(path))
    except InputError as exc:
        _message_is_one_line(exc)
        assert str(path) in str(exc)


# ----------------------------------------------------------------------------- design files

def _demo_design_dict() -> dict:
    from cage.ambient import site_ambient
    from cage.optimise import design_from_plan, plan_cage, plan_inputs_from_site

    site = load_site(SITES / "smallsat-lab.toml")
    amb = site_ambient(site)
    inp = plan_inputs_from_site(site, amb.in_force_cage_nT, systems="pair")  # the version-1 reader's input
    return design_to_dict(design_from_plan(plan_cage(inp), inp, site, amb))


@pytest.fixture(scope="module")
def demo_design():
    return _demo_design_dict()


def _check_design(d) -> None:
    """An accepted design: three pairs with positive finite sizes and whole positive turns."""
    for name, a in zip("xyz", d.axes):
        assert a.pair.axis == name
        assert a.pair.shape in ("square", "round")
        assert math.isfinite(a.pair.size_m) and 0 < a.pair.size_m <= 50
        assert math.isfinite(a.pair.spacing_m) and 0 < a.pair.spacing_m <= 50
        assert isinstance(a.pair.turns, int) and a.pair.turns >= 1


def _design_obj_ok(obj, where="fuzz.json") -> None:
    try:
        d = design_from_dict(obj, where)
    except InputError as exc:
        _message_is_one_line(exc)
        assert where in str(exc)
    else:
        _check_design(d)


def _design_file_ok(text: str) -> None:
    path = WORK / "design.json"
    path.write_text(text, encoding="utf-8")
    try:
        d = load_design(path)
    except InputError as exc:
        _message_is_one_line(exc)
        assert str(path) in str(exc)
    else:
        _check_design(d)


@FUZZ
@given(text=st.text(max_size=300))
def test_design_reader_random_text(text):
    _design_file_ok(text)


@FUZZ
@given(tree=_trees(DESIGN_KEYS, with_dates=True))
def test_design_reader_random_trees(tree):
    _design_obj_ok(tree)  # dicts straight in, dates and NaN included
    if isinstance(tree, dict):
        _design_obj_ok(dict(tree, format="cage-design", version=1))


@FUZZ
@given(tree=_trees(DESIGN_KEYS, with_dates=False))
def test_design_file_random_json(tree):
    _design_file_ok(json.dumps(tree))  # NaN and Infinity written as JSON's extensions


@FUZZ
@given(data=st.data())
def test_design_reader_mutated_demo_design(demo_design, data):
    tree = _mutate(data, demo_design, DESIGN_KEYS, with_dates=False)
    _design_obj_ok(tree)
    _design_file_ok(json.dumps(tree))


@pytest.mark.parametrize("key", ["\n", "a\u2028b", "", "x\ry"])
def test_design_unknown_key_with_a_line_break_stays_on_one_line(demo_design, key):
    """Found by the fuzzing above: an unknown key holding a line break was printed raw."""
    for tree in (dict(demo_design, **{key: 1}), {**demo_design, "axes": {**demo_design["axes"], key: {}}}):
        with pytest.raises(InputError) as exc:
            design_from_dict(tree, "k.json")
        _message_is_one_line(exc.value)
        assert repr(key) in str(exc.value)


def test_readings_with_huge_currents_are_refused_not_crashed():
    """Found by the fuzzing above: currents near 1e308 overflowed the rank check (numpy LinAlgError)."""
    rows = [[0, 0, 0], [1e300, 0, 0], [0, -1e308, 0], [0, 0, 1], [1, 1, 1]]
    text = ",".join(READING_HEADER) + "\n" + "".join(",".join(f"{v:g}" for v in r) + ",1,2,3\n" for r in rows)
    assert _reader_ok(read_calibration_csv, text, "huge.csv") is None


def test_demo_design_is_accepted(demo_design):
    """The baseline of the mutations reads back (a broken reader would fail here)."""
    _check_design(design_from_dict(demo_design, "demo.json"))


# ----------------------------------------------------------------------------- CSV readers

_cells = st.one_of(
    st.sampled_from(["0", "1", "-2.5", "1e3", "nan", "inf", "-inf", "", " ", "abc", "1,5", '"', "1e999",
                     "0x10", "1_000", "cage", "ned", "NED", "label", "null", "+x"]),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=6),
)


def _csv_text(data, header: list[str], extra: list[str]) -> str:
    cols = data.draw(st.lists(st.sampled_from(header + extra), min_size=0, max_size=len(header) + 2),
                     label="header") if data.draw(st.booleans(), label="shuffle") else list(header)
    lines = [",".join(cols)]
    n = data.draw(st.integers(0, 8), label="rows")
    for _ in range(n):
        width = data.draw(st.sampled_from([len(cols), len(cols), len(cols), max(len(cols) - 1, 0), len(cols) + 1]))
        lines.append(",".join(data.draw(_cells) for _ in range(width)))
    if data.draw(st.booleans(), label="comments"):
        lines.insert(data.draw(st.integers(0, len(lines))), "# a comment")
    return "\n".join(lines) + "\n"


def _reader_ok(reader, text: str, name: str):
    path = WORK / name
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    try:
        return reader(path)
    except InputError as exc:
        _message_is_one_line(exc)
        assert str(path) in str(exc) or name in str(exc)
        return None


TARGET_HEADER = ["label", "x_uT", "y_uT", "z_uT"]
READING_HEADER = ["current_x_A", "current_y_A", "current_z_A", "field_x_nT", "field_y_nT", "field_z_nT"]
SERIES_HEADER = ["t_s", "x_nT", "y_nT", "z_nT"]


@FUZZ
@given(data=st.data())
def test_targets_reader_random_csv(data):
    text = data.draw(st.one_of(st.text(max_size=200), st.just(None)), label="raw")
    if text is None:
        text = _csv_text(data, TARGET_HEADER, ["frame", "note"])
    out = _reader_ok(read_targets_csv, text, "targets.csv")
    if out is not None:  # README: |field| limits, frame cage or ned, unique labels
        assert out and len({t.label for t in out}) == len(out)
        for t in out:
            assert t.frame in ("cage", "ned")
            assert all(math.isfinite(v) and abs(v) <= 100_000 for v in t.field_uT)


@FUZZ
@given(data=st.data())
def test_readings_reader_random_csv(data):
    text = data.draw(st.one_of(st.text(max_size=200), st.just(None)), label="raw")
    if text is None:
        text = _csv_text(data, READING_HEADER, ["note"])
    out = _reader_ok(read_calibration_csv, text, "readings.csv")
    if out is not None:  # README: at least 4 distinct current sets, finite numbers
        assert out.currents_A.shape[0] >= 4 and out.currents_A.shape == out.field_nT.shape
        assert all(math.isfinite(v) for v in out.currents_A.ravel())
        assert all(math.isfinite(v) for v in out.field_nT.ravel())


@FUZZ
@given(data=st.data())
def test_series_reader_random_csv(data):
    text = data.draw(st.one_of(st.text(max_size=200), st.just(None)), label="raw")
    if text is None:
        text = _csv_text(data, SERIES_HEADER, ["frame"])
    out = _reader_ok(read_field_series_csv, text, "series.csv")
    if out is not None:  # README: strictly increasing times, at least 2 rows
        assert len(out.t_s) >= 2 and all(b > a for a, b in zip(out.t_s, out.t_s[1:]))
        assert out.frame in ("cage", "ned")


@FUZZ_SMALL
@given(data=st.data())
def test_readings_reader_random_numbers(data):
    """Well-formed files of random (huge, tiny, repeated) numbers: the rank checks never crash."""
    n = data.draw(st.integers(0, 7), label="rows")
    pool = st.sampled_from([0.0, 1.0, -1.0, 1e-300, 5e-324, 1e300, -1e308, 2.5, 1e-12])
    rows = [[data.draw(pool) for _ in range(6)] for _ in range(n)]
    text = ",".join(READING_HEADER) + "\n" + "".join(",".join(repr(v) for v in r) + "\n" for r in rows)
    _reader_ok(read_calibration_csv, text, "numbers.csv")


# ----------------------------------------------------------------------------- calibration and earlier tables

def _calibration_ok(text: str):
    return _reader_ok(load_calibration, text, "cal.json")


GOOD_CAL = {"format": "cage-calibration", "version": 1,
            "coupling_nT_per_A": [[38000.0, 10.0, -5.0], [3.0, 33000.0, 8.0], [-2.0, 4.0, 49000.0]],
            "offset_nT": [18000.0, -4500.0, 45000.0], "rms_residual_nT": 1.2, "n_rows": 22, "n_outliers": 0,
            "outlier_rows": [], "condition_number": 1.0}


@FUZZ
@given(data=st.data())
def test_calibration_reader_random_and_mutated(data):
    if data.draw(st.booleans(), label="mutate"):
        tree = _mutate(data, GOOD_CAL, list(GOOD_CAL), with_dates=False)
    else:
        tree = data.draw(_trees(list(GOOD_CAL), with_dates=False), label="tree")
    _calibration_ok(json.dumps(tree))


def test_good_calibration_is_accepted():
    assert _calibration_ok(json.dumps(GOOD_CAL)) is not None


@FUZZ_SMALL
@given(tree=_trees(["format", "rows", "label", "current_A", "date", "null"], with_dates=False))
def test_previous_table_reader_random_json(tree):
    if isinstance(tree, dict) and tree.get("format") is None:
        tree["format"] = "cage-setpoints"
    _reader_ok(load_table_json, json.dumps(tree), "old.json")
